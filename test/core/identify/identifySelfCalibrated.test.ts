import { describe, expect, it } from 'vitest';
import { identifySelfCalibrated } from '../../../src/core/identify/identifySelfCalibrated.js';
import { createRandom } from '../../../src/core/random.js';
import { loadLineList } from '../../../src/io/lineList.js';
import { synthesizePositions } from './syntheticPeaks.js';

const lines = loadLineList({ includeBands: true });

// Pixel positions from NIST ASD lines (outside reference) through the grating equation; no profile: the spectrum
// must find its own scale with the project's lines.
describe('identifySelfCalibrated(peaks, {lines}) — no profile', () => {
  it('names neon, helium and mercury tubes from their own lines, and says the scale came from the spectrum', () => {
    // Argon is left out: its table puts the strong lines in the near infrared and its visible ones are faint, so
    // neither the matcher nor the brightest-line search finds its scale from the visible lines alone (see the report).
    const gases = ['Ne', 'He', 'Hg'];
    const misses: string[] = [];
    let right = 0;
    for (const gas of gases) {
      for (let seed = 1; seed <= 3; seed++) {
        const r = identifySelfCalibrated(synthesizePositions([[gas, 1]], createRandom(seed * 13 + gas.length)), { lines });
        if (r.species[0].element === gas && r.species[0].present && r.calibration?.from === 'self') right++;
        else misses.push(`${gas}#${seed}→${r.species[0].element}${r.species[0].present ? '' : '?'} (${r.calibration?.lamp ?? 'no scale'})`);
      }
    }
    expect(right, misses.join(' ')).toBeGreaterThanOrEqual(7);
  });

  it('finds both gases of neon-helium and neon-mercury tubes', () => {
    for (const [mix, seed] of [[[['He', 1], ['Ne', 0.5]], 4], [[['Ne', 1], ['Hg', 0.4]], 5]] as const) {
      const r = identifySelfCalibrated(synthesizePositions(mix, createRandom(seed)), { lines });
      expect(r.species.filter((s) => s.present).map((s) => s.element).sort()).toEqual(mix.map(([e]) => e).sort());
    }
  });

  it('recovers the scale within a few tenths of a nm and lowers the confidence in the lamp species', () => {
    const r = identifySelfCalibrated(synthesizePositions([['Ne', 1]], createRandom(2)), { lines });
    const cal = r.calibration!;
    expect(cal.rmsNm).toBeLessThanOrEqual(0.3);
    // Dispersion of the synthetic rig at 550 nm: dλ/dx = d cos β · cos²(β − θc)/f ≈ 0.63 nm/px.
    expect(Math.abs(Math.abs(cal.dispersionNmPerPx) - 0.63)).toBeLessThanOrEqual(0.05);
    const ne = r.species.find((s) => s.element === 'Ne')!;
    expect(ne.evidenceTerms.penalty).toBeGreaterThan(0);
    expect(r.warnings[0]).toMatch(/wavelength scale from the spectrum itself/);
    for (const p of r.peaks.filter((q) => q.line?.element === 'Ne')) expect(Math.abs(p.wavelengthNm - p.line!.wavelengthNm)).toBeLessThanOrEqual(1);
  });

  it('names nothing when no lamp fits: random positions, or too few lines', () => {
    const rng = createRandom(9);
    const random = Array.from({ length: 14 }, (_, k) => ({
      positionPx: 480 * rng.uniform(), positionUncertaintyPx: 0.1, fwhmPx: 3, height: 1, area: 1 + k % 3, prominence: 1, snr: 40, saturated: false, blended: false,
    }));
    const r = identifySelfCalibrated(random, { lines });
    expect(r.species.some((s) => s.present)).toBe(false);
    const two = identifySelfCalibrated(random.slice(0, 2), { lines });
    expect(two.calibration).toBeNull();
    expect(two.warnings.join(' ')).toMatch(/needs at least 4 lines/);
  });

  it('says "no emission lines found" for noise peaks', () => {
    const noise = Array.from({ length: 6 }, (_, k) => ({
      positionPx: 40 * k + 7, positionUncertaintyPx: 1, fwhmPx: 1, height: 0.01, area: 0.01, prominence: 0.01, snr: 3, saturated: false, blended: false,
    }));
    const r = identifySelfCalibrated(noise, { lines });
    expect(r.emissionLinesFound).toBe(false);
    expect(r.warnings[0]).toMatch(/^no emission lines found/);
  });
});
