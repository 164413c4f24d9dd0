/**
 * How surprising a line match is. Under the null hypothesis "these peaks are unrelated to the lamp", each of the n
 * peaks in the covered range lands within the matching tolerance of some line with probability p (tolerance window
 * times line density), independently, so the count of matched peaks is Binomial(n, p). The score of a solution is
 * the upper tail P(X ≥ m); a real solution matches far more lines than chance allows.
 */

/** ln k! for k = 0 … (grown on demand; n stays small here). */
const LOG_FACTORIAL: number[] = [0];

function logFactorial(n: number): number {
  for (let k = LOG_FACTORIAL.length; k <= n; k++) LOG_FACTORIAL.push(LOG_FACTORIAL[k - 1] + Math.log(k));
  return LOG_FACTORIAL[n];
}

function logChoose(n: number, k: number): number {
  return logFactorial(n) - logFactorial(k) - logFactorial(n - k);
}

/** log10 P(X ≥ m) for X ~ Binomial(n, p), summed in log space (n is at most a few hundred here). */
export function log10BinomialTail(m: number, n: number, p: number): number {
  if (m <= 0) return 0;
  if (m > n) return -Infinity;
  if (p <= 0) return -Infinity;
  if (p >= 1) return 0;
  const lp = Math.log(p);
  const lq = Math.log1p(-p);
  let maxTerm = -Infinity;
  const terms: number[] = [];
  for (let k = m; k <= n; k++) {
    const t = logChoose(n, k) + k * lp + (n - k) * lq;
    terms.push(t);
    if (t > maxTerm) maxTerm = t;
  }
  let sum = 0;
  for (const t of terms) sum += Math.exp(t - maxTerm);
  return Math.min(0, (maxTerm + Math.log(sum)) / Math.LN10);
}
