import { statSync } from 'node:fs';
import path from 'node:path';
import { InputError } from '../../core/errors.js';

/**
 * What one failed file of a batch reports: why it failed, and whether it is a bug in glowprint rather than bad input.
 * The item carries the file's name, so `error` does not repeat it ("no such file", not "x.jpg: no such file"); an
 * error about another file the run reads (a dark frame, a profile) keeps that file's name.
 */
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
 * An error thrown while measuring `file` → the reason the batch reports for it, worded as the CLI's action() words
 * the same error for a single input (bad input: its message; a file that cannot be read: its path and why; anything
 * else: an internal error, with its stack, to be reported), less the file's own name in front.
 */
export function describeError(err: unknown, file?: string): FailureDescription {
  if (err instanceof InputError) return { error: withoutName(err.message, file), internal: false };
  const e = err as NodeJS.ErrnoException | undefined;
  if (e && typeof e.code === 'string' && FILE_ERRORS[e.code]) {
    // Node leaves the path out of some errors (EISDIR from reading a folder): the input, when it is the folder.
    const where = e.path ?? (e.code === 'EISDIR' && file !== undefined && isFolder(file) ? file : undefined);
    const error = where === undefined ? `a file it reads ${FILE_ERRORS[e.code]}` : `${where}: ${FILE_ERRORS[e.code]}`;
    return { error: withoutName(error, file), internal: false };
  }
  const detail = e instanceof Error ? (e.stack ?? e.message) : String(err);
  return { error: `internal error (please report it with the input that caused it): ${detail}`, internal: true };
}

/**
 * The message without the file's name in front (as given or resolved), when it starts so: "x.jpg: why" → "why",
 * "x.csv, line 3: why" → "line 3: why".
 */
export function withoutName(message: string, file: string | undefined): string {
  if (file === undefined) return message;
  for (const name of new Set([file, path.resolve(file)])) {
    if (message.startsWith(`${name}: `) || message.startsWith(`${name}, `)) return message.slice(name.length + 2);
  }
  return message;
}

function isFolder(file: string): boolean {
  try {
    return statSync(file).isDirectory();
  } catch {
    return false;
  }
}
