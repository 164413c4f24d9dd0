import type { CalibrationPoint } from '../calibration/fitDispersion.js';
import {
  fitPolynomial,
  polynomialDispersionNmPerPx,
  polynomialWavelengthNm,
  type PolynomialModel,
} from '../calibration/polynomialModel.js';
import type { Peak, SpectralLine } from '../types.js';
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
   * The strongest features of the species that seed hypotheses: so many below `visibleEdgeNm` per spectrum, and so
   * many above it: a phone's infrared-cut filter hides the near-infrared lines that dominate some tables (Ar, Kr,
   * Xe), a webcam without one shows them. @default [3, 2]
   */
  seedFeatures?: readonly [number, number];
  /** @default 700 */
  visibleEdgeNm?: number;
  /** A peak matches a line within this many px of the hypothesis' position (at least `minToleranceNm`). @default 2 */
  tolerancePx?: number;
  minToleranceNm?: number;
  /** Hypotheses kept per element. @default 2 */
  keep?: number;
  /** Fewest matched lines a kept hypothesis needs (the two seeds included). @default 4 */
  minMatches?: number;
}

export const BRIGHT_LINE_DEFAULTS = {
  dispersionNmPerPx: [0.05, 2] as readonly [number, number],
  seedPeaks: 6,
  seedFeatures: [3, 2] as readonly [number, number],
  visibleEdgeNm: 700,
  tolerancePx: 2,
  minToleranceNm: 0.5,
  keep: 2,
  minMatches: 4,
} as const;

/**
 * Scale hypotheses from intensity ranks, complementing the spacing-ratio matcher for species with few lines: the
 * brightest peaks of a tube are its strongest lines, so each triple of the brightest peaks is put on each triple of
 * the species' strongest features (either direction of dispersion), the quadratic scale through them kept when its
 * dispersion and curvature are plausible, and scored by how many peaks land on the species' features. The best few
 * per species are grown — nearest peaks first, each matched and the scale refitted — and go on, with all their
 * matches, to be fitted and judged by the identification on their scale.
 */
export function brightLineScales(
  peaks: readonly Peak[],
  lines: readonly SpectralLine[],
  elements: readonly string[],
  cameraRangeNm: readonly [number, number],
  options: BrightLineOptions = {},
): BrightLineScale[] {
  const o = { ...BRIGHT_LINE_DEFAULTS, ...Object.fromEntries(Object.entries(options).filter(([, v]) => v !== undefined)) };
  const [dMin, dMax] = o.dispersionNmPerPx;
  const wanted = new Set(elements);
  const templates = buildSpeciesTemplates(
    lines.filter((l) => wanted.has(l.element) && (l as { kind?: string }).kind !== 'band-head'),
    { rangeNm: cameraRangeNm, resolutionNm: 1 },
  );
  const byArea = [...peaks].filter((p) => Number.isFinite(p.positionPx)).sort((a, b) => b.area - a.area);
  const seeds = byArea.slice(0, o.seedPeaks);
  const xs = Float64Array.from(byArea, (p) => p.positionPx);
  const out: BrightLineScale[] = [];
  for (const t of templates) {
    const order = t.features.map((_, k) => k).sort((a, b) => t.weights[b] - t.weights[a]);
    // Visible seeds per spectrum: a neutral spectrum's strongest lines may lie in the infrared, leaving its visible
    // lines behind the ion's in weight, though a phone sees them best.
    const visible = [...new Set(t.features.map((f) => f.spectrum))].flatMap((name) =>
      order.filter((k) => t.features[k].spectrum === name && t.features[k].wavelengthNm <= o.visibleEdgeNm).slice(0, o.seedFeatures[0]),
    );
    const infrared = order.filter((k) => t.features[k].wavelengthNm > o.visibleEdgeNm).slice(0, o.seedFeatures[1]);
    const top = [...visible, ...infrared];
    const featureNm = Float64Array.from(t.features, (f) => f.wavelengthNm);
    let tried = 0;
    const found: Hypothesis[] = [];
    // Three seed peaks on three seed features (in either order along the band) fix a quadratic scale exactly; it
    // must have a plausible dispersion and change it by at most MAX_CURVATURE across the seeds. Each such scale is
    // scored by the peaks that land on a feature within the tolerance (widening beyond the seeds).
    const sortedTop = [...top].sort((a, b) => featureNm[a] - featureNm[b]);
    for (let i = 0; i < seeds.length; i++) {
      for (let j = i + 1; j < seeds.length; j++) {
        for (let k = j + 1; k < seeds.length; k++) {
          const trio = [seeds[i], seeds[j], seeds[k]].map((p) => p.positionPx).sort((a, b) => a - b);
          if (trio[1] - trio[0] < 1 || trio[2] - trio[1] < 1) continue;
          for (let f = 0; f < sortedTop.length; f++) {
            for (let g = f + 1; g < sortedTop.length; g++) {
              for (let h = g + 1; h < sortedTop.length; h++) {
                const lams = [featureNm[sortedTop[f]], featureNm[sortedTop[g]], featureNm[sortedTop[h]]];
                for (const reversed of [false, true]) {
                  const l = reversed ? [lams[2], lams[1], lams[0]] : lams;
                  // Two seeds close together fix no curvature (their centroid errors would): then a straight line
                  // through all three, within the tolerance, with the chord's allowance for curvature in scoring.
                  const span = trio[2] - trio[0];
                  const close = Math.min(trio[1] - trio[0], trio[2] - trio[1]) < CLOSE_SEEDS * span;
                  const q = close ? lineThrough(trio, l) : quadraticThrough(trio, l);
                  if (!q) continue;
                  const s0 = q.b + 2 * q.c * trio[0];
                  const s2 = q.b + 2 * q.c * trio[2];
                  const mid = Math.abs(q.b + q.c * (trio[0] + trio[2]));
                  if (!(mid >= dMin && mid <= dMax) || Math.sign(s0) !== Math.sign(s2)) continue;
                  if (Math.abs(s2 - s0) > MAX_CURVATURE * mid) continue;
                  const base = Math.max(o.tolerancePx * mid, o.minToleranceNm);
                  if (close && trio.some((x, n) => Math.abs(q.a + q.b * x - l[n]) > base)) continue;
                  tried++;
                  let score = 0;
                  for (let m = 0; m < xs.length; m++) {
                    const x = xs[m];
                    const beyond = x < trio[0] ? trio[0] - x : x > trio[2] ? x - trio[2] : 0;
                    const bend = close ? curvatureNm(x, trio[0], trio[2], mid) : 0.5 * DRIFT_PER_PX * beyond * beyond * mid;
                    if (nearestWithin(featureNm, q.a + q.b * x + q.c * x * x, base + bend) >= 0) score++;
                  }
                  if (score >= o.minMatches) {
                    const idx = reversed ? [sortedTop[h], sortedTop[g], sortedTop[f]] : [sortedTop[f], sortedTop[g], sortedTop[h]];
                    found.push({ score, seeds: trio.map((x, n) => [x, idx[n]] as [number, number]) });
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
    for (const h of found.slice(0, GROWN_PER_ELEMENT)) {
      const g = grow(h, byArea, t.features, featureNm, o);
      if (!g || g.points.length < o.minMatches) continue;
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

/** Seeds closer than this share of their span fix no curvature. */
const CLOSE_SEEDS = 0.15;

/** Least-squares straight line λ = a + b x (c = 0) through the points. */
function lineThrough(x: readonly number[], y: readonly number[]): { a: number; b: number; c: number } | null {
  const n = x.length;
  const mx = x.reduce((s, v) => s + v, 0) / n;
  const my = y.reduce((s, v) => s + v, 0) / n;
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    sxx += (x[i] - mx) ** 2;
    sxy += (x[i] - mx) * (y[i] - my);
  }
  if (!(sxx > 0)) return null;
  const b = sxy / sxx;
  return { a: my - b * mx, b, c: 0 };
}

/** λ = a + b x + c x² through three points; null when two positions coincide. */
function quadraticThrough(x: readonly number[], y: readonly number[]): { a: number; b: number; c: number } | null {
  const [x0, x1, x2] = x;
  const d01 = (y[1] - y[0]) / (x1 - x0);
  const d12 = (y[2] - y[1]) / (x2 - x1);
  const c = (d12 - d01) / (x2 - x0);
  const b = d01 - c * (x0 + x1);
  const a = y[0] - b * x0 - c * x0 * x0;
  return Number.isFinite(a) && Number.isFinite(b) && Number.isFinite(c) ? { a, b, c } : null;
}

/** Three-point hypotheses grown into full assignments, per element. */
const GROWN_PER_ELEMENT = 6;

/**
 * Grows a two-seed hypothesis: peaks nearest the assigned span first, each matched to the nearest unused single-line
 * feature within a tolerance that widens with the extrapolation, the scale refitted (linear, then quadratic) after
 * every match.
 */
function grow(
  h: Hypothesis,
  peaks: readonly Peak[],
  features: ReadonlyArray<{ lines: readonly SpectralLine[]; wavelengthNm: number }>,
  featureNm: Float64Array,
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
    const k = nearestWithin(featureNm, polynomialWavelengthNm(model, x), tol);
    if (k < 0 || used.has(k)) continue;
    // A feature with a neighbour within the line width (on this scale) is a blend here: its peak lies between them.
    const widthNm = 1.2 * peaks[i].fwhmPx * slope;
    if ((k > 0 && featureNm[k] - featureNm[k - 1] < widthNm) || (k + 1 < featureNm.length && featureNm[k + 1] - featureNm[k] < widthNm)) continue;
    assigned.set(i, k);
    used.add(k);
    model = refit(assigned, peaks, featureNm, extentPx) ?? model;
  }
  // Only single lines calibrate: a blend has no one wavelength.
  const points: CalibrationPoint[] = [];
  for (const [i, k] of assigned) {
    if (features[k].lines.length > 1) continue;
    const p = peaks[i];
    points.push({
      positionPx: p.positionPx,
      positionUncertaintyPx: p.positionUncertaintyPx,
      wavelengthNm: features[k].lines[0].wavelengthNm,
      source: 'matched',
      saturated: p.saturated,
      blended: p.blended,
    });
  }
  return { points, model };
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

function nearestWithin(sorted: Float64Array, v: number, tol: number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (sorted[mid] < v) lo = mid + 1;
    else hi = mid;
  }
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

