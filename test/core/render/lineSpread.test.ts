import { describe, expect, it } from 'vitest';
import { erf, kernelFwhmPx, lineSpreadKernel, normalCdf } from '../../../src/core/render/index.js';
import type { SpreadKernel } from '../../../src/core/render/index.js';

function moments(k: SpreadKernel): { sum: number; mean: number; variance: number } {
  let sum = 0;
  let m1 = 0;
  let m2 = 0;
  k.weights.forEach((w, i) => {
    const x = (i - k.half) * k.stepPx;
    sum += w;
    m1 += w * x;
    m2 += w * x * x;
  });
  return { sum, mean: m1 / sum, variance: m2 / sum - (m1 / sum) ** 2 };
}

describe('erf(x)', () => {
  it('matches CPython math.erf (a general-purpose reference library) to 5e-14', () => {
    // Values printed by CPython 3 math.erf (C).
    const ref: [number, number][] = [
      [0.1, 0.1124629160182849],
      [0.5, 0.5204998778130465],
      [1, 0.8427007929497149],
      [2, 0.9953222650189527],
      [2.9, 0.9999589021219005],
      [3, 0.9999779095030014],
      [3.5, 0.9999992569016276],
    ];
    for (const [x, want] of ref) {
      expect(Math.abs(erf(x) - want)).toBeLessThanOrEqual(5e-14);
      expect(Math.abs(erf(-x) + want)).toBeLessThanOrEqual(5e-14);
    }
    // 1 − erf(5) = erfc(5) = 1.5374597944280351e-12 (CPython math.erfc): the tail branch, to 1e-16 absolute.
    expect(Math.abs(1 - erf(5) - 1.5374597944280351e-12)).toBeLessThanOrEqual(1e-16);
    expect(Math.abs(normalCdf(0) - 0.5)).toBeLessThanOrEqual(1e-16);
  });
});

describe('lineSpreadKernel({stepPx, sigmaPx, widthPx, defocusRadiusPx, footprintPx})', () => {
  it('is a Gaussian of FWHM 2√(2 ln 2)·σ when nothing else is set', () => {
    const k = lineSpreadKernel({ sigmaPx: 1.3 });
    const m = moments(k);
    expect(Math.abs(m.sum - 1)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(m.mean)).toBeLessThanOrEqual(1e-12);
    // Cell averaging on the 1/8-px grid adds h²/12 of variance.
    expect(Math.abs(m.variance - (1.3 ** 2 + 0.125 ** 2 / 12))).toBeLessThanOrEqual(1e-6);
    expect(Math.abs(kernelFwhmPx(k) - 2 * Math.sqrt(2 * Math.LN2) * 1.3)).toBeLessThanOrEqual(0.01);
  });

  it('adds the variances of its factors: box w²/12, Gaussian σ², disc marginal r²/4, footprint boxes a²/12', () => {
    // Variance of a uniform box of width w is w²/12; of a uniform disc's 1-D marginal r²/4 (textbook moments).
    const o = { sigmaPx: 0.8, widthPx: 3, defocusRadiusPx: 2, footprintPx: [0.9, 0.4] };
    const m = moments(lineSpreadKernel(o));
    const want = 0.8 ** 2 + 3 ** 2 / 12 + 2 ** 2 / 4 + (0.9 ** 2 + 0.4 ** 2) / 12;
    // Each cell-averaged factor adds up to h²/12 (h = 1/8 px): five factors, 0.0065 px² at most.
    expect(Math.abs(m.variance - want)).toBeLessThanOrEqual(0.0066);
    expect(Math.abs(m.mean)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(m.sum - 1)).toBeLessThanOrEqual(1e-12);
  });

  it('rejects a zero blur with a message naming sigmaPx', () => {
    expect(() => lineSpreadKernel({ sigmaPx: 0 })).toThrow(/sigmaPx/);
  });
});
