import { describe, expect, it } from 'vitest';
import { bandPointPx, foldAxisAngleDeg, imageToBandPx, reverseBand } from '../../../src/core/spectrum/band/frame.js';
import type { BandGeometry } from '../../../src/core/types.js';

const band: BandGeometry = { angleDeg: 30, slantDeg: 10, center: { x: 100, y: 50 }, lengthPx: 40, heightPx: 12 };
const c30 = Math.cos(Math.PI / 6);
const s30 = 0.5;

describe('band frame (the geometry contract)', () => {
  it('bandPointPx(band, p, 0) walks from the start, lengthPx/2 before the centre, along angleDeg', () => {
    // Hand-computed: start = centre − 20·(cos 30°, sin 30°) = (82.6795, 40).
    const start = bandPointPx(band, 0);
    expect(Math.abs(start.x - (100 - 20 * c30))).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(start.y - 40)).toBeLessThanOrEqual(1e-12);
    const end = bandPointPx(band, 40);
    expect(Math.abs(end.x - (100 + 20 * c30))).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(end.y - 60)).toBeLessThanOrEqual(1e-12);
  });

  it('offsets follow the slanted line image: X(p, q) = S + p·u + q·(n − tan(slant)·u)', () => {
    const t = Math.tan((10 * Math.PI) / 180);
    const pt = bandPointPx(band, 10, 5);
    const s = bandPointPx(band, 0);
    // u = (cos 30°, sin 30°), n = (−sin 30°, cos 30°).
    expect(Math.abs(pt.x - (s.x + 10 * c30 + 5 * (-s30 - t * c30)))).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(pt.y - (s.y + 10 * s30 + 5 * (c30 - t * s30)))).toBeLessThanOrEqual(1e-12);
    // The line image points along angleDeg + 90° + slantDeg = 130°.
    const a = bandPointPx(band, 10, -5);
    const dir = (Math.atan2(pt.y - a.y, pt.x - a.x) * 180) / Math.PI;
    expect(Math.abs(dir - 130)).toBeLessThanOrEqual(1e-9);
  });

  it('imageToBandPx inverts bandPointPx', () => {
    for (const [p, q] of [[0, 0], [13.25, -4.5], [40, 6]]) {
      const back = imageToBandPx(band, bandPointPx(band, p, q));
      expect(Math.abs(back.positionPx - p)).toBeLessThanOrEqual(1e-9);
      expect(Math.abs(back.offsetPx - q)).toBeLessThanOrEqual(1e-9);
    }
  });

  it('reverseBand runs positions backwards and flips offsets, the line images unchanged', () => {
    const rev = reverseBand(band);
    expect(rev.angleDeg).toBe(-150);
    const a = bandPointPx(band, 12, 3);
    const b = bandPointPx(rev, 40 - 12, -3);
    expect(Math.hypot(a.x - b.x, a.y - b.y)).toBeLessThanOrEqual(1e-9);
  });

  it('foldAxisAngleDeg puts automatic bands in (−90°, 90°]', () => {
    expect(Math.abs(foldAxisAngleDeg(183.3) - 3.3)).toBeLessThanOrEqual(1e-12);
    expect(foldAxisAngleDeg(-90)).toBe(90);
    expect(foldAxisAngleDeg(90)).toBe(90);
    expect(foldAxisAngleDeg(-100)).toBe(80);
  });
});
