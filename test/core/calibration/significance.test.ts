import { describe, expect, it } from 'vitest';
import { colourAllows, colourBandNm } from '../../../src/core/calibration/colourPrior.js';
import { log10BinomialTail } from '../../../src/core/calibration/significance.js';
import { createSensorResponse } from '../../../src/core/render/sensor.js';

describe('log10BinomialTail(m, n, p)', () => {
  it('equals hand-computed binomial tails', () => {
    // P(X ≥ 2 | 3, ½) = (3 + 1)/8 = ½
    expect(Math.abs(log10BinomialTail(2, 3, 0.5) - Math.log10(0.5))).toBeLessThanOrEqual(1e-12);
    // P(X ≥ 3 | 3, 0.1) = 0.001
    expect(Math.abs(log10BinomialTail(3, 3, 0.1) - -3)).toBeLessThanOrEqual(1e-12);
    // P(X ≥ 1 | 10, 0.2) = 1 − 0.8¹⁰ = 0.8926258176
    expect(Math.abs(log10BinomialTail(1, 10, 0.2) - Math.log10(0.8926258176))).toBeLessThanOrEqual(1e-10);
  });
  it('stays finite far in the tail and handles the edges', () => {
    // P(X ≥ 40 | 40, 0.01) = 1e-80
    expect(Math.abs(log10BinomialTail(40, 40, 0.01) - -80)).toBeLessThanOrEqual(1e-9);
    expect(log10BinomialTail(0, 5, 0.3)).toBe(0);
    expect(log10BinomialTail(6, 5, 0.3)).toBe(-Infinity);
    expect(log10BinomialTail(2, 5, 1)).toBe(0);
  });
  it('equals the direct sum of the binomial terms over a grid of m, n, p', () => {
    // Reference: Σ_{k ≥ m} C(n, k) p^k (1 − p)^(n − k), each term from exact integer binomial coefficients (BigInt);
    // the recurrence in log10BinomialTail must agree to 1e-9 in log10 wherever the tail is representable.
    const choose = (n: number, k: number): number => {
      let c = 1n;
      for (let i = 0; i < k; i++) c = (c * BigInt(n - i)) / BigInt(i + 1);
      return Number(c);
    };
    for (const n of [1, 7, 30, 120]) {
      for (const p of [0.001, 0.05, 0.3, 0.5, 0.9]) {
        for (const m of [1, 2, Math.ceil(n / 3), n - 1, n]) {
          if (m < 1 || m > n) continue;
          let tail = 0;
          for (let k = m; k <= n; k++) tail += choose(n, k) * p ** k * (1 - p) ** (n - k);
          if (!(tail > 1e-300)) continue;
          expect(Math.abs(log10BinomialTail(m, n, p) - Math.min(0, Math.log10(tail))), `m ${m} n ${n} p ${p}`).toBeLessThanOrEqual(1e-9);
        }
      }
    }
  });
});

describe('colourBandNm(rgb): the coarse colour prior', () => {
  it('admits every wavelength 400–700 nm for the colour the renderer\'s illustrative camera gives it', () => {
    // A check of consistency with an independent camera model (src/core/render/sensor.ts), not a measured camera.
    const sensor = createSensorResponse();
    for (let l = 400; l <= 700; l += 2) {
      const s = sensor(l);
      const sum = s.r + s.g + s.b;
      expect(colourAllows(colourBandNm({ r: s.r / sum, g: s.g / sum, b: s.b / sum }), l), `${l} nm`).toBe(true);
    }
  });
  it('rules out the other end of the spectrum for a clearly coloured peak, and says nothing for grey or no colour', () => {
    expect(colourAllows(colourBandNm({ r: 0.05, g: 0.1, b: 0.85 }), 650)).toBe(false);
    expect(colourAllows(colourBandNm({ r: 0.9, g: 0.08, b: 0.02 }), 450)).toBe(false);
    expect(colourBandNm({ r: 0.34, g: 0.33, b: 0.33 })).toBeNull();
    expect(colourBandNm(undefined)).toBeNull();
  });
});
