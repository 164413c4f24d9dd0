import { describe, expect, it } from 'vitest';
import { centroidOffset, gaussianOffset, parabolicOffset } from '../../../src/core/spectrum/peaks/index.js';

// CHECK_VALUES.md "Peaks": three-point estimators on a point-sampled Gaussian, σ = 1 px, true offset 0.25 px —
// parabolic 0.204608, Gaussian 0.25 exactly, centroid 0.136122. Computed (C) from the estimators' formulas, not read.
const g = (k: number, offset: number, sigma = 1) => Math.exp(-((k - offset) ** 2) / (2 * sigma * sigma));

describe('three-point sub-sample estimators (yMinus, y0, yPlus)', () => {
  const [a, b, c] = [g(-1, 0.25), g(0, 0.25), g(1, 0.25)];

  it('parabolicOffset → 0.204608 on a σ = 1 Gaussian offset by 0.25 (CHECK_VALUES, C)', () => {
    expect(Math.abs(parabolicOffset(a, b, c) - 0.204608)).toBeLessThanOrEqual(5e-7);
  });

  it('gaussianOffset → 0.25 exactly on any point-sampled Gaussian (CHECK_VALUES, C)', () => {
    expect(Math.abs(gaussianOffset(a, b, c) - 0.25)).toBeLessThanOrEqual(1e-14);
    // Exact for any width and amplitude (the log of a Gaussian is a parabola).
    for (const [offset, sigma, amp] of [[-0.4, 0.7, 3], [0.1, 2.5, 1e-3], [0.49, 1.3, 1e4]]) {
      const d = gaussianOffset(amp * g(-1, offset, sigma), amp * g(0, offset, sigma), amp * g(1, offset, sigma));
      expect(Math.abs(d - offset)).toBeLessThanOrEqual(1e-12);
    }
  });

  it('centroidOffset → 0.136122 (CHECK_VALUES, C)', () => {
    expect(Math.abs(centroidOffset(a, b, c) - 0.136122)).toBeLessThanOrEqual(5e-7);
  });

  it('returns NaN where the formula is undefined, and 0 on a symmetric triple', () => {
    expect(parabolicOffset(1, 1, 1)).toBeNaN(); // no curvature
    expect(parabolicOffset(0, -1, 0)).toBeNaN(); // a minimum
    expect(gaussianOffset(-0.1, 1, 0.5)).toBeNaN(); // ln of a negative sample
    expect(centroidOffset(-1, 0, 1)).toBeNaN();
    expect(Math.abs(parabolicOffset(0.5, 1, 0.5))).toBe(0);
    expect(Math.abs(gaussianOffset(0.5, 1, 0.5))).toBe(0);
  });
});
