import { InputError, invalid } from '../errors.js';
import { levenbergMarquardt, linearLeastSquares } from '../fit/index.js';
import { angleSpanDeg, distinctAnglesMod180, toDeg, toRad, wrapAzimuthDeg } from './angles.js';
import { withDefaults } from './options.js';
import { chiSquareSurvival, fSurvival2 } from './statistics.js';

/** One reading behind a rotating analyser. */
export interface MalusPoint {
  /** Analyser transmission-axis angle as read on its scale (deg). */
  angleDeg: number;
  /** Transmitted intensity (any linear unit: W, counts, relative). */
  intensity: number;
  /** Standard uncertainty of `intensity`, where known; the fit weights by 1/σ². */
  uncertainty?: number;
  /** Left out of the fit (a saturated frame, say) but still reported with its residual. */
  excluded?: boolean;
  /** Why it was left out. */
  exclusionReason?: string;
  /** Where the reading came from, for messages and output (a file name, "line 7"). */
  source?: string;
}

export interface MalusFitOptions {
  /** Name of the series in messages. @default 'series' */
  source?: string;
  /** Settings closer than this (mod 180°) count as the same analyser angle. @default 0.05 */
  angleToleranceDeg?: number;
  /** p-value below which the cos 4θ, sin 4θ pair is reported as present. @default 0.01 */
  fourThetaAlpha?: number;
  /** Drift is reported as significant beyond this many standard uncertainties. @default 3 */
  driftSigmas?: number;
  /** Use the drift-corrected fit for the results (needs a revisited angle). @default false */
  correctDrift?: boolean;
  /**
   * The source's polarization is known to fluctuate (a fixed-analyser burst says so, as for a randomly polarized
   * laser): a drift is then worded as the source's own, which re-measuring will not remove. @default false
   */
  sourceFluctuates?: boolean;
  /** A negative intensity is accepted when within this many of its own σ of zero (noise after a background). @default 3 */
  negativeSigmas?: number;
  /** Warn when the settings cover less of the 180° period than this. @default 90 */
  minSpanDeg?: number;
}

export const MALUS_FIT_DEFAULTS = {
  source: 'series',
  angleToleranceDeg: 0.05,
  fourThetaAlpha: 0.01,
  driftSigmas: 3,
  correctDrift: false,
  sourceFluctuates: false,
  negativeSigmas: 3,
  minSpanDeg: 90,
} as const;

export interface MalusPointResult {
  angleDeg: number;
  intensity: number;
  uncertainty?: number;
  /** The fitted curve at this angle (including the drift factor when the drift-corrected fit is used). */
  model: number;
  /** intensity − model. */
  residual: number;
  excluded: boolean;
  exclusionReason?: string;
  source?: string;
  /** Position in acquisition order (0-based, the order the points were given in). */
  order: number;
}

/** The test for a cos 4θ, sin 4θ pair (a wobbling or tilted analyser, a polarization-dependent detector). */
export interface FourThetaCheck {
  /** √(d² + e²)/a for I = a + b cos 2θ + c sin 2θ + d cos 4θ + e sin 4θ. */
  relativeAmplitude: number;
  fStatistic: number;
  pValue: number;
  significant: boolean;
}

/** A linear trend of the source (or exposure) over the run, measured with revisited angles. */
export interface DriftCheck {
  /** Relative change of the transmitted intensity from the first point to the last: I ∝ 1 + d (t − t_mid). */
  relativeChange: number;
  relativeChangeUncertainty: number;
  significant: boolean;
  /** The analyser settings that were measured more than once, far apart in the run (deg, mod 180). */
  revisitedAnglesDeg: number[];
  /** DoLP and azimuth of the drift-corrected fit, for comparison. */
  correctedDolp: number;
  correctedAzimuthDeg: number;
}

export interface MalusFit {
  /** I(θ) = a + b cos 2θ + c sin 2θ. */
  a: number;
  b: number;
  c: number;
  /** Covariance of (a, b, c), scaled by χ²/dof. */
  covariance: number[][];
  iMax: number;
  iMaxUncertainty: number;
  iMin: number;
  iMinUncertainty: number;
  /** Degree of linear polarization √(b² + c²)/a = (I_max − I_min)/(I_max + I_min). */
  dolp: number;
  dolpUncertainty: number;
  /**
   * √max(0, DoLP² − σ²): the DoLP estimate corrected for its positive bias at low polarization (the "asymptotic"
   * estimator of Wardle & Kronberg 1974, from memory). `dolp` itself is the direct estimate.
   */
  dolpDebiased: number;
  /** Azimuth of the transmission maximum on the analyser's scale, in [0, 180). */
  azimuthDeg: number;
  azimuthUncertaintyDeg: number;
  /** Stokes S0, S1, S2 for an ideal analyser: I(θ) = ½(S0 + S1 cos 2θ + S2 sin 2θ) (Collett). */
  stokes: { s0: number; s1: number; s2: number; s0Uncertainty: number; s1Uncertainty: number; s2Uncertainty: number };
  chi2: number;
  dof: number;
  reducedChi2: number;
  /** P(χ² ≥ observed) when the points carry uncertainties (otherwise the scatter sets the scale and this is null). */
  chi2PValue: number | null;
  rms: number;
  /** Distinct analyser settings (mod 180°) used by the fit, and how much of the period they cover. */
  distinctAnglesDeg: number[];
  angleSpanDeg: number;
  fourTheta: FourThetaCheck | null;
  drift: DriftCheck | null;
  /** True when the results above come from the drift-corrected fit. */
  driftCorrected: boolean;
  points: MalusPointResult[];
  warnings: string[];
}

/** The cap on a reported azimuth uncertainty: the standard deviation of an azimuth uniform over 180° (180/√12). */
export const AZIMUTH_UNCERTAINTY_CAP_DEG = 180 / Math.sqrt(12);

/**
 * Fits Malus's law for partially polarized light behind a rotating ideal analyser, I(θ) = a + b cos 2θ + c sin 2θ, by
 * weighted linear least squares, and derives I_max = a + √(b²+c²), I_min = a − √(b²+c²), DoLP = √(b²+c²)/a and the
 * azimuth ½ atan2(c, b), with uncertainties propagated from the parameter covariance (scaled by χ²/dof). Checks for a
 * 4θ term (F-test) and for drift (a multiplicative linear trend in acquisition order, when an angle was revisited).
 */
export function fitMalus(points: readonly MalusPoint[], options: MalusFitOptions = {}): MalusFit {
  const o = withDefaults(MALUS_FIT_DEFAULTS, options) as Required<MalusFitOptions>;
  validatePoints(points, o);
  const warnings: string[] = [];
  const order = points.map((_, i) => i);
  const used = order.filter((i) => !points[i].excluded);
  const hasSigma = points[0].uncertainty !== undefined;
  const distinct = distinctAnglesMod180(
    used.map((i) => points[i].angleDeg),
    o.angleToleranceDeg,
  );
  if (distinct.length < 3) {
    const left = points.length - used.length;
    throw new InputError(
      `${o.source}: need at least 3 distinct analyser angles (mod 180°) to fit I(θ) = a + b cos 2θ + c sin 2θ, got ${
        distinct.length
      }${distinct.length ? ` (${distinct.map((a) => `${round(a, 2)}°`).join(', ')})` : ''}${
        left ? ` after leaving out ${left} excluded point${left > 1 ? 's' : ''}` : ''
      }`,
      o.source,
    );
  }
  const span = angleSpanDeg(distinct);
  if (span < o.minSpanDeg) {
    warnings.push(
      `the analyser angles cover only ${round(span, 1)}° of the 180° period: DoLP and azimuth are poorly constrained; rotate through at least 90°, better 180°`,
    );
  }
  const theta = used.map((i) => toRad(points[i].angleDeg));
  const y = used.map((i) => points[i].intensity);
  const weights = hasSigma ? used.map((i) => 1 / points[i].uncertainty! ** 2) : undefined;
  const design = theta.map((t) => [1, Math.cos(2 * t), Math.sin(2 * t)]);
  const n = used.length;
  const dofLinear = n - 3;
  // With no redundancy and no stated uncertainties there is nothing to set the scale of the covariance.
  const scaleByResiduals = dofLinear > 0 || !hasSigma;
  const linear = linearLeastSquares(design, y, { weights, scaleByResiduals });
  if (!linear) throw new InputError(`${o.source}: the analyser angles do not determine the fit (rank-deficient design)`, o.source);
  if (dofLinear === 0) {
    warnings.push(
      hasSigma
        ? 'only 3 points: no redundancy, so the uncertainties rest on the stated intensity uncertainties alone and the fit cannot be checked'
        : 'only 3 points and no stated uncertainties: the fit passes through them exactly, so no uncertainty can be estimated; measure more angles',
    );
  }

  const nPoints = points.length;
  const tau = (i: number): number => (nPoints > 1 ? i / (nPoints - 1) - 0.5 : 0);

  let params = linear.params;
  let cov = linear.covariance.map((r) => r.slice(0, 3));
  let chi2 = linear.chi2;
  let dof = linear.dof;
  let rms = linear.rms;
  let driftFactor = (_i: number): number => 1;

  // Drift: needs an angle measured twice, far apart in the run.
  const revisited = revisitedAngles(points, used, o.angleToleranceDeg);
  let drift: DriftCheck | null = null;
  let driftCorrected = false;
  if (revisited.length > 0 && n >= 5) {
    const fit = levenbergMarquardt(
      (x, p) => (p[0] + p[1] * Math.cos(2 * theta[x]) + p[2] * Math.sin(2 * theta[x])) * (1 + p[3] * tau(used[x])),
      used.map((_, k) => k),
      y,
      [...linear.params, 0],
      {
        weights,
        jacobian: (x, p) => {
          const cs = Math.cos(2 * theta[x]);
          const sn = Math.sin(2 * theta[x]);
          const f = 1 + p[3] * tau(used[x]);
          return [f, cs * f, sn * f, tau(used[x]) * (p[0] + p[1] * cs + p[2] * sn)];
        },
      },
    );
    const d = fit.params[3];
    const sd = fit.uncertainties[3];
    if (Number.isFinite(d) && Number.isFinite(sd)) {
      const derivedD = derive(fit.params[0], fit.params[1], fit.params[2], fit.covariance);
      drift = {
        relativeChange: d,
        relativeChangeUncertainty: sd,
        significant: Math.abs(d) > o.driftSigmas * sd,
        revisitedAnglesDeg: revisited,
        correctedDolp: derivedD.dolp,
        correctedAzimuthDeg: derivedD.azimuthDeg,
      };
      if (o.correctDrift) {
        params = fit.params.slice(0, 3);
        cov = fit.covariance.slice(0, 3).map((r) => r.slice(0, 3));
        chi2 = fit.chi2;
        dof = fit.dof;
        rms = fit.rms;
        driftFactor = (i) => 1 + d * tau(i);
        driftCorrected = true;
      }
      if (drift.significant) {
        warnings.push(
          `the intensity changed by ${signedPercent(d)} ± ${round(100 * sd, 2)} % over the run (a linear trend, from the revisited angle${
            revisited.length > 1 ? 's' : ''
          } ${revisited.map((a) => `${round(a, 1)}°`).join(', ')}): ${
            o.sourceFluctuates
              ? "the source's polarization fluctuates (the fixed-analyser burst shows it), so the rotation's DoLP and azimuth are averages over that wander; re-measuring will not remove it"
              : "the source's power or polarization, or the exposure, changed during the run"
          }${o.correctDrift ? '; the results are drift-corrected' : o.sourceFluctuates ? '' : '; use the drift correction or re-measure'}`,
        );
      }
    }
  }
  if (o.correctDrift && !driftCorrected) {
    warnings.push('drift correction asked for, but no analyser angle was revisited later in the run (e.g. 0° and again 180°): results are uncorrected');
  }

  // 4θ check: does adding cos 4θ, sin 4θ reduce χ² more than chance (F-test with 2 and n − 5 degrees of freedom)?
  let fourTheta: FourThetaCheck | null = null;
  if (n >= 6) {
    const d5 = theta.map((t) => [1, Math.cos(2 * t), Math.sin(2 * t), Math.cos(4 * t), Math.sin(4 * t)]);
    const f5 = linearLeastSquares(d5, y, { weights });
    if (f5 && f5.dof > 0) {
      const chi3 = linear.chi2;
      const fStat = f5.chi2 > 0 ? ((chi3 - f5.chi2) / 2) / (f5.chi2 / f5.dof) : chi3 > 0 ? Infinity : 0;
      const pValue = fSurvival2(fStat, f5.dof);
      fourTheta = {
        relativeAmplitude: Math.hypot(f5.params[3], f5.params[4]) / f5.params[0],
        fStatistic: fStat,
        pValue,
        significant: pValue < o.fourThetaAlpha,
      };
      if (fourTheta.significant) {
        warnings.push(
          `a cos 4θ / sin 4θ term is present (F-test p = ${pValue.toPrecision(2)}, amplitude ${round(
            100 * fourTheta.relativeAmplitude,
            2,
          )} % of the mean): the analyser may wobble or be tilted, or the detector or card is polarization-sensitive`,
        );
      }
    }
  }

  const [a, b, c] = params;
  if (!(a > 0)) throw new InputError(`${o.source}: the mean transmitted intensity is not positive (a = ${a}); nothing to analyse`, o.source);
  const derived = derive(a, b, c, cov);
  if (!Number.isFinite(derived.dolpUncertainty) && dofLinear > 0) {
    warnings.push('the uncertainties could not be estimated');
  }
  if (derived.iMin < -2 * (derived.iMinUncertainty || 0) && derived.iMin < 0) {
    warnings.push(
      `the fitted minimum intensity is negative (${derived.iMin.toPrecision(3)}): a background or dark offset may have been over-subtracted`,
    );
  }
  const chi2PValue = hasSigma && dof > 0 ? chiSquareSurvival(chi2, dof) : null;
  if (chi2PValue !== null && chi2PValue < 1e-3) {
    warnings.push(
      `the scatter about the fit is ${round(Math.sqrt(chi2 / dof), 2)}× the stated uncertainties (χ²/dof = ${round(
        chi2 / dof,
        2,
      )}): the source may fluctuate (a randomly polarized laser does) or the uncertainties are underestimated; the reported uncertainties are scaled up accordingly`,
    );
  }

  const pointResults: MalusPointResult[] = points.map((p, i) => {
    const t = toRad(p.angleDeg);
    const model = (a + b * Math.cos(2 * t) + c * Math.sin(2 * t)) * driftFactor(i);
    return {
      angleDeg: p.angleDeg,
      intensity: p.intensity,
      ...(p.uncertainty !== undefined ? { uncertainty: p.uncertainty } : {}),
      model,
      residual: p.intensity - model,
      excluded: Boolean(p.excluded),
      ...(p.exclusionReason ? { exclusionReason: p.exclusionReason } : {}),
      ...(p.source ? { source: p.source } : {}),
      order: i,
    };
  });

  return {
    a,
    b,
    c,
    covariance: cov,
    ...derived,
    chi2,
    dof,
    reducedChi2: dof > 0 ? chi2 / dof : NaN,
    chi2PValue,
    rms,
    distinctAnglesDeg: distinct,
    angleSpanDeg: span,
    fourTheta,
    drift,
    driftCorrected,
    points: pointResults,
    warnings,
  };
}

/** The transmitted intensity of the fitted curve at an analyser angle. */
export function malusIntensity(fit: Pick<MalusFit, 'a' | 'b' | 'c'>, angleDeg: number): number {
  const t = toRad(angleDeg);
  return fit.a + fit.b * Math.cos(2 * t) + fit.c * Math.sin(2 * t);
}

interface Derived {
  iMax: number;
  iMaxUncertainty: number;
  iMin: number;
  iMinUncertainty: number;
  dolp: number;
  dolpUncertainty: number;
  dolpDebiased: number;
  azimuthDeg: number;
  azimuthUncertaintyDeg: number;
  stokes: MalusFit['stokes'];
}

/** First-order error propagation σ² = gᵀ C g from the covariance of (a, b, c). */
function derive(a: number, b: number, c: number, cov: number[][]): Derived {
  const p = Math.hypot(b, c);
  const sigma = (g: number[]): number => {
    let s = 0;
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) s += g[i] * cov[i][j] * g[j];
    return Math.sqrt(Math.max(0, s));
  };
  // At p = 0 the direction is undefined; the gradient of p along b stands in for any direction.
  const ub = p > 0 ? b / p : 1;
  const uc = p > 0 ? c / p : 0;
  const dolp = p / a;
  const dolpUncertainty = sigma([-p / (a * a), ub / a, uc / a]);
  // ψ = ½ atan2(c, b): ∂ψ/∂b = −c/(2p²), ∂ψ/∂c = b/(2p²).
  const azSigmaRad = p > 0 ? sigma([0, -c / (2 * p * p), b / (2 * p * p)]) : Infinity;
  const azimuthUncertaintyDeg = Math.min(AZIMUTH_UNCERTAINTY_CAP_DEG, toDeg(azSigmaRad));
  return {
    iMax: a + p,
    iMaxUncertainty: sigma([1, ub, uc]),
    iMin: a - p,
    iMinUncertainty: sigma([1, -ub, -uc]),
    dolp,
    dolpUncertainty,
    dolpDebiased: Number.isFinite(dolpUncertainty) ? Math.sqrt(Math.max(0, dolp * dolp - dolpUncertainty * dolpUncertainty)) : dolp,
    azimuthDeg: wrapAzimuthDeg(toDeg(0.5 * Math.atan2(c, b))),
    azimuthUncertaintyDeg: Number.isNaN(azimuthUncertaintyDeg) ? NaN : azimuthUncertaintyDeg,
    stokes: {
      s0: 2 * a,
      s1: 2 * b,
      s2: 2 * c,
      s0Uncertainty: 2 * Math.sqrt(Math.max(0, cov[0][0])),
      s1Uncertainty: 2 * Math.sqrt(Math.max(0, cov[1][1])),
      s2Uncertainty: 2 * Math.sqrt(Math.max(0, cov[2][2])),
    },
  };
}

/** Settings measured at least twice, with the visits at least half the run apart. */
function revisitedAngles(points: readonly MalusPoint[], used: number[], toleranceDeg: number): number[] {
  const n = points.length;
  const groups: Array<{ angle: number; first: number; last: number }> = [];
  for (const i of used) {
    const w = wrapAzimuthDeg(points[i].angleDeg);
    const g = groups.find((q) => Math.abs(((w - q.angle + 270) % 180) - 90) <= toleranceDeg);
    if (g) g.last = i;
    else groups.push({ angle: w, first: i, last: i });
  }
  return groups.filter((g) => g.last - g.first >= (n - 1) / 2 && g.last > g.first).map((g) => g.angle);
}

function validatePoints(points: readonly MalusPoint[], o: Required<MalusFitOptions>): void {
  if (!Array.isArray(points) || points.length === 0) throw new InputError(`${o.source}: no readings`, o.source);
  const withSigma = points.filter((p) => p.uncertainty !== undefined).length;
  if (withSigma !== 0 && withSigma !== points.length) {
    throw new InputError(`${o.source}: some readings have an uncertainty and some do not; give it for all or none`, o.source);
  }
  points.forEach((p, i) => {
    const where = `${o.source}${p.source ? `, ${p.source}` : `, reading ${i + 1}`}`;
    if (typeof p.angleDeg !== 'number' || !Number.isFinite(p.angleDeg)) throw invalid(`${where}: angle`, 'a finite angle in degrees', p.angleDeg);
    if (typeof p.intensity !== 'number' || !Number.isFinite(p.intensity)) throw invalid(`${where}: intensity`, 'a finite number', p.intensity);
    if (p.uncertainty !== undefined && !(Number.isFinite(p.uncertainty) && p.uncertainty > 0)) {
      throw invalid(`${where}: uncertainty`, 'a positive number', p.uncertainty);
    }
    if (p.intensity < 0) {
      const allowed = p.uncertainty !== undefined && p.intensity >= -o.negativeSigmas * p.uncertainty;
      if (!allowed) {
        throw invalid(
          `${where}: intensity`,
          p.uncertainty !== undefined
            ? `a non-negative intensity (or one within ${o.negativeSigmas} σ of zero)`
            : 'a non-negative intensity (transmitted power cannot be negative; check the dark offset)',
          p.intensity,
        );
      }
    }
  });
}

function round(v: number, digits: number): number {
  const f = 10 ** digits;
  return Math.round(v * f) / f;
}

function signedPercent(v: number): string {
  const s = round(100 * v, 2);
  return `${s >= 0 ? '+' : ''}${s} %`;
}
