/**
 * Band geometry for the live view: outlines to draw, the crop a frame needs, and the edits a drag or a key makes.
 * Geometry follows the core's convention (src/core/spectrum/band/frame.ts): x right, y down, position along
 * u = (cos a, sin a), offset along n = (−sin a, cos a).
 */
import { bandPointPx, imageToBandPx, wrapAngleDeg } from '../../../src/core/spectrum/band/frame.js';
import type { BandGeometry, PointPx } from '../../../src/core/types.js';
import type { RectPx } from '../decode/linearImage.js';

const DEG = Math.PI / 180;

/** Corners of the band region from position 0 to lengthPx and offsets ±halfWidthPx, following the slant. */
export function bandOutline(band: BandGeometry, halfWidthPx: number): PointPx[] {
  return [
    bandPointPx(band, 0, -halfWidthPx),
    bandPointPx(band, band.lengthPx, -halfWidthPx),
    bandPointPx(band, band.lengthPx, halfWidthPx),
    bandPointPx(band, 0, halfWidthPx),
  ];
}

/** Smallest whole-pixel rectangle inside the frame that holds the band out to ±halfWidthPx, plus a margin for bilinear reads. */
export function bandCrop(band: BandGeometry, halfWidthPx: number, frameWidth: number, frameHeight: number, marginPx = 2): RectPx | null {
  const pts = bandOutline(band, halfWidthPx);
  const x0 = Math.max(0, Math.floor(Math.min(...pts.map((p) => p.x)) - marginPx));
  const y0 = Math.max(0, Math.floor(Math.min(...pts.map((p) => p.y)) - marginPx));
  const x1 = Math.min(frameWidth, Math.ceil(Math.max(...pts.map((p) => p.x)) + marginPx + 1));
  const y1 = Math.min(frameHeight, Math.ceil(Math.max(...pts.map((p) => p.y)) + marginPx + 1));
  if (x1 - x0 < 2 || y1 - y0 < 2) return null;
  return { x: x0, y: y0, width: x1 - x0, height: y1 - y0 };
}

/** The same band in the coordinates of a crop whose top-left corner is at (x, y) of the frame. */
export function bandInCrop(band: BandGeometry, crop: RectPx): BandGeometry {
  return { ...band, center: { x: band.center.x - crop.x, y: band.center.y - crop.y } };
}

/** A band across the middle of a frame: the starting guess before any band is found. */
export function defaultBand(frameWidth: number, frameHeight: number): BandGeometry {
  return {
    angleDeg: 0,
    slantDeg: 0,
    center: { x: (frameWidth - 1) / 2, y: (frameHeight - 1) / 2 },
    lengthPx: Math.round(frameWidth * 0.8),
    heightPx: Math.max(8, Math.round(frameHeight * 0.12)),
  };
}

export function moveBand(band: BandGeometry, dxPx: number, dyPx: number): BandGeometry {
  return { ...band, center: { x: band.center.x + dxPx, y: band.center.y + dyPx } };
}

/** Moves one end of the band to `point`, keeping the other end: changes length and angle (slant kept). */
export function dragBandEnd(band: BandGeometry, end: 'start' | 'end', point: PointPx): BandGeometry {
  const start = bandPointPx(band, 0, 0);
  const stop = bandPointPx(band, band.lengthPx, 0);
  const fixed = end === 'start' ? stop : start;
  const a = end === 'start' ? point : start;
  const b = end === 'start' ? fixed : point;
  const lengthPx = Math.max(8, Math.hypot(b.x - a.x, b.y - a.y));
  const angleDeg = wrapAngleDeg(Math.atan2(b.y - a.y, b.x - a.x) / DEG);
  return { ...band, angleDeg, lengthPx, center: { x: (a.x + b.x) / 2, y: (a.y + b.y) / 2 } };
}

/** Sets the height from the distance of `point` to the centre line (dragging an edge), at least 2 px. */
export function dragBandEdge(band: BandGeometry, point: PointPx): BandGeometry {
  const { offsetPx } = imageToBandPx(band, point);
  return { ...band, heightPx: Math.max(2, 2 * Math.abs(offsetPx)) };
}

export function resizeBand(band: BandGeometry, dLengthPx: number, dHeightPx: number): BandGeometry {
  return { ...band, lengthPx: Math.max(8, band.lengthPx + dLengthPx), heightPx: Math.max(2, band.heightPx + dHeightPx) };
}

export function rotateBand(band: BandGeometry, dAngleDeg: number): BandGeometry {
  return { ...band, angleDeg: wrapAngleDeg(band.angleDeg + dAngleDeg) };
}

export function slantBand(band: BandGeometry, dSlantDeg: number): BandGeometry {
  return { ...band, slantDeg: Math.max(-44, Math.min(44, band.slantDeg + dSlantDeg)) };
}

/** True when the band's centre line lies inside the frame over at least part of its length. */
export function bandVisible(band: BandGeometry, frameWidth: number, frameHeight: number): boolean {
  const c = band.center;
  return c.x >= 0 && c.y >= 0 && c.x <= frameWidth - 1 && c.y <= frameHeight - 1;
}
