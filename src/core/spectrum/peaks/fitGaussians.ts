/** One Gaussian line a·exp(−(x − center)² / (2σ²)), in the units of the fitted abscissa. */
export interface GaussianComponent {
  amplitude: number;
  center: number;
  sigma: number;
}

export interface GaussianFitOptions {
  /** Weights 1/σ² per point. @default all 1 */
  weights?: ArrayLike<number>;
  /** Starting value of the constant offset. @default 0 */
  offset?: number;
  /** Bounds on each component's centre (per component, same order as `initial`). @default the data range ± its span */
  centerBounds?: ReadonlyArray<readonly [number, number]>;
  /** Bounds on σ. @default [0.25, the data span] */
  sigmaBounds?: readonly [number, number];
  /** Iteration limit. @default 100 */
  maxIterations?: number;
  /** Stop when a step lowers χ² by less than this fraction. @default 1e-10 */
  tolerance?: number;
}

export interface GaussianFit {
  components: GaussianComponent[];
  /** Standard uncertainties of amplitude, center and sigma, per component. */
  uncertainties: GaussianComponent[];
  offset: number;
  offsetUncertainty: number;
  /** Parameter covariance, order [offset, a₁, c₁, σ₁, a₂, …], scaled by `covarianceScale`. */
  covariance: number[][];
  /** y − model, per point. */
  residuals: Float64Array;
  chi2: number;
  dof: number;
  /** χ²/dof. */
  reducedChi2: number;
  /**
   * Factor applied to (JᵀWJ)⁻¹: max(1, χ²/dof). The weights are taken as true 1/σ², so a fit as good as the noise
   * keeps the nominal covariance, and a worse one (a line shape that is not Gaussian, a blend) is inflated.
   */
  covarianceScale: number;
  iterations: number;
  converged: boolean;
}

/**
 * Least-squares fit of a sum of Gaussians plus a constant offset, y ≈ c + Σ aₖ exp(−(x − μₖ)² / (2σₖ²)), by
 * Levenberg–Marquardt (Marquardt 1963; damping update of Nielsen 1999, as in src/core/fit/levenbergMarquardt) with the
 * analytic Jacobian, parameters clamped to their bounds after each step, amplitudes ≥ 0 (emission lines).
 * A dedicated version of the general fitter: the model and Jacobian share one exp per point and component and all
 * work happens in preallocated arrays, which makes it about twice as fast on the small windows of a peak table
 * (measured on a 13-point single-line window); the tests check its results against the general fitter.
 */
export function fitGaussians(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  initial: readonly GaussianComponent[],
  options: GaussianFitOptions = {},
): GaussianFit {
  const k = initial.length;
  const n = x.length;
  const np = 1 + 3 * k;
  let xMin = Infinity;
  let xMax = -Infinity;
  for (let i = 0; i < n; i++) {
    if (x[i] < xMin) xMin = x[i];
    if (x[i] > xMax) xMax = x[i];
  }
  const span = Math.max(xMax - xMin, 1e-9);
  const [sigmaLo, sigmaHi] = options.sigmaBounds ?? [0.25, span];
  const maxIterations = options.maxIterations ?? 100;
  const tolerance = options.tolerance ?? 1e-10;
  const weights = options.weights;
  const p = new Float64Array(np);
  const lo = new Float64Array(np).fill(-Infinity);
  const hi = new Float64Array(np).fill(Infinity);
  p[0] = options.offset ?? 0;
  for (let j = 0; j < k; j++) {
    const c = initial[j];
    const b = 1 + 3 * j;
    const cb = options.centerBounds?.[j] ?? [xMin - span, xMax + span];
    lo[b] = 0;
    lo[b + 1] = cb[0];
    hi[b + 1] = cb[1];
    lo[b + 2] = sigmaLo;
    hi[b + 2] = sigmaHi;
    p[b] = c.amplitude;
    p[b + 1] = c.center;
    p[b + 2] = c.sigma;
  }
  clamp(p, lo, hi);
  const jtj = new Float64Array(np * np);
  const jtr = new Float64Array(np);
  const row = new Float64Array(np);
  const damped = new Float64Array(np * np);
  const step = new Float64Array(np);
  const trial = new Float64Array(np);

  const state: FitState = { x, y, weights, n, np, jtj, jtr, row };

  let chi2 = chiSquare(state, p, true);
  let lambda = 1e-3;
  let nu = 2;
  let iterations = 0;
  let converged = false;
  while (iterations < maxIterations) {
    iterations++;
    damped.set(jtj);
    for (let a = 0; a < np; a++) damped[a * np + a] += lambda * Math.max(jtj[a * np + a], 1e-12);
    if (!choleskySolve(damped, jtr, step, np)) {
      lambda *= nu;
      nu *= 2;
      continue;
    }
    for (let a = 0; a < np; a++) trial[a] = p[a] + step[a];
    clamp(trial, lo, hi);
    const trialChi2 = chiSquare(state, trial, false);
    if (Number.isFinite(trialChi2) && trialChi2 < chi2) {
      const decrease = (chi2 - trialChi2) / Math.max(chi2, 1e-300);
      p.set(trial);
      chi2 = chiSquare(state, p, true);
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
        converged = true; // no downhill step left: at a minimum to machine precision
        break;
      }
    }
  }
  const residuals = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let model = p[0];
    for (let b = 1; b < np; b += 3) {
      const u = (x[i] - p[b + 1]) / p[b + 2];
      model += p[b] * Math.exp(-0.5 * u * u);
    }
    residuals[i] = y[i] - model;
  }
  const dof = n - np;
  const reducedChi2 = dof > 0 ? chi2 / dof : NaN;
  const scale = dof > 0 ? Math.max(1, reducedChi2) : 1;
  const inverse = choleskyInverse(jtj, np);
  const covariance: number[][] = [];
  for (let a = 0; a < np; a++) {
    const line = new Array<number>(np);
    for (let c = 0; c < np; c++) line[c] = inverse ? inverse[a * np + c] * scale : NaN;
    covariance.push(line);
  }
  const sd = (a: number): number => (covariance[a][a] >= 0 ? Math.sqrt(covariance[a][a]) : NaN);
  const components: GaussianComponent[] = [];
  const uncertainties: GaussianComponent[] = [];
  for (let j = 0; j < k; j++) {
    const b = 1 + 3 * j;
    components.push({ amplitude: p[b], center: p[b + 1], sigma: p[b + 2] });
    uncertainties.push({ amplitude: sd(b), center: sd(b + 1), sigma: sd(b + 2) });
  }
  return {
    components,
    uncertainties,
    offset: p[0],
    offsetUncertainty: sd(0),
    covariance,
    residuals,
    chi2,
    dof,
    reducedChi2,
    covarianceScale: scale,
    iterations,
    converged,
  };
}

function clamp(p: Float64Array, lo: Float64Array, hi: Float64Array): void {
  for (let a = 0; a < p.length; a++) p[a] = Math.min(hi[a], Math.max(lo[a], p[a]));
}

/** Solves A s = b for symmetric positive-definite A (row-major n×n, overwritten by its Cholesky factor). */
function choleskySolve(a: Float64Array, b: Float64Array, out: Float64Array, n: number): boolean {
  if (!choleskyInPlace(a, n)) return false;
  choleskySolveFactored(a, b, out, n);
  return true;
}

/** Lower Cholesky factor in place (the upper triangle is left as it was); false when not positive definite. */
function choleskyInPlace(a: Float64Array, n: number): boolean {
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = a[i * n + j];
      for (let k = 0; k < j; k++) s -= a[i * n + k] * a[j * n + k];
      if (i === j) {
        if (!(s > 1e-300)) return false;
        a[i * n + i] = Math.sqrt(s);
      } else {
        a[i * n + j] = s / a[j * n + j];
      }
    }
  }
  return true;
}

/**
 * Inverse of a symmetric positive-semidefinite matrix (row-major n×n), or null when singular. Parameters the data do
 * not constrain at all (a zero diagonal: e.g. the centre and width of a component whose amplitude sits at its bound
 * 0) are left out and get NaN, so that they do not void the covariance of the others.
 */
function choleskyInverse(m: Float64Array, n: number): Float64Array | null {
  let maxDiag = 0;
  for (let a = 0; a < n; a++) maxDiag = Math.max(maxDiag, m[a * n + a]);
  const free: number[] = [];
  for (let a = 0; a < n; a++) if (m[a * n + a] > 1e-14 * maxDiag) free.push(a);
  const k = free.length;
  const l = new Float64Array(k * k);
  for (let a = 0; a < k; a++) for (let c = 0; c < k; c++) l[a * k + c] = m[free[a] * n + free[c]];
  if (k === 0 || !choleskyInPlace(l, k)) return null;
  const inv = new Float64Array(n * n).fill(NaN);
  const e = new Float64Array(k);
  const col = new Float64Array(k);
  for (let c = 0; c < k; c++) {
    e.fill(0);
    e[c] = 1;
    choleskySolveFactored(l, e, col, k);
    for (let r = 0; r < k; r++) inv[free[r] * n + free[c]] = col[r];
  }
  return inv;
}

function choleskySolveFactored(l: Float64Array, b: Float64Array, out: Float64Array, n: number): void {
  for (let i = 0; i < n; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= l[i * n + k] * out[k];
    out[i] = s / l[i * n + i];
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = out[i];
    for (let k = i + 1; k < n; k++) s -= l[k * n + i] * out[k];
    out[i] = s / l[i * n + i];
  }
}

interface FitState {
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  weights: ArrayLike<number> | undefined;
  n: number;
  np: number;
  jtj: Float64Array;
  jtr: Float64Array;
  row: Float64Array;
}

/**
 * χ² at q; with `normal`, also JᵀWJ and JᵀWr into jtj / jtr. A module function, not a closure made per fit: V8 drops
 * a dead closure's optimized code at the next mark-compact, which each 12-MP photo's decode buffer brings on, so every
 * photo compiled it again (measured with --trace-opt over 14 photos in one process).
 */
function chiSquare(state: FitState, q: Float64Array, normal: boolean): number {
  const { x, y, weights, n, np, jtj, jtr, row } = state;
  if (normal) {
    jtj.fill(0);
    jtr.fill(0);
  }
  let chi2 = 0;
  for (let i = 0; i < n; i++) {
    const xi = x[i];
    let model = q[0];
    row[0] = 1;
    for (let b = 1; b < np; b += 3) {
      const s = q[b + 2];
      const u = xi - q[b + 1];
      const e = Math.exp((-0.5 * u * u) / (s * s));
      model += q[b] * e;
      if (normal) {
        row[b] = e;
        row[b + 1] = (q[b] * e * u) / (s * s);
        row[b + 2] = (q[b] * e * u * u) / (s * s * s);
      }
    }
    const w = weights ? weights[i] : 1;
    const r = y[i] - model;
    chi2 += w * r * r;
    if (normal) {
      for (let a = 0; a < np; a++) {
        const wa = w * row[a];
        jtr[a] += wa * r;
        for (let c = 0; c <= a; c++) jtj[a * np + c] += wa * row[c];
      }
    }
  }
  if (normal) for (let a = 0; a < np; a++) for (let c = 0; c < a; c++) jtj[c * np + a] = jtj[a * np + c];
  return chi2;
}
