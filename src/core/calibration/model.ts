import {
  gratingDispersionNmPerPx,
  gratingGradient,
  gratingWavelengthNm,
  type GratingModel,
} from './gratingModel.js';
import {
  polynomialDispersionNmPerPx,
  polynomialGradient,
  polynomialWavelengthNm,
  type PolynomialModel,
} from './polynomialModel.js';

/** Any dispersion model: position along the band (px) → air wavelength (nm). */
export type DispersionModel = PolynomialModel | GratingModel;

export function wavelengthAtNm(model: DispersionModel, xPx: number): number {
  return model.kind === 'polynomial' ? polynomialWavelengthNm(model, xPx) : gratingWavelengthNm(model, xPx);
}

/** dλ/dx (nm/px), signed. */
export function dispersionAtNmPerPx(model: DispersionModel, xPx: number): number {
  return model.kind === 'polynomial' ? polynomialDispersionNmPerPx(model, xPx) : gratingDispersionNmPerPx(model, xPx);
}

/** ∂λ/∂parameters, in the order of the model's covariance. */
export function modelGradient(model: DispersionModel, xPx: number): number[] {
  return model.kind === 'polynomial' ? polynomialGradient(model, xPx) : gratingGradient(model, xPx);
}

/** The position (px) where the model gives this wavelength, searched within [loPx, hiPx]; null if it is not there. */
export function positionAtPx(model: DispersionModel, wavelengthNm: number, loPx: number, hiPx: number): number | null {
  // Monotonic within a calibrated range: bisection on a sign change, then a few Newton steps for precision.
  const steps = 64;
  let prevX = loPx;
  let prevF = wavelengthAtNm(model, loPx) - wavelengthNm;
  for (let s = 1; s <= steps; s++) {
    const x = loPx + ((hiPx - loPx) * s) / steps;
    const f = wavelengthAtNm(model, x) - wavelengthNm;
    if (prevF === 0) return prevX;
    if (Math.sign(f) !== Math.sign(prevF)) {
      let a = prevX;
      let b = x;
      let fa = prevF;
      for (let k = 0; k < 60; k++) {
        const m = (a + b) / 2;
        const fm = wavelengthAtNm(model, m) - wavelengthNm;
        if (Math.sign(fm) === Math.sign(fa)) {
          a = m;
          fa = fm;
        } else b = m;
      }
      return (a + b) / 2;
    }
    prevX = x;
    prevF = f;
  }
  return prevF === 0 ? prevX : null;
}
