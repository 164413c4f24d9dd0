import { describe, expect, it } from 'vitest';
import { detectLaser } from '../../../src/core/identify/detectLaser.js';
import { identifySpectrum } from '../../../src/core/identify/identifySpectrum.js';
import { vacuumToAirNm } from '../../../src/core/units/airVacuum.js';
import { loadLaserDefinitions, loadLineList } from '../../../src/io/lineList.js';
import { peakAt } from './syntheticPeaks.js';

const kinds = loadLaserDefinitions();
const lines = loadLineList();

describe('detectLaser(peaks, {kinds}) — one dominant narrow line', () => {
  it('names a red HeNe: CIPM 2007 632.9908 nm in vacuum, 632.816 nm in standard air (CHECK_VALUES.md)', () => {
    const air = vacuumToAirNm(632.9908);
    expect(Math.abs(air - 632.816)).toBeLessThanOrEqual(0.002);
    const r = detectLaser([peakAt(air + 0.05, 1000, { fwhmNm: 1.4 }), peakAt(611.8, 3)], { kinds, systematicNm: 0.1 })!;
    expect(r).not.toBeNull();
    expect(r.candidates[0].name).toBe('HeNe-633');
    // A 635 nm class diode lies 2.2 nm away: with ±5 nm spread it is still possible, ranked after the HeNe.
    expect(r.candidates.map((c) => c.name)).toContain('diode-635');
    expect(Math.abs(r.wavelengthNm - (air + 0.05))).toBeLessThanOrEqual(1e-9);
    expect(Math.abs(r.wavelengthUncertaintyNm - Math.hypot(0.08, 0.1))).toBeLessThanOrEqual(1e-9);
    expect(r.fluxFraction).toBeGreaterThan(0.99);
  });

  it('puts a green pointer at 532 nm (frequency-doubled Nd, common practice, no source) and a 405 nm diode in its band', () => {
    expect(detectLaser([peakAt(532.2, 50, { fwhmNm: 1.3 })], { kinds })!.candidates[0].name).toBe('DPSS-532');
    const violet = detectLaser([peakAt(402.5, 50, { fwhmNm: 1.5 })], { kinds })!;
    expect(violet.candidates.map((c) => c.name)).toEqual(['diode-405']);
  });

  it('reports a dominant line no laser kind emits, with no candidates', () => {
    const r = detectLaser([peakAt(700.5, 50, { fwhmNm: 1.2 })], { kinds })!;
    expect(r.candidates).toEqual([]);
  });

  it('is null for a discharge spectrum, a broad LED band and a blended peak', () => {
    const neon = [585.25, 640.22, 614.31, 703.24, 659.9].map((w) => peakAt(w, 10));
    expect(detectLaser(neon, { kinds })).toBeNull();
    expect(detectLaser([peakAt(630, 100, { fwhmNm: 18 })], { kinds })).toBeNull();
    expect(detectLaser([peakAt(632.8, 100, { blended: true })], { kinds })).toBeNull();
  });
});

describe('identifySpectrum(input, options) — species and laser together', () => {
  it('reports a HeNe spot as a laser and names no gas from its one line', () => {
    const r = identifySpectrum({ from: 'profile', peaks: [peakAt(632.82, 1000, { fwhmNm: 1.5 })], rmsNm: 0.05, coveredRangeNm: [400, 700] }, { lines, lasers: kinds });
    expect(r.laser?.candidates[0].name).toBe('HeNe-633');
    expect(r.species.some((s) => s.present)).toBe(false);
    expect(r.calibration).toEqual({ from: 'profile', rmsNm: 0.05, coveredRangeNm: [400, 700] });
  });

  it('takes a sodium lamp for sodium, not for an unknown laser (588.995 / 589.592 nm blended)', () => {
    const r = identifySpectrum({ from: 'profile', peaks: [peakAt(589.2, 1000, { fwhmNm: 2.3 }), peakAt(568.8, 4)], rmsNm: 0.05, coveredRangeNm: [400, 700] }, { lines, lasers: kinds });
    expect(r.laser).toBeNull();
    expect(r.species[0].element).toBe('Na');
    expect(r.species[0].present).toBe(true);
  });

  it('cannot self-calibrate one line, and says what to do', () => {
    const r = identifySpectrum({ from: 'self', peaks: [{ ...peakAt(0, 1000), positionPx: 512 }] }, { lines, lasers: kinds });
    expect(r.calibration).toBeNull();
    expect(r.laser).toBeNull();
    expect(r.warnings.join(' ')).toMatch(/--calibration/);
  });
});
