/**
 * Background flattening of the decimated photo: the ambient light, a gradient and vignetting are removed by a smooth
 * surface fitted under the data. The image is cut into cells; each cell's 20th percentile is a background sample
 * (a band, a zero order or a lamp covers a minority of most cells); a quadratic surface in (x, y) is fitted to those
 * samples by iteratively reweighted least squares with Tukey's biweight (Beaton & Tukey 1974) on residuals scaled
 * by their MAD, so that cells filled by the band are outvoted. Then the noise of the flattened image is measured.
 */
import { linearLeastSquares } from '../../fit/index.js';
import { type Scratch, takeOrNew } from '../scratch.js';
import { selectInPlace } from './select.js';

export interface Flattened {
  /** Data minus the fitted surface, per plane. */
  residual: Float32Array[];
  /** Surface coefficients per plane: c0 + c1 x + c2 y + c3 x² + c4 xy + c5 y² (x, y scaled to [−1, 1]). */
  surfaces: number[][];
}

/**
 * `scratch`: working arrays to take the residual planes from (see scratch.ts), for a caller that reads them within the
 * same synchronous call; by default new arrays.
 */
export function flattenBackground(planes: Float32Array[], width: number, height: number, scratch?: Scratch): Flattened {
  const cell = Math.max(4, Math.round(Math.max(width, height) / 10));
  const cx = Math.ceil(width / cell);
  const cy = Math.ceil(height / cell);
  const sx = 2 / Math.max(1, width - 1);
  const sy = 2 / Math.max(1, height - 1);
  const residual: Float32Array[] = [];
  const surfaces: number[][] = [];
  const cellValues = new Float32Array(cell * cell);
  for (let c = 0; c < planes.length; c++) {
    const plane = planes[c];
    const design: number[][] = [];
    const values: number[] = [];
    for (let Y = 0; Y < cy; Y++) {
      for (let X = 0; X < cx; X++) {
        const x1 = Math.min(width, (X + 1) * cell);
        const y1 = Math.min(height, (Y + 1) * cell);
        // Every second pixel each way in cells of 16 px or more: the percentile needs no more.
        const st = cell >= 16 ? 2 : 1;
        const n = gatherCell(plane, width, X * cell, x1, Y * cell, y1, st, cellValues);
        if (n < 4) continue;
        const v = selectInPlace(cellValues, n, Math.floor(0.2 * (n - 1)));
        const u = ((X * cell + x1 - 1) / 2) * sx - 1;
        const w = ((Y * cell + y1 - 1) / 2) * sy - 1;
        design.push([1, u, w, u * u, u * w, w * w]);
        values.push(v);
      }
    }
    const coef = robustSurface(design, values);
    surfaces.push(coef);
    const out = takeOrNew(scratch, RESIDUAL_SLOTS[c] ?? `flatten.residual${c}`, Float32Array, width * height, false); // every pixel written
    residual.push(subtractSurface(plane, width, height, coef, out));
  }
  return { residual, surfaces };
}

/** Copies the pixels (x, y), x = x0, x0 + st, … < x1, y likewise, into scratch; returns how many. */
function gatherCell(plane: Float32Array, width: number, x0: number, x1: number, y0: number, y1: number, st: number, scratch: Float32Array): number {
  let n = 0;
  for (let y = y0; y < y1; y += st) for (let x = x0; x < x1; x += st) scratch[n++] = plane[y * width + x];
  return n;
}

const RESIDUAL_SLOTS = ['flatten.residual0', 'flatten.residual1', 'flatten.residual2'];

function subtractSurface(plane: Float32Array, width: number, height: number, coef: number[], out: Float32Array): Float32Array {
  const sx = 2 / Math.max(1, width - 1);
  const sy = 2 / Math.max(1, height - 1);
  const c0 = +coef[0], c1 = +coef[1], c2 = +coef[2], c3 = +coef[3], c4 = +coef[4], c5 = +coef[5];
  for (let y = 0; y < height; y++) {
    const w = y * sy - 1;
    const rowConst = c0 + c2 * w + c5 * w * w;
    const rowLin = c1 + c4 * w;
    for (let x = 0, k = y * width; x < width; x++, k++) {
      const u = x * sx - 1;
      out[k] = plane[k] - (rowConst + (rowLin + c3 * u) * u);
    }
  }
  return out;
}

function robustSurface(design: number[][], values: number[]): number[] {
  const n = values.length;
  const k = n >= 12 ? 6 : n >= 3 ? 3 : 1;
  const rows = design.map((r) => r.slice(0, k));
  let weights = new Array<number>(n).fill(1);
  let coef = new Array<number>(k).fill(0);
  coef[0] = median(values);
  for (let it = 0; it < 8; it++) {
    const fit = linearLeastSquares(rows, values, { weights });
    if (!fit) break;
    coef = fit.params;
    const res = fit.residuals;
    const scale = 1.4826 * median(res.map(Math.abs)) + 1e-12;
    // Tukey's biweight with c = 4.685 (95 % efficiency at the normal); cells far above the surface (the band) get 0.
    weights = res.map((r) => {
      const u = r / (4.685 * scale);
      return Math.abs(u) < 1 ? (1 - u * u) ** 2 : 0;
    });
    if (weights.filter((w) => w > 0).length < k + 1) break;
  }
  const out = [0, 0, 0, 0, 0, 0];
  for (let j = 0; j < k; j++) out[j] = coef[j];
  return out;
}

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length === 0 ? 0 : s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

/**
 * 3 × 3 box mean (edges: the mean of what the window holds). Separable, both passes row by row (the vertical pass
 * reads three rows side by side instead of walking down columns); the sums are added in the same order as a window
 * loop would add them, so the values are the same to the bit. `scratch` as for flattenBackground.
 */
export function boxMean3(plane: Float32Array, width: number, height: number, scratch?: Scratch): Float32Array {
  // Both passes write every pixel.
  const tmp = takeOrNew(scratch, 'boxMean3.tmp', Float32Array, width * height, false);
  const out = takeOrNew(scratch, 'boxMean3.out', Float32Array, width * height, false);
  for (let y = 0; y < height; y++) boxRow3(plane, tmp, y * width, width);
  for (let y = 0; y < height; y++) boxColumns3(tmp, out, y, width, height);
  return out;
}

function boxRow3(src: Float32Array, dst: Float32Array, r: number, width: number): void {
  if (width < 3) {
    for (let x = 0; x < width; x++) dst[r + x] = width === 1 ? src[r] : (src[r] + src[r + 1]) / 2;
    return;
  }
  dst[r] = (src[r] + src[r + 1]) / 2;
  for (let x = 1; x < width - 1; x++) dst[r + x] = (src[r + x - 1] + src[r + x] + src[r + x + 1]) / 3;
  dst[r + width - 1] = (src[r + width - 2] + src[r + width - 1]) / 2;
}

function boxColumns3(src: Float32Array, dst: Float32Array, y: number, width: number, height: number): void {
  const a = y > 0 ? y - 1 : 0;
  const b = y < height - 1 ? y + 1 : height - 1;
  const r = y * width;
  const ra = a * width;
  const rb = b * width;
  if (b - a === 2) {
    for (let x = 0; x < width; x++) dst[r + x] = (src[ra + x] + src[r + x] + src[rb + x]) / 3;
  } else if (b - a === 1) {
    for (let x = 0; x < width; x++) dst[r + x] = (src[ra + x] + src[rb + x]) / 2;
  } else {
    for (let x = 0; x < width; x++) dst[r + x] = src[r + x];
  }
}

/** Robust σ of a mostly-empty image: 1.4826 · MAD about the median, from a subsample of at most ~60 000 pixels (`scratch` for it). */
export function imageSigma(plane: Float32Array, scratch?: Scratch): { median: number; sigma: number } {
  const stride = Math.max(1, Math.floor(plane.length / 60000));
  const n = Math.floor((plane.length - 1) / stride) + 1;
  const s = takeOrNew(scratch, 'imageSigma.sample', Float32Array, n, false); // all n written below
  for (let i = 0, k = 0; i < n; i++, k += stride) s[i] = plane[k];
  const med = selectInPlace(s, n, n >> 1);
  absoluteDeviations(s, n, med);
  return { median: med, sigma: 1.4826 * selectInPlace(s, n, n >> 1) };
}

/** s[i] = |s[i] − centre| (a loop of its own: imageSigma runs once per photo; see extract.ts for why). */
function absoluteDeviations(s: Float32Array, n: number, centre: number): void {
  for (let i = 0; i < n; i++) s[i] = Math.abs(s[i] - centre);
}

/**
 * Detail layer: the image minus its box mean over (2r + 1)², edges by the mean of what the window holds. Smooth glare
 * and halos vanish from it; line images, the band's edges and compact spots stay. O(pixels) by running sums: a prefix
 * sum along each row, then prefix sums down all columns at once, kept row by row (a walk down each column in turn
 * would touch a new cache line at every step). `scratch` as for flattenBackground.
 */
export function detailLayer(plane: Float32Array, width: number, height: number, r: number, scratch?: Scratch): Float32Array {
  // tmp and out get every pixel written; columnPrefix every row but the first, which must be 0.
  const tmp = takeOrNew(scratch, 'detailLayer.tmp', Float32Array, width * height, false);
  const prefix = new Float64Array(width + 1);
  for (let y = 0; y < height; y++) rowWindowMean(plane, tmp, prefix, y * width, width, r);
  // columnPrefix[(y + 1)·width + x] = Σ tmp over rows 0…y of column x.
  const columnPrefix = takeOrNew(scratch, 'detailLayer.columnPrefix', Float64Array, (height + 1) * width, false);
  columnPrefix.fill(0, 0, width);
  for (let y = 0; y < height; y++) addRow(columnPrefix, tmp, y, width);
  const out = takeOrNew(scratch, 'detailLayer.out', Float32Array, width * height, false);
  for (let y = 0; y < height; y++) subtractColumnWindowMean(plane, columnPrefix, out, y, width, height, r);
  return out;
}

function rowWindowMean(plane: Float32Array, tmp: Float32Array, prefix: Float64Array, row: number, width: number, r: number): void {
  for (let x = 0; x < width; x++) prefix[x + 1] = prefix[x] + plane[row + x];
  for (let x = 0; x < width; x++) {
    const a = Math.max(0, x - r);
    const b = Math.min(width, x + r + 1);
    tmp[row + x] = (prefix[b] - prefix[a]) / (b - a);
  }
}

function addRow(columnPrefix: Float64Array, tmp: Float32Array, y: number, width: number): void {
  const from = y * width;
  const to = from + width;
  for (let x = 0; x < width; x++) columnPrefix[to + x] = columnPrefix[from + x] + tmp[from + x];
}

function subtractColumnWindowMean(
  plane: Float32Array,
  columnPrefix: Float64Array,
  out: Float32Array,
  y: number,
  width: number,
  height: number,
  r: number,
): void {
  const a = Math.max(0, y - r);
  const b = Math.min(height, y + r + 1);
  const pa = a * width;
  const pb = b * width;
  const n = b - a;
  const row = y * width;
  for (let x = 0; x < width; x++) out[row + x] = plane[row + x] - (columnPrefix[pb + x] - columnPrefix[pa + x]) / n;
}
