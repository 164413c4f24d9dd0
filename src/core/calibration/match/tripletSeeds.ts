/**
 * Step 1 and 2 of the line search: hypotheses from spacing ratios, scored by local support.
 *
 * Under any locally linear scale x → λ the ratio (x_j − x_i)/(x_k − x_i) of a triplet of peaks equals that of its
 * three lines, whatever the dispersion, offset or direction: the 1-D form of the triangle matching of Valdes,
 * Campusano, Velasquez & Stetson (1995, PASP 107, 1119, "FOCAS automatic catalog matching algorithms"). Near-neighbour
 * triplets of the strongest peaks are looked up among near-neighbour triplets of the locally brightest lines (sorted
 * by ratio), both orientations; the dispersion prior, the colour prior and a single manual pair prune them; each
 * survivor is scored by how many neighbouring peaks it puts on a lamp line, against chance.
 */
import { colourAllows } from '../colourPrior.js';
import { log10BinomialTail } from '../significance.js';
import { type Ctx, lowerBound, nearest, type Pair } from './context.js';

/** Half-width of the neighbourhood in which seed lines are ranked by brightness (nm). */
const LOCAL_RANK_NM = 10;
/** Largest tolerance (px) at which a neighbour still counts in the local verification. */
const LOCAL_MAX_TOLERANCE_PX = 4;
/** Seed lines skipped at most between triplet members (undetected lines), and seed peaks (extra peaks). */
const SKIP_L = 4;
const SKIP_P = 3;
/** Most seed lines (the triplet table grows as 32 × this). */
const MAX_SEED_LINES = 90;

interface Hypothesis {
  score: number;
  i: number;
  j: number;
  k: number;
  a: number;
  b: number;
  c: number;
}

/** Triplet hypotheses as seeds of three pairs, best local support first; `tested` counts the ratio matches examined. */
export function tripletSeeds(ctx: Ctx): { seeds: Pair[][]; tested: number } {
  const { P, px, L, lw, o, curvature, manual } = ctx;
  // Seed peaks: the strongest unblended ones, in position order (indices into P).
  const seedPeakIdx = P.map((p, i) => ({ p, i }))
    .filter(({ p }) => !p.blended)
    .sort((a, b) => b.p.strength - a.p.strength)
    .slice(0, o.seedPeaks)
    .map(({ i }) => i)
    .sort((a, b) => a - b);
  // Seed lines: the locally brightest, in wavelength order (indices into L). A line's local rank is the number of
  // brighter lines within ±LOCAL_RANK_NM; taking lines by local rank spreads the seeds over the whole range, so a
  // camera that sees only part of it (IR cut, UV cut) still finds its lines among them, whatever its sensitivity.
  const nSeedLines = Math.max(10, Math.min(MAX_SEED_LINES, Math.round(o.seedLinesPerPeak * seedPeakIdx.length)));
  const localRank = L.map((l) => {
    let brighter = 0;
    for (let q = lowerBound(lw, l.wavelengthNm - LOCAL_RANK_NM); q < lw.length && lw[q] <= l.wavelengthNm + LOCAL_RANK_NM; q++) {
      if (L[q].rank > l.rank) brighter++;
    }
    return brighter;
  });
  const seedLineIdx = L.map((l, i) => i)
    .sort((a, b) => localRank[a] - localRank[b] || L[b].rank - L[a].rank)
    .slice(0, nSeedLines)
    .sort((a, b) => a - b);
  const slw = Float64Array.from(seedLineIdx, (i) => lw[i]);

  // Line triplets with up to 3 skipped seed lines between members, in both orientations, sorted by ratio (packed
  // as ratio and first/middle/last seed-line indices, in typed arrays: this is the hot part of the search).
  const nTri = 2 * slw.length * SKIP_L * SKIP_L;
  const rawRatio = new Float64Array(nTri);
  const rawIdx = new Int32Array(3 * nTri);
  let t0 = 0;
  for (let a = 0; a < slw.length; a++) {
    for (let b = a + 1; b <= a + SKIP_L && b < slw.length; b++) {
      for (let c = b + 1; c <= b + SKIP_L && c < slw.length; c++) {
        const r = (slw[b] - slw[a]) / (slw[c] - slw[a]);
        rawRatio[t0] = r;
        rawIdx.set([a, b, c], 3 * t0++);
        rawRatio[t0] = 1 - r; // λ falling with x
        rawIdx.set([c, b, a], 3 * t0++);
      }
    }
  }
  const order = Array.from({ length: t0 }, (_, i) => i).sort((u, v) => rawRatio[u] - rawRatio[v]);
  const ratios = new Float64Array(t0);
  const triIdx = new Int32Array(3 * t0);
  order.forEach((src, dst) => {
    ratios[dst] = rawRatio[src];
    triIdx[3 * dst] = rawIdx[3 * src];
    triIdx[3 * dst + 1] = rawIdx[3 * src + 1];
    triIdx[3 * dst + 2] = rawIdx[3 * src + 2];
  });

  const [dMin, dMax] = o.dispersionNmPerPx;
  const single = manual.length === 1 ? manual[0] : null;
  const hyps: Hypothesis[] = [];
  // Hypotheses without local support are kept only up to the number of seeds (sparse spectra have no neighbours to
  // support anything; dense ones have plenty of supported hypotheses): this keeps the list, its sort and the garbage
  // small.
  const unsupported: Hypothesis[] = [];
  const nSeeds = Math.max(o.maxGrown * 4, 100);
  let tested = 0;
  const n = seedPeakIdx.length;
  for (let ii = 0; ii < n; ii++) {
    for (let jj = ii + 1; jj <= ii + SKIP_P && jj < n; jj++) {
      for (let kk = jj + 1; kk <= jj + SKIP_P && kk < n; kk++) {
        const pi = P[seedPeakIdx[ii]];
        const pj = P[seedPeakIdx[jj]];
        const pk = P[seedPeakIdx[kk]];
        const span = pk.x - pi.x;
        if (!(span > 0)) continue;
        const r = (pj.x - pi.x) / span;
        // Ratio tolerance: centroid noise (3σ, at least 0.15 px each) and the dispersion change across the triplet.
        const sig = Math.max(pi.sigma, 0.15) + Math.max(pj.sigma, 0.15) + Math.max(pk.sigma, 0.15);
        const tol = 0.004 + (2 * sig) / span + 0.25 * curvature * span;
        const lo = lowerBound(ratios, r - tol);
        for (let t = lo; t < ratios.length && ratios[t] <= r + tol; t++) {
          tested++;
          const fa = triIdx[3 * t];
          const fb = triIdx[3 * t + 1];
          const fc = triIdx[3 * t + 2];
          const la = slw[fa];
          const lb = slw[fb];
          const lc = slw[fc];
          const disp = (lc - la) / span;
          const ad = Math.abs(disp);
          if (ad < dMin || ad > dMax) continue;
          if (o.direction === 'increasing' && disp < 0) continue;
          if (o.direction === 'decreasing' && disp > 0) continue;
          if (!colourAllows(pi.band, la) || !colourAllows(pj.band, lb) || !colourAllows(pk.band, lc)) continue;
          if (single) {
            const pred = la + disp * (single.x - pi.x);
            const allowPx = 3 + curvature * Math.abs(single.x - (pi.x + pk.x) / 2) ** 2;
            if (Math.abs(pred - single.lambda) > allowPx * ad) continue;
          }
          // Local support: neighbouring peaks within 1.5 spans that land on any lamp line, scored against chance
          // (binomial tail, as for whole solutions) so that dense stretches of the line list earn no credit.
          const x0 = pi.x - 1.5 * span;
          const x1 = pk.x + 1.5 * span;
          let tried = 0;
          let hit = 0;
          let tolSum = 0;
          // The peaks between the triplet's members and up to 4 beyond it on each side, within 1.5 spans.
          const qLo = Math.max(0, seedPeakIdx[ii] - 4);
          const qHi = Math.min(px.length - 1, seedPeakIdx[kk] + 4);
          for (let q = qLo; q <= qHi; q++) {
            if (px[q] < x0 || px[q] > x1) continue;
            if (q === seedPeakIdx[ii] || q === seedPeakIdx[jj] || q === seedPeakIdx[kk]) continue;
            const dist = q < seedPeakIdx[ii] ? pi.x - px[q] : q > seedPeakIdx[kk] ? px[q] - pk.x : 0;
            const tolPx = 1 + 3 * P[q].sigma + 0.5 * curvature * dist * (dist + span);
            if (tolPx > LOCAL_MAX_TOLERANCE_PX) continue;
            tried++;
            tolSum += tolPx;
            const pred = la + disp * (px[q] - pi.x);
            const m = nearest(lw, pred);
            if (Math.abs(lw[m] - pred) <= tolPx * ad && colourAllows(P[q].band, lw[m])) hit++;
          }
          let score = 0;
          if (hit > 1) {
            const l0 = la + disp * (x0 - pi.x);
            const l1 = la + disp * (x1 - pi.x);
            const wlo = Math.min(l0, l1);
            const whi = Math.max(l0, l1);
            const count = Math.max(lowerBound(lw, whi) - lowerBound(lw, wlo), 1);
            const p = Math.min(1, (2 * (tolSum / tried) * ad * count) / Math.max(whi - wlo, 1e-9));
            score = -log10BinomialTail(hit, tried, p);
          }
          if (score <= 0 && unsupported.length >= nSeeds) continue;
          (score > 0 ? hyps : unsupported).push({
            score,
            i: seedPeakIdx[ii],
            j: seedPeakIdx[jj],
            k: seedPeakIdx[kk],
            a: seedLineIdx[fa],
            b: seedLineIdx[fb],
            c: seedLineIdx[fc],
          });
        }
      }
    }
  }
  hyps.sort((u, v) => v.score - u.score);
  const seeds = [...hyps.slice(0, nSeeds), ...unsupported.slice(0, Math.max(0, nSeeds - hyps.length))].map((h) => [
    { peak: h.i, line: h.a, x: P[h.i].x, lambda: L[h.a].wavelengthNm, manual: false },
    { peak: h.j, line: h.b, x: P[h.j].x, lambda: L[h.b].wavelengthNm, manual: false },
    { peak: h.k, line: h.c, x: P[h.k].x, lambda: L[h.c].wavelengthNm, manual: false },
  ]);
  return { seeds, tested };
}
