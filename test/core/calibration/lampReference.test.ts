import { describe, expect, it } from 'vitest';
import { BROAD_FEATURE_RELATIVE_SIGMA, isBroadFeature, referenceUncertaintyNm } from '../../../src/core/calibration/lineReference.js';
import { lampLines } from '../../../src/core/lines/index.js';
import { loadLampCatalog } from '../../../src/io/lineList.js';
import { nistReferenceLines } from '../../helpers/nistReference.js';

const catalog = loadLampCatalog();
const nist = nistReferenceLines();
/** Lines the reference cannot confirm: its Xe I list starts at 473 nm (the line list's own check exempts them too). */
const UNCONFIRMABLE = new Set(['Xe I 462.428', 'Xe I 467.123']);

describe('the lamp lines calibration matches against', () => {
  // Outside reference: A. Kramida, Yu. Ralchenko, J. Reader and NIST ASD Team, NIST Atomic Spectra Database
  // (observed air wavelengths, ../shared/reference/nist-asd-lines-air.tsv).
  for (const spec of ['Hg', 'Ne', 'He', 'Ar', 'Kr', 'Xe', 'H', 'Na', 'fluorescent']) {
    it(`${spec}: every atomic line is an NIST ASD observed air wavelength of its spectrum within 0.005 nm`, () => {
      const lines = lampLines(spec, { catalog }).lines.filter((l) => l.kind === 'atomic');
      expect(lines.length).toBeGreaterThanOrEqual(spec === 'Na' ? 2 : 4);
      for (const l of lines) {
        if (UNCONFIRMABLE.has(`${l.spectrum} ${l.wavelengthNm}`)) continue;
        const ref = nist.filter((n) => n.spectrum === l.spectrum);
        const nearest = Math.min(...ref.map((n) => Math.abs(n.wavelengthNm - l.wavelengthNm)));
        expect(nearest, `${l.spectrum} ${l.wavelengthNm}`).toBeLessThanOrEqual(0.005);
      }
    });
  }

  it('fluorescent: the phosphor peaks carry their source ("from memory") and a reference uncertainty from their width', () => {
    const lines = lampLines('fluorescent', { catalog }).lines;
    const phosphors = lines.filter((l) => l.kind === 'phosphor');
    expect(phosphors.length).toBeGreaterThanOrEqual(5);
    for (const p of phosphors) {
      expect(p.source).toMatch(/memory/);
      if (isBroadFeature(p)) continue;
      expect(referenceUncertaintyNm(p, lines)).toBeGreaterThanOrEqual(BROAD_FEATURE_RELATIVE_SIGMA * (p.widthNm ?? 0) - 1e-12);
    }
    // The 50 nm wide Eu²⁺ band is no calibration line.
    expect(phosphors.some((p) => isBroadFeature(p))).toBe(true);
  });

  it('a lamp blend gets its intensity-weighted spread as uncertainty (hand-computed)', () => {
    // λ0 = 600 (relative 1) with a neighbour at 600.8 (relative 0.25): centroid 600.16 nm,
    // spread √((1·0.16² + 0.25·0.64²)/1.25) = √0.1024 = 0.32 nm.
    const a = { wavelengthNm: 600, intensity: 1, element: 'X', spectrum: 'X I', relativeIntensity: 1, blendedWith: [600.8] };
    const b = { wavelengthNm: 600.8, intensity: 0.25, element: 'X', spectrum: 'X I', relativeIntensity: 0.25, blendedWith: [600] };
    expect(Math.abs(referenceUncertaintyNm(a, [a, b]) - 0.32)).toBeLessThanOrEqual(1e-12);
  });
});
