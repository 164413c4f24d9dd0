/** The many small polynomial fits of the line search, and residuals of pairs under any dispersion model. */
import { invertSymmetricFlat } from '../../fit/index.js';
import { informationCriterion } from '../informationCriterion.js';
import { dispersionAtNmPerPx, wavelengthAtNm, type DispersionModel } from '../model.js';
import { polynomialDispersionNmPerPx, polynomialWavelengthNm, type PolynomialModel } from '../polynomialModel.js';
import { type Ctx, lineSigmaNm, type Pair, sigmaOf } from './context.js';

export interface QuickFit {
  model: PolynomialModel;
  /** χ² with σλ² = (σx·dλ/dx)² + σref². */
  chi2: number;
}

/**
 * Weighted polynomial by normal equations on t = (x − centre)/halfwidth ∈ [−1, 1] — well conditioned up to degree 3
 * there, and several times faster than QR for the search's many small fits. Two passes: weights 1/σx² first, then
 * 1/(σx² + (σref/|dλ/dx|)²) with each line's reference uncertainty converted by the first pass's dispersion. The
 * covariance is (AᵀWA)⁻¹ on the wavelength axis, scaled by the Birge ratio when it exceeds 1, as in fitPolynomial.
 * The normal matrix is inverted by Cholesky in flat scratch arrays (invertSymmetricFlat): a search makes thousands
 * of these fits, and their garbage was a tenth of its time.
 */
export function quickPolynomial(ctx: Ctx, pairs: readonly Pair[], degree: number): QuickFit | null {
  const k = degree + 1;
  const n = pairs.length;
  if (n < k || k > MAX_TERMS) return null;
  let lo = Infinity;
  let hi = -Infinity;
  for (const q of pairs) {
    lo = Math.min(lo, q.x);
    hi = Math.max(hi, q.x);
  }
  const centerPx = (lo + hi) / 2;
  const scalePx = Math.max((hi - lo) / 2, 1);
  const { ata, atb, pw, inv, c } = SCRATCH;
  let sx = SCRATCH.sx;
  if (sx.length < n) sx = SCRATCH.sx = new Float64Array(2 * n);
  let sr = SCRATCH.sr;
  if (sr.length < n) sr = SCRATCH.sr = new Float64Array(2 * n);
  for (let i = 0; i < n; i++) {
    sx[i] = sigmaOf(ctx, pairs[i]);
    sr[i] = lineSigmaNm(ctx, pairs[i]);
  }
  let model: PolynomialModel | null = null;
  for (let pass = 0; pass < 2; pass++) {
    ata.fill(0, 0, k * k);
    atb.fill(0, 0, k);
    for (let i = 0; i < n; i++) {
      const q = pairs[i];
      // σ in px in the first pass (only relative weights matter), in nm with the line's reference uncertainty after.
      const sigma = model ? Math.hypot(sx[i] * polynomialDispersionNmPerPx(model, q.x), sr[i]) : sx[i];
      const w = 1 / sigma ** 2;
      const t = (q.x - centerPx) / scalePx;
      pw[0] = 1;
      for (let j = 1; j < 2 * k; j++) pw[j] = pw[j - 1] * t;
      for (let a = 0; a < k; a++) {
        atb[a] += w * pw[a] * q.lambda;
        for (let b = 0; b < k; b++) ata[a * k + b] += w * pw[a + b];
      }
    }
    if (!invertSymmetricFlat(ata, k, inv, SCRATCH.l, SCRATCH.li)) return null;
    for (let a = 0; a < k; a++) {
      let v = 0;
      for (let b = 0; b < k; b++) v += inv[a * k + b] * atb[b];
      c[a] = v;
      if (!Number.isFinite(v)) return null;
    }
    model = { kind: 'polynomial', degree, centerPx, scalePx, coefficientsNm: Array.from(c.subarray(0, k)), covariance: [] };
  }
  if (!model) return null;
  let chi2 = 0;
  for (let i = 0; i < n; i++) {
    const q = pairs[i];
    const sigma = Math.hypot(sx[i] * polynomialDispersionNmPerPx(model, q.x), sr[i]);
    chi2 += ((q.lambda - polynomialWavelengthNm(model, q.x)) / sigma) ** 2;
  }
  const dof = n - k;
  const birge = dof > 0 ? Math.max(1, chi2 / dof) : 1;
  const covariance: number[][] = [];
  for (let a = 0; a < k; a++) {
    const row = new Array<number>(k);
    for (let b = 0; b < k; b++) row[b] = birge !== 1 ? inv[a * k + b] * birge : inv[a * k + b];
    covariance.push(row);
  }
  model.covariance = covariance;
  return { model, chi2 };
}

/** Most polynomial terms quickPolynomial fits (degree 3, with room for 4). */
const MAX_TERMS = 5;
const SCRATCH = {
  ata: new Float64Array(MAX_TERMS * MAX_TERMS),
  atb: new Float64Array(MAX_TERMS),
  pw: new Float64Array(2 * MAX_TERMS),
  inv: new Float64Array(MAX_TERMS * MAX_TERMS),
  c: new Float64Array(MAX_TERMS),
  l: new Float64Array(MAX_TERMS * MAX_TERMS),
  li: new Float64Array(MAX_TERMS * MAX_TERMS),
  sx: new Float64Array(64),
  sr: new Float64Array(64),
  res: new Float64Array(64),
};

function distinctPositions(pairs: readonly Pair[]): number {
  let count = 0;
  for (let i = 0; i < pairs.length; i++) if (i === 0 || pairs[i].x !== pairs[i - 1].x) count++;
  return count;
}

/** Degree while growing: a quadratic from three positions on (a grating's scale bends), a cubic from nine. */
export function growthDegree(count: number): number {
  return count >= 9 ? 3 : count >= 3 ? 2 : 1;
}

/** The pairs (sorted by x) fitted with the growth degree, capped at maxDegree; null when they cannot be. */
export function fitPairs(ctx: Ctx, pairs: readonly Pair[], maxDegree = 3): PolynomialModel | null {
  const distinct = distinctPositions(pairs);
  for (let deg = Math.min(maxDegree, growthDegree(distinct), distinct - 1); deg >= 1; deg--) {
    const f = quickPolynomial(ctx, pairs, deg);
    if (f) return f.model;
  }
  return null;
}

/**
 * The pairs fitted with the degree (1–3) that AICc prefers (see informationCriterion): the least flexible model the
 * matches support, so that the scoring's count of fitted parameters is honest.
 */
export function fitPairsParsimonious(ctx: Ctx, pairs: readonly Pair[]): PolynomialModel | null {
  const distinct = distinctPositions(pairs);
  let best: PolynomialModel | null = null;
  let bestScore = Infinity;
  for (let deg = 1; deg <= Math.min(3, distinct - 1); deg++) {
    const f = quickPolynomial(ctx, pairs, deg);
    if (!f) continue;
    const score = informationCriterion('aicc', f.chi2, pairs.length, deg + 1);
    if (!best || score < bestScore - 1e-9) {
      best = f.model;
      bestScore = score;
    }
  }
  return best;
}

export function residualPx(model: DispersionModel, q: Pair): number {
  return (q.lambda - wavelengthAtNm(model, q.x)) / dispersionAtNmPerPx(model, q.x);
}

/** 1.4826 × median |residual| (px) of the automatic, unblended pairs: the good ones' scatter, barely moved by bad ones. */
export function robustScatterPx(ctx: Ctx, model: DispersionModel, pairs: readonly Pair[]): number {
  let res = SCRATCH.res;
  if (res.length < pairs.length) res = SCRATCH.res = new Float64Array(2 * pairs.length);
  let n = 0;
  for (const q of pairs) if (!q.manual && !(q.peak >= 0 && ctx.P[q.peak].blended)) res[n++] = Math.abs(residualPx(model, q));
  if (n === 0) return 0;
  const v = res.subarray(0, n).sort();
  const h = n >> 1;
  return 1.4826 * (n % 2 ? v[h] : (v[h - 1] + v[h]) / 2);
}

export function rmsPx(model: DispersionModel, pairs: readonly Pair[]): number {
  let s = 0;
  for (const q of pairs) s += residualPx(model, q) ** 2;
  return Math.sqrt(s / Math.max(pairs.length, 1));
}

export { polynomialDispersionNmPerPx, polynomialWavelengthNm };
