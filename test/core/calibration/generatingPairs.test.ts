import { describe, expect, it } from 'vitest';
import { gratingWavelengthNm, type GratingModel } from '../../../src/core/calibration/gratingModel.js';
import { MATCH_LINES_DEFAULTS } from '../../../src/core/calibration/matchLines.js';
import type { Ctx, Pair, PeakItem } from '../../../src/core/calibration/match/context.js';
import { generatingPairsLog10 } from '../../../src/core/calibration/match/scoreSolution.js';

/** A search context holding only what generatingPairsLog10 reads: peaks (σ, blended) and the options. */
function context(xs: number[], sigma = 0.1, blended: number[] = []): Ctx {
  const P: PeakItem[] = xs.map((x, index) => ({ index, x, sigma, strength: 1, band: null, saturated: false, blended: blended.includes(index) }));
  return { P, px: Float64Array.from(xs), L: [], lw: new Float64Array(0), o: MATCH_LINES_DEFAULTS, curvature: 0, manual: [] };
}
const pairsOn = (xs: number[], lambda: (x: number) => number): Pair[] => xs.map((x, peak) => ({ peak, line: -1, x, lambda: lambda(x), manual: false }));

describe('generatingPairsLog10(ctx, pairs): how many two-point scale hypotheses reach the same solution', () => {
  const xs = [100, 180, 260, 400, 520, 610, 700, 850];
  it('counts every pair, C(m, 2), for matches on one straight scale', () => {
    const log10 = generatingPairsLog10(context(xs), pairsOn(xs, (x) => 400 + 0.5 * x));
    expect(Math.abs(10 ** log10 - (8 * 7) / 2)).toBeLessThanOrEqual(1e-9);
  });
  it('counts no pair when one match is 3 px off the straight scale through the others (the floor of 1 remains)', () => {
    // Every pair of the seven straight matches misses the bent one by 3 px (> the 1 px least tolerance); every pair
    // with the bent one tilts its scale and misses the far side of the others by more than 1 px.
    const bent = pairsOn(xs, (x) => 400 + 0.5 * x + (x === 850 ? 1.5 : 0));
    expect(generatingPairsLog10(context(xs), bent)).toBe(0);
    // 0.4 nm (0.8 px) off: the seven straight matches' 21 pairs still reach it; pairs with it may not.
    const slight = pairsOn(xs, (x) => 400 + 0.5 * x + (x === 850 ? 0.4 : 0));
    const k = 10 ** generatingPairsLog10(context(xs), slight);
    expect(k).toBeGreaterThanOrEqual(21);
    expect(k).toBeLessThan(28);
  });
  it('leaves out blended peaks and manual pairs, and gives 0 for fewer than two matches', () => {
    const pairs = pairsOn(xs, (x) => 400 + 0.5 * x);
    // Two blended peaks: C(6, 2) = 15 pairs of the other six.
    expect(Math.abs(10 ** generatingPairsLog10(context(xs, 0.1, [0, 3]), pairs) - 15)).toBeLessThanOrEqual(1e-9);
    const manual = pairs.map((q, i) => (i < 7 ? { ...q, manual: true } : q));
    expect(generatingPairsLog10(context(xs), manual)).toBe(0);
  });
  it('allows a grating solution the bend of its own physical model, and a polynomial none', () => {
    // 1200 lines/mm seen by a wide-angle camera (f = 900 px): across 800 px the dispersion changes by a third, so no
    // straight two-point scale puts the far matches within 1 px; the physical model's own chord departure does.
    const grating: GratingModel = {
      kind: 'grating',
      order: 1,
      incidenceAngleDeg: 0,
      direction: 1,
      grooveSpacingNm: 1e6 / 1200,
      cameraAngleDeg: 35,
      axisPositionPx: 450,
      focalLengthPx: 900,
      covariance: [],
      free: [true, true, true, true],
    };
    const pairs = pairsOn(xs, (x) => gratingWavelengthNm(grating, x));
    const straight = 10 ** generatingPairsLog10(context(xs), pairs);
    const physical = 10 ** generatingPairsLog10(context(xs), pairs, grating);
    expect(straight).toBeLessThan(28);
    expect(Math.abs(physical - 28)).toBeLessThanOrEqual(1e-9);
  });
});
