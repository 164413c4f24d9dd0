import { InputError, assertFinite } from '../errors.js';
import { DEG } from './gratingEquation.js';
import { fitGratingModel, median, type ModelObservation } from './fitModel.js';
import type { AngleResidual, GratingMeasurement } from './types.js';

/**
 * Angle method: diffraction angles read on a goniometer or spectrometer table.
 *
 * `reference: 'undeviated'` (the default) takes each angle as the telescope's turn from the straight-through beam,
 * the deviation θ_m = α + β_m; `'normal'` takes it from the grating normal, β_m itself. Either way
 * sin β_m = mλG − sin α (gratingEquation.ts). The incidence α is fitted when it is not given and orders on both sides
 * were measured (the ±m asymmetry carries it); otherwise it is the given value, 0 by default.
 */

export interface MeasuredAngle {
  order: number;
  angleDeg: number;
  uncertaintyDeg?: number;
}

export interface FitAnglesOptions {
  wavelengthNm: number;
  /** @default 0 */
  wavelengthUncertaintyNm?: number;
  angles: readonly MeasuredAngle[];
  /** Standard uncertainty of each angle (deg). @default 0.05 (≈ 3′, a vernier table read with care) */
  angleUncertaintyDeg?: number;
  /** @default 'undeviated' */
  reference?: 'undeviated' | 'normal';
  /** Fix the incidence (deg); fitted when absent and orders on both sides were measured, else 0. */
  incidenceDeg?: number;
}

export const FIT_ANGLES_DEFAULTS = {
  wavelengthUncertaintyNm: 0,
  angleUncertaintyDeg: 0.05,
  reference: 'undeviated',
} as const;

const INCONSISTENT_BIRGE = 10;
const INCONSISTENT_DEG = 0.5;

export function fitAngles(options: FitAnglesOptions): GratingMeasurement {
  const { wavelengthNm } = options;
  assertFinite('wavelengthNm', wavelengthNm);
  if (!(wavelengthNm > 0)) throw new InputError(`wavelength: expected a positive wavelength in nm, got ${wavelengthNm}`, 'wavelengthNm');
  const reference = options.reference ?? FIT_ANGLES_DEFAULTS.reference;
  const sigmaDefault = options.angleUncertaintyDeg ?? FIT_ANGLES_DEFAULTS.angleUncertaintyDeg;
  if (!(sigmaDefault > 0)) throw new InputError(`angle uncertainty: expected a positive angle, got ${sigmaDefault}°`, 'angleUncertaintyDeg');
  const wavelengthSigma = options.wavelengthUncertaintyNm ?? FIT_ANGLES_DEFAULTS.wavelengthUncertaintyNm;
  assertFinite('wavelengthUncertaintyNm', wavelengthSigma, 0);
  const warnings: string[] = [];
  const assumed: string[] = [];
  if (options.angleUncertaintyDeg === undefined && options.angles.some((a) => a.uncertaintyDeg === undefined)) assumed.push(`angles ±${sigmaDefault}°`);
  if (options.wavelengthUncertaintyNm === undefined) assumed.push('wavelength exact');

  if (options.angles.length === 0) throw new InputError('no angles given');
  let angles = options.angles.map((a) => {
    if (!Number.isInteger(a.order) || a.order === 0) throw new InputError(`angles: expected a diffracted order (a non-zero whole number), got ${a.order}`);
    assertFinite(`angle of order ${a.order}`, a.angleDeg);
    if (!(Math.abs(a.angleDeg) < 90)) throw new InputError(`angle of order ${a.order}: expected an angle below 90°, got ${a.angleDeg}°`);
    const sigma = a.uncertaintyDeg ?? sigmaDefault;
    if (!(sigma > 0)) throw new InputError(`uncertainty of order ${a.order}: expected a positive angle, got ${sigma}°`);
    return { order: a.order, value: a.angleDeg, sigma };
  });
  let mirrored = false;
  if (reference === 'undeviated') {
    // θ_m has the sign of m for any tilt; a table read the other way round is mirrored, mixed signs fit no grating.
    const signs = angles.map((a) => Math.sign(a.order * a.value));
    if (signs.some((s) => s === 0)) throw new InputError('angles: a diffracted order cannot leave along the undeviated beam (angle 0)');
    if (signs.some((s) => s > 0) && signs.some((s) => s < 0)) {
      throw new InputError('angles inconsistent with any grating: orders of the same sign lie on opposite sides of the undeviated beam');
    }
    if (signs.every((s) => s < 0)) {
      mirrored = true;
      angles = angles.map((a) => ({ ...a, value: -a.value }));
      warnings.push('the positive orders were at negative angles: the angle scale was mirrored');
    }
    for (const side of [1, -1]) {
      const s = angles.filter((a) => Math.sign(a.order) === side).sort((a, b) => Math.abs(a.order) - Math.abs(b.order));
      for (let i = 1; i < s.length; i++) {
        if (Math.abs(s[i].order) !== Math.abs(s[i - 1].order) && !(Math.abs(s[i].value) > Math.abs(s[i - 1].value))) {
          throw new InputError(`angles inconsistent with any grating: order ${s[i].order} (${s[i].value}°) is not deviated more than order ${s[i - 1].order} (${s[i - 1].value}°)`);
        }
      }
    }
  }
  const hasBothSides = angles.some((a) => a.order > 0) && angles.some((a) => a.order < 0);
  const fitIncidence = options.incidenceDeg === undefined && hasBothSides;
  const incidenceDeg = options.incidenceDeg ?? 0;
  assertFinite('incidenceDeg', incidenceDeg, -80, 80);
  const nParams = fitIncidence ? 2 : 1;
  if (angles.length < nParams) throw new InputError(`too few angles: ${angles.length} for ${nParams} unknowns; add another order`);

  const lambdaMm = wavelengthNm * 1e-6;
  const a0 = incidenceDeg * DEG;
  const single = angles.map((a) => {
    const beta = reference === 'undeviated' ? a.value * DEG - a0 : a.value * DEG;
    return (Math.sin(a0) + Math.sin(beta)) / (a.order * lambdaMm);
  });
  const gStart = median(single.filter((g) => g > 0).length > 0 ? single.filter((g) => g > 0) : single.map(Math.abs));
  for (const order of new Set(angles.map((a) => a.order))) {
    const s = order * lambdaMm * gStart - Math.sin(a0);
    if (Math.abs(s) >= 1) {
      throw new InputError(`order ${order} cannot exist here: at the ≈${gStart.toFixed(1)} lines/mm the other angles imply, sin β = ${s.toFixed(3)} (|sin β| must stay below 1)`);
    }
  }
  const observations: ModelObservation[] = angles.map((a) => ({
    order: a.order,
    measured: a.value,
    sigma: a.sigma,
    predict: (g: number, alphaDeg: number) => {
      const s = a.order * lambdaMm * g - Math.sin(alphaDeg * DEG);
      if (!(Math.abs(s) < 1)) return NaN;
      const beta = Math.asin(s) / DEG;
      return reference === 'undeviated' ? alphaDeg + beta : beta;
    },
  }));
  const fit = fitGratingModel({ observations, fitIncidence, incidenceDeg, fitOffset: false, offsetStart: 0, linesPerMmStart: gStart });
  if (!fit) throw new InputError('angles inconsistent with any grating: no line density and incidence give all the given orders');
  const residuals: AngleResidual[] = angles.map((a, i) => {
    const sign = mirrored ? -1 : 1;
    return {
      order: a.order,
      kind: 'angle',
      measuredDeg: sign * a.value,
      fittedDeg: sign * fit.fitted[i],
      residualDeg: sign * (a.value - fit.fitted[i]),
      uncertaintyDeg: a.sigma,
    };
  });
  const birgeRatio = fit.dof > 0 ? Math.sqrt(fit.chi2 / fit.dof) : null;
  const worstDeg = Math.max(...residuals.map((r) => Math.abs(r.residualDeg)));
  if (birgeRatio !== null && birgeRatio > INCONSISTENT_BIRGE && worstDeg > INCONSISTENT_DEG) {
    throw new InputError(
      `angles inconsistent with any grating: the best fit (${fit.linesPerMm.toFixed(1)} lines/mm) still misses by up to ${worstDeg.toFixed(2)}°; check the orders, the reference direction and the angles`,
    );
  }
  const scale = birgeRatio !== null && birgeRatio > 1 ? birgeRatio : 1;
  if (birgeRatio !== null && birgeRatio > 2) warnings.push(`the angles scatter ${birgeRatio.toFixed(1)}× more than their stated uncertainty: the fit uncertainty was scaled up by that factor`);
  if (fit.dof === 0) warnings.push('no redundant measurement: the fit cannot check the angles against each other (measure more orders)');
  const fitSigma = Math.sqrt(Math.max(0, fit.covariance[0][0])) * scale;
  const budget = { fitLinesPerMm: fitSigma, distanceLinesPerMm: 0, wavelengthLinesPerMm: (fit.linesPerMm * wavelengthSigma) / wavelengthNm };
  const total = Math.hypot(budget.fitLinesPerMm, budget.wavelengthLinesPerMm);
  const incidenceSigma = fit.incidenceIndex >= 0 ? Math.sqrt(Math.max(0, fit.covariance[1][1])) * scale : null;
  if (incidenceSigma !== null && Math.abs(fit.incidenceDeg) > Math.max(2 * incidenceSigma, 0.5)) {
    warnings.push(`the grating was not square to the beam: incidence ${fit.incidenceDeg.toFixed(2)} ± ${incidenceSigma.toFixed(2)}° (fitted and accounted for)`);
  }
  if (!fitIncidence && options.incidenceDeg === undefined) warnings.push('orders on one side only: normal incidence assumed (measure the −m orders too to fit it)');
  if (assumed.length > 0) warnings.push(`uncertainties not given, assumed: ${assumed.join(', ')}`);
  return {
    method: 'angles',
    linesPerMm: fit.linesPerMm,
    linesPerMmUncertainty: total,
    periodUm: 1000 / fit.linesPerMm,
    periodUncertaintyUm: (1000 * total) / (fit.linesPerMm * fit.linesPerMm),
    wavelengthNm,
    incidenceDeg: mirrored ? -fit.incidenceDeg : fit.incidenceDeg,
    incidenceUncertaintyDeg: incidenceSigma,
    incidenceFitted: fit.incidenceIndex >= 0,
    budget,
    residuals,
    chi2: fit.chi2,
    dof: fit.dof,
    birgeRatio,
    warnings,
  };
}
