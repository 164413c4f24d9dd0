/**
 * Information criteria with the residual variance unknown (estimated from χ²): for K parameters (the model's plus
 * one for the variance) on n lines, AICc = n ln(χ²/n) + 2K + 2K(K+1)/(n−K−1) (Hurvich & Tsai 1989, Biometrika 76,
 * 297; Burnham & Anderson 2002, §2.4) and BIC = n ln(χ²/n) + K ln n (Schwarz 1978, Ann. Stat. 6, 461). Lower is
 * better; AICc is undefined (Infinity) when n ≤ K + 1.
 */
export function informationCriterion(kind: 'aicc' | 'bic', chi2: number, n: number, modelParameters: number): number {
  const k = modelParameters + 1;
  const fit = n * Math.log(Math.max(chi2, 1e-300) / n);
  if (kind === 'bic') return fit + k * Math.log(n);
  if (n - k - 1 <= 0) return Infinity;
  return fit + 2 * k + (2 * k * (k + 1)) / (n - k - 1);
}

/**
 * The same criteria with the measurement variances known (χ² from weights 1/σ²): −2 ln L = χ² + const, and K counts the
 * model's parameters only: AICc = χ² + 2K + 2K(K+1)/(n−K−1), BIC = χ² + K ln n (Burnham & Anderson 2002, §2.4 and
 * §7.4). Infinity when AICc is undefined (n ≤ K + 1).
 */
export function informationCriterionKnownSigma(kind: 'aicc' | 'bic', chi2: number, n: number, modelParameters: number): number {
  const k = modelParameters;
  if (kind === 'bic') return chi2 + k * Math.log(n);
  if (n - k - 1 <= 0) return Infinity;
  return chi2 + 2 * k + (2 * k * (k + 1)) / (n - k - 1);
}
