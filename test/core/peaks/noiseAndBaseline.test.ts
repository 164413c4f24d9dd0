import { describe, expect, it } from 'vitest';
import { createRandom } from '../../../src/core/random.js';
import { estimateBaseline, madSigma, MAD_TO_SIGMA, robustNoise } from '../../../src/core/spectrum/peaks/index.js';

const noiseSpectrum = (seed: number, n: number, sigma: number, base: (i: number) => number) => {
  const rng = createRandom(seed);
  return Float64Array.from({ length: n }, (_, i) => base(i) + sigma * rng.normal());
};

describe('robustNoise(y)', () => {
  it('uses the normal-consistency factor 1/Φ⁻¹(3/4) = 1.482602 (standard normal quantile Φ⁻¹(0.75) = 0.6744898, from memory)', () => {
    expect(Math.abs(MAD_TO_SIGMA - 1 / 0.6744897501960817)).toBeLessThanOrEqual(1e-12);
  });

  it('recovers σ of white noise on a steep slope and a curved baseline within 6 % (seeded)', () => {
    // (On the third case the MAD of first differences ÷ √2 reads 37 % high: the slope changes by ±1.7σ per sample.)
    for (const [seed, sigma] of [[1, 1], [2, 0.01], [3, 250]]) {
      const y = noiseSpectrum(seed, 4000, sigma, (i) => 1000 + 3 * sigma * i + 500 * sigma * Math.sin(i / 300));
      expect(Math.abs(robustNoise(y) / sigma - 1)).toBeLessThanOrEqual(0.06);
    }
  });

  it('reads somewhat high with lines in a fifth of the stencils, and true again when they are excluded', () => {
    const n = 8000;
    const y = noiseSpectrum(4, n, 1, () => 10);
    const exclude = new Uint8Array(n);
    for (let c = 50; c < n; c += 100) {
      for (let i = c - 8; i <= c + 8; i++) {
        y[i] += 500 * Math.exp(-0.5 * ((i - c) / 2) ** 2);
        exclude[i] = 1;
      }
    }
    // Each line touches 17 + 4 of every 100 stencils: the MAD widens by ~20 %, which is why findPeaks re-measures
    // the noise with its lines excluded. With them excluded: the estimator's own scatter, ≈ 2 % here (×3).
    const raw = robustNoise(y);
    expect(raw).toBeGreaterThan(1.05);
    expect(raw).toBeLessThan(1.3);
    expect(Math.abs(robustNoise(y, { exclude }) - 1)).toBeLessThanOrEqual(0.06);
  });

  it('falls back to a clipped RMS on coarsely quantised data, where the MAD is 0', () => {
    // σ = 0.3 counts rounded to integers: 20 with P = 1 − 2·P(Z > 1/0.6) = 0.904, else 19 or 21, so the rounded
    // values have σ = √0.0956 = 0.309 (normal tail P(Z > 1.667) = 0.0478, from memory).
    const y = noiseSpectrum(5, 8000, 0.3, () => 20).map(Math.round);
    expect(Math.abs(robustNoise(y) - 0.309)).toBeLessThanOrEqual(0.03);
  });

  it('madSigma(values) is 1.4826 × the MAD of the values themselves', () => {
    // median 3, |v − 3| = [2, 1, 0, 1, 97] → MAD 1.
    expect(Math.abs(madSigma([1, 2, 3, 4, 100]) - MAD_TO_SIGMA)).toBeLessThanOrEqual(1e-15);
  });
});

describe('estimateBaseline(y, {noise, windowSamples})', () => {
  it('follows a sloping, curved continuum under dense lines to a fraction of σ, ends included (seeded)', () => {
    const n = 3000;
    const base = (i: number) => 100 + 0.05 * i + 40 * Math.sin(i / 400);
    const y = noiseSpectrum(6, n, 1, base);
    const rng = createRandom(60);
    for (let c = 20; c < n; c += 37) {
      const a = 20 + 2000 * rng.uniform();
      for (let i = Math.max(0, c - 12); i <= Math.min(n - 1, c + 12); i++) y[i] += a * Math.exp(-0.5 * ((i - c) / 2) ** 2);
    }
    const b = estimateBaseline(y, { noise: 1, windowSamples: 101 });
    let worst = 0;
    let sum = 0;
    for (let i = 0; i < n; i++) {
      worst = Math.max(worst, Math.abs(b[i] - base(i)));
      sum += b[i] - base(i);
    }
    // Lines (20–2000σ) cover about half of every window here. Masked smoothing keeps the mean bias to a few
    // hundredths of σ; the worst sample is set by the noise of a straight-line fit at the ends (≈ 2/√101 σ, ×3).
    expect(Math.abs(sum / n)).toBeLessThanOrEqual(0.1);
    expect(worst).toBeLessThanOrEqual(1);
  });

  it('is unbiased on line-free noise (mean offset ≤ 0.05σ)', () => {
    const y = noiseSpectrum(7, 4000, 2, (i) => 50 - 0.01 * i);
    const b = estimateBaseline(y, { noise: 2 });
    let sum = 0;
    for (let i = 0; i < 4000; i++) sum += b[i] - (50 - 0.01 * i);
    expect(Math.abs(sum / 4000)).toBeLessThanOrEqual(0.1);
  });

  it('rejects a window shorter than 3 samples', () => {
    expect(() => estimateBaseline([1, 2, 3], { noise: 1, windowSamples: 1 })).toThrow(/windowSamples/);
  });
});
