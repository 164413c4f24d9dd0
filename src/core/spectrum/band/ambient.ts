/**
 * The ambient light fitted by the coarse flattening (band/flatten.ts), evaluated at full-resolution points, so that the
 * refinement sees a flat background even where the band fills the frame and no off-band rows exist on one side.
 */
import type { SampledBand } from '../sampleBand.js';
import { bandFrame } from './frame.js';
import type { BandGeometry } from '../../types.js';

/** Ambient level (mean of the channels) at a full-resolution point. */
export type Ambient = (x: number, y: number) => number;

/** From the per-plane quadratic surfaces of a decimated image (block size `factor`) of `width` × `height` blocks. */
export function ambientFromSurfaces(surfaces: number[][], width: number, height: number, factor: number): Ambient {
  const n = surfaces.length;
  const c = [0, 0, 0, 0, 0, 0];
  for (const s of surfaces) for (let k = 0; k < 6; k++) c[k] += s[k] / n;
  const sx = 2 / Math.max(1, width - 1);
  const sy = 2 / Math.max(1, height - 1);
  const off = (factor - 1) / 2;
  return (x, y) => {
    const u = ((x - off) / factor) * sx - 1;
    const w = ((y - off) / factor) * sy - 1;
    return c[0] + c[1] * u + c[2] * w + c[3] * u * u + c[4] * u * w + c[5] * w * w;
  };
}

/** Subtracts the ambient level from plane 0 of a sampled band, in place. */
export function subtractAmbient(s: SampledBand, band: BandGeometry, ambient: Ambient): void {
  const f = bandFrame(band);
  const plane = s.planes[0];
  const R = s.rows;
  for (let i = 0; i < s.columns; i++) {
    const p = s.positionPx[i];
    for (let j = 0, k = i * R; j < R; j++, k++) {
      if (!s.valid[k]) continue;
      const q = s.offsetPx[j];
      plane[k] -= ambient(f.startX + p * f.ux + q * f.vx, f.startY + p * f.uy + q * f.vy);
    }
  }
}
