import type { CalibrationPoint } from '../calibration/fitDispersion.js';
import { MATCH_LINES_DEFAULTS } from '../calibration/matchLines.js';
import {
  fitPolynomial,
  polynomialDispersionNmPerPx,
  polynomialWavelengthNm,
  type PolynomialModel,
} from '../calibration/polynomialModel.js';
import type { Peak, SpectralLine } from '../types.js';
import { gratingLikeCurvature, MAX_FALL_PER_NM, MAX_RISE } from './scaleFit.js';
import { buildSpeciesTemplates } from './speciesTemplates.js';

/** A linear scale hypothesis and the line assignments it implies. */
export interface BrightLineScale {
  element: string;
  points: CalibrationPoint[];
  /** ln of the number of hypotheses tried for this element (its look-elsewhere cost). */
  searchNats: number;
}

export interface BrightLineOptions {
  /** Plausible |dλ/dx| (nm/px). @default [0.05, 2] */
  dispersionNmPerPx?: readonly [number, number];
  /** The brightest peaks that seed hypotheses. @default 6 */
  seedPeaks?: number;
  /**
   * The strongest features of the species that seed hypotheses: so many inside `seenRangeNm`, so many of each
   * spectrum (I, II) inside it, and so many beyond its red end: a phone's infrared-cut filter hides the near-infrared
   * lines that dominate some tables (Ar, Kr, Xe), a webcam without one shows them. @default [6, 3, 2]
   */
  seedFeatures?: readonly [number, number, number];
  /** Where every camera sees well (nm; common practice, no source). @default [400, 700] */
  seenRangeNm?: readonly [number, number];
  /** A peak matches a line within this many px of the hypothesis' position (at least `minToleranceNm`). @default 2 */
  tolerancePx?: number;
  minToleranceNm?: number;
  /** The brightest peaks scored against each hypothesis. @default 16 */
  scoredPeaks?: number;
  /**
   * Hypotheses kept per element. @default 3 (2 before: the third best found the right scale of a mercury webcam photo
   * and two krypton/xenon tubes in 240 seeded evaluation photos, 71/70/69 of 80 against 70/69/68, none wrong; about
   * 4 % more CPU on a full search, demo tube D)
   */
  keep?: number;
  /** Fewest matched lines a kept hypothesis needs (the two seeds included). @default 4 */
  minMatches?: number;
  /**
   * Where any colour camera sees (nm; common practice, no source): a species' strongest features here must show on a
   * scale that covers them (see `missingNats`). @default [420, 680], as identifySpecies assumes
   */
  surelySeenNm?: readonly [number, number];
}

export const BRIGHT_LINE_DEFAULTS = {
  dispersionNmPerPx: MATCH_LINES_DEFAULTS.dispersionNmPerPx as readonly [number, number],
  seedPeaks: 6,
  seedFeatures: [12, 12, 2] as readonly [number, number, number],
  seenRangeNm: [400, 700] as readonly [number, number],
  tolerancePx: 2,
  minToleranceNm: 0.5,
  scoredPeaks: 16,
  keep: 3,
  minMatches: 4,
  surelySeenNm: [420, 680] as readonly [number, number],
} as const;

/**
 * A scored peak on none of the species' features costs this much (nats): a peak of the tube's own gas lands on a
 * feature, so a scale that leaves most bright peaks unexplained is unlikely (ln of 1/(1 − f) for a share f ≈ 0.6 of
 * peaks from the gas).
 */
const UNMATCHED_NATS = 1;
/** Least wavelength span of a tube's peaks (nm; common practice, no source: its lines spread across the visible). */
const MIN_PEAK_SPAN_NM = 80;
/** A peak put outside what a camera sees costs more: no line can be there. */
const OUTSIDE_NATS = 3;

/**
 * Scale hypotheses from intensity ranks, complementing the spacing-ratio matcher for species with few lines: the
 * brightest peaks of a tube are its strongest lines, so each triple of the brightest peaks is put on each triple of
 * the species' strongest features (either direction of dispersion), the quadratic scale through them kept when its
 * dispersion and curvature are plausible, and scored: each of the brightest peaks on a feature earns its likelihood
 * ratio under the species' prior weights (matchCredit; the camera's response taken into account), each off every
 * feature costs UNMATCHED_NATS, and each strong feature the scale puts inside the spectrum with no peak near costs
 * MISSING_NATS. The best few per species are grown — nearest peaks first, each matched to its likeliest feature and
 * the scale refitted — polished (outliers clipped, all peaks matched again within a tight tolerance), and go on, with
 * all their matches, to be fitted and judged by the identification on their scale.
 */
export function brightLineScales(
  peaks: readonly Peak[],
  lines: readonly SpectralLine[],
  elements: readonly string[],
  cameraRangeNm: readonly [number, number],
  options: BrightLineOptions = {},
): BrightLineScale[] {
  const o = { ...BRIGHT_LINE_DEFAULTS, ...Object.fromEntries(Object.entries(options).filter(([, v]) => v !== undefined)) };
  const [dMinGiven, dMax] = o.dispersionNmPerPx;
  // A photo of a tube through a grating spans a good part of the visible: the peaks spread over fewer than
  // MIN_PEAK_SPAN_NM would be a scale squeezed onto a line-rich stretch of some table.
  const positions = peaks.map((p) => p.positionPx).filter(Number.isFinite);
  const peakSpanPx = positions.length ? Math.max(...positions) - Math.min(...positions) : 0;
  const dMin = Math.max(dMinGiven, peakSpanPx > 0 ? MIN_PEAK_SPAN_NM / peakSpanPx : 0);
  const wanted = new Set(elements);
  const templates = buildSpeciesTemplates(
    lines.filter((l) => wanted.has(l.element) && (l as { kind?: string }).kind !== 'band-head'),
    { rangeNm: cameraRangeNm, resolutionNm: 1 },
  );
  const byArea = [...peaks].filter((p) => Number.isFinite(p.positionPx)).sort((a, b) => b.area - a.area);
  const seeds = byArea.slice(0, o.seedPeaks);
  // The brightest peaks are scored (a tube's brightest peaks are its gas's lines; faint ones may be anything).
  const xs = Float64Array.from(byArea.slice(0, o.scoredPeaks), (p) => p.positionPx);
  // Every peak along the band (ascending), and a buffer for their wavelengths on a hypothesis (the missing-line test).
  const allX = Float64Array.from(byArea, (p) => p.positionPx).sort();
  const mapped = new Float64Array(allX.length);
  const tols = new Float64Array(allX.length);
  const out: BrightLineScale[] = [];
  for (const t of templates) {
    const order = t.features.map((_, k) => k).sort((a, b) => t.weights[b] - t.weights[a]);
    // Seeds are what a camera shows brightest: the strongest features in the well-seen window (a table's strongest
    // line may sit in the near UV or infrared, where a phone hardly sees it), a few per spectrum there too (a
    // neutral spectrum's visible lines may trail the ion's in weight), and a few beyond the visible edge for a
    // webcam without an infrared-cut filter.
    const seen = (k: number) => t.features[k].wavelengthNm >= o.seenRangeNm[0] && t.features[k].wavelengthNm <= o.seenRangeNm[1];
    const visible = order.filter(seen).slice(0, o.seedFeatures[0]);
    const perSpectrum = [...new Set(t.features.map((f) => f.spectrum))].flatMap((name) =>
      order.filter((k) => t.features[k].spectrum === name && seen(k)).slice(0, o.seedFeatures[1]),
    );
    const infrared = order.filter((k) => t.features[k].wavelengthNm > o.seenRangeNm[1]).slice(0, o.seedFeatures[2]);
    const top = [...new Set([...visible, ...perSpectrum, ...infrared])];
    const featureNm = Float64Array.from(t.features, (f) => f.wavelengthNm);
    const strongNm = strongFeatureNm(t.features, o.surelySeenNm);
    // What a peak is, a priori: the template's weight times the camera's relative response there (seenWeights).
    const seenW = seenWeights(t.features, t.weights, o.seenRangeNm);
    // Most prior weight a match can collect (three features inside one tolerance at most): the early stop's bound.
    const windowWeight = [...seenW].sort((a, b) => b - a).slice(0, 3).reduce((a, b) => a + b, 0);
    let tried = 0;
    const found: Hypothesis[] = [];
    // Three seed peaks on three seed features (in either order along the band) fix a quadratic scale exactly; it
    // must have a plausible dispersion and change it by at most MAX_CURVATURE across the seeds. Each such scale is
    // scored by the peaks that land on a feature within the tolerance (widening beyond the seeds).
    const sortedTop = [...top].sort((a, b) => featureNm[a] - featureNm[b]);
    const topNm = Float64Array.from(sortedTop, (k) => featureNm[k]);
    const q: Quadratic = { a: 0, b: 0, c: 0 };
    for (let i = 0; i < seeds.length; i++) {
      for (let j = i + 1; j < seeds.length; j++) {
        for (let k = j + 1; k < seeds.length; k++) {
          const trio = [seeds[i], seeds[j], seeds[k]].map((p) => p.positionPx).sort((a, b) => a - b);
          if (trio[1] - trio[0] < 1 || trio[2] - trio[1] < 1) continue;
          // Seeds bunched on a short stretch fix no scale across the band: its extrapolation would be guesswork.
          if (trio[2] - trio[0] < MIN_SEED_SPAN * peakSpanPx) continue;
          const span = trio[2] - trio[0];
          // Two seeds close together fix no curvature (their centroid errors would): then a straight line through
          // all three, within the tolerance, with the chord's allowance for curvature in scoring.
          const close = Math.min(trio[1] - trio[0], trio[2] - trio[1]) < CLOSE_SEEDS * span;
          const nTop = sortedTop.length;
          for (let f = 0; f < nTop; f++) {
            for (let h = f + 2; h < nTop; h++) {
              // The outer seeds alone fix the chord's dispersion: most feature pairs fail it, before any middle.
              const chord = (featureNm[sortedTop[h]] - featureNm[sortedTop[f]]) / span;
              if (chord < dMin / 1.5 || chord > dMax * 1.5) continue;
              // The middle seed's feature lies near the chord: within what the allowed curvature bends it by.
              const bendNm = (0.6 * MAX_CURVATURE * chord * (trio[1] - trio[0]) * (trio[2] - trio[1])) / span;
              const windowNm = Math.max(bendNm, 2 * Math.max(o.tolerancePx * chord, o.minToleranceNm));
              for (let dir = 0; dir < 2; dir++) {
                const reversed = dir === 1;
                const l0 = topNm[reversed ? h : f];
                const l2 = topNm[reversed ? f : h];
                const chordNm = l0 + ((l2 - l0) * (trio[1] - trio[0])) / span;
                const gFirst = Math.max(f + 1, lowerBound(topNm, chordNm - windowNm));
                const gEnd = Math.min(h, lowerBound(topNm, chordNm + windowNm + 1e-9));
                for (let g = gFirst; g < gEnd; g++) {
                  const l1 = topNm[g];
                  if (!(close ? lineThrough(trio, l0, l1, l2, q) : quadraticThrough(trio, l0, l1, l2, q))) continue;
                  const s0 = q.b + 2 * q.c * trio[0];
                  const s2 = q.b + 2 * q.c * trio[2];
                  const mid = Math.abs(q.b + q.c * (trio[0] + trio[2]));
                  if (!(mid >= dMin && mid <= dMax) || Math.sign(s0) !== Math.sign(s2)) continue;
                  if (Math.abs(s2 - s0) > MAX_CURVATURE * mid) continue;
                  // A grating's |dλ/dx| falls towards the red (scaleFit.ts: gratingLikeCurvature), within the seeds'
                  // centroid errors.
                  if (!close) {
                    const blueFirst = l0 < l2;
                    const fall = (Math.abs(blueFirst ? s0 : s2) - Math.abs(blueFirst ? s2 : s0)) / mid;
                    if (fall > MAX_FALL_PER_NM * Math.abs(l2 - l0) + SEED_CURVATURE_SLACK || fall < -MAX_RISE - SEED_CURVATURE_SLACK) continue;
                  }
                  const base = Math.max(o.tolerancePx * mid, o.minToleranceNm);
                  if (
                    close &&
                    (Math.abs(q.a + q.b * trio[0] - l0) > base || Math.abs(q.a + q.b * trio[1] - l1) > base || Math.abs(q.a + q.b * trio[2] - l2) > base)
                  ) {
                    continue;
                  }
                  tried++;
                  // Each peak on a feature counts by its likelihood ratio against a peak at a random wavelength
                  // (matchCredit): a strong line of the species' main spectrum earns more than a faint ion line, a
                  // wide tolerance (a coarse scale) less.
                  let count = 0;
                  let score = 0;
                  // Kept only if among the best GROWN_PER_ELEMENT so far: stop once even a perfect rest cannot get there.
                  const bar = found.length >= GROWN_PER_ELEMENT ? worstKept(found) : -Infinity;
                  const spanNm = mid * peakSpanPx;
                  const maxCredit = Math.min(MAX_CREDIT_NATS, Math.log((spanNm * windowWeight) / (2 * base)));
                  for (let m = 0; m < xs.length; m++) {
                    if (score + (xs.length - m) * maxCredit < bar) break;
                    const x = xs[m];
                    const beyond = x < trio[0] ? trio[0] - x : x > trio[2] ? x - trio[2] : 0;
                    const bend = close ? curvatureNm(x, trio[0], trio[2], mid) : 0.5 * DRIFT_PER_PX * beyond * beyond * mid;
                    const tol = base + bend;
                    const at = q.a + q.b * x + q.c * x * x;
                    if (at < cameraRangeNm[0] || at > cameraRangeNm[1]) score -= OUTSIDE_NATS;
                    else if (nearestWithin(featureNm, at, tol) >= 0) {
                      count++;
                      score += matchCredit(featureNm, seenW, at, tol, spanNm);
                    } else score -= UNMATCHED_NATS;
                  }
                  if (count >= o.minMatches && score >= bar) score -= missingNats(strongNm, allX, mapped, tols, q, base, close, trio, mid);
                  if (count >= o.minMatches && score >= bar) {
                    const idx = reversed ? [sortedTop[h], sortedTop[g], sortedTop[f]] : [sortedTop[f], sortedTop[g], sortedTop[h]];
                    keepBest(found, { score, seeds: trio.map((x, n) => [x, idx[n]] as [number, number]) });
                  }
                }
              }
            }
          }
        }
      }
    }
    if (tried === 0) continue;
    found.sort((p, q) => q.score - p.score);
    const grown: Array<{ points: CalibrationPoint[]; model: PolynomialModel }> = [];
    // The best few grown, ranked again on their grown scales (a good seed triple may have scored low on its own).
    const candidates: Array<{ points: CalibrationPoint[]; model: PolynomialModel; score: number }> = [];
    for (const h of found.slice(0, GROWN_PER_ELEMENT)) {
      // Seeds that already sit on a grown scale grow into it again: skipped (most of the best hypotheses are one
      // scale seeded by different triples).
      if (candidates.some((c) => seedsOnModel(h, c.model, featureNm, o))) continue;
      const g = grow(h, byArea, t.features, featureNm, t.weights, o);
      if (!g || g.points.length < o.minMatches) continue;
      candidates.push({ ...g, score: modelScore(g.model, xs, featureNm, seenW, peakSpanPx, o, cameraRangeNm) - missingNatsOfModel(strongNm, allX, mapped, tols, g.model, o) });
    }
    candidates.sort((a, b) => b.score - a.score);
    for (const g of candidates) {
      if (grown.some((x) => sameModel(x.model, g.model, xs))) continue;
      grown.push(g);
      if (grown.length >= o.keep) break;
    }
    for (const g of grown) out.push({ element: t.element, points: g.points, searchNats: Math.log(tried) });
  }
  return out;
}

interface Hypothesis {
  score: number;
  /** [position px, feature index] of the seed peaks. */
  seeds: Array<[number, number]>;
}

/**
 * Relative change of the dispersion per pixel allowed when extrapolating a scale (2 % over 100 px, about what a
 * grating and a phone lens give; common practice, no source): a line d px beyond the fitted ones may be off by
 * ½ κ d² |dλ/dx|.
 */
const DRIFT_PER_PX = 2e-4;
/**
 * How far a straight line through two lines at x0 and x1 may be from a scale whose dispersion changes by DRIFT_PER_PX
 * per pixel: ½ κ |(x − x0)(x − x1)| |dλ/dx| (the deviation of a parabola from its chord, and from its tangent
 * beyond the ends).
 */
function curvatureNm(x: number, x0: number, x1: number, slope: number): number {
  return 0.5 * DRIFT_PER_PX * Math.abs((x - x0) * (x - x1)) * slope;
}

/** Most the dispersion may change across three seed lines, as a share of its value (common practice, no source). */
const MAX_CURVATURE = 0.3;

/** One match is worth at most this much (nats): a strong feature hit within a tight tolerance. */
const MAX_CREDIT_NATS = 4;
/** Slack on the seeds' grating-curvature test for their centroid errors (share of the dispersion). */
const SEED_CURVATURE_SLACK = 0.05;

/** The lowest score among the kept hypotheses (the list holds at most GROWN_PER_ELEMENT). */
function worstKept(found: readonly Hypothesis[]): number {
  let w = Infinity;
  for (const h of found) w = Math.min(w, h.score);
  return w;
}

/** Adds a hypothesis, dropping the worst once GROWN_PER_ELEMENT are held. */
function keepBest(found: Hypothesis[], h: Hypothesis): void {
  if (found.length < GROWN_PER_ELEMENT) {
    found.push(h);
    return;
  }
  let k = 0;
  for (let i = 1; i < found.length; i++) if (found[i].score < found[k].score) k = i;
  if (h.score > found[k].score) found[k] = h;
}

/** Seed peaks must span at least this share of the peaks' extent (common practice, no source). */
const MIN_SEED_SPAN = 0.25;

/** Seeds closer than this share of their span fix no curvature. */
const CLOSE_SEEDS = 0.15;

/** A scale λ = a + b x + c x², written in place (the search tries tens of thousands). */
interface Quadratic {
  a: number;
  b: number;
  c: number;
}

/** Least-squares straight line λ = a + b x (c = 0) through three points, into `out`; false when degenerate. */
function lineThrough(x: readonly number[], y0: number, y1: number, y2: number, out: Quadratic): boolean {
  const mx = (x[0] + x[1] + x[2]) / 3;
  const my = (y0 + y1 + y2) / 3;
  const sxx = (x[0] - mx) ** 2 + (x[1] - mx) ** 2 + (x[2] - mx) ** 2;
  const sxy = (x[0] - mx) * (y0 - my) + (x[1] - mx) * (y1 - my) + (x[2] - mx) * (y2 - my);
  if (!(sxx > 0)) return false;
  out.b = sxy / sxx;
  out.a = my - out.b * mx;
  out.c = 0;
  return true;
}

/** λ = a + b x + c x² through three points, into `out`; false when two positions coincide. */
function quadraticThrough(x: readonly number[], y0: number, y1: number, y2: number, out: Quadratic): boolean {
  const [x0, x1, x2] = x;
  const d01 = (y1 - y0) / (x1 - x0);
  const d12 = (y2 - y1) / (x2 - x1);
  const c = (d12 - d01) / (x2 - x0);
  const b = d01 - c * (x0 + x1);
  const a = y0 - b * x0 - c * x0 * x0;
  out.a = a;
  out.b = b;
  out.c = c;
  return Number.isFinite(a) && Number.isFinite(b) && Number.isFinite(c);
}

/** Three-point hypotheses grown into full assignments, per element. */
const GROWN_PER_ELEMENT = 12;

/**
 * Grows a two-seed hypothesis: peaks nearest the assigned span first, each matched to the nearest unused single-line
 * feature within a tolerance that widens with the extrapolation, the scale refitted (linear, then quadratic) after
 * every match.
 */
function grow(
  h: Hypothesis,
  peaks: readonly Peak[],
  features: ReadonlyArray<{ lines: readonly SpectralLine[]; wavelengthNm: number; spreadSigmaNm: number }>,
  featureNm: Float64Array,
  weights: Float64Array,
  o: { tolerancePx: number; minToleranceNm: number },
): { points: CalibrationPoint[]; model: PolynomialModel } | null {
  const assigned = new Map<number, number>(); // peak index → feature index
  const used = new Set<number>();
  const seedIndex = h.seeds.map(([x]) => peaks.findIndex((p) => p.positionPx === x));
  h.seeds.forEach(([, f], k) => {
    assigned.set(seedIndex[k], f);
    used.add(f);
  });
  const all = peaks.map((p) => p.positionPx);
  const extentPx = Math.max(...all) - Math.min(...all);
  let model = refit(assigned, peaks, featureNm, extentPx);
  if (!model) return null;
  const pending = peaks.map((_, i) => i).filter((i) => !assigned.has(i));
  while (pending.length > 0) {
    const xsAssigned = [...assigned.keys()].map((i) => peaks[i].positionPx);
    const lo = Math.min(...xsAssigned);
    const hi = Math.max(...xsAssigned);
    const distOf = (i: number) => {
      const x = peaks[i].positionPx;
      return x < lo ? lo - x : x > hi ? x - hi : 0;
    };
    pending.sort((a, b) => distOf(a) - distOf(b));
    const i = pending.shift()!;
    const x = peaks[i].positionPx;
    const slope = Math.abs(polynomialDispersionNmPerPx(model, x)) || 1;
    const tol = Math.max(o.tolerancePx * slope, o.minToleranceNm) + (model.degree < 2 ? curvatureNm(x, lo, hi, slope) : 0.5 * DRIFT_PER_PX * distOf(i) ** 2 * slope);
    const k = likeliestWithin(featureNm, weights, polynomialWavelengthNm(model, x), tol);
    if (k < 0 || used.has(k)) continue;
    // A feature with a neighbour within the line width (on this scale) is a blend here: its peak lies between them.
    const widthNm = 1.2 * peaks[i].fwhmPx * slope;
    if ((k > 0 && featureNm[k] - featureNm[k - 1] < widthNm) || (k + 1 < featureNm.length && featureNm[k + 1] - featureNm[k] < widthNm)) continue;
    assigned.set(i, k);
    const next = refit(assigned, peaks, featureNm, extentPx);
    // A match that bends the scale the way no grating does is wrong (a neighbouring line taken at the far end).
    if (!next || (next.degree === 2 && !gratingLikeCurvature(next, [...assigned].map(([pi, fk]) => ({ positionPx: peaks[pi].positionPx, wavelengthNm: featureNm[fk] }))))) {
      assigned.delete(i);
      continue;
    }
    used.add(k);
    model = next;
  }
  model = polish(assigned, peaks, featureNm, weights, model, extentPx, o);
  // A blend of lines closer than half the line width is never resolved: its peak sits at the flux centroid, which
  // the lamp's unknown ratios put anywhere across the blend. It calibrates there with the centroid's spread as the
  // reference uncertainty, so it weighs less than a single line but still holds the scale where it is (krypton's
  // 556.2/557.0 nm pair in the green, between its blue lines and 587 nm). A wider blend may come out as a shoulder.
  const points: CalibrationPoint[] = [];
  for (const [i, k] of assigned) {
    const p = peaks[i];
    const single = features[k].lines.length === 1;
    if (!single && blendExtentNm(features[k].lines) > 0.5 * p.fwhmPx * Math.abs(polynomialDispersionNmPerPx(model, p.positionPx))) continue;
    points.push({
      positionPx: p.positionPx,
      positionUncertaintyPx: p.positionUncertaintyPx,
      wavelengthNm: single ? features[k].lines[0].wavelengthNm : features[k].wavelengthNm,
      ...(single ? {} : { referenceUncertaintyNm: features[k].spreadSigmaNm }),
      source: 'matched',
      saturated: p.saturated,
      blended: p.blended,
    });
  }
  return { points, model };
}

/** The hypothesis score (see brightLineScales) of a grown scale: fitted across its lines, so no allowance for bending. */
function modelScore(
  model: PolynomialModel,
  xs: Float64Array,
  featureNm: Float64Array,
  weights: Float64Array,
  peakSpanPx: number,
  o: { tolerancePx: number; minToleranceNm: number },
  cameraRangeNm: readonly [number, number],
): number {
  let score = 0;
  let lo = Infinity;
  let hi = -Infinity;
  for (const x of xs) {
    lo = Math.min(lo, x);
    hi = Math.max(hi, x);
  }
  const spanNm = Math.abs(polynomialDispersionNmPerPx(model, (lo + hi) / 2)) * peakSpanPx;
  for (const x of xs) {
    const at = polynomialWavelengthNm(model, x);
    const tol = Math.max(o.tolerancePx * Math.abs(polynomialDispersionNmPerPx(model, x)), o.minToleranceNm);
    if (at < cameraRangeNm[0] || at > cameraRangeNm[1]) score -= OUTSIDE_NATS;
    else if (nearestWithin(featureNm, at, tol) >= 0) score += matchCredit(featureNm, weights, at, tol, spanNm);
    else score -= UNMATCHED_NATS;
  }
  return score;
}

/**
 * Relative response of a camera outside the range every camera sees well (common practice, no source): a phone's
 * infrared-cut filter passes little beyond 700 nm and the blue response falls below 400 nm; a webcam without the
 * filter sees the near infrared, which this allows for rather than assumes.
 */
const OUTSIDE_SEEN_RESPONSE = 0.2;

/** The template's prior weights times the camera's relative response (1 inside `seen`, OUTSIDE_SEEN_RESPONSE beyond). */
function seenWeights(features: ReadonlyArray<{ wavelengthNm: number }>, weights: Float64Array, seen: readonly [number, number]): Float64Array {
  const out = Float64Array.from(weights);
  let total = 0;
  features.forEach((f, k) => {
    if (f.wavelengthNm < seen[0] || f.wavelengthNm > seen[1]) out[k] *= OUTSIDE_SEEN_RESPONSE;
    total += out[k];
  });
  for (let k = 0; k < out.length; k++) out[k] /= total || 1;
  return out;
}

/**
 * What a peak at λ on a feature is worth (nats): the likelihood ratio of "a line of this species" — the prior weights
 * w_f of its features within the tolerance, spread over 2·tol — against "a peak at a random wavelength in the span
 * W the peaks cover", ln(W Σ w_f / 2 tol) (the box-kernel form of identifySpecies' position term). A faint line of a
 * minor spectrum may be worth less than nothing; it then costs as an unmatched peak does. At most MAX_CREDIT_NATS.
 */
function matchCredit(featureNm: Float64Array, weights: Float64Array, at: number, tol: number, spanNm: number): number {
  let w = 0;
  for (let k = lowerBound(featureNm, at - tol); k < featureNm.length && featureNm[k] <= at + tol; k++) w += weights[k];
  return Math.max(-UNMATCHED_NATS, Math.min(MAX_CREDIT_NATS, Math.log((spanNm * w) / (2 * tol))));
}

/** Whether every seed of a hypothesis lies on `model` within the matching tolerance. */
function seedsOnModel(h: Hypothesis, model: PolynomialModel, featureNm: Float64Array, o: { tolerancePx: number; minToleranceNm: number }): boolean {
  return h.seeds.every(([x, k]) => {
    const tol = Math.max(o.tolerancePx * Math.abs(polynomialDispersionNmPerPx(model, x)), o.minToleranceNm);
    return Math.abs(polynomialWavelengthNm(model, x) - featureNm[k]) <= tol;
  });
}

function blendExtentNm(lines: readonly SpectralLine[]): number {
  let lo = Infinity;
  let hi = -Infinity;
  for (const l of lines) {
    lo = Math.min(lo, l.wavelengthNm);
    hi = Math.max(hi, l.wavelengthNm);
  }
  return hi - lo;
}

/** Growth's residuals beyond 3 robust σ are clipped, but never below this (px). */
const POLISH_FLOOR_PX = 0.5;
/** The rematch on the clipped scale takes a peak within this many px of a feature. */
const POLISH_TOLERANCE_PX = 1.5;

/**
 * Growth takes each peak within a tolerance widened for extrapolation, so at the ends of the band a faint neighbouring
 * line (an ion line beside a neutral one, or a line the list lacks beside one it has) can be taken and bend the scale.
 * The grown scale is polished: the worst residual beyond 3 robust σ (1.4826 × the median |residual|, at least
 * POLISH_FLOOR_PX) is dropped and the scale refitted, up to three times; then every peak is matched again, brightest
 * first, within POLISH_TOLERANCE_PX of the clipped scale, and that assignment kept when it holds at least as many
 * lines and bends as a grating does. `assigned` is updated in place.
 */
function polish(
  assigned: Map<number, number>,
  peaks: readonly Peak[],
  featureNm: Float64Array,
  weights: Float64Array,
  model: PolynomialModel,
  extentPx: number,
  o: { minToleranceNm: number },
): PolynomialModel {
  const residualPx = (i: number, k: number, m: PolynomialModel) =>
    Math.abs(featureNm[k] - polynomialWavelengthNm(m, peaks[i].positionPx)) / (Math.abs(polynomialDispersionNmPerPx(m, peaks[i].positionPx)) || 1);
  for (let round = 0; round < 3 && assigned.size > 4; round++) {
    let worst = -1;
    let worstR = 0;
    const rs: number[] = [];
    for (const [i, k] of assigned) {
      const r = residualPx(i, k, model);
      rs.push(r);
      if (r > worstR) {
        worstR = r;
        worst = i;
      }
    }
    rs.sort((a, b) => a - b);
    if (worstR <= Math.max(3 * 1.4826 * rs[rs.length >> 1], POLISH_FLOOR_PX)) break;
    const k = assigned.get(worst)!;
    assigned.delete(worst);
    const next = refit(assigned, peaks, featureNm, extentPx);
    if (!next) {
      assigned.set(worst, k);
      break;
    }
    model = next;
  }
  const tight = new Map<number, number>();
  const taken = new Set<number>();
  for (let i = 0; i < peaks.length; i++) {
    const x = peaks[i].positionPx;
    const slope = Math.abs(polynomialDispersionNmPerPx(model, x)) || 1;
    const k = likeliestWithin(featureNm, weights, polynomialWavelengthNm(model, x), Math.max(POLISH_TOLERANCE_PX * slope, 0.5 * o.minToleranceNm));
    if (k < 0 || taken.has(k)) continue;
    const widthNm = 1.2 * peaks[i].fwhmPx * slope;
    if ((k > 0 && featureNm[k] - featureNm[k - 1] < widthNm) || (k + 1 < featureNm.length && featureNm[k + 1] - featureNm[k] < widthNm)) continue;
    tight.set(i, k);
    taken.add(k);
  }
  if (tight.size < assigned.size) return model;
  const next = refit(tight, peaks, featureNm, extentPx);
  if (!next || (next.degree === 2 && !gratingLikeCurvature(next, [...tight].map(([pi, fk]) => ({ positionPx: peaks[pi].positionPx, wavelengthNm: featureNm[fk] }))))) return model;
  assigned.clear();
  for (const [i, k] of tight) assigned.set(i, k);
  return next;
}

/** Linear until four lines span 40 % of the peaks' extent: a curvature from clustered lines extrapolates wildly. */
function refit(assigned: Map<number, number>, peaks: readonly Peak[], featureNm: Float64Array, extentPx: number): PolynomialModel | null {
  const pts = [...assigned].map(([i, k]) => ({ xPx: peaks[i].positionPx, wavelengthNm: featureNm[k], weight: 1 }));
  const xs = pts.map((p) => p.xPx);
  const span = Math.max(...xs) - Math.min(...xs);
  const degree = pts.length >= 4 && span >= 0.4 * extentPx ? 2 : 1;
  return fitPolynomial(pts, Math.min(degree, pts.length - 1))?.model ?? null;
}

function sameModel(p: PolynomialModel, q: PolynomialModel, xs: Float64Array): boolean {
  let lo = Infinity;
  let hi = -Infinity;
  for (const x of xs) {
    lo = Math.min(lo, x);
    hi = Math.max(hi, x);
  }
  const tol = 2 * Math.abs(polynomialDispersionNmPerPx(p, (lo + hi) / 2));
  return [lo, (lo + hi) / 2, hi].every((x) => Math.abs(polynomialWavelengthNm(p, x) - polynomialWavelengthNm(q, x)) <= tol);
}

/**
 * A strong feature is one of the species' neutral spectrum (in the glow of a discharge tube it dominates, as
 * speciesTemplates.ts assumes; the ion's share varies from tube to tube) tabulated at least this share of that
 * spectrum's strongest where every camera sees: with lamp and camera scatter of a factor of 3 each way it still comes
 * out among the clearly visible peaks (common practice, no source).
 */
const STRONG_SHARE = 0.25;
/**
 * A strong feature that a scale puts inside the spectrum with no peak near it costs this much (nats): ln of the chance
 * that a random scale puts no peak there (about 0.9) over the chance that a real lamp lacks a strong line (a table
 * error, a filter, a blend the peak finder split: about 0.2; common practice, no source).
 */
const MISSING_NATS = 1.5;
/** Strong features nearer than this share of the covered span to its ends are not required (the camera's edges fade). */
const MISSING_EDGE_SHARE = 0.05;

/** Wavelengths of the strong features (see STRONG_SHARE) inside `window`, ascending. */
function strongFeatureNm(features: ReadonlyArray<{ wavelengthNm: number; relative: number; spectrum: string }>, window: readonly [number, number]): Float64Array {
  const all = features.filter((f) => f.wavelengthNm >= window[0] && f.wavelengthNm <= window[1]);
  const neutral = all.filter((f) => / I$/.test(f.spectrum));
  const inside = neutral.length > 0 ? neutral : all;
  if (inside.length === 0) return new Float64Array(0);
  const top = inside.reduce((a, b) => (b.relative > a.relative ? b : a));
  return Float64Array.from(
    inside.filter((f) => f.spectrum === top.spectrum && f.relative >= STRONG_SHARE * top.relative),
    (f) => f.wavelengthNm,
  );
}

/**
 * How many strong features lie inside the span of `mappedNm` (ascending peak wavelengths on a scale, trimmed by
 * MISSING_EDGE_SHARE) with no peak within that peak's tolerance `tolNm`, times MISSING_NATS.
 */
function missingFrom(strongNm: Float64Array, mappedNm: Float64Array, tolNm: Float64Array): number {
  const n = mappedNm.length;
  if (n === 0 || strongNm.length === 0) return 0;
  const margin = MISSING_EDGE_SHARE * (mappedNm[n - 1] - mappedNm[0]);
  let missing = 0;
  for (let k = 0; k < strongNm.length; k++) {
    const w = strongNm[k];
    if (w < mappedNm[0] + margin || w > mappedNm[n - 1] - margin) continue;
    const i = lowerBound(mappedNm, w);
    const near = (i < n && mappedNm[i] - w <= tolNm[i]) || (i > 0 && w - mappedNm[i - 1] <= tolNm[i - 1]);
    if (!near) missing++;
  }
  return missing * MISSING_NATS;
}

/**
 * The missing-feature cost of a seed hypothesis λ = a + b x + c x²: every peak mapped (ascending in wavelength), each
 * with the hypothesis' matching tolerance at its position (the base tolerance widened for curvature, as in scoring).
 */
function missingNats(
  strongNm: Float64Array,
  allX: Float64Array,
  mapped: Float64Array,
  tols: Float64Array,
  q: Quadratic,
  base: number,
  close: boolean,
  trio: readonly number[],
  mid: number,
): number {
  const n = allX.length;
  const descending = q.a + q.b * allX[n - 1] + q.c * allX[n - 1] * allX[n - 1] < q.a + q.b * allX[0] + q.c * allX[0] * allX[0];
  for (let i = 0; i < n; i++) {
    const x = allX[descending ? n - 1 - i : i];
    const beyond = x < trio[0] ? trio[0] - x : x > trio[2] ? x - trio[2] : 0;
    mapped[i] = q.a + q.b * x + q.c * x * x;
    tols[i] = base + (close ? curvatureNm(x, trio[0], trio[2], mid) : 0.5 * DRIFT_PER_PX * beyond * beyond * mid);
  }
  return missingFrom(strongNm, mapped, tols);
}

/** The missing-feature cost of a grown scale (tolerance as in modelScore). */
function missingNatsOfModel(
  strongNm: Float64Array,
  allX: Float64Array,
  mapped: Float64Array,
  tols: Float64Array,
  model: PolynomialModel,
  o: { tolerancePx: number; minToleranceNm: number },
): number {
  const n = allX.length;
  const descending = polynomialWavelengthNm(model, allX[n - 1]) < polynomialWavelengthNm(model, allX[0]);
  for (let i = 0; i < n; i++) {
    const x = allX[descending ? n - 1 - i : i];
    mapped[i] = polynomialWavelengthNm(model, x);
    tols[i] = Math.max(o.tolerancePx * Math.abs(polynomialDispersionNmPerPx(model, x)), o.minToleranceNm);
  }
  return missingFrom(strongNm, mapped, tols);
}

function lowerBound(sorted: Float64Array, v: number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (sorted[mid] < v) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/**
 * Of the features within `tol` of `v`, the one a peak there most likely is: prior weight (template weights) times a
 * Gaussian in the distance with σ = tol / 2 (the tolerance is a 2σ bound). Far from the fitted lines the tolerance
 * takes in several features, and the nearest may be a faint ion line beside a strong neutral one.
 */
function likeliestWithin(sorted: Float64Array, weights: Float64Array, v: number, tol: number): number {
  let best = -1;
  let bestL = -Infinity;
  for (let k = lowerBound(sorted, v - tol); k < sorted.length && sorted[k] <= v + tol; k++) {
    const z = (2 * (sorted[k] - v)) / tol;
    const l = Math.log(weights[k]) - 0.5 * z * z;
    if (l > bestL) {
      bestL = l;
      best = k;
    }
  }
  return best;
}

function nearestWithin(sorted: Float64Array, v: number, tol: number): number {
  const lo = lowerBound(sorted, v);
  let best = -1;
  let bestD = tol;
  for (const k of [lo - 1, lo]) {
    if (k < 0 || k >= sorted.length) continue;
    const d = Math.abs(sorted[k] - v);
    if (d <= bestD) {
      bestD = d;
      best = k;
    }
  }
  return best;
}

