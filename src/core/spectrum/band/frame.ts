/**
 * The band's own coordinates and their mapping to image pixels.
 *
 * Conventions (the project's geometry contract): pixel coordinates of the upright image, x to the right, y down, the
 * centre of pixel (column i, row j) at (i, j). Along the band, `position` p (px) grows in the direction
 * u = (cos a, sin a), a = `angleDeg`, measured from the band's start S = center − (lengthPx / 2)·u; positions refer to
 * the band's centre line. Across the band, `offset` q (px) is the perpendicular distance from the centre line, positive
 * towards n = (−sin a, cos a) (downwards for a horizontal band). The line images are straight and point along
 * angleDeg + 90° + slantDeg (slant turns them in the same sense as the angle), so the point of a line image at
 * position p and offset q is
 *   X(p, q) = S + p·u + q·v,   v = n − tan(slant)·u,
 * and the inverse is q = (X − S)·n, p = (X − S)·u + q·tan(slant).
 */
import type { BandGeometry, PointPx } from '../../types.js';

const DEG = Math.PI / 180;

export interface BandFrame {
  /** Unit vector along the dispersion axis (direction of growing position). */
  ux: number;
  uy: number;
  /** Unit normal of the axis (direction of growing offset). */
  nx: number;
  ny: number;
  /** Step in the image for a unit step of offset along a line image: v = n − tan(slant)·u. */
  vx: number;
  vy: number;
  tanSlant: number;
  /** The band's start S (position 0 on the centre line). */
  startX: number;
  startY: number;
}

export function bandFrame(band: BandGeometry): BandFrame {
  const a = band.angleDeg * DEG;
  const ux = Math.cos(a);
  const uy = Math.sin(a);
  const nx = -uy;
  const ny = ux;
  const tanSlant = Math.tan(band.slantDeg * DEG);
  return {
    ux,
    uy,
    nx,
    ny,
    vx: nx - tanSlant * ux,
    vy: ny - tanSlant * uy,
    tanSlant,
    startX: band.center.x - (band.lengthPx / 2) * ux,
    startY: band.center.y - (band.lengthPx / 2) * uy,
  };
}

/** Image point of band position `positionPx` at perpendicular offset `offsetPx` (on the line image through it). */
export function bandPointPx(band: BandGeometry, positionPx: number, offsetPx = 0): PointPx {
  const f = bandFrame(band);
  return {
    x: f.startX + positionPx * f.ux + offsetPx * f.vx,
    y: f.startY + positionPx * f.uy + offsetPx * f.vy,
  };
}

/** Band coordinates of an image point: the position of the line image through it, and its offset from the centre line. */
export function imageToBandPx(band: BandGeometry, point: PointPx): { positionPx: number; offsetPx: number } {
  const f = bandFrame(band);
  const dx = point.x - f.startX;
  const dy = point.y - f.startY;
  const offsetPx = dx * f.nx + dy * f.ny;
  return { positionPx: dx * f.ux + dy * f.uy + offsetPx * f.tanSlant, offsetPx };
}

/**
 * The direction convention of automatic band finding: the axis angle folded into (−90°, 90°], so that position grows
 * to the right (downwards for a vertical band). Which end is blue is left to calibration.
 */
export function foldAxisAngleDeg(angleDeg: number): number {
  let a = angleDeg % 180;
  if (a <= -90) a += 180;
  else if (a > 90) a -= 180;
  return a;
}

/** Wraps any angle into (−180°, 180°]. */
export function wrapAngleDeg(angleDeg: number): number {
  let a = angleDeg % 360;
  if (a <= -180) a += 360;
  else if (a > 180) a -= 360;
  return a;
}

/**
 * The same band seen from its other end: angle + 180°, so positions run backwards (p → lengthPx − p) and offsets change
 * sign; the line images and the slant stay as they are.
 */
export function reverseBand(band: BandGeometry): BandGeometry {
  return { ...band, angleDeg: wrapAngleDeg(band.angleDeg + 180), center: { ...band.center } };
}
