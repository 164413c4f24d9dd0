import { execFileSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import path from 'node:path';
import { constants as perfConstants, PerformanceObserver } from 'node:perf_hooks';
import { fileURLToPath } from 'node:url';
import sharp from 'sharp';
import { analyseSpectrumInput } from '../src/tasks/spectrum.js';
import type { MemoryProbeResult } from './memoryProbe.js';
import { type BenchFigure, type BenchSection, median } from './section.js';
import { renderSpectroscopePhoto } from '../src/core/render/index.js';
import { encodeRenderedPhoto } from '../src/io/writeRenderedPhoto.js';

/**
 * Timed runs of each task, interleaved in pairs (decode, pipeline); the figure is the median of the pairs' ratios, so
 * that load from other processes, which comes and goes, falls on both halves of a pair alike. With 7 runs the old
 * figure (ratio of the medians) moved by up to ±0.2× between back-to-back runs on a machine shared with a test run;
 * 15 pairs narrow the median's spread by about √(15/7) ≈ 1.5 (measured: four runs at load ~2 within 1.68–1.85×).
 */
const RUNS = 15;
/**
 * Untimed runs first. V8 compiles a function that runs a few times per photo only after several photos (--trace-opt:
 * compiles went on through the 4th–5th photo in one process; with 3 warm-ups the first two timed pipelines took
 * 150–200 ms against ~100 after), so those are left out; the first-run figure below is the cold case.
 */
const WARMUP = 6;

/**
 * `glowprint spectrum` on a 12-MP JPEG: time of the whole pipeline (decode + band + extraction + peaks) as a ratio to
 * the floor, sharp's own decode of the same file to raw RGB measured in the same run, and peak memory as a multiple
 * of the decoded RGB size (width × height × 3 bytes).
 */
export const spectrumSection: BenchSection = {
  name: 'spectrum: 12-MP JPEG → peak table',
  async run(ctx) {
    ctx.log('rendering a 4000×3000 spectroscope photo (the project renderer, ~10 s)…');
    const { widthPx, heightPx, jpeg } = await benchPhoto();
    const file = path.join(ctx.workDir, 'spectrum-12mp.jpg');
    writeFileSync(file, jpeg);
    const rgbBytes = widthPx * heightPx * 3;
    ctx.log(`  ${(jpeg.length / 1e6).toFixed(1)} MB JPEG; timing ${RUNS} runs each, interleaved…`);

    const floor = async (): Promise<void> => {
      await sharp(file).raw().toBuffer();
    };
    let peaks = 0;
    const stageMs: Record<string, number[]> = {};
    const pipeline = async (): Promise<void> => {
      const onStage = (stage: string, ms: number): void => void (stageMs[stage] ??= []).push(ms);
      peaks = (await analyseSpectrumInput(file, { onStage })).analysis.peaks.length;
    };
    for (let k = 0; k < WARMUP; k++) {
      await floor();
      await pipeline();
    }
    for (const k of Object.keys(stageMs)) delete stageMs[k]; // the warm-up runs are not reported
    const floorMs: number[] = [];
    const pipelineMs: number[] = [];
    const floorCpuMs: number[] = [];
    const pipelineCpuMs: number[] = [];
    // Garbage collection during the timed pipeline runs (main-thread pauses, full mark-compacts counted apart): the
    // part of a wall time that allocation brings on.
    const gcEntries: Array<PerformanceEntry & { detail?: { kind?: number } }> = [];
    const gcObserver = new PerformanceObserver((list) => void gcEntries.push(...list.getEntries()));
    gcObserver.observe({ entryTypes: ['gc'] });
    const windows: Array<[number, number]> = [];
    for (let k = 0; k < RUNS; k++) {
      // Interleaved, so that load from other processes on the machine falls on both alike.
      floorMs.push(await timeMs(floor, floorCpuMs));
      pipelineMs.push(await timeMs(pipeline, pipelineCpuMs, windows));
    }
    await new Promise((resolve) => setTimeout(resolve, 0)); // the observer is called back after the entries
    gcObserver.disconnect();
    const inRuns = gcEntries.filter((e) => windows.some(([a, b]) => e.startTime >= a && e.startTime <= b));
    const gc = {
      ms: inRuns.reduce((sum, e) => sum + e.duration, 0),
      majors: inRuns.filter((e) => e.detail?.kind === perfConstants.NODE_PERFORMANCE_GC_MAJOR).length,
    };
    const floorMedian = median(floorMs);
    const pipelineMedian = median(pipelineMs);
    const ratios = pipelineMs.map((ms, k) => ms / floorMs[k]).sort((a, b) => a - b);
    const quartile = (q: number): number => ratios[Math.round(q * (ratios.length - 1))];
    // CPU time of the process (all threads: decoder, JIT, GC) is far less disturbed by other processes than wall time
    // on a busy machine; its ratio says whether a wall-time figure off target is the code or the load.
    const cpuRatio = median(pipelineCpuMs) / median(floorCpuMs);

    ctx.log('  peak memory, each in a fresh process…');
    const floorMem = probe('floor', file);
    const pipeMem = probe('pipeline', file);
    const growth = (m: MemoryProbeResult): number => Math.max(0, m.peakRssBytes - m.baselineRssBytes);
    const mb = (b: number): string => `${(b / 1e6).toFixed(0)} MB`;
    // Each stage as a multiple of the floor: where the time goes, in the same unit as the target.
    const stages = Object.entries(stageMs)
      .map(([stage, ms]) => `${stage} ${median(ms).toFixed(0)} ms = ${(median(ms) / floorMedian).toFixed(2)}×`)
      .join(', ');
    return [
      {
        name: 'time, spectrum pipeline ÷ sharp decode',
        value: median(ratios),
        unit: '×',
        target: 2.0,
        kind: 'max',
        detail:
          `median of ${RUNS} paired ratios after ${WARMUP} warm-up runs (quartiles ${quartile(0.25).toFixed(2)}–${quartile(0.75).toFixed(2)}×): pipeline ${pipelineMedian.toFixed(0)} ms (${peaks} peaks), sharp(file).raw().toBuffer() ` +
          `${floorMedian.toFixed(0)} ms; stage medians ${stages} (preview: the JPEG's 1/8-scale decode; coarse: the band ` +
          `search on it; rows: the decode of the band's rows only; rows-missed and decode appear when the band needed ` +
          `more of the photo and the whole of it was decoded). ` +
          `First run in a fresh process (one command-line run, ` +
          `before the JIT has compiled anything): pipeline ${pipeMem.elapsedMs.toFixed(0)} ms, decode ` +
          `${floorMem.elapsedMs.toFixed(0)} ms = ${(pipeMem.elapsedMs / floorMem.elapsedMs).toFixed(1)}×. CPU time (all threads) ` +
          `${median(pipelineCpuMs).toFixed(0)} ms vs ${median(floorCpuMs).toFixed(0)} ms = ${cpuRatio.toFixed(2)}×. Garbage ` +
          `collection in the ${RUNS} timed pipeline runs: ${(gc.ms / RUNS).toFixed(1)} ms a run, ${gc.majors} full mark-compact(s) in all`,
      },
      {
        name: 'peak memory, spectrum pipeline ÷ decoded RGB size',
        value: growth(pipeMem) / rgbBytes,
        unit: '×',
        target: 3.0,
        kind: 'max',
        detail:
          `RSS growth ${mb(growth(pipeMem))} over a ${mb(pipeMem.baselineRssBytes)} start-up baseline (${pipeMem.method}); ` +
          `decoded RGB ${mb(rgbBytes)}; sharp decode alone ${mb(growth(floorMem))} = ${(growth(floorMem) / rgbBytes).toFixed(2)}×`,
      },
    ] satisfies BenchFigure[];
  },
};

/**
 * Mercury and neon lines (air wavelengths, nm, from memory of the NIST tables; their exact values do not matter here:
 * the photo is a load for timing, not a check), tilted 2.5°, a phone-like 26-mm lens behind a 1000 lines/mm grating.
 */
const BENCH_LINES: Array<[number, number]> = [
  [404.66, 0.5], [435.83, 1.2], [546.07, 2.0], [576.96, 0.35], [579.07, 0.4], [585.25, 0.6], [588.19, 0.25],
  [594.48, 0.3], [609.62, 0.3], [614.31, 0.45], [616.36, 0.2], [621.73, 0.2], [626.65, 0.3], [633.44, 0.35],
  [638.3, 0.4], [640.22, 0.7], [650.65, 0.45], [659.9, 0.25], [667.83, 0.3], [692.95, 0.2],
];

async function benchPhoto(): Promise<{ widthPx: number; heightPx: number; jpeg: Buffer }> {
  const widthPx = 4000;
  const heightPx = 3000;
  const rendered = renderSpectroscopePhoto({
    widthPx,
    heightPx,
    seed: 2024,
    band: { angleDeg: 2.5, slantDeg: 0.8, heightPx: 110, rangeNm: [400, 700] },
    source: { lines: BENCH_LINES.map(([wavelengthNm, intensity]) => ({ wavelengthNm, intensity })) },
  });
  const jpeg = await encodeRenderedPhoto(rendered.image, { format: { kind: 'jpeg', quality: 92 }, exif: { model: 'bench', exposureTimeS: 0.05, isoSpeed: 200 } });
  return { widthPx, heightPx, jpeg };
}

/**
 * Wall time of one run (ms); its process CPU time (user + system, all threads, ms) is pushed onto `cpuMs`, and its
 * start and end (performance.now()) onto `windows` when given.
 */
async function timeMs(task: () => Promise<void>, cpuMs: number[], windows?: Array<[number, number]>): Promise<number> {
  (globalThis as { gc?: () => void }).gc?.();
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  await task();
  const t1 = performance.now();
  const c = process.cpuUsage(c0);
  cpuMs.push((c.user + c.system) / 1000);
  windows?.push([t0, t1]);
  return t1 - t0;
}

function probe(mode: 'floor' | 'pipeline', file: string): MemoryProbeResult {
  const script = path.join(path.dirname(fileURLToPath(import.meta.url)), 'memoryProbe.js');
  const out = execFileSync(process.execPath, ['--expose-gc', script, mode, file], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'inherit'] });
  return JSON.parse(out.trim().split('\n').pop()!) as MemoryProbeResult;
}
