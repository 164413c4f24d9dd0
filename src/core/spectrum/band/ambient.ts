/**
 * The ambient light fitted by the coarse flattening (band/flatten.ts), evaluated at full-resolution points, so that the
 * refinement sees a flat background even where the band fills the frame and no off-band rows exist on one side.
 */
import type { SampledBand } from '../sampleBand.js';
import { bandFrame } from './frame.js';
import type { BandGeometry } from '../../types.js';

/**
 * Ambient level (mean of the channels) at full-resolution point (x, y): a quadratic c0 + c1 u + c2 w + c3 u² + c4 uw +
 * c5 w² in u = ax·x + bx, w = ay·y + by.
 */
export interface Ambient {
  c: number[];
  ax: number;
  bx: number;
  ay: number;
  by: number;
}

export function ambientAt(a: Ambient, x: number, y: number): number {
  const u = a.ax * x + a.bx;
  const w = a.ay * y + a.by;
  const c = a.c;
  return c[0] + c[1] * u + c[2] * w + c[3] * u * u + c[4] * u * w + c[5] * w * w;
}

/** From the per-plane quadratic surfaces of a decimated image (block size `factor`) of `width` × `height` blocks. */
export function ambientFromSurfaces(surfaces: number[][], width: number, height: number, factor: number): Ambient {
  const n = surfaces.length;
  const c = [0, 0, 0, 0, 0, 0];
  for (const s of surfaces) for (let k = 0; k < 6; k++) c[k] += s[k] / n;
  const sx = 2 / Math.max(1, width - 1);
  const sy = 2 / Math.max(1, height - 1);
  const off = (factor - 1) / 2;
  // u = ((x − off)/factor)·sx − 1
  return { c, ax: sx / factor, bx: (-off / factor) * sx - 1, ay: sy / factor, by: (-off / factor) * sy - 1 };
}

/** Subtracts the ambient level from plane 0 of a sampled band, in place. */
export function subtractAmbient(s: SampledBand, band: BandGeometry, ambient: Ambient): void {
  const f = bandFrame(band);
  const plane = s.planes[0];
  const R = s.rows;
  const { ax, bx, ay, by } = ambient;
  const [c0, c1, c2, c3, c4, c5] = ambient.c;
  const valid = s.valid;
  const q = s.offsetPx;
  const positions = s.positionPx;
  const { startX, startY, ux, uy, vx, vy } = f;
  for (let i = 0; i < s.columns; i++) {
    const p = positions[i];
    subtractColumn(plane, valid, q, i * R, R, startX + p * ux, startY + p * uy, vx, vy, ax, bx, ay, by, c0, c1, c2, c3, c4, c5);
  }
}

/** One column of subtractAmbient (the same arithmetic, with every factor in a local: no property loads per sample). */
function subtractColumn(
  plane: Float32Array,
  valid: Uint8Array,
  q: Float64Array,
  k0: number,
  R: number,
  x0: number,
  y0: number,
  vx: number,
  vy: number,
  ax: number,
  bx: number,
  ay: number,
  by: number,
  c0: number,
  c1: number,
  c2: number,
  c3: number,
  c4: number,
  c5: number,
): void {
  for (let j = 0, k = k0; j < R; j++, k++) {
    if (!valid[k]) continue;
    const u = ax * (x0 + q[j] * vx) + bx;
    const w = ay * (y0 + q[j] * vy) + by;
    plane[k] -= c0 + (c1 + c3 * u + c4 * w) * u + (c2 + c5 * w) * w;
  }
}
