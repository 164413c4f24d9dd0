import { InputError, assertFinite } from '../errors.js';

/** Speed of light in vacuum (m/s), exact by the definition of the metre (SI, 1983). */
export const SPEED_OF_LIGHT_M_PER_S = 299_792_458;

export type InterferometerKind = 'confocal' | 'planar';

/**
 * Free spectral range of a scanning Fabry-Perot from its mirror spacing d: c/(4nd) for a confocal cavity (a ray
 * closes on itself after two round trips) and c/(2nd) for a planar one (textbook definitions; CHECK_VALUES.md).
 */
export function fsrFromMirrorSpacing(options: { mirrorSpacingM: number; kind: InterferometerKind; refractiveIndex?: number }): number {
  const { mirrorSpacingM, kind } = options;
  const n = options.refractiveIndex ?? 1;
  assertFinite('mirrorSpacingM', mirrorSpacingM);
  if (!(mirrorSpacingM > 0)) throw new InputError(`mirror spacing: expected a positive length, got ${mirrorSpacingM} m`, 'mirrorSpacingM');
  assertFinite('refractiveIndex', n, 1e-6);
  return SPEED_OF_LIGHT_M_PER_S / ((kind === 'confocal' ? 4 : 2) * n * mirrorSpacingM);
}

/** Longitudinal mode spacing of a laser cavity of optical length nL: Δν = c/(2nL). */
export function modeSpacingFromLength(options: { cavityLengthM: number; refractiveIndex?: number }): number {
  const n = options.refractiveIndex ?? 1;
  assertFinite('cavityLengthM', options.cavityLengthM, Number.MIN_VALUE);
  return SPEED_OF_LIGHT_M_PER_S / (2 * n * options.cavityLengthM);
}

/** Cavity length from the mode spacing: L = c/(2nΔν). */
export function cavityLengthFromSpacing(options: { modeSpacingHz: number; refractiveIndex?: number }): number {
  const n = options.refractiveIndex ?? 1;
  assertFinite('modeSpacingHz', options.modeSpacingHz, Number.MIN_VALUE);
  return SPEED_OF_LIGHT_M_PER_S / (2 * n * options.modeSpacingHz);
}
