import { describe, expect, it } from 'vitest';
import { analyseRotatingAnalyser, calibrateAnalyser } from '../../../src/core/polarization/analyse.js';
import {
  analyserOffsetFromReference,
  applyAnalyserOffset,
  correctExtinction,
  extinctionFactor,
} from '../../../src/core/polarization/corrections.js';
import { createRandom } from '../../../src/core/random.js';

const DEG = Math.PI / 180;

/**
 * Behind a partial polarizer with principal transmittances k1, k2 at θ (Collett, *Field Guide to Polarization*,
 * Mueller matrix of a partial polarizer, from memory): I = ½[(k1 + k2) S0 + (k1 − k2)(S1 cos 2θ + S2 sin 2θ)].
 */
function partial(angleDeg: number, dolp: number, azimuthDeg: number, k1: number, k2: number): number {
  const s1 = dolp * Math.cos(2 * azimuthDeg * DEG);
  const s2 = dolp * Math.sin(2 * azimuthDeg * DEG);
  return 0.5 * ((k1 + k2) + (k1 - k2) * (s1 * Math.cos(2 * angleDeg * DEG) + s2 * Math.sin(2 * angleDeg * DEG)));
}

describe('extinction ratio (Collett: measured DoLP = true DoLP × (ER − 1)/(ER + 1))', () => {
  it('extinctionFactor(100) = 99/101 = 0.980198 (CHECK_VALUES)', () => {
    expect(Math.abs(extinctionFactor(100) - 0.980198)).toBeLessThanOrEqual(5e-7);
  });
  it('60 % polarized light at 30° through an ER = 100 analyser measures 0.588119 and corrects back to 0.6 (CHECK_VALUES)', () => {
    const pts = [0, 45, 90, 135].map((a) => ({ angleDeg: a, intensity: partial(a, 0.6, 30, 1, 0.01) }));
    const r = analyseRotatingAnalyser(pts, { extinctionRatio: 100 });
    expect(Math.abs(r.dolpMeasured - 0.588119)).toBeLessThanOrEqual(5e-7);
    expect(Math.abs(r.dolp - 0.6)).toBeLessThanOrEqual(1e-9);
    expect(Math.abs(r.azimuthDeg - 30)).toBeLessThanOrEqual(1e-6);
    expect(Math.abs(r.corrections.extinctionFactor! - 0.980198)).toBeLessThanOrEqual(5e-7);
  });
  it('propagates the uncertainty of the ER and warns when the correction overshoots 1', () => {
    const c = correctExtinction({ dolp: 0.98, dolpUncertainty: 0.001, extinctionRatio: 50, extinctionRatioUncertainty: 10 });
    // σ = hypot(0.001 · 51/49, 0.98 · 2/49² · 10) (the derivative of (ER + 1)/(ER − 1)).
    expect(Math.abs(c.dolpUncertainty - Math.hypot(0.001 * (51 / 49), 0.98 * (2 / 49 ** 2) * 10))).toBeLessThanOrEqual(1e-12);
    const over = correctExtinction({ dolp: 0.995, dolpUncertainty: 0.001, extinctionRatio: 20 });
    expect(over.dolp).toBeGreaterThan(1);
    expect(over.warnings[0]).toMatch(/extinction ratio is probably lower/);
  });
  it('refuses an extinction ratio of 1 or less', () => {
    expect(() => extinctionFactor(1)).toThrow(/expected a number greater than 1/);
    expect(() => extinctionFactor(NaN)).toThrow(/got NaN/);
  });
});

describe('analyser offset from a reference of known azimuth', () => {
  it('floor glare (horizontal, 0°) read at 176.5° on the scale gives an offset of +3.5°, applied with wrap-around', () => {
    // Reflection near Brewster's angle is s-polarized: perpendicular to the vertical plane of incidence, i.e.
    // horizontal for a floor (Hecht, *Optics*, polarization by reflection; from memory).
    const off = analyserOffsetFromReference({ measuredAzimuthDeg: 176.5, measuredAzimuthUncertaintyDeg: 0.3 });
    expect(Math.abs(off.offsetDeg - 3.5)).toBeLessThanOrEqual(1e-12);
    expect(off.offsetUncertaintyDeg).toBe(0.3);
    const a = applyAnalyserOffset(178, 0.4, off);
    expect(Math.abs(a.azimuthDeg - 1.5)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(a.azimuthUncertaintyDeg - 0.5)).toBeLessThanOrEqual(1e-12);
  });

  it('calibrateAnalyser finds a 4° offset from seeded glare and refuses an unpolarized reference', () => {
    const r = createRandom(3);
    // The scale reads 4° less than the true angle: true = scale + 4.
    const glare = Array.from({ length: 13 }, (_, i) => i * 15).map((a) => ({
      angleDeg: a,
      intensity: partial(a + 4, 0.55, 0, 1, 0.002) * (1 + 0.004 * r.normal()),
    }));
    const cal = calibrateAnalyser(glare, { referenceAzimuthDeg: 0 });
    expect(Math.abs(cal.profile.offsetDeg - 4)).toBeLessThanOrEqual(Math.max(0.3, 3 * cal.profile.offsetUncertaintyDeg));
    const laser = Array.from({ length: 13 }, (_, i) => i * 15).map((a) => ({ angleDeg: a, intensity: partial(a + 4, 1, 90, 1, 0.002) + 1e-3 }));
    const corrected = analyseRotatingAnalyser(laser, { profile: cal.profile });
    expect(Math.abs(corrected.azimuthDeg - 90)).toBeLessThanOrEqual(0.3);
    expect(corrected.stokes.frame).toBe('true');
    // S1 of vertical light is −S0·DoLP in the true frame.
    expect(corrected.stokes.s1 / corrected.stokes.s0).toBeLessThan(-0.98);
    const flat = Array.from({ length: 13 }, (_, i) => i * 15).map((a) => ({ angleDeg: a, intensity: 1 + 0.003 * r.normal() }));
    expect(() => calibrateAnalyser(flat)).toThrow(/too weakly polarized to fix the analyser's axis/);
  });
});
