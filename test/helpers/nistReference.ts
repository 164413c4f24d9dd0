import { readFileSync } from 'node:fs';
import path from 'node:path';
import type { SpectralLine } from '../../src/core/types.js';
import { SHARED } from './runCli.js';

/**
 * The outside reference: NIST ASD observed air wavelengths and relative intensities (A. Kramida, Yu. Ralchenko,
 * J. Reader and NIST ASD Team, NIST Atomic Spectra Database), as laid in ../shared/reference. Tests only.
 */
export function nistReferenceLines(): SpectralLine[] {
  const text = readFileSync(path.join(SHARED, 'reference/nist-asd-lines-air.tsv'), 'utf8');
  const out: SpectralLine[] = [];
  for (const row of text.split('\n').slice(1)) {
    const [element, ion, wl, intensity] = row.split('\t');
    if (!element || !wl) continue;
    out.push({ element, spectrum: `${element} ${ion}`, wavelengthNm: Number(wl), intensity: Number(intensity), source: 'NIST ASD (reference)' });
  }
  return out;
}
