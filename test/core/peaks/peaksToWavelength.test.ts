import { describe, expect, it } from 'vitest';
import { createRandom } from '../../../src/core/random.js';
import { findPeaks, peaksToWavelength } from '../../../src/core/spectrum/peaks/index.js';
import type { Peak, Spectrum } from '../../../src/core/types.js';

const peak = (positionPx: number, fwhmPx = 2, positionUncertaintyPx = 0.1): Peak => ({
  positionPx,
  positionUncertaintyPx,
  fwhmPx,
  height: 1,
  area: 1,
  prominence: 1,
  snr: 10,
  saturated: false,
  blended: false,
});

describe('peaksToWavelength(peaks, spectrum)', () => {
  it('interpolates the wavelength and scales uncertainty and FWHM by the local dispersion', () => {
    // Hand-computed: samples 0..4 at 400, 400.5, 401, 402, 403 nm (the step doubles after sample 2).
    const spectrum: Spectrum = {
      positionPx: Float64Array.from([0, 1, 2, 3, 4]),
      intensity: new Float64Array(5),
      wavelengthNm: Float64Array.from([400, 400.5, 401, 402, 403]),
    };
    const [a, b] = peaksToWavelength([peak(1.5), peak(3.25, 4, 0.2)], spectrum);
    expect(Math.abs(a.wavelengthNm - 400.75)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(a.wavelengthUncertaintyNm - 0.05)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(a.fwhmNm - 1)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(b.wavelengthNm - 402.25)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(b.wavelengthUncertaintyNm - 0.2)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(b.fwhmNm - 4)).toBeLessThanOrEqual(1e-12);
  });

  it('maps through a pixel axis that is not the sample index, and wavelengths that fall with pixel', () => {
    const spectrum: Spectrum = {
      positionPx: Float64Array.from([10, 12, 14, 16]),
      intensity: new Float64Array(4),
      wavelengthNm: Float64Array.from([700, 699, 698, 697]),
    };
    const [p] = peaksToWavelength([peak(13, 4, 0.5)], spectrum);
    expect(Math.abs(p.wavelengthNm - 698.5)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(p.wavelengthUncertaintyNm - 0.25)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(p.fwhmNm - 2)).toBeLessThanOrEqual(1e-12);
  });

  it('recovers line wavelengths from a seeded spectrum sampled in wavelength', () => {
    const rng = createRandom(5);
    const n = 1500;
    const wavelengthNm = Float64Array.from({ length: n }, (_, i) => 400 + 0.2 * i + 1e-5 * i * i);
    const linesNm = [450.2, 540.07, 585.25, 640.22, 703.24];
    const sigmaNm = 0.35;
    const intensity = Float64Array.from(wavelengthNm, (wl) => 30 + linesNm.reduce((s, c) => s + 500 * Math.exp(-0.5 * ((wl - c) / sigmaNm) ** 2), 0) + rng.normal());
    const spectrum: Spectrum = { positionPx: Float64Array.from({ length: n }, (_, i) => i), intensity, wavelengthNm };
    const peaks = peaksToWavelength(findPeaks(spectrum), spectrum);
    expect(peaks.length).toBe(linesNm.length);
    peaks.forEach((p, k) => {
      // Linear interpolation of a gently curved axis: error ≤ curvature × step²/8 ≈ 1e-5 nm, far inside 3σ.
      expect(Math.abs(p.wavelengthNm - linesNm[k])).toBeLessThanOrEqual(3 * p.wavelengthUncertaintyNm);
      expect(Math.abs(p.fwhmNm / (2.3548 * sigmaNm) - 1)).toBeLessThanOrEqual(0.05);
    });
  });

  it('rejects a spectrum without wavelengths', () => {
    expect(() => peaksToWavelength([peak(1)], { positionPx: new Float64Array(3), intensity: new Float64Array(3) })).toThrow(/wavelengthNm/);
  });
});
