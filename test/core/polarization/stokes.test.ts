import { describe, expect, it } from 'vitest';
import { InputError } from '../../../src/core/errors.js';
import { fitMalus } from '../../../src/core/polarization/malusFit.js';
import { fitRotatingRetarder, stokesFromFourAngles, type RetarderPoint } from '../../../src/core/polarization/stokes.js';
import { createRandom } from '../../../src/core/random.js';

const DEG = Math.PI / 180;

/**
 * Mueller matrices written out independently of the code under test, as in Goldstein, *Polarized Light* (2nd ed.,
 * ch. 5, rotating quarter-wave retarder; from memory) and Collett, *Field Guide to Polarization* ("Mueller matrices";
 * from memory): a linear retarder of retardance δ with its fast axis at θ, and an ideal linear polarizer at α.
 */
function retarder(thetaDeg: number, deltaDeg: number): number[][] {
  const c = Math.cos(2 * thetaDeg * DEG);
  const s = Math.sin(2 * thetaDeg * DEG);
  const cd = Math.cos(deltaDeg * DEG);
  const sd = Math.sin(deltaDeg * DEG);
  return [
    [1, 0, 0, 0],
    [0, c * c + s * s * cd, c * s * (1 - cd), -s * sd],
    [0, c * s * (1 - cd), s * s + c * c * cd, c * sd],
    [0, s * sd, -c * sd, cd],
  ];
}
function polarizer(alphaDeg: number): number[][] {
  const c = Math.cos(2 * alphaDeg * DEG);
  const s = Math.sin(2 * alphaDeg * DEG);
  return [
    [0.5, 0.5 * c, 0.5 * s, 0],
    [0.5 * c, 0.5 * c * c, 0.5 * c * s, 0],
    [0.5 * s, 0.5 * c * s, 0.5 * s * s, 0],
    [0, 0, 0, 0],
  ];
}
function apply(m: number[][], v: number[]): number[] {
  return m.map((row) => row.reduce((acc, x, i) => acc + x * v[i], 0));
}
/** Intensity behind retarder(θ) then polarizer(α) for the Stokes vector s. */
function detected(s: number[], thetaDeg: number, deltaDeg = 90, alphaDeg = 0): number {
  return apply(polarizer(alphaDeg), apply(retarder(thetaDeg, deltaDeg), s))[0];
}

function qwpSeries(s: number[], opts: { steps?: number; noise?: number; seed?: number; delta?: number; alpha?: number } = {}): RetarderPoint[] {
  const steps = opts.steps ?? 16;
  const r = createRandom(opts.seed ?? 1);
  return Array.from({ length: steps }, (_, i) => {
    const theta = (180 * i) / steps;
    const mean = detected(s, theta, opts.delta ?? 90, opts.alpha ?? 0);
    return { angleDeg: theta, intensity: mean + (opts.noise ?? 0) * r.normal() };
  });
}

describe('stokesFromFourAngles({ i0, i45, i90, i135 })', () => {
  it('gives S0 = 1, S1 = 0.3, S2 = 0.519615, DoLP 0.6, AoLP 30° for 0.65, 0.759808, 0.35, 0.240192 (Collett, CHECK_VALUES)', () => {
    const s = stokesFromFourAngles({ i0: 0.65, i45: 0.759808, i90: 0.35, i135: 0.240192 });
    expect(Math.abs(s.s0 - 1)).toBeLessThanOrEqual(1e-9);
    expect(Math.abs(s.s1 - 0.3)).toBeLessThanOrEqual(1e-9);
    expect(Math.abs(s.s2 - 0.519616)).toBeLessThanOrEqual(1e-9);
    expect(Math.abs(s.dolp - 0.6)).toBeLessThanOrEqual(1e-6);
    expect(Math.abs(s.aolpDeg - 30)).toBeLessThanOrEqual(1e-4);
    expect(Math.abs(s.closure)).toBeLessThanOrEqual(1e-9);
  });
  it('agrees with the least-squares Malus fit on the same four readings', () => {
    const i = { i0: 0.31, i45: 0.52, i90: 0.69, i135: 0.47 };
    const s = stokesFromFourAngles(i);
    const fit = fitMalus([0, 45, 90, 135].map((a, k) => ({ angleDeg: a, intensity: [i.i0, i.i45, i.i90, i.i135][k] })));
    expect(Math.abs(fit.stokes.s0 - s.s0)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(fit.stokes.s1 - s.s1)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(fit.stokes.s2 - s.s2)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(fit.azimuthDeg - s.aolpDeg)).toBeLessThanOrEqual(1e-9);
    // Closure (I0 + I90) − (I45 + I135) = 0.01, relative to S0 = 0.995.
    expect(Math.abs(s.closure - 0.01 / 0.995)).toBeLessThanOrEqual(1e-12);
  });
  it('refuses negative or non-finite readings', () => {
    expect(() => stokesFromFourAngles({ i0: -1, i45: 0.5, i90: 0.5, i135: 0.5 })).toThrow(InputError);
    expect(() => stokesFromFourAngles({ i0: NaN, i45: 0.5, i90: 0.5, i135: 0.5 })).toThrow(/i0: expected a finite number/);
  });
});

describe('fitRotatingRetarder(points, options)', () => {
  it('matches the closed forms for horizontal and circular light behind a QWP and a horizontal analyser', () => {
    // Horizontal (1, 1, 0, 0): I = ½(1 + cos² 2θ); circular (1, 0, 0, 1): I = ½(1 − sin 2θ) (Goldstein's formula,
    // from memory, with the matrices above).
    for (const theta of [0, 10, 22.5, 45, 67.5, 90, 135]) {
      const c = Math.cos(2 * theta * DEG);
      expect(Math.abs(detected([1, 1, 0, 0], theta) - 0.5 * (1 + c * c))).toBeLessThanOrEqual(1e-12);
      expect(Math.abs(detected([1, 0, 0, 1], theta) - 0.5 * (1 - Math.sin(2 * theta * DEG)))).toBeLessThanOrEqual(1e-12);
    }
    const lin = fitRotatingRetarder(qwpSeries([1, 1, 0, 0]));
    expect(Math.abs(lin.dop - 1)).toBeLessThanOrEqual(1e-9);
    expect(Math.abs(lin.docp)).toBeLessThanOrEqual(1e-9);
    expect(Math.abs(lin.azimuthDeg - 0)).toBeLessThanOrEqual(1e-6);
    const circ = fitRotatingRetarder(qwpSeries([1, 0, 0, 1]));
    expect(Math.abs(circ.docp - 1)).toBeLessThanOrEqual(1e-9);
    expect(Math.abs(circ.ellipticityAngleDeg - 45)).toBeLessThanOrEqual(1e-6);
    expect(Math.abs(circ.ellipticity - 1)).toBeLessThanOrEqual(1e-6);
  });

  it('recovers an elliptical, partially polarized state (S = 1, 0.3, −0.4, 0.5) from 16 noisy steps', () => {
    const truth = [1, 0.3, -0.4, 0.5];
    const fit = fitRotatingRetarder(qwpSeries(truth, { noise: 0.003, seed: 4 }));
    const got = [fit.s0, fit.s1, fit.s2, fit.s3];
    const sig = [fit.s0Uncertainty, fit.s1Uncertainty, fit.s2Uncertainty, fit.s3Uncertainty];
    got.forEach((v, i) => {
      expect(Math.abs(v - truth[i])).toBeLessThanOrEqual(0.02);
      expect(Math.abs(v - truth[i])).toBeLessThanOrEqual(4 * sig[i]);
    });
    // DoP = √(0.09 + 0.16 + 0.25) = 0.707107; DoLP = 0.5; DoCP = 0.5; ψ = ½ atan2(−0.4, 0.3) = 153.43°;
    // χ = ½ asin(0.5 / 0.707107) = 22.5° (computed from the definitions).
    expect(Math.abs(fit.dop - 0.707107)).toBeLessThanOrEqual(0.015);
    expect(Math.abs(fit.dolp - 0.5)).toBeLessThanOrEqual(0.015);
    expect(Math.abs(fit.docp - 0.5)).toBeLessThanOrEqual(0.015);
    expect(Math.abs(fit.azimuthDeg - 153.435)).toBeLessThanOrEqual(1);
    expect(Math.abs(fit.ellipticityAngleDeg - 22.5)).toBeLessThanOrEqual(1);
    expect(fit.warnings).toEqual([]);
  });

  it('handles a retarder that is not quite quarter-wave, and an analyser at 30°', () => {
    const truth = [2, -0.5, 0.8, -0.6];
    const fit = fitRotatingRetarder(qwpSeries(truth, { delta: 100, alpha: 30, steps: 24 }), { retardanceDeg: 100, analyserAngleDeg: 30 });
    [fit.s0, fit.s1, fit.s2, fit.s3].forEach((v, i) => expect(Math.abs(v - truth[i])).toBeLessThanOrEqual(1e-9));
  });

  it('flags a plate whose zero is off the analyser axis (cos 2θ term)', () => {
    const pts = qwpSeries([1, 0.2, 0.3, 0.6], { noise: 0.001 }).map((p) => ({ ...p, intensity: detected([1, 0.2, 0.3, 0.6], p.angleDeg + 6) }));
    const fit = fitRotatingRetarder(pts);
    expect(fit.warnings.some((w) => /zero mark is probably off/.test(w))).toBe(true);
  });

  it('needs at least 6 readings at 5 distinct plate angles', () => {
    const pts = [0, 45, 90, 135].map((a) => ({ angleDeg: a, intensity: detected([1, 0, 0, 1], a) }));
    expect(() => fitRotatingRetarder(pts)).toThrow(/at least 6 readings at 5 or more distinct plate angles/);
  });
});
