import { describe, expect, it } from 'vitest';
import { levenbergMarquardt, linearLeastSquares, polyval } from '../../src/core/fit/index.js';
import { createRandom } from '../../src/core/random.js';

describe('linearLeastSquares(design, y)', () => {
  it('recovers a straight line exactly and gives the textbook slope uncertainty', () => {
    // Hand-computed: x = 0..4, y = 1 + 2x + e with e = [0.1, -0.1, 0, 0.1, -0.1].
    const x = [0, 1, 2, 3, 4];
    const e = [0.1, -0.1, 0, 0.1, -0.1];
    const y = x.map((v, i) => 1 + 2 * v + e[i]);
    const fit = linearLeastSquares(x.map((v) => [1, v]), y)!;
    // Slope = Σ(x−x̄)(y−ȳ)/Σ(x−x̄)² = (−2·0.1 −1·−0.1 + 0 + 1·0.1 + 2·−0.1)/10 = −0.02 → 1.98.
    expect(Math.abs(fit.params[1] - 1.98)).toBeLessThanOrEqual(1e-12);
    // σ_slope² = s²/Σ(x−x̄)², s² = Σr²/(n−2).
    const s2 = fit.residuals.reduce((a, r) => a + r * r, 0) / 3;
    expect(Math.abs(fit.uncertainties[1] - Math.sqrt(s2 / 10))).toBeLessThanOrEqual(1e-12);
  });

  it('returns null for a rank-deficient design', () => {
    expect(linearLeastSquares([[1, 2], [2, 4], [3, 6]], [1, 2, 3])).toBeNull();
  });

  it('fits a quartic on pixel-scale abscissae without losing precision', () => {
    const c = [400, 0.3, 1e-5, -2e-9, 3e-13];
    const xs = Array.from({ length: 40 }, (_, i) => i * 100);
    const fit = linearLeastSquares(xs.map((x) => [1, x, x ** 2, x ** 3, x ** 4]), xs.map((x) => polyval(c, x)))!;
    for (const x of xs) expect(Math.abs(polyval(fit.params, x) - polyval(c, x))).toBeLessThanOrEqual(1e-7);
  });
});

describe('levenbergMarquardt(model, x, y, p0)', () => {
  it('recovers a Gaussian from seeded noisy samples within its stated uncertainty', () => {
    const rng = createRandom(7);
    const truth = [10, 3.3, 1.2];
    const model = (x: number, p: readonly number[]) => p[0] * Math.exp(-0.5 * ((x - p[1]) / p[2]) ** 2);
    const x = Array.from({ length: 41 }, (_, i) => i * 0.2 - 1);
    const y = x.map((v) => model(v, truth) + 0.05 * rng.normal());
    const fit = levenbergMarquardt(model, x, y, [8, 3, 1]);
    expect(fit.converged).toBe(true);
    for (let j = 0; j < 3; j++) expect(Math.abs(fit.params[j] - truth[j])).toBeLessThanOrEqual(4 * fit.uncertainties[j]);
    expect(fit.uncertainties[1]).toBeLessThan(0.02);
  });
});
