import { InputError } from '../errors.js';
import { gratingLinesPerMm, type GratingModel } from '../calibration/gratingModel.js';
import type { GratingMeasurement } from './types.js';

/**
 * Photo method: a spectroscope photo calibrated with the physical grating model (core/calibration/gratingModel.ts)
 * has fitted the groove spacing d along with the camera angle, axis and focal length (from EXIF or given); the line
 * density is 10⁶/d with the model's uncertainty. This reports it in the same shape as the screen and angle methods.
 *
 * Accepts either the grating model itself or a saved profile's line-density fields (camelCase as in core results, or
 * snake_case as written to JSON).
 */
export type ProfileLineDensitySource =
  | GratingModel
  | {
      linesPerMm?: number;
      linesPerMmUncertainty?: number;
      lines_per_mm?: number;
      lines_per_mm_uncertainty?: number;
      /** Optional context the profile may carry. */
      order?: number;
      focalLengthSource?: string;
      focal_length_source?: string;
    };

export function lineDensityFromProfile(profile: ProfileLineDensitySource, source = 'profile'): GratingMeasurement {
  if (profile === null || typeof profile !== 'object') throw new InputError(`${source}: expected a calibration profile object`, source);
  let linesPerMm: number | undefined;
  let sigma: number | undefined;
  const warnings: string[] = [];
  if ('kind' in profile && profile.kind === 'grating') {
    const g = gratingLinesPerMm(profile);
    linesPerMm = g.linesPerMm;
    sigma = g.uncertaintyLinesPerMm;
    if (!profile.free[3]) warnings.push('the focal length was fixed in the calibration (EXIF or given): its error is not in the uncertainty');
  } else {
    const p = profile as Exclude<ProfileLineDensitySource, GratingModel>;
    linesPerMm = p.linesPerMm ?? p.lines_per_mm;
    sigma = p.linesPerMmUncertainty ?? p.lines_per_mm_uncertainty;
  }
  if (typeof linesPerMm !== 'number' || !(linesPerMm > 0) || !Number.isFinite(linesPerMm)) {
    throw new InputError(
      `${source}: no line density in this profile (expected lines_per_mm from a calibration made with the physical grating model, not a polynomial one)`,
      source,
    );
  }
  if (typeof sigma !== 'number' || !Number.isFinite(sigma) || sigma < 0) {
    sigma = NaN;
    warnings.push('the profile gives no uncertainty for its line density');
  }
  return {
    method: 'profile',
    linesPerMm,
    linesPerMmUncertainty: sigma,
    periodUm: 1000 / linesPerMm,
    periodUncertaintyUm: (1000 * sigma) / (linesPerMm * linesPerMm),
    wavelengthNm: NaN,
    incidenceDeg: 'kind' in profile && profile.kind === 'grating' ? profile.incidenceAngleDeg : 0,
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
