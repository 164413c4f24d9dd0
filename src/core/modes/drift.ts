import { linearLeastSquares } from '../fit/index.js';

/**
 * Mode drift over a warm-up. Each trace gives the comb position: where the longitudinal modes sit relative to the
 * interferometer's resonance at the sweep origin, modulo the mode spacing (a mode that walks off is replaced by its
 * neighbour, so only the position modulo Δν is observable). Successive positions are unwrapped (each step taken as
 * the smallest one modulo Δν — traces must be close enough in time that the comb moves by less than Δν/2 between
 * them) and a straight line against capture time gives the drift rate. The interferometer's own drift adds to it.
 */
export interface DriftPoint {
  source: string;
  timeS: number;
  /** In [0, Δν). */
  combPositionHz: number;
  uncertaintyHz: number;
}

export interface DriftResult {
  /** Fitted unwrapped position at the first trace's time (Hz). */
  interceptHz: number;
  driftHzPerS: number;
  driftUncertaintyHzPerS: number;
  spanS: number;
  points: Array<DriftPoint & { unwrappedHz: number }>;
  warnings: string[];
}

/** Steps above this fraction of Δν make the unwrapping doubtful. */
const DOUBTFUL_STEP = 0.35;

export function measureDrift(points: readonly DriftPoint[], modeSpacingHz: number): DriftResult | null {
  if (points.length < 2 || !(modeSpacingHz > 0)) return null;
  const sorted = [...points].sort((a, b) => a.timeS - b.timeS);
  const warnings: string[] = [];
  const unwrapped: number[] = [sorted[0].combPositionHz];
  for (let i = 1; i < sorted.length; i++) {
    let step = sorted[i].combPositionHz - sorted[i - 1].combPositionHz;
    step -= modeSpacingHz * Math.round(step / modeSpacingHz);
    if (Math.abs(step) > DOUBTFUL_STEP * modeSpacingHz) {
      warnings.push(
        `between ${sorted[i - 1].source} and ${sorted[i].source} the modes moved ${(Math.abs(step) / 1e6).toFixed(0)} MHz, close to half the spacing: the drift may be off by a whole mode spacing there (take traces closer together)`,
      );
    }
    unwrapped.push(unwrapped[i - 1] + step);
  }
  const t0 = sorted[0].timeS;
  const design = sorted.map((p) => [1, p.timeS - t0]);
  const weights = sorted.map((p) => 1 / Math.max(p.uncertaintyHz, 1) ** 2);
  // The stated uncertainties, or the scatter about the line when it is larger (few points give a poor scatter).
  const fit = linearLeastSquares(design, unwrapped, { weights, scaleByResiduals: false });
  if (!fit) return null;
  const birge = fit.dof > 0 ? Math.sqrt(fit.chi2 / fit.dof) : 1;
  if (birge > 1) fit.uncertainties = fit.uncertainties.map((u) => u * birge);
  return {
    interceptHz: fit.params[0],
    driftHzPerS: fit.params[1],
    driftUncertaintyHzPerS: fit.uncertainties[1],
    spanS: sorted[sorted.length - 1].timeS - t0,
    points: sorted.map((p, i) => ({ ...p, unwrappedHz: unwrapped[i] })),
    warnings,
  };
}

/** Weighted circular mean of values modulo `period`, in [0, period), with the circular spread (same units). */
export function circularMean(values: readonly number[], weights: readonly number[], period: number): { mean: number; spread: number } {
  let c = 0;
  let s = 0;
  let w = 0;
  values.forEach((v, i) => {
    const a = (2 * Math.PI * v) / period;
    c += weights[i] * Math.cos(a);
    s += weights[i] * Math.sin(a);
    w += weights[i];
  });
  const r = Math.min(1, Math.hypot(c, s) / Math.max(w, Number.MIN_VALUE));
  let mean = (Math.atan2(s, c) * period) / (2 * Math.PI);
  if (mean < 0) mean += period;
  // Circular standard deviation √(−2 ln R), in units of the period.
  const spread = (Math.sqrt(Math.max(0, -2 * Math.log(Math.max(r, 1e-300)))) * period) / (2 * Math.PI);
  return { mean, spread };
}
