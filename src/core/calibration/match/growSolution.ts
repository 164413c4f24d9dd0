/**
 * Step 3 of the line search: a seed grown into a full solution, as in the consensus step of RANSAC (Fischler &
 * Bolles 1981, Commun. ACM 24, 381): fit the matched set, widen the window, match the peaks inside it to the nearest
 * line within a tolerance that allows for the model's extrapolation, refit, until the window covers every peak; then
 * refine with a tolerance from the robust scatter of the matches.
 */
import { colourAllows } from '../colourPrior.js';
import { dispersionAtNmPerPx, wavelengthAtNm, type DispersionModel } from '../model.js';
import { modelSigmaNm, polynomialSigmaNm } from '../uncertainty.js';
import { type Ctx, lineSigmaNm, lowerBound, LineIndex, type Pair, samePairs } from './context.js';
import { fitPairs, quickPolynomial, residualPx, rmsPx, robustScatterPx } from './quickFit.js';

/** Tolerance above which a match is not attempted at all (px): the model is not known well enough there. */
export const MAX_TOLERANCE_PX = 12;
/** Least matching tolerance while a solution grows (px). */
const GROWTH_TOLERANCE_PX = 1;

/**
 * Matches every peak in [lo, hi] to its nearest line under the model, within a tolerance that grows outside the
 * region the model was fitted on: the model's own covariance, the line's reference uncertainty, and for a polynomial
 * the bound on the curvature it does not model. Each line goes to its closest peak. Manual pairs are always kept.
 */
export function matchWindow(
  ctx: Ctx,
  model: DispersionModel,
  lo: number,
  hi: number,
  region: [number, number],
  tolPx: number,
  maxTolPx = MAX_TOLERANCE_PX,
): Pair[] {
  const { P, px, L, lw, curvature, manual } = ctx;
  const span = Math.max(region[1] - region[0], 1);
  // Line → best peak so far, in scratch arrays reset through the list of lines touched (in the order first touched).
  const s = windowScratch(ctx);
  let touched = 0;
  const isPolynomial = model.kind === 'polynomial';
  for (let q = lowerBound(px, lo); q < px.length && px[q] <= hi; q++) {
    if (s.peakTaken[q]) continue;
    const x = px[q];
    const pred = wavelengthAtNm(model, x);
    const disp = Math.abs(dispersionAtNmPerPx(model, x));
    if (!(disp > 0) || !Number.isFinite(pred)) continue;
    const m = s.index.nearest(pred);
    if (m < 0 || s.lineTaken[m]) continue;
    const dist = x < region[0] ? region[0] - x : x > region[1] ? x - region[1] : 0;
    // Unmodelled curvature: a relative change of dispersion κ per px bends a straight line by ½κ·t·(t + span) at a
    // distance t beyond the fitted region; a quadratic leaves a third-order term of order κ²t²(t + span)/6.
    let allowance = 0;
    if (isPolynomial) {
      allowance =
        model.degree <= 1
          ? 0.5 * curvature * dist * (dist + span)
          : model.degree === 2
            ? (curvature * curvature * dist * dist * (dist + span)) / 6
            : 0;
    }
    // The base tolerance is at least 3σ of the peak's own centroid uncertainty. The cap applies to what the model
    // does not know (a broad line is allowed its width at any resolution).
    const sigmaNm = isPolynomial ? polynomialSigmaNm(model, x) : modelSigmaNm(model, x);
    const positional = Math.max(tolPx, 3 * P[q].sigma) + allowance + (2 * sigmaNm) / disp;
    if (positional > maxTolPx) continue;
    const tol = positional + (2 * L[m].sigmaNm) / disp;
    const off = Math.abs(lw[m] - pred) / disp;
    if (off > tol || !colourAllows(P[q].band, lw[m])) continue;
    const cost = off / tol;
    if (s.bestPeak[m] < 0) {
      s.order[touched++] = m;
      s.bestPeak[m] = q;
      s.bestCost[m] = cost;
    } else if (cost < s.bestCost[m]) {
      s.bestPeak[m] = q;
      s.bestCost[m] = cost;
    }
  }
  const out: Pair[] = [...manual];
  for (let u = 0; u < touched; u++) {
    const line = s.order[u];
    const peak = s.bestPeak[line];
    s.bestPeak[line] = -1;
    // One Pair object per peak and line for the whole search (pairs are never changed): the growth makes these by
    // the thousand, and their garbage cost more than the matching.
    const key = peak * L.length + line;
    let pair = s.pairs[key];
    if (!pair) pair = s.pairs[key] = { peak, line, x: px[peak], lambda: L[line].wavelengthNm, manual: false };
    out.push(pair);
  }
  out.sort((a, b) => a.x - b.x);
  return out;
}

interface WindowScratch {
  bestPeak: Int32Array;
  bestCost: Float64Array;
  order: Int32Array;
  peakTaken: Uint8Array;
  lineTaken: Uint8Array;
  index: LineIndex;
  /** The automatic pairs made so far, by peak × lines + line. */
  pairs: (Pair | undefined)[];
}

/** The search's scratch arrays for matchWindow, made once per search context (bestPeak is kept at −1 between calls). */
const WINDOW_SCRATCH = new WeakMap<Ctx, WindowScratch>();

function windowScratch(ctx: Ctx): WindowScratch {
  let s = WINDOW_SCRATCH.get(ctx);
  if (!s) {
    const peakTaken = new Uint8Array(ctx.px.length);
    const lineTaken = new Uint8Array(ctx.lw.length);
    for (const m of ctx.manual) {
      if (m.peak >= 0) peakTaken[m.peak] = 1;
      if (m.line >= 0) lineTaken[m.line] = 1;
    }
    s = {
      bestPeak: new Int32Array(ctx.lw.length).fill(-1),
      bestCost: new Float64Array(ctx.lw.length),
      order: new Int32Array(ctx.lw.length),
      peakTaken,
      lineTaken,
      index: new LineIndex(ctx.lw),
      pairs: new Array<Pair | undefined>(ctx.px.length * ctx.lw.length),
    };
    WINDOW_SCRATCH.set(ctx, s);
  }
  return s;
}

export interface GrownSolution {
  pairs: Pair[];
  model: DispersionModel;
  /** The window the solution reached (px). */
  window: [number, number];
  tolerancePx: number;
}

/**
 * Grows a seed (three pairs, or the manual pairs) over the whole band. Null when it collapses below two pairs or
 * ends in a scale no grating and camera could make (see `plausible`).
 */
export function growSolution(ctx: Ctx, seed: Pair[]): GrownSolution | null {
  const { px, o } = ctx;
  let pairs = [...seed].sort((a, b) => a.x - b.x);
  let model = fitPairs(ctx, pairs, 1);
  if (!model) return null;
  // A wide triplet bends visibly (a grating's dispersion changes across the field): pass a quadratic through it
  // rather than let the straight line's misfit swell the tolerance.
  if (pairs.length >= 3 && pairs.some((q) => Math.abs(residualPx(model!, q)) > GROWTH_TOLERANCE_PX)) {
    model = quickPolynomial(ctx, pairs, 2)?.model ?? model;
  }
  const xLo = px.length ? px[0] : pairs[0].x;
  const xHi = px.length ? px[px.length - 1] : pairs[pairs.length - 1].x;
  let lo = pairs[0].x;
  let hi = pairs[pairs.length - 1].x;
  // Grow outward: each step widens the window by 30 % of the matched span on each side, and at least far enough to
  // take in the next peak beyond it, so every extrapolation stays short.
  for (let iter = 0; iter < 2 * px.length + 10; iter++) {
    const region: [number, number] = [pairs[0].x, pairs[pairs.length - 1].x];
    const margin = Math.max(10, 0.3 * (region[1] - region[0]));
    const left = lowerBound(px, lo) - 1;
    const right = lowerBound(px, hi + 1e-9);
    const gapL = left >= 0 ? lo - px[left] : Infinity;
    const gapR = right < px.length ? px[right] - hi : Infinity;
    const step = Math.min(gapL, gapR);
    if (step === Infinity && iter > 0) break;
    if (step !== Infinity) {
      lo -= Math.min(gapL, step + margin);
      hi += Math.min(gapR, step + margin);
    }
    const tol = Math.max(GROWTH_TOLERANCE_PX, 3 * robustScatterPx(ctx, model, pairs));
    let next = matchWindow(ctx, model, lo, hi, region, tol);
    if (next.length < 2) return null;
    // At most a quadratic while growing: flexible enough for a grating's curvature over the reached window, too
    // stiff to follow a run of wrong matches in a dense stretch of lines.
    let refit = fitPairs(ctx, next, 2);
    if (!refit) return null;
    // One clipping pass: drop pairs far off the refit.
    const r = rmsPx(refit, next);
    const clipped = next.filter((q) => q.manual || Math.abs(residualPx(refit!, q)) <= Math.max(4 * r, 1.5));
    if (clipped.length >= 2 && clipped.length < next.length) {
      const m3 = fitPairs(ctx, clipped, 2);
      if (m3) {
        next = clipped;
        refit = m3;
      }
    }
    model = refit;
    pairs = next;
  }
  lo = Math.min(lo, xLo);
  hi = Math.max(hi, xHi);
  const refined = refineSolution(ctx, model, pairs, [lo, hi], (set) => fitPairs(ctx, set));
  if (!refined) return null;
  if (refined.model.kind === 'polynomial' && !plausible(refined.model, refined.pairs[0].x, refined.pairs[refined.pairs.length - 1].x)) {
    return null;
  }
  return refined;
}

/**
 * Refinement: tolerance from the robust scatter of the matched set (1.4826 × median |residual|, which the wrong
 * matches of a dense line list barely move), refit to the inliers with `fit`, re-match, until the set is stable;
 * finally only pairs within the tolerance are kept.
 */
export function refineSolution(
  ctx: Ctx,
  start: DispersionModel,
  startPairs: Pair[],
  window: [number, number],
  fit: (pairs: Pair[]) => DispersionModel | null,
): GrownSolution | null {
  const { o } = ctx;
  let model = start;
  let pairs = startPairs;
  let tolPx = o.tolerancePx[1];
  for (let iter = 0; iter < 8; iter++) {
    tolPx = Math.min(o.tolerancePx[1], Math.max(o.tolerancePx[0], 3.5 * robustScatterPx(ctx, model, pairs)));
    const inliers = pairs.filter((q) => q.manual || Math.abs(residualPx(model, q)) <= pairTolerancePx(ctx, model, q, tolPx));
    if (inliers.length < 2) break;
    const refit = fit(inliers);
    if (!refit) break;
    const region: [number, number] = [inliers[0].x, inliers[inliers.length - 1].x];
    const next = matchWindow(ctx, refit, window[0], window[1], region, tolPx, 2 * o.tolerancePx[1]);
    const same = samePairs(next, pairs);
    model = refit;
    pairs = next;
    if (same) break;
  }
  if (pairs.length >= 2) model = fit(pairs) ?? model;
  pairs = pairs.filter((q) => q.manual || Math.abs(residualPx(model, q)) <= pairTolerancePx(ctx, model, q, tolPx));
  if (pairs.length < 2) return null;
  return { pairs, model, window, tolerancePx: tolPx };
}

/**
 * The tolerance for one pair (px): the position tolerance, at least 3σ of the peak's centroid, widened by twice its
 * line's reference uncertainty.
 */
export function pairTolerancePx(ctx: Ctx, model: DispersionModel, q: Pair, tolPx: number): number {
  const base = q.peak >= 0 ? Math.max(tolPx, 3 * ctx.P[q.peak].sigma) : tolPx;
  const s = lineSigmaNm(ctx, q);
  return s > 0 ? base + (2 * s) / Math.abs(dispersionAtNmPerPx(model, q.x)) : base;
}

/** Largest ratio of the dispersion's extremes across a solution's lines (see `plausible`). */
const MAX_DISPERSION_RATIO = 3;

/**
 * Whether a scale could come from a grating and a camera: the dispersion keeps its sign and changes by at most a
 * factor MAX_DISPERSION_RATIO across the lines (cos β and the projection change it by up to ~2 for a wide-angle camera
 * at steep diffraction angles; common practice, no source).
 */
export function plausible(model: DispersionModel, lo: number, hi: number): boolean {
  let dMin = Infinity;
  let dMax = 0;
  let sign = 0;
  for (let s = 0; s <= 16; s++) {
    const d = dispersionAtNmPerPx(model, lo + ((hi - lo) * s) / 16);
    const sg = Math.sign(d);
    if (sg === 0 || (sign !== 0 && sg !== sign)) return false;
    sign = sg;
    dMin = Math.min(dMin, Math.abs(d));
    dMax = Math.max(dMax, Math.abs(d));
  }
  return dMax <= MAX_DISPERSION_RATIO * dMin;
}
