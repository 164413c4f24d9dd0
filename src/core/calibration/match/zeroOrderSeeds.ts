/**
 * Seeds of the line search from the zero order: with the focal length f and the camera axis x0 known (priors from the
 * photo) and light at normal incidence on the grating, the zero order at x_z fixes the first-order scale up to the
 * groove spacing d:
 *
 *   λ(x) = d · sin(α(x)),   α(x) = atan(s (x − x0)/f) − atan(s (x_z − x0)/f),
 *
 * the grating equation (λ = d (sin θi + sin θ), θi = 0) with the diffraction angle measured from the zero order's ray
 * by pinhole projection; s = sign(x − x_z) makes λ grow away from the zero order. One peak taken for one line gives d,
 * and with it every line's position, x(λ) = x0 + s f tan(asin(λ/d) + atan(s (x_z − x0)/f)). A hypothesis that puts at
 * least two more lines on peaks becomes a seed of three pairs (the peak and its two nearest predicted partners) for
 * growSolution, which refits the scale freely from there. The seeds are two-point scales of the family the search
 * counts as its trials (a peak pair and a line pair within the dispersion prior), so they add no trials; they reach
 * solutions the spacing-ratio triplets miss (a sparse lamp, blends among the seed peaks).
 */
import type { ZeroOrderSighting } from '../matchLines.js';
import { type Ctx, nearest, type Pair } from './context.js';

/** Most zero-order seeds handed to the growth (best supported first). */
export const MAX_ZERO_ORDER_SEEDS = 12;
/** A predicted line counts on a peak within this many px, plus this fraction of its distance from the seed peak. */
const SEED_TOLERANCE_PX = 2.5;
const SEED_TOLERANCE_FRACTION = 0.01;
/** Strongest peaks and brightest lines tried. */
const SEED_PEAKS = 16;
const SEED_LINES = 40;

export function zeroOrderSeeds(ctx: Ctx, zero: ZeroOrderSighting, focalLengthPx: number, axisPositionPx: number): { seeds: Pair[][]; tested: number } {
  const { P, px, L, o } = ctx;
  const f = focalLengthPx;
  const x0 = axisPositionPx;
  const xz = zero.positionPx;
  if (!(f > 0) || !Number.isFinite(x0) || !Number.isFinite(xz) || P.length < 3 || L.length < 3) return { seeds: [], tested: 0 };
  const peaks = P.map((p, i) => ({ p, i }))
    .filter(({ p }) => !p.blended && Math.abs(p.x - xz) > 5)
    .sort((a, b) => b.p.strength - a.p.strength)
    .slice(0, SEED_PEAKS);
  const lines = L.map((l, i) => ({ l, i }))
    .sort((a, b) => b.l.rank - a.l.rank)
    .slice(0, SEED_LINES);
  const [dLo, dHi] = o.dispersionNmPerPx;
  const found: Array<{ seed: Pair[]; support: number }> = [];
  let tested = 0;
  for (const { p, i } of peaks) {
    const s = p.x > xz ? 1 : -1;
    if ((o.direction === 'increasing' && s < 0) || (o.direction === 'decreasing' && s > 0)) continue;
    const az = Math.atan((s * (xz - x0)) / f);
    const alpha = Math.atan((s * (p.x - x0)) / f) - az;
    if (!(alpha > 0 && alpha < Math.PI / 2)) continue;
    for (const { l, i: j } of lines) {
      if (p.band && (l.wavelengthNm < p.band[0] || l.wavelengthNm > p.band[1])) continue;
      tested++;
      const d = l.wavelengthNm / Math.sin(alpha);
      // dλ/dx = d cos α · dα/dx, dα/dx = f / (f² + (x − x0)²).
      const dispersion = (d * Math.cos(alpha) * f) / (f * f + (p.x - x0) ** 2);
      if (!(dispersion >= dLo && dispersion <= dHi)) continue;
      // One line per peak: the nearest prediction (blends and dense lists put several lines near one peak).
      const byPeak = new Map<number, { pair: Pair; dist: number; miss: number }>();
      for (let q = 0; q < L.length; q++) {
        if (q === j) continue;
        const ratio = L[q].wavelengthNm / d;
        if (!(ratio > 0 && ratio < 1)) continue;
        const x = x0 + s * f * Math.tan(Math.asin(ratio) + az);
        if (!Number.isFinite(x)) continue;
        const k = nearest(px, x);
        if (k < 0 || k === i) continue;
        const miss = Math.abs(px[k] - x);
        if (miss > SEED_TOLERANCE_PX + SEED_TOLERANCE_FRACTION * Math.abs(x - p.x)) continue;
        const band = P[k].band;
        if (band && (L[q].wavelengthNm < band[0] || L[q].wavelengthNm > band[1])) continue;
        const prev = byPeak.get(k);
        if (!prev || miss < prev.miss) {
          byPeak.set(k, { pair: { peak: k, line: q, x: px[k], lambda: L[q].wavelengthNm, manual: false }, dist: Math.abs(px[k] - p.x), miss });
        }
      }
      if (byPeak.size < 2) continue;
      const partners = [...byPeak.values()].sort((a, b) => a.dist - b.dist).slice(0, 2).map((c) => c.pair);
      found.push({ seed: [{ peak: i, line: j, x: p.x, lambda: l.wavelengthNm, manual: false }, ...partners], support: byPeak.size });
    }
  }
  found.sort((a, b) => b.support - a.support);
  return { seeds: found.slice(0, MAX_ZERO_ORDER_SEEDS).map((c) => c.seed), tested };
}
