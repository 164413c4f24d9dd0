import { describe, expect, it } from 'vitest';
import { levenbergMarquardt } from '../../../src/core/fit/index.js';
import { createRandom } from '../../../src/core/random.js';
import { fitGaussians } from '../../../src/core/spectrum/peaks/index.js';

const model = (x: number, p: readonly number[]) => {
  let v = p[0];
  for (let j = 1; j < p.length; j += 3) v += p[j] * Math.exp(-0.5 * ((x - p[j + 1]) / p[j + 2]) ** 2);
  return v;
};

describe('fitGaussians(x, y, initial, {weights})', () => {
  it('agrees with the general levenbergMarquardt fitter on a blended pair (parameters and covariance)', () => {
    const rng = createRandom(3);
    const truth = [2, 100, 10.3, 1.6, 60, 14.1, 1.8];
    const x = Float64Array.from({ length: 25 }, (_, i) => i);
    const y = x.map((v) => model(v, truth) + 0.8 * rng.normal());
    const w = new Float64Array(25).fill(1 / 0.64);
    const start = [0, 90, 10, 1.5, 50, 14.5, 1.5];
    const mine = fitGaussians(x, y, [
      { amplitude: 90, center: 10, sigma: 1.5 },
      { amplitude: 50, center: 14.5, sigma: 1.5 },
    ], { weights: w });
    const general = levenbergMarquardt(model, x, y, start, { weights: w, scaleByResiduals: false, tolerance: 1e-12 });
    const got = [mine.offset, ...mine.components.flatMap((c) => [c.amplitude, c.center, c.sigma])];
    got.forEach((v, j) => expect(Math.abs(v - general.params[j])).toBeLessThanOrEqual(1e-5 * Math.max(1, Math.abs(v))));
    const scale = Math.max(1, general.chi2 / general.dof);
    for (let a = 0; a < 7; a++) {
      for (let b = 0; b < 7; b++) {
        const want = general.covariance[a][b] * scale;
        expect(Math.abs(mine.covariance[a][b] - want)).toBeLessThanOrEqual(1e-4 * Math.sqrt(general.covariance[a][a] * general.covariance[b][b]) * scale);
      }
    }
    expect(mine.converged).toBe(true);
    expect(Math.abs(mine.chi2 - general.chi2)).toBeLessThanOrEqual(1e-6 * general.chi2);
    // And the truth is inside 4σ of every parameter.
    got.forEach((v, j) => expect(Math.abs(v - truth[j])).toBeLessThanOrEqual(4 * Math.sqrt(mine.covariance[j][j])));
  });

  it('gives centre uncertainties whose pulls have unit spread over 400 seeded fits', () => {
    const rng = createRandom(4);
    const x = Float64Array.from({ length: 11 }, (_, i) => i);
    const w = new Float64Array(11).fill(1);
    const pulls: number[] = [];
    for (let k = 0; k < 400; k++) {
      const center = 5 + (rng.uniform() - 0.5);
      const y = x.map((v) => model(v, [0, 30, center, 1.5]) + rng.normal());
      const fit = fitGaussians(x, y, [{ amplitude: 28, center: 5, sigma: 1.4 }], { weights: w });
      pulls.push((fit.components[0].center - center) / fit.uncertainties[0].center);
    }
    const rms = Math.sqrt(pulls.reduce((s, v) => s + v * v, 0) / pulls.length);
    // RMS of 400 unit normals: 1 ± 0.035 (1σ); the max(1, χ²/dof) inflation pushes it a little below 1.
    expect(rms).toBeGreaterThan(0.85);
    expect(rms).toBeLessThan(1.1);
    // Two-sided 2σ coverage of a normal is 95.4 % (from memory).
    expect(pulls.filter((v) => Math.abs(v) <= 2).length / pulls.length).toBeGreaterThanOrEqual(0.92);
  });

  it('keeps amplitudes ≥ 0 and centres and widths inside their bounds', () => {
    const x = Float64Array.from({ length: 15 }, (_, i) => i);
    const y = x.map((v) => model(v, [0, 50, 7, 1.5]));
    const fit = fitGaussians(x, y, [
      { amplitude: 50, center: 7, sigma: 1.5 },
      { amplitude: 5, center: 11, sigma: 1 },
    ], { centerBounds: [[5, 9], [10, 12]], sigmaBounds: [0.5, 3] });
    const second = fit.components[1];
    expect(second.amplitude).toBeGreaterThanOrEqual(0);
    expect(second.center).toBeGreaterThanOrEqual(10);
    expect(second.center).toBeLessThanOrEqual(12);
    expect(second.sigma).toBeGreaterThanOrEqual(0.5);
    expect(second.sigma).toBeLessThanOrEqual(3);
    expect(Math.abs(fit.components[0].center - 7)).toBeLessThanOrEqual(1e-3);
  });
});
