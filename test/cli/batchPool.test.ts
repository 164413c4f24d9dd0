import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os, { tmpdir } from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createRandom } from '../../src/core/random.js';
import { defaultWorkerCount, FILES_PER_WORKER, runPool, type BatchItem } from '../../src/tasks/batch/pool.js';
import type { SpectrumJob } from '../../src/tasks/batch/jobs.js';

// The pool itself, imported from the TypeScript source (its workers run the build in dist/, as under npm test):
// seeded spectrum CSVs with Gaussian lines at known positions, a CSV with text in a number cell, a missing file.
const dir = mkdtempSync(path.join(tmpdir(), 'glowprint-batch-pool-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (name: string): string => path.join(dir, name);

const TRUE_POSITIONS_PX = [[120.3, 410.8, 655.2], [88.6, 301.1, 502.7, 720.4], [250.5, 600.9]];
let files: string[];

beforeAll(() => {
  const rng = createRandom(11);
  files = [];
  TRUE_POSITIONS_PX.forEach((positions, k) => {
    const rows = ['position_px,intensity'];
    for (let x = 0; x < 800; x++) {
      let y = 10 + rng.normal() * 0.5;
      for (const p of positions) y += 400 * Math.exp(-0.5 * ((x - p) / 1.5) ** 2);
      rows.push(`${x},${y.toFixed(3)}`);
    }
    writeFileSync(at(`lines-${k}.csv`), rows.join('\n') + '\n');
    files.push(at(`lines-${k}.csv`));
  });
  writeFileSync(at('bad.csv'), 'position_px,intensity\n0,1\n1,abc\n2,3\n');
  files.splice(1, 0, at('bad.csv'));
  files.push(at('missing.csv'));
});

const job = (): SpectrumJob => ({ command: 'spectrum', several: true, readFiles: files });
const summary = (items: BatchItem[]) => items.map((i) => (i.status === 'ok' ? (i.result.json.peaks as Array<{ positionPx: number }>).map((p) => p.positionPx) : i.error));

describe('runPool(files, job, { workers })', () => {
  it('returns one item per file in input order, the same with 1 (in-process), 2 and 5 workers', async () => {
    const one = await runPool(files, job(), { workers: 1 });
    const two = await runPool(files, job(), { workers: 2 });
    const five = await runPool(files, job(), { workers: 5 });
    expect(one.map((i) => i.file)).toEqual(files);
    expect(two).toEqual(one);
    expect(five).toEqual(one);
  }, 120_000);

  it('finds the seeded lines (within 0.1 px) and names the bad row and the missing file', async () => {
    const items = await runPool(files, job(), { workers: 2 });
    const got = summary(items);
    for (const [k, idx] of [[0, 0], [1, 2], [2, 3]] as const) {
      const found = got[idx] as number[];
      expect(found).toHaveLength(TRUE_POSITIONS_PX[k].length);
      TRUE_POSITIONS_PX[k].forEach((want, j) => expect(Math.abs(found[j] - want)).toBeLessThanOrEqual(0.1));
    }
    // The item carries the file's name: its error says why, without naming it again.
    expect(got[1]).toBe('line 3, column 2: expected a number, got "abc"');
    expect(got[1]).not.toContain('bad.csv');
    expect(got[4]).toBe('no such file');
    expect(items.filter((i) => i.status === 'failed').every((i) => i.status === 'failed' && !i.internal)).toBe(true);
  }, 120_000);

  it('tells about every file once as it settles, and rethrows a file\'s error in-process when asked', async () => {
    const seen: number[] = [];
    await runPool(files, job(), { workers: 2, onSettled: (item, settled, total) => {
      seen.push(item.index);
      expect(total).toBe(files.length);
      expect(settled).toBe(seen.length);
    } });
    expect([...seen].sort()).toEqual(files.map((_, i) => i));
    await expect(runPool([at('bad.csv')], job(), { workers: 1, rethrow: true })).rejects.toThrow(/bad\.csv/);
    // A small batch stays in this thread; a large one gets one worker per core but one.
    expect(defaultWorkerCount(1)).toBe(1);
    expect(defaultWorkerCount(FILES_PER_WORKER - 1)).toBe(1);
    // One core is left to the photo decoder's own threads (on 2 cores every batch runs in-process).
    expect(defaultWorkerCount(2 * FILES_PER_WORKER)).toBe(Math.max(1, Math.min(2, os.availableParallelism() - 1)));
    expect(defaultWorkerCount(1000)).toBe(Math.max(1, os.availableParallelism() - 1));
  }, 120_000);
});

describe('runPool(files, job, { workers, workerScript }) when a worker thread dies', () => {
  // A stand-in worker speaking the pool's messages: it answers most files, but exits the thread on "crash-*" files
  // and throws an uncaught exception on "throw-*" files, as a native crash or a bug outside the job's promise would.
  const script = path.join(dir, 'dying-worker.mjs');
  beforeAll(() => {
    writeFileSync(script, [
      "import { parentPort } from 'node:worker_threads';",
      'parentPort.on(\'message\', ({ index, file }) => {',
      "  if (file.includes('crash-')) process.exit(7);",
      "  if (file.includes('throw-')) setTimeout(() => { throw new Error('escaped the job: ' + file); });",
      "  else parentPort.postMessage({ index, result: { json: { file }, text: file, warnings: [] } });",
      '});',
    ].join('\n'));
  });
  const names = ['a', 'crash-b', 'c', 'throw-d', 'e', 'crash-f', 'g', 'h'];

  it('fails only the file in hand, names it, replaces the worker and measures the rest in input order', async () => {
    for (const workers of [2, 3]) {
      const items = await runPool(names, job(), { workers, workerScript: pathToFileURL(script) });
      expect(items.map((i) => i.file)).toEqual(names);
      for (const item of items) {
        if (/crash-|throw-/.test(item.file)) {
          expect(item.status).toBe('failed');
          if (item.status !== 'failed') continue;
          expect(item.internal).toBe(true);
          if (item.file.startsWith('crash-')) expect(item.error).toBe('the worker thread measuring it stopped (exit code 7)');
          else expect(item.error).toMatch(/escaped the job: throw-d/);
        } else {
          expect(item.status).toBe('ok');
          if (item.status === 'ok') expect(item.result.json).toEqual({ file: item.file });
        }
      }
    }
  }, 60_000);

  it('goes on when every worker dies on its first file', async () => {
    const all = ['crash-1', 'crash-2', 'crash-3', 'x'];
    const items = await runPool(all, job(), { workers: 2, workerScript: pathToFileURL(script) });
    expect(items.map((i) => i.status)).toEqual(['failed', 'failed', 'failed', 'ok']);
  }, 60_000);
});
