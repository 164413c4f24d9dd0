import { InputError } from '../errors.js';
import type { GratingMeasurement } from './types.js';

/**
 * Photo method: a spectroscope photo calibrated with the physical grating model (core/calibration) has fitted the
 * groove spacing d along with the camera angle, axis and focal length (from EXIF or given); the line density is
 * G = 10⁶/d (d in nm) with u(G) = 10⁶ u(d)/d². This reports it in the same shape as the screen and angle methods.
 *
 * Accepts the grating model itself (`kind: 'grating'`, groove spacing and covariance), or an instrument profile as
 * loaded (camelCase) or as written to JSON (snake_case), which carries `lines_per_mm` and its uncertainty. The types
 * here are structural, so this module does not depend on the calibration code's internals.
 */
export interface GratingModelLike {
  kind: 'grating';
  grooveSpacingNm: number;
  /** Covariance of [grooveSpacingNm, …]; [0][0] is the groove spacing's variance (nm²). */
  covariance: number[][];
  incidenceAngleDeg?: number;
  /** Which of [groove spacing, camera angle, axis, focal length] were fitted. */
  free?: readonly boolean[];
}

export interface ProfileLike {
  linesPerMm?: number;
  linesPerMmUncertainty?: number;
  lines_per_mm?: number;
  lines_per_mm_uncertainty?: number;
  focalLengthSource?: string;
  focal_length_source?: string;
  model?: { kind?: string; free?: readonly boolean[] };
}

export type ProfileLineDensitySource = GratingModelLike | ProfileLike;

export function lineDensityFromProfile(profile: ProfileLineDensitySource, source = 'profile'): GratingMeasurement {
  if (profile === null || typeof profile !== 'object') throw new InputError(`${source}: expected a calibration profile object`, source);
  let linesPerMm: number | undefined;
  let sigma: number | undefined;
  let focalFixed = false;
  let incidenceDeg = 0;
  if ('kind' in profile && profile.kind === 'grating') {
    const d = profile.grooveSpacingNm;
    const sd = Math.sqrt(Math.max(0, profile.covariance?.[0]?.[0] ?? NaN));
    linesPerMm = 1e6 / d;
    sigma = (1e6 * sd) / (d * d);
    focalFixed = profile.free ? profile.free[3] === false : false;
    incidenceDeg = profile.incidenceAngleDeg ?? 0;
  } else {
    const p = profile as ProfileLike;
    linesPerMm = p.linesPerMm ?? p.lines_per_mm;
    sigma = p.linesPerMmUncertainty ?? p.lines_per_mm_uncertainty;
    const focal = p.focalLengthSource ?? p.focal_length_source;
    focalFixed = p.model?.free ? p.model.free[3] === false : focal === 'exif' || focal === 'given';
  }
  if (typeof linesPerMm !== 'number' || !(linesPerMm > 0) || !Number.isFinite(linesPerMm)) {
    throw new InputError(
      `${source}: no line density in this profile (expected lines_per_mm from a calibration made with the physical grating model, not a polynomial one)`,
      source,
    );
  }
  const warnings: string[] = [];
  if (typeof sigma !== 'number' || !Number.isFinite(sigma) || sigma < 0) {
    sigma = NaN;
    warnings.push('the profile gives no uncertainty for its line density');
  }
  if (focalFixed) warnings.push('the focal length was fixed in the calibration (EXIF or given): its error is not in the uncertainty');
  return {
    method: 'profile',
    linesPerMm,
    linesPerMmUncertainty: sigma,
    periodUm: 1000 / linesPerMm,
    periodUncertaintyUm: (1000 * sigma) / (linesPerMm * linesPerMm),
    wavelengthNm: NaN,
    incidenceDeg,
    incidenceUncertaintyDeg: null,
    incidenceFitted: false,
    budget: { fitLinesPerMm: 0, distanceLinesPerMm: 0, wavelengthLinesPerMm: 0, calibrationLinesPerMm: sigma },
    residuals: [],
    chi2: NaN,
    dof: 0,
    birgeRatio: null,
    warnings,
  };
}
