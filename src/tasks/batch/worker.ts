/**
 * A batch worker thread: receives `{ index, file }` messages, runs the job it was started with (workerData) on each
 * file, and answers `{ index, result }` or `{ index, failure }`. Loaded from dist/ (see workerUrl in pool.ts).
 */
import { parentPort, workerData } from 'node:worker_threads';
import { describeError } from './describeError.js';
import { runJob, type BatchJob } from './jobs.js';
import type { FromWorker, ToWorker } from './pool.js';

const job = (workerData as { job: BatchJob }).job;
const port = parentPort!;

port.on('message', (message: ToWorker) => {
  const { index, file } = message;
  runJob(job, file).then(
    (result) => port.postMessage({ index, result } satisfies FromWorker),
    (err: unknown) => port.postMessage({ index, failure: describeError(err, file) } satisfies FromWorker),
  );
});
