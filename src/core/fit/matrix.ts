/** Small dense linear algebra for fits (row-major number[][]). Sizes here are a handful of parameters. */

/** Inverse of a symmetric positive-definite matrix by Cholesky; returns null when it is singular. */
export function invertSymmetric(a: number[][]): number[][] | null {
  const n = a.length;
  const l = a.map(() => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let sum = a[i][j];
      for (let k = 0; k < j; k++) sum -= l[i][k] * l[j][k];
      if (i === j) {
        if (!(sum > 1e-300 * Math.max(1, Math.abs(a[i][i])))) return null;
        l[i][i] = Math.sqrt(sum);
      } else {
        l[i][j] = sum / l[j][j];
      }
    }
  }
  // inv(L)
  const li = a.map(() => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++) {
    li[i][i] = 1 / l[i][i];
    for (let j = 0; j < i; j++) {
      let sum = 0;
      for (let k = j; k < i; k++) sum -= l[i][k] * li[k][j];
      li[i][j] = sum / l[i][i];
    }
  }
  // inv(A) = inv(L)^T inv(L)
  const inv = a.map(() => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let sum = 0;
      for (let k = i; k < n; k++) sum += li[k][i] * li[k][j];
      inv[i][j] = sum;
      inv[j][i] = sum;
    }
  }
  return inv;
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
