import { assertFinite } from '../../errors.js';
import { quantileInPlace } from './orderStatistics.js';

export interface EstimateBaselineOptions {
  /** Per-sample noise σ used for the clip level (e.g. from robustNoise). Required. */
  noise: number;
  /** Window length in samples; features much narrower than it are treated as lines. @default 101 */
  windowSamples?: number;
  /** Quantile of the first, coarse estimate (robust to windows that are mostly lines). @default 0.2 */
  quantile?: number;
  /** Samples more than clipSigma·σ above the current baseline are lines (in runs) or spikes (alone). @default 2 */
  clipSigma?: number;
  /** Samples masked on each side of a run above the clip level, for the line wings. @default ⌈windowSamples/30⌉ */
  maskMarginSamples?: number;
  /** Smoothing passes; the first two mask only strong lines (see below). @default 4 */
  iterations?: number;
}

export const ESTIMATE_BASELINE_DEFAULTS = { windowSamples: 101, quantile: 0.2, clipSigma: 2, iterations: 4 } as const;

/** The first passes clip every sample instead of masking runs, to lift the coarse start to the background quickly. */
const CLIP_PASSES = 2;

/**
 * A slowly varying baseline (background continuum) under an emission spectrum, by iterative masked smoothing:
 *  1. a coarse start: the `quantile` (default 20th percentile) of windows of `windowSamples`, centred every half
 *     window and linearly interpolated — a low quantile stays on the background where lines cover most of a window;
 *  2. `iterations` passes of masked, clipped smoothing: every run of ≥ 2 samples above the current baseline + the mask
 *     level is a line and is masked out together with maskMarginSamples on each side (its wings); every other sample
 *     is clipped to at most baseline + clipSigma·σ (a lone high sample is a noise spike); the kept samples are smoothed
 *     by a moving straight-line fit over the window (local linear regression, which, unlike a moving average, follows
 *     a slope to the ends of the spectrum), and the baseline under each masked run — and wherever fewer than 10 % of
 *     the window's samples are kept — is the straight line between the background on its two sides. The first two passes mask only strong lines (mask level 3·clipSigma·σ), while
 *     clipping lifts the start — biased low by the quantile and by any slope across a window — onto the background;
 *     the later ones mask at clipSigma·σ.
 * Clipping instead of masking every sample above the level would bias the baseline up by about 2σ·f/(1 − f) where
 * lines cover a fraction f of a window; masking runs avoids that, and clipping lone spikes at +2σ biases line-free
 * noise by only −0.0085σ (E[min(Z, 2)]). Non-finite samples are ignored. Common practice for emission spectra, no
 * single source.
 */
export function estimateBaseline(y: ArrayLike<number>, options: EstimateBaselineOptions): Float64Array {
  const n = y.length;
  const window = options.windowSamples ?? ESTIMATE_BASELINE_DEFAULTS.windowSamples;
  const q = options.quantile ?? ESTIMATE_BASELINE_DEFAULTS.quantile;
  const clip = options.clipSigma ?? ESTIMATE_BASELINE_DEFAULTS.clipSigma;
  const iterations = options.iterations ?? ESTIMATE_BASELINE_DEFAULTS.iterations;
  assertFinite('windowSamples', window, 3);
  const margin = options.maskMarginSamples ?? Math.ceil(window / 30);
  assertFinite('quantile', q, 0, 1);
  assertFinite('clipSigma', clip, 0);
  assertFinite('iterations', iterations, 0);
  assertFinite('maskMarginSamples', margin, 0);
  assertFinite('noise', options.noise, 0);
  const out = new Float64Array(n);
  if (n === 0) return out;
  const half = Math.max(1, Math.floor(window / 2));
  const stride = Math.max(1, half);
  // 1. Coarse quantile start.
  const scratch = new Float64Array(2 * half + 1);
  let prevCenter = -1;
  let prevValue = NaN;
  for (let c = 0; ; c = Math.min(c + stride, n - 1)) {
    let m = 0;
    for (let i = Math.max(0, c - half); i <= Math.min(n - 1, c + half); i++) if (Number.isFinite(y[i])) scratch[m++] = y[i];
    const value = m > 0 ? quantileInPlace(scratch, q, 0, m - 1) : prevValue;
    if (prevCenter < 0) out[0] = value;
    else for (let i = prevCenter + 1; i <= c; i++) out[i] = prevValue + ((value - prevValue) * (i - prevCenter)) / (c - prevCenter);
    prevCenter = c;
    prevValue = value;
    if (c === n - 1) break;
  }
  if (!(options.noise > 0) || n < 3) return out;
  // 2. Mask, clip and smooth with a moving straight-line fit, from prefix sums of w, w·t, w·t², w·v, w·t·v
  // (w = 0 for masked or non-finite samples; t = i − n/2 keeps the sums well conditioned).
  const limit = clip * options.noise;
  const minWeight = Math.max(3, Math.floor(0.1 * (2 * half + 1)));
  const masked = new Uint8Array(n);
  const s0 = new Float64Array(n + 1);
  const s1 = new Float64Array(n + 1);
  const s2 = new Float64Array(n + 1);
  const sv = new Float64Array(n + 1);
  const stv = new Float64Array(n + 1);
  for (let it = 0; it < iterations; it++) {
    // Lines: runs of ≥ 2 samples above the mask level, widened by the margin. The first passes mask only strong
    // lines (3 × the clip level), since the start may sit low enough that noise would read as lines.
    const maskLevel = (it < CLIP_PASSES ? 3 : 1) * limit;
    masked.fill(0);
    let anyMasked = false;
    for (let i = 0; i < n; ) {
      if (!(y[i] > out[i] + maskLevel)) {
        i++;
        continue;
      }
      let j = i;
      while (j < n && y[j] > out[j] + maskLevel) j++;
      if (j - i >= 2) {
        masked.fill(1, Math.max(0, i - margin), Math.min(n, j + margin));
        anyMasked = true;
      }
      i = j;
    }
    for (let i = 0; i < n; i++) {
      const yi = y[i];
      const ok = masked[i] === 0 && Number.isFinite(yi);
      const w = ok ? 1 : 0;
      const v = ok ? Math.min(yi, out[i] + limit) : 0;
      const t = i - n / 2;
      s0[i + 1] = s0[i] + w;
      s1[i + 1] = s1[i] + w * t;
      s2[i + 1] = s2[i] + w * t * t;
      sv[i + 1] = sv[i] + v;
      stv[i + 1] = stv[i] + t * v;
    }
    for (let i = 0; i < n; i++) {
      if (masked[i]) continue;
      const a = i > half ? i - half : 0;
      const b = i + half + 1 < n ? i + half + 1 : n;
      const w0 = s0[b] - s0[a];
      if (w0 < minWeight) {
        // Too little background around this sample to estimate it: it is bridged like the lines.
        masked[i] = 1;
        anyMasked = true;
        continue;
      }
      const w1 = s1[b] - s1[a];
      const w2 = s2[b] - s2[a];
      const v0 = sv[b] - sv[a];
      const v1 = stv[b] - stv[a];
      const det = w0 * w2 - w1 * w1;
      if (det > 1e-9 * w0 * w2) {
        const slope = (w0 * v1 - w1 * v0) / det;
        out[i] = (v0 - slope * w1) / w0 + slope * (i - n / 2);
      } else {
        out[i] = v0 / w0;
      }
    }
    // Under the lines (and wherever the window held too little background), bridge straight across from the
    // background on either side: a fit there would rest on a few samples at one end of the window.
    if (anyMasked) bridgeMasked(out, masked);
  }
  return out;
}

/** Replaces each masked run by the straight line between its unmasked neighbours (the nearest one at an end). */
function bridgeMasked(out: Float64Array, masked: Uint8Array): void {
  const n = out.length;
  for (let i = 0; i < n; ) {
    if (!masked[i]) {
      i++;
      continue;
    }
    let j = i;
    while (j < n && masked[j]) j++;
    const left = i - 1;
    const right = j;
    if (left >= 0 && right < n) {
      for (let k = i; k < j; k++) out[k] = out[left] + ((out[right] - out[left]) * (k - left)) / (right - left);
    } else if (left >= 0) {
      out.fill(out[left], i, j);
    } else if (right < n) {
      out.fill(out[right], i, j);
    }
    i = j;
  }
}
