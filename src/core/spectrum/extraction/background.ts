/**
 * Background under the band from the off-band rows on both sides (Horne 1986, PASP 98, 609, step 2: a low-order fit
 * across the dispersion to pixels clear of the object, with outliers rejected). Per column and side the level is the
 * mean of that side's rows after clipping at 4 σ (a star, a hot pixel or the wing of a neighbouring band is dropped),
 * smoothed along the band by a running mean; across the band the background is the straight line through the two
 * sides' levels (degree 1), so an ambient gradient in any direction is removed exactly.
 *
 * Layout: planes are column by column, `rows` samples per column (index i·rows + j).
 */
import { robustMeanSquare } from './noiseModel.js';

export interface ColumnBackground {
  /** Background at offset q of column i: base[i] + q · slope[i]. */
  base: Float64Array;
  slope: Float64Array;
  /** Which sides had rows inside the image. */
  negative: boolean;
  positive: boolean;
}

/** Rows [lowFrom, lowTo] and [highFrom, highTo] (inclusive; empty when from > to) are the two sides. */
export function columnBackground(
  plane: Float32Array,
  valid: Uint8Array,
  columns: number,
  rows: number,
  offsetPx: Float64Array,
  low: [number, number],
  high: [number, number],
  smoothSamples: number,
): ColumnBackground {
  const lo = sideLevels(plane, valid, columns, rows, low[0], low[1], smoothSamples);
  const hi = sideLevels(plane, valid, columns, rows, high[0], high[1], smoothSamples);
  const qLo = meanOffset(offsetPx, low);
  const qHi = meanOffset(offsetPx, high);
  const base = new Float64Array(columns);
  const slope = new Float64Array(columns);
  for (let i = 0; i < columns; i++) {
    const a = lo ? lo[i] : NaN;
    const b = hi ? hi[i] : NaN;
    if (a === a && b === b) {
      slope[i] = (b - a) / (qHi - qLo);
      base[i] = a - slope[i] * qLo;
    } else if (a === a) base[i] = a;
    else if (b === b) base[i] = b;
  }
  return { base, slope, negative: lo !== null, positive: hi !== null };
}

/** The mean of several backgrounds (the channel mean's). */
export function meanBackground(bgs: ColumnBackground[]): ColumnBackground {
  const n = bgs[0].base.length;
  const base = new Float64Array(n);
  const slope = new Float64Array(n);
  for (const b of bgs) {
    for (let i = 0; i < n; i++) {
      base[i] += b.base[i] / bgs.length;
      slope[i] += b.slope[i] / bgs.length;
    }
  }
  return { base, slope, negative: bgs[0].negative, positive: bgs[0].positive };
}

export interface OffBandNoise {
  /** Robust variance of one off-band sample about the background (NaN without off-band rows). */
  variance: number;
  /** Correlation of the residuals of neighbouring rows, and of neighbouring columns. */
  rowCorrelation: number;
  columnCorrelation: number;
  /**
   * c = Var(Σ over a side's k rows) / (k · variance): how much the correlation between rows (bilinear resampling,
   * demosaicing, JPEG) inflates the variance of a sum across the band. Measured from the difference of the row sums of
   * columns two apart, B_i − B_{i+2} (the background cancels in it; columns two apart share no pixel through the
   * bilinear weights): Var = 2 Var(B); scaled from a side's k rows to long sums assuming nearest-neighbour correlation.
   */
  sumFactor: number;
  /** Correlation of such row sums between neighbouring columns (for the noise of a background smoothed along the band). */
  sumColumnCorrelation: number;
}

/** Robust mean square of (x_i − x_{i+lag}) about its mean, over pairs where both are complete; null below 12 pairs. */
function diffSquares(x: Float64Array, ok: Uint8Array, lag: number): number | null {
  const d = new Float64Array(x.length);
  let m = 0;
  let mean = 0;
  for (let i = 0; i + lag < x.length; i++) {
    if (!ok[i] || !ok[i + lag]) continue;
    d[m] = x[i] - x[i + lag];
    mean += d[m++];
  }
  if (m < 12) return null;
  mean /= m;
  for (let i = 0; i < m; i++) d[i] = (d[i] - mean) ** 2;
  return robustMeanSquare(d, m);
}

/**
 * Noise of the off-band samples of `plane` about `bg`, from a subsample of columns (at most about `maxSamples` samples
 * for the per-sample statistics).
 */
export function offBandNoise(
  plane: Float32Array,
  bg: { base: Float64Array; slope: Float64Array },
  valid: Uint8Array,
  columns: number,
  rows: number,
  offsetPx: Float64Array,
  low: [number, number],
  high: [number, number],
  maxSamples = 20000,
): OffBandNoise {
  const perColumn = Math.max(0, low[1] - low[0] + 1) + Math.max(0, high[1] - high[0] + 1);
  if (perColumn === 0) return { variance: NaN, rowCorrelation: 0, columnCorrelation: 0, sumFactor: 1, sumColumnCorrelation: 0 };
  const stride = Math.max(1, Math.ceil((columns * perColumn) / maxSamples));
  const squares = new Float64Array(Math.ceil(columns / stride) * perColumn);
  // [n, rowNum, rowDen, colNum, colDen], accumulated side by side, column by column.
  const acc5 = new Float64Array(5);
  for (let i = 0; i < columns; i += stride) {
    for (const [from, to] of [low, high]) sideResiduals(plane, bg.base, bg.slope, valid, offsetPx, columns, rows, i, from, to, squares, acc5);
  }
  const n = acc5[0];
  const rowNum = acc5[1], rowDen = acc5[2], colNum = acc5[3], colDen = acc5[4];
  const variance = n > 0 ? robustMeanSquare(squares, n) : NaN;
  const rowCorrelation = rowDen > 0 ? rowNum / rowDen : 0;
  // Row sums of each complete side, then differences two columns apart (mean removed: a gradient along the band).
  let sumFactor = 1 + 2 * Math.max(0, rowCorrelation);
  let acc = 0;
  let acc1 = 0;
  let accRows = 0;
  let sides = 0;
  // Row sums of the columns in groups (i, i+1, i+2), one group in every `every` columns (the statistic needs a few
  // hundred groups, not all of them).
  const groups = Math.floor(columns / 3);
  const every = Math.max(1, Math.floor(groups / 300)) * 3;
  for (const [from, to] of [low, high]) {
    const k = to - from + 1;
    if (k < 2 || columns < 24) continue;
    const sums = new Float64Array(columns);
    const ok = new Uint8Array(columns);
    groupRowSums(plane, valid, columns, rows, from, to, every, sums, ok);
    const lag2 = diffSquares(sums, ok, 2);
    const lag1 = diffSquares(sums, ok, 1);
    if (lag2 === null || lag1 === null) continue;
    acc += lag2 / 2;
    acc1 += lag1 / 2;
    accRows += k;
    sides++;
  }
  let sumCorrelation = colDen > 0 ? colNum / colDen : 0;
  if (sides > 0 && variance > 0) {
    // From k rows to the longer sums across the band: c − 1 grows as 1 − 1/k for a nearest-neighbour correlation.
    const k = accRows / sides;
    const ck = acc / (accRows * variance);
    sumFactor = 1 + ((ck - 1) / Math.max(0.5, 1 - 1 / k)) * (k > 1 ? 1 : 0);
    // Var(B_i − B_{i+1}) = 2 Var(B)(1 − ρ_B).
    sumCorrelation = acc > 0 ? 1 - acc1 / acc : sumCorrelation;
  }
  return {
    variance,
    rowCorrelation,
    columnCorrelation: colDen > 0 ? colNum / colDen : 0,
    sumFactor: Math.max(0.5, Math.min(10, sumFactor)),
    sumColumnCorrelation: Math.max(-0.45, Math.min(0.9, sumCorrelation)),
  };
}

// The loops of offBandNoise and sideLevels are functions of their own: both run a few times per photo, and a
// function holding several long loops is compiled on its first loop and deoptimised on reaching the next (extract.ts).

/**
 * The residuals of one side (rows from…to) of column i about the background: their squares appended to `squares`, and
 * acc = [count, Σ r·r_prev, Σ (r² + r_prev²)/2 (neighbouring rows), Σ r·r_next, Σ (r² + r_next²)/2 (next column)].
 */
function sideResiduals(
  plane: Float32Array,
  base: Float64Array,
  slope: Float64Array,
  valid: Uint8Array,
  offsetPx: Float64Array,
  columns: number,
  rows: number,
  i: number,
  from: number,
  to: number,
  squares: Float64Array,
  acc: Float64Array,
): void {
  const next = i + 1 < columns;
  let n = acc[0];
  let rowNum = acc[1], rowDen = acc[2], colNum = acc[3], colDen = acc[4];
  let prev = NaN;
  for (let j = from, k = i * rows + from; j <= to; j++, k++) {
    if (!valid[k]) {
      prev = NaN;
      continue;
    }
    const r = plane[k] - (base[i] + offsetPx[j] * slope[i]);
    squares[n++] = r * r;
    if (prev === prev) {
      rowNum += r * prev;
      rowDen += 0.5 * (r * r + prev * prev);
    }
    prev = r;
    if (next && valid[k + rows]) {
      const r2 = plane[k + rows] - (base[i + 1] + offsetPx[j] * slope[i + 1]);
      colNum += r * r2;
      colDen += 0.5 * (r * r + r2 * r2);
    }
  }
  acc[0] = n;
  acc[1] = rowNum;
  acc[2] = rowDen;
  acc[3] = colNum;
  acc[4] = colDen;
}

/** Row sums over rows from…to of the columns in groups (g, g+1, g+2), g = 0, every, 2·every, …; ok = all rows inside. */
function groupRowSums(
  plane: Float32Array,
  valid: Uint8Array,
  columns: number,
  rows: number,
  from: number,
  to: number,
  every: number,
  sums: Float64Array,
  ok: Uint8Array,
): void {
  for (let g = 0; g + 2 < columns; g += every) {
    for (let i = g; i < g + 3; i++) {
      let b = 0;
      let all = 1;
      for (let kk = i * rows + from, e = i * rows + to; kk <= e; kk++) {
        if (!valid[kk]) {
          all = 0;
          break;
        }
        b += plane[kk];
      }
      sums[i] = b;
      ok[i] = all;
    }
  }
}

function meanOffset(offsetPx: Float64Array, [from, to]: [number, number]): number {
  let s = 0;
  for (let j = from; j <= to; j++) s += offsetPx[j];
  return to >= from ? s / (to - from + 1) : 0;
}

/** Smoothed level of one side per column (NaN where a window holds no sample), or null when the side is empty. */
function sideLevels(
  plane: Float32Array,
  valid: Uint8Array,
  columns: number,
  rows: number,
  from: number,
  to: number,
  smoothSamples: number,
): Float64Array | null {
  if (from > to) return null;
  const mean = new Float64Array(columns);
  const has = new Uint8Array(columns);
  // Pass 1: plain means, and the scatter about them (for the clip).
  const scatter = plainMeans(plane, valid, columns, rows, from, to, mean, has);
  const sq = scatter[0];
  const nsq = scatter[1];
  if (nsq === 0) return null;
  // Pass 2: the mean of the samples within 4 σ of the plain mean (σ from the median column's scatter would be more
  // robust; the overall rms is inflated by outliers only, which makes the clip looser, not wrong).
  const clip = 4 * Math.sqrt(sq / nsq) + 1e-30;
  clippedMeans(plane, valid, columns, rows, from, to, clip, mean, has);
  return runningMean(mean, has, smoothSamples);
}

/** Per column the mean of rows from…to inside the image (has = 1 where any), and [Σ (x − mean)², count] over all. */
function plainMeans(
  plane: Float32Array,
  valid: Uint8Array,
  columns: number,
  rows: number,
  from: number,
  to: number,
  mean: Float64Array,
  has: Uint8Array,
): [number, number] {
  let sq = 0;
  let nsq = 0;
  for (let i = 0; i < columns; i++) {
    let s = 0;
    let n = 0;
    for (let k = i * rows + from, e = i * rows + to; k <= e; k++) {
      if (valid[k]) {
        s += plane[k];
        n++;
      }
    }
    if (n === 0) continue;
    const m = s / n;
    mean[i] = m;
    has[i] = 1;
    for (let k = i * rows + from, e = i * rows + to; k <= e; k++) {
      if (valid[k]) {
        const d = plane[k] - m;
        sq += d * d;
        nsq++;
      }
    }
  }
  return [sq, nsq];
}

/** mean[i] ← the mean of the samples of rows from…to within `clip` of mean[i] (kept where none is). */
function clippedMeans(
  plane: Float32Array,
  valid: Uint8Array,
  columns: number,
  rows: number,
  from: number,
  to: number,
  clip: number,
  mean: Float64Array,
  has: Uint8Array,
): void {
  for (let i = 0; i < columns; i++) {
    if (!has[i]) continue;
    const m = mean[i];
    let s = 0;
    let n = 0;
    for (let k = i * rows + from, e = i * rows + to; k <= e; k++) {
      if (valid[k] && Math.abs(plane[k] - m) <= clip) {
        s += plane[k];
        n++;
      }
    }
    if (n > 0) mean[i] = s / n;
  }
}

/** Running mean over `window` samples (odd), skipping samples without data; NaN where a window holds none. */
export function runningMean(values: Float64Array, has: Uint8Array, window: number): Float64Array {
  const n = values.length;
  const half = Math.max(0, Math.floor(window / 2));
  const sum = new Float64Array(n + 1);
  const count = new Float64Array(n + 1);
  for (let i = 0; i < n; i++) {
    sum[i + 1] = sum[i] + (has[i] ? values[i] : 0);
    count[i + 1] = count[i] + has[i];
  }
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const a = Math.max(0, i - half);
    const b = Math.min(n, i + half + 1);
    const c = count[b] - count[a];
    out[i] = c > 0 ? (sum[b] - sum[a]) / c : NaN;
  }
  return out;
}
