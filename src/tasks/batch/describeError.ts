import { InputError } from '../../core/errors.js';

/** What one failed file of a batch reports: the message, and whether it is a bug in glowprint rather than bad input. */
export interface FailureDescription {
  error: string;
  internal: boolean;
}

const FILE_ERRORS: Record<string, string> = {
  ENOENT: 'no such file',
  EISDIR: 'is a folder, not a file',
  ENOTDIR: 'no such file',
  EACCES: 'cannot be read or written',
  EPERM: 'cannot be read or written',
};

/**
 * An error thrown while measuring one file → the line the batch reports for it, worded as the CLI's action() words
 * the same error for a single input (bad input: its message; a file that cannot be read: its path and why; anything
 * else: an internal error, with its stack, to be reported).
 */
export function describeError(err: unknown): FailureDescription {
  if (err instanceof InputError) return { error: err.message, internal: false };
  const e = err as NodeJS.ErrnoException | undefined;
  if (e && typeof e.code === 'string' && FILE_ERRORS[e.code]) return { error: `${e.path ?? 'file'}: ${FILE_ERRORS[e.code]}`, internal: false };
  const detail = e instanceof Error ? (e.stack ?? e.message) : String(err);
  return { error: `internal error (please report it with the input that caused it): ${detail}`, internal: true };
}
