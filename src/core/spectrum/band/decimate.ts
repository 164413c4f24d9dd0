/**
 * Block-averaged copy of a photo for the coarse search: each output pixel is the mean of an f × f block (partial
 * blocks at the right and bottom edges average what they hold). Block (X, Y) is centred on full-resolution point
 * (f·X + (f − 1)/2, f·Y + (f − 1)/2) for whole blocks. For f ≥ 4 only every second row and column of a block is read,
 * for f ≥ 6 every third (a ninth of a 12-MP photo): the coarse search needs the band's shape, not its last photon, and
 * a line image of FWHM ≥ 2 px still leaves a third of its peak or more in the samples nearest it. One pass, reading
 * codes through the table when the decoder kept them (the photo is never expanded to Float32 for this).
 */
import { invalid } from '../../errors.js';
import type { LinearImage } from '../../types.js';
import { type PixelAccess, pixelAccess } from './pixels.js';
import { RowWindowMiss, rowWindowOf } from './rowWindow.js';
import { type Scratch, takeOrNew } from '../scratch.js';

export interface Decimated {
  width: number;
  height: number;
  factor: number;
  /** R, G, B planes (or one grey plane), row-major. */
  planes: Float32Array[];
  /** Fraction of each block's pixels read that are clipped in any channel. */
  clipped: Float32Array;
}

/**
 * `scratch`: working arrays to take the planes from (see scratch.ts), for a caller that reads the result within the
 * same synchronous call and drops it; by default new arrays.
 */
export function decimate(image: LinearImage, factor: number, saturationLevel: number, scratch?: Scratch): Decimated {
  // Every row is read: a photo of which only some rows were decoded is not enough.
  const window = rowWindowOf(image);
  if (window !== undefined && (window.firstRowPx > 0 || window.rowCount < image.height)) {
    throw new RowWindowMiss(window, window.firstRowPx > 0 ? 0 : image.height - 1);
  }
  const px = pixelAccess(image, saturationLevel);
  const f = Math.max(1, Math.floor(factor));
  const stride = f >= 6 ? 3 : f >= 4 ? 2 : 1;
  const w = Math.ceil(px.width / f);
  const h = Math.ceil(px.height / f);
  const C = px.channels;
  // The copies of blocks of one pixel below write every value; the row loops add to zeros.
  const copies = f === 1 && C === 3 && (px.codeToLinear === null || (px.clipCode & (px.clipCode + 1)) === 0);
  const planes = Array.from({ length: C }, (_, c) => takeOrNew(scratch, PLANE_SLOTS[c], Float32Array, w * h, !copies));
  const clipped = takeOrNew(scratch, 'decimate.clipped', Float32Array, w * h, !copies);
  if (f === 1 && C === 3 && px.codeToLinear === null) {
    // Blocks of one pixel (a decoder's preview, decimatePreview): the row loop's sums and counts of one term each, and
    // no division (by 1) after them — the same values, without the per-block loop overhead (8 ms of a 500 × 375
    // preview's 9 ms, measured).
    copyLinear3(px, planes, clipped);
    return { width: w, height: h, factor: f, planes, clipped };
  }
  if (f === 1 && C === 3 && px.codeToLinear !== null && (px.clipCode & (px.clipCode + 1)) === 0) {
    // The same for a preview held as codes (io's JPEG preview): a table look-up per value instead of a load.
    copyCodes3(px, planes, clipped);
    return { width: w, height: h, factor: f, planes, clipped };
  }
  // Sampled columns are x = 0, stride, 2·stride, …; block X holds those in [f·X, f·X + f). Its first sampled column
  // and its count are fixed, so the row loops sum block by block in registers and the counts are computed, not summed.
  const firstX = new Int32Array(w + 1);
  for (let X = 0; X <= w; X++) firstX[X] = Math.min(px.width, Math.ceil((X * f) / stride) * stride);
  // One row function per kind of pixel, so that each stays monomorphic in the JIT.
  const row =
    px.codeToLinear !== null && (px.clipCode & (px.clipCode + 1)) !== 0
      ? rowGeneral // a code table whose length is not a power of two (never built by io/image)
      : C === 3
        ? px.codeToLinear !== null
          ? rowCodes3
          : rowLinear3
        : px.codeToLinear !== null
          ? rowGreyCodes
          : rowGreyLinear;
  for (let y = 0; y < px.height; y += stride) row(px, y, stride, Math.floor(y / f) * w, firstX, w, planes, clipped);
  // Means: block (X, Y) read (sampled rows in block row Y) × (sampled columns in block column X) pixels.
  const columns = new Float64Array(w);
  for (let X = 0; X < w; X++) columns[X] = sampledInBlock(px.width, f, stride, X);
  for (let Y = 0; Y < h; Y++) {
    const rows = sampledInBlock(px.height, f, stride, Y);
    for (const plane of planes) divideRow(plane, Y * w, w, rows, columns);
    divideRow(clipped, Y * w, w, rows, columns);
  }
  return { width: w, height: h, factor: f, planes, clipped };
}

const PLANE_SLOTS = ['decimate.plane0', 'decimate.plane1', 'decimate.plane2'];

/** How many of the sampled indices 0, stride, 2·stride, … below n fall in block B = [f·B, f·B + f). */
function sampledInBlock(n: number, f: number, stride: number, B: number): number {
  const a = Math.ceil((B * f) / stride) * stride;
  const b = Math.min(n, (B + 1) * f);
  return b > a ? Math.floor((b - 1 - a) / stride) + 1 : 0;
}

function divideRow(values: Float32Array, from: number, w: number, rows: number, columns: Float64Array): void {
  for (let X = 0; X < w; X++) {
    const n = rows * columns[X];
    if (n > 0) values[from + X] /= n;
  }
}

/**
 * One sampled row of an RGB photo held as codes. Clipping by one bit test: the code tables have 2^n entries, so for
 * codes ≤ clip = 2^n − 1, (c + 1) has bit n set exactly when c === clip, and OR-ing the (c + 1) of the three channels
 * tests them together; (t >>> n) is then 1 for a clipped pixel, else 0.
 */
function rowCodes3(
  px: PixelAccess,
  y: number,
  stride: number,
  rowOut: number,
  firstX: Int32Array,
  w: number,
  planes: Float32Array[],
  clipped: Float32Array,
): void {
  const codes = px.values as Uint8Array | Uint16Array;
  const lut = px.codeToLinear as Float32Array;
  const shift = Math.round(Math.log2(px.clipCode + 1));
  const [r, g, b] = planes;
  const row = y * px.width * 3;
  const step = 3 * stride;
  for (let X = 0; X < w; X++) {
    const k = rowOut + X;
    // Running sums rounded to Float32 after every pixel, as the planes would round them: the same sums to the bit.
    let sr = r[k];
    let sg = g[k];
    let sb = b[k];
    let nc = 0;
    for (let a = row + 3 * firstX[X], e = row + 3 * firstX[X + 1]; a < e; a += step) {
      const cr = codes[a];
      const cg = codes[a + 1];
      const cb = codes[a + 2];
      sr = Math.fround(sr + lut[cr]);
      sg = Math.fround(sg + lut[cg]);
      sb = Math.fround(sb + lut[cb]);
      nc += ((cr + 1) | (cg + 1) | (cb + 1)) >>> shift;
    }
    r[k] = sr;
    g[k] = sg;
    b[k] = sb;
    clipped[k] += nc;
  }
}

/** decimate by 1 of an RGB photo in linear Float32 values: rowLinear3's terms for blocks of one pixel. */
function copyLinear3(px: PixelAccess, planes: Float32Array[], clipped: Float32Array): void {
  const data = px.values as Float32Array;
  const flags = px.saturatedFlags;
  const level = px.saturationLevel;
  const [r, g, b] = planes;
  const n = px.width * px.height;
  for (let p = 0, a = 0; p < n; p++, a += 3) {
    const vr = data[a];
    const vg = data[a + 1];
    const vb = data[a + 2];
    r[p] = Math.fround(0 + vr);
    g[p] = Math.fround(0 + vg);
    b[p] = Math.fround(0 + vb);
    clipped[p] = flags !== null ? (flags[p] !== 0 ? 1 : 0) : vr >= level || vg >= level || vb >= level ? 1 : 0;
  }
}

/** decimate by 1 of an RGB photo held as codes (a code table of 2^n entries): rowCodes3's terms for blocks of one pixel. */
function copyCodes3(px: PixelAccess, planes: Float32Array[], clipped: Float32Array): void {
  const codes = px.values as Uint8Array | Uint16Array;
  const lut = px.codeToLinear as Float32Array;
  const shift = Math.round(Math.log2(px.clipCode + 1));
  const [r, g, b] = planes;
  const n = px.width * px.height;
  for (let p = 0, a = 0; p < n; p++, a += 3) {
    const cr = codes[a];
    const cg = codes[a + 1];
    const cb = codes[a + 2];
    r[p] = Math.fround(0 + lut[cr]);
    g[p] = Math.fround(0 + lut[cg]);
    b[p] = Math.fround(0 + lut[cb]);
    clipped[p] = ((cr + 1) | (cg + 1) | (cb + 1)) >>> shift;
  }
}

/** One sampled row of an RGB photo in linear Float32 values; clipped by the decoder's flags, else by the level. */
function rowLinear3(
  px: PixelAccess,
  y: number,
  stride: number,
  rowOut: number,
  firstX: Int32Array,
  w: number,
  planes: Float32Array[],
  clipped: Float32Array,
): void {
  const W = px.width;
  const data = px.values as Float32Array;
  const flags = px.saturatedFlags;
  const level = px.saturationLevel;
  const [r, g, b] = planes;
  for (let X = 0; X < w; X++) {
    const k = rowOut + X;
    let sr = r[k];
    let sg = g[k];
    let sb = b[k];
    let nc = 0;
    for (let x = firstX[X]; x < firstX[X + 1]; x += stride) {
      const p = y * W + x;
      const a = 3 * p;
      const vr = data[a];
      const vg = data[a + 1];
      const vb = data[a + 2];
      sr = Math.fround(sr + vr);
      sg = Math.fround(sg + vg);
      sb = Math.fround(sb + vb);
      nc += flags !== null ? (flags[p] !== 0 ? 1 : 0) : vr >= level || vg >= level || vb >= level ? 1 : 0;
    }
    r[k] = sr;
    g[k] = sg;
    b[k] = sb;
    clipped[k] += nc;
  }
}

/** One sampled row of a grey photo held as codes. */
function rowGreyCodes(
  px: PixelAccess,
  y: number,
  stride: number,
  rowOut: number,
  firstX: Int32Array,
  w: number,
  planes: Float32Array[],
  clipped: Float32Array,
): void {
  const W = px.width;
  const codes = px.values as Uint8Array | Uint16Array;
  const lut = px.codeToLinear as Float32Array;
  const clip = px.clipCode;
  const plane = planes[0];
  for (let X = 0; X < w; X++) {
    const k = rowOut + X;
    let sv = plane[k];
    let nc = 0;
    for (let x = firstX[X]; x < firstX[X + 1]; x += stride) {
      const code = codes[y * W + x];
      sv = Math.fround(sv + lut[code]);
      nc += code === clip ? 1 : 0;
    }
    plane[k] = sv;
    clipped[k] += nc;
  }
}

/** One sampled row of a grey photo in linear Float32 values. */
function rowGreyLinear(
  px: PixelAccess,
  y: number,
  stride: number,
  rowOut: number,
  firstX: Int32Array,
  w: number,
  planes: Float32Array[],
  clipped: Float32Array,
): void {
  const W = px.width;
  const data = px.values as Float32Array;
  const flags = px.saturatedFlags;
  const level = px.saturationLevel;
  const plane = planes[0];
  for (let X = 0; X < w; X++) {
    const k = rowOut + X;
    let sv = plane[k];
    let nc = 0;
    for (let x = firstX[X]; x < firstX[X + 1]; x += stride) {
      const p = y * W + x;
      const v = data[p];
      sv = Math.fround(sv + v);
      nc += flags !== null ? (flags[p] === 1 ? 1 : 0) : v >= level ? 1 : 0;
    }
    plane[k] = sv;
    clipped[k] += nc;
  }
}

/** One sampled row of any photo, the general way (any channel count, any code table). */
function rowGeneral(
  px: PixelAccess,
  y: number,
  stride: number,
  rowOut: number,
  firstX: Int32Array,
  w: number,
  planes: Float32Array[],
  clipped: Float32Array,
): void {
  const C = px.channels;
  const W = px.width;
  const lut = px.codeToLinear;
  const values = px.values;
  const flags = px.saturatedFlags;
  const level = px.saturationLevel;
  const clip = px.clipCode;
  for (let X = 0; X < w; X++) {
    const k = rowOut + X;
    for (let x = firstX[X]; x < firstX[X + 1]; x += stride) {
      const p = y * W + x;
      let sat = false;
      for (let c = 0; c < C; c++) {
        const raw = values[p * C + c];
        const v = lut ? lut[raw] : raw;
        planes[c][k] += v;
        if (lut ? raw === clip : flags === null && v >= level) sat = true;
      }
      if (flags !== null && flags[p]) sat = true;
      if (sat) clipped[k] += 1;
    }
  }
}

/**
 * The coarse image from a decoder's reduced-size decode of the photo instead of the photo itself: pixel (X, Y) of
 * `preview` is a mean of a `widthPx` × `heightPx` photo centred on its `scale` × `scale` block (io's JPEG preview:
 * a weighted mean over the block and half its neighbours), linear values with per-pixel clip flags. It is
 * block-averaged further when it is still longer than `coarseMaxSidePx`, so the coarse image has blocks of scale × g px.
 *
 * What differs from decimate() on the full photo: a JPEG preview's means are taken of gamma-encoded values (a bright
 * narrow line counts for less than in a mean of linear light), over a slightly wider footprint, with the encoder's
 * chroma resolution; a pixel is flagged clipped only when its whole mean is. The coarse search needs the band's shape
 * and where it lies (previewSuitsSearch says at which sizes it is the same search); the refinement that follows reads
 * the full-resolution photo. `scratch` as for decimate.
 */
export function decimatePreview(
  preview: LinearImage,
  scale: number,
  widthPx: number,
  heightPx: number,
  coarseMaxSidePx: number,
  saturationLevel: number,
  scratch?: Scratch,
): Decimated {
  if (!Number.isInteger(scale) || scale < 1 || preview.width !== Math.ceil(widthPx / scale) || preview.height !== Math.ceil(heightPx / scale)) {
    throw invalid('preview', `${Math.ceil(widthPx / scale)} × ${Math.ceil(heightPx / scale)} px (1/${scale} of the photo)`, `${preview.width} × ${preview.height}`);
  }
  const g = Math.max(1, Math.ceil(Math.max(preview.width, preview.height) / coarseMaxSidePx));
  const dec = decimate(preview, g, saturationLevel, scratch); // g = 1: a copy into planes, clipped fraction 0 or 1
  // Blocks of g preview pixels are blocks of g·scale photo pixels: ⌈⌈W/scale⌉/g⌉ = ⌈W/(g·scale)⌉, as decimate() counts them.
  return { ...dec, factor: g * scale };
}
