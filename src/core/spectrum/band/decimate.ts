/**
 * Block-averaged copy of a photo for the coarse search: each output pixel is the mean of an f × f block (partial
 * blocks at the right and bottom edges average what they hold). Block (X, Y) is centred on full-resolution point
 * (f·X + (f − 1)/2, f·Y + (f − 1)/2) for whole blocks. For f ≥ 4 only every second row and column of a block is read,
 * for f ≥ 6 every third (a ninth of a 12-MP photo): the coarse search needs the band's shape, not its last photon, and
 * a line image of FWHM ≥ 2 px still leaves a third of its peak or more in the samples nearest it. One pass, reading codes through the table when the decoder kept them (the photo
 * is never expanded to Float32 for this).
 */
import type { LinearImage } from '../../types.js';
import { type PixelAccess, pixelAccess } from './pixels.js';

export interface Decimated {
  width: number;
  height: number;
  factor: number;
  /** R, G, B planes (or one grey plane), row-major. */
  planes: Float32Array[];
  /** Fraction of each block's pixels read that are clipped in any channel. */
  clipped: Float32Array;
}

export function decimate(image: LinearImage, factor: number, saturationLevel: number): Decimated {
  const px = pixelAccess(image, saturationLevel);
  const f = Math.max(1, Math.floor(factor));
  const stride = f >= 6 ? 3 : f >= 4 ? 2 : 1;
  const w = Math.ceil(px.width / f);
  const h = Math.ceil(px.height / f);
  const C = px.channels;
  const planes = Array.from({ length: C }, () => new Float32Array(w * h));
  const clipped = new Float32Array(w * h);
  const count = new Float32Array(w * h);
  const column = new Int32Array(px.width);
  for (let x = 0; x < px.width; x++) column[x] = Math.floor(x / f);
  for (let y = 0; y < px.height; y += stride) {
    const rowOut = Math.floor(y / f) * w;
    if (C === 3) {
      if (px.codeToLinear) rowCodes3(px, y, stride, rowOut, column, planes, clipped, count);
      else rowLinear3(px, y, stride, rowOut, column, planes, clipped, count);
    } else rowGrey(px, y, stride, rowOut, column, planes[0], clipped, count);
  }
  for (let k = 0; k < w * h; k++) {
    const n = count[k];
    if (n === 0) continue;
    for (let c = 0; c < C; c++) planes[c][k] /= n;
    clipped[k] /= n;
  }
  return { width: w, height: h, factor: f, planes, clipped };
}

function rowCodes3(
  px: PixelAccess,
  y: number,
  stride: number,
  rowOut: number,
  column: Int32Array,
  planes: Float32Array[],
  clipped: Float32Array,
  count: Float32Array,
): void {
  const W = px.width;
  const codes = px.values as Uint8Array | Uint16Array;
  const lut = px.codeToLinear as Float32Array;
  const clip = px.clipCode;
  const [r, g, b] = planes;
  for (let x = 0, a = y * W * 3; x < W; x += stride, a += 3 * stride) {
    const k = rowOut + column[x];
    const cr = codes[a];
    const cg = codes[a + 1];
    const cb = codes[a + 2];
    r[k] += lut[cr];
    g[k] += lut[cg];
    b[k] += lut[cb];
    count[k] += 1;
    if (cr === clip || cg === clip || cb === clip) clipped[k] += 1;
  }
}

function rowLinear3(
  px: PixelAccess,
  y: number,
  stride: number,
  rowOut: number,
  column: Int32Array,
  planes: Float32Array[],
  clipped: Float32Array,
  count: Float32Array,
): void {
  const W = px.width;
  const data = px.values as Float32Array;
  const flags = px.saturatedFlags;
  const level = px.saturationLevel;
  const [r, g, b] = planes;
  for (let x = 0, a = y * W * 3; x < W; x += stride, a += 3 * stride) {
    const k = rowOut + column[x];
    const vr = data[a];
    const vg = data[a + 1];
    const vb = data[a + 2];
    r[k] += vr;
    g[k] += vg;
    b[k] += vb;
    count[k] += 1;
    if (flags ? flags[y * W + x] : vr >= level || vg >= level || vb >= level) clipped[k] += 1;
  }
}

function rowGrey(
  px: PixelAccess,
  y: number,
  stride: number,
  rowOut: number,
  column: Int32Array,
  plane: Float32Array,
  clipped: Float32Array,
  count: Float32Array,
): void {
  const W = px.width;
  const lut = px.codeToLinear;
  for (let x = 0, a = y * W; x < W; x += stride, a += stride) {
    const k = rowOut + column[x];
    let v: number;
    let sat: boolean;
    if (lut) {
      const code = (px.values as Uint8Array | Uint16Array)[a];
      v = lut[code];
      sat = code === px.clipCode;
    } else {
      v = (px.values as Float32Array)[a];
      sat = px.saturatedFlags ? px.saturatedFlags[a] === 1 : v >= px.saturationLevel;
    }
    plane[k] += v;
    count[k] += 1;
    if (sat) clipped[k] += 1;
  }
}
