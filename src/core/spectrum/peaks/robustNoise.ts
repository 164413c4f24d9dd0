import { quantileInPlace } from './orderStatistics.js';

/** Scale factor from the median absolute deviation to σ for normally distributed data: 1/Φ⁻¹(3/4) = 1.4826. */
export const MAD_TO_SIGMA = 1.482602218505602;

export interface RobustNoiseOptions {
  /** 1 for samples to leave out (e.g. inside found lines); a stencil is used only when all its samples are kept. */
  exclude?: Uint8Array;
}

/**
 * Per-sample noise σ of a spectrum from the median absolute deviation of the lag-2 second difference
 * e_i = 2y_i − y_{i−2} − y_{i+2}:  σ = 1.4826 · median(|e − median(e)|) / √6  (var e = (4 + 1 + 1)σ² for white noise).
 * This is the DER_SNR noise estimator (Stoehr et al. 2008, ASP Conf. Ser. 394, 505; from memory), here with the MAD
 * about the median rather than the median of |e|.
 *
 * Why this and not the MAD of first differences (÷√2) or of the residual after a baseline: a second difference
 * cancels any local slope, so a continuum whose slope changes across the spectrum does not widen the distribution
 * (first differences read 37 % high on the curved continuum of the tests); it needs no window and does not inherit
 * a baseline's errors; and the lag-2 stencil skips the nearest neighbour, so noise correlated between adjacent
 * samples (interpolated or demosaiced spectra) is underestimated less than by a lag-1 difference. Lines are outliers
 * in e (each touches its width + 4 samples); the MAD ignores them while fewer than half the stencils touch a line,
 * and `exclude` removes them outright once they are known. Shot noise that grows with the signal is measured at its
 * typical (background) level.
 *
 * When more than half the stencils are exactly 0 (coarsely quantised, nearly noiseless data) the MAD is 0; then the
 * RMS of e with iterative 4σ clipping is used instead, σ = rms / √6 (consistent for any noise distribution, which
 * quantised noise is not). Non-finite samples are skipped. Returns 0 for fewer than 3 usable stencils.
 */
export function robustNoise(y: ArrayLike<number>, options: RobustNoiseOptions = {}): number {
  const n = y.length;
  const exclude = options.exclude;
  const e = new Float64Array(Math.max(0, n - 4));
  let m = 0;
  for (let i = 2; i + 2 < n; i++) {
    if (exclude && (exclude[i] || exclude[i - 2] || exclude[i + 2])) continue;
    const v = 2 * y[i] - y[i - 2] - y[i + 2];
    if (Number.isFinite(v)) e[m++] = v;
  }
  if (m < 3) return 0;
  const center = quantileInPlace(e, 0.5, 0, m - 1);
  const dev = new Float64Array(m);
  for (let i = 0; i < m; i++) dev[i] = Math.abs(e[i] - center);
  const mad = quantileInPlace(dev, 0.5, 0, m - 1);
  if (mad > 0) return (MAD_TO_SIGMA * mad) / Math.sqrt(6);
  // Clipped RMS about the median.
  let limit = Infinity;
  let rms = 0;
  for (let pass = 0; pass < 10; pass++) {
    let sum = 0;
    let count = 0;
    for (let i = 0; i < m; i++) {
      const d = e[i] - center;
      if (Math.abs(d) <= limit) {
        sum += d * d;
        count++;
      }
    }
    const next = count > 0 ? Math.sqrt(sum / count) : 0;
    if (next === rms) break;
    rms = next;
    limit = 4 * rms;
  }
  return rms / Math.sqrt(6);
}

/** σ of normally distributed values by the MAD: 1.4826 · median(|v − median(v)|); non-finite values skipped. */
export function madSigma(values: ArrayLike<number>): number {
  const d = new Float64Array(values.length);
  let m = 0;
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) d[m++] = values[i];
  if (m === 0) return NaN;
  const center = quantileInPlace(d, 0.5, 0, m - 1);
  for (let i = 0; i < m; i++) d[i] = Math.abs(d[i] - center);
  return MAD_TO_SIGMA * quantileInPlace(d, 0.5, 0, m - 1);
}
