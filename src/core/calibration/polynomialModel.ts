import { linearLeastSquares } from '../fit/index.js';

/**
 * Polynomial dispersion λ(x) = Σ c_j t^j on the centred, scaled abscissa t = (x − centerPx)/scalePx, so that the
 * coefficients are of comparable size and the normal equations stay well conditioned up to degree 4.
 */
export interface PolynomialModel {
  kind: 'polynomial';
  degree: number;
  centerPx: number;
  scalePx: number;
  /** c_0 … c_degree (nm), in powers of t. */
  coefficientsNm: number[];
  /** Covariance of the coefficients (nm²). */
  covariance: number[][];
}

export interface WeightedPoint {
  xPx: number;
  wavelengthNm: number;
  /** 1/σ² (nm⁻²). */
  weight: number;
}

/** The normalisation of the abscissa used by every polynomial fit: centre of the x range, half its width. */
export function polynomialFrame(xs: readonly number[]): { centerPx: number; scalePx: number } {
  let lo = Infinity;
  let hi = -Infinity;
  for (const x of xs) {
    lo = Math.min(lo, x);
    hi = Math.max(hi, x);
  }
  const centerPx = (lo + hi) / 2;
  const scalePx = Math.max((hi - lo) / 2, 1);
  return { centerPx, scalePx };
}

export function polynomialWavelengthNm(model: PolynomialModel, xPx: number): number {
  const t = (xPx - model.centerPx) / model.scalePx;
  let v = 0;
  for (let j = model.degree; j >= 0; j--) v = v * t + model.coefficientsNm[j];
  return v;
}

/** dλ/dx (nm/px). */
export function polynomialDispersionNmPerPx(model: PolynomialModel, xPx: number): number {
  const t = (xPx - model.centerPx) / model.scalePx;
  let v = 0;
  for (let j = model.degree; j >= 1; j--) v = v * t + j * model.coefficientsNm[j];
  return v / model.scalePx;
}

/** ∂λ/∂c_j = t^j, the row of the Jacobian used to propagate the covariance. */
export function polynomialGradient(model: PolynomialModel, xPx: number): number[] {
  const t = (xPx - model.centerPx) / model.scalePx;
  const g = new Array<number>(model.degree + 1);
  let p = 1;
  for (let j = 0; j <= model.degree; j++) {
    g[j] = p;
    p *= t;
  }
  return g;
}

export interface PolynomialFit {
  model: PolynomialModel;
  /** Σ w r² with the a-priori weights. */
  chi2: number;
  /** Points minus coefficients. */
  dof: number;
}

/**
 * Weighted least-squares polynomial of the given degree. The covariance is the a-priori one, (AᵀWA)⁻¹, scaled by the
 * Birge ratio χ²/dof when that exceeds 1 (Birge 1932): the stated centroid uncertainties are trusted as a floor,
 * and a larger scatter than they explain inflates the uncertainty rather than being ignored.
 * Returns null when the points cannot determine the coefficients (too few, or coincident positions).
 */
export function fitPolynomial(
  points: readonly WeightedPoint[],
  degree: number,
  frame = polynomialFrame(points.map((p) => p.xPx)),
): PolynomialFit | null {
  if (points.length < degree + 1) return null;
  const design = points.map((p) => {
    const t = (p.xPx - frame.centerPx) / frame.scalePx;
    const row = new Array<number>(degree + 1);
    let v = 1;
    for (let j = 0; j <= degree; j++) {
      row[j] = v;
      v *= t;
    }
    return row;
  });
  const fit = linearLeastSquares(
    design,
    points.map((p) => p.wavelengthNm),
    { weights: points.map((p) => p.weight), scaleByResiduals: false },
  );
  if (!fit) return null;
  const birge = fit.dof > 0 ? Math.max(1, fit.chi2 / fit.dof) : 1;
  return {
    model: {
      kind: 'polynomial',
      degree,
      centerPx: frame.centerPx,
      scalePx: frame.scalePx,
      coefficientsNm: fit.params,
      covariance: fit.covariance.map((row) => row.map((v) => v * birge)),
    },
    chi2: fit.chi2,
    dof: fit.dof,
  };
}
