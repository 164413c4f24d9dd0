import { describe, expect, it } from 'vitest';
import { logGamma, NoiseGenerator } from '../../../src/core/render/index.js';

describe('logGamma(x)', () => {
  it('matches CPython math.lgamma (a general-purpose reference library) and exact factorials', () => {
    // CPython 3 math.lgamma (C).
    expect(Math.abs(logGamma(10) - 12.801827480081467)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(logGamma(100.5) - 361.4355404677776)).toBeLessThanOrEqual(1e-10);
    expect(Math.abs(logGamma(3.3) - 0.9870985778947339)).toBeLessThanOrEqual(1e-11);
    // Γ(n) = (n − 1)!
    let lf = 0;
    for (let n = 2; n <= 30; n++) {
      lf += Math.log(n - 1);
      expect(Math.abs(logGamma(n) - lf)).toBeLessThanOrEqual(1e-11 * Math.max(1, lf));
    }
  });
});

function poissonPmf(mean: number, k: number): number {
  return Math.exp(-mean + k * Math.log(mean) - logGamma(k + 1));
}

describe('NoiseGenerator#poisson(mean)', () => {
  it('has mean and variance equal to the mean on both sides of the method switch at 10', () => {
    const n = 200_000;
    for (const [seed, mean] of [[1, 0.7], [2, 4], [3, 9.9], [4, 10], [5, 37], [6, 2500]] as const) {
      const g = new NoiseGenerator(seed);
      let s = 0;
      let s2 = 0;
      for (let i = 0; i < n; i++) {
        const k = g.poisson(mean);
        s += k;
        s2 += k * k;
      }
      const m = s / n;
      const v = s2 / n - m * m;
      // Standard errors: √(μ/n) for the mean, ≈ μ·√(2/n) for the variance; 5 σ.
      expect(Math.abs(m - mean)).toBeLessThanOrEqual(5 * Math.sqrt(mean / n));
      expect(Math.abs(v - mean)).toBeLessThanOrEqual(5 * Math.sqrt((2 * mean * mean + mean) / n));
    }
  });

  it('follows the Poisson probabilities (χ² test at mean 30, where the normal approximation would fail)', () => {
    const mean = 30;
    const n = 400_000;
    const g = new NoiseGenerator(11);
    const counts = new Map<number, number>();
    for (let i = 0; i < n; i++) {
      const k = g.poisson(mean);
      counts.set(k, (counts.get(k) ?? 0) + 1);
    }
    let chi2 = 0;
    let dof = -1;
    for (let k = 12; k <= 52; k++) {
      const want = n * poissonPmf(mean, k);
      chi2 += ((counts.get(k) ?? 0) - want) ** 2 / want;
      dof++;
    }
    // 40 degrees of freedom: the 99.9 % point of χ² is 73.4 (standard χ² table).
    expect(chi2).toBeLessThanOrEqual(73.4);
  });

  it('repeats its sequence for a seed', () => {
    const a = new NoiseGenerator(42);
    const b = new NoiseGenerator(42);
    for (let i = 0; i < 100; i++) expect(a.poisson(25)).toBe(b.poisson(25));
  });
});
