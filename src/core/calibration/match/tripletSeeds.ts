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
import { log10BinomialTail, logChoose } from '../significance.js';
import { type Ctx, lowerBound, LineIndex, type Pair } from './context.js';

/** Half-width of the neighbourhood in which seed lines are ranked by brightness (nm). */
const LOCAL_RANK_NM = 10;
/** Largest tolerance (px) at which a neighbour still counts in the local verification. */
const LOCAL_MAX_TOLERANCE_PX = 4;
/** Seed lines skipped at most between triplet members (undetected lines), and seed peaks (extra peaks). */
const SKIP_L = 4;
const SKIP_P = 3;
/** Most seed lines (the triplet table grows as 32 × this). */
const MAX_SEED_LINES = 90;

/** Slack (in the score's log10 units) kept by the pruning bound against rounding. */
const BOUND_MARGIN = -1e-9;
/** Offset that marks an index into the unsupported list in the chosen codes. */
const HYPOTHESIS_UNSUPPORTED = 1 << 30;

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
        rawIdx[3 * t0] = a;
        rawIdx[3 * t0 + 1] = b;
        rawIdx[3 * t0 + 2] = c;
        t0++;
        rawRatio[t0] = 1 - r; // λ falling with x
        rawIdx[3 * t0] = c;
        rawIdx[3 * t0 + 1] = b;
        rawIdx[3 * t0 + 2] = a;
        t0++;
      }
    }
  }
  // Sorted by ratio in one native sort of packed keys (a comparator sort of the indices was a sixth of this
  // function's time): each ratio, in (0, 1), on a grid of 2^-(52 − b) in the high bits and its index (b bits) in the
  // low ones, all exact in a double. Ties keep the order made, as the stable comparator sort did; ratios closer than
  // the grid (≤ 2^-40 for the 2880 triplets of the most seed lines) would take index order, far below any tolerance.
  const indexBits = Math.max(1, Math.ceil(Math.log2(t0 + 1)));
  const indexScale = 2 ** indexBits;
  const ratioScale = 2 ** (52 - indexBits);
  const keys = new Float64Array(t0);
  for (let t = 0; t < t0; t++) keys[t] = Math.floor(rawRatio[t] * ratioScale) * indexScale + t;
  keys.sort();
  const ratios = new Float64Array(t0);
  const triIdx = new Int32Array(3 * t0);
  for (let dst = 0; dst < t0; dst++) {
    const src = keys[dst] % indexScale;
    ratios[dst] = rawRatio[src];
    triIdx[3 * dst] = rawIdx[3 * src];
    triIdx[3 * dst + 1] = rawIdx[3 * src + 1];
    triIdx[3 * dst + 2] = rawIdx[3 * src + 2];
  }

  const [dMin, dMax] = o.dispersionNmPerPx;
  const single = manual.length === 1 ? manual[0] : null;
  // The peaks' uncertainties and colour bands in flat arrays (the verification below reads them ~10⁵–10⁶ times).
  const sigmaOf = Float64Array.from(P, (p) => p.sigma);
  const bandLo = Float64Array.from(P, (p) => (p.band ? p.band[0] : -Infinity));
  const bandHi = Float64Array.from(P, (p) => (p.band ? p.band[1] : Infinity));
  const index = new LineIndex(lw);
  // Scratch space of the local verification: neighbours' indices, tolerances (px) and offsets from the first peak.
  const nbIdx = new Int32Array(px.length);
  const nbTol = new Float64Array(px.length);
  const nbDx = new Float64Array(px.length);
  // ln p and ln(1 − p) by count of lines, valid for the peak triplet whose stamp they carry.
  const lnpOf = new Float64Array(lw.length + 2);
  const lnqOf = new Float64Array(lw.length + 2);
  const lnStamp = new Int32Array(lw.length + 2);
  let stamp = 0;
  // Hypotheses with local support, in typed arrays (score and the six indices); those without are kept only up to
  // the number of seeds (sparse spectra have no neighbours to support anything; dense ones have plenty of supported
  // hypotheses), which keeps the list, its selection and the garbage small.
  const nSeeds = Math.max(o.maxGrown * 4, 100);
  const hyps = new TopHypotheses(nSeeds);
  const unsupported = new HypothesisList(nSeeds);
  let tested = 0;
  const n = seedPeakIdx.length;
  for (let ii = 0; ii < n; ii++) {
    for (let jj = ii + 1; jj <= ii + SKIP_P && jj < n; jj++) {
      for (let kk = jj + 1; kk <= jj + SKIP_P && kk < n; kk++) {
        const qi = seedPeakIdx[ii];
        const qj = seedPeakIdx[jj];
        const qk = seedPeakIdx[kk];
        const xi = px[qi];
        const xj = px[qj];
        const xk = px[qk];
        const span = xk - xi;
        if (!(span > 0)) continue;
        const r = (xj - xi) / span;
        // Ratio tolerance: centroid noise (3σ, at least 0.15 px each) and the dispersion change across the triplet.
        const sig = Math.max(sigmaOf[qi], 0.15) + Math.max(sigmaOf[qj], 0.15) + Math.max(sigmaOf[qk], 0.15);
        const tol = 0.004 + (2 * sig) / span + 0.25 * curvature * span;
        // The neighbourhood of the local verification: the peaks between the triplet's members and up to 4 beyond
        // it on each side, within 1.5 spans; their tolerances do not depend on the lines, so they are set once here.
        const x0 = xi - 1.5 * span;
        const x1 = xk + 1.5 * span;
        const qLo = Math.max(0, qi - 4);
        const qHi = Math.min(px.length - 1, qk + 4);
        let nb = 0;
        let tolSum = 0;
        for (let q = qLo; q <= qHi; q++) {
          if (px[q] < x0 || px[q] > x1) continue;
          if (q === qi || q === qj || q === qk) continue;
          const dist = q < qi ? xi - px[q] : q > qk ? px[q] - xk : 0;
          const tolPx = 1 + 3 * sigmaOf[q] + 0.5 * curvature * dist * (dist + span);
          if (tolPx > LOCAL_MAX_TOLERANCE_PX) continue;
          nbIdx[nb] = q;
          nbTol[nb] = tolPx;
          nbDx[nb] = px[q] - xi;
          nb++;
          tolSum += tolPx;
        }
        // The chance p that a neighbour lands on some line, 2·(mean tolerance)·|dλ/dx|·(lines in the window)/(window
        // in nm), is (lines in the window) times a constant of the peaks: the dispersion cancels. Its logarithms, for
        // the pruning bound, are kept per count of lines.
        const pPerLine = nb > 0 ? (2 * (tolSum / nb)) / (x1 - x0) : 0;
        stamp++;
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
          if (la < bandLo[qi] || la > bandHi[qi] || lb < bandLo[qj] || lb > bandHi[qj] || lc < bandLo[qk] || lc > bandHi[qk]) continue;
          if (single) {
            const pred = la + disp * (single.x - xi);
            const allowPx = 3 + curvature * Math.abs(single.x - (xi + xk) / 2) ** 2;
            if (Math.abs(pred - single.lambda) > allowPx * ad) continue;
          }
          // Local support: neighbouring peaks that land on any lamp line, scored against chance (binomial tail, as
          // for whole solutions) so that dense stretches of the line list earn no credit.
          const l0 = la + disp * (x0 - xi);
          const l1 = la + disp * (x1 - xi);
          const wlo = Math.min(l0, l1);
          const whi = Math.max(l0, l1);
          const count = Math.max(index.lowerBound(whi) - index.lowerBound(wlo), 1);
          const p = Math.min(1, pPerLine * count);
          // Once nSeeds supported hypotheses are held, one is looked at further only while it can still beat the
          // worst of them: its score −log10 P(X ≥ hits) is at most −log10 of the tail's first term, and the hits
          // can reach at most those so far plus the neighbours left (an exact bound, so the seeds are the same).
          const prune = hyps.full();
          const threshold = prune ? hyps.worstScore() + BOUND_MARGIN : 0;
          if (prune && lnStamp[count] !== stamp) {
            lnStamp[count] = stamp;
            lnpOf[count] = Math.log(p);
            lnqOf[count] = Math.log1p(-p);
          }
          const lnp = lnpOf[count];
          const lnq = lnqOf[count];
          if (prune && boundScore(nb, nb, p, lnp, lnq) < threshold) continue;
          let hit = 0;
          let pruned = false;
          for (let u = 0; u < nb; u++) {
            const q = nbIdx[u];
            const pred = la + disp * nbDx[u];
            const l = lw[index.nearest(pred)];
            if (Math.abs(l - pred) <= nbTol[u] * ad && l >= bandLo[q] && l <= bandHi[q]) hit++;
            else if (prune && boundScore(hit + nb - u - 1, nb, p, lnp, lnq) < threshold) {
              pruned = true;
              break;
            }
          }
          if (pruned) continue;
          const score = hit > 1 ? -log10BinomialTail(hit, nb, p) : 0;
          if (score > 0) hyps.offer(score, qi, qj, qk, seedLineIdx[fa], seedLineIdx[fb], seedLineIdx[fc]);
          else if (unsupported.length < nSeeds) unsupported.push(score, qi, qj, qk, seedLineIdx[fa], seedLineIdx[fb], seedLineIdx[fc]);
        }
      }
    }
  }
  // The nSeeds best supported hypotheses, best first (ties in the order found), then unsupported ones in the order
  // found up to nSeeds in all.
  const chosen = hyps.sorted();
  for (let u = 0; chosen.length < nSeeds && u < unsupported.length; u++) chosen.push(u + HYPOTHESIS_UNSUPPORTED);
  const seeds = chosen.map((code) => {
    const list = code >= HYPOTHESIS_UNSUPPORTED ? unsupported : hyps;
    const h = code >= HYPOTHESIS_UNSUPPORTED ? code - HYPOTHESIS_UNSUPPORTED : code;
    const idx = list.idx;
    const pair = (peak: number, line: number): Pair => ({ peak, line, x: P[peak].x, lambda: L[line].wavelengthNm, manual: false });
    return [pair(idx[6 * h], idx[6 * h + 3]), pair(idx[6 * h + 1], idx[6 * h + 4]), pair(idx[6 * h + 2], idx[6 * h + 5])];
  });
  return { seeds, tested };
}

/**
 * An upper bound on a hypothesis's local score −log10 P(X ≥ h), X ~ Binomial(n, p): −log10 of the tail's first term
 * (0 where the score is 0: fewer than two hits, or p = 1).
 */
function boundScore(h: number, n: number, p: number, lnp: number, lnq: number): number {
  return h <= 1 || !(p < 1) ? 0 : -(logChoose(n, h) + h * lnp + (n - h) * lnq) / Math.LN10;
}

/** Growable list of hypotheses: a score and six indices each (peaks i, j, k; lines a, b, c). */
class HypothesisList {
  score: Float64Array;
  idx: Int32Array;
  length = 0;
  constructor(capacity: number) {
    this.score = new Float64Array(Math.max(capacity, 1));
    this.idx = new Int32Array(6 * Math.max(capacity, 1));
  }
  push(score: number, i: number, j: number, k: number, a: number, b: number, c: number): void {
    if (this.length === this.score.length) {
      const s = new Float64Array(2 * this.score.length);
      s.set(this.score);
      this.score = s;
      const x = new Int32Array(2 * this.idx.length);
      x.set(this.idx);
      this.idx = x;
    }
    this.set(this.length++, score, i, j, k, a, b, c);
  }
  /** Writes a hypothesis into a slot. */
  protected set(h: number, score: number, i: number, j: number, k: number, a: number, b: number, c: number): void {
    this.score[h] = score;
    const o = 6 * h;
    this.idx[o] = i;
    this.idx[o + 1] = j;
    this.idx[o + 2] = k;
    this.idx[o + 3] = a;
    this.idx[o + 4] = b;
    this.idx[o + 5] = c;
  }
}

/**
 * The `capacity` best-scoring hypotheses offered (ties kept in the order offered, as a stable sort keeps them), in a
 * binary min-heap on (score, −order) so that the worst is at its root.
 */
class TopHypotheses extends HypothesisList {
  private heap: Int32Array;
  private order: Float64Array;
  private offered = 0;
  constructor(private readonly capacity: number) {
    super(capacity);
    this.heap = new Int32Array(capacity);
    this.order = new Float64Array(capacity);
  }
  full(): boolean {
    return this.length >= this.capacity;
  }
  worstScore(): number {
    return this.score[this.heap[0]];
  }
  private worse(u: number, v: number): boolean {
    return this.score[u] < this.score[v] || (this.score[u] === this.score[v] && this.order[u] > this.order[v]);
  }
  offer(score: number, i: number, j: number, k: number, a: number, b: number, c: number): void {
    const n = this.offered++;
    if (!this.full()) {
      const slot = this.length;
      this.push(score, i, j, k, a, b, c);
      this.order[slot] = n;
      // Sift up.
      let pos = slot;
      this.heap[pos] = slot;
      while (pos > 0) {
        const up = (pos - 1) >> 1;
        if (!this.worse(this.heap[pos], this.heap[up])) break;
        [this.heap[pos], this.heap[up]] = [this.heap[up], this.heap[pos]];
        pos = up;
      }
      return;
    }
    // A later hypothesis of equal score ranks after the held one: only a higher score enters.
    if (!(score > this.worstScore())) return;
    const slot = this.heap[0];
    this.set(slot, score, i, j, k, a, b, c);
    this.order[slot] = n;
    // Sift down.
    let pos = 0;
    for (;;) {
      const l = 2 * pos + 1;
      if (l >= this.length) break;
      const r = l + 1;
      const child = r < this.length && this.worse(this.heap[r], this.heap[l]) ? r : l;
      if (!this.worse(this.heap[child], this.heap[pos])) break;
      [this.heap[pos], this.heap[child]] = [this.heap[child], this.heap[pos]];
      pos = child;
    }
  }
  /** The held hypotheses' slots, best first (ties in the order offered). */
  sorted(): number[] {
    return Array.from({ length: this.length }, (_, h) => h).sort((u, v) => this.score[v] - this.score[u] || this.order[u] - this.order[v]);
  }
}
