/**
 * Step 4 of the line search: how far a solution beats chance. Under the null hypothesis "these peaks are unrelated
 * to the lamp", each peak lands within the tolerance of one of the lines its colour admits with probability p_i;
 * the count of matches beyond the model's fitted parameters is then binomial (with the mean p), and the solution's
 * score is its upper tail. The search looked at many scale hypotheses, so the tail is multiplied by their number
 * (Bonferroni's bound on the look-elsewhere effect) before it is compared with the acceptance threshold.
 *
 * Order 2: a grating puts each line's order-2 image where the order-1 scale reads 2λ. An unmatched peak within the
 * tolerance of 2λ for a strong line (SECOND_ORDER_MIN_RANK, fixed by the line list) counts as a match, and every
 * peak's chance p_i then includes those windows too (the union bound: P(order 1 or order 2) ≤ p1 + p2), so the tail
 * stays a bound on chance. The success is further restricted to images no brighter than the order-1 peak the line's
 * light falls in (the peak matched to it, or the blend its scale position lies in: firstOrderStrength); a narrower
 * success event under the same p_i keeps the bound valid (conservative). Counting them as
 * evidence, not merely dropping them from the unexplained pool, avoids a selection the chance model does not see:
 * dropping failures chosen by a rule that depends on the order-1 matches would bias the binomial count.
 * A line the list ranks weak can still be among a photo's brightest (lists rank lines on scales that differ by
 * orders of magnitude between sources and spectral regions), so the solution's own matched peaks of such lines are
 * order-2 sources too (ownImageSources): a window at twice each one's reading for every peak no brighter, its
 * width in every such peak's chance, as for the list's strong lines.
 */
import { dispersionAtNmPerPx, positionAtPx, wavelengthAtNm, type DispersionModel } from '../model.js';
import { log10BinomialTail } from '../significance.js';
import { type Ctx, lineSigmaNm, lowerBound, median, nearest, type Pair, sigmaOf } from './context.js';
import type { GrownSolution } from './growSolution.js';
import { rmsPx } from './quickFit.js';
import { modelSigmaNm } from '../uncertainty.js';

export interface MatchScore {
  /** Matched peaks that count as evidence (see scoreSolution). */
  matched: number;
  /**
   * Peaks matched as the order-2 image of a strong line whose order-1 peak the solution finds (see scoreSolution):
   * evidence beside `matched`, with their hypotheses in the chance per peak; never part of the fit.
   */
  secondOrder: number;
  /** Peaks that take part: inside the lamp's line range and able to count either way. */
  peaksInRange: number;
  /** Mean chance that one unrelated peak lands on a line: tolerance window × density of the lines its colour admits. */
  chancePerPeak: number;
  /** Model parameters fitted to the matches (not counted as evidence). */
  parameters: number;
  /** Matches chance alone would give: parameters + (peaksInRange − parameters) × chancePerPeak. */
  expectedByChance: number;
  /** log10 of the binomial probability of this many matches by chance, for one hypothesis. */
  log10Chance: number;
  /** log10 of the number of scale hypotheses (peak pair × line pair within the dispersion prior). */
  log10Trials: number;
  /**
   * log10 of how many of those hypotheses lead to this same solution: pairs of its matched peaks far enough apart
   * (at least half its span) for the scale through them to predict the rest (see generatingPairsLog10).
   */
  log10Multiplicity: number;
  /**
   * Bound on the probability that chance produced a solution this good: 10^(log10Chance + log10Trials −
   * log10Multiplicity).
   */
  falseMatchProbability: number;
  tolerancePx: number;
  rmsPx: number;
  /** Which model the score was computed with. */
  model: 'polynomial' | 'grating';
  /**
   * With a zero order seen in the photo and a physical model that puts it there: where (px), within what half-width
   * (px), and log10 of the chance of that agreement, already included in log10Chance (see zeroOrderAgreement).
   */
  zeroOrder?: { predictedPx: number; halfWidthPx: number; log10Probability: number };
}

/**
 * Scores a grown solution whose model has `parameters` fitted parameters. Peaks of its window that the model puts
 * inside the lamp's line range take part, except those that are no evidence either way: an unresolved blend (a
 * blended peak whose centre is vaguer than half the tolerance), a peak whose colour admits none of
 * the lamp's lines there (second order, stray light). Evidence: those of the others that matched.
 */
export function scoreSolution(ctx: Ctx, solution: GrownSolution, parameters: number): MatchScore {
  const { P, px, lw } = ctx;
  const { model, pairs, window, tolerancePx: tolPx } = solution;
  const lamLo = lw[0];
  const lamHi = lw[lw.length - 1];
  const pairOf = new Map(pairs.filter((q) => q.peak >= 0).map((q) => [q.peak, q]));
  const strong = strongLinesOf(ctx);
  // Beyond the lamp's longest line a peak can still be the order-2 image of a strong line (at a first-order reading
  // of 2λ): such peaks take part too, or a lamp whose list ends in the red (Hg, 709 nm) could never count the images
  // of its blue and green lines (871, 1092 nm). Only peaks whose colour admits such an image take part (admitsOrder2);
  // the covered range then spans them, which dilutes every peak's chance alike: the null model stays peaks placed at
  // random over the covered range. Measured: a mercury tube at 0.86 nm/px (rendered sweep) went from declined to
  // right, and the synthetic sweeps gained Ar and Ne cases and lost a fluorescent one.
  const order2Hi = strong.lw.length ? 2 * strong.lw[strong.lw.length - 1] + 1 : -Infinity;
  let covLo = Infinity;
  let covHi = -Infinity;
  const taking: number[] = [];
  for (let q = lowerBound(px, window[0]); q < px.length && px[q] <= window[1]; q++) {
    const lam = wavelengthAtNm(model, px[q]);
    if ((lam >= lamLo - 1 && lam <= lamHi + 1) || pairOf.has(q) || (lam <= order2Hi && admitsOrder2(strong, P[q].band, lam, lamHi))) {
      taking.push(q);
      covLo = Math.min(covLo, lam);
      covHi = Math.max(covHi, lam);
    }
  }
  const covWidth = Math.max(covHi - covLo, 1e-9);
  // Reference uncertainty of a typical lamp line in the covered range, for peaks that matched nothing.
  const sigmas = ctx.L.filter((l) => l.wavelengthNm >= covLo && l.wavelengthNm <= covHi).map((l) => l.sigmaNm);
  const typicalSigmaNm = sigmas.length ? median(sigmas) : 0;
  // The counts within windows of a few standard deviations (see SIGMA_WINDOWS), when asked for.
  const windows = ctx.o.evidence === 'windows' ? SIGMA_WINDOWS.map(() => ({ hits: 0, pSum: 0, n: 0 })) : null;
  let inRange = 0;
  let matched = 0;
  let manualPeaks = 0;
  let secondOrder = 0;
  let pSum = 0;
  const brightestOf = firstOrderStrength(ctx, solution);
  // Order-2 sources from the photo's own peaks (see ownImageSources) imaged inside the covered range, brightest first.
  const sources = ownImageSources(ctx, solution).filter((src) => 2 * src.readingNm >= covLo && 2 * src.readingNm <= covHi);
  for (const q of taking) {
    const pair = pairOf.get(q);
    const disp = Math.abs(dispersionAtNmPerPx(model, px[q]));
    if (P[q].sigma > 0.5 * tolPx && P[q].blended) continue;
    const tolQ = Math.max(tolPx, 3 * P[q].sigma);
    const lamQ = wavelengthAtNm(model, px[q]);
    // p_i = 2·tol_i·|dλ/dx| · (lines of the covered range inside the peak's colour band) / (covered range), with
    // tol_i the position tolerance widened, as in the matching, by twice the line's reference uncertainty (a broad
    // or blended feature catches peaks in a wider window). Counting the lines inside the band, not the band's share
    // of the range, keeps a lamp whose lines crowd into one colour from looking improbable when its red peaks land on
    // its many red lines.
    const band = P[q].band;
    const bLo = band ? Math.max(band[0], covLo) : covLo;
    const bHi = band ? Math.min(band[1], covHi) : covHi;
    const lines = bHi >= bLo ? lowerBound(lw, bHi + 1e-9) - lowerBound(lw, bLo - 1e-9) : 0;
    // Order-2 hypotheses of this peak (see SECOND_ORDER_MIN_RANK): the strong lines λ its colour admits whose order-2
    // image, at a first-order reading of 2λ, falls in the covered range.
    const s2Lo = lowerBound(strong.lw, Math.max(covLo / 2, band ? band[0] : -Infinity) - 1e-9);
    const s2Hi = lowerBound(strong.lw, Math.min(covHi / 2, band ? band[1] : Infinity) + 1e-9);
    const order2 = pair ? 0 : Math.max(0, s2Hi - s2Lo);
    // Order-2 hypotheses from the photo's own order-1 peaks (see ownImageSources): images at twice the reading of
    // another matched peak at least as strong, of a colour this peak's admits.
    const own = pair?.manual ? 0 : countOwnImages(sources, q, P[q].strength, band);
    if (lines === 0 && !pair && order2 === 0 && own === 0) continue;
    const tolNm = tolQ * disp + 2 * (pair ? lineSigmaNm(ctx, pair) : typicalSigmaNm);
    inRange++;
    // An unmatched peak may instead land within tol of 2λ (the window widened by twice the line's reference
    // uncertainty, doubled in order 2): its chance is the sum of those windows' shares of the range.
    let p2 = 0;
    let hit2 = -1;
    let off2 = Infinity;
    // For the σ-window counts: the sum of the order-2 hypotheses' σ (the centroid's and twice the line's reference
    // uncertainty), and that of the matched one.
    let sigma2Sum = 0;
    let sigma2Hit = 0;
    const centroidNm = P[q].sigma * disp;
    for (let s = s2Lo; s < s2Lo + order2; s++) {
      const l = strong.line[s];
      const half = tolQ * disp + 4 * ctx.L[l].sigmaNm;
      p2 += (2 * half) / covWidth;
      const sigma2 = windows ? Math.hypot(centroidNm, 2 * ctx.L[l].sigmaNm) : 0;
      sigma2Sum += sigma2;
      const off = Math.abs(lamQ - 2 * strong.lw[s]);
      // A match only when the line's order-1 peak is at least as bright: an order-2 image outshining its own first
      // order is no grating's (this only narrows the success event, so the chance bound stays valid). Measured: a
      // helium tube at 1.77 nm/px (rendered sweep) whose 501.6 nm line lies in an unresolved blend with 492.2 nm,
      // matched to neither, went from declined (10^-1.9) to right once that blend's brightness counted for it;
      // the synthetic sweeps and every wrong-lamp search of both unchanged.
      if (off <= half && off < off2 && brightestOf(l) >= P[q].strength) {
        hit2 = s;
        off2 = off;
        sigma2Hit = sigma2;
      }
    }
    // The photo's own order-1 peaks as order-2 sources (ownImageSources), each window as wide as the two readings'
    // tolerances (the source's doubled) and twice the grating model's own uncertainty at the image (a physical scale
    // extrapolated some hundreds of px beyond its lines; a polynomial's extrapolation is given no such allowance).
    let ownHit = false;
    if (own > 0) {
      const modelNm = model.kind === 'grating' ? 2 * modelSigmaNm(model, px[q]) : 0;
      for (const src of sources) {
        if (src.strength < P[q].strength) break;
        if (!ownImageAdmits(src, q, band)) continue;
        const half = tolQ * disp + 2 * src.toleranceNm + modelNm;
        p2 += (2 * half) / covWidth;
        const sigma2 = windows ? Math.hypot(centroidNm, 2 * src.sigmaNm) : 0;
        sigma2Sum += sigma2;
        const off = Math.abs(lamQ - 2 * src.readingNm);
        if (!pair && hit2 < 0 && off <= half && off < off2) {
          ownHit = true;
          off2 = off;
          sigma2Hit = sigma2;
        }
      }
    }
    const imaged = hit2 >= 0 || ownHit;
    pSum += Math.min(1, (lines > 0 || pair ? (2 * tolNm * Math.max(lines, 1)) / covWidth : 0) + p2);
    if (pair) {
      matched++;
      if (pair.manual) manualPeaks++;
    } else if (imaged) {
      secondOrder++;
    }
    // A blended peak's centroid lies between its lines, where no σ-window applies: it takes no part in those counts.
    if (windows && !pair?.manual && !P[q].blended) {
      // σ of a peak's position against its line (nm): its centroid's and the line's reference uncertainty.
      const sigmaNm = Math.hypot((pair ? sigmaOf(ctx, pair) : P[q].sigma) * disp, pair ? lineSigmaNm(ctx, pair) : typicalSigmaNm);
      const offNm = pair ? Math.abs(pair.lambda - lamQ) : Infinity;
      SIGMA_WINDOWS.forEach((k, w) => {
        const win = windows[w];
        win.n++;
        // The order-2 hypotheses likewise, each within k σ of 2λ (σ of the reading: the centroid's, and twice the
        // line's reference uncertainty).
        const pw = (lines > 0 || pair ? (2 * k * sigmaNm * Math.max(lines, 1)) / covWidth : 0) + (2 * k * sigma2Sum) / covWidth;
        win.pSum += Math.min(1, pw);
        if (offNm <= k * sigmaNm || (imaged && off2 <= k * sigma2Hit)) win.hits++;
      });
    }
  }
  const pChance = inRange ? pSum / inRange : 1;
  // Manual pairs are given, not found; the model's parameters are fitted to as many matches: neither is evidence.
  const free = Math.max(0, parameters - manualPeaks);
  const mEff = matched + secondOrder - manualPeaks - free;
  const nEff = Math.max(inRange - manualPeaks - free, 0);
  let log10Chance = mEff <= 0 ? 0 : log10BinomialTail(mEff, nEff, pChance);
  if (windows && mEff > 0) {
    // The same binomial count with each peak's window set by its own uncertainty: a true scale puts its peaks within
    // a few σ of their lines, where a random one is no likelier to than the window's share of the range. The best
    // of the counts decides, at (number of counts) times its chance: Bonferroni's bound for having looked at each.
    for (const win of windows) {
      const m = win.hits - free;
      if (m > 0) log10Chance = Math.min(log10Chance, log10BinomialTail(m, Math.max(win.n - free, 0), win.pSum / win.n));
    }
    log10Chance = Math.min(0, log10Chance + Math.log10(windows.length + 1));
  }
  return {
    matched,
    secondOrder,
    peaksInRange: inRange,
    chancePerPeak: pChance,
    parameters,
    expectedByChance: free + manualPeaks + nEff * pChance,
    log10Chance,
    log10Trials: 0,
    log10Multiplicity: generatingPairsLog10(ctx, pairs, model),
    falseMatchProbability: 1,
    tolerancePx: tolPx,
    rmsPx: rmsPx(model, pairs),
    model: model.kind,
  };
}

/**
 * Whether a peak beyond the lamp's longest line (first-order reading lamQ) may be an order-2 image at all: its colour
 * admits a strong line λ with 2λ past that line and within 100 nm of the reading. Which line it lands on plays no part.
 */
function admitsOrder2(strong: StrongLines, band: [number, number] | null, lamQ: number, lamHi: number): boolean {
  for (let s = lowerBound(strong.lw, Math.max(lamHi / 2, lamQ / 2 - 50)); s < strong.lw.length && strong.lw[s] <= lamQ / 2 + 50; s++) {
    if (!band || (strong.lw[s] >= band[0] && strong.lw[s] <= band[1])) return true;
  }
  return false;
}

/**
 * Windows (in standard deviations of each peak's position against its line) of the uncertainty-based counts; their
 * widths are fixed before any data are seen, so each count is an exact binomial test (common practice, no source).
 */
const SIGMA_WINDOWS = [1.5, 2, 3];

/**
 * Lines strong enough to be seen in order 2 (brightness rank, relative to the strongest of their spectrum): a
 * transmission grating sends a few to a few tens of per cent of order 1's flux into order 2 (common practice, no
 * source), so only lines within an order of magnitude of the brightest leave a peak there. The set is fixed by the
 * line list before any peak is seen, which keeps each order-2 hypothesis a fixed window in the chance model.
 */
export const SECOND_ORDER_MIN_RANK = 0.1;

interface StrongLines {
  /** Wavelengths (nm) of the strong lines, sorted. */
  lw: Float64Array;
  /** Their indices into ctx.L. */
  line: Int32Array;
}

const STRONG_CACHE = new WeakMap<Ctx, StrongLines>();

function strongLinesOf(ctx: Ctx): StrongLines {
  let s = STRONG_CACHE.get(ctx);
  if (!s) {
    const idx: number[] = [];
    ctx.L.forEach((l, i) => {
      if (l.rank >= SECOND_ORDER_MIN_RANK) idx.push(i);
    });
    s = { lw: Float64Array.from(idx, (i) => ctx.L[i].wavelengthNm), line: Int32Array.from(idx) };
    STRONG_CACHE.set(ctx, s);
  }
  return s;
}

/**
 * The strength of the order-1 peak a line's light falls in (by line index), or −1: the brightest peak the solution
 * matches the line to, else the peak within half its FWHM (at least the tolerance) of where the solution's scale puts
 * the line — a blend whose centroid lies between its lines is matched to none of them, yet holds each one's light.
 */
function firstOrderStrength(ctx: Ctx, solution: GrownSolution): (line: number) => number {
  const m = new Map<number, number>();
  for (const q of solution.pairs) if (q.peak >= 0 && q.line >= 0) m.set(q.line, Math.max(m.get(q.line) ?? 0, ctx.P[q.peak].strength));
  const [lo, hi] = solution.window;
  return (line) => {
    const own = m.get(line);
    if (own !== undefined) return own;
    const x = positionAtPx(solution.model, ctx.L[line].wavelengthNm, lo, hi);
    const k = x === null ? -1 : nearest(ctx.px, x);
    const p = k >= 0 ? ctx.P[k] : null;
    const s = p && Math.abs(p.x - x!) <= Math.max(solution.tolerancePx, 0.5 * (p.fwhmPx ?? 0)) ? p.strength : -1;
    m.set(line, s);
    return s;
  };
}

/**
 * The peaks a solution explains as order-2 images (the same rule scoreSolution counts by): each unmatched peak whose
 * first-order reading lies within the matching tolerance (+ 4 × the line's reference uncertainty) of 2λ for a strong
 * line λ its colour admits, whose order-1 light falls in a peak at least as strong (firstOrderStrength).
 */
export function secondOrderPairs(ctx: Ctx, solution: GrownSolution): Pair[] {
  const { P, px } = ctx;
  const { model, pairs, window, tolerancePx: tolPx } = solution;
  const strong = strongLinesOf(ctx);
  const brightestOf = firstOrderStrength(ctx, solution);
  const sources = ownImageSources(ctx, solution);
  const taken = new Set(pairs.map((q) => q.peak));
  const out: Pair[] = [];
  for (let q = lowerBound(px, window[0]); q < px.length && px[q] <= window[1]; q++) {
    if (taken.has(q) || (P[q].sigma > 0.5 * tolPx && P[q].blended)) continue;
    const disp = Math.abs(dispersionAtNmPerPx(model, px[q]));
    const tolQ = Math.max(tolPx, 3 * P[q].sigma);
    const lamQ = wavelengthAtNm(model, px[q]);
    const band = P[q].band;
    let best = -1;
    let bestOff = Infinity;
    for (let s = lowerBound(strong.lw, lamQ / 2 - 50); s < strong.lw.length && strong.lw[s] <= lamQ / 2 + 50; s++) {
      const l = strong.line[s];
      if (band && (strong.lw[s] < band[0] || strong.lw[s] > band[1])) continue;
      const off = Math.abs(lamQ - 2 * strong.lw[s]);
      if (off <= tolQ * disp + 4 * ctx.L[l].sigmaNm && off < bestOff && brightestOf(l) >= P[q].strength) {
        best = l;
        bestOff = off;
      }
    }
    if (best < 0) {
      // The photo's own order-1 peaks as sources, by the rule scoreSolution counts them (ownImageSources).
      const modelNm = model.kind === 'grating' ? 2 * modelSigmaNm(model, px[q]) : 0;
      for (const src of sources) {
        if (src.strength < P[q].strength) break;
        if (!ownImageAdmits(src, q, band)) continue;
        const off = Math.abs(lamQ - 2 * src.readingNm);
        if (off <= tolQ * disp + 2 * src.toleranceNm + modelNm && off < bestOff) {
          best = src.line;
          bestOff = off;
        }
      }
    }
    if (best >= 0) out.push({ peak: q, line: best, x: px[q], lambda: ctx.L[best].wavelengthNm, manual: false });
  }
  return out;
}

/**
 * How many distinct scale hypotheses the search could have produced: pairs of peaks able to count as evidence times
 * pairs of lines whose spacing ratio lies within the dispersion prior (each fixes a scale and an offset), both
 * directions when either is allowed. (Weighting by the share of lines each peak's colour admits was tried and let
 * wrong lamps through in the seeded null sweep: colour agreement between peaks is not independent.) One manual pair leaves peak × line hypotheses; two or more leave one.
 */
export function countTrialsLog10(ctx: Ctx): number {
  const { P, lw, o, manual } = ctx;
  const xs = P.filter((p) => !p.blended && p.sigma <= 0.5 * o.tolerancePx[1]).map((p) => p.x);
  if (manual.length >= 2) return 0;
  if (manual.length === 1) return Math.log10(Math.max(1, xs.length * lw.length));
  const d = new Float64Array((lw.length * (lw.length - 1)) / 2);
  let k = 0;
  for (let a = 0; a < lw.length; a++) for (let b = a + 1; b < lw.length; b++) d[k++] = lw[b] - lw[a];
  d.sort();
  let count = 0;
  for (let i = 0; i < xs.length; i++) {
    for (let j = i + 1; j < xs.length; j++) {
      const dx = xs[j] - xs[i];
      if (!(dx > 0)) continue;
      count += lowerBound(d, o.dispersionNmPerPx[1] * dx + 1e-12) - lowerBound(d, o.dispersionNmPerPx[0] * dx);
    }
  }
  if (o.direction === 'either') count *= 2;
  return Math.log10(Math.max(1, count));
}

/**
 * log10 of the number of scale hypotheses that would each have found this solution. The trials factor
 * (countTrialsLog10) counts every peak pair × line pair as a hypothesis of its own, but a solution with m matches is
 * reached from many pairs of its matches: a chance solution shows up as some k hypotheses that all succeed at once.
 * By Markov's inequality on the number of successful hypotheses, P(some chance solution this good) ≤ (trials ×
 * per-hypothesis chance) / k — the union bound divided by the multiplicity (cf. the many minimal samples that give
 * the same consensus set in RANSAC, Fischler & Bolles 1981). A pair of matches counts only when the straight scale
 * through it already puts every other match of the solution within the growth's least tolerance — max(1 px, 3σ) plus
 * twice the line's reference uncertainty — allowing only for the bend the physics gives: for a solution of the
 * grating model (whose priors pin the focal length, and with it how the dispersion changes across the band) the
 * model's own departure from its chord between the two; for a polynomial none (its bend may be the wrong matches' own:
 * an allowance of the curvature bound let partly wrong, bent solutions through in the seeded sweep). Only peaks that
 * countTrialsLog10 counts take part: unblended, automatic, with a centroid good to half the widest tolerance.
 */
export function generatingPairsLog10(ctx: Ctx, pairs: readonly Pair[], model: DispersionModel | null = null): number {
  const sel: Pair[] = [];
  for (const q of pairs) {
    if (q.manual || q.peak < 0) continue;
    const p = ctx.P[q.peak];
    if (!p.blended && p.sigma <= 0.5 * ctx.o.tolerancePx[1]) sel.push(q);
  }
  const m = sel.length;
  if (m < 2) return 0;
  sel.sort((a, b) => a.x - b.x);
  const x = Float64Array.from(sel, (q) => q.x);
  const lam = Float64Array.from(sel, (q) => q.lambda);
  const basePx = Float64Array.from(sel, (q) => Math.max(GENERATING_TOLERANCE_PX, 3 * ctx.P[q.peak].sigma));
  const refNm = Float64Array.from(sel, (q) => 2 * lineSigmaNm(ctx, q));
  const physics = model && model.kind === 'grating' ? Float64Array.from(sel, (q) => wavelengthAtNm(model, q.x)) : null;
  let k = 0;
  for (let a = 0; a < m; a++) {
    for (let b = a + 1; b < m; b++) {
      const dx = x[b] - x[a];
      if (!(dx > 0)) continue;
      const disp = (lam[b] - lam[a]) / dx;
      const ad = Math.abs(disp);
      if (!(ad > 0)) continue;
      let all = true;
      for (let c = 0; c < m && all; c++) {
        if (c === a || c === b) continue;
        const offPx = Math.abs(lam[a] + disp * (x[c] - x[a]) - lam[c]) / ad;
        const w = (x[c] - x[a]) / dx;
        const bendNm = physics ? Math.abs(physics[c] - (physics[a] + w * (physics[b] - physics[a]))) : 0;
        const allowPx = basePx[c] + (refNm[c] + bendNm) / ad;
        if (offPx > allowPx) all = false;
      }
      if (all) k++;
    }
  }
  return Math.log10(Math.max(1, k));
}

/** Least tolerance (px) of the two-point scales in generatingPairsLog10: growthSolution's least growth tolerance. */
const GENERATING_TOLERANCE_PX = 1;

interface ImageSource {
  /** Index into ctx.P. */
  peak: number;
  line: number;
  strength: number;
  /** The solution's reading of the peak (nm). */
  readingNm: number;
  /** Its matching tolerance at that reading (nm): max(tolerance, 3σ) × |dλ/dx|. */
  toleranceNm: number;
  /** Its centroid's standard uncertainty at that reading (nm). */
  sigmaNm: number;
}

/**
 * The solution's matched order-1 peaks whose lines have no order-2 hypothesis of their own (rank below
 * SECOND_ORDER_MIN_RANK), brightest first: a grating sends some of every line's light into order 2, where the order-1 scale reads
 * twice the light's wavelength (m λ = d (sin θi + sin θ)), whatever the list says of its intensity. Line lists rank
 * lines on scales that differ by orders of magnitude between sources and spectral regions (the project's Ne I list
 * has 470.440 nm at 150 beside 585.249 nm at 20000; the outside reference the test tubes are drawn from ranks the
 * two within a factor of two), so a line the list ranks weak may be among the photo's brightest; its order-1 peak
 * says how bright it is. Each such
 * peak, read at twice the scale's reading, is an order-2 window for every other peak no brighter than it (matched or
 * not, its width in that peak's chance: the window is fixed by the solution's scale and matches, as its order-1
 * windows are), and the image of a blend sits at twice the blend's own reading, so it is read from the peak, not from
 * the line it was matched to. Measured (test/core/calibration/renderedSweep.test.ts): the rendered sweep's photos
 * without the zero order 6 → 8 of 16, with it unchanged (12 of 16, 18 of 20), none wrong and every wrong-lamp search
 * of both sweeps declined; the synthetic order-2 sweep's Ar 36 → 37 of 40, the others unchanged.
 */
function ownImageSources(ctx: Ctx, solution: GrownSolution): ImageSource[] {
  const { P } = ctx;
  const { model, tolerancePx } = solution;
  const out: ImageSource[] = [];
  for (const q of solution.pairs) {
    if (q.manual || q.peak < 0 || q.line < 0 || ctx.L[q.line].rank >= SECOND_ORDER_MIN_RANK) continue;
    const disp = Math.abs(dispersionAtNmPerPx(model, q.x));
    const p = P[q.peak];
    out.push({
      peak: q.peak,
      line: q.line,
      strength: p.strength,
      readingNm: wavelengthAtNm(model, q.x),
      toleranceNm: Math.max(tolerancePx, 3 * p.sigma) * disp,
      sigmaNm: p.sigma * disp,
    });
  }
  return out.sort((a, b) => b.strength - a.strength);
}

/** Whether a source's order-2 image is a hypothesis for peak q: another peak, whose reading q's colour admits. */
function ownImageAdmits(src: ImageSource, q: number, band: [number, number] | null): boolean {
  return src.peak !== q && (!band || (src.readingNm >= band[0] && src.readingNm <= band[1]));
}

/** How many of the sources (brightest first) are order-2 hypotheses for peak q of the given strength and colour. */
function countOwnImages(sources: readonly ImageSource[], q: number, strength: number, band: [number, number] | null): number {
  let n = 0;
  for (const src of sources) {
    if (src.strength < strength) break;
    if (ownImageAdmits(src, q, band)) n++;
  }
  return n;
}
