export interface LinearFit {
  /** Best-fit coefficients, one per design column. */
  params: number[];
  /**
   * Parameter covariance. With `scaleByResiduals` (the default) it is (AᵀWA)⁻¹ · χ²/dof, the usual estimate when the
   * weights are known only up to a factor; otherwise (AᵀWA)⁻¹, for weights that are true 1/σ².
   */
  covariance: number[][];
  /** Standard uncertainties √diag(covariance). */
  uncertainties: number[];
  /** y − A·params, per point. */
  residuals: number[];
  /** Σ w r². */
  chi2: number;
  /** Points minus parameters. */
  dof: number;
  /** √(Σ r² / n), unweighted. */
  rms: number;
}

export interface LinearFitOptions {
  /** Weights 1/σ² per point. @default all 1 */
  weights?: ArrayLike<number>;
  /** Scale the covariance by χ²/dof. @default true */
  scaleByResiduals?: boolean;
}

/**
 * Weighted linear least squares y ≈ A p by Householder QR of W^½A (numerically sound for polynomial bases), with the
 * covariance from (AᵀWA)⁻¹. Returns null when the design is rank-deficient.
 */
export function linearLeastSquares(
  design: ArrayLike<number>[],
  y: ArrayLike<number>,
  options: LinearFitOptions = {},
): LinearFit | null {
  const n = design.length;
  if (n === 0) return null;
  const k = design[0].length;
  if (n < k) return null;
  const scale = options.scaleByResiduals ?? true;
  const sw = new Float64Array(n);
  for (let i = 0; i < n; i++) sw[i] = Math.sqrt(options.weights ? options.weights[i] : 1);
  // Column-major copy of W^½A, each column scaled to unit norm (equilibration keeps x⁴ columns of pixel-scale
  // abscissae usable), and W^½y.
  const a: Float64Array[] = [];
  const colScale = new Float64Array(k);
  for (let j = 0; j < k; j++) {
    const col = new Float64Array(n);
    let norm = 0;
    for (let i = 0; i < n; i++) {
      col[i] = design[i][j] * sw[i];
      norm += col[i] * col[i];
    }
    norm = Math.sqrt(norm);
    if (!(norm > 0)) return null;
    for (let i = 0; i < n; i++) col[i] /= norm;
    colScale[j] = norm;
    a.push(col);
  }
  const b = new Float64Array(n);
  for (let i = 0; i < n; i++) b[i] = y[i] * sw[i];
  const rDiag = new Float64Array(k);
  for (let j = 0; j < k; j++) {
    const col = a[j];
    let norm = 0;
    for (let i = j; i < n; i++) norm += col[i] * col[i];
    norm = Math.sqrt(norm);
    if (!(norm > 1e-13)) return null; // column j is (numerically) a combination of the earlier ones
    const alpha = col[j] > 0 ? -norm : norm;
    col[j] -= alpha;
    let vnorm2 = 0;
    for (let i = j; i < n; i++) vnorm2 += col[i] * col[i];
    for (const target of [...a.slice(j + 1), b]) {
      let dot = 0;
      for (let i = j; i < n; i++) dot += col[i] * target[i];
      const f = (2 * dot) / vnorm2;
      for (let i = j; i < n; i++) target[i] -= f * col[i];
    }
    rDiag[j] = alpha;
  }
  // R (upper triangle): diagonal in rDiag, R[j][m] (m > j) in a[m][j].
  const rAt = (j: number, m: number): number => (j === m ? rDiag[j] : a[m][j]);
  const scaled = new Array<number>(k).fill(0);
  for (let j = k - 1; j >= 0; j--) {
    let s = b[j];
    for (let m = j + 1; m < k; m++) s -= rAt(j, m) * scaled[m];
    scaled[j] = s / rDiag[j];
  }
  const params = scaled.map((v, j) => v / colScale[j]);
  const residuals = new Array<number>(n);
  let chi2 = 0;
  let sumSq = 0;
  for (let i = 0; i < n; i++) {
    let fit = 0;
    for (let j = 0; j < k; j++) fit += design[i][j] * params[j];
    const r = y[i] - fit;
    residuals[i] = r;
    const w = options.weights ? options.weights[i] : 1;
    chi2 += w * r * r;
    sumSq += r * r;
  }
  const dof = n - k;
  // (AᵀWA)⁻¹ = D⁻¹ R⁻¹ R⁻ᵀ D⁻¹ with D the column scales; R⁻¹ by back substitution.
  const rInv = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  for (let c = 0; c < k; c++) {
    for (let j = c; j >= 0; j--) {
      let s = j === c ? 1 : 0;
      for (let m = j + 1; m <= c; m++) s -= rAt(j, m) * rInv[m][c];
      rInv[j][c] = s / rDiag[j];
    }
  }
  const factor = scale ? (dof > 0 ? chi2 / dof : NaN) : 1;
  const covariance = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  for (let p = 0; p < k; p++) {
    for (let q = 0; q < k; q++) {
      let s = 0;
      for (let m = Math.max(p, q); m < k; m++) s += rInv[p][m] * rInv[q][m];
      covariance[p][q] = (s * factor) / (colScale[p] * colScale[q]);
    }
  }
  return {
    params,
    covariance,
    uncertainties: covariance.map((row, i) => Math.sqrt(Math.max(0, row[i]))),
    residuals,
    chi2,
    dof,
    rms: Math.sqrt(sumSq / n),
  };
}

/** Evaluates Σ c_j x^j (Horner). */
export function polyval(coefficients: ArrayLike<number>, x: number): number {
  let v = 0;
  for (let j = coefficients.length - 1; j >= 0; j--) v = v * x + coefficients[j];
  return v;
}
