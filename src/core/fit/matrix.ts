/** Small dense linear algebra for fits (row-major number[][]). Sizes here are a handful of parameters. */

/** Inverse of a symmetric positive-definite matrix by Cholesky; returns null when it is singular. */
export function invertSymmetric(a: number[][]): number[][] | null {
  const n = a.length;
  const flat = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) flat[i * n + j] = a[i][j];
  const inv = new Float64Array(n * n);
  if (!invertSymmetricFlat(flat, n, inv, new Float64Array(n * n), new Float64Array(n * n))) return null;
  return Array.from({ length: n }, (_, i) => Array.from(inv.subarray(i * n, i * n + n)));
}

/**
 * invertSymmetric on flat row-major k × k arrays, for callers that make many small fits: inv ← A⁻¹ by Cholesky
 * (A = L Lᵀ, inv(A) = inv(L)ᵀ inv(L)), `l` and `li` scratch of at least k × k; false when A is not positive definite.
 */
export function invertSymmetricFlat(a: Float64Array, k: number, inv: Float64Array, l: Float64Array, li: Float64Array): boolean {
  l.fill(0, 0, k * k);
  li.fill(0, 0, k * k);
  for (let i = 0; i < k; i++) {
    for (let j = 0; j <= i; j++) {
      let sum = a[i * k + j];
      for (let m = 0; m < j; m++) sum -= l[i * k + m] * l[j * k + m];
      if (i === j) {
        if (!(sum > 1e-300 * Math.max(1, Math.abs(a[i * k + i])))) return false;
        l[i * k + i] = Math.sqrt(sum);
      } else {
        l[i * k + j] = sum / l[j * k + j];
      }
    }
  }
  for (let i = 0; i < k; i++) {
    li[i * k + i] = 1 / l[i * k + i];
    for (let j = 0; j < i; j++) {
      let sum = 0;
      for (let m = j; m < i; m++) sum -= l[i * k + m] * li[m * k + j];
      li[i * k + j] = sum / l[i * k + i];
    }
  }
  for (let i = 0; i < k; i++) {
    for (let j = 0; j <= i; j++) {
      let sum = 0;
      for (let m = i; m < k; m++) sum += li[m * k + i] * li[m * k + j];
      inv[i * k + j] = sum;
      inv[j * k + i] = sum;
    }
  }
  return true;
}

/** Solves A x = b for a square A by Gaussian elimination with partial pivoting; null when singular. */
export function solve(a: number[][], b: number[]): number[] | null {
  const n = a.length;
  const m = a.map((row, i) => [...row, b[i]]);
  for (let c = 0; c < n; c++) {
    let p = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r][c]) > Math.abs(m[p][c])) p = r;
    if (!(Math.abs(m[p][c]) > 1e-300)) return null;
    [m[c], m[p]] = [m[p], m[c]];
    for (let r = c + 1; r < n; r++) {
      const f = m[r][c] / m[c][c];
      if (f === 0) continue;
      for (let k = c; k <= n; k++) m[r][k] -= f * m[c][k];
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let r = n - 1; r >= 0; r--) {
    let s = m[r][n];
    for (let k = r + 1; k < n; k++) s -= m[r][k] * x[k];
    x[r] = s / m[r][r];
  }
  return x;
}
