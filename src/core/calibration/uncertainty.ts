import { dispersionAtNmPerPx, modelGradient, wavelengthAtNm, type DispersionModel } from './model.js';
import { polynomialWavelengthNm, type PolynomialModel } from './polynomialModel.js';

/** √(gᵀ C g): the standard uncertainty of λ(x) from the parameter covariance C, g = ∂λ/∂p at x. */
export function modelSigmaNm(model: DispersionModel, xPx: number): number {
  const g = modelGradient(model, xPx);
  const c = model.covariance;
  let s = 0;
  for (let a = 0; a < g.length; a++) {
    if (g[a] === 0) continue;
    for (let b = 0; b < g.length; b++) s += g[a] * c[a][b] * g[b];
  }
  return Math.sqrt(Math.max(0, s));
}

/** Least and greatest √(gᵀCg) over [loPx, hiPx] (nm, ascending), sampled at 101 points. */
export function scaleSigmaRangeNm(model: DispersionModel, rangePx: readonly [number, number]): [number, number] {
  const out: [number, number] = [Infinity, 0];
  for (let k = 0; k <= 100; k++) {
    const u = modelSigmaNm(model, rangePx[0] + ((rangePx[1] - rangePx[0]) * k) / 100);
    out[0] = Math.min(out[0], u);
    out[1] = Math.max(out[1], u);
  }
  return out;
}

export function polynomialSigmaNm(model: PolynomialModel, xPx: number): number {
  // gᵀCg with g_j = t^j, without allocating (called in the matcher's inner loops).
  const t = (xPx - model.centerPx) / model.scalePx;
  const c = model.covariance;
  let s = 0;
  let ta = 1;
  for (let a = 0; a <= model.degree; a++) {
    let tb = 1;
    let row = 0;
    for (let b = 0; b <= model.degree; b++) {
      row += c[a][b] * tb;
      tb *= t;
    }
    s += ta * row;
    ta *= t;
  }
  return Math.sqrt(Math.max(0, s));
}

/** What a wavelength uncertainty needs to know about a calibration. */
export interface CalibrationScale {
  model: DispersionModel;
  /** Positions of the first and last line used (px): inside, the model interpolates. */
  rangePx: [number, number];
  /**
   * For a polynomial: the same lines fitted with one degree more. Beyond the range its disagreement with the model
   * and its own covariance bound the extrapolation error the chosen degree cannot see. null when the lines are too
   * few for it.
   */
  checkModel: PolynomialModel | null;
}

export interface WavelengthEstimate {
  wavelengthNm: number;
  /** Combined standard uncertainty (nm); Infinity when an extrapolation cannot be bounded. */
  uncertaintyNm: number;
  dispersionNmPerPx: number;
  /** True beyond the range of the lines used. */
  extrapolated: boolean;
  /** How far beyond the range (px; 0 inside). */
  beyondRangePx: number;
  components: {
    /** From the model's parameter covariance, √(gᵀCg). */
    modelNm: number;
    /** The peak's centroid uncertainty times the dispersion. */
    positionNm: number;
    /** Beyond the range only: the check model's disagreement and spread (polynomials). */
    extrapolationNm: number;
  };
}

/**
 * λ(x) with its standard uncertainty σ² = gᵀCg + (dλ/dx · σ_x)² (+ the extrapolation term beyond the calibrated
 * range), by first-order propagation (GUM, JCGM 100:2008, §5.1).
 */
export function wavelengthWithUncertainty(
  scale: CalibrationScale,
  xPx: number,
  positionUncertaintyPx = 0,
): WavelengthEstimate {
  const { model, rangePx } = scale;
  const lambda = wavelengthAtNm(model, xPx);
  const disp = dispersionAtNmPerPx(model, xPx);
  const modelNm = modelSigmaNm(model, xPx);
  const positionNm = Math.abs(disp) * Math.max(0, positionUncertaintyPx);
  const beyond = xPx < rangePx[0] ? rangePx[0] - xPx : xPx > rangePx[1] ? xPx - rangePx[1] : 0;
  let extrapolationNm = 0;
  if (beyond > 0 && model.kind === 'polynomial') {
    if (scale.checkModel) {
      const diff = Math.abs(polynomialWavelengthNm(scale.checkModel, xPx) - lambda);
      extrapolationNm = Math.max(diff, polynomialSigmaNm(scale.checkModel, xPx));
    } else {
      extrapolationNm = Infinity;
    }
  }
  return {
    wavelengthNm: lambda,
    uncertaintyNm: Math.sqrt(modelNm ** 2 + positionNm ** 2 + extrapolationNm ** 2),
    dispersionNmPerPx: disp,
    extrapolated: beyond > 0,
    beyondRangePx: beyond,
    components: { modelNm, positionNm, extrapolationNm },
  };
}
