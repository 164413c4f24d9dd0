import { constants as fsConstants, promises as fs, statSync } from 'node:fs';
import { Command, CommanderError } from 'commander';
import { InputError, parseNumberOption, UsageError } from '../core/errors.js';
import { toSnakeCase } from '../core/json/toSnakeCase.js';

/** Prints a core result as the one JSON object of the machine-output contract (snake_case keys, units in names). */
export function printJson(result: unknown): void {
  process.stdout.write(JSON.stringify(toSnakeCase(result), null, 2) + '\n');
}

/** Prints to stderr (warnings, progress), never to stdout, which belongs to the result. */
export function note(message: string): void {
  process.stderr.write(message + '\n');
}

/**
 * The input files a command was given: its positional arguments, which commander passes to the action first (then
 * the options and the command itself).
 */
function positionalInputs(args: readonly unknown[]): string[] {
  const positional = args[args.length - 1] instanceof Command ? args.slice(0, -2) : [];
  return positional.flatMap((a) => (typeof a === 'string' ? [a] : Array.isArray(a) ? a.filter((f): f is string => typeof f === 'string') : []));
}

function isFolder(file: string): boolean {
  try {
    return statSync(file).isDirectory();
  } catch {
    return false;
  }
}

/**
 * A file error as the one line the user sees. Node leaves the path out of some errors (EISDIR from reading a folder
 * with fs.readFile): then the input given as a folder is the one named, with the hint to give the files in it.
 */
function fileErrorMessage(e: NodeJS.ErrnoException, inputs: readonly string[]): string {
  const what = e.code === 'ENOENT' || e.code === 'ENOTDIR' ? 'no such file' : e.code === 'EISDIR' ? 'is a folder, not a file' : 'cannot be read or written';
  if (e.path !== undefined) return `${e.path}: ${what}`;
  const folder = e.code === 'EISDIR' ? inputs.find(isFolder) : undefined;
  if (folder !== undefined) return `${folder}: ${what} (give the files in it, not the folder)`;
  return `a file it reads: ${what}`;
}

/**
 * Checks up front that `file`, given with `option` (e.g. --dark), is a file that can be read: a run that reads it for
 * every input then fails once, naming it, instead of once per input.
 */
export async function requireReadableFile(file: string, option: string): Promise<void> {
  const fail = (why: string): never => {
    throw new InputError(`${option} ${file}: ${why}`, file);
  };
  let isDirectory: boolean;
  try {
    isDirectory = (await fs.stat(file)).isDirectory();
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    return fail(code === 'ENOENT' || code === 'ENOTDIR' ? 'no such file' : `cannot be read (${code ?? (err as Error).message})`);
  }
  if (isDirectory) fail('is a folder, not a file');
  try {
    await fs.access(file, fsConstants.R_OK);
  } catch (err) {
    fail(`cannot be read (${(err as NodeJS.ErrnoException).code ?? (err as Error).message})`);
  }
}

/**
 * Wraps a command's action: bad input (InputError, or a file that cannot be read) prints one line on stderr and sets
 * exit code 1; anything else is a bug in glowprint and says so.
 */
export function action<A extends unknown[]>(fn: (...args: A) => Promise<void> | void): (...args: A) => Promise<void> {
  return async (...args: A) => {
    try {
      await fn(...args);
    } catch (err) {
      // Usage mistakes found inside an action (cmd.error) go on to main, which exits 2.
      if (err instanceof CommanderError) throw err;
      if (err instanceof UsageError) {
        note(`glowprint: ${err.message} (run with --help for usage)`);
        process.exitCode = 2;
        return;
      }
      if (err instanceof InputError) {
        note(`glowprint: ${err.message}`);
        process.exitCode = 1;
        return;
      }
      const e = err as NodeJS.ErrnoException;
      if (e && typeof e.code === 'string' && ['ENOENT', 'EISDIR', 'EACCES', 'ENOTDIR', 'EPERM'].includes(e.code)) {
        note(`glowprint: ${fileErrorMessage(e, positionalInputs(args))}`);
        process.exitCode = 1;
        return;
      }
      note(`glowprint: internal error (please report it with the input that caused it): ${e?.stack ?? String(err)}`);
      process.exitCode = 1;
    }
  };
}

/** Parses a finite number option, naming the option in the error. */
export const numberOption = parseNumberOption;
