/**
 * A pinhole camera looking through a plane transmission grating.
 *
 * Grating equation (angles from the grating normal, the usual sign convention that makes the zero order leave at
 * θ0 = −θi):   m λ = d (sin θi + sin θm),   d = 10⁶ / (lines per mm) nm.
 * Pinhole camera whose optical axis makes θc with the grating normal, focal length f in pixels: a ray leaving the
 * grating at θm lands at   x = x0 + f · tan(θm − θc)   along the dispersion axis, x0 being where the optical axis
 * (the principal point) falls on that axis. The inverse, the curve a physical calibration fits, is
 *   λ(x) = (d / m) · (sin θi + sin(θc + atan((x − x0) / f))).
 * Neglected (sub-pixel for a phone behind a film grating): line curvature from conical diffraction, lens distortion,
 * the refractive index of air (all wavelengths are air wavelengths, as in NIST tables for 200–2000 nm).
 */
import { assertFinite, invalid } from '../errors.js';

const DEG = Math.PI / 180;

/** The 35-mm film frame's diagonal, √(36² + 24²) mm. */
export const FULL_FRAME_DIAGONAL_MM = Math.hypot(36, 24);

export interface Grating {
  /** Groove density (lines per mm); the groove spacing is d = 10⁶ / linesPerMm nm. */
  linesPerMm: number;
  /** Angle of incidence θi on the grating (deg); 0 = the source straight in front of the grating. */
  incidenceDeg: number;
}

/** Everything that maps a wavelength to a position along the dispersion axis (and back). */
export interface GratingCameraModel extends Grating {
  /** Angle θc between the camera's optical axis and the grating normal (deg), in the plane of dispersion. */
  cameraAngleDeg: number;
  /** Focal length f (px). */
  focalLengthPx: number;
  /** Position x0 of the principal point along the dispersion axis (px), in whatever origin positions use. */
  principalPositionPx: number;
}

function checkGrating(grating: Grating, order: number): void {
  assertFinite('linesPerMm', grating.linesPerMm, Number.MIN_VALUE);
  assertFinite('incidenceDeg', grating.incidenceDeg, -90, 90);
  if (!Number.isInteger(order)) throw invalid('order', 'an integer diffraction order', order);
}

function checkCamera(model: GratingCameraModel, order: number): void {
  checkGrating(model, order);
  assertFinite('cameraAngleDeg', model.cameraAngleDeg, -90, 90);
  assertFinite('focalLengthPx', model.focalLengthPx, Number.MIN_VALUE);
  assertFinite('principalPositionPx', model.principalPositionPx);
}

/** Groove spacing d (nm) of a grating with the given line density. */
export function grooveSpacingNm(linesPerMm: number): number {
  assertFinite('linesPerMm', linesPerMm, Number.MIN_VALUE);
  return 1e6 / linesPerMm;
}

/**
 * Diffraction angle θm (deg) of order `order` at `wavelengthNm`: sin θm = mλ/d − sin θi.
 * Returns null when |sin θm| > 1 — that order does not exist at this wavelength.
 */
export function diffractionAngleDeg(grating: Grating, wavelengthNm: number, order: number): number | null {
  checkGrating(grating, order);
  assertFinite('wavelengthNm', wavelengthNm, Number.MIN_VALUE);
  const s = (order * wavelengthNm) / grooveSpacingNm(grating.linesPerMm) - Math.sin(grating.incidenceDeg * DEG);
  if (Math.abs(s) > 1) return null;
  return Math.asin(s) / DEG;
}

/** Wavelength (nm) diffracted into order `order` (≠ 0) at angle θm: λ = (d/m)(sin θi + sin θm). */
export function wavelengthAtAngleNm(grating: Grating, angleDeg: number, order: number): number {
  checkGrating(grating, order);
  assertFinite('angleDeg', angleDeg, -90, 90);
  if (order === 0) throw invalid('order', 'a non-zero order (the zero order does not disperse)', order);
  const d = grooveSpacingNm(grating.linesPerMm);
  return (d / order) * (Math.sin(grating.incidenceDeg * DEG) + Math.sin(angleDeg * DEG));
}

/**
 * Position (px) along the dispersion axis where order `order` of `wavelengthNm` lands: x0 + f·tan(θm − θc).
 * Returns null when the order does not exist or leaves the grating at 89° or more from the optical axis (behind
 * or beside the camera). For order 0 the position does not depend on the wavelength.
 */
export function positionAtWavelengthPx(model: GratingCameraModel, wavelengthNm: number, order: number): number | null {
  checkCamera(model, order);
  const theta = diffractionAngleDeg(model, wavelengthNm, order);
  if (theta === null) return null;
  const off = (theta - model.cameraAngleDeg) * DEG;
  if (Math.abs(off) >= 89 * DEG) return null;
  return model.principalPositionPx + model.focalLengthPx * Math.tan(off);
}

/**
 * Wavelength (nm) seen at `positionPx` in order `order` (≠ 0):
 * λ(x) = (d/m)(sin θi + sin(θc + atan((x − x0)/f))). Returns null where that is not a positive wavelength.
 */
export function wavelengthAtPositionNm(model: GratingCameraModel, positionPx: number, order: number): number | null {
  checkCamera(model, order);
  assertFinite('positionPx', positionPx);
  if (order === 0) throw invalid('order', 'a non-zero order (the zero order does not disperse)', order);
  const theta = model.cameraAngleDeg * DEG + Math.atan((positionPx - model.principalPositionPx) / model.focalLengthPx);
  const lambda = (grooveSpacingNm(model.linesPerMm) / order) * (Math.sin(model.incidenceDeg * DEG) + Math.sin(theta));
  return lambda > 0 ? lambda : null;
}

/**
 * Local dispersion dλ/dx (nm per px) at `positionPx` in order `order` (≠ 0), the derivative of
 * `wavelengthAtPositionNm`: (d/m) · cos(θc + atan(u/f)) · f / (f² + u²), u = x − x0.
 */
export function dispersionAtPositionNmPerPx(model: GratingCameraModel, positionPx: number, order: number): number {
  checkCamera(model, order);
  assertFinite('positionPx', positionPx);
  if (order === 0) throw invalid('order', 'a non-zero order (the zero order does not disperse)', order);
  const u = positionPx - model.principalPositionPx;
  const f = model.focalLengthPx;
  const theta = model.cameraAngleDeg * DEG + Math.atan(u / f);
  return (grooveSpacingNm(model.linesPerMm) / order) * Math.cos(theta) * (f / (f * f + u * u));
}

export interface FocalLengthFrom35mmOptions {
  /** 35-mm-equivalent focal length (mm), as in EXIF FocalLengthIn35mmFilm. */
  focalLength35mmMm: number;
  /** Image size (px) the equivalence refers to (the full, uncropped frame). */
  widthPx: number;
  heightPx: number;
}

/**
 * Focal length in pixels from a 35-mm-equivalent focal length: the equivalent lens gives the same angle of view on
 * the 36 × 24 mm frame's diagonal as the real lens on the image's diagonal, so f_px = f35 · diagonal_px / 43.267 mm.
 * (Diagonal matching: common practice, no source; EXIF itself does not say which dimension is matched.)
 */
export function focalLengthPxFrom35mm(options: FocalLengthFrom35mmOptions): number {
  assertFinite('focalLength35mmMm', options.focalLength35mmMm, Number.MIN_VALUE);
  assertFinite('widthPx', options.widthPx, 1);
  assertFinite('heightPx', options.heightPx, 1);
  return (options.focalLength35mmMm * Math.hypot(options.widthPx, options.heightPx)) / FULL_FRAME_DIAGONAL_MM;
}
