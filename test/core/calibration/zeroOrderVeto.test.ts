/**
 * A grating scale must read 0 nm at the zero order: the undiffracted light is where every order's 0 nm lies (the
 * grating equation m λ = d (sin θi + sin θ) at θ = −θi). So a scale whose first-order grating model puts 0 nm many
 * standard deviations from the zero order seen is ruled out (matchLines' vetoZeroOrderDisagreement), however well its
 * lines match — on a rendered xenon photo a scale of half the true line density read its visible lines as the
 * list's infrared ones and passed the bound until this check.
 */
import { describe, expect, it } from 'vitest';
import { CALIBRATE_MATCH_DEFAULTS } from '../../../src/core/calibration/calibrate.js';
import { calibrationLampLines } from '../../../src/core/calibration/calibrationLines.js';
import { isBroadFeature } from '../../../src/core/calibration/lineReference.js';
import { matchLines, type MatchLinesOptions } from '../../../src/core/calibration/matchLines.js';
import { prepareLines } from '../../../src/core/calibration/match/context.js';
import type { Peak } from '../../../src/core/types.js';
import { loadLampCatalog } from '../../../src/io/lineList.js';

const lines = calibrationLampLines('Ne,Hg', loadLampCatalog()).lines.filter((l) => !isBroadFeature(l));
/**
 * A 1000 lines/mm grating before a camera of f = 1500 px turned 33.37° (550 nm on the axis at x0 = 960 px): λ(x) =
 * d sin(θc + atan((x − x0)/f)), the physical model of the calibration issue.
 */
const D_NM = 1000;
const F_PX = 1500;
const THETA = (33.37 * Math.PI) / 180;
const X0_PX = 960;
const xOf = (lambdaNm: number) => X0_PX + F_PX * Math.tan(Math.asin(lambdaNm / D_NM) - THETA);
/** Where the model reads 0 nm: x0 − f tan θc. */
const ZERO_PX = X0_PX - F_PX * Math.tan(THETA);

function peak(positionPx: number, strength: number): Peak {
  return { positionPx, positionUncertaintyPx: 0.1, fwhmPx: 3, height: strength, area: 3 * strength, prominence: strength, snr: 50, saturated: false, blended: false } as Peak;
}

/** Peaks of the lamp's listed lines of rank ≥ 0.1 between 400 and 700 nm, strength ∝ rank. */
const peaks = prepareLines(lines, [400, 700])
  .filter((l) => l.rank >= 0.1)
  .map((l) => peak(xOf(l.wavelengthNm), 1000 * l.rank));

/** As `glowprint calibrate` matches with priors from the photo: f within 5 %, the axis within 100 px. */
const options = (zeroOrderPx: number | null): Partial<MatchLinesOptions> => ({
  ...CALIBRATE_MATCH_DEFAULTS,
  grating: { order: 1, focalLengthPx: { value: F_PX, sigma: 0.05 * F_PX }, axisPositionPx: { value: X0_PX, sigma: 100 } },
  zeroOrder: zeroOrderPx === null ? null : { positionPx: zeroOrderPx, uncertaintyPx: 2 },
});

describe('matchLines rules out a grating scale that puts 0 nm away from the zero order seen', () => {
  it('accepts the true scale with the zero order where it reads 0 nm, and counts the agreement', () => {
    const r = matchLines(peaks, lines, options(ZERO_PX));
    expect(r.accepted).toBe(true);
    expect(r.score!.zeroOrder).toBeDefined();
    expect(Math.abs(r.score!.zeroOrder!.predictedPx - ZERO_PX)).toBeLessThan(r.score!.zeroOrder!.halfWidthPx);
  });

  it('declines the same peaks when the zero order is seen far from where every scale that fits them reads 0 nm', () => {
    // Without a sighting the lines alone are enough …
    expect(matchLines(peaks, lines, options(null)).accepted).toBe(true);
    // … but with one 400 px off (still beside every peak, so the direction is not what changes) no scale fits both.
    const r = matchLines(peaks, lines, options(ZERO_PX + 400));
    expect(peaks.every((p) => p.positionPx > ZERO_PX + 400)).toBe(true);
    expect(r.accepted).toBe(false);
  });
});
