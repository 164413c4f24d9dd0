import { InputError } from '../errors.js';
import { toRad, wrapAzimuthDeg } from './angles.js';
import { type AnalyserProfile, analyserOffsetFromReference, applyAnalyserOffset, correctExtinction, extinctionFactor } from './corrections.js';
import { type MalusFit, type MalusFitOptions, type MalusPoint, fitMalus } from './malusFit.js';
import { type RetarderPoint, type RotatingRetarderFit, type RotatingRetarderOptions, fitRotatingRetarder, fullStokes, propagate } from './stokes.js';
import type { TimeSeriesAnalysis } from './timeSeries.js';
import { type PolarizationVerdict, type VerdictOptions, polarizationVerdict } from './verdict.js';

/**
 * The whole answer for one measurement: fit, corrections for the analyser, Stokes parameters and verdict, in the
 * shape every front end prints (camelCase here; the CLI and server turn it into snake_case JSON).
 */

export interface AnalyseOptions {
  /** The analyser's profile (scale offset, extinction ratio). */
  profile?: AnalyserProfile;
  /** Extinction ratio k1/k2 of the analyser; overrides the profile's. */
  extinctionRatio?: number;
  /** Verdict thresholds. */
  verdict?: VerdictOptions;
  /** Malus-fit options (drift correction, tolerances). */
  fit?: MalusFitOptions;
}

export interface StokesResult {
  s0: number;
  s1: number;
  s2: number;
  s3?: number;
  s0Uncertainty: number;
  s1Uncertainty: number;
  s2Uncertainty: number;
  s3Uncertainty?: number;
  /** Degree of polarization (rotating-retarder method only). */
  dop?: number;
  dopUncertainty?: number;
  /** Degree of circular polarization S3/S0 (signed). */
  docp?: number;
  docpUncertainty?: number;
  ellipticityAngleDeg?: number;
  ellipticityAngleUncertaintyDeg?: number;
  ellipticity?: number;
  ellipticityUncertainty?: number;
  /** Frame of S1, S2: 'true' after the analyser offset was applied, 'scale' otherwise. */
  frame: 'true' | 'scale';
}

export interface PolarizationResult {
  method: 'rotating-analyser' | 'rotating-quarter-wave-plate';
  /** DoLP after the extinction-ratio correction (= dolpMeasured when no ER is known). */
  dolp: number;
  dolpUncertainty: number;
  dolpMeasured: number;
  dolpMeasuredUncertainty: number;
  /** Bias-corrected estimate √max(0, DoLP² − σ²) of the corrected DoLP; see MalusFit.dolpDebiased. */
  dolpDebiased: number;
  /** Azimuth of the polarization (transmission maximum) after the analyser offset, in [0, 180). */
  azimuthDeg: number;
  azimuthUncertaintyDeg: number;
  /** The same on the analyser's scale, before the offset. */
  azimuthScaleDeg: number;
  azimuthScaleUncertaintyDeg: number;
  iMax: number;
  iMaxUncertainty: number;
  iMin: number;
  iMinUncertainty: number;
  verdict: PolarizationVerdict;
  verdictReason: string;
  verdictThresholds: { polarizedMinDolp: number; unpolarizedMaxDolp: number; coverageFactor: number };
  dolpInterval: [number, number];
  corrections: {
    analyserOffsetDeg: number | null;
    analyserOffsetUncertaintyDeg: number | null;
    extinctionRatio: number | null;
    /** (ER − 1)/(ER + 1): measured DoLP = true DoLP × this. */
    extinctionFactor: number | null;
  };
  stokes: StokesResult;
  fit: {
    chi2: number;
    dof: number;
    reducedChi2: number;
    chi2PValue: number | null;
    rms: number;
    angleSpanDeg?: number;
    distinctAngles: number;
    fourTheta?: MalusFit['fourTheta'];
    drift?: MalusFit['drift'];
    driftCorrected?: boolean;
    /** Rotating-retarder method: the cos 2θ check term over S0. */
    zeroCheck?: number;
    zeroCheckUncertainty?: number;
  };
  points: Array<{
    angleDeg: number;
    intensity: number;
    uncertainty?: number;
    model: number;
    residual: number;
    excluded: boolean;
    exclusionReason?: string;
    source?: string;
  }>;
  warnings: string[];
  /** The Malus fit itself (for plots); not printed. */
  malus?: MalusFit;
}

/** Analyses a rotating-analyser series: Malus fit → extinction and offset corrections → Stokes S0…S2 → verdict. */
export function analyseRotatingAnalyser(points: readonly MalusPoint[], options: AnalyseOptions = {}): PolarizationResult {
  const fit = fitMalus(points, options.fit);
  const warnings = [...fit.warnings];
  const er = options.extinctionRatio ?? options.profile?.extinctionRatio;
  let dolp = fit.dolp;
  let dolpUncertainty = fit.dolpUncertainty;
  let factor: number | null = null;
  if (er !== undefined) {
    const c = correctExtinction({
      dolp: fit.dolp,
      dolpUncertainty: fit.dolpUncertainty,
      extinctionRatio: er,
      extinctionRatioUncertainty: options.extinctionRatio === undefined ? options.profile?.extinctionRatioUncertainty : undefined,
    });
    dolp = c.dolp;
    dolpUncertainty = c.dolpUncertainty;
    factor = 1 / c.factor;
    warnings.push(...c.warnings);
  }
  const offset = options.profile ? { offsetDeg: options.profile.offsetDeg, offsetUncertaintyDeg: options.profile.offsetUncertaintyDeg } : null;
  const az = offset ? applyAnalyserOffset(fit.azimuthDeg, fit.azimuthUncertaintyDeg, offset) : { azimuthDeg: fit.azimuthDeg, azimuthUncertaintyDeg: fit.azimuthUncertaintyDeg };
  const v = polarizationVerdict(dolp, dolpUncertainty, options.verdict);
  if (v.verdict === 'unpolarized' || v.verdict === 'inconclusive') {
    warnings.push(`the azimuth (${az.azimuthDeg.toFixed(1)}°) means little: the light is ${v.verdict === 'unpolarized' ? 'unpolarized' : 'not clearly polarized'} within the uncertainty`);
  }
  // Stokes: S = 2(a, b, c); S1, S2 scaled by the extinction correction and rotated by twice the offset.
  const f = factor === null ? 1 : 1 / extinctionFactor(er!);
  const d = toRad(offset?.offsetDeg ?? 0);
  const m = [
    [2, 0, 0],
    [0, 2 * f * Math.cos(2 * d), -2 * f * Math.sin(2 * d)],
    [0, 2 * f * Math.sin(2 * d), 2 * f * Math.cos(2 * d)],
  ];
  const s = mulVec(m, [fit.a, fit.b, fit.c]);
  const cov = mul(mul(m, fit.covariance), transpose(m));
  return {
    method: 'rotating-analyser',
    dolp,
    dolpUncertainty,
    dolpMeasured: fit.dolp,
    dolpMeasuredUncertainty: fit.dolpUncertainty,
    dolpDebiased: Number.isFinite(dolpUncertainty) ? Math.sqrt(Math.max(0, dolp * dolp - dolpUncertainty * dolpUncertainty)) : dolp,
    azimuthDeg: az.azimuthDeg,
    azimuthUncertaintyDeg: az.azimuthUncertaintyDeg,
    azimuthScaleDeg: fit.azimuthDeg,
    azimuthScaleUncertaintyDeg: fit.azimuthUncertaintyDeg,
    iMax: fit.iMax,
    iMaxUncertainty: fit.iMaxUncertainty,
    iMin: fit.iMin,
    iMinUncertainty: fit.iMinUncertainty,
    verdict: v.verdict,
    verdictReason: v.reason,
    verdictThresholds: v.thresholds,
    dolpInterval: [v.dolpLower, v.dolpUpper],
    corrections: {
      analyserOffsetDeg: offset?.offsetDeg ?? null,
      analyserOffsetUncertaintyDeg: offset?.offsetUncertaintyDeg ?? null,
      extinctionRatio: er ?? null,
      extinctionFactor: factor,
    },
    stokes: {
      s0: s[0],
      s1: s[1],
      s2: s[2],
      s0Uncertainty: Math.sqrt(Math.max(0, cov[0][0])),
      s1Uncertainty: Math.sqrt(Math.max(0, cov[1][1])),
      s2Uncertainty: Math.sqrt(Math.max(0, cov[2][2])),
      frame: offset ? 'true' : 'scale',
    },
    fit: {
      chi2: fit.chi2,
      dof: fit.dof,
      reducedChi2: fit.reducedChi2,
      chi2PValue: fit.chi2PValue,
      rms: fit.rms,
      angleSpanDeg: fit.angleSpanDeg,
      distinctAngles: fit.distinctAnglesDeg.length,
      fourTheta: fit.fourTheta,
      drift: fit.drift,
      driftCorrected: fit.driftCorrected,
    },
    points: fit.points.map(({ order: _order, ...p }) => p),
    warnings,
    malus: fit,
  };
}

/**
 * Analyses a rotating quarter-wave-plate series (fixed analyser): S0…S3 by least squares, the extinction correction
 * on S1…S3, the analyser offset as a rotation of S1, S2, then DoP, DoLP, DoCP, ellipticity and the verdict on DoLP.
 */
export function analyseRotatingRetarder(
  points: readonly RetarderPoint[],
  options: AnalyseOptions & { retarder?: RotatingRetarderOptions } = {},
): PolarizationResult {
  const fit: RotatingRetarderFit = fitRotatingRetarder(points, options.retarder);
  const warnings = [...fit.warnings];
  const er = options.extinctionRatio ?? options.profile?.extinctionRatio;
  const f = er !== undefined ? 1 / extinctionFactor(er) : 1;
  const d = toRad(options.profile?.offsetDeg ?? 0);
  const c2 = Math.cos(2 * d);
  const s2 = Math.sin(2 * d);
  const m = [
    [1, 0, 0, 0],
    [0, f * c2, -f * s2, 0],
    [0, f * s2, f * c2, 0],
    [0, 0, 0, f],
  ];
  const sv = mulVec(m, [fit.s0, fit.s1, fit.s2, fit.s3]) as [number, number, number, number];
  const cov4 = fit.covariance.slice(0, 4).map((r) => r.slice(0, 4));
  const cov = mul(mul(m, cov4), transpose(m));
  const st = fullStokes(sv, cov);
  const azSigma = Math.hypot(st.azimuthUncertaintyDeg, options.profile?.offsetUncertaintyDeg ?? 0);
  const v = polarizationVerdict(st.dolp, st.dolpUncertainty, options.verdict);
  if (st.dop > 1 + 2 * st.dopUncertainty && er !== undefined) {
    warnings.push(`the corrected degree of polarization exceeds 1 (${st.dop.toFixed(3)}): the extinction ratio ${er} may be too high`);
  }
  const scaleAz = wrapAzimuthDeg(fit.azimuthDeg);
  // An ideal rotating analyser would see I_max, I_min = ½(S0 ± √(S1² + S2²)); derived here, not measured.
  const iMaxOf = (v: number[]): number => 0.5 * (v[0] + Math.hypot(v[1], v[2]));
  const iMinOf = (v: number[]): number => 0.5 * (v[0] - Math.hypot(v[1], v[2]));
  return {
    method: 'rotating-quarter-wave-plate',
    dolp: st.dolp,
    dolpUncertainty: st.dolpUncertainty,
    dolpMeasured: fit.dolp,
    dolpMeasuredUncertainty: fit.dolpUncertainty,
    dolpDebiased: Math.sqrt(Math.max(0, st.dolp ** 2 - st.dolpUncertainty ** 2)),
    azimuthDeg: st.azimuthDeg,
    azimuthUncertaintyDeg: azSigma,
    azimuthScaleDeg: scaleAz,
    azimuthScaleUncertaintyDeg: fit.azimuthUncertaintyDeg,
    iMax: iMaxOf(sv),
    iMaxUncertainty: propagate(iMaxOf, sv, cov),
    iMin: iMinOf(sv),
    iMinUncertainty: propagate(iMinOf, sv, cov),
    verdict: v.verdict,
    verdictReason: v.reason,
    verdictThresholds: v.thresholds,
    dolpInterval: [v.dolpLower, v.dolpUpper],
    corrections: {
      analyserOffsetDeg: options.profile?.offsetDeg ?? null,
      analyserOffsetUncertaintyDeg: options.profile?.offsetUncertaintyDeg ?? null,
      extinctionRatio: er ?? null,
      extinctionFactor: er !== undefined ? 1 / f : null,
    },
    stokes: {
      s0: st.s0,
      s1: st.s1,
      s2: st.s2,
      s3: st.s3,
      s0Uncertainty: st.s0Uncertainty,
      s1Uncertainty: st.s1Uncertainty,
      s2Uncertainty: st.s2Uncertainty,
      s3Uncertainty: st.s3Uncertainty,
      dop: st.dop,
      dopUncertainty: st.dopUncertainty,
      docp: st.docp,
      docpUncertainty: st.docpUncertainty,
      ellipticityAngleDeg: st.ellipticityAngleDeg,
      ellipticityAngleUncertaintyDeg: st.ellipticityAngleUncertaintyDeg,
      ellipticity: st.ellipticity,
      ellipticityUncertainty: st.ellipticityUncertainty,
      frame: options.profile ? 'true' : 'scale',
    },
    fit: {
      chi2: fit.chi2,
      dof: fit.dof,
      reducedChi2: fit.dof > 0 ? fit.chi2 / fit.dof : NaN,
      chi2PValue: null,
      rms: fit.rms,
      distinctAngles: new Set(points.filter((p) => !p.excluded).map((p) => wrapAzimuthDeg(p.angleDeg).toFixed(3))).size,
      zeroCheck: fit.zeroCheck,
      zeroCheckUncertainty: fit.zeroCheckUncertainty,
    },
    points: fit.points,
    warnings,
  };
}

export interface AnalyserCalibrationOptions {
  /** True azimuth of the reference (deg); 0 = horizontal, e.g. floor glare. @default 0 */
  referenceAzimuthDeg?: number;
  referenceAzimuthUncertaintyDeg?: number;
  /** Refuse a reference less polarized than this (its axis would be too uncertain). @default 0.1 */
  minReferenceDolp?: number;
  /** Extinction ratio to store with the profile. */
  extinctionRatio?: number;
  fit?: MalusFitOptions;
}

export const ANALYSER_CALIBRATION_DEFAULTS = { referenceAzimuthDeg: 0, referenceAzimuthUncertaintyDeg: 0, minReferenceDolp: 0.1 } as const;

/** Measures the analyser's scale offset from a series taken on a reference of known azimuth. */
export function calibrateAnalyser(
  points: readonly MalusPoint[],
  options: AnalyserCalibrationOptions = {},
): { profile: AnalyserProfile; fit: MalusFit; warnings: string[] } {
  const ref = options.referenceAzimuthDeg ?? ANALYSER_CALIBRATION_DEFAULTS.referenceAzimuthDeg;
  const minDolp = options.minReferenceDolp ?? ANALYSER_CALIBRATION_DEFAULTS.minReferenceDolp;
  const fit = fitMalus(points, { source: 'reference series', ...options.fit });
  const warnings = [...fit.warnings];
  if (!(fit.dolp - 2 * fit.dolpUncertainty >= minDolp)) {
    throw new InputError(
      `reference series: DoLP ${fit.dolp.toFixed(3)} ± ${fit.dolpUncertainty.toFixed(3)} is too weakly polarized to fix the analyser's axis (need at least ${minDolp}); use glare nearer Brewster's angle (about 56° from the normal for glass, 53° for water)`,
      'reference series',
    );
  }
  if (fit.azimuthUncertaintyDeg > 2) {
    warnings.push(`the reference's azimuth is uncertain by ${fit.azimuthUncertaintyDeg.toFixed(1)}°: the offset will carry that into every later azimuth`);
  }
  const off = analyserOffsetFromReference({
    measuredAzimuthDeg: fit.azimuthDeg,
    measuredAzimuthUncertaintyDeg: fit.azimuthUncertaintyDeg,
    referenceAzimuthDeg: ref,
    referenceAzimuthUncertaintyDeg: options.referenceAzimuthUncertaintyDeg ?? 0,
  });
  if (Math.abs(off.offsetDeg) > 20) {
    warnings.push(`the offset is large (${off.offsetDeg.toFixed(1)}°): check that the reference's azimuth really is ${ref}° and that the scale is read the right way round`);
  }
  return {
    profile: {
      offsetDeg: off.offsetDeg,
      offsetUncertaintyDeg: off.offsetUncertaintyDeg,
      ...(options.extinctionRatio !== undefined ? { extinctionRatio: options.extinctionRatio } : {}),
    },
    fit,
    warnings,
  };
}

/**
 * Puts the rotation result and the fixed-angle time series together into one reading: light that reads unpolarized
 * behind the rotating analyser but fluctuates strongly through a fixed one is randomly polarized (mode competition).
 */
export function interpretTogether(rotation: Pick<PolarizationResult, 'verdict'> | null, timeSeries: TimeSeriesAnalysis): string {
  const fluct = timeSeries.verdict === 'fluctuating';
  if (!rotation) return fluct ? 'fluctuating polarization (mode competition)' : 'stable polarization state';
  switch (rotation.verdict) {
    case 'unpolarized':
    case 'inconclusive':
      return fluct
        ? 'randomly polarized: unpolarized on average, but the polarization fluctuates (mode competition between orthogonally polarized modes)'
        : 'unpolarized, and stable in time';
    case 'partially_polarized':
      return fluct ? 'partially polarized with a fluctuating polarization (mode competition)' : 'partially polarized, stable in time';
    case 'polarized':
      return fluct ? 'polarized, but the power through a fixed analyser fluctuates (the axis or the power wanders)' : 'polarized and stable';
  }
}

function mulVec(m: number[][], v: number[]): number[] {
  return m.map((r) => r.reduce((s, x, i) => s + x * v[i], 0));
}

function mul(a: number[][], b: number[][]): number[][] {
  return a.map((r) => b[0].map((_, j) => r.reduce((s, x, k) => s + x * b[k][j], 0)));
}

function transpose(m: number[][]): number[][] {
  return m[0].map((_, j) => m.map((r) => r[j]));
}
