/** The analysis worker: runs jobs.ts off the main thread; InputErrors come back as messages for the user. */
import { InputError } from '../../../src/core/errors.js';
import { runJob, type JobRequest } from './jobs.js';

interface WorkerScope {
  onmessage: ((event: MessageEvent<{ id: number; request: JobRequest }>) => void) | null;
  postMessage(message: unknown): void;
}

const scope = self as unknown as WorkerScope;

scope.onmessage = (event) => {
  const { id, request } = event.data;
  try {
    scope.postMessage({ id, ok: true, result: runJob(request) });
  } catch (err) {
    const input = err instanceof InputError;
    scope.postMessage({ id, ok: false, input, error: input ? err.message : String((err as Error)?.stack ?? err) });
  }
};
