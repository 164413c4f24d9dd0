import { describe, expect, it } from 'vitest';
import { FWHM_PER_SIGMA } from '../../../src/core/spectrum/peaks/index.js';
import { circularMean, fitGainCurve, measureDrift } from '../../../src/core/modes/index.js';
import { createRandom } from '../../../src/core/random.js';

const gauss = (x: number, c: number, fwhm: number): number => Math.exp(-0.5 * ((x - c) / (fwhm / FWHM_PER_SIGMA)) ** 2);

describe('fitGainCurve(modes, {model})', () => {
  it('recovers a Gaussian envelope exactly from noiseless mode powers (1.5 GHz FWHM, 250 MHz spacing)', () => {
    const modes = Array.from({ length: 9 }, (_, i) => ({ offsetHz: (i - 4) * 250e6, relativePower: gauss((i - 4) * 250e6, 80e6, 1.5e9) }));
    const g = fitGainCurve(modes)!;
    expect(Math.abs(g.fwhmHz - 1.5e9)).toBeLessThanOrEqual(1e3);
    expect(Math.abs(g.centerHz - 80e6)).toBeLessThanOrEqual(1e3);
  });
  it('recovers the gain width under a threshold (powers ∝ g − 0.5) with the above-threshold model, where the envelope is narrower', () => {
    const modes = Array.from({ length: 7 }, (_, i) => (i - 3) * 250e6 + 40e6)
      .map((f) => ({ offsetHz: f, relativePower: gauss(f, 0, 1.5e9) - 0.5 }))
      .filter((m) => m.relativePower > 0);
    const g = fitGainCurve(modes, { model: 'above-threshold' })!;
    expect(Math.abs(g.fwhmHz - 1.5e9) / 1.5e9).toBeLessThanOrEqual(0.01);
    expect(Math.abs((g.thresholdFraction ?? NaN) - 0.5)).toBeLessThanOrEqual(0.01);
    expect(fitGainCurve(modes)!.fwhmHz).toBeLessThan(1.2e9);
  });
  it('needs three modes (five for the threshold model)', () => {
    expect(fitGainCurve([{ offsetHz: 0, relativePower: 1 }, { offsetHz: 2.5e8, relativePower: 0.8 }])).toBeNull();
  });
});

describe('measureDrift(points, modeSpacingHz)', () => {
  it('unwraps the comb position modulo the spacing and recovers 6 MHz/s within its uncertainty', () => {
    const rng = createRandom(7);
    const spacing = 249.827e6;
    const points = Array.from({ length: 8 }, (_, i) => {
      const truth = 40e6 + 6e6 * 10 * i + 3e6 * rng.normal();
      return { source: `t${i}`, timeS: 10 * i, combPositionHz: ((truth % spacing) + spacing) % spacing, uncertaintyHz: 3e6 };
    });
    const d = measureDrift(points, spacing)!;
    expect(Math.abs(d.driftHzPerS - 6e6)).toBeLessThanOrEqual(3 * d.driftUncertaintyHzPerS);
    expect(d.driftUncertaintyHzPerS).toBeLessThan(0.2e6);
    expect(d.points[7].unwrappedHz - d.points[0].unwrappedHz).toBeGreaterThan(spacing);
  });
  it('warns when successive traces are too far apart to unwrap safely', () => {
    const d = measureDrift(
      [
        { source: 'a', timeS: 0, combPositionHz: 10e6, uncertaintyHz: 1e6 },
        { source: 'b', timeS: 60, combPositionHz: 120e6, uncertaintyHz: 1e6 },
      ],
      250e6,
    )!;
    expect(d.warnings.join(' ')).toMatch(/close to half the spacing/);
  });
  it('circularMean averages across the wrap (240 and 10 MHz of a 250 MHz period → 0)', () => {
    const c = circularMean([240e6, 10e6], [1, 1], 250e6);
    expect(Math.min(c.mean, 250e6 - c.mean)).toBeLessThanOrEqual(1);
  });
});
