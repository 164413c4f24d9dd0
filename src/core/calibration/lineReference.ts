import type { SpectralLine } from '../types.js';

/** Lamp-line fields calibration reads when present (the line list's LampLine has them). */
export interface LampLineInfo extends SpectralLine {
  kind?: string;
  widthNm?: number;
  relativeIntensity?: number;
  blendedWith?: number[];
}

/**
 * Relative standard uncertainty of a broad feature's centre as a fraction of its width (phosphor peaks shift with
 * the host lattice and between makers, by a few tenths of a nm for a 2 nm wide Eu³⁺ peak; common practice, no
 * source).
 */
export const BROAD_FEATURE_RELATIVE_SIGMA = 0.1;

/** Lamp features wider than this (FWHM, nm) are not used to calibrate. */
export const MAX_FEATURE_WIDTH_NM = 5;

/**
 * How well a lamp line's wavelength describes the peak a camera records: a broad feature's centre is known to
 * BROAD_FEATURE_RELATIVE_SIGMA of its width; a line blended with lamp neighbours of relative intensity w_j records at
 * the intensity-weighted centroid, shifted by Σ w_j(λ_j − λ₀)/(1 + Σ w_j) — with lamps' intensities uncertain by
 * factors of several, the whole shift is taken as one standard uncertainty.
 */
export function referenceUncertaintyNm(line: LampLineInfo, lampLines: readonly SpectralLine[]): number {
  const base = line.kind === 'phosphor' && line.widthNm ? BROAD_FEATURE_RELATIVE_SIGMA * line.widthNm : 0;
  let shift = 0;
  let weight = 1;
  const own = line.relativeIntensity ?? line.intensity;
  for (const other of line.blendedWith ?? []) {
    const n = lampLines.find((l) => Math.abs(l.wavelengthNm - other) < 1e-6) as LampLineInfo | undefined;
    const rel = n ? (n.relativeIntensity ?? n.intensity) : own;
    const w = own > 0 && rel > 0 ? rel / own : 1;
    shift += w * (other - line.wavelengthNm);
    weight += w;
  }
  return Math.hypot(base, shift / weight);
}

/** True for a feature too broad to calibrate with (wider than MAX_FEATURE_WIDTH_NM). */
export function isBroadFeature(line: SpectralLine): boolean {
  const w = (line as LampLineInfo).widthNm;
  return typeof w === 'number' && w > MAX_FEATURE_WIDTH_NM;
}
