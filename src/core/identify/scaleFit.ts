import { fitDispersion, type CalibrationPoint, type DispersionFit, type FittedLine } from '../calibration/fitDispersion.js';
import { dispersionAtNmPerPx, wavelengthAtNm } from '../calibration/model.js';
import { fitPolynomial, polynomialDispersionNmPerPx, type PolynomialModel } from '../calibration/polynomialModel.js';
import { scaleSigmaRangeNm } from '../calibration/uncertainty.js';
import { InputError } from '../errors.js';

/**
 * A wavelength scale fitted to matched lines, in the calibration module's DispersionFit shape (so that a profile can
 * be built from it), with which fit made it.
 */
export type ScaleFit = DispersionFit & {
  /** The calibration module's fitDispersion (≥ `SMALL_SET` lines) or the small-set fit here. */
  method: 'fitDispersion' | 'small-set';
};

/**
 * Whether a scale's curvature is one a transmission grating in front of a camera gives: dλ/dx = d cos β · cos²(β − θc)
 * / f, so |dλ/dx| falls towards the red with cos β (by about a quarter across 400–700 nm at 1000 lines/mm, from the
 * grating equation; the lens term is symmetric about the axis and small). Allowed: a fall of at most
 * MAX_FALL_PER_NM per nm of the lines' span, a rise of at most MAX_RISE (lens term, centroid errors).
 */
export function gratingLikeCurvature(model: PolynomialModel, points: ReadonlyArray<Pick<CalibrationPoint, 'positionPx' | 'wavelengthNm'>>): boolean {
  let blue = points[0];
  let red = points[0];
  for (const p of points) {
    if (p.wavelengthNm < blue.wavelengthNm) blue = p;
    if (p.wavelengthNm > red.wavelengthNm) red = p;
  }
  const dBlue = Math.abs(polynomialDispersionNmPerPx(model, blue.positionPx));
  const dRed = Math.abs(polynomialDispersionNmPerPx(model, red.positionPx));
  const signs = Math.sign(polynomialDispersionNmPerPx(model, blue.positionPx)) === Math.sign(polynomialDispersionNmPerPx(model, red.positionPx));
  const fall = (dBlue - dRed) / ((dBlue + dRed) / 2);
  return signs && fall <= MAX_FALL_PER_NM * (red.wavelengthNm - blue.wavelengthNm) && fall >= -MAX_RISE;
}

/** Largest relative fall of |dλ/dx| per nm (1200 lines/mm gives about 1e-3 across the visible; grating equation). */
export const MAX_FALL_PER_NM = 1.5e-3;
/** Largest relative rise of |dλ/dx| towards the red (the lens term and centroid errors; common practice, no source). */
export const MAX_RISE = 0.03;

/** Below this many lines the scale is fitted here (see fitScale). */
export const SMALL_SET = 8;

/**
 * The scale through matched lines. From `SMALL_SET` lines on, the calibration module's fitDispersion (polynomial,
 * degree by AICc up to 2, or 3 from 12 lines: a camera spectroscope's scale is nearly linear with a gentle
 * curvature). With fewer, AICc is undefined for a quadratic and its outlier clipping can drop good lines of a real
 * curvature, so the fit is a weighted least-squares quadratic (from 5 lines; linear below), weights from the centroid
 * uncertainties on the linear scale's dispersion and the reference wavelengths' own (a blend's centroid), with the next
 * degree up or down as the extrapolation check.
 */
export function fitScale(points: readonly CalibrationPoint[]): ScaleFit | null {
  if (points.length >= SMALL_SET) {
    try {
      return { ...fitDispersion(points, { model: 'polynomial', maxDegree: points.length >= 12 ? 3 : 2 }), method: 'fitDispersion' };
    } catch (e) {
      if (e instanceof InputError) return null;
      throw e;
    }
  }
  const distinct = new Set(points.map((p) => p.positionPx)).size;
  if (distinct < 3) return null;
  const linear = fitPolynomial(points.map((p) => ({ xPx: p.positionPx, wavelengthNm: p.wavelengthNm, weight: 1 })), 1);
  if (!linear) return null;
  const slope = Math.abs(linear.model.coefficientsNm[1] / linear.model.scalePx);
  const weighted = points.map((p) => {
    const sigmaPx = Math.max(Number.isFinite(p.positionUncertaintyPx) ? p.positionUncertaintyPx : 0.5, p.saturated ? 0.3 : 0.1);
    return { xPx: p.positionPx, wavelengthNm: p.wavelengthNm, weight: 1 / ((sigmaPx * slope) ** 2 + (p.referenceUncertaintyNm ?? 0) ** 2) };
  });
  let degree = points.length >= 5 ? 2 : 1;
  let main = fitPolynomial(weighted, degree);
  if (points.length === 4) {
    // Four lines leave a quadratic one degree of freedom: taken only when its curvature is one a grating gives.
    const quadratic = fitPolynomial(weighted, 2);
    if (quadratic && gratingLikeCurvature(quadratic.model, points)) {
      degree = 2;
      main = quadratic;
    }
  }
  if (!main) return null;
  const check = fitPolynomial(weighted, points.length >= degree + 3 ? degree + 1 : degree - 1);
  const model = main.model;
  const xs = points.map((p) => p.positionPx);
  const rangePx: [number, number] = [Math.min(...xs), Math.max(...xs)];
  const l0 = wavelengthAtNm(model, rangePx[0]);
  const l1 = wavelengthAtNm(model, rangePx[1]);
  const lines: FittedLine[] = points.map((p) => {
    const fittedNm = wavelengthAtNm(model, p.positionPx);
    const residualNm = p.wavelengthNm - fittedNm;
    return {
      positionPx: p.positionPx,
      positionUncertaintyPx: p.positionUncertaintyPx,
      wavelengthNm: p.wavelengthNm,
      fittedNm,
      residualNm,
      residualPx: residualNm / (dispersionAtNmPerPx(model, p.positionPx) || slope),
      used: true,
      source: p.source,
      label: p.label,
      saturated: p.saturated ?? false,
      peakIndex: p.peakIndex,
    };
  });
  const rms = (values: number[]) => Math.sqrt(values.reduce((s, r) => s + r * r, 0) / values.length);
  const dof = points.length - (degree + 1);
  return {
    model,
    predictionRmsNm: null,
    scaleUncertaintyNm: scaleSigmaRangeNm(model, rangePx),
    checkModel: check && check.model.degree >= 1 ? check.model : null,
    rangePx,
    rangeNm: [Math.min(l0, l1), Math.max(l0, l1)],
    dispersionNmPerPx: dispersionAtNmPerPx(model, (rangePx[0] + rangePx[1]) / 2),
    lines,
    linesUsed: points.length,
    rmsNm: rms(lines.map((l) => l.residualNm)),
    rmsPx: rms(lines.map((l) => l.residualPx)),
    birgeRatio: dof > 0 ? main.chi2 / dof : NaN,
    dof,
    criterion: 'aicc',
    candidates: [{ kind: 'polynomial', degree, parameterCount: degree + 1, criterion: NaN, rmsNm: rms(lines.map((l) => l.residualNm)), lines: lines.length, chosen: true }],
    warnings: [],
    method: 'small-set',
  };
}
