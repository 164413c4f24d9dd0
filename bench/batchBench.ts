import { spawnSync } from 'node:child_process';
import { copyFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { dataPath, projectRoot } from '../src/io/projectRoot.js';
import { runCalibrate } from '../src/tasks/calibrate.js';
import { type BenchFigure, type BenchSection, median } from './section.js';

/** Timed runs of each worker count, interleaved (1, 2, 1, 2, …); the median is reported. */
const RUNS = 3;
/** Copies of each demo photo in the batch: (lamp + 5 tubes) × 4 = 24 photos (two workers' worth by default). */
const COPIES = 4;
const DEMO_PHOTOS = ['cfl-calibration', 'tube-a', 'tube-b', 'tube-c', 'tube-d', 'tube-e'];

/**
 * Batch throughput of `glowprint identify <photos...>` with the demo rig's profile: the built CLI, end to end (process
 * start, worker threads, every photo, the JSON), with 2 workers against 1 worker (in-process) on the same photos in
 * the same run. The speed-up is the figure; photos/s of each are in its detail.
 */
export const batchSection: BenchSection = {
  name: 'batch: identify 24 demo photos, 2 workers vs 1',
  async run({ workDir, log }) {
    log('  calibrating the demo rig (not timed)…');
    const profile = path.join(workDir, 'batch-rig.json');
    await runCalibrate(dataPath('demo', 'cfl-calibration.jpg'), { lamp: 'fluorescent', model: 'auto', direction: 'either', out: profile });
    const photos: string[] = [];
    for (let c = 0; c < COPIES; c++) {
      for (const name of DEMO_PHOTOS) {
        const file = path.join(workDir, `batch-${c + 1}-${name}.jpg`);
        copyFileSync(dataPath('demo', `${name}.jpg`), file);
        photos.push(file);
      }
    }
    const cli = path.join(projectRoot(), 'dist', 'src', 'cli', 'main.js');
    const runOnce = (workers: number): number => {
      const t0 = performance.now();
      const r = spawnSync(process.execPath, [cli, 'identify', ...photos, '--calibration', profile, '--json', '--workers', String(workers)], { encoding: 'utf8', maxBuffer: 256 * 1024 * 1024 });
      const ms = performance.now() - t0;
      if (r.status !== 0) throw new Error(`identify --workers ${workers} exited ${r.status}: ${r.stderr.trim().split('\n').slice(-3).join(' | ')}`);
      return ms;
    };
    log(`  ${photos.length} photos; ${RUNS} runs each of --workers 1 and --workers 2, interleaved…`);
    const one: number[] = [];
    const two: number[] = [];
    for (let k = 0; k < RUNS; k++) {
      one.push(runOnce(1));
      two.push(runOnce(2));
    }
    const oneMs = median(one);
    const twoMs = median(two);
    const rate = (ms: number): string => `${(photos.length / (ms / 1000)).toFixed(2)} photos/s`;
    const cores = os.availableParallelism();
    const figures: BenchFigure[] = [
      {
        name: 'batch speed-up, 2 workers vs 1',
        value: oneMs / twoMs,
        unit: '×',
        target: 1.6,
        kind: 'min',
        detail:
          `${rate(twoMs)} with 2 workers (median ${(twoMs / 1000).toFixed(2)} s) vs ${rate(oneMs)} with 1 (median ${(oneMs / 1000).toFixed(2)} s), ` +
          `${photos.length} photos, whole CLI runs; this machine has ${cores} core${cores === 1 ? '' : 's'} (os.availableParallelism), load average ${os.loadavg()[0].toFixed(1)} at the end ` +
          '(other work on the machine takes its share of the cores); each worker thread warms up its own JIT, so the first photos of every worker cost more than later ones, ' +
          'and sharp\'s decode already uses several cores from one thread',
      },
    ];
    return figures;
  },
};
