import { InputError, assertFinite, invalid } from '../errors.js';
import { linearLeastSquares } from '../fit/index.js';
import { AZIMUTH_UNCERTAINTY_CAP_DEG } from './malusFit.js';
import { distinctAnglesMod180, toDeg, toRad, wrapAzimuthDeg } from './angles.js';
import { withDefaults } from './options.js';

/** Intensities behind an ideal linear analyser at 0°, 45°, 90° and 135°. */
export interface FourAngleIntensities {
  i0: number;
  i45: number;
  i90: number;
  i135: number;
}

export interface FourAngleStokes {
  s0: number;
  s1: number;
  s2: number;
  /** √(S1² + S2²)/S0. */
  dolp: number;
  /** Angle of linear polarization ½ atan2(S2, S1), in [0, 180). */
  aolpDeg: number;
  /**
   * (I0 + I90) − (I45 + I135), relative to S0: zero for an ideal analyser and a steady source. A large closure means
   * the source changed between the readings or the analyser angles are off.
   */
  closure: number;
}

/**
 * The four-angle method (Collett, *Field Guide to Polarization*, SPIE 2005, "Stokes parameters" and "Measurement of
 * the Stokes parameters" — from memory): S1 = I0 − I90, S2 = I45 − I135, and S0 = I0 + I90 = I45 + I135. Here S0 is
 * the mean of the two sums, ½(I0 + I45 + I90 + I135), which is the least-squares value from all four readings and equals
 * Collett's I0 + I90 whenever the closure is zero. S3 needs a retarder and is not measured.
 */
export function stokesFromFourAngles(i: FourAngleIntensities): FourAngleStokes {
  for (const key of ['i0', 'i45', 'i90', 'i135'] as const) {
    assertFinite(key, i[key]);
    if (i[key] < 0) throw invalid(key, 'a non-negative intensity', i[key]);
  }
  const s0 = 0.5 * (i.i0 + i.i45 + i.i90 + i.i135);
  if (!(s0 > 0)) throw new InputError('four-angle Stokes: all four intensities are zero', 'i0');
  const s1 = i.i0 - i.i90;
  const s2 = i.i45 - i.i135;
  return {
    s0,
    s1,
    s2,
    dolp: Math.hypot(s1, s2) / s0,
    aolpDeg: wrapAzimuthDeg(toDeg(0.5 * Math.atan2(s2, s1))),
    closure: (i.i0 + i.i90 - (i.i45 + i.i135)) / s0,
  };
}

/** One reading of the rotating-retarder method: the retarder's fast-axis angle and the intensity behind the analyser. */
export interface RetarderPoint {
  /** Fast-axis angle of the quarter-wave plate on its scale (deg). */
  angleDeg: number;
  intensity: number;
  uncertainty?: number;
  excluded?: boolean;
  source?: string;
}

export interface RotatingRetarderOptions {
  /** Name of the series in messages. @default 'series' */
  source?: string;
  /** Retardance of the plate at the working wavelength (deg); 90 for a true quarter-wave plate. @default 90 */
  retardanceDeg?: number;
  /** Transmission axis of the fixed analyser, on the same scale as the plate angles (deg). @default 0 */
  analyserAngleDeg?: number;
  /** Settings closer than this (mod 180°) count as one. @default 0.05 */
  angleToleranceDeg?: number;
  /** A cos 2θ term beyond this many σ (and 1 % of S0) is reported: the plate's zero is off the analyser axis. @default 3 */
  zeroCheckSigmas?: number;
}

export const ROTATING_RETARDER_DEFAULTS = {
  source: 'series',
  retardanceDeg: 90,
  analyserAngleDeg: 0,
  angleToleranceDeg: 0.05,
  zeroCheckSigmas: 3,
} as const;

export interface FullStokes {
  s0: number;
  s1: number;
  s2: number;
  s3: number;
  s0Uncertainty: number;
  s1Uncertainty: number;
  s2Uncertainty: number;
  s3Uncertainty: number;
  /** Degree of polarization √(S1² + S2² + S3²)/S0. */
  dop: number;
  dopUncertainty: number;
  /** Degree of linear polarization √(S1² + S2²)/S0. */
  dolp: number;
  dolpUncertainty: number;
  /** Degree of circular polarization S3/S0 (signed: the sign gives the handedness in Goldstein's convention). */
  docp: number;
  docpUncertainty: number;
  /** Azimuth of the polarization ellipse's major axis, ½ atan2(S2, S1), in [0, 180). */
  azimuthDeg: number;
  azimuthUncertaintyDeg: number;
  /** Ellipticity angle χ = ½ asin(S3 / √(S1² + S2² + S3²)), in [−45°, 45°]. */
  ellipticityAngleDeg: number;
  ellipticityAngleUncertaintyDeg: number;
  /** Ellipticity tan χ = ± minor/major axis ratio of the polarized part. */
  ellipticity: number;
  ellipticityUncertainty: number;
}

export interface RotatingRetarderFit extends FullStokes {
  /** Covariance of (S0, S1, S2, S3, k) where k is the cos 2θ check term, scaled by χ²/dof. */
  covariance: number[][];
  /** Coefficient of the cos 2θ term relative to S0: ideally zero; nonzero when the plate's zero is off the analyser axis. */
  zeroCheck: number;
  zeroCheckUncertainty: number;
  chi2: number;
  dof: number;
  rms: number;
  points: Array<{ angleDeg: number; intensity: number; model: number; residual: number; excluded: boolean; source?: string }>;
  warnings: string[];
}

/**
 * The rotating quarter-wave-plate method: a retarder of retardance δ with its fast axis at θ, followed by a fixed
 * linear analyser (Goldstein, *Polarized Light*, 2nd ed., Marcel Dekker 2003, ch. 5 "The measurement of the Stokes
 * polarization parameters", the rotating quarter-wave retarder and its Fourier analysis — cited from memory). With the
 * retarder's Mueller matrix in the form Goldstein uses (C = cos 2θ, S = sin 2θ; second row 0, C² + S² cos δ,
 * CS(1 − cos δ), −S sin δ), the intensity behind a horizontal analyser is
 *
 *   I(θ) = ½ [ S0 + S1 (C² + S² cos δ) + S2 CS (1 − cos δ) − S3 S sin δ ]
 *
 * which for δ = 90° is ½[A − B sin 2θ + C' cos 4θ + D sin 4θ] with A = S0 + S1/2, B = S3, C' = S1/2, D = S2/2 — the
 * Fourier coefficients of the method. (The sign of the S3 term, and so which hand S3 > 0 names, follows that matrix;
 * texts with the other handedness convention flip it.) Instead of Fourier sums, which need equally spaced angles,
 * S0…S3 are fitted directly by weighted linear least squares, so any set of five or more distinct angles works and
 * the covariance comes with them. A cos 2θ column is fitted alongside as a check: it is zero for an ideal set-up, and
 * an offset between the plate's zero and the analyser axis puts signal there. An analyser at α rotates the frame: the
 * plate angles are taken relative to α and the fitted S1, S2 rotated by 2α back into the scale's frame.
 */
export function fitRotatingRetarder(points: readonly RetarderPoint[], options: RotatingRetarderOptions = {}): RotatingRetarderFit {
  const o = withDefaults(ROTATING_RETARDER_DEFAULTS, options) as Required<RotatingRetarderOptions>;
  assertFinite('retardanceDeg', o.retardanceDeg, 1, 179);
  assertFinite('analyserAngleDeg', o.analyserAngleDeg);
  if (!Array.isArray(points) || points.length === 0) throw new InputError(`${o.source}: no readings`, o.source);
  points.forEach((p, i) => {
    const where = `${o.source}, ${p.source ?? `reading ${i + 1}`}`;
    assertFinite(`${where}: angle`, p.angleDeg);
    assertFinite(`${where}: intensity`, p.intensity);
    if (p.uncertainty !== undefined && !(p.uncertainty > 0)) throw invalid(`${where}: uncertainty`, 'a positive number', p.uncertainty);
    if (p.intensity < 0 && !(p.uncertainty !== undefined && p.intensity >= -3 * p.uncertainty)) {
      throw invalid(`${where}: intensity`, 'a non-negative intensity', p.intensity);
    }
  });
  const used = points.filter((p) => !p.excluded);
  const distinct = distinctAnglesMod180(
    used.map((p) => p.angleDeg),
    o.angleToleranceDeg,
  );
  if (distinct.length < 5 || used.length < 6) {
    throw new InputError(
      `${o.source}: the rotating quarter-wave-plate method needs at least 6 readings at 5 or more distinct plate angles (mod 180°), got ${used.length} at ${distinct.length}`,
      o.source,
    );
  }
  const delta = toRad(o.retardanceDeg);
  const alpha = toRad(o.analyserAngleDeg);
  const cd = Math.cos(delta);
  const sd = Math.sin(delta);
  const row = (angleDeg: number): number[] => {
    const t = toRad(angleDeg) - alpha;
    const c2 = Math.cos(2 * t);
    const s2 = Math.sin(2 * t);
    return [0.5, 0.5 * (c2 * c2 + cd * s2 * s2), 0.5 * (1 - cd) * s2 * c2, -0.5 * sd * s2, 0.5 * c2];
  };
  const hasSigma = used.every((p) => p.uncertainty !== undefined);
  const fit = linearLeastSquares(
    used.map((p) => row(p.angleDeg)),
    used.map((p) => p.intensity),
    { weights: hasSigma ? used.map((p) => 1 / p.uncertainty! ** 2) : undefined },
  );
  if (!fit) throw new InputError(`${o.source}: the plate angles do not determine S0…S3 (rank-deficient design)`, o.source);
  const [s0, , , , k] = fit.params;
  if (!(s0 > 0)) throw new InputError(`${o.source}: the fitted total intensity S0 is not positive`, o.source);
  // Rotate S1, S2 from the analyser's frame into the scale's frame (rotation of the Stokes vector by 2α).
  const ca = Math.cos(2 * alpha);
  const sa = Math.sin(2 * alpha);
  const rot = [
    [1, 0, 0, 0, 0],
    [0, ca, -sa, 0, 0],
    [0, sa, ca, 0, 0],
    [0, 0, 0, 1, 0],
    [0, 0, 0, 0, 1],
  ];
  const vec = matVec(rot, fit.params);
  const cov = matMul(matMul(rot, fit.covariance), transpose(rot));
  const stokes = fullStokes([vec[0], vec[1], vec[2], vec[3]], cov);
  const warnings: string[] = [];
  const kSigma = Math.sqrt(Math.max(0, fit.covariance[4][4]));
  if (Math.abs(k) > o.zeroCheckSigmas * kSigma && Math.abs(k) > 0.01 * s0) {
    warnings.push(
      `a cos 2θ term of ${(100 * (k / s0)).toFixed(1)} % of S0 is present: the plate's zero mark is probably off the analyser axis, which mixes S1, S2 and S3`,
    );
  }
  if (stokes.dop > 1 + 2 * stokes.dopUncertainty) {
    warnings.push(`the degree of polarization exceeds 1 (${stokes.dop.toFixed(3)}): check the retardance and the angles`);
  }
  return {
    ...stokes,
    covariance: cov,
    zeroCheck: k / s0,
    zeroCheckUncertainty: kSigma / s0,
    chi2: fit.chi2,
    dof: fit.dof,
    rms: fit.rms,
    points: points.map((p) => {
      const model = dot(row(p.angleDeg), fit.params);
      return {
        angleDeg: p.angleDeg,
        intensity: p.intensity,
        model,
        residual: p.intensity - model,
        excluded: Boolean(p.excluded),
        ...(p.source ? { source: p.source } : {}),
      };
    }),
    warnings,
  };
}

/**
 * Derived quantities of a Stokes vector (S0…S3) with their uncertainties, by first-order propagation from the
 * covariance (numerical gradients); the azimuth uncertainty is capped at that of a uniform azimuth.
 */
export function fullStokes(s: [number, number, number, number], covariance: number[][]): FullStokes {
  const [s0, s1, s2, s3] = s;
  const f = {
    dop: (v: number[]) => Math.hypot(v[1], v[2], v[3]) / v[0],
    dolp: (v: number[]) => Math.hypot(v[1], v[2]) / v[0],
    docp: (v: number[]) => v[3] / v[0],
    azimuth: (v: number[]) => 0.5 * Math.atan2(v[2], v[1]),
    chi: (v: number[]) => 0.5 * Math.asin(Math.max(-1, Math.min(1, v[3] / Math.hypot(v[1], v[2], v[3])))),
    ell: (v: number[]) => Math.tan(0.5 * Math.asin(Math.max(-1, Math.min(1, v[3] / Math.hypot(v[1], v[2], v[3]))))),
  };
  const x = [s0, s1, s2, s3];
  const sig = (fn: (v: number[]) => number): number => propagate(fn, x, covariance);
  const sdiag = (i: number): number => Math.sqrt(Math.max(0, covariance[i][i]));
  return {
    s0,
    s1,
    s2,
    s3,
    s0Uncertainty: sdiag(0),
    s1Uncertainty: sdiag(1),
    s2Uncertainty: sdiag(2),
    s3Uncertainty: sdiag(3),
    dop: f.dop(x),
    dopUncertainty: sig(f.dop),
    dolp: f.dolp(x),
    dolpUncertainty: sig(f.dolp),
    docp: f.docp(x),
    docpUncertainty: sig(f.docp),
    azimuthDeg: wrapAzimuthDeg(toDeg(f.azimuth(x))),
    azimuthUncertaintyDeg: Math.min(AZIMUTH_UNCERTAINTY_CAP_DEG, toDeg(sig(f.azimuth))),
    ellipticityAngleDeg: toDeg(f.chi(x)),
    ellipticityAngleUncertaintyDeg: toDeg(sig(f.chi)),
    ellipticity: f.ell(x),
    ellipticityUncertainty: sig(f.ell),
  };
}

/** σ of fn(x) from the covariance of x, by first-order propagation with a central-difference gradient. */
export function propagate(fn: (v: number[]) => number, x: number[], cov: number[][]): number {
  const g = x.map((xi, i) => {
    const h = Math.max(1e-9, 1e-6 * Math.max(Math.abs(xi), Math.sqrt(Math.max(0, cov[i][i]))));
    const up = x.slice();
    const dn = x.slice();
    up[i] += h;
    dn[i] -= h;
    return (fn(up) - fn(dn)) / (2 * h);
  });
  let s = 0;
  for (let i = 0; i < g.length; i++) for (let j = 0; j < g.length; j++) s += g[i] * cov[i][j] * g[j];
  return Math.sqrt(Math.max(0, s));
}

function dot(a: number[], b: number[]): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

function matVec(m: number[][], v: number[]): number[] {
  return m.map((r) => dot(r, v));
}

function matMul(a: number[][], b: number[][]): number[][] {
  return a.map((r) => b[0].map((_, j) => r.reduce((s, v, k) => s + v * b[k][j], 0)));
}

function transpose(m: number[][]): number[][] {
  return m[0].map((_, j) => m.map((r) => r[j]));
}
