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
 *
 * Uncertainties. Neither fit's covariance alone is honest: the centroids of neighbouring columns share pixels through
 * the resampling and carry the same interpolation and JPEG-block errors, and the few bright lines that dominate the
 * weights make the residual scatter a poor guide; the slant fit has only K − 2 = 1…4 degrees of freedom. (That each
 * reference holds the other slabs is no problem of its own: the shifts are then, near enough, an affine map of the
 * slabs' own positions, with the same slope and the same Birge-scaled error.) Each uncertainty is the larger of the
 * fit's Birge-scaled covariance (Birge 1932) and a delete-a-group jackknife over stretches of the band (Quenouille
 * 1956, Tukey 1958; blocks for dependent data: Künsch 1989, Ann. Stat. 17, 1217; from memory), which repeats the whole
 * estimate without each stretch and so sees the line-to-line scatter and the correlated errors, with a floor for the
 * method's own sub-pixel systematics (measured on noise-free renders) in quadrature. The slant is measured against the
 * axis (slant = direction of the line images − axis normal), so its uncertainty adds the axis angle's in quadrature:
 * on rendered photos the axis error, passed on with the opposite sign, was most of the slant error. Coverage on
 * rendered photos: test/core/band/slantUncertainty.test.ts.
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
  /** Standard uncertainty of the last axis fit (deg): covariance, jackknife and floor as in the file comment. */
  angleUncertaintyDeg: number;
  /**
   * Standard uncertainty of the slant (deg): the line images' direction from the last slant fit and the axis angle of
   * the same iteration, in quadrature; null when the slant could not be measured, NaN when the axis uncertainty is not
   * known (no axis fit in the iteration that measured the slant and none given in the options).
   */
  slantUncertaintyDeg: number | null;
  /** Standard uncertainty of the line images' direction in the image (deg): the slant fit's part alone, or null. */
  lineDirectionUncertaintyDeg: number | null;
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
  /**
   * Standard uncertainty (deg) of the start band's axis angle, used for the slant's uncertainty when an iteration
   * measures the slant but cannot fit the axis. @default NaN (unknown)
   */
  startAngleUncertaintyDeg?: number;
}

export function refineBand(image: LinearImage, start: BandGeometry, options: RefineOptions): { band: BandGeometry; report: RefineReport } {
  let band = { ...start, center: { ...start.center } };
  let buffer: SampledBand | undefined;
  const report: RefineReport = {
    iterations: 0,
    angleUncertaintyDeg: NaN,
    slantUncertaintyDeg: null,
    lineDirectionUncertaintyDeg: null,
    columnsUsed: 0,
    slantMeasured: false,
  };
  // Uncertainty of the axis the samples are taken along (the slant is measured against it).
  let sampledAxisUncertaintyDeg = options.startAngleUncertaintyDeg ?? NaN;
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
      // slant = line direction − new axis: both errors count (the new axis's, or the sampled one's when it stays).
      const axisUncertaintyDeg = axis ? axis.angleUncertaintyDeg : sampledAxisUncertaintyDeg;
      report.lineDirectionUncertaintyDeg = slant.uncertaintyDeg;
      report.slantUncertaintyDeg = Math.hypot(slant.uncertaintyDeg, axisUncertaintyDeg);
      report.slantMeasured = true;
    } else if (axis) {
      band = axis.band;
    }
    if (axis) sampledAxisUncertaintyDeg = axis.angleUncertaintyDeg;
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
  let fitted = use;
  for (let pass = 0; pass < 3; pass++) {
    fitted = use;
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
  // The larger of the Birge-scaled covariance and a jackknife over stretches of AXIS_BLOCK_PX, with the floor of the
  // stretches' systematic centroid error in quadrature (see the file comment): on rendered photos the covariance alone
  // was 2–3 times too small.
  const sdSlope = fit.uncertainties[1];
  const blocks = blockSlopeErrors(
    fitted.map((i) => positionPx[i] - pMid),
    fitted.map((i) => centroid[i]),
    fitted.map((i) => flux[i] * flux[i]),
    AXIS_BLOCK_PX,
  );
  const uSlope = Math.hypot(
    Math.max(Number.isFinite(sdSlope) ? sdSlope : 0, Number.isFinite(blocks.jackknife) ? blocks.jackknife : 0),
    AXIS_CENTROID_FLOOR_PX * blocks.perCommonShiftPx,
  );
  return {
    band: { ...band, angleDeg: band.angleDeg + turn, slantDeg, center },
    angleUncertaintyDeg: Math.atan(uSlope) / DEG,
    columns: use.length,
  };
}

/**
 * Length (px along the band) of the stretches the axis jackknife leaves out in turn, at least AXIS_MIN_BLOCKS of them:
 * longer than the correlation of neighbouring centroids (a line image, a few 8-px JPEG blocks) yet giving a dozen
 * stretches on a typical band; 16–128 px gave much the same coverage on rendered photos.
 */
const AXIS_BLOCK_PX = 32;
const AXIS_MIN_BLOCKS = 4;
/**
 * Systematic error (px) shared by the centroids of one stretch and independent between stretches: interpolation
 * between pixels, mostly when the line images run within a degree or two of the pixel columns, and undersampled lines.
 * On 300 noise-free renders without JPEG 68 % of the axes were within 0.017 px per stretch; JPEG adds more, which the
 * jackknife partly sees as scatter. On 300 noise-free renders (60 % JPEG) the axis errors had an RMS of 1.9 stated
 * uncertainties without the floor (9 % beyond 3σ), 1.15 with it (3 %).
 */
const AXIS_CENTROID_FLOOR_PX = 0.02;

/**
 * Errors of the slope b of the weighted straight-line fit y ≈ a + b·x, the points grouped into stretches of equal
 * length in x (empty ones skipped): the delete-a-group jackknife standard error √((G − 1)/G · Σ (b₋g − b̄)²) over the
 * G refits without stretch g (NaN with fewer than two), and the slope's standard error per px of an error common to
 * each stretch's points, independent between stretches: √(Σ_g (Σ_{i∈g} w_i (x_i − x̄))²) / Σ w (x − x̄)².
 */
function blockSlopeErrors(x: number[], y: number[], w: number[], blockPx: number): { jackknife: number; perCommonShiftPx: number } {
  const n = x.length;
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of x) {
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  if (!(hi > lo)) return { jackknife: NaN, perCommonShiftPx: 0 };
  const G = Math.max(AXIS_MIN_BLOCKS, Math.ceil((hi - lo) / blockPx));
  // Weighted sums Σw, Σwx, Σwx², Σwy, Σwxy per stretch; a refit subtracts one stretch's sums from the totals.
  const sums = new Float64Array(5 * G);
  const total = new Float64Array(5);
  for (let i = 0; i < n; i++) {
    const g = Math.min(G - 1, Math.floor(((x[i] - lo) / (hi - lo)) * G));
    const t = [w[i], w[i] * x[i], w[i] * x[i] * x[i], w[i] * y[i], w[i] * x[i] * y[i]];
    for (let k = 0; k < 5; k++) {
      sums[5 * g + k] += t[k];
      total[k] += t[k];
    }
  }
  const slopes: number[] = [];
  const xMean = total[1] / total[0];
  const sxx = total[2] - total[1] * xMean;
  let shift2 = 0;
  for (let g = 0; g < G; g++) {
    if (sums[5 * g] === 0) continue;
    shift2 += (sums[5 * g + 1] - xMean * sums[5 * g]) ** 2;
    const [s0, s1, s2, t0, t1] = [0, 1, 2, 3, 4].map((k) => total[k] - sums[5 * g + k]);
    const den = s0 * s2 - s1 * s1;
    // Nothing left, or what is left sits at one x: no slope without this stretch.
    if (!(den > 1e-9 * s0 * s2)) continue;
    slopes.push((s0 * t1 - s1 * t0) / den);
  }
  return { jackknife: jackknifeSe(slopes), perCommonShiftPx: sxx > 0 ? Math.sqrt(shift2) / sxx : 0 };
}

/** √((G − 1)/G · Σ (θ₋g − θ̄)²) of the G leave-one-group-out estimates; NaN for fewer than two. */
function jackknifeSe(estimates: number[]): number {
  const G = estimates.length;
  if (G < 2) return NaN;
  const mean = estimates.reduce((a, b) => a + b, 0) / G;
  let ss = 0;
  for (const e of estimates) ss += (e - mean) ** 2;
  return Math.sqrt(((G - 1) / G) * ss);
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
  // Per slab: its full correlation and, for the jackknife, the part of it (and of ss, tt) from each stretch of the band.
  const G = Math.min(SLANT_SEGMENTS, N);
  const segStart = new Int32Array(G + 1);
  for (let g = 0; g <= G; g++) segStart[g] = Math.ceil((g * N) / G);
  const parts: SlabCorrelation[] = [];
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
    const part: SlabCorrelation = { dq, T, ss, tt, corr, segCorr: new Float64Array(G * (2 * T + 1)), segSs: new Float64Array(G), segTt: new Float64Array(G) };
    segmentSums(sl, total, segStart, G, T, part);
    parts.push(part);
    const shift = slabShift(corr, ss, tt, T, stepPx);
    if (!shift) continue;
    shifts.push(shift.shiftPx);
    offs.push(dq);
    weights.push(shift.weight);
  }
  if (shifts.length < 2) return null;
  const fit = linearLeastSquares(offs.map((o) => [1, o]), shifts, { weights });
  if (!fit) return null;
  const beta = fit.params[1];
  const tanNew = Math.tan(band.slantDeg * DEG) - beta;
  const slantDeg = Math.atan(tanNew) / DEG;
  if (!(Math.abs(slantDeg) <= 20)) return null;
  const u = fit.uncertainties[1];
  const fitUncertaintyDeg = Number.isFinite(u) ? Math.atan(u) / DEG : NaN;
  if (fitUncertaintyDeg > 3) return null; // NaN (two slabs, no residual) is accepted
  // Stated uncertainty: the larger of the fit's (Birge-scaled, K − 2 degrees of freedom) and the jackknife's over the
  // stretches of the band, with the floor of the shifts' sub-pixel precision in quadrature (see the file comment). On
  // rendered photos the fit's alone left 10 % of the line directions beyond 3σ (JPEG-block errors, one-degree-of-
  // freedom scatter), the pair 1–3 %.
  const uJack = slantJackknife(parts, G, stepPx);
  const uTan = Math.hypot(
    Math.max(Number.isFinite(u) ? u : 0, Number.isFinite(uJack) ? uJack : 0),
    SLAB_SHIFT_FLOOR_PX * independentShiftSlopeError(offs, weights),
  );
  const uncertaintyDeg = uTan > 0 ? Math.atan(uTan) / DEG : NaN;
  return { slantDeg, uncertaintyDeg };
}

/** Stretches of the band the slant jackknife leaves out in turn (fewer on bands of fewer samples). */
const SLANT_SEGMENTS = 16;
/**
 * Sub-pixel precision (px) of a slab's shift, independent between slabs: the parabola through the correlation peak
 * and the interpolation between pixels. On 300 noise-free renders without JPEG 68 % of the line directions were within
 * 0.0012 px per slab.
 */
const SLAB_SHIFT_FLOOR_PX = 0.002;

/** Standard error of the weighted straight-line fit's slope per px of independent error in each y: √(Σ (w (x − x̄))²) / Σ w (x − x̄)². */
function independentShiftSlopeError(x: number[], w: number[]): number {
  let sw = 0;
  let swx = 0;
  for (let i = 0; i < x.length; i++) {
    sw += w[i];
    swx += w[i] * x[i];
  }
  const xMean = swx / sw;
  let sxx = 0;
  let s2 = 0;
  for (let i = 0; i < x.length; i++) {
    sxx += w[i] * (x[i] - xMean) ** 2;
    s2 += (w[i] * (x[i] - xMean)) ** 2;
  }
  return sxx > 0 ? Math.sqrt(s2) / sxx : 0;
}

/** One slab's correlation with its reference, whole and per stretch of the band. */
interface SlabCorrelation {
  /** Offset of the slab from its reference (px across). */
  dq: number;
  /** Lags −T … T. */
  T: number;
  ss: number;
  tt: number;
  corr: Float64Array;
  /** Stretch g's share of corr at lag index t: segCorr[g·(2T + 1) + t]; of ss and tt: segSs[g], segTt[g]. */
  segCorr: Float64Array;
  segSs: Float64Array;
  segTt: Float64Array;
}

/**
 * Shift (px) of a slab against its reference from the correlation at lags −T … T (parabola through the highest
 * interior lag and its neighbours), with its fit weight ss·peak²; null when the normalised peak is below 0.3 or at an
 * end of the lag window.
 */
function slabShift(corr: Float64Array, ss: number, tt: number, T: number, stepPx: number): { shiftPx: number; weight: number } | null {
  if (!(tt > 0) || !(ss > 0)) return null;
  let m = 1;
  for (let t = 1; t < 2 * T; t++) if (corr[t] > corr[m]) m = t;
  const peak = corr[m] / Math.sqrt(ss * tt);
  if (!(peak >= 0.3) || m === 0 || m === 2 * T) return null;
  const a = corr[m - 1];
  const b = corr[m];
  const c = corr[m + 1];
  const den = a - 2 * b + c;
  const frac = den < 0 ? (0.5 * (a - c)) / den : 0;
  return { shiftPx: (m - T + frac) * stepPx, weight: ss * peak * peak };
}

/**
 * Jackknife standard error (tan of the slant) of the slab fit's slope over G stretches of the band: the whole estimate
 * (shifts, weights, the slabs that pass) repeated without stretch g's share of every correlation. NaN with fewer than
 * two repeats that keep two slabs.
 */
function slantJackknife(parts: SlabCorrelation[], G: number, stepPx: number): number {
  const slopes: number[] = [];
  for (let g = 0; g < G; g++) {
    const x: number[] = [];
    const y: number[] = [];
    const w: number[] = [];
    for (const p of parts) {
      const L = 2 * p.T + 1;
      const corr = new Float64Array(L);
      for (let t = 0; t < L; t++) corr[t] = p.corr[t] - p.segCorr[g * L + t];
      const shift = slabShift(corr, p.ss - p.segSs[g], p.tt - p.segTt[g], p.T, stepPx);
      if (!shift) continue;
      x.push(p.dq);
      y.push(shift.shiftPx);
      w.push(shift.weight);
    }
    const slope = weightedSlope(x, y, w);
    if (Number.isFinite(slope)) slopes.push(slope);
  }
  return jackknifeSe(slopes);
}

/** Slope of the weighted straight-line fit y ≈ a + b·x; NaN for fewer than two distinct x. */
function weightedSlope(x: number[], y: number[], w: number[]): number {
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let t0 = 0;
  let t1 = 0;
  for (let i = 0; i < x.length; i++) {
    s0 += w[i];
    s1 += w[i] * x[i];
    s2 += w[i] * x[i] * x[i];
    t0 += w[i] * y[i];
    t1 += w[i] * x[i] * y[i];
  }
  const den = s0 * s2 - s1 * s1;
  return den > 1e-9 * s0 * s2 ? (s0 * t1 - s1 * t0) / den : NaN;
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

/** Per stretch g = [segStart[g], segStart[g + 1]): Σ a[i]·b[i − τ] for τ = −T … T, Σ a², Σ b², into `out`. */
function segmentSums(a: Float64Array, b: Float64Array, segStart: Int32Array, G: number, T: number, out: SlabCorrelation): void {
  const N = a.length;
  const L = 2 * T + 1;
  for (let g = 0; g < G; g++) {
    const i0 = segStart[g];
    const i1 = segStart[g + 1];
    let ss = 0;
    let tt = 0;
    for (let i = i0; i < i1; i++) {
      ss += a[i] * a[i];
      tt += b[i] * b[i];
    }
    out.segSs[g] = ss;
    out.segTt[g] = tt;
    for (let tau = -T; tau <= T; tau++) {
      let c = 0;
      for (let i = Math.max(i0, tau); i < Math.min(i1, N + tau); i++) c += a[i] * b[i - tau];
      out.segCorr[g * L + tau + T] = c;
    }
  }
}

/** Σ_i a[i] · b[i − tau] over the overlap. */
function lagProduct(a: Float64Array, b: Float64Array, N: number, tau: number): number {
  let c = 0;
  for (let i = Math.max(0, tau); i < Math.min(N, N + tau); i++) c += a[i] * b[i - tau];
  return c;
}
