/**
 * Samples the band on its own grid — positions along the dispersion axis × offsets across it, following the slanted
 * line images — by bilinear interpolation of the photo. Only the band is read: the photo is never warped as a whole
 * (a full warp of a 12-MP photo costs several times its decode). Work and memory are O(samples).
 *
 * Geometry: see band/frame.ts. Sample (column i, row j) lies at X(p_i, q_j) = S + p_i·u + q_j·v. Planes are stored
 * column by column (index i·rows + j): every extraction step works on one column (one line image) at a time.
 */
import { assertFinite, invalid } from '../errors.js';
import type { BandGeometry, LinearImage } from '../types.js';
import { bandFrame } from './band/frame.js';
import { type PixelAccess, pixelAccess } from './band/pixels.js';
import { RowWindowMiss } from './band/rowWindow.js';
import type { Scratch } from './scratch.js';

export interface SampleBandOptions {
  /** Spacing of the samples along the band (px). @default 1 */
  stepPx?: number;
  /** Spacing of the sampled rows across the band (px). @default 1 */
  rowStepPx?: number;
  /** Rows are sampled at offsets within ±halfWidthPx of the centre line, symmetric about 0. @default heightPx / 2 */
  halfWidthPx?: number;
  /** First position sampled (px from the band's start). @default 0 */
  fromPx?: number;
  /** Last position sampled (px). @default lengthPx */
  toPx?: number;
  /**
   * With linear Float32 data and no per-pixel flags from the decoder: a value at or above this counts as clipped.
   * (8-bit sRGB code 254 decodes to 0.991, 255 to 1.) @default 0.999
   */
  saturationLevel?: number;
  /** Return one plane, the mean of the channels, instead of one plane per channel. @default false */
  combine?: boolean;
  /**
   * Compute `saturated`. false leaves it all 0: the band search reads only the combined plane, and the clip test costs
   * as much as the interpolation itself in the combined kernel. @default true
   */
  flagSaturated?: boolean;
  /** A previous result to reuse when its size matches (live frames): avoids reallocating the planes. */
  out?: SampledBand;
  /**
   * Working arrays to take the result's arrays from (when `out` does not fit): the result is then valid only until the
   * next sampleBand with the same scratch (see scratch.ts), for a caller that samples, reads and drops.
   */
  scratch?: Scratch;
}

export const SAMPLE_BAND_DEFAULTS = {
  stepPx: 1,
  rowStepPx: 1,
  fromPx: 0,
  saturationLevel: 0.999,
  combine: false,
  flagSaturated: true,
} as const;

export interface SampledBand {
  /** Samples along the band. */
  columns: number;
  /** Rows across the band. */
  rows: number;
  /** Position of each column (px from the band's start). */
  positionPx: Float64Array;
  /** Offset of each row from the centre line (px), ascending, symmetric about 0. */
  offsetPx: Float64Array;
  /** Planes, each `columns × rows`, column by column (index i·rows + j): R, G, B, or one grey / combined plane. */
  planes: Float32Array[];
  /** 1 where the sample lies inside the image. */
  valid: Uint8Array;
  /** 1 where a pixel contributing to the sample (non-zero bilinear weight) is clipped in any channel. */
  saturated: Uint8Array;
  /** Number of samples outside the image. */
  outsideCount: number;
}

/** Samples `band` of `image`; see SampleBandOptions. */
export function sampleBand(image: LinearImage, band: BandGeometry, options: SampleBandOptions = {}): SampledBand {
  const stepPx = options.stepPx ?? SAMPLE_BAND_DEFAULTS.stepPx;
  const rowStepPx = options.rowStepPx ?? SAMPLE_BAND_DEFAULTS.rowStepPx;
  assertFinite('stepPx', stepPx, 1e-3);
  assertFinite('rowStepPx', rowStepPx, 1e-3);
  checkBand(band);
  const halfWidthPx = options.halfWidthPx ?? band.heightPx / 2;
  assertFinite('halfWidthPx', halfWidthPx, 0);
  const fromPx = options.fromPx ?? SAMPLE_BAND_DEFAULTS.fromPx;
  const toPx = options.toPx ?? band.lengthPx;
  assertFinite('fromPx', fromPx);
  assertFinite('toPx', toPx, fromPx);
  const saturationLevel = options.saturationLevel ?? SAMPLE_BAND_DEFAULTS.saturationLevel;
  const combine = options.combine ?? SAMPLE_BAND_DEFAULTS.combine;
  const flagSaturated = options.flagSaturated ?? SAMPLE_BAND_DEFAULTS.flagSaturated;
  const px = pixelAccess(image, saturationLevel);

  const columns = Math.floor((toPx - fromPx) / stepPx + 1e-9) + 1;
  const half = Math.floor(halfWidthPx / rowStepPx + 1e-9);
  const rows = 2 * half + 1;
  const nPlanes = combine || px.channels === 1 ? 1 : 3;
  const out = reuse(options.out, columns, rows, nPlanes, options.scratch);
  for (let i = 0; i < columns; i++) out.positionPx[i] = fromPx + i * stepPx;
  for (let j = 0; j < rows; j++) out.offsetPx[j] = (j - half) * rowStepPx;

  const f = bandFrame(band);
  const grid: Grid = {
    x0: f.startX + fromPx * f.ux,
    y0: f.startY + fromPx * f.uy,
    colDx: stepPx * f.ux,
    colDy: stepPx * f.uy,
    rowDx: f.vx,
    rowDy: f.vy,
  };
  out.outsideCount = px.codeToLinear ? sampleCodes(px, grid, out, combine, flagSaturated) : sampleLinear(px, grid, out, combine);
  // The kernels other than the combined interior one flag anyway (edges, linear input: rare or small).
  if (!flagSaturated) out.saturated.fill(0);
  return out;
}

export function checkBand(band: BandGeometry): void {
  if (typeof band !== 'object' || band === null) throw invalid('band', 'a band geometry object', band);
  assertFinite('band.angleDeg', band.angleDeg, -180, 180);
  assertFinite('band.slantDeg', band.slantDeg, -45, 45);
  if (typeof band.center !== 'object' || band.center === null) throw invalid('band.center', '{x, y}', band.center);
  assertFinite('band.center.x', band.center.x);
  assertFinite('band.center.y', band.center.y);
  assertFinite('band.lengthPx', band.lengthPx, 1);
  assertFinite('band.heightPx', band.heightPx, 1);
}

interface Grid {
  /** Image point of column 0 on the centre line. */
  x0: number;
  y0: number;
  /** Image step per column and per unit of offset. */
  colDx: number;
  colDy: number;
  rowDx: number;
  rowDy: number;
}

function reuse(prev: SampledBand | undefined, columns: number, rows: number, nPlanes: number, scratch: Scratch | undefined): SampledBand {
  const n = columns * rows;
  if (prev && prev.columns === columns && prev.rows === rows && prev.planes.length === nPlanes) {
    prev.valid.fill(0);
    prev.saturated.fill(0);
    return prev;
  }
  if (scratch) {
    // The kernels write every sample of the planes (0 outside the image) and every position and offset; `valid` and
    // `saturated` they only set, so those start at 0 as in new arrays.
    const planes: Float32Array[] = [];
    for (let c = 0; c < nPlanes; c++) planes.push(scratch.take(PLANE_SLOTS[c], Float32Array, n, false));
    return {
      columns,
      rows,
      positionPx: scratch.take('sampleBand.positionPx', Float64Array, columns, false),
      offsetPx: scratch.take('sampleBand.offsetPx', Float64Array, rows, false),
      planes,
      valid: scratch.take('sampleBand.valid', Uint8Array, n),
      saturated: scratch.take('sampleBand.saturated', Uint8Array, n),
      outsideCount: 0,
    };
  }
  return {
    columns,
    rows,
    positionPx: new Float64Array(columns),
    offsetPx: new Float64Array(rows),
    planes: Array.from({ length: nPlanes }, () => new Float32Array(n)),
    valid: new Uint8Array(n),
    saturated: new Uint8Array(n),
    outsideCount: 0,
  };
}

const PLANE_SLOTS = ['sampleBand.plane0', 'sampleBand.plane1', 'sampleBand.plane2'];

// The two kernels below are the same bilinear loop written out for linear Float32 values and for integer codes
// through a table, so that each stays monomorphic (one array type per access site) in the JIT.

function sampleLinear(px: PixelAccess, g: Grid, out: SampledBand, combine: boolean): number {
  const { width: W, height: H, channels: C, saturationLevel: level } = px;
  const data = px.values as Float32Array;
  const flags = px.saturatedFlags;
  const { columns, rows, planes, valid, saturated, offsetPx } = out;
  const rowStep = rows > 1 ? offsetPx[1] - offsetPx[0] : 0;
  const sdx = g.rowDx * rowStep;
  const sdy = g.rowDy * rowStep;
  const rowStride = W * C;
  const p0 = planes[0];
  const p1 = planes.length === 3 ? planes[1] : p0;
  const p2 = planes.length === 3 ? planes[2] : p0;
  const third = 1 / 3;
  let outside = 0;
  const qFirst = offsetPx[0];
  for (let i = 0; i < columns; i++) {
    let x = g.x0 + i * g.colDx + qFirst * g.rowDx;
    let y = g.y0 + i * g.colDy + qFirst * g.rowDy;
    let k = i * rows;
    for (let j = 0; j < rows; j++, k++, x += sdx, y += sdy) {
      if (!(x >= -1e-6 && x <= W - 1 + 1e-6 && y >= -1e-6 && y <= H - 1 + 1e-6)) {
        p0[k] = 0;
        if (C === 3 && !combine) p1[k] = p2[k] = 0;
        outside++;
        continue;
      }
      // Truncation, not Math.floor (see interiorColumn3); negative x only reaches here within 1e-6 of 0 and is
      // clamped to 0 below either way.
      let xi = x | 0;
      let yi = y | 0;
      if (xi > W - 2) xi = W - 2;
      else if (xi < 0) xi = 0;
      if (yi > H - 2) yi = H - 2;
      else if (yi < 0) yi = 0;
      const fx = x - xi;
      const fy = y - yi;
      const w00 = (1 - fx) * (1 - fy);
      const w01 = fx * (1 - fy);
      const w10 = (1 - fx) * fy;
      const w11 = fx * fy;
      const pix = yi * W + xi;
      const a = pix * C;
      const b = a + rowStride;
      valid[k] = 1;
      if (C === 1) {
        const v00 = data[a];
        const v01 = data[a + 1];
        const v10 = data[b];
        const v11 = data[b + 1];
        p0[k] = w00 * v00 + w01 * v01 + w10 * v10 + w11 * v11;
        if (flags === null) {
          if ((w00 > 0 && v00 >= level) || (w01 > 0 && v01 >= level) || (w10 > 0 && v10 >= level) || (w11 > 0 && v11 >= level)) saturated[k] = 1;
        } else if ((w00 > 0 && flags[pix]) || (w01 > 0 && flags[pix + 1]) || (w10 > 0 && flags[pix + W]) || (w11 > 0 && flags[pix + W + 1])) {
          saturated[k] = 1;
        }
      } else {
        const r00 = data[a], g00 = data[a + 1], b00 = data[a + 2];
        const r01 = data[a + 3], g01 = data[a + 4], b01 = data[a + 5];
        const r10 = data[b], g10 = data[b + 1], b10 = data[b + 2];
        const r11 = data[b + 3], g11 = data[b + 4], b11 = data[b + 5];
        const r = w00 * r00 + w01 * r01 + w10 * r10 + w11 * r11;
        const gg = w00 * g00 + w01 * g01 + w10 * g10 + w11 * g11;
        const bb = w00 * b00 + w01 * b01 + w10 * b10 + w11 * b11;
        if (combine) p0[k] = (r + gg + bb) * third;
        else {
          p0[k] = r;
          p1[k] = gg;
          p2[k] = bb;
        }
        if (flags === null) {
          if (
            (w00 > 0 && (r00 >= level || g00 >= level || b00 >= level)) ||
            (w01 > 0 && (r01 >= level || g01 >= level || b01 >= level)) ||
            (w10 > 0 && (r10 >= level || g10 >= level || b10 >= level)) ||
            (w11 > 0 && (r11 >= level || g11 >= level || b11 >= level))
          ) {
            saturated[k] = 1;
          }
        } else if ((w00 > 0 && flags[pix]) || (w01 > 0 && flags[pix + 1]) || (w10 > 0 && flags[pix + W]) || (w11 > 0 && flags[pix + W + 1])) {
          saturated[k] = 1;
        }
      }
    }
  }
  return outside;
}

function sampleCodes(px: PixelAccess, g: Grid, out: SampledBand, combine: boolean, flagSaturated: boolean): number {
  const { width: W, height: H, channels: C, clipCode: clip, firstRow, endRow, base } = px;
  const codes = px.values as Uint8Array | Uint16Array;
  const lut = px.codeToLinear as Float32Array;
  const windowed = firstRow > 0 || endRow < H;
  const { columns, rows, planes, valid, saturated, offsetPx } = out;
  const rowStep = rows > 1 ? offsetPx[1] - offsetPx[0] : 0;
  const sdx = g.rowDx * rowStep;
  const sdy = g.rowDy * rowStep;
  const p0 = planes[0];
  const p1 = planes.length === 3 ? planes[1] : p0;
  const p2 = planes.length === 3 ? planes[2] : p0;
  // Clip test by one bit: the tables have 2^n entries, so clip + 1 = 2^n and, for codes ≤ clip, (c + 1) & 2^n is set
  // exactly when c === clip; OR-ing the (c + 1) of several codes tests them all at once.
  const clipBit = clip + 1;
  const oneBit = (clipBit & clip) === 0;
  let outside = 0;
  const qFirst = offsetPx[0];
  const last = rows - 1;
  for (let i = 0; i < columns; i++) {
    const x = g.x0 + i * g.colDx + qFirst * g.rowDx;
    const y = g.y0 + i * g.colDy + qFirst * g.rowDy;
    const k = i * rows;
    // The samples of a column lie on a straight line: when both ends fall inside [0, W − 1) × [0, H − 1) (inside the
    // decoded rows of a row window) every sample does, and the bounds tests and clamps of the general loop can go (they
    // would not change any value there).
    const xe = x + last * sdx;
    const ye = y + last * sdy;
    // (A margin of 1e-3 px keeps the running sums' rounding from carrying a sample across an edge.)
    const lo = 1e-3;
    const xHi = W - 1 - 1e-3;
    const yLo = firstRow + 1e-3;
    const yHi = endRow - 1 - 1e-3;
    const interior = x >= lo && xe >= lo && y >= yLo && ye >= yLo && x < xHi && xe < xHi && y < yHi && ye < yHi;
    // (Combined samples with clip flags, which no stage asks for, take the general loop: the same values and flags.)
    if (interior && oneBit && C === 3 && !(combine && flagSaturated)) {
      if (combine) interiorColumn3Combined(codes, lut, W, base, x, y, sdx, sdy, rows, k, p0, valid);
      else interiorColumn3(codes, lut, W, base, clipBit, x, y, sdx, sdy, rows, k, p0, p1, p2, valid, saturated);
    } else {
      if (windowed) checkColumnRows(px, y, ye);
      outside += generalColumnCodes(px, codes, lut, x, y, sdx, sdy, rows, k, combine, p0, p1, p2, valid, saturated);
    }
  }
  return outside;
}

/**
 * One column of an RGB band, every sample inside the image: the same arithmetic as generalColumnCodes (so the same
 * values to the last bit) without bounds tests; the clip flag from one branch-free test (clippedFlag).
 */
function interiorColumn3(
  codes: Uint8Array | Uint16Array,
  lut: Float32Array,
  W: number,
  base: number,
  clipBit: number,
  x: number,
  y: number,
  sdx: number,
  sdy: number,
  rows: number,
  k: number,
  p0: Float32Array,
  p1: Float32Array,
  p2: Float32Array,
  valid: Uint8Array,
  saturated: Uint8Array,
): void {
  const rowStride = 3 * W;
  for (let j = 0; j < rows; j++, k++, x += sdx, y += sdy) {
    // x, y > 0 here, so truncation is the floor: `| 0` costs a fraction of Math.floor in V8 on this kind of loop
    // (4–5 ns per call measured on the project's 2-core Xeon machine, half the time of the whole sample).
    const xi = x | 0;
    const yi = y | 0;
    const fx = x - xi;
    const fy = y - yi;
    const w00 = (1 - fx) * (1 - fy);
    const w01 = fx * (1 - fy);
    const w10 = (1 - fx) * fy;
    const w11 = fx * fy;
    const a = (yi * W + xi) * 3 - base;
    const b = a + rowStride;
    valid[k] = 1;
    const r00 = codes[a], g00 = codes[a + 1], b00 = codes[a + 2];
    const r01 = codes[a + 3], g01 = codes[a + 4], b01 = codes[a + 5];
    const r10 = codes[b], g10 = codes[b + 1], b10 = codes[b + 2];
    const r11 = codes[b + 3], g11 = codes[b + 4], b11 = codes[b + 5];
    p0[k] = w00 * lut[r00] + w01 * lut[r01] + w10 * lut[r10] + w11 * lut[r11];
    p1[k] = w00 * lut[g00] + w01 * lut[g01] + w10 * lut[g10] + w11 * lut[g11];
    p2[k] = w00 * lut[b00] + w01 * lut[b01] + w10 * lut[b10] + w11 * lut[b11];
    saturated[k] = clippedFlag(clipBit, w00, w01, w10, w11, r00, g00, b00, r01, g01, b01, r10, g10, b10, r11, g11, b11);
  }
}

/**
 * interiorColumn3 for one combined plane, (R + G + B)/3, without clip flags (the band search's). A kernel of its own,
 * not a flag: with `if (flag) saturated[k] = …` never taken, the compiled loop boxed its doubles on the heap, 35 bytes
 * of garbage per sample, 13 MB per 12-MP photo (measured with process.memoryUsage; 0.7 bytes with the flag set).
 */
function interiorColumn3Combined(
  codes: Uint8Array | Uint16Array,
  lut: Float32Array,
  W: number,
  base: number,
  x: number,
  y: number,
  sdx: number,
  sdy: number,
  rows: number,
  k: number,
  p0: Float32Array,
  valid: Uint8Array,
): void {
  const rowStride = 3 * W;
  const third = 1 / 3;
  for (let j = 0; j < rows; j++, k++, x += sdx, y += sdy) {
    // Truncation is the floor here (x, y > 0; see interiorColumn3).
    const xi = x | 0;
    const yi = y | 0;
    const fx = x - xi;
    const fy = y - yi;
    const w00 = (1 - fx) * (1 - fy);
    const w01 = fx * (1 - fy);
    const w10 = (1 - fx) * fy;
    const w11 = fx * fy;
    const a = (yi * W + xi) * 3 - base;
    const b = a + rowStride;
    valid[k] = 1;
    const r = w00 * lut[codes[a]] + w01 * lut[codes[a + 3]] + w10 * lut[codes[b]] + w11 * lut[codes[b + 3]];
    const gg = w00 * lut[codes[a + 1]] + w01 * lut[codes[a + 4]] + w10 * lut[codes[b + 1]] + w11 * lut[codes[b + 4]];
    const bb = w00 * lut[codes[a + 2]] + w01 * lut[codes[a + 5]] + w10 * lut[codes[b + 2]] + w11 * lut[codes[b + 5]];
    p0[k] = (r + gg + bb) * third;
  }
}

/**
 * 1 when a neighbour with non-zero bilinear weight has a clipped code in any channel, else 0. Branch-free and stored
 * unconditionally (the planes start at 0): a store under a rarely taken branch in the sampling loop made the compiled
 * loop box its doubles on the heap, 10–30 bytes of garbage per sample (measured with --trace-gc).
 */
function clippedFlag(
  clipBit: number,
  w00: number,
  w01: number,
  w10: number,
  w11: number,
  r00: number,
  g00: number,
  b00: number,
  r01: number,
  g01: number,
  b01: number,
  r10: number,
  g10: number,
  b10: number,
  r11: number,
  g11: number,
  b11: number,
): number {
  const t00 = w00 > 0 ? (r00 + 1) | (g00 + 1) | (b00 + 1) : 0;
  const t01 = w01 > 0 ? (r01 + 1) | (g01 + 1) | (b01 + 1) : 0;
  const t10 = w10 > 0 ? (r10 + 1) | (g10 + 1) | (b10 + 1) : 0;
  const t11 = w11 > 0 ? (r11 + 1) | (g11 + 1) | (b11 + 1) : 0;
  return ((t00 | t01 | t10 | t11) & clipBit) !== 0 ? 1 : 0;
}

/**
 * Throws RowWindowMiss when the samples of a column from row coordinate y to ye could read a pixel of the photo
 * outside the decoded rows (a conservative test: the rows the bilinear weights of that span reach, kept inside the
 * photo as the general loop's clamps keep them).
 */
function checkColumnRows(px: PixelAccess, y: number, ye: number): void {
  const H = px.height;
  const top = Math.min(H - 2, Math.max(0, Math.floor(Math.min(y, ye) - 1e-6)));
  const bottom = Math.min(H - 1, Math.max(1, Math.floor(Math.max(y, ye) + 1e-6) + 1));
  if (top < px.firstRow) throw new RowWindowMiss({ firstRowPx: px.firstRow, rowCount: px.endRow - px.firstRow }, top);
  if (bottom >= px.endRow) throw new RowWindowMiss({ firstRowPx: px.firstRow, rowCount: px.endRow - px.firstRow }, bottom);
}

/** One column of the general loop over codes (any channel count, samples outside the image, edges); returns the outside count. */
function generalColumnCodes(
  px: PixelAccess,
  codes: Uint8Array | Uint16Array,
  lut: Float32Array,
  x: number,
  y: number,
  sdx: number,
  sdy: number,
  rows: number,
  k: number,
  combine: boolean,
  p0: Float32Array,
  p1: Float32Array,
  p2: Float32Array,
  valid: Uint8Array,
  saturated: Uint8Array,
): number {
  const { width: W, height: H, channels: C, clipCode: clip, base } = px;
  const rowStride = W * C;
  const third = 1 / 3;
  let outside = 0;
  for (let j = 0; j < rows; j++, k++, x += sdx, y += sdy) {
    if (!(x >= -1e-6 && x <= W - 1 + 1e-6 && y >= -1e-6 && y <= H - 1 + 1e-6)) {
      p0[k] = 0;
      if (C === 3 && !combine) p1[k] = p2[k] = 0;
      outside++;
      continue;
    }
    // Truncation, not Math.floor (see interiorColumn3): equal for x ≥ 0; x in [−1e-6, 0) gives 0 instead of −1,
    // which the clamp below makes 0 anyway.
    let xi = x | 0;
    let yi = y | 0;
    if (xi > W - 2) xi = W - 2;
    else if (xi < 0) xi = 0;
    if (yi > H - 2) yi = H - 2;
    else if (yi < 0) yi = 0;
    const fx = x - xi;
    const fy = y - yi;
    const w00 = (1 - fx) * (1 - fy);
    const w01 = fx * (1 - fy);
    const w10 = (1 - fx) * fy;
    const w11 = fx * fy;
    const a = (yi * W + xi) * C - base;
    const b = a + rowStride;
    valid[k] = 1;
    if (C === 1) {
      const c00 = codes[a];
      const c01 = codes[a + 1];
      const c10 = codes[b];
      const c11 = codes[b + 1];
      p0[k] = w00 * lut[c00] + w01 * lut[c01] + w10 * lut[c10] + w11 * lut[c11];
      if ((w00 > 0 && c00 === clip) || (w01 > 0 && c01 === clip) || (w10 > 0 && c10 === clip) || (w11 > 0 && c11 === clip)) saturated[k] = 1;
    } else {
      const r00 = codes[a], g00 = codes[a + 1], b00 = codes[a + 2];
      const r01 = codes[a + 3], g01 = codes[a + 4], b01 = codes[a + 5];
      const r10 = codes[b], g10 = codes[b + 1], b10 = codes[b + 2];
      const r11 = codes[b + 3], g11 = codes[b + 4], b11 = codes[b + 5];
      const r = w00 * lut[r00] + w01 * lut[r01] + w10 * lut[r10] + w11 * lut[r11];
      const gg = w00 * lut[g00] + w01 * lut[g01] + w10 * lut[g10] + w11 * lut[g11];
      const bb = w00 * lut[b00] + w01 * lut[b01] + w10 * lut[b10] + w11 * lut[b11];
      if (combine) p0[k] = (r + gg + bb) * third;
      else {
        p0[k] = r;
        p1[k] = gg;
        p2[k] = bb;
      }
      if (
        (w00 > 0 && (r00 === clip || g00 === clip || b00 === clip)) ||
        (w01 > 0 && (r01 === clip || g01 === clip || b01 === clip)) ||
        (w10 > 0 && (r10 === clip || g10 === clip || b10 === clip)) ||
        (w11 > 0 && (r11 === clip || g11 === clip || b11 === clip))
      ) {
        saturated[k] = 1;
      }
    }
  }
  return outside;
}
