/**
 * Block-averaged copy of a photo for the coarse search: each output pixel is the mean of an f × f block (partial
 * blocks at the right and bottom edges average what they hold). Block (X, Y) is centred on full-resolution point
 * (f·X + (f − 1)/2, f·Y + (f − 1)/2) for whole blocks. One pass over the photo, reading codes through the table when
 * the decoder kept them (the photo is never expanded to Float32 for this).
 */
import type { LinearImage } from '../../types.js';
import { type PixelAccess, pixelAccess } from './pixels.js';

export interface Decimated {
  width: number;
  height: number;
  factor: number;
  /** R, G, B planes (or one grey plane), row-major. */
  planes: Float32Array[];
  /** Fraction of each block's pixels that are clipped in any channel. */
  clipped: Float32Array;
}

export function decimate(image: LinearImage, factor: number, saturationLevel: number): Decimated {
  const px = pixelAccess(image, saturationLevel);
  const f = Math.max(1, Math.floor(factor));
  const w = Math.ceil(px.width / f);
  const h = Math.ceil(px.height / f);
  const C = px.channels;
  const planes = Array.from({ length: C }, () => new Float32Array(w * h));
  const clipped = new Float32Array(w * h);
  if (px.codeToLinear) accumulateCodes(px, f, w, planes, clipped);
  else accumulateLinear(px, f, w, planes, clipped);
  // Divide by the block's pixel count.
  for (let Y = 0; Y < h; Y++) {
    const rowsIn = Math.min(f, px.height - Y * f);
    for (let X = 0; X < w; X++) {
      const n = rowsIn * Math.min(f, px.width - X * f);
      const k = Y * w + X;
      for (let c = 0; c < C; c++) planes[c][k] /= n;
      clipped[k] /= n;
    }
  }
  return { width: w, height: h, factor: f, planes, clipped };
}

function accumulateLinear(px: PixelAccess, f: number, w: number, planes: Float32Array[], clipped: Float32Array): void {
  const { width: W, height: H, channels: C, saturationLevel: level } = px;
  const data = px.values as Float32Array;
  const flags = px.saturatedFlags;
  for (let y = 0; y < H; y++) {
    const rowOut = Math.floor(y / f) * w;
    for (let x = 0, a = y * W * C; x < W; x++, a += C) {
      const k = rowOut + Math.floor(x / f);
      let sat = false;
      for (let c = 0; c < C; c++) {
        const v = data[a + c];
        planes[c][k] += v;
        if (v >= level) sat = true;
      }
      if (flags ? flags[y * W + x] : sat) clipped[k] += 1;
    }
  }
}

function accumulateCodes(px: PixelAccess, f: number, w: number, planes: Float32Array[], clipped: Float32Array): void {
  const { width: W, height: H, channels: C, clipCode } = px;
  const codes = px.values as Uint8Array | Uint16Array;
  const lut = px.codeToLinear as Float32Array;
  for (let y = 0; y < H; y++) {
    const rowOut = Math.floor(y / f) * w;
    for (let x = 0, a = y * W * C; x < W; x++, a += C) {
      const k = rowOut + Math.floor(x / f);
      let sat = false;
      for (let c = 0; c < C; c++) {
        const code = codes[a + c];
        planes[c][k] += lut[code];
        if (code === clipCode) sat = true;
      }
      if (sat) clipped[k] += 1;
    }
  }
}
