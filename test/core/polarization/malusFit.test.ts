import { describe, expect, it } from 'vitest';
import { InputError } from '../../../src/core/errors.js';
import { fitMalus, type MalusPoint } from '../../../src/core/polarization/malusFit.js';
import { createRandom } from '../../../src/core/random.js';

const DEG = Math.PI / 180;

/**
 * Ideal analyser at θ: I(θ) = ½(S0 + S1 cos 2θ + S2 sin 2θ), with S1 = p S0 cos 2ψ, S2 = p S0 sin 2ψ (Collett, *Field
 * Guide to Polarization*, SPIE 2005 — CHECK_VALUES "Polarization").
 */
function collett(angleDeg: number, dolp: number, azimuthDeg: number, s0 = 1): number {
  const s1 = dolp * s0 * Math.cos(2 * azimuthDeg * DEG);
  const s2 = dolp * s0 * Math.sin(2 * azimuthDeg * DEG);
  return 0.5 * (s0 + s1 * Math.cos(2 * angleDeg * DEG) + s2 * Math.sin(2 * angleDeg * DEG));
}

/** 10° steps over 180° (0° … 180°, the last a revisit of the first), 1 % noise of each reading. */
function series(seed: number, dolp: number, azimuthDeg: number, opts: { absolute?: boolean; withSigma?: boolean } = {}): MalusPoint[] {
  const r = createRandom(seed);
  const out: MalusPoint[] = [];
  for (let a = 0; a <= 180; a += 10) {
    const mean = collett(a, dolp, azimuthDeg);
    const sigma = opts.absolute ? 0.01 * 0.5 * (1 + dolp) : 0.01 * mean + 1e-4;
    out.push({ angleDeg: a, intensity: mean + sigma * r.normal(), ...(opts.withSigma ? { uncertainty: sigma } : {}) });
  }
  return out;
}

const axisError = (a: number, b: number): number => Math.abs(((a - b + 270) % 180) - 90);

describe('fitMalus(points, options)', () => {
  it('recovers 60 % polarized light at 30° from I0, I45, I90, I135 = 0.65, 0.759808, 0.35, 0.240192 (computed from Collett\'s formulae, CHECK_VALUES)', () => {
    const values = [0.65, 0.759808, 0.35, 0.240192];
    // The check values themselves follow from the formula (six decimals as published).
    [0, 45, 90, 135].forEach((a, i) => expect(Math.abs(collett(a, 0.6, 30) - values[i])).toBeLessThanOrEqual(5e-7));
    const fit = fitMalus([0, 45, 90, 135].map((a, i) => ({ angleDeg: a, intensity: values[i] })));
    expect(Math.abs(fit.dolp - 0.6)).toBeLessThanOrEqual(1e-6);
    expect(Math.abs(fit.azimuthDeg - 30)).toBeLessThanOrEqual(1e-4);
    expect(Math.abs(fit.iMax - 0.8)).toBeLessThanOrEqual(1e-6);
    expect(Math.abs(fit.iMin - 0.2)).toBeLessThanOrEqual(1e-6);
    // S0 = I0 + I90 = 1, S1 = I0 − I90 = 0.3, S2 = I45 − I135 = 0.519616 (Collett).
    expect(Math.abs(fit.stokes.s0 - 1)).toBeLessThanOrEqual(1e-6);
    expect(Math.abs(fit.stokes.s1 - 0.3)).toBeLessThanOrEqual(1e-6);
    expect(Math.abs(fit.stokes.s2 - 0.519616)).toBeLessThanOrEqual(1e-6);
  });

  it('meets |DoLP error| ≤ 0.01 and azimuth error ≤ 0.5° for DoLP ≥ 0.5 (seeded, 1 % noise, 10° steps over 180°)', () => {
    let worstDolp = 0;
    let worstAz = 0;
    for (let seed = 1; seed <= 60; seed++) {
      const dolp = [0.5, 0.75, 1][seed % 3];
      const az = (seed * 29.7) % 180;
      const fit = fitMalus(series(seed, dolp, az));
      worstDolp = Math.max(worstDolp, Math.abs(fit.dolp - dolp));
      worstAz = Math.max(worstAz, axisError(fit.azimuthDeg, az));
    }
    expect(worstDolp).toBeLessThanOrEqual(0.01);
    expect(worstAz).toBeLessThanOrEqual(0.5);
  });

  it('reports 1σ uncertainties that cover the truth 60–75 % of the time over 400 seeds', () => {
    // Scaled by χ²/dof with 16 dof, the expected coverage of ±1σ is that of Student's t: 66.7 %.
    const cases = [
      { dolp: 0.8, absolute: true, withSigma: false },
      { dolp: 0.8, absolute: false, withSigma: true },
      { dolp: 0.3, absolute: true, withSigma: false },
    ];
    for (const c of cases) {
      let coveredDolp = 0;
      let coveredAz = 0;
      const n = 400;
      for (let seed = 1; seed <= n; seed++) {
        const az = (seed * 37.3) % 180;
        const fit = fitMalus(series(1000 + seed, c.dolp, az, c));
        if (Math.abs(fit.dolp - c.dolp) <= fit.dolpUncertainty) coveredDolp++;
        if (axisError(fit.azimuthDeg, az) <= fit.azimuthUncertaintyDeg) coveredAz++;
      }
      expect(coveredDolp / n).toBeGreaterThanOrEqual(0.6);
      expect(coveredDolp / n).toBeLessThanOrEqual(0.75);
      expect(coveredAz / n).toBeGreaterThanOrEqual(0.6);
      expect(coveredAz / n).toBeLessThanOrEqual(0.75);
    }
  });

  it('debiases DoLP near zero: the direct estimate is Rayleigh-biased by ≈ σ√(π/2), the debiased one much less', () => {
    // For unpolarized light the fitted (b, c)/a is a 2-D normal about zero, so √(b²+c²)/a has the Rayleigh mean
    // σ√(π/2) (a property of the Rayleigh distribution; the asymptotic estimator √(P² − σ²) of Wardle & Kronberg 1974,
    // from memory, removes most of it).
    let raw = 0;
    let debiased = 0;
    let sigma = 0;
    const n = 400;
    for (let seed = 1; seed <= n; seed++) {
      const fit = fitMalus(series(5000 + seed, 0, 0, { absolute: true }));
      raw += fit.dolp / n;
      debiased += fit.dolpDebiased / n;
      sigma += fit.dolpUncertainty / n;
    }
    expect(Math.abs(raw / (sigma * Math.sqrt(Math.PI / 2)) - 1)).toBeLessThanOrEqual(0.15);
    // E[√max(0, r² − 1)] over a unit Rayleigh r is e^(−½) Γ(3/2) √2 = 0.760 (computed from the Rayleigh density).
    expect(Math.abs(debiased / (sigma * Math.exp(-0.5) * 0.886227 * Math.SQRT2) - 1)).toBeLessThanOrEqual(0.15);
    expect(debiased).toBeLessThan(0.7 * raw);
  });

  it('flags a cos 4θ term (a tilted analyser) by the F-test, and rarely flags clean data', () => {
    const r = createRandom(7);
    const pts: MalusPoint[] = [];
    for (let a = 0; a <= 180; a += 10) {
      pts.push({ angleDeg: a, intensity: collett(a, 0.7, 40) * (1 + 0.005 * r.normal()) + 0.02 * Math.cos(4 * a * DEG) });
    }
    const dirty = fitMalus(pts);
    expect(dirty.fourTheta?.significant).toBe(true);
    expect(dirty.warnings.some((w) => /cos 4θ/.test(w))).toBe(true);
    let falseAlarms = 0;
    for (let seed = 1; seed <= 200; seed++) if (fitMalus(series(seed, 0.7, 40, { absolute: true })).fourTheta?.significant) falseAlarms++;
    // α = 0.01: about 2 of 200 expected.
    expect(falseAlarms).toBeLessThanOrEqual(8);
  });

  it('measures a linear drift from the revisited angle and corrects for it on request', () => {
    const r = createRandom(11);
    const pts: MalusPoint[] = [];
    const angles = Array.from({ length: 19 }, (_, i) => i * 10);
    angles.forEach((a, i) => {
      const drift = 1 + 0.06 * (i / 18 - 0.5); // +6 % from first to last
      pts.push({ angleDeg: a, intensity: collett(a, 0.9, 100) * drift * (1 + 0.003 * r.normal()) + 1e-4 });
    });
    const plain = fitMalus(pts);
    expect(plain.drift).not.toBeNull();
    expect(Math.abs(plain.drift!.relativeChange - 0.06)).toBeLessThanOrEqual(0.01);
    expect(plain.drift!.significant).toBe(true);
    expect(plain.drift!.revisitedAnglesDeg).toEqual([0]);
    expect(plain.warnings.some((w) => /changed by \+[56]\.\d+ %/.test(w))).toBe(true);
    const corrected = fitMalus(pts, { correctDrift: true });
    expect(corrected.driftCorrected).toBe(true);
    expect(Math.abs(corrected.dolp - 0.9)).toBeLessThan(Math.abs(plain.dolp - 0.9));
    expect(Math.abs(corrected.dolp - 0.9)).toBeLessThanOrEqual(0.005);
    // Without a revisit there is nothing to measure drift with.
    expect(fitMalus(pts.slice(0, 18)).drift).toBeNull();
  });

  it('warns when the angles span less than 90° of the period', () => {
    const pts = [0, 20, 40, 60].map((a) => ({ angleDeg: a, intensity: collett(a, 0.5, 10) }));
    expect(fitMalus(pts).warnings.some((w) => /cover only 60°/.test(w))).toBe(true);
    expect(fitMalus(series(1, 0.5, 10)).warnings.some((w) => /cover only/.test(w))).toBe(false);
  });

  it('leaves excluded points out of the fit but reports their residuals', () => {
    const pts = series(3, 0.9, 60);
    const spoiled = pts.map((p, i) => (i === 6 ? { ...p, intensity: p.intensity * 0.5, excluded: true, exclusionReason: 'saturated' } : p));
    const fit = fitMalus(spoiled);
    expect(Math.abs(fit.dolp - 0.9)).toBeLessThanOrEqual(0.01);
    expect(fit.points[6].excluded).toBe(true);
    expect(fit.points[6].exclusionReason).toBe('saturated');
    expect(fit.points[6].residual).toBeLessThan(-0.1);
  });

  describe('bad input', () => {
    const message = (f: () => unknown): string => {
      try {
        f();
      } catch (e) {
        expect(e).toBeInstanceOf(InputError);
        return (e as Error).message;
      }
      throw new Error('expected an InputError');
    };
    it('refuses two angles', () => {
      const m = message(() => fitMalus([{ angleDeg: 0, intensity: 1 }, { angleDeg: 45, intensity: 0.5 }], { source: 'bench.csv' }));
      expect(m).toMatch(/^bench\.csv: need at least 3 distinct analyser angles \(mod 180°\).*got 2 \(0°, 45°\)/);
    });
    it('refuses duplicate angles only (0° and 180° are the same setting)', () => {
      const m = message(() => fitMalus([0, 0, 180, 360].map((a) => ({ angleDeg: a, intensity: 1 }))));
      expect(m).toMatch(/got 1 \(0°\)/);
    });
    it('refuses a negative intensity without an uncertainty, naming the reading', () => {
      const pts = [0, 45, 90, 135].map((a) => ({ angleDeg: a, intensity: a === 90 ? -0.2 : 1, source: `line ${a / 45 + 2}` }));
      expect(message(() => fitMalus(pts, { source: 'meter.csv' }))).toMatch(/^meter\.csv, line 4: intensity: expected a non-negative intensity.*got -0\.2/);
    });
    it('accepts a slightly negative intensity within 3σ of zero (background-subtracted photometry)', () => {
      const pts = [0, 45, 90, 135].map((a) => ({ angleDeg: a, intensity: a === 90 ? -0.01 : 1, uncertainty: 0.01 }));
      expect(() => fitMalus(pts)).not.toThrow();
    });
    it('refuses NaN intensities and angles', () => {
      expect(message(() => fitMalus([0, 45, 90].map((a) => ({ angleDeg: a, intensity: a === 45 ? NaN : 1 }))))).toMatch(/reading 2: intensity: expected a finite number, got NaN/);
      expect(message(() => fitMalus([0, NaN, 90].map((a) => ({ angleDeg: a, intensity: 1 }))))).toMatch(/reading 2: angle/);
    });
    it('refuses uncertainties given for some readings only', () => {
      expect(message(() => fitMalus([{ angleDeg: 0, intensity: 1, uncertainty: 0.1 }, { angleDeg: 45, intensity: 1 }, { angleDeg: 90, intensity: 1 }]))).toMatch(/some readings have an uncertainty/);
    });
  });
});
