/**
 * Refinement of the band's axis and slant on the band's own samples.
 *
 * Axis: every column of the band (one line image) has a centroid across the band, c(p) = Σ q D'/Σ D' over the object
 * rows, D' the data less the background from the off-band rows. On the true centre line c is constant; a tilt δ of
 * the assumed axis makes it grow as tan δ · p. A weighted straight-line fit of c(p) (weights ∝ flux², the inverse
 * variance of a centroid in background-limited noise; columns off by > 3 rms dropped) gives the new centre line
 * through the fitted centroids at both ends. This is the per-column-centroid trace fit of long-slit spectroscopy.
 *
 * Slant: the band is cut into slabs across; each slab's spectrum (high-passed) is cross-correlated with the sum of the
 * other slabs, and the shifts d_k, which grow as −(tan s_true − tan s) · (q_k − q_ref) with the slab's offset from the
 * reference's, give the slant.
 */
import { linearLeastSquares } from '../../fit/index.js';
import type { BandGeometry, LinearImage } from '../../types.js';
import { columnBackground } from '../extraction/background.js';
import { neighbourSigma } from '../extraction/profile.js';
import { type SampledBand, sampleBand } from '../sampleBand.js';
import { type Scratch, takeOrNew } from '../scratch.js';
import { type Ambient, subtractAmbient } from './ambient.js';
import { bandFrame } from './frame.js';

const DEG = Math.PI / 180;

export interface RefineReport {
  iterations: number;
  /** Standard uncertainty of the last axis fit (deg), from the fit's covariance. */
  angleUncertaintyDeg: number;
  /** Standard uncertainty of the last slant fit (deg), or null when the slant could not be measured. */
  slantUncertaintyDeg: number | null;
  /** Columns with enough light for the axis fit. */
  columnsUsed: number;
  slantMeasured: boolean;
}

export interface RefineOptions {
  iterations: number;
  /** Measure the slant too. */
  slant: boolean;
  /** Ambient light to subtract before the off-band background (full-resolution refinement). */
  ambient?: Ambient;
  /** Working arrays for the samples (see scratch.ts); nothing taken from it outlives the call. */
  scratch?: Scratch;
}

export function refineBand(image: LinearImage, start: BandGeometry, options: RefineOptions): { band: BandGeometry; report: RefineReport } {
  let band = { ...start, center: { ...start.center } };
  let buffer: SampledBand | undefined;
  const report: RefineReport = { iterations: 0, angleUncertaintyDeg: NaN, slantUncertaintyDeg: null, columnsUsed: 0, slantMeasured: false };
  for (let it = 0; it < options.iterations; it++) {
    report.iterations++;
    // One sampling per iteration: the slant is measured in the same frame as the axis, and both corrections are
    // applied together (the centroid fit does not depend on the slant to first order, nor the slab shifts on the axis).
    const s = bandSamples(image, band, options.ambient, buffer, options.scratch);
    if (!s) break;
    buffer = s.sampled;
    const slant = options.slant ? fitSlant(s, band) : null;
    const axis = fitAxis(s, band);
    let changed = 0;
    if (axis) {
      report.angleUncertaintyDeg = axis.angleUncertaintyDeg;
      report.columnsUsed = axis.columns;
      changed = Math.abs(axis.band.angleDeg - band.angleDeg);
    }
    if (slant) {
      // Slant measured relative to the old axis; the axis turn moves the line images' reference by −turn.
      const turn = axis ? axis.band.angleDeg - band.angleDeg : 0;
      const slantDeg = slant.slantDeg - turn;
      changed = Math.max(changed, Math.abs(slant.slantDeg - band.slantDeg));
      band = { ...(axis ? axis.band : band), slantDeg };
      report.slantUncertaintyDeg = slant.uncertaintyDeg;
      report.slantMeasured = true;
    } else if (axis) {
      band = axis.band;
    }
    if (changed < 0.002) break;
  }
  return { band, report };
}

interface BandSamples {
  columns: number;
  rows: number;
  positionPx: Float64Array;
  offsetPx: Float64Array;
  /** Background-subtracted object rows, column by column. */
  data: Float32Array;
  /** 1 where every object row of the column lies inside the image. */
  complete: Uint8Array;
  /** The raw samples (reused as the next iteration's buffer). */
  sampled: SampledBand;
  objRows: number;
  objOffsetPx: Float64Array;
  stepPx: number;
}

/** Samples the band (object rows ± margin, off-band rows on both sides) and subtracts the background. */
function bandSamples(
  image: LinearImage,
  band: BandGeometry,
  ambient: Ambient | undefined,
  reuse: SampledBand | undefined,
  scratch: Scratch | undefined,
): BandSamples | null {
  const H = band.heightPx;
  const margin = Math.min(30, Math.max(3, 0.2 * H));
  const gap = 2;
  const bgWidth = Math.min(25, Math.max(5, 0.25 * H));
  const objHalf = H / 2 + margin;
  // Rows every H/60 px: the centroid and the slab sums need the band's shape across, not every pixel row.
  const rowStepPx = Math.max(1, H / 60);
  const stepPx = Math.max(1, band.lengthPx / 3000);
  const s = sampleBand(image, band, { halfWidthPx: objHalf + gap + bgWidth, rowStepPx, stepPx, combine: true, flagSaturated: false, out: reuse, scratch });
  if (ambient) subtractAmbient(s, band, ambient);
  const R = s.rows;
  const N = s.columns;
  if (N < 3) return null;
  const q = s.offsetPx;
  const low: [number, number] = [R, -1];
  const high: [number, number] = [R, -1];
  let j0 = -1;
  let j1 = -1;
  for (let j = 0; j < R; j++) {
    const a = Math.abs(q[j]);
    if (a <= objHalf + 1e-9) {
      if (j0 < 0) j0 = j;
      j1 = j;
    } else if (a >= objHalf + gap - 1e-9) {
      const side = q[j] < 0 ? low : high;
      side[0] = Math.min(side[0], j);
      side[1] = Math.max(side[1], j);
    }
  }
  const bg = columnBackground(s.planes[0], s.valid, N, R, q, low, high, 9);
  const M = j1 - j0 + 1;
  const data = takeOrNew(scratch, 'refine.data', Float32Array, N * M);
  const complete = new Uint8Array(N);
  objectRowsLessBackground(s.planes[0], s.valid, bg.base, bg.slope, q, N, R, j0, M, H / 2 + 3, data, complete);
  return { columns: N, rows: M, positionPx: s.positionPx, offsetPx: q, data, complete, objRows: M, objOffsetPx: q.slice(j0, j1 + 1), stepPx, sampled: s };
}

/** The per-column centroid fit; returns the band turned onto the fitted centre line (line images kept in place). */
function fitAxis(s: BandSamples, band: BandGeometry): { band: BandGeometry; angleUncertaintyDeg: number; columns: number } | null {
  const { columns: N, rows: M, data, objOffsetPx: q, positionPx } = s;
  const flux = new Float64Array(N);
  const centroid = new Float64Array(N);
  columnCentroids(data, q, N, M, flux, centroid);
  const sigma = neighbourSigma(flux);
  let peak = 0;
  for (let i = 0; i < N; i++) peak = Math.max(peak, flux[i]);
  const cut = Math.max(5 * sigma, 0.02 * peak);
  // Columns cut by the image edge have biased centroids: use whole columns when there are enough.
  let use: number[] = [];
  for (let i = 0; i < N; i++) if (flux[i] > cut && Math.abs(centroid[i]) < band.heightPx && s.complete[i]) use.push(i);
  if (use.length < 8) {
    use = [];
    for (let i = 0; i < N; i++) if (flux[i] > cut && Math.abs(centroid[i]) < band.heightPx) use.push(i);
  }
  if (use.length < 3) return null;
  // The columns must spread along the band: one line image alone fixes no axis (its centroids would follow its slant).
  const spread = positionPx[use[use.length - 1]] - positionPx[use[0]];
  if (spread < Math.max(30, 0.5 * band.heightPx)) return null;
  const pMid = 0.5 * (positionPx[0] + positionPx[N - 1]);
  let fit = null;
  for (let pass = 0; pass < 3; pass++) {
    fit = linearLeastSquares(
      use.map((i) => [1, positionPx[i] - pMid]),
      use.map((i) => centroid[i]),
      { weights: use.map((i) => flux[i] * flux[i]) },
    );
    if (!fit) return null;
    let sw = 0;
    let swr = 0;
    use.forEach((i, n) => {
      sw += flux[i] * flux[i];
      swr += flux[i] * flux[i] * fit!.residuals[n] ** 2;
    });
    const rms = Math.sqrt(swr / sw);
    const keep = use.filter((_, n) => Math.abs(fit!.residuals[n]) <= 3 * rms + 1e-9);
    if (keep.length === use.length || keep.length < 3) break;
    use = keep;
  }
  if (!fit) return null;
  const [alpha, beta] = fit.params;
  const f = bandFrame(band);
  const pA = positionPx[0];
  const pB = positionPx[N - 1];
  const qA = alpha + beta * (pA - pMid);
  const qB = alpha + beta * (pB - pMid);
  const ax = f.startX + pA * f.ux + qA * f.vx;
  const ay = f.startY + pA * f.uy + qA * f.vy;
  const bx = f.startX + pB * f.ux + qB * f.vx;
  const by = f.startY + pB * f.uy + qB * f.vy;
  const angleDeg = Math.atan2(by - ay, bx - ax) / DEG;
  let turn = angleDeg - band.angleDeg;
  while (turn > 180) turn -= 360;
  while (turn <= -180) turn += 360;
  if (Math.abs(turn) > 45) return null;
  // The centre moves onto the fitted line at the band's middle; the line images keep their direction in the image.
  const mid = 0.5 * band.lengthPx;
  const qMid = alpha + beta * (mid - pMid);
  const cx = f.startX + mid * f.ux + qMid * f.vx;
  const cy = f.startY + mid * f.uy + qMid * f.vy;
  // Centre point of the line image at the middle, re-expressed on the new axis: project onto the new centre line.
  const nux = Math.cos(angleDeg * DEG);
  const nuy = Math.sin(angleDeg * DEG);
  const along = (cx - ax) * nux + (cy - ay) * nuy;
  const center = { x: ax + along * nux, y: ay + along * nuy };
  const slantDeg = band.slantDeg - turn;
  const sdSlope = fit.uncertainties[1];
  return {
    band: { ...band, angleDeg: band.angleDeg + turn, slantDeg, center },
    angleUncertaintyDeg: Math.atan(Number.isFinite(sdSlope) ? sdSlope : 0) / DEG,
    columns: use.length,
  };
}

/** Slab cross-correlation slant fit; null when the band has no sharp features to correlate. */
function fitSlant(s: BandSamples, band: BandGeometry): { slantDeg: number; uncertaintyDeg: number } | null {
  const { columns: N, rows: M, data, objOffsetPx: q, stepPx } = s;
  // Core rows only (|q| ≤ 0.45 H), cut into K slabs of equal height.
  const core: number[] = [];
  for (let j = 0; j < M; j++) if (Math.abs(q[j]) <= 0.45 * band.heightPx) core.push(j);
  if (core.length < 4) return null;
  // At least three slabs when there are rows enough, so the fit of shift against offset has a residual.
  const K = core.length >= 9 ? Math.min(6, Math.max(3, Math.floor(core.length / 5))) : 2;
  const slabs: Float64Array[] = [];
  const slabQ: number[] = [];
  for (let k = 0; k < K; k++) {
    const a = Math.floor((k * core.length) / K);
    const b = Math.floor(((k + 1) * core.length) / K);
    const prof = new Float64Array(N);
    let qs = 0;
    for (let t = a; t < b; t++) {
      const j = core[t];
      qs += q[j];
      addRow(prof, data, N, M, j);
    }
    slabs.push(highPass(prof, Math.max(3, Math.round(8 / stepPx))));
    slabQ.push(qs / (b - a));
  }
  const all = new Float64Array(N);
  for (const sl of slabs) for (let i = 0; i < N; i++) all[i] += sl[i];
  const shifts: number[] = [];
  const offs: number[] = [];
  const weights: number[] = [];
  // A sharp feature must stand out of the noise of the high-passed spectrum by 10 σ (a continuum's noise alone, which
  // neighbouring slabs share through the resampling, must not count).
  let top = 0;
  for (let i = 0; i < N; i++) top = Math.max(top, Math.abs(all[i]));
  if (!(top > 10 * neighbourSigma(all))) return null;
  const total = new Float64Array(N);
  for (let k = 0; k < K; k++) {
    const sl = slabs[k];
    // Reference: the other slabs (a slab correlated with itself would pull the shift towards 0).
    for (let i = 0; i < N; i++) total[i] = all[i] - sl[i];
    const qRef = (slabQ.reduce((a, b) => a + b, 0) - slabQ[k]) / (K - 1);
    let ss = 0;
    let tt = 0;
    for (let i = 0; i < N; i++) {
      ss += sl[i] * sl[i];
      tt += total[i] * total[i];
    }
    if (!(tt > 0) || !(ss > 0)) continue;
    const dq = slabQ[k] - qRef;
    const T = Math.ceil((Math.abs(dq) * Math.tan(12 * DEG)) / stepPx) + 2;
    const corr = new Float64Array(2 * T + 1);
    for (let tau = -T; tau <= T; tau++) corr[tau + T] = lagProduct(sl, total, N, tau);
    let m = 1;
    for (let t = 1; t < 2 * T; t++) if (corr[t] > corr[m]) m = t;
    const peak = corr[m] / Math.sqrt(ss * tt);
    if (!(peak >= 0.3) || m === 0 || m === 2 * T) continue;
    const a = corr[m - 1];
    const b = corr[m];
    const c = corr[m + 1];
    const den = a - 2 * b + c;
    const frac = den < 0 ? (0.5 * (a - c)) / den : 0;
    shifts.push((m - T + frac) * stepPx);
    offs.push(dq);
    weights.push(ss * peak * peak);
  }
  if (shifts.length < 2) return null;
  const fit = linearLeastSquares(offs.map((o) => [1, o]), shifts, { weights });
  if (!fit) return null;
  const beta = fit.params[1];
  const tanNew = Math.tan(band.slantDeg * DEG) - beta;
  const slantDeg = Math.atan(tanNew) / DEG;
  if (!(Math.abs(slantDeg) <= 20)) return null;
  const u = fit.uncertainties[1];
  const uncertaintyDeg = Number.isFinite(u) ? Math.atan(u) / DEG : NaN;
  if (uncertaintyDeg > 3) return null; // NaN (two slabs, no residual) is accepted
  return { slantDeg, uncertaintyDeg };
}

/** x minus its running mean over 2·half + 1 samples; 0 within `half` of the ends, where the window is cut short. */
function highPass(x: Float64Array, half: number): Float64Array {
  const n = x.length;
  const prefix = new Float64Array(n + 1);
  for (let i = 0; i < n; i++) prefix[i + 1] = prefix[i] + x[i];
  const out = new Float64Array(n);
  for (let i = half; i < n - half; i++) out[i] = x[i] - (prefix[i + half + 1] - prefix[i - half]) / (2 * half + 1);
  return out;
}

// The loops below are functions of their own: refineBand runs a few times per photo, and a function that holds several
// long loops is compiled while its first loop runs and thrown away on reaching the next, not yet run (see extract.ts).

/** D' = D − (base + q·slope) of the object rows j0 … j0 + M − 1, column by column; complete[i] = 0 where a core row is outside. */
function objectRowsLessBackground(
  plane: Float32Array,
  valid: Uint8Array,
  base: Float64Array,
  slope: Float64Array,
  q: Float64Array,
  N: number,
  R: number,
  j0: number,
  M: number,
  coreHalfPx: number,
  data: Float32Array,
  complete: Uint8Array,
): void {
  for (let i = 0; i < N; i++) {
    let all = 1;
    for (let j = 0; j < M; j++) {
      const ks = i * R + j0 + j;
      if (valid[ks]) data[i * M + j] = plane[ks] - (base[i] + q[j0 + j] * slope[i]);
      else if (Math.abs(q[j0 + j]) <= coreHalfPx) all = 0;
    }
    complete[i] = all;
  }
}

/** Flux Σ D' and centroid Σ q D' / Σ D' of every column (0 where the flux is 0). */
function columnCentroids(data: Float32Array, q: Float64Array, N: number, M: number, flux: Float64Array, centroid: Float64Array): void {
  for (let i = 0; i < N; i++) {
    let f = 0;
    let fq = 0;
    for (let j = 0, k = i * M; j < M; j++, k++) {
      f += data[k];
      fq += data[k] * q[j];
    }
    flux[i] = f;
    centroid[i] = f !== 0 ? fq / f : 0;
  }
}

/** prof[i] += data[i·M + j] for every column i. */
function addRow(prof: Float64Array, data: Float32Array, N: number, M: number, j: number): void {
  for (let i = 0; i < N; i++) prof[i] += data[i * M + j];
}

/** Σ_i a[i] · b[i − tau] over the overlap. */
function lagProduct(a: Float64Array, b: Float64Array, N: number, tau: number): number {
  let c = 0;
  for (let i = Math.max(0, tau); i < Math.min(N, N + tau); i++) c += a[i] * b[i - tau];
  return c;
}
