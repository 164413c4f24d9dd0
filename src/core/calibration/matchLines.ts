import { invalid } from '../errors.js';
import type { Peak, SpectralLine } from '../types.js';
import { COLOUR_PRIOR_DEFAULTS, colourBandNm, type ColourPriorOptions } from './colourPrior.js';
import { fitGrating, type GratingFitOptions } from './gratingModel.js';
import { type Ctx, lineSigmaNm, nearest, type Pair, type PeakItem, prepareLines, samePairs, sigmaOf, strength } from './match/context.js';
import { growSolution, type GrownSolution, refineSolution } from './match/growSolution.js';
import { fitPairs, fitPairsParsimonious, residualPx } from './match/quickFit.js';
import { countTrialsLog10, type MatchScore, scoreSolution, secondOrderPairs } from './match/scoreSolution.js';
import { tripletSeeds } from './match/tripletSeeds.js';
import { zeroOrderSeeds } from './match/zeroOrderSeeds.js';
import { dispersionAtNmPerPx, wavelengthAtNm, type DispersionModel } from './model.js';
import { modelSigmaNm } from './uncertainty.js';
import type { WeightedPoint } from './polynomialModel.js';

export type { MatchScore } from './match/scoreSolution.js';

/**
 * Automatic identification of lamp lines among spectrum peaks, with no manual help.
 *
 * 1. Hypotheses from spacing ratios (match/tripletSeeds.ts): triplets of peaks whose spacing ratio equals that of
 *    three lines, the 1-D form of the triangle matching of Valdes et al. (1995, PASP 107, 1119); pruned by the
 *    dispersion prior, the peak colours and a single manual pair.
 * 2. Local verification of each hypothesis against its neighbouring peaks, scored against chance.
 * 3. Growth of the best hypotheses into full solutions and refinement (match/growSolution.ts), the consensus step of
 *    RANSAC (Fischler & Bolles 1981, Commun. ACM 24, 381).
 * 4. Significance (match/scoreSolution.ts): matches beyond the model's fitted parameters against the binomial count
 *    chance gives, times the number of scale hypotheses. The best solution must beat chance by a wide margin, else
 *    the lamp is declared not to match: a wrong lamp never yields a scale. A peak where the scale reads 2λ for a strong
 *    line λ (no brighter than the order-1 peak λ falls in, matched or blended) is the line's order-2 image (the
 *    grating equation m λ = d (sin θi + sin θ)): it counts as a match, its hypotheses in the chance per peak, and is
 *    reported apart (MatchResult.secondOrder), never fitted. When the photo's geometry gives priors for the physical
 *    grating model, the best solutions are scored with it too: its few effective parameters are what the
 *    physics leaves free, where a polynomial spends four.
 */
export interface ManualPair {
  positionPx: number;
  wavelengthNm: number;
}

export interface MatchLinesOptions {
  /** Plausible |dλ/dx| (nm/px). @default [0.05, 2] */
  dispersionNmPerPx: [number, number];
  /** Whether λ grows or falls with position. @default 'either' */
  direction: 'either' | 'increasing' | 'decreasing';
  /** Lines outside this interval are never candidates (camera sensitivity). @default [350, 1100] */
  wavelengthRangeNm: [number, number];
  /** Known correspondences (position px = wavelength nm); two or more seed the solution directly. @default [] */
  pairs: ManualPair[];
  /** A manual pair's position snaps to a peak within this distance (px), taking its centroid. @default 3 */
  snapPx: number;
  /** Use peak colours (Peak.rgb) as a coarse prior. @default true */
  useColour: boolean;
  colour: ColourPriorOptions;
  /** At most this many of the strongest peaks take part. @default 60 */
  maxPeaks: number;
  /** Strongest peaks that form triplets. @default 24 */
  seedPeaks: number;
  /** Locally brightest lines forming triplets, per seed peak (calibrateFromPeaks uses 4 for full line lists). @default 2.5 */
  seedLinesPerPeak: number;
  /** Hypotheses grown into full solutions. @default 40 */
  maxGrown: number;
  /**
   * Accept only when chance explains the best solution with at most this probability, after multiplying the
   * binomial tail by the number of scale hypotheses the search could have tried (Bonferroni's bound for the
   * look-elsewhere effect; a seeded null sweep of 725 wrong-lamp and random-peak cases stays above it). @default 5e-3
   */
  maxFalseMatchProbability: number;
  /** Fewest matched lines for a solution. @default 3 */
  minMatches: number;
  /** Final matching tolerance bounds (px). @default [0.25, 2.5] */
  tolerancePx: [number, number];
  /** Priors of the physical model (from the photo's EXIF and geometry), to score solutions with it too. @default null */
  grating: Partial<GratingFitOptions> | null;
  /**
   * A scale that puts this many peaks of at least median strength (and a quarter of them) at wavelengths no camera
   * records, more than INVISIBLE_MARGIN_NM below wavelengthRangeNm, is no first-order scale: typically the second
   * order's lines matched as the first while the first order lies beside them. 0 turns the check off. @default 0
   */
  invisiblePeaksVeto: number;
  /**
   * How a solution is judged against chance: 'tolerance' — how many peaks land within the matching tolerance of a
   * line (binomial tail); 'windows' — also how many land within 1.5, 2 and 3 σ of their own position uncertainty,
   * the best of the counts deciding at four times its chance (see scoreSolution). The second suits full line lists,
   * whose many lines a random peak lands near easily while a true scale puts its peaks within their centroid
   * uncertainty. @default 'tolerance'
   */
  evidence: 'tolerance' | 'windows';
  /**
   * The zero order seen in the photo (position along the band, px, and its centroid's standard uncertainty), or null.
   * A first-order grating scale reads 0 nm there; a solution whose physical model puts it there gains that agreement
   * as evidence (zeroOrderAgreement). @default null
   */
  zeroOrder: ZeroOrderSighting | null;
}

export interface ZeroOrderSighting {
  positionPx: number;
  uncertaintyPx: number;
}

export const MATCH_LINES_DEFAULTS: MatchLinesOptions = {
  dispersionNmPerPx: [0.05, 2],
  direction: 'either',
  wavelengthRangeNm: [350, 1100],
  pairs: [],
  snapPx: 3,
  useColour: true,
  colour: COLOUR_PRIOR_DEFAULTS,
  maxPeaks: 60,
  seedPeaks: 24,
  seedLinesPerPeak: 2.5,
  maxGrown: 40,
  maxFalseMatchProbability: 5e-3,
  minMatches: 3,
  tolerancePx: [0.25, 2.5],
  grating: null,
  invisiblePeaksVeto: 0,
  evidence: 'tolerance',
  zeroOrder: null,
};

export interface LineMatch {
  /** Index into the input peaks, or −1 for a manual pair with no peak near it. */
  peakIndex: number;
  positionPx: number;
  positionUncertaintyPx: number;
  wavelengthNm: number;
  /** The line-list entry (absent for a manual pair that names no listed line). */
  line?: SpectralLine;
  source: 'matched' | 'manual';
  /** Measured − predicted position under the matching model (px). */
  residualPx: number;
  saturated: boolean;
  blended: boolean;
  /** Diffraction order of the peak: 2 for a line's order-2 image (MatchResult.secondOrder); absent for order 1. */
  order?: 2;
}

export interface MatchResult {
  accepted: boolean;
  /** Why the lamp was rejected (empty when accepted). */
  message: string;
  matches: LineMatch[];
  /**
   * Peaks the scale explains as the order-2 image of a strong line (at a first-order reading of 2λ, no brighter than
   * the order-1 peak the line falls in, matched to it or a blend holding it): counted as evidence in the score, never
   * used to fit the scale. residualPx is measured − predicted position of the image (the order-1 scale reads 2λ there).
   */
  secondOrder: LineMatch[];
  /** The scale the matching converged on (diagnostics; the calibration itself is fitted by fitDispersion). */
  model: DispersionModel | null;
  score: MatchScore | null;
  /** The best solution that maps the peaks differently, if any. */
  runnerUp: MatchScore | null;
  hypothesesTested: number;
  solutionsGrown: number;
  warnings: string[];
}

interface Solution extends GrownSolution {
  score: MatchScore;
}

/** The search stops once a solution's chance probability falls below 10^this (before the trials factor). */
const STOP_LOG10_CHANCE = -15;
/**
 * The best solution must be at least 10^this times less likely by chance than the best one that maps the peaks
 * differently (both with their multiplicity). In the seeded sweep every right solution cleared it by 10^3.2 or more,
 * and the one wrong solution that beat chance (a Ne spectrum mirrored onto its own dense 580–660 nm lines) by 10^2.75.
 */
const MIN_RUNNER_UP_MARGIN = 3;
/** A pair the physical model puts more than this many standard deviations off is vetoed. */
const VETO_SIGMA = 5;
/** A core of pairs counts as consistent with the physical model up to this χ²/dof. */
const CORE_MAX_REDUCED_CHI2 = 4;
/** Solutions rescored with the physical model, best first. */
const GRATING_RESCORED = 3;
/**
 * … and in the search repeated when the first declines, and in the search from the zero order's seeds. Which of the
 * hypotheses the search examines plays no part in the chance bound (the trials count every scale hypothesis of the
 * family, examined or not), so a closer look costs no significance, only time on a photo that would be declined.
 * Measured: an argon tube at 1.02 nm/px (rendered sweep) whose right solution ranks fourth among the polynomial
 * solutions; rescoring six in every search instead also cost an accepted case of the synthetic order-2 sweep (a close
 * rival found), which the repeat on declines leaves alone.
 */
const GRATING_RESCORED_DECLINED = 6;

function checkOptions(o: MatchLinesOptions): void {
  const [dlo, dhi] = o.dispersionNmPerPx;
  if (!(dlo > 0 && dhi > dlo && Number.isFinite(dhi))) {
    throw invalid('dispersionNmPerPx', 'an interval [lo, hi] with 0 < lo < hi', o.dispersionNmPerPx);
  }
  for (const p of o.pairs) {
    if (!Number.isFinite(p.positionPx)) throw invalid('pairs', 'a finite position (px)', p.positionPx);
    if (!(p.wavelengthNm > 0 && Number.isFinite(p.wavelengthNm))) throw invalid('pairs', 'a positive wavelength (nm)', p.wavelengthNm);
  }
}

/**
 * Finds which peaks are which lamp lines (see the module comment for the method). `lines` are the lamp's lines in
 * air (nm); `peaks` as found in the spectrum, positions in px along the band.
 */
export function matchLines(
  peaks: readonly Peak[],
  lines: readonly SpectralLine[],
  options: Partial<MatchLinesOptions> = {},
): MatchResult {
  const given: MatchLinesOptions = { ...MATCH_LINES_DEFAULTS, ...options };
  // With the zero order seen beside every peak, only scales growing away from it are hypotheses (zeroOrderSide).
  const side = given.direction === 'either' && given.zeroOrder && given.pairs.length < 2 ? zeroOrderSide(peaks, given.zeroOrder) : null;
  if (side) options = { ...options, direction: side };
  let first = searchLines(peaks, lines, options, 'triplets', GRATING_RESCORED);
  // Declined: the same search once more, rescoring more of its best solutions with the physical model (see
  // GRATING_RESCORED_DECLINED). A search that accepted is left as it is.
  if (!first.accepted && given.grating) first = searchLines(peaks, lines, options, 'triplets', GRATING_RESCORED_DECLINED);
  const o: MatchLinesOptions = { ...MATCH_LINES_DEFAULTS, ...options };
  if (first.accepted || !o.zeroOrder || o.pairs.length >= 2 || !o.grating?.focalLengthPx || !o.grating?.axisPositionPx) return first;
  // Declined: search again from the zero order's seeds (zeroOrderSeeds.ts). Their scales belong to the family the
  // first search counted as its trials, so the bound is the same kind; a solution found so is taken only when it is
  // significant and the first search's best, if it maps the peaks differently, is no close rival to it.
  const again = searchLines(peaks, lines, options, 'zeroOrder', GRATING_RESCORED_DECLINED);
  if (!again.accepted || !again.score || !again.model) return first;
  if (first.score && first.model) {
    const evidence = (s: MatchScore) => s.log10Chance - s.log10Multiplicity;
    const centre = (again.matches[0].positionPx + again.matches[again.matches.length - 1].positionPx) / 2;
    const d = Math.abs(dispersionAtNmPerPx(again.model, centre));
    const differs = Math.abs(wavelengthAtNm(first.model, centre) - wavelengthAtNm(again.model, centre)) > 3 * again.score.tolerancePx * d;
    if (differs && evidence(first.score) - evidence(again.score) < MIN_RUNNER_UP_MARGIN) return first;
  }
  return {
    ...again,
    hypothesesTested: first.hypothesesTested + again.hypothesesTested,
    solutionsGrown: first.solutionsGrown + again.solutionsGrown,
    warnings: [...first.warnings.filter((w) => !again.warnings.includes(w)), ...again.warnings],
  };
}

/** Peaks closer than this to the zero order seen (px, at least 3 σ of the sighting) may be the zero order itself. */
const ZERO_ORDER_OWN_PX = 5;

/**
 * Which way wavelength grows along the band, from the side the zero order is seen on. A first-order scale reads 0 nm
 * at the zero order and grows away from it (the grating equation, m λ = d (sin θi + sin θ), with θ measured from the
 * zero order's direction at normal incidence), so when every peak lies on one side of it, only scales growing away
 * from it are hypotheses. The side is a fact of the photo fixed before any line is matched, so restricting the
 * family to it is no look at the data the chance bound does not see, and the trials (countTrialsLog10, which doubles
 * them for 'either') halve. It is independent of the zero order's agreement as evidence (zeroOrderAgreement), whose
 * chance is that of the distance alone, not of the side. A false sighting costs at worst a decline, never a wrong
 * scale. Null (both directions tried) when peaks lie on both sides (the other first order in the frame, or a sighting
 * among the lines) or fewer than two are left.
 */
function zeroOrderSide(peaks: readonly Peak[], zero: ZeroOrderSighting): 'increasing' | 'decreasing' | null {
  const near = Math.max(ZERO_ORDER_OWN_PX, 3 * zero.uncertaintyPx);
  let below = 0;
  let above = 0;
  for (const p of peaks) {
    if (!Number.isFinite(p.positionPx) || Math.abs(p.positionPx - zero.positionPx) <= near) continue;
    if (p.positionPx < zero.positionPx) below++;
    else above++;
  }
  if (below + above < 2 || (below > 0 && above > 0)) return null;
  return above > 0 ? 'increasing' : 'decreasing';
}

/** The search of matchLines, seeded by spacing-ratio triplets or by the zero order (zeroOrderSeeds.ts). */
function searchLines(
  peaks: readonly Peak[],
  lines: readonly SpectralLine[],
  options: Partial<MatchLinesOptions>,
  seedsFrom: 'triplets' | 'zeroOrder',
  rescored: number,
): MatchResult {
  const o: MatchLinesOptions = { ...MATCH_LINES_DEFAULTS, ...options };
  checkOptions(o);
  const warnings: string[] = [];

  // Peaks: the strongest, sorted by position.
  const usable = peaks.map((p, index) => ({ p, index })).filter(({ p }) => Number.isFinite(p.positionPx));
  usable.sort((a, b) => strength(b.p) - strength(a.p));
  const chosen = usable.slice(0, o.maxPeaks).sort((a, b) => a.p.positionPx - b.p.positionPx);
  const P: PeakItem[] = chosen.map(({ p, index }) => ({
    index,
    x: p.positionPx,
    sigma: Math.max(Number.isFinite(p.positionUncertaintyPx) ? p.positionUncertaintyPx : 0.3, 0.05),
    strength: strength(p),
    band: o.useColour && !p.saturated ? colourBandNm(p.rgb, o.colour) : null,
    saturated: p.saturated,
    blended: p.blended,
    fwhmPx: p.fwhmPx,
  }));
  const px = Float64Array.from(P, (p) => p.x);
  const L = prepareLines(lines, o.wavelengthRangeNm);
  const lw = Float64Array.from(L, (l) => l.wavelengthNm);

  // Manual pairs: snap to a peak, attach to a listed line when one is within 0.05 nm.
  const manual: Pair[] = o.pairs.map((pair) => {
    let peak = -1;
    if (P.length > 0) {
      const k = nearest(px, pair.positionPx);
      if (Math.abs(px[k] - pair.positionPx) <= o.snapPx) peak = k;
    }
    let line = -1;
    if (L.length > 0) {
      const k = nearest(lw, pair.wavelengthNm);
      if (Math.abs(lw[k] - pair.wavelengthNm) <= 0.05) line = k;
    }
    return { peak, line, x: peak >= 0 ? P[peak].x : pair.positionPx, lambda: pair.wavelengthNm, manual: true };
  });

  const empty = (message: string): MatchResult => ({
    accepted: false,
    message,
    matches: [],
    secondOrder: [],
    model: null,
    score: null,
    runnerUp: null,
    hypothesesTested: 0,
    solutionsGrown: 0,
    warnings,
  });
  if (L.length < 2 && manual.length < 2) {
    return empty(
      `the lamp has ${L.length} line(s) between ${o.wavelengthRangeNm[0]} and ${o.wavelengthRangeNm[1]} nm: ` +
        'automatic matching needs at least two (three to check them); give --pairs',
    );
  }
  if (P.length + manual.filter((m) => m.peak < 0).length < 2) {
    return empty(`${P.length} peak(s) found: a wavelength scale needs at least two lines`);
  }
  if (P.length > 0 && P.every((p) => p.saturated)) {
    warnings.push(`all ${P.length} peaks are saturated: positions are less certain and colours unusable; reduce the exposure`);
  }

  const fieldPx = Math.max((P.length ? px[px.length - 1] - px[0] : 0), 50);
  // Largest plausible relative change of dispersion per pixel: about ±25 % across the field of a wide-angle camera
  // (from the grating equation with β spanning ~20–45°; common practice, no source).
  const ctx: Ctx = { P, px, L, lw, o, curvature: 0.6 / fieldPx, manual };

  let seeds: Pair[][];
  let hypothesesTested = 0;
  if (manual.length >= 2) {
    seeds = [[]];
  } else if (seedsFrom === 'zeroOrder' && o.zeroOrder && o.grating?.focalLengthPx && o.grating?.axisPositionPx) {
    const h = zeroOrderSeeds(ctx, o.zeroOrder, o.grating.focalLengthPx.value, o.grating.axisPositionPx.value);
    hypothesesTested = h.tested;
    seeds = h.seeds;
  } else {
    const h = tripletSeeds(ctx);
    hypothesesTested = h.tested;
    seeds = h.seeds;
  }

  const solutions: Solution[] = [];
  let grown = 0;
  for (const seed of seeds) {
    if (grown >= o.maxGrown) break;
    // A seed that an existing solution already explains would grow into it.
    if (seed.length && solutions.some((s) => seed.every((q) => explains(s, q)))) continue;
    // A solution far beyond chance ends the search: nothing else can beat it by a credible margin.
    if (grown >= 5 && solutions.some((s) => s.score.log10Chance <= STOP_LOG10_CHANCE)) break;
    grown++;
    const sol = growSolution(ctx, [...manual, ...seed]);
    // Seeds often grow into the same solution: one copy is kept (the grating rescoring takes the best few distinct).
    if (sol && solutions.some((s) => samePairs(s.pairs, sol.pairs))) continue;
    if (sol) solutions.push(vetoInvisible(ctx, { ...sol, score: scoreSolution(ctx, sol, parametersOf(ctx, sol.pairs)) }));
  }
  if (solutions.length === 0) {
    return { ...empty(noMatchMessage(P.length, L.length, null)), hypothesesTested, solutionsGrown: grown };
  }
  const byScore = (a: Solution, b: Solution) => a.score.log10Chance - b.score.log10Chance || b.score.matched - a.score.matched;
  solutions.sort(byScore);
  const log10Trials = countTrialsLog10(ctx);
  if (o.grating) {
    // The physics is the stronger constraint: a solution refitted with the grating model replaces the polynomial one
    // when it scores better, and also whenever it is itself significant — a flexible polynomial can bend to take a
    // line one off at the end of a long extrapolation, the physical model cannot.
    const significant = (s: Solution) => s.score.log10Chance - s.score.log10Multiplicity + log10Trials <= Math.log10(o.maxFalseMatchProbability);
    for (let i = 0; i < Math.min(rescored, solutions.length); i++) {
      // Two starts: all the pairs, and the densest stretch of them (whose model also judges the veto).
      const gAll = withGratingModel(ctx, solutions[i], o.grating, 'all');
      const gDense = withGratingModel(ctx, solutions[i], o.grating, 'densest');
      const g = gAll && gDense ? (gAll.score.log10Chance <= gDense.score.log10Chance ? gAll : gDense) : (gAll ?? gDense);
      if (!g) continue;
      // A polynomial solution has no zero order; its grating twin may put it where the photo shows it.
      if (o.zeroOrder) withZeroOrder(g, o.zeroOrder, o.dispersionNmPerPx);
      const veto = gDense ? gDense.vetoed : [];
      if (g.score.log10Chance < solutions[i].score.log10Chance || significant(g)) {
        solutions[i] = g;
      } else if (veto.length) {
        // The polynomial solution keeps only the pairs the physics allows, and is scored on them.
        const kept = solutions[i].pairs.filter((q) => !veto.includes(q));
        const model = kept.length >= 2 ? fitPairs(ctx, kept) : null;
        const refined = model ? refineSolution(ctx, model, kept, solutions[i].window, (set) => fitPairs(ctx, set)) : null;
        const cleaned = refined?.pairs.filter((q) => !veto.some((v) => v.peak === q.peak && v.line === q.line));
        if (refined && cleaned && cleaned.length >= 2) {
          const sol = { ...refined, pairs: cleaned };
          solutions[i] = { ...sol, score: scoreSolution(ctx, sol, parametersOf(ctx, cleaned)) };
        } else {
          solutions[i] = { ...solutions[i], score: { ...solutions[i].score, log10Chance: 0, log10Multiplicity: 0 } };
        }
      }
    }
    solutions.sort(byScore);
  }
  for (let i = 0; i < solutions.length; i++) solutions[i] = vetoInvisible(ctx, solutions[i]);
  solutions.sort(byScore);
  // The zero order's agreement is evidence of its own; with a zero order given, a scale may pass by the lines alone or
  // by lines and zero order: two tests, so the trials double (Bonferroni).
  if (o.zeroOrder) {
    for (let i = 0; i < solutions.length; i++) {
      solutions[i] = vetoZeroOrderDisagreement(solutions[i], o.zeroOrder);
      withZeroOrder(solutions[i], o.zeroOrder, o.dispersionNmPerPx);
    }
    solutions.sort(byScore);
  }
  const trialsLog10 = log10Trials + (o.zeroOrder ? Math.log10(2) : 0);
  for (const sol of solutions) {
    sol.score.log10Trials = trialsLog10;
    sol.score.falseMatchProbability = Math.min(1, 10 ** (sol.score.log10Chance - sol.score.log10Multiplicity + trialsLog10));
  }
  const best = solutions[0];
  const centre = (best.pairs[0].x + best.pairs[best.pairs.length - 1].x) / 2;
  const dBest = Math.abs(dispersionAtNmPerPx(best.model, centre));
  const runner = solutions.find(
    (s) => Math.abs(wavelengthAtNm(s.model, centre) - wavelengthAtNm(best.model, centre)) > 3 * best.score.tolerancePx * dBest,
  );
  const significant =
    best.score.falseMatchProbability <= o.maxFalseMatchProbability &&
    best.score.matched >= Math.min(o.minMatches, Math.max(2, manual.length));
  // Another assignment nearly as good is no identification, however unlikely chance makes both: a lamp's own
  // pattern of lines, shifted or mirrored onto a dense stretch of it, is no random pattern (see MIN_RUNNER_UP_MARGIN).
  const evidence = (s: MatchScore) => s.log10Chance - s.log10Multiplicity;
  const ambiguous =
    significant && manual.length < 2 && runner !== undefined && evidence(runner.score) - evidence(best.score) < MIN_RUNNER_UP_MARGIN;
  const accepted = significant && !ambiguous;
  const toMatch = (q: Pair, order: 1 | 2): LineMatch => {
    const peak = q.peak >= 0 ? P[q.peak] : null;
    const src = peak ? peaks[peak.index] : null;
    const dl = dispersionAtNmPerPx(best.model, q.x);
    return {
      peakIndex: peak ? peak.index : -1,
      positionPx: q.x,
      positionUncertaintyPx: peak ? peak.sigma : 0.5,
      wavelengthNm: q.lambda,
      line: q.line >= 0 ? L[q.line].line : undefined,
      source: q.manual ? 'manual' : 'matched',
      residualPx: dl !== 0 ? (order * q.lambda - wavelengthAtNm(best.model, q.x)) / dl : 0,
      saturated: src ? src.saturated : false,
      blended: src ? src.blended : false,
      ...(order === 2 ? { order: 2 as const } : {}),
    };
  };
  const matches = best.pairs.map((q) => toMatch(q, 1));
  const secondOrder = secondOrderPairs(ctx, best).map((q) => toMatch(q, 2));
  if (accepted && runner && runner.score.log10Chance - best.score.log10Chance < 2) {
    warnings.push(
      `the line identification is ambiguous: another assignment matches ${runner.score.matched} peaks ` +
        `(chance ${formatProbability(10 ** runner.score.log10Chance)}) against ${best.score.matched} (${formatProbability(10 ** best.score.log10Chance)}); ` +
        'check the result or give --pairs',
    );
  }
  return {
    accepted,
    message: accepted
      ? ''
      : ambiguous && runner
        ? ambiguityMessage(best.score, runner.score)
        : noMatchMessage(P.length, L.length, best.score, o.maxFalseMatchProbability),
    matches,
    secondOrder,
    model: best.model,
    score: best.score,
    runnerUp: runner ? runner.score : null,
    hypothesesTested,
    solutionsGrown: grown,
    warnings,
  };
}

/** Agreement within this many standard deviations of the predicted and seen zero order counts. */
const ZERO_ORDER_SIGMA = 3;

/**
 * How a solution's physical model agrees with the zero order seen in the photo, or null when it does not (or has no
 * physical model). A first-order grating scale λ(x) = d (sin θi + sin(θc + atan(s (x − x0)/f))) with θi = 0 reads 0 nm
 * where θc + atan(s (x − x0)/f) = 0, at x̂ = x0 − s f tan θc, with the standard uncertainty of the model's covariance
 * (θc, x0 and f; f and x0 under their priors from the photo) and that of the sighting. They agree within
 * ZERO_ORDER_SIGMA of both, a window of half-width t.
 *
 * Chance of that agreement for a scale unrelated to the lamp: such a scale's zero order lies about λc/D from the
 * matched lines (λc their central wavelength, D the dispersion), and the search takes D anywhere in its range
 * [Dlo, Dhi]; for D spread evenly in log D, the distance s to the zero order has density 1/(s ln(Dhi/Dlo)), so a
 * window of 2t at the distance seen holds it with probability 2t/(s ln(Dhi/Dlo)). Counted twice that (chance
 * solutions need not spread evenly), and never above 1. The agreement is independent of the line matches: the
 * zero order takes no part in them.
 */
function zeroOrderAgreement(
  sol: Solution,
  zero: ZeroOrderSighting,
  dispersionNmPerPx: [number, number],
): MatchScore['zeroOrder'] | null {
  const z = zeroOrderPrediction(sol, zero);
  if (!z) return null;
  const { predictedPx } = z;
  const halfWidthPx = ZERO_ORDER_SIGMA * z.sigmaPx;
  if (!(Math.abs(predictedPx - zero.positionPx) <= halfWidthPx)) return null;
  const centre = 0.5 * (sol.pairs[0].x + sol.pairs[sol.pairs.length - 1].x);
  const distancePx = Math.abs(zero.positionPx - centre);
  const logRange = Math.log(dispersionNmPerPx[1] / dispersionNmPerPx[0]);
  const probability = Math.min(1, (2 * 2 * halfWidthPx) / (distancePx * logRange));
  return { predictedPx, halfWidthPx, log10Probability: Math.log10(probability) };
}

/**
 * Where a solution's first-order grating model reads 0 nm (x̂ = x0 − s f tan θc, see zeroOrderAgreement) and the
 * standard uncertainty of its distance from the sighting (the model's covariance of θc, x0 and f, and the sighting's
 * own); null without such a model.
 */
function zeroOrderPrediction(sol: Solution, zero: ZeroOrderSighting): { predictedPx: number; sigmaPx: number } | null {
  const m = sol.model;
  if (m.kind !== 'grating' || m.order !== 1 || m.incidenceAngleDeg !== 0 || sol.pairs.length < 2) return null;
  const rad = Math.PI / 180;
  const th = m.cameraAngleDeg * rad;
  const sec2 = 1 / Math.cos(th) ** 2;
  const predictedPx = m.axisPositionPx - m.direction * m.focalLengthPx * Math.tan(th);
  // ∂x̂/∂[d, θc (deg), x0, f].
  const J = [0, -m.direction * m.focalLengthPx * sec2 * rad, 1, -m.direction * Math.tan(th)];
  let variance = zero.uncertaintyPx ** 2;
  for (let a = 0; a < 4; a++) for (let b = 0; b < 4; b++) variance += J[a] * m.covariance[a][b] * J[b];
  return { predictedPx, sigmaPx: Math.sqrt(variance) };
}

/** A grating scale whose 0 nm lies this many standard deviations or more from the zero order seen is ruled out. */
const ZERO_ORDER_VETO_SIGMA = 6;

/**
 * The solution, or it with no significance when the zero order is seen and its first-order grating model reads
 * 0 nm ZERO_ORDER_VETO_SIGMA or more from it: the undiffracted light is where every order's 0 nm lies, so such a scale
 * is not the photo's (the lines it matched do so by chance, a stretch of the list aliased onto the peaks: a xenon
 * photo's visible lines read as its infrared ones under half the line density, seen on a rendered photo). A scale
 * with no grating model, or one too loose to place its zero order, is not judged. A false sighting can only make a
 * right scale decline.
 */
function vetoZeroOrderDisagreement(sol: Solution, zero: ZeroOrderSighting): Solution {
  const z = zeroOrderPrediction(sol, zero);
  if (!z || !(Math.abs(z.predictedPx - zero.positionPx) >= ZERO_ORDER_VETO_SIGMA * z.sigmaPx)) return sol;
  return { ...sol, score: { ...sol.score, log10Chance: 0, log10Multiplicity: 0 } };
}

/** Counts the zero order's agreement in the solution's score, once. */
function withZeroOrder(sol: Solution, zero: ZeroOrderSighting, dispersionNmPerPx: [number, number]): void {
  if (sol.score.zeroOrder) return;
  const z = zeroOrderAgreement(sol, zero, dispersionNmPerPx);
  if (!z) return;
  sol.score = { ...sol.score, zeroOrder: z, log10Chance: sol.score.log10Chance + z.log10Probability };
}

/**
 * Parameters a polynomial solution spends: those of the degree AICc prefers for its final matches (the least
 * flexible model they support; the search may have used a more flexible one to find them).
 */
function parametersOf(ctx: Ctx, pairs: readonly Pair[]): number {
  const m = fitPairsParsimonious(ctx, pairs);
  return m ? m.degree + 1 : 2;
}

/** How far below the sensitive range (nm) a peak counts as invisible light (see invisiblePeaksVeto). */
const INVISIBLE_MARGIN_NM = 30;
/** … and the share of the bright peaks they must also make up (a stray reflection or two beside the band is no veto). */
const INVISIBLE_SHARE = 0.25;
/**
 * Where the first order of an order-2 image taken for order 1 reads under that scale: λ/2 of its matched lines. The
 * peaks counted are those reading from this fraction of the shortest matched wavelength up (a straight extrapolation
 * over a few spans may read the first order some tens of per cent low; the zero order reads near 0 nm under any scale
 * and is left out).
 */
const FIRST_ORDER_READING_FLOOR = 0.3;
/** … and up to this fraction of the longest (half of it, and a tenth more for the straight extrapolation). */
const FIRST_ORDER_READING_CEILING = 0.55;

/**
 * The solution, or it with no significance when its scale puts invisiblePeaksVeto peaks of at least median strength,
 * and at least INVISIBLE_SHARE of them, more than INVISIBLE_MARGIN_NM below the sensitive range: no phone or webcam
 * records light there (glass optics and the sensor's cover glass absorb the UV below ~340 nm; common practice, no
 * source), so bright peaks cannot lie there. That is what a scale shows that took the second order's lines for the
 * first: by the grating equation (m λ = d (sin θi + sin θ)) it reads λ/2 at each line's first-order image, which lies
 * toward the zero order, λ/(2Δλ) matched spans away for lines spanning Δλ (several spans for a lamp whose lines cover
 * 100 nm), and is brighter than the image. So every peak whose reading lies between FIRST_ORDER_READING_FLOOR × the
 * shortest matched wavelength and the UV limit counts, however far out, and so does every unmatched one beyond the
 * matched lines reading up to FIRST_ORDER_READING_CEILING × the longest (a red lamp's first order reads above the UV
 * limit under its order-2 scale: Ne's 585–745 nm lines at 293–372 nm); beyond the matched lines the scale is
 * continued straight with its end dispersion (a polynomial's own extrapolation can turn anywhere; a grating's
 * dispersion changes little across a band). (A reach of one matched span, used before, missed the first order of
 * every such scale of the synthetic sweep with order-2 images: 20 of 200 accepted wrong at 10^-6 to 10^-20.)
 */
function vetoInvisible(ctx: Ctx, sol: Solution): Solution {
  const limit = ctx.o.invisiblePeaksVeto;
  if (!(limit > 0) || sol.pairs.length < 2) return sol;
  const strengths = ctx.P.map((p) => p.strength).sort((a, b) => a - b);
  const median = strengths[strengths.length >> 1];
  const first = sol.pairs[0].x;
  const last = sol.pairs[sol.pairs.length - 1].x;
  const uvNm = ctx.o.wavelengthRangeNm[0] - INVISIBLE_MARGIN_NM;
  const floorNm = FIRST_ORDER_READING_FLOOR * Math.min(...sol.pairs.map((q) => q.lambda));
  const halfNm = FIRST_ORDER_READING_CEILING * Math.max(...sol.pairs.map((q) => q.lambda));
  const matched = new Set(sol.pairs.map((q) => q.peak));
  let invisible = 0;
  let bright = 0;
  ctx.P.forEach((p, i) => {
    if (p.strength < median) return;
    bright++;
    const end = p.x < first ? first : p.x > last ? last : p.x;
    const lam = wavelengthAtNm(sol.model, end) + dispersionAtNmPerPx(sol.model, end) * (p.x - end);
    if (lam < floorNm) return;
    // Below the UV limit: invisible; beyond the matched lines and unmatched, up to half the longest matched line:
    // where the first order of an order-2 scale's lines lies.
    if (lam < uvNm || (lam < halfNm && end !== p.x && !matched.has(i))) invisible++;
  });
  return invisible >= Math.max(limit, INVISIBLE_SHARE * bright) ? { ...sol, score: { ...sol.score, log10Chance: 0, log10Multiplicity: 0 } } : sol;
}

function explains(s: Solution, q: Pair): boolean {
  const d = Math.abs(dispersionAtNmPerPx(s.model, q.x));
  return Math.abs(wavelengthAtNm(s.model, q.x) - q.lambda) <= 2 * s.score.tolerancePx * d;
}

/**
 * The solution refitted, re-matched and rescored with the physical grating model under the given priors; its
 * parameter count is the fit's effective one (priors pin x0 and f), at least 2. Null when the model does not fit.
 */
function withGratingModel(
  ctx: Ctx,
  sol: Solution,
  priors: Partial<GratingFitOptions>,
  start: 'all' | 'densest',
): (Solution & { vetoed: Pair[] }) | null {
  let effective = 4;
  let chi2 = 0;
  const weightOf = (q: Pair, reference: DispersionModel) =>
    1 / ((sigmaOf(ctx, q) * dispersionAtNmPerPx(reference, q.x)) ** 2 + lineSigmaNm(ctx, q) ** 2);
  const fit = (pairs: Pair[], reference: DispersionModel, equal = false): DispersionModel | null => {
    // Equal weights (in px) for finding the core: a few precise lines taken one off would otherwise mask themselves
    // by pulling the fit onto them.
    const points: WeightedPoint[] = pairs.map((q) => ({
      xPx: q.x,
      wavelengthNm: q.lambda,
      weight: equal ? 1 / dispersionAtNmPerPx(reference, q.x) ** 2 : weightOf(q, reference),
    }));
    const g = fitGrating(points, priors);
    if (!g) return null;
    effective = g.effectiveParameters;
    chi2 = g.chi2;
    return g.model;
  };
  // A consistent core first: while the physical model cannot fit the pairs (χ²/dof > CORE_MAX_REDUCED_CHI2), the
  // worst of them in equal weights goes. The refinement then matches afresh from that core over the whole band, the
  // physics doing the extrapolating. (Far-out pairs taken one off by a bending polynomial have the leverage to hide
  // from this; the veto below catches them.)
  let core = start === 'all' ? sol.pairs : densestStretch(sol.pairs);
  let model0 = fit(core, sol.model);
  while (model0 && core.length > 4) {
    const dof = core.length - effective;
    if (dof <= 0 || chi2 / dof <= CORE_MAX_REDUCED_CHI2) break;
    const even = fit(core, model0, true);
    if (!even) break;
    let worst = -1;
    let worstPx = 0;
    core.forEach((q, i) => {
      if (q.manual) return;
      const r = Math.abs(residualPx(even, q));
      if (r > worstPx) {
        worstPx = r;
        worst = i;
      }
    });
    if (worst < 0) break;
    core = core.filter((_, i) => i !== worst);
    model0 = fit(core, model0);
  }
  if (!model0) return null;
  let reference: DispersionModel = model0;
  const refined = refineSolution(ctx, model0, core, sol.window, (set) => {
    const m = fit(set, reference);
    if (m) reference = m;
    return m;
  });
  if (!refined) return null;
  const score = scoreSolution(ctx, refined, Math.max(2, Math.round(effective)));
  // Pairs of the original solution that the physical model rules out: more than VETO_SIGMA standard deviations
  // (the pair's own and the model's at that position) from it.
  const model = refined.model;
  const vetoed = sol.pairs.filter((q) => {
    if (q.manual) return false;
    const sigma = Math.sqrt(1 / weightOf(q, model) + modelSigmaNm(model, q.x) ** 2);
    return Math.abs(q.lambda - wavelengthAtNm(model, q.x)) > VETO_SIGMA * Math.max(sigma, refined.tolerancePx * Math.abs(dispersionAtNmPerPx(model, q.x)));
  });
  return { ...refined, score, vetoed };
}

/**
 * The densest stretch of a solution: the most pairs within half its span (all of them when that leaves fewer than
 * four). A polynomial can bend to take lines one off at the end of a long extrapolation; started from here, the
 * physical model extrapolates them itself.
 */
function densestStretch(pairs: readonly Pair[]): Pair[] {
  const sorted = [...pairs].sort((p, q) => p.x - q.x);
  const halfSpan = 0.5 * (sorted[sorted.length - 1].x - sorted[0].x);
  let best: Pair[] = sorted;
  let bestCount = 0;
  for (let i = 0; i < sorted.length; i++) {
    let k = i;
    while (k + 1 < sorted.length && sorted[k + 1].x - sorted[i].x <= halfSpan) k++;
    if (k - i + 1 > bestCount) {
      bestCount = k - i + 1;
      best = sorted.slice(i, k + 1);
    }
  }
  if (best.length < 4) return sorted;
  return [...best, ...sorted.filter((q) => q.manual && !best.includes(q))];
}

/** 10^log10 as a count for a message: "2", "350", "4.2e5". */
function formatCount(log10: number): string {
  const v = 10 ** log10;
  return v < 1e4 ? String(Math.max(1, Math.round(v))) : v.toExponential(1).replace('e+', 'e');
}

function formatProbability(p: number): string {
  return p >= 0.01 ? p.toFixed(2) : p.toExponential(0);
}

function ambiguityMessage(best: MatchScore, runner: MatchScore): string {
  const gap = runner.log10Chance - runner.log10Multiplicity - (best.log10Chance - best.log10Multiplicity);
  return (
    `the peaks fit two assignments of the lamp's lines almost equally well: the best matches ${best.matched} of ` +
    `${best.peaksInRange} peaks, another that puts them at other wavelengths matches ${runner.matched} and is only ` +
    `${formatCount(gap)} times less likely; give --pairs (a known line or two) to tell them apart`
  );
}

function noMatchMessage(peaks: number, lines: number, s: MatchScore | null, maxProbability?: number): string {
  if (!s) {
    return `no consistent assignment of the lamp's ${lines} lines to the ${peaks} peaks: wrong lamp, or too few lines visible; check --lamp or give --pairs`;
  }
  return (
    `the lamp's lines do not match the peaks: the best assignment matches ${s.matched} of ${s.peaksInRange} peaks, ` +
    `where chance alone gives ${s.expectedByChance.toFixed(1)}; among the ${formatCount(s.log10Trials)} scales tried, chance ` +
    `does as well with probability ${formatProbability(s.falseMatchProbability)}` +
    (s.zeroOrder ? ` (the zero order where this scale puts it counted in)` : '') +
    (maxProbability !== undefined ? `, and a scale is taken only below ${formatProbability(maxProbability)}` : '') +
    '; ' +
    'wrong lamp, or too few of its lines visible; check --lamp or give --pairs'
  );
}
