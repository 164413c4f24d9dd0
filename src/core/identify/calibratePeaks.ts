import { dispersionAtNmPerPx } from '../calibration/model.js';
import { wavelengthWithUncertainty, type CalibrationScale } from '../calibration/uncertainty.js';
import type { Peak } from '../types.js';
import type { CalibratedPeak } from './identifySpecies.js';

export interface CalibratePeaksOptions {
  /** Peaks whose wavelength is less certain than this (far extrapolation) are left out. @default 5 */
  maxUncertaintyNm?: number;
}

/**
 * Peaks on a wavelength scale: λ(x) with its standard uncertainty from the scale's covariance, the centroid's and,
 * beyond the calibrated range, the extrapolation term (calibration/uncertainty.ts); FWHM by the local dispersion.
 */
export function calibratePeaks(peaks: readonly Peak[], scale: CalibrationScale, options: CalibratePeaksOptions = {}): CalibratedPeak[] {
  const limit = options.maxUncertaintyNm ?? 5;
  const out: CalibratedPeak[] = [];
  for (const p of peaks) {
    const est = wavelengthWithUncertainty(scale, p.positionPx, p.positionUncertaintyPx);
    if (!Number.isFinite(est.wavelengthNm) || !(est.uncertaintyNm <= limit)) continue;
    out.push({
      ...p,
      wavelengthNm: est.wavelengthNm,
      wavelengthUncertaintyNm: est.uncertaintyNm,
      fwhmNm: p.fwhmPx * Math.abs(dispersionAtNmPerPx(scale.model, p.positionPx)),
    });
  }
  return out;
}
