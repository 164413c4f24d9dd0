import { randomBytes } from 'node:crypto';
import { promises as fs } from 'node:fs';
import path from 'node:path';
import { InputError } from '../core/errors.js';

export interface WriteAtomicOptions {
  /** Files read by this run: writing over any of them is refused, so no input is ever lost. */
  inputs?: readonly string[];
}

/**
 * Writes a file atomically: the data goes to a temporary file in the same folder, then is renamed over the target,
 * so a reader never sees half a file and a failed run leaves the old file as it was.
 */
export async function writeFileAtomic(
  target: string,
  data: string | Uint8Array,
  options: WriteAtomicOptions = {},
): Promise<void> {
  const resolved = path.resolve(target);
  for (const input of options.inputs ?? []) {
    if (path.resolve(input) === resolved) {
      throw new InputError(`${target}: refusing to write over an input file; choose another output name`, target);
    }
  }
  const dir = path.dirname(resolved);
  await fs.mkdir(dir, { recursive: true });
  const tmp = path.join(dir, `.glowprint-tmp-${process.pid}-${randomBytes(4).toString('hex')}`);
  try {
    await fs.writeFile(tmp, data);
    await fs.rename(tmp, resolved);
  } catch (err) {
    await fs.rm(tmp, { force: true });
    throw err;
  }
}
