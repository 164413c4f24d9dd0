import { assertFinite, invalid } from '../errors.js';

/**
 * The grating equation and the geometry of a grating in a laser beam.
 *
 * Convention (as in the grating handbooks, e.g. Palmer & Loewen, *Diffraction Grating Handbook*):
 *
 *     m λ = d (sin α + sin β)        d = 1/G, G in lines/mm
 *
 * α is the angle of incidence and β the angle of diffraction, both from the grating normal, with the zero order
 * (undiffracted light) at β = −α. For a transmission grating this reads in a lab frame as follows. The beam travels
 * along +z; the grating normal is turned by the tilt α about the axis parallel to the grating lines. Matching the
 * wave vector along the grating surface (the component along the grating vector changes by m·2π/d) gives for the
 * direction θ of the diffracted beam, measured from the undeviated beam towards the side of the positive orders:
 *
 *     sin(θ − α) = m λ / d − sin α,   i.e.   θ_m = α + β_m
 *
 * θ is what a screen or a goniometer sees: the deviation from the straight-through beam. θ_0 = 0 for any tilt, and
 * θ_m has the sign of m for any tilt (θ_m > 0 ⇔ mλ/d > 0), so positive orders are always on one side.
 */

/** sin β of order m; |sin β| > 1 means that order does not exist (it is evanescent). */
export function sinDiffraction(options: { linesPerMm: number; wavelengthNm: number; order: number; incidenceDeg?: number }): number {
  const { linesPerMm, wavelengthNm, order } = options;
  const incidenceDeg = options.incidenceDeg ?? 0;
  assertFinite('linesPerMm', linesPerMm, 0);
  assertFinite('wavelengthNm', wavelengthNm, 0);
  assertFinite('order', order);
  assertFinite('incidenceDeg', incidenceDeg, -90, 90);
  return order * wavelengthNm * 1e-6 * linesPerMm - Math.sin(incidenceDeg * DEG);
}

/** β of order m (deg), or null when that order does not exist (|sin β| ≥ 1: evanescent or grazing). */
export function diffractionAngleDeg(options: { linesPerMm: number; wavelengthNm: number; order: number; incidenceDeg?: number }): number | null {
  const s = sinDiffraction(options);
  return Math.abs(s) < 1 ? Math.asin(s) / DEG : null;
}

/** Deviation θ = α + β of order m from the undeviated beam (deg), or null when the order does not exist. */
export function deviationDeg(options: { linesPerMm: number; wavelengthNm: number; order: number; incidenceDeg?: number }): number | null {
  const beta = diffractionAngleDeg(options);
  return beta === null ? null : beta + (options.incidenceDeg ?? 0);
}

/** Littrow angle (α = β, so mλ = 2d sin α) in deg, or null when 2d < |m|λ. */
export function littrowAngleDeg(options: { linesPerMm: number; wavelengthNm: number; order: number }): number | null {
  const { linesPerMm, wavelengthNm, order } = options;
  assertFinite('linesPerMm', linesPerMm, 0);
  assertFinite('wavelengthNm', wavelengthNm, 0);
  const s = (order * wavelengthNm * 1e-6 * linesPerMm) / 2;
  return Math.abs(s) < 1 ? Math.asin(s) / DEG : null;
}

/**
 * Angular dispersion dβ/dλ = m / (d cos β) of order m, in deg per nm (differentiating the grating equation at fixed
 * α). Null when the order does not exist.
 */
export function angularDispersionDegPerNm(options: { linesPerMm: number; wavelengthNm: number; order: number; incidenceDeg?: number }): number | null {
  const beta = diffractionAngleDeg(options);
  if (beta === null) return null;
  const radPerNm = (options.order * options.linesPerMm * 1e-6) / Math.cos(beta * DEG);
  return radPerNm / DEG;
}

/**
 * The highest positive and the lowest negative order that exist (|sin β| < 1) for a wavelength and incidence:
 * m_max = the largest m with mλG < 1 + sin α, m_min = the smallest m with mλG > −1 + sin α.
 */
export function orderLimits(options: { linesPerMm: number; wavelengthNm: number; incidenceDeg?: number }): { maxOrder: number; minOrder: number } {
  const { linesPerMm, wavelengthNm } = options;
  const incidenceDeg = options.incidenceDeg ?? 0;
  assertFinite('linesPerMm', linesPerMm, 0);
  assertFinite('wavelengthNm', wavelengthNm, 0);
  assertFinite('incidenceDeg', incidenceDeg, -90, 90);
  if (!(linesPerMm > 0)) throw invalid('linesPerMm', 'a positive line density', linesPerMm);
  const unit = wavelengthNm * 1e-6 * linesPerMm;
  const sa = Math.sin(incidenceDeg * DEG);
  // Strict inequalities: an order exactly at grazing (|sin β| = 1) travels along the grating and reaches no screen.
  const maxOrder = Math.ceil((1 + sa) / unit) - 1;
  const minOrder = 1 - Math.ceil((1 - sa) / unit);
  return { maxOrder, minOrder };
}

export const DEG = Math.PI / 180;
