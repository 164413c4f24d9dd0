/**
 * The spatial profile P(q | p) of Horne (1986, PASP 98, 609, step 5): the fraction of a column's light that falls in
 * each row, estimated from the data themselves and smoothed along the dispersion, kept non-negative and normalised to
 * Σ_q P = 1 in every column.
 *
 * Horne fits low-order polynomials in wavelength to D/f row by row. Here the smoothing is a running ratio
 *   P_j(i) ∝ (Σ_{k∈W(i)} D_jk + κ G_j) / (Σ_{k∈W(i)} f_k + κ),
 * i.e. the flux-weighted mean of D/f over a window of columns, which follows a slowly changing profile (vignetting,
 * a residual tilt) the way a polynomial does, costs O(rows × columns) and cannot ring. Where the window holds little
 * light (gaps between emission lines) the estimate leans on the band's global profile G through κ, the window flux
 * that three noise σ of the window sum would give. Each sample's contribution is clamped to G_j f_k ± (5 σ + 0.5 |G_j f_k|)
 * (Horne rejects outliers while fitting the profile): a cosmic-ray hit in a faint stretch would otherwise become the
 * profile of the whole window and escape the rejection of step 6.
 */
import { type Scratch, takeOrNew } from '../scratch.js';

export interface ProfileInput {
  /** Background-subtracted data of the object rows, column by column (index i·rows + j). */
  data: Float32Array;
  valid: Uint8Array;
  rows: number;
  columns: number;
  /** Box-summed flux per column (Σ over the object rows). */
  flux: Float64Array;
  /** Window length in columns (odd). */
  windowSamples: number;
  /** Noise σ of one sample, for the clip of outlying contributions (0: no clip). */
  sampleSigma: number;
  /** Working arrays for P and the clamped data (see scratch.ts): P is then valid until the next call with it. */
  scratch?: Scratch;
}

export interface SpatialProfile {
  /** P, column by column like the data, each column summing to 1. */
  profile: Float32Array;
  /** The band's global profile (Σ = 1), for plots and diagnostics. */
  global: Float64Array;
}

export function spatialProfile(input: ProfileInput): SpatialProfile {
  const { data, valid, rows: M, columns: N, flux } = input;
  const half = Math.max(0, Math.floor(input.windowSamples / 2));
  const scratch = input.scratch;
  const profile = takeOrNew(scratch, 'profile.profile', Float32Array, M * N, false); // windowedProfile writes every one

  // Global profile: Σ_i D_j / Σ_i f, clamped at 0 and normalised (uniform when the band holds no light).
  const global = rowSums(data, valid, M, N);
  let gsum = 0;
  for (let j = 0; j < M; j++) gsum += global[j] = Math.max(0, global[j]);
  let total = 0;
  for (let i = 0; i < N; i++) total += flux[i];
  if (!(gsum > 0) || !(total > 0)) global.fill(1 / M);
  else for (let j = 0; j < M; j++) global[j] /= gsum;

  // κ: three σ of a window's flux sum, σ of one column's flux from the scatter of neighbouring columns.
  const kappa = 3 * Math.sqrt(2 * half + 1) * neighbourSigma(flux) + 1e-30;

  // Clamped contributions, then running window sums over columns [a, b) of every row, and of the flux.
  const clampedOut = takeOrNew(scratch, 'profile.clamped', Float32Array, M * N);
  const clamped = clampedContributions(data, valid, M, N, flux, global, 5 * input.sampleSigma, clampedOut);
  windowedProfile(clamped, M, N, flux, global, half, kappa, profile);
  return { profile, global };
}

// One loop per function (not blocks of spatialProfile): the JIT compiles a once-called function while its first loop
// runs and drops that code on reaching the next, not yet run; small functions are compiled once and kept.

/** Σ_i D_ij over the valid samples, per row j. */
function rowSums(data: Float32Array, valid: Uint8Array, M: number, N: number): Float64Array {
  const global = new Float64Array(M);
  for (let i = 0; i < N; i++) {
    for (let j = 0, k = i * M; j < M; j++, k++) if (valid[k]) global[j] += data[k];
  }
  return global;
}

/** Each sample clamped to G_j f_i ± (clip + 0.5 |G_j f_i|) (no clamp when clip is 0). */
function clampedContributions(
  data: Float32Array,
  valid: Uint8Array,
  M: number,
  N: number,
  flux: Float64Array,
  global: Float64Array,
  clip: number,
  clamped: Float32Array,
): Float32Array {
  for (let i = 0; i < N; i++) {
    const f = flux[i];
    for (let j = 0, k = i * M; j < M; j++, k++) {
      if (!valid[k]) continue;
      const expect = global[j] * f;
      const tol = clip + 0.5 * Math.abs(expect);
      const v = data[k];
      clamped[k] = clip > 0 ? (v > expect + tol ? expect + tol : v < expect - tol ? expect - tol : v) : v;
    }
  }
  return clamped;
}

/** The running window ratio of the file comment, normalised per column, into `profile`. */
function windowedProfile(
  clamped: Float32Array,
  M: number,
  N: number,
  flux: Float64Array,
  global: Float64Array,
  half: number,
  kappa: number,
  profile: Float32Array,
): void {
  const win = new Float64Array(M);
  let fluxWin = 0;
  let a = 0;
  let b = 0;
  for (let i = 0; i < N; i++) {
    const wantB = Math.min(N, i + half + 1);
    const wantA = Math.max(0, i - half);
    for (; b < wantB; b++) {
      fluxWin += flux[b];
      for (let j = 0, k = b * M; j < M; j++, k++) win[j] += clamped[k];
    }
    for (; a < wantA; a++) {
      fluxWin -= flux[a];
      for (let j = 0, k = a * M; j < M; j++, k++) win[j] -= clamped[k];
    }
    const den = fluxWin + kappa;
    const base = i * M;
    let s = 0;
    if (den > 0) {
      const inv = 1 / den;
      for (let j = 0; j < M; j++) {
        const p = (win[j] + kappa * global[j]) * inv;
        const v = p > 0 ? p : 0;
        profile[base + j] = v;
        s += v;
      }
    }
    if (s > 0) {
      const inv = 1 / s;
      for (let j = 0; j < M; j++) profile[base + j] *= inv;
    } else {
      for (let j = 0; j < M; j++) profile[base + j] = global[j];
    }
  }
}

/** Robust σ of a sequence from its first differences: 1.4826 · median|Δ| / √2 (white noise, slowly varying signal). */
export function neighbourSigma(values: ArrayLike<number>): number {
  const n = values.length;
  if (n < 3) return 0;
  const d = new Float64Array(n - 1);
  let m = 0;
  for (let i = 1; i < n; i++) {
    const v = values[i] - values[i - 1];
    if (Number.isFinite(v)) d[m++] = Math.abs(v);
  }
  if (m === 0) return 0;
  const sub = d.subarray(0, m);
  sub.sort();
  const med = m % 2 ? sub[(m - 1) >> 1] : 0.5 * (sub[m / 2 - 1] + sub[m / 2]);
  return (1.482602218505602 * med) / Math.SQRT2;
}
