import { promises as fs } from 'node:fs';
import { InputError } from '../core/errors.js';
import { parseSpectrumCsv, type SpectrumTable } from '../core/spectrum/spectrumCsv.js';

export interface ReadSpectrumCsvOptions {
  /** Name of the file in messages. @default the path as given */
  source?: string;
}

/**
 * Reads a 1-D spectrum CSV file (see parseSpectrumCsv for the accepted layouts). A missing or unreadable file, like
 * a malformed one, is an InputError naming it.
 */
export async function readSpectrumCsv(file: string, options: ReadSpectrumCsvOptions = {}): Promise<SpectrumTable> {
  const source = options.source ?? file;
  let text: string;
  try {
    text = await fs.readFile(file, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    const why = code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'is a folder, expected a CSV file' : `cannot be read (${code ?? String(e)})`;
    throw new InputError(`${source}: ${why}`, source);
  }
  return parseSpectrumCsv(text, { source });
}
