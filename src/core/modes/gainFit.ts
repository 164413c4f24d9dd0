import { levenbergMarquardt } from '../fit/index.js';
import { FWHM_PER_SIGMA } from '../spectrum/peaks/index.js';

/**
 * The gain curve from the mode powers.
 *
 * - 'gaussian' (default): the envelope P(ν) = A exp(−(ν − ν_c)²/2σ²) through the mode powers; FWHM = 2√(2 ln 2)σ.
 *   This is the width of the envelope of the lasing modes.
 * - 'above-threshold': P(ν) = A (g(ν) − b), g the Gaussian gain profile and b the loss line (threshold) as a fraction
 *   of its peak — the simplest picture of a laser above threshold, in which each mode's output grows with the gain in
 *   excess of the losses. Its FWHM is that of the gain curve itself (for a HeNe, the Doppler width, ≈ 1.5 GHz),
 *   which is wider than the envelope of the lasing modes. It needs at least five modes.
 */
export type GainModel = 'gaussian' | 'above-threshold';

export interface GainFitOptions {
  /** @default 'gaussian' */
  model?: GainModel;
}

export const GAIN_FIT_DEFAULTS = { model: 'gaussian' as GainModel };

export interface GainFit {
  model: GainModel;
  fwhmHz: number;
  /** NaN when the fit has no redundancy (as many modes as parameters). */
  fwhmUncertaintyHz: number;
  /** Gain centre on the same scale as the mode offsets (Hz). */
  centerHz: number;
  centerUncertaintyHz: number;
  /** Threshold as a fraction of the gain peak ('above-threshold' only). */
  thresholdFraction?: number;
  /** RMS of the power residuals (relative power units). */
  rms: number;
  iterations: number;
}

export function fitGainCurve(modes: ReadonlyArray<{ offsetHz: number; relativePower: number }>, options: GainFitOptions = {}): GainFit | null {
  const model = options.model ?? GAIN_FIT_DEFAULTS.model;
  const pts = modes.filter((m) => m.relativePower > 0 && Number.isFinite(m.offsetHz));
  const needed = model === 'gaussian' ? 3 : 5;
  if (pts.length < needed) return null;
  const x = pts.map((m) => m.offsetHz);
  const y = pts.map((m) => m.relativePower);
  // Start from the power-weighted moments; the spread of a sampled Gaussian's weights approximates σ.
  const w = y.reduce((a, b) => a + b, 0);
  const c0 = x.reduce((s, v, i) => s + v * y[i], 0) / w;
  const s0 = Math.sqrt(Math.max(x.reduce((s, v, i) => s + (v - c0) ** 2 * y[i], 0) / w, 1));
  const scale = Math.max(s0, 1);
  // Work in units of the starting σ: offsets are ~1e8–1e9 Hz and the fit is better conditioned near 1.
  const xs = x.map((v) => (v - c0) / scale);
  if (model === 'gaussian') {
    const f = (xi: number, p: readonly number[]): number => p[0] * Math.exp(-0.5 * ((xi - p[1]) / p[2]) ** 2);
    const fit = levenbergMarquardt(f, xs, y, [Math.max(...y), 0, 1], { min: [0, -10, 0.05], max: [10, 10, 50] });
    if (!fit.params.every(Number.isFinite)) return null;
    return {
      model,
      fwhmHz: FWHM_PER_SIGMA * Math.abs(fit.params[2]) * scale,
      fwhmUncertaintyHz: FWHM_PER_SIGMA * fit.uncertainties[2] * scale,
      centerHz: c0 + fit.params[1] * scale,
      centerUncertaintyHz: fit.uncertainties[1] * scale,
      rms: fit.rms,
      iterations: fit.iterations,
    };
  }
  const f = (xi: number, p: readonly number[]): number => p[0] * (Math.exp(-0.5 * ((xi - p[1]) / p[2]) ** 2) - p[3]);
  let best: ReturnType<typeof levenbergMarquardt> | null = null;
  for (const b0 of [0.2, 0.5, 0.8]) {
    // With a threshold b the envelope is narrower than the gain: start σ wider accordingly.
    const sigma0 = 1 / Math.sqrt(Math.max(1 - b0, 0.2));
    const fit = levenbergMarquardt(f, xs, y, [Math.max(...y) / (1 - b0), 0, sigma0, b0], {
      min: [0, -10, 0.05, 0],
      max: [1e3, 10, 50, 0.98],
    });
    if (fit.params.every(Number.isFinite) && (!best || fit.chi2 < best.chi2)) best = fit;
  }
  if (!best) return null;
  return {
    model,
    fwhmHz: FWHM_PER_SIGMA * Math.abs(best.params[2]) * scale,
    fwhmUncertaintyHz: FWHM_PER_SIGMA * best.uncertainties[2] * scale,
    centerHz: c0 + best.params[1] * scale,
    centerUncertaintyHz: best.uncertainties[1] * scale,
    thresholdFraction: best.params[3],
    rms: best.rms,
    iterations: best.iterations,
  };
}
