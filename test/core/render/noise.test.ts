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

  // χ² over up to 41 bins (≤ 40 degrees of freedom): the 99.9 % point for 40 is 73.4 (NIST/SEMATECH e-Handbook of
  // Statistical Methods, table 1.3.6.7.4; from memory). A rounded normal approximation scores ~2300 at mean 30.
  function chi2(mean: number, lo: number, seed: number): number {
    const n = 400_000;
    const g = new NoiseGenerator(seed);
    const counts = new Map<number, number>();
    for (let i = 0; i < n; i++) {
      const k = g.poisson(mean);
      counts.set(k, (counts.get(k) ?? 0) + 1);
    }
    let sum = 0;
    for (let k = lo; k <= lo + 40; k++) {
      const want = n * poissonPmf(mean, k);
      if (want < 5) continue; // bins too thin for χ² are skipped (fewer degrees of freedom: the test gets stricter)
      sum += ((counts.get(k) ?? 0) - want) ** 2 / want;
    }
    return sum;
  }

  it('follows the Poisson probabilities: χ² tests at means 30 (PTRS), 3.3 and 7.77 (tables + remainder)', () => {
    expect(chi2(30, 12, 11)).toBeLessThanOrEqual(73.4);
    expect(chi2(3.3, 0, 12)).toBeLessThanOrEqual(73.4);
    expect(chi2(7.77, 0, 13)).toBeLessThanOrEqual(73.4);
  });

  it('gives P(0) = e^−μ and P(1) = μe^−μ at μ = 0.02, below the first table step', () => {
    const n = 1_000_000;
    const g = new NoiseGenerator(14);
    const counts = [0, 0, 0];
    for (let i = 0; i < n; i++) counts[Math.min(2, g.poisson(0.02))]++;
    for (const k of [0, 1]) {
      const p = poissonPmf(0.02, k);
      expect(Math.abs(counts[k] / n - p)).toBeLessThanOrEqual(5 * Math.sqrt((p * (1 - p)) / n));
    }
  });

  it('repeats its sequence for a seed', () => {
    const c = new NoiseGenerator(42);
    const d = new NoiseGenerator(43);
    let same = 0;
    for (let i = 0; i < 100; i++) if (c.poisson(25) === d.poisson(25)) same++;
    expect(same).toBeLessThan(30);
    const a = new NoiseGenerator(42);
    const b = new NoiseGenerator(42);
    for (let i = 0; i < 100; i++) expect(a.poisson(25)).toBe(b.poisson(25));
  });
});

describe('NoiseGenerator#normal()', () => {
  it('has mean 0, variance 1 and the normal tail fractions beyond 1, 3 and the ziggurat base r = 3.4426', () => {
    // Two-sided tails erfc(z/√2) from CPython math.erfc (C): 0.31731050786291415, 0.0026997960632601913,
    // 0.0005761085123916405.
    const n = 2_000_000;
    const g = new NoiseGenerator(5);
    let s = 0;
    let s2 = 0;
    let t1 = 0;
    let t3 = 0;
    let tr = 0;
    for (let i = 0; i < n; i++) {
      const x = g.normal();
      s += x;
      s2 += x * x;
      const a = Math.abs(x);
      if (a > 1) t1++;
      if (a > 3) t3++;
      if (a > 3.442619855899) tr++;
    }
    const mean = s / n;
    expect(Math.abs(mean)).toBeLessThanOrEqual(5 / Math.sqrt(n));
    expect(Math.abs(s2 / n - mean * mean - 1)).toBeLessThanOrEqual(5 * Math.sqrt(2 / n));
    for (const [count, p] of [[t1, 0.31731050786291415], [t3, 0.0026997960632601913], [tr, 0.0005761085123916405]]) {
      expect(Math.abs(count / n - p)).toBeLessThanOrEqual(5 * Math.sqrt((p * (1 - p)) / n));
    }
  });
});
