import { invertSymmetric, solve } from './matrix.js';

export interface LevenbergMarquardtOptions {
  /** Weights 1/σ² per point. @default all 1 */
  weights?: ArrayLike<number>;
  /** Analytic Jacobian ∂model/∂p at x; numeric central differences when absent. */
  jacobian?: (x: number, params: readonly number[]) => number[];
  /** Iteration limit. @default 200 */
  maxIterations?: number;
  /** Stop when the relative decrease of χ² falls below this. @default 1e-10 */
  tolerance?: number;
  /** Lower / upper bounds per parameter (clamped after each step). */
  min?: readonly number[];
  max?: readonly number[];
  /** Scale the covariance by χ²/dof. @default true */
  scaleByResiduals?: boolean;
}

export interface NonlinearFit {
  params: number[];
  covariance: number[][];
  uncertainties: number[];
  residuals: number[];
  chi2: number;
  dof: number;
  rms: number;
  iterations: number;
  converged: boolean;
}

/**
 * Levenberg–Marquardt (Marquardt 1963, with Nielsen's damping update) for y ≈ model(x, p). Returns the fit and its
 * diagnostics; the covariance is (JᵀWJ)⁻¹ at the solution, scaled by χ²/dof unless `scaleByResiduals` is false.
 */
export function levenbergMarquardt(
  model: (x: number, params: readonly number[]) => number,
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  initial: readonly number[],
  options: LevenbergMarquardtOptions = {},
): NonlinearFit {
  const n = x.length;
  const k = initial.length;
  const maxIterations = options.maxIterations ?? 200;
  const tolerance = options.tolerance ?? 1e-10;
  const w = (i: number): number => (options.weights ? options.weights[i] : 1);
  const clamp = (p: number[]): number[] =>
    p.map((v, j) => Math.min(options.max?.[j] ?? Infinity, Math.max(options.min?.[j] ?? -Infinity, v)));
  const jac =
    options.jacobian ??
    ((xi: number, p: readonly number[]): number[] => {
      const row = new Array<number>(k);
      for (let j = 0; j < k; j++) {
        const h = 1e-6 * Math.max(Math.abs(p[j]), 1e-6);
        const pp = p.slice();
        const pm = p.slice();
        pp[j] += h;
        pm[j] -= h;
        row[j] = (model(xi, pp) - model(xi, pm)) / (2 * h);
      }
      return row;
    });
  const chi2Of = (p: readonly number[]): number => {
    let s = 0;
    for (let i = 0; i < n; i++) {
      const r = y[i] - model(x[i], p);
      s += w(i) * r * r;
    }
    return s;
  };
  let params = clamp(initial.slice());
  let chi2 = chi2Of(params);
  let lambda = 1e-3;
  let nu = 2;
  let iterations = 0;
  let converged = false;
  const normal = (p: readonly number[]): { jtj: number[][]; jtr: number[] } => {
    const jtj = Array.from({ length: k }, () => new Array<number>(k).fill(0));
    const jtr = new Array<number>(k).fill(0);
    for (let i = 0; i < n; i++) {
      const row = jac(x[i], p);
      const r = y[i] - model(x[i], p);
      const wi = w(i);
      for (let a = 0; a < k; a++) {
        jtr[a] += wi * row[a] * r;
        for (let b = 0; b <= a; b++) jtj[a][b] += wi * row[a] * row[b];
      }
    }
    for (let a = 0; a < k; a++) for (let b = 0; b < a; b++) jtj[b][a] = jtj[a][b];
    return { jtj, jtr };
  };
  let { jtj, jtr } = normal(params);
  while (iterations < maxIterations) {
    iterations++;
    const damped = jtj.map((row, a) => row.map((v, b) => (a === b ? v + lambda * Math.max(v, 1e-12) : v)));
    const step = solve(damped, jtr);
    if (!step) {
      lambda *= nu;
      nu *= 2;
      continue;
    }
    const trial = clamp(params.map((v, j) => v + step[j]));
    const trialChi2 = chi2Of(trial);
    if (Number.isFinite(trialChi2) && trialChi2 < chi2) {
      const decrease = (chi2 - trialChi2) / Math.max(chi2, 1e-300);
      params = trial;
      chi2 = trialChi2;
      ({ jtj, jtr } = normal(params));
      lambda = Math.max(lambda / 3, 1e-12);
      nu = 2;
      if (decrease < tolerance) {
        converged = true;
        break;
      }
    } else {
      lambda *= nu;
      nu *= 2;
      if (lambda > 1e16) {
        converged = true; // no downhill step exists: at a minimum to machine precision
        break;
      }
    }
  }
  const residuals = new Array<number>(n);
  let sumSq = 0;
  for (let i = 0; i < n; i++) {
    residuals[i] = y[i] - model(x[i], params);
    sumSq += residuals[i] * residuals[i];
  }
  const dof = n - k;
  const inv = invertSymmetric(jtj);
  const factor = (options.scaleByResiduals ?? true) ? (dof > 0 ? chi2 / dof : NaN) : 1;
  const covariance = inv
    ? inv.map((row) => row.map((v) => v * factor))
    : Array.from({ length: k }, () => new Array<number>(k).fill(NaN));
  return {
    params,
    covariance,
    uncertainties: covariance.map((row, i) => Math.sqrt(Math.max(0, row[i]))),
    residuals,
    chi2,
    dof,
    rms: Math.sqrt(sumSq / Math.max(n, 1)),
    iterations,
    converged,
  };
}
