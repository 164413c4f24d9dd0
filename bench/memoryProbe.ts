/**
 * Measures the peak memory of one run of a task in a fresh process (so that nothing an earlier measurement left
 * allocated counts): `node --expose-gc dist/bench/memoryProbe.js <floor|pipeline> <photo>` prints one JSON line.
 *
 * Peak = the kernel's resident-set high-water mark (Linux /proc/self/status VmHWM, reset just before the run through
 * /proc/self/clear_refs); elsewhere a sampler thread reading the process RSS every millisecond (it may miss a
 * short-lived spike). The figure reported is the growth over the RSS measured after start-up and garbage
 * collection, i.e. what the task itself needed. The task's wall time is reported too: a first run in a fresh process,
 * before the JIT has compiled anything, as a single command-line run sees it.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { Worker } from 'node:worker_threads';
import sharp from 'sharp';
import { analyseSpectrumInput } from '../src/tasks/spectrum.js';

export interface MemoryProbeResult {
  baselineRssBytes: number;
  peakRssBytes: number;
  method: 'VmHWM' | 'sampled';
  /** Peak V8 heap + array buffers seen at the end of the task (for the record). */
  arrayBuffersBytes: number;
  /** Wall time of the task, its first run in this fresh process (what a single command-line run costs). */
  elapsedMs: number;
}

function readHwmBytes(): number | undefined {
  try {
    const m = /VmHWM:\s+(\d+)\s+kB/.exec(readFileSync('/proc/self/status', 'utf8'));
    return m ? Number(m[1]) * 1024 : undefined;
  } catch {
    return undefined;
  }
}

function resetHwm(): boolean {
  try {
    writeFileSync('/proc/self/clear_refs', '5');
    return true;
  } catch {
    return false;
  }
}

const SAMPLER = `
const { parentPort, workerData } = require('node:worker_threads');
const peak = new Int32Array(workerData);
const tick = () => { const kib = Math.round(process.memoryUsage.rss() / 1024); if (kib > Atomics.load(peak, 0)) Atomics.store(peak, 0, kib); };
const timer = setInterval(tick, 1);
parentPort.on('message', () => { tick(); clearInterval(timer); parentPort.postMessage('done'); });
`;

async function main(): Promise<void> {
  const [mode, file] = process.argv.slice(2);
  if ((mode !== 'floor' && mode !== 'pipeline') || !file) {
    process.stderr.write('usage: memoryProbe.js <floor|pipeline> <photo>\n');
    process.exitCode = 2;
    return;
  }
  const gc = (globalThis as { gc?: () => void }).gc;
  // Load everything the task needs before the baseline (module code is not the task's memory).
  await sharp({ create: { width: 16, height: 16, channels: 3, background: '#000' } }).raw().toBuffer();
  gc?.();
  await new Promise((r) => setTimeout(r, 50));
  const shared = new SharedArrayBuffer(4);
  const worker = new Worker(SAMPLER, { eval: true, workerData: shared });
  await new Promise((r) => setTimeout(r, 50));
  gc?.();
  const baselineRssBytes = process.memoryUsage.rss();
  const exact = resetHwm() && readHwmBytes() !== undefined;

  let arrayBuffersBytes = 0;
  const t0 = performance.now();
  if (mode === 'floor') {
    const out = await sharp(file).raw().toBuffer();
    arrayBuffersBytes = process.memoryUsage().arrayBuffers;
    if (out.length === 0) throw new Error('empty decode');
  } else {
    const run = await analyseSpectrumInput(file);
    arrayBuffersBytes = process.memoryUsage().arrayBuffers;
    if (run.analysis.peaks.length === 0) process.stderr.write('memoryProbe: warning: the pipeline found no peaks\n');
  }
  const elapsedMs = performance.now() - t0;
  const hwm = exact ? readHwmBytes() : undefined;
  worker.postMessage('stop');
  await new Promise((r) => worker.once('message', r));
  await worker.terminate();
  const sampled = new Int32Array(shared)[0] * 1024;
  const result: MemoryProbeResult = {
    baselineRssBytes,
    peakRssBytes: hwm !== undefined ? Math.max(hwm, sampled) : sampled,
    method: hwm !== undefined ? 'VmHWM' : 'sampled',
    arrayBuffersBytes,
    elapsedMs,
  };
  process.stdout.write(JSON.stringify(result) + '\n');
}

await main();
