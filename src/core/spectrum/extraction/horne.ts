/**
 * The inner loops of optimal extraction (Horne 1986, PASP 98, 609, steps 5–8), column by column over the object
 * rows. Everything is O(columns × rows) on typed arrays with no allocation per pixel.
 *
 * Notation: D' the background-subtracted data, P the spatial profile (Σ_j P = 1 per column), S = base + q·slope the
 * background, V = V0 + max(0, S + f P)/Q the pixel variance, M the mask (1 = used).
 */
import type { NoiseModel } from './noiseModel.js';

/** Where the object rows sit in the sampled band and how they map to the compact object arrays. */
export interface ObjectLayout {
  /** Columns (samples along the band). */
  columns: number;
  /** Object rows per column. */
  rows: number;
  /** Rows per column of the sampled band and the first object row there. */
  sampledRows: number;
  firstRow: number;
  /** Offset of each object row (px). */
  offsetPx: Float64Array;
}

export interface LinearBackground {
  base: Float64Array;
  slope: Float64Array;
}

/**
 * What the noise of the subtracted background adds to a column's flux: S(q) = a S_lo + (1 − a) S_hi, so an error of
 * the two side levels adds lowVariance·(Σ w a)² + highVariance·(Σ w (1 − a))² for weights w.
 */
export interface BackgroundError {
  lowVariance: number;
  highVariance: number;
  /** a per object row. */
  lowShare: Float64Array;
}

/** Noise terms shared by the variance formulas. */
export interface VarianceTerms {
  /** Var(Σ k rows) / (k σ²) from the correlation of neighbouring rows (OffBandNoise.sumFactor). */
  sumFactor: number;
  background: BackgroundError;
}

function backgroundTerm(e: BackgroundError, sumWA: number, sumW: number): number {
  const b = sumW - sumWA;
  return e.lowVariance * sumWA * sumWA + e.highVariance * b * b;
}

/**
 * One pass of optimal extraction with rejection: f = Σ M P D'/V / Σ M P²/V per column, variances from `prior` (the
 * previous estimate of f, as Horne does, so each estimate is linear in the data); then while the worst positive
 * deviation (D' − fP)/√(V + (τ f P)²) exceeds σ_clip the pixel is masked and f recomputed, at most `maxRejections`
 * times per column. Clipped pixels (`clipped` = the sampled band's flags) are never rejected. Returns the count masked.
 */
export function optimalPass(
  data: Float32Array,
  bg: LinearBackground,
  profile: Float32Array,
  mask: Uint8Array,
  clipped: Uint8Array,
  layout: ObjectLayout,
  prior: Float64Array,
  noise: NoiseModel,
  flux: Float64Array,
  clipSigma: number,
  profileTolerance: number,
  maxRejections: number,
): number {
  const { columns: N, rows: M, sampledRows: R, firstRow, offsetPx: q } = layout;
  const v0 = noise.readVariance;
  const shot = noise.shotPerUnit;
  const clip2 = clipSigma * clipSigma;
  const tau2 = profileTolerance * profileTolerance;
  const reject = maxRejections > 0 && Number.isFinite(clipSigma);
  let newly = 0;
  for (let i = 0; i < N; i++) {
    const f0 = prior[i];
    const b0 = bg.base[i];
    const s0 = bg.slope[i];
    const off = i * M;
    const soff = i * R + firstRow;
    let rejections = 0;
    for (;;) {
      let num = 0;
      let den = 0;
      for (let j = 0, k = off; j < M; j++, k++) {
        if (!mask[k]) continue;
        const P = profile[k];
        const level = b0 + q[j] * s0 + f0 * P;
        const w = P / (v0 + (level > 0 ? level * shot : 0));
        num += w * data[k];
        den += w * P;
      }
      const f = den > 0 ? num / den : 0;
      flux[i] = f;
      if (!reject || rejections >= maxRejections || !(den > 0)) break;
      let worst = -1;
      let worstZ2 = clip2;
      for (let j = 0, k = off; j < M; j++, k++) {
        if (!mask[k] || clipped[soff + j]) continue;
        const P = profile[k];
        const model = f * P;
        const r = data[k] - model;
        if (r <= 0) continue;
        const level = b0 + q[j] * s0 + f0 * P;
        const z2 = (r * r) / (v0 + (level > 0 ? level * shot : 0) + tau2 * model * model);
        if (z2 > worstZ2) {
          worstZ2 = z2;
          worst = k;
        }
      }
      if (worst < 0) break;
      mask[worst] = 0;
      rejections++;
      newly++;
    }
  }
  return newly;
}

/**
 * The last pass: f = Σ w D' with w = M P/V / Σ M P²/V, var f = c Σ w² V + the background's share (for independent
 * rows, c = 1, the first term is Horne's 1/Σ M P²/V; c > 1 accounts for rows correlated by resampling, and the
 * second term for the noise of the background level that was subtracted). Stores the weights (the channels reuse
 * them) and flags a column saturated when a clipped sample carries ≥ 10 % of its peak profile weight.
 */
export function finalPass(
  data: Float32Array,
  bg: LinearBackground,
  profile: Float32Array,
  mask: Uint8Array,
  clipped: Uint8Array,
  layout: ObjectLayout,
  prior: Float64Array,
  noise: NoiseModel,
  terms: VarianceTerms,
  out: { flux: Float64Array; variance: Float64Array; weights: Float32Array; saturated: Uint8Array },
): void {
  const share = terms.background.lowShare;
  const { columns: N, rows: M, sampledRows: R, firstRow, offsetPx: q } = layout;
  const { flux, variance, weights, saturated } = out;
  const v0 = noise.readVariance;
  const shot = noise.shotPerUnit;
  for (let i = 0; i < N; i++) {
    const f0 = prior[i];
    const b0 = bg.base[i];
    const s0 = bg.slope[i];
    const off = i * M;
    const soff = i * R + firstRow;
    let den = 0;
    let pmax = 0;
    for (let j = 0, k = off; j < M; j++, k++) {
      const P = profile[k];
      if (P > pmax) pmax = P;
      if (!mask[k]) continue;
      const level = b0 + q[j] * s0 + f0 * P;
      den += (P * P) / (v0 + (level > 0 ? level * shot : 0));
    }
    let sat = 0;
    const pCut = 0.1 * pmax;
    for (let j = 0; j < M; j++) if (clipped[soff + j] && profile[off + j] >= pCut) sat = 1;
    saturated[i] = sat;
    if (!(den > 0)) {
      for (let j = 0, k = off; j < M; j++, k++) weights[k] = 0;
      flux[i] = 0;
      variance[i] = Infinity;
      continue;
    }
    const inv = 1 / den;
    let f = 0;
    let w2v = 0;
    let sw = 0;
    let swa = 0;
    for (let j = 0, k = off; j < M; j++, k++) {
      const P = profile[k];
      const level = b0 + q[j] * s0 + f0 * P;
      const V = v0 + (level > 0 ? level * shot : 0);
      const w = mask[k] ? (P / V) * inv : 0;
      weights[k] = w;
      f += w * data[k];
      w2v += w * w * V;
      sw += w;
      swa += w * share[j];
    }
    flux[i] = f;
    variance[i] = terms.sumFactor * w2v + backgroundTerm(terms.background, swa, sw);
  }
}

/** f_c = Σ w (D_c − S_c) for the three channels at once, straight from the sampled planes. */
export function channelFluxes(
  planes: Float32Array[],
  bgs: LinearBackground[],
  weights: Float32Array,
  layout: ObjectLayout,
  fluxes: Float64Array[],
): void {
  const { columns: N, rows: M, sampledRows: R, firstRow, offsetPx: q } = layout;
  const [pr, pg, pb] = planes;
  const [br, bgg, bb] = bgs;
  const [fr, fg, fb] = fluxes;
  for (let i = 0; i < N; i++) {
    const off = i * M;
    const soff = i * R + firstRow;
    let sr = 0, sg = 0, sb = 0, sw = 0, swq = 0;
    for (let j = 0; j < M; j++) {
      const w = weights[off + j];
      if (w === 0) continue;
      const k = soff + j;
      sr += w * pr[k];
      sg += w * pg[k];
      sb += w * pb[k];
      sw += w;
      swq += w * q[j];
    }
    // Σ w S = base Σ w + slope Σ w q.
    fr[i] = sr - (br.base[i] * sw + br.slope[i] * swq);
    fg[i] = sg - (bgg.base[i] * sw + bgg.slope[i] * swq);
    fb[i] = sb - (bb.base[i] * sw + bb.slope[i] * swq);
  }
}

/** var f_c = c Σ w² V_c + the background's share, for the three channels in one pass, each with its own noise model. */
export function channelVariances(
  bgs: LinearBackground[],
  profile: Float32Array,
  weights: Float32Array,
  mask: Uint8Array,
  layout: ObjectLayout,
  noise: NoiseModel[],
  fluxes: Float64Array[],
  terms: VarianceTerms[],
  variances: Float64Array[],
): void {
  const { columns: N, rows: M, offsetPx: q } = layout;
  const share = terms[0].background.lowShare;
  const [n0, n1, n2] = noise;
  const [b0, b1, b2] = bgs;
  for (let i = 0; i < N; i++) {
    const f0 = fluxes[0][i];
    const f1 = fluxes[1][i];
    const f2 = fluxes[2][i];
    let v0 = 0, v1 = 0, v2 = 0, sw = 0, swa = 0;
    let any = 0;
    for (let j = 0, k = i * M; j < M; j++, k++) {
      const w = weights[k];
      any |= mask[k];
      if (w === 0) continue;
      const P = profile[k];
      const w2 = w * w;
      const l0 = b0.base[i] + q[j] * b0.slope[i] + f0 * P;
      const l1 = b1.base[i] + q[j] * b1.slope[i] + f1 * P;
      const l2 = b2.base[i] + q[j] * b2.slope[i] + f2 * P;
      v0 += w2 * (n0.readVariance + (l0 > 0 ? l0 * n0.shotPerUnit : 0));
      v1 += w2 * (n1.readVariance + (l1 > 0 ? l1 * n1.shotPerUnit : 0));
      v2 += w2 * (n2.readVariance + (l2 > 0 ? l2 * n2.shotPerUnit : 0));
      sw += w;
      swa += w * share[j];
    }
    variances[0][i] = any ? terms[0].sumFactor * v0 + backgroundTerm(terms[0].background, swa, sw) : Infinity;
    variances[1][i] = any ? terms[1].sumFactor * v1 + backgroundTerm(terms[1].background, swa, sw) : Infinity;
    variances[2][i] = any ? terms[2].sumFactor * v2 + backgroundTerm(terms[2].background, swa, sw) : Infinity;
  }
}

/**
 * Variance of the box sum Σ D' (no profile: the column's flux is spread evenly over its rows for the shot term),
 * with the same terms.
 */
export function boxVariance(
  box: Float64Array,
  bg: LinearBackground,
  valid: Uint8Array,
  layout: ObjectLayout,
  noise: NoiseModel,
  terms: VarianceTerms,
): Float64Array {
  const share = terms.background.lowShare;
  const { columns: N, rows: M, sampledRows: R, firstRow, offsetPx: q } = layout;
  const out = new Float64Array(N);
  const v0 = noise.readVariance;
  const shot = noise.shotPerUnit;
  for (let i = 0; i < N; i++) {
    const soff = i * R + firstRow;
    let n = 0;
    for (let j = 0; j < M; j++) n += valid[soff + j];
    if (n === 0) {
      out[i] = Infinity;
      continue;
    }
    const perRow = box[i] / n;
    let v = 0;
    let swa = 0;
    for (let j = 0; j < M; j++) {
      if (!valid[soff + j]) continue;
      const level = bg.base[i] + q[j] * bg.slope[i] + perRow;
      v += v0 + (level > 0 ? level * shot : 0);
      swa += share[j];
    }
    out[i] = terms.sumFactor * v + backgroundTerm(terms.background, swa, n);
  }
  return out;
}
