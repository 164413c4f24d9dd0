/**
 * The side of the zero order fixes which way wavelength grows: a first-order grating scale reads 0 nm at the zero order
 * and grows away from it (m λ = d (sin θi + sin θ), the grating equation), so with every peak on one side of the zero
 * order the matcher tries only scales growing away from it, and its trials halve (matchLines' zeroOrderSide).
 */
import { describe, expect, it } from 'vitest';
import { CALIBRATE_MATCH_DEFAULTS } from '../../../src/core/calibration/calibrate.js';
import { calibrationLampLines } from '../../../src/core/calibration/calibrationLines.js';
import { isBroadFeature } from '../../../src/core/calibration/lineReference.js';
import { matchLines, type MatchLinesOptions } from '../../../src/core/calibration/matchLines.js';
import { prepareLines } from '../../../src/core/calibration/match/context.js';
import { dispersionAtNmPerPx } from '../../../src/core/calibration/model.js';
import type { Peak } from '../../../src/core/types.js';
import { loadLampCatalog } from '../../../src/io/lineList.js';

const lines = calibrationLampLines('Ne,Hg', loadLampCatalog()).lines.filter((l) => !isBroadFeature(l));
/** A straight scale of 0.5 nm/px from 380 nm at x = 0 (a 1000 l/mm grating on a 1080p camera; common practice, no source). */
const xOf = (lambdaNm: number) => (lambdaNm - 380) / 0.5;
/** Where that scale reads 0 nm: the zero order. */
const ZERO_PX = xOf(0);
const WIDTH_PX = xOf(720);

function peak(positionPx: number, strength: number): Peak {
  return { positionPx, positionUncertaintyPx: 0.1, fwhmPx: 3, height: strength, area: 3 * strength, prominence: strength, snr: 50, saturated: false, blended: false } as Peak;
}

/** Peaks of the lamp's listed lines of rank ≥ 0.1 between 380 and 720 nm, strength ∝ rank; mirrored: x → WIDTH − x. */
function spectrum(mirrored: boolean): Peak[] {
  return prepareLines(lines, [380, 720])
    .filter((l) => l.rank >= 0.1)
    .map((l) => peak(mirrored ? WIDTH_PX - xOf(l.wavelengthNm) : xOf(l.wavelengthNm), 1000 * l.rank));
}

const zeroAt = (positionPx: number): Partial<MatchLinesOptions> => ({ zeroOrder: { positionPx, uncertaintyPx: 2 } });

describe('matchLines with the zero order seen beside every peak', () => {
  it('tries only scales growing away from the zero order: half the trials, the same as asking for that direction', () => {
    const peaks = spectrum(false);
    const beside = matchLines(peaks, lines, { ...CALIBRATE_MATCH_DEFAULTS, ...zeroAt(ZERO_PX) });
    expect(beside.accepted).toBe(true);
    expect(dispersionAtNmPerPx(beside.model!, 500)).toBeGreaterThan(0);
    const asked = matchLines(peaks, lines, { ...CALIBRATE_MATCH_DEFAULTS, ...zeroAt(ZERO_PX), direction: 'increasing' });
    expect(beside.score!.log10Trials).toBeCloseTo(asked.score!.log10Trials, 9);
    // A sighting among the peaks says nothing of the direction: both are tried, twice the trials.
    const among = matchLines(peaks, lines, { ...CALIBRATE_MATCH_DEFAULTS, ...zeroAt(WIDTH_PX / 2) });
    expect(among.score!.log10Trials - beside.score!.log10Trials).toBeCloseTo(Math.log10(2), 9);
  });

  it('reads the direction from the side: a mirrored spectrum with the zero order beyond its far end decreases', () => {
    const peaks = spectrum(true);
    const beside = matchLines(peaks, lines, { ...CALIBRATE_MATCH_DEFAULTS, ...zeroAt(WIDTH_PX - ZERO_PX) });
    expect(beside.accepted).toBe(true);
    expect(dispersionAtNmPerPx(beside.model!, 500)).toBeLessThan(0);
    const asked = matchLines(peaks, lines, { ...CALIBRATE_MATCH_DEFAULTS, ...zeroAt(WIDTH_PX - ZERO_PX), direction: 'decreasing' });
    expect(beside.score!.log10Trials).toBeCloseTo(asked.score!.log10Trials, 9);
  });

  it('takes a peak at the zero order itself for the zero order, not for a line on the other side', () => {
    const peaks = [peak(ZERO_PX + 1, 500), ...spectrum(false)];
    const withOwnPeak = matchLines(peaks, lines, { ...CALIBRATE_MATCH_DEFAULTS, ...zeroAt(ZERO_PX) });
    const asked = matchLines(peaks, lines, { ...CALIBRATE_MATCH_DEFAULTS, ...zeroAt(ZERO_PX), direction: 'increasing' });
    expect(withOwnPeak.score!.log10Trials).toBeCloseTo(asked.score!.log10Trials, 9);
  });
});
