import { CommanderError } from 'commander';
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
        const what = e.code === 'ENOENT' ? 'no such file' : e.code === 'EISDIR' ? 'is a folder, not a file' : 'cannot be read or written';
        note(`glowprint: ${e.path ?? 'file'}: ${what}`);
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
