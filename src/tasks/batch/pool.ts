/**
 * The batch pool: files measured by worker threads across the cores (node:worker_threads), or one after another in
 * this thread with one worker. Files are handed out one at a time to whichever worker is free, and the results come
 * back in input order, so the answer is the same whatever the worker count. A file that fails is recorded with its
 * error and the rest go on; a worker that dies takes only the file in hand with it and is replaced.
 */
import { existsSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import { projectRoot } from '../../io/projectRoot.js';
import { describeError, type FailureDescription } from './describeError.js';
import { runJob, type BatchJob, type JobResult } from './jobs.js';

/** One file of the batch, measured or failed. */
export type BatchItem =
  | { index: number; file: string; status: 'ok'; result: JobResult }
  | ({ index: number; file: string; status: 'failed' } & FailureDescription);

/** Messages between the pool and its workers. */
export interface ToWorker {
  index: number;
  file: string;
}
export type FromWorker = { index: number; result: JobResult; failure?: undefined } | { index: number; failure: FailureDescription; result?: undefined };

export interface PoolOptions {
  /** Worker threads; 1 measures in this thread. @default defaultWorkerCount(files.length) */
  workers?: number;
  /** Told about each file as it settles (in completion order): the progress bar. */
  onSettled?: (item: BatchItem, settled: number, total: number) => void;
  /** In this thread, let a file's error through instead of recording it (a single input: its error is the command's). */
  rethrow?: boolean;
  /**
   * The worker threads' script. @default workerUrl() — another script speaks the same messages (ToWorker in,
   * FromWorker out); the tests give one that dies on chosen files to check that a dead worker costs only its file.
   */
  workerScript?: URL;
}

/**
 * Photos per worker thread before another thread pays for itself: each worker loads the modules and warms up its own
 * JIT (~1 s of CPU). Measured with the demo photos on 2 cores: 12 photos ran 0.93× as fast on 2 workers as on 1,
 * 24 photos 0.95–1.1× (npm run bench), while using a third more CPU.
 */
export const FILES_PER_WORKER = 12;

/**
 * One worker per FILES_PER_WORKER files, leaving one core to sharp, whose decode already spreads over the cores from
 * one thread (one worker measures 1.4 cores' worth on 2 cores); a small batch, or any batch on 2 cores, runs in this
 * thread.
 */
export function defaultWorkerCount(files: number): number {
  return Math.max(1, Math.min(Math.floor(files / FILES_PER_WORKER), os.availableParallelism() - 1));
}

/**
 * The worker's script: worker.js beside this module in dist/. Under vitest this module is the TypeScript source, and
 * workers run the build instead (npm test builds first).
 */
export function workerUrl(): URL {
  const here = new URL('./worker.js', import.meta.url);
  if (existsSync(fileURLToPath(here))) return here;
  const built = path.join(projectRoot(), 'dist', 'src', 'tasks', 'batch', 'worker.js');
  if (existsSync(built)) return pathToFileURL(built);
  throw new Error(`the batch worker script is missing (${path.relative(projectRoot(), built)}); run npm run build`);
}

/** Measures every file with the job; the items come back in the order of `files`. */
export async function runPool(files: readonly string[], job: BatchJob, options: PoolOptions = {}): Promise<BatchItem[]> {
  const total = files.length;
  const items: BatchItem[] = new Array(total);
  let settled = 0;
  const settle = (item: BatchItem): void => {
    items[item.index] = item;
    settled++;
    options.onSettled?.(item, settled, total);
  };
  const failed = (index: number, failure: FailureDescription): BatchItem => ({ index, file: files[index], status: 'failed', ...failure });
  const workers = Math.min(options.workers ?? defaultWorkerCount(total), total);
  if (workers <= 1) {
    for (let index = 0; index < total; index++) {
      try {
        settle({ index, file: files[index], status: 'ok', result: await runJob(job, files[index]) });
      } catch (err) {
        if (options.rethrow) throw err;
        settle(failed(index, describeError(err, files[index])));
      }
    }
    return items;
  }
  const url = options.workerScript ?? workerUrl();
  await new Promise<void>((resolve, reject) => {
    let next = 0;
    let running = 0;
    const start = (): void => {
      const worker = new Worker(url, { workerData: { job } });
      running++;
      let inHand: number | null = null;
      const feed = (): void => {
        if (next < total) {
          inHand = next++;
          worker.postMessage({ index: inHand, file: files[inHand] } satisfies ToWorker);
        } else {
          inHand = null;
          void worker.terminate();
        }
      };
      worker.on('message', (m: FromWorker) => {
        settle(m.result ? { index: m.index, file: files[m.index], status: 'ok', result: m.result } : failed(m.index, m.failure!));
        feed();
      });
      // An exception that escaped the job (or a script that did not load): the file in hand fails, the worker is gone.
      worker.on('error', (err) => {
        if (inHand !== null) settle(failed(inHand, describeError(err, files[inHand])));
        inHand = null;
      });
      worker.on('exit', (code) => {
        running--;
        if (inHand !== null) {
          settle(failed(inHand, { error: `the worker thread measuring it stopped (exit code ${code})`, internal: true }));
          inHand = null;
        }
        if (next < total) {
          try {
            start();
          } catch (err) {
            reject(err);
          }
        } else if (running === 0) resolve();
      });
      feed();
    };
    try {
      for (let k = 0; k < workers; k++) start();
    } catch (err) {
      reject(err);
    }
  });
  return items;
}
