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
 * BROAD_FEATURE_RELATIVE_SIGMA of its width; a line blended with unresolved lamp neighbours of relative intensity w_j
 * records somewhere in the blend — at its intensity-weighted centroid, but lamps' intensities are uncertain by
 * factors of several, so the standard uncertainty is the blend's intensity-weighted spread about that centroid,
 * √(Σ w_j (λ_j − λ̄)² / Σ w_j) with the line itself at weight 1 (which also covers the centroid's shift from λ₀).
 */
export function referenceUncertaintyNm(line: LampLineInfo, lampLines: readonly SpectralLine[]): number {
  const base = line.kind === 'phosphor' && line.widthNm ? BROAD_FEATURE_RELATIVE_SIGMA * line.widthNm : 0;
  const own = line.relativeIntensity ?? line.intensity;
  const parts: Array<{ l: number; w: number }> = [{ l: line.wavelengthNm, w: 1 }];
  for (const other of line.blendedWith ?? []) {
    const n = lampLines.find((l) => Math.abs(l.wavelengthNm - other) < 1e-6) as LampLineInfo | undefined;
    const rel = n ? (n.relativeIntensity ?? n.intensity) : own;
    parts.push({ l: other, w: own > 0 && rel > 0 ? rel / own : 1 });
  }
  const total = parts.reduce((a, p) => a + p.w, 0);
  const mean = parts.reduce((a, p) => a + p.w * p.l, 0) / total;
  const spread = Math.sqrt(parts.reduce((a, p) => a + p.w * (p.l - mean) ** 2, 0) / total);
  return Math.hypot(base, spread);
}

/** True for a feature too broad to calibrate with (wider than MAX_FEATURE_WIDTH_NM). */
export function isBroadFeature(line: SpectralLine): boolean {
  const w = (line as LampLineInfo).widthNm;
  return typeof w === 'number' && w > MAX_FEATURE_WIDTH_NM;
}
