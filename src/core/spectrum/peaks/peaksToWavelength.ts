import { invalid } from '../../errors.js';
import type { Peak, Spectrum } from '../../types.js';
import { sampleAtValue, stepAtSample, valueAtSample } from './samplePosition.js';

/** A peak with its wavelength filled in. */
export type PeakWithWavelength = Peak & {
  wavelengthNm: number;
  wavelengthUncertaintyNm: number;
  /** FWHM converted with the local dispersion, nm. */
  fwhmNm: number;
};

/**
 * Fills `wavelengthNm` for peaks found on a spectrum that carries `wavelengthNm` per sample (a wavelength CSV or an
 * already calibrated spectrum): each peak's position is mapped back to a fractional sample index through
 * `positionPx`, and the wavelength interpolated linearly between the neighbouring samples. The uncertainty and the
 * FWHM are scaled by the local dispersion |dλ/dpx|; the uncertainty is the position's alone (a calibration's own
 * uncertainty is not known here). Returns new objects; the input peaks are not changed.
 */
export function peaksToWavelength(peaks: readonly Peak[], spectrum: Spectrum): PeakWithWavelength[] {
  const wl = spectrum.wavelengthNm;
  if (!wl) throw invalid('spectrum.wavelengthNm', 'a wavelength per sample', undefined);
  const pos = spectrum.positionPx;
  if (wl.length !== pos.length) throw invalid('spectrum.wavelengthNm', `${pos.length} values, one per sample`, wl.length);
  return peaks.map((p) => {
    const s = sampleAtValue(pos, p.positionPx);
    const pxPerSample = Math.abs(stepAtSample(pos, s));
    const nmPerPx = pxPerSample > 0 ? Math.abs(stepAtSample(wl, s)) / pxPerSample : NaN;
    return {
      ...p,
      wavelengthNm: valueAtSample(wl, s),
      wavelengthUncertaintyNm: p.positionUncertaintyPx * nmPerPx,
      fwhmNm: p.fwhmPx * nmPerPx,
    };
  });
}
