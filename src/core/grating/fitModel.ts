import { levenbergMarquardt } from '../fit/index.js';

/**
 * The least-squares engine behind the screen and angle methods: line density G (lines/mm), optionally the incidence
 * α (deg) and a zero offset, fitted to observations whose model is given per observation. Weighted by 1/σ² with the
 * stated σ (the covariance is not scaled here; callers decide how to treat excess scatter).
 */
export interface ModelObservation {
  order: number;
  measured: number;
  sigma: number;
  /** Model value for line density G (lines/mm), incidence α (deg) and zero offset; NaN where the order cannot exist. */
  predict(linesPerMm: number, incidenceDeg: number, offset: number): number;
}

export interface ModelFitOptions {
  observations: readonly ModelObservation[];
  fitIncidence: boolean;
  /** Fixed incidence, or the first of the starting values when fitted (deg). */
  incidenceDeg: number;
  fitOffset: boolean;
  offsetStart: number;
  linesPerMmStart: number;
}

export interface ModelFit {
  linesPerMm: number;
  incidenceDeg: number;
  offset: number;
  /** Covariance of [G, α?, offset?] in the order fitted. */
  covariance: number[][];
  fitted: number[];
  chi2: number;
  dof: number;
  /** Index of α and the offset in the covariance, or -1 when not fitted. */
  incidenceIndex: number;
  offsetIndex: number;
}

/** Starting tilts tried when the incidence is fitted (deg): the fit is cheap, and this keeps it off local minima. */
const INCIDENCE_STARTS = [0, 8, -8, 16, -16];

export function fitGratingModel(options: ModelFitOptions): ModelFit | null {
  const { observations, fitIncidence, fitOffset } = options;
  const incidenceIndex = fitIncidence ? 1 : -1;
  const offsetIndex = fitOffset ? (fitIncidence ? 2 : 1) : -1;
  const unpack = (p: readonly number[]): [number, number, number] => [
    p[0],
    fitIncidence ? p[1] : options.incidenceDeg,
    fitOffset ? p[offsetIndex] : 0,
  ];
  const x = observations.map((_, i) => i);
  const y = observations.map((o) => o.measured);
  const weights = observations.map((o) => 1 / (o.sigma * o.sigma));
  const model = (i: number, p: readonly number[]): number => {
    const [g, a, off] = unpack(p);
    if (!(g > 0) || !(Math.abs(a) < 89)) return NaN;
    return observations[i].predict(g, a, off);
  };
  // Central differences with steps sized to each parameter's scale (the default relative step degenerates at α = 0).
  const jacobian = (i: number, p: readonly number[]): number[] =>
    p.map((v, j) => {
      const h = j === 0 ? 1e-7 * Math.max(Math.abs(v), 1) : j === incidenceIndex ? 1e-6 : 1e-6 * Math.max(Math.abs(v), 1);
      const up = p.slice();
      const down = p.slice();
      up[j] += h;
      down[j] -= h;
      return (model(i, up) - model(i, down)) / (2 * h);
    });
  const starts = fitIncidence ? [options.incidenceDeg, ...INCIDENCE_STARTS.filter((s) => s !== options.incidenceDeg)] : [options.incidenceDeg];
  let best: ReturnType<typeof levenbergMarquardt> | null = null;
  for (const a0 of starts) {
    const initial = [options.linesPerMmStart];
    if (fitIncidence) initial.push(a0);
    if (fitOffset) initial.push(options.offsetStart);
    if (!observations.every((_, i) => Number.isFinite(model(i, initial)))) continue;
    const fit = levenbergMarquardt(model, x, y, initial, { weights, jacobian, scaleByResiduals: false, maxIterations: 400, tolerance: 1e-14 });
    if (!Number.isFinite(fit.chi2)) continue;
    if (!best || fit.chi2 < best.chi2 - 1e-12 * Math.max(1, best.chi2)) best = fit;
  }
  if (!best) return null;
  const [g, a, off] = unpack(best.params);
  return {
    linesPerMm: g,
    incidenceDeg: a,
    offset: off,
    covariance: best.covariance,
    fitted: observations.map((_, i) => model(i, best.params)),
    chi2: best.chi2,
    dof: best.dof,
    incidenceIndex,
    offsetIndex,
  };
}

export function median(values: readonly number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const n = s.length;
  return n % 2 ? s[(n - 1) / 2] : (s[n / 2 - 1] + s[n / 2]) / 2;
}
