/**
 * The pixel variance model of optimal extraction (Horne 1986, PASP 98, 609, eq. for V):
 *   V = V0 + max(0, S + f·P) / Q,
 * V0 the read-noise variance and Q the gain (photo-electrons per unit of the image's scale; shot noise of a level L has
 * variance L/Q in those units). Both are measured from the photo when not given: pairs (model level, squared residual)
 * from the off-band rows and from the object rows after a fit are averaged in bins of level and a straight line
 * V(level) is fitted to the bin means, weighted by their counts and expected scatter. Squared residuals are
 * winsorised at 9 V (3 σ) so a star or a cosmic ray does not inflate the estimate; E[min(z², 9)] = 0.99495 for a normal
 * z (from the normal distribution's tail integrals), which is divided out.
 */

export interface NoiseModel {
  /** V0, read-noise variance (image units²). */
  readVariance: number;
  /** 1/Q, shot-noise variance per unit of level; 0 when no shot noise was measurable. */
  shotPerUnit: number;
}

/** E[min(z², 9)] for z ~ N(0, 1). */
const WINSOR_3SIGMA = 0.99495;
const BINS = 16;

/** Collects (level, squared residual) pairs; `add` is called once per pixel in the hot loop, so no allocation there. */
export class ResidualSample {
  readonly level: Float64Array;
  readonly square: Float64Array;
  count = 0;
  constructor(capacity: number) {
    this.level = new Float64Array(capacity);
    this.square = new Float64Array(capacity);
  }
  add(level: number, residual: number): void {
    if (this.count < this.level.length) {
      this.level[this.count] = level;
      this.square[this.count] = residual * residual;
      this.count++;
    }
  }
  reset(): void {
    this.count = 0;
  }
}

/** Robust mean square of a sample (winsorised at 3 σ, iterated), i.e. its variance about zero. */
export function robustMeanSquare(square: Float64Array, n: number): number {
  if (n === 0) return 0;
  let s = 0;
  for (let i = 0; i < n; i++) s += square[i];
  let v = s / n;
  for (let it = 0; it < 6 && v > 0; it++) {
    const cap = 9 * v;
    s = 0;
    for (let i = 0; i < n; i++) s += square[i] < cap ? square[i] : cap;
    v = s / n / WINSOR_3SIGMA;
  }
  return v;
}

/**
 * Fits V(level) = V0 + level/Q to the sample. With `fixedShot` (a known 1/Q) only V0 is fitted; with `fixedRead` only
 * 1/Q. Falls back to a constant variance when the levels do not spread enough to separate the two terms.
 */
export function fitNoiseModel(
  sample: ResidualSample,
  start: NoiseModel,
  fixed: { readVariance?: number; shotPerUnit?: number } = {},
): NoiseModel {
  const n = sample.count;
  if (n < 8) return { readVariance: fixed.readVariance ?? start.readVariance, shotPerUnit: fixed.shotPerUnit ?? start.shotPerUnit };
  const { level, square } = sample;
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < n; i++) {
    const l = level[i];
    if (l < lo) lo = l;
    if (l > hi) hi = l;
  }
  let model = { ...start };
  const cnt = new Float64Array(BINS);
  const sumL = new Float64Array(BINS);
  const sumS = new Float64Array(BINS);
  const width = hi > lo ? (hi - lo) / BINS : 1;
  for (let pass = 0; pass < 2; pass++) {
    cnt.fill(0);
    sumL.fill(0);
    sumS.fill(0);
    for (let i = 0; i < n; i++) {
      const l = level[i];
      const v = model.readVariance + Math.max(0, l) * model.shotPerUnit;
      const cap = 9 * v;
      let b = Math.floor((l - lo) / width);
      if (b >= BINS) b = BINS - 1;
      cnt[b]++;
      sumL[b] += l;
      sumS[b] += v > 0 && square[i] > cap ? cap : square[i];
    }
    // Weighted straight-line fit of bin mean square against bin mean level; weight = count / (2 V²) (variance of a
    // mean of n squared normal deviates).
    let sw = 0, sx = 0, sy = 0, sxx = 0, sxy = 0;
    for (let b = 0; b < BINS; b++) {
      if (cnt[b] < 3) continue;
      const x = Math.max(0, sumL[b] / cnt[b]);
      const y = sumS[b] / cnt[b] / WINSOR_3SIGMA;
      const v = Math.max(1e-30, model.readVariance + x * model.shotPerUnit);
      const w = cnt[b] / (2 * v * v);
      sw += w;
      sx += w * x;
      sy += w * y;
      sxx += w * x * x;
      sxy += w * x * y;
    }
    if (!(sw > 0)) break;
    let a: number;
    let s: number;
    if (fixed.shotPerUnit !== undefined) {
      s = fixed.shotPerUnit;
      a = (sy - s * sx) / sw;
    } else if (fixed.readVariance !== undefined) {
      a = fixed.readVariance;
      s = sxx > 0 ? (sxy - a * sx) / sxx : 0;
    } else {
      const det = sw * sxx - sx * sx;
      s = det > 1e-12 * sw * sxx ? (sw * sxy - sx * sy) / det : 0;
      if (!(s > 0)) s = 0;
      a = (sy - s * sx) / sw;
      if (!(a > 0)) {
        // The line went through a non-positive intercept: keep the shot term, put V0 at its smallest credible value.
        a = Math.max(1e-30, 0.01 * (sy / sw));
      }
    }
    model = { readVariance: Math.max(1e-30, a), shotPerUnit: Math.max(0, s) };
  }
  return model;
}
