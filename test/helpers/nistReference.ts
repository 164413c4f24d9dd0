import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { SpectralLine } from '../../src/core/types.js';

/**
 * The shared outside-reference folder beside the project root. The root is found by walking up to package.json, not
 * as a fixed '../..' from this file: compiled to dist/test/helpers that would name dist/ as the root and look for
 * the reference in the project folder itself.
 */
export function sharedFolder(from: string = path.dirname(fileURLToPath(import.meta.url))): string {
  let dir = from;
  while (!existsSync(path.join(dir, 'package.json'))) {
    const up = path.dirname(dir);
    if (up === dir) throw new Error(`no package.json above ${from}: cannot find the project root`);
    dir = up;
  }
  return path.resolve(dir, '../shared');
}

/**
 * The outside reference: NIST ASD observed air wavelengths and relative intensities (A. Kramida, Yu. Ralchenko,
 * J. Reader and NIST ASD Team, NIST Atomic Spectra Database), as laid in ../shared/reference. Tests only.
 */
export function nistReferenceLines(): SpectralLine[] {
  const text = readFileSync(path.join(sharedFolder(), 'reference/nist-asd-lines-air.tsv'), 'utf8');
  const out: SpectralLine[] = [];
  for (const row of text.split('\n').slice(1)) {
    const [element, ion, wl, intensity] = row.split('\t');
    if (!element || !wl) continue;
    out.push({ element, spectrum: `${element} ${ion}`, wavelengthNm: Number(wl), intensity: Number(intensity), source: 'NIST ASD (reference)' });
  }
  return out;
}
