/**
 * Order-2 images in the line search: a transmission grating sends each line into order 2 as well, where a scale
 * calibrated in order 1 reads twice its wavelength (m λ = d (sin θi + sin θ), the grating equation). The matcher
 * takes a peak there as the image of a strong line whose order-1 peak it finds (matched to the line, or a blend
 * holding it), counts it as evidence with its own hypotheses in the chance model, and never fits the scale with it.
 */
import { describe, expect, it } from 'vitest';
import { CALIBRATE_MATCH_DEFAULTS } from '../../../src/core/calibration/calibrate.js';
import { calibrationLampLines } from '../../../src/core/calibration/calibrationLines.js';
import { isBroadFeature } from '../../../src/core/calibration/lineReference.js';
import { matchLines } from '../../../src/core/calibration/matchLines.js';
import { prepareLines } from '../../../src/core/calibration/match/context.js';
import { SECOND_ORDER_MIN_RANK } from '../../../src/core/calibration/match/scoreSolution.js';
import type { Peak } from '../../../src/core/types.js';
import { loadLampCatalog } from '../../../src/io/lineList.js';

const lines = calibrationLampLines('Ne,Hg', loadLampCatalog()).lines.filter((l) => !isBroadFeature(l));
/** A straight scale of 0.5 nm/px from 380 nm at x = 0 (a 1000 l/mm grating on a 1080p camera; common practice, no source). */
const xOf = (lambdaNm: number) => (lambdaNm - 380) / 0.5;

function peak(positionPx: number, strength: number): Peak {
  return { positionPx, positionUncertaintyPx: 0.1, fwhmPx: 3, height: strength, area: 3 * strength, prominence: strength, snr: 50, saturated: false, blended: false } as Peak;
}

/** Order-1 peaks of the lamp's listed lines of rank ≥ 0.1 between 380 and 1000 nm, strength ∝ rank (fewer than the matcher's 60 peaks). */
function firstOrder(): Peak[] {
  return prepareLines(lines, [380, 1000])
    .filter((l) => l.rank >= 0.1)
    .map((l) => peak(xOf(l.wavelengthNm), 1000 * l.rank));
}

/** Hg 404.656 and 435.833 nm (NIST ASD, in ../shared/reference), strong lines of the list. */
const IMAGED_NM = [404.656, 435.833];

describe('matchLines(peaks with order-2 images of strong lines)', () => {
  it('lists each image as order 2 of its line, counts it in the score and keeps it out of the order-1 matches', () => {
    const base = firstOrder();
    const strengthOf = (nm: number) => base.find((p) => Math.abs(p.positionPx - xOf(nm)) < 0.5)!.prominence;
    for (const nm of IMAGED_NM) expect(strengthOf(nm)).toBeGreaterThan(0);
    // Order 2 at 10 % of order 1's flux (within the 3–30 % of transmission gratings; common practice, no source).
    const images = IMAGED_NM.map((nm) => peak(xOf(2 * nm), 0.1 * strengthOf(nm)));
    const peaks = [...base, ...images];
    const r = matchLines(peaks, lines, CALIBRATE_MATCH_DEFAULTS);
    expect(r.accepted).toBe(true);
    const imageIndex = images.map((_, i) => base.length + i);
    expect(r.matches.filter((m) => imageIndex.includes(m.peakIndex))).toEqual([]);
    const found = r.secondOrder.map((m) => [m.peakIndex, m.order, Math.round(m.wavelengthNm * 100)]);
    expect(found).toEqual(IMAGED_NM.map((nm, i) => [imageIndex[i], 2, Math.round(nm * 100)]));
    for (const m of r.secondOrder) expect(Math.abs(m.residualPx)).toBeLessThanOrEqual(0.5);
    expect(r.score!.secondOrder).toBe(2);
    // The same peaks without the images: the images add their two matches to the evidence.
    const without = matchLines(base, lines, CALIBRATE_MATCH_DEFAULTS);
    expect(without.score!.secondOrder).toBe(0);
    expect(r.score!.matched).toBe(without.score!.matched);
  });

  it('takes no image brighter than its own order-1 peak, nor one of a line below SECOND_ORDER_MIN_RANK', () => {
    const base = firstOrder();
    const strengthOf = (nm: number) => base.find((p) => Math.abs(p.positionPx - xOf(nm)) < 0.5)!.prominence;
    const bright = IMAGED_NM.map((nm) => peak(xOf(2 * nm), 1.5 * strengthOf(nm)));
    const r = matchLines([...base, ...bright], lines, CALIBRATE_MATCH_DEFAULTS);
    expect(r.accepted).toBe(true);
    expect(r.secondOrder).toEqual([]);
    expect(r.score!.secondOrder).toBe(0);
    // A weak listed line (rank under the threshold) seen in order 1 leaves no order-2 hypothesis.
    const weak = prepareLines(lines, [380, 500]).find((l) => l.rank < SECOND_ORDER_MIN_RANK);
    if (weak) {
      const q = matchLines([...base, peak(xOf(2 * weak.wavelengthNm), 0.1)], lines, CALIBRATE_MATCH_DEFAULTS);
      expect(q.secondOrder.map((m) => m.wavelengthNm)).not.toContain(weak.wavelengthNm);
    }
  });

  it('counts the images of a lamp whose list ends in the red, read beyond its longest line', () => {
    // Hg's list ends at 709.186 nm; its strong lines' images read 2λ = 809, 872 and 1092 nm, past that line.
    const hg = calibrationLampLines('Hg', loadLampCatalog()).lines.filter((l) => !isBroadFeature(l));
    const listed = prepareLines(hg, [380, 1000]);
    const longestNm = Math.max(...listed.map((l) => l.wavelengthNm));
    expect(longestNm).toBeLessThan(2 * 404.656);
    const base = listed.map((l) => peak(xOf(l.wavelengthNm), 1000 * l.rank));
    const imagedNm = [404.656, 435.833, 546.074];
    for (const nm of imagedNm) expect(listed.find((l) => l.wavelengthNm === nm)!.rank).toBeGreaterThanOrEqual(SECOND_ORDER_MIN_RANK);
    const images = imagedNm.map((nm) => peak(xOf(2 * nm), 0.1 * 1000 * listed.find((l) => l.wavelengthNm === nm)!.rank));
    const r = matchLines([...base, ...images], hg, CALIBRATE_MATCH_DEFAULTS);
    expect(r.accepted).toBe(true);
    expect(r.secondOrder.map((m) => [m.peakIndex, Math.round(m.wavelengthNm * 1000)])).toEqual(
      imagedNm.map((nm, i) => [base.length + i, Math.round(nm * 1000)]),
    );
    expect(r.score!.secondOrder).toBe(3);
    // The images make the scale more certain than the order-1 peaks alone.
    const without = matchLines(base, hg, CALIBRATE_MATCH_DEFAULTS);
    expect(without.score!.secondOrder).toBe(0);
    expect(r.score!.falseMatchProbability).toBeLessThan(without.score!.falseMatchProbability);
  });
  it("counts the image of a line whose order-1 light lies in an unresolved blend matched to no line, within the blend's half width only", () => {
    // The 435.833 nm peak replaced by a broad blend centred 3 px (1.5 nm) to the red: its centroid is no line's
    // position, so no line is matched to it, yet 435.833 nm lies within its half width and shares its light.
    const nm = 435.833;
    const base = firstOrder();
    const i = base.findIndex((p) => Math.abs(p.positionPx - xOf(nm)) < 0.5);
    const strength = base[i].prominence;
    const withBlend = (fwhmPx: number) => {
      const peaks = [...base];
      peaks[i] = { ...peak(xOf(nm) + 3, 1.2 * strength), fwhmPx, blended: true };
      return [...peaks, peak(xOf(2 * nm), 0.1 * strength)];
    };
    const wide = matchLines(withBlend(10), lines, CALIBRATE_MATCH_DEFAULTS);
    expect(wide.accepted).toBe(true);
    expect(wide.matches.map((m) => m.wavelengthNm)).not.toContain(nm);
    expect(wide.secondOrder.map((m) => m.wavelengthNm)).toContain(nm);
    // A blend too narrow to hold the line (half width 1.5 px < 3 px) gives it no order-1 light: no image.
    const narrow = matchLines(withBlend(3), lines, CALIBRATE_MATCH_DEFAULTS);
    expect(narrow.accepted).toBe(true);
    expect(narrow.matches.map((m) => m.wavelengthNm)).not.toContain(nm);
    expect(narrow.secondOrder.map((m) => m.wavelengthNm)).not.toContain(nm);
  });
});
