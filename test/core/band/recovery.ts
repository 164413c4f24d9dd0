/**
 * Test helper: compares a found band and its extracted spectrum with the synthetic truth.
 * Angle error modulo 180° (the direction convention is free); the centre's distance from the true centre line; each
 * line's recovered image point against the truth, measured along the true axis.
 */
import { bandPointPx } from '../../../src/core/spectrum/band/frame.js';
import type { BandGeometry, PointPx, Spectrum } from '../../../src/core/types.js';
import { gaussianCentre } from '../extract/lineCentres.js';

export function angleErrorDeg(found: number, truth: number): number {
  let d = (found - truth) % 180;
  if (d > 90) d -= 180;
  if (d <= -90) d += 180;
  return d;
}

/** Distance (px) of `point` from the true band's centre line. */
export function offCentreLinePx(truth: BandGeometry, point: PointPx): number {
  const a = (truth.angleDeg * Math.PI) / 180;
  return -(point.x - truth.center.x) * Math.sin(a) + (point.y - truth.center.y) * Math.cos(a);
}

/**
 * Position errors (px, along the true axis) of the lines recovered from `spectrum` (extracted along `found`) by a
 * Gaussian fit near where each true line should appear.
 */
export function linePositionErrors(truth: BandGeometry, found: BandGeometry, spectrum: Spectrum, linePoints: PointPx[], sigmaPx: number): number[] {
  const a = (truth.angleDeg * Math.PI) / 180;
  const ux = Math.cos(a);
  const uy = Math.sin(a);
  const fa = (found.angleDeg * Math.PI) / 180;
  const start = { x: found.center.x - (found.lengthPx / 2) * Math.cos(fa), y: found.center.y - (found.lengthPx / 2) * Math.sin(fa) };
  return linePoints.map((pt) => {
    const guess = (pt.x - start.x) * Math.cos(fa) + (pt.y - start.y) * Math.sin(fa);
    const p = gaussianCentre(spectrum.positionPx, spectrum.intensity, guess, sigmaPx);
    const got = bandPointPx(found, p);
    return (got.x - pt.x) * ux + (got.y - pt.y) * uy;
  });
}
