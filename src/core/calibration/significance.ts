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

export function logChoose(n: number, k: number): number {
  return logFactorial(n) - logFactorial(k) - logFactorial(n - k);
}

/**
 * log10 P(X ≥ m) for X ~ Binomial(n, p). The terms follow from the first by the ratio recurrence
 * T(k+1)/T(k) = (n − k)/(k + 1) · p/q, summed relative to the first in linear space (rescaled before they could
 * overflow), and the sum stops once the terms past the mode fall below 1e-18 of it: no array, one exp and one log per
 * call (the matcher calls this tens of thousands of times per search).
 */
export function log10BinomialTail(m: number, n: number, p: number): number {
  if (m <= 0) return 0;
  if (m > n) return -Infinity;
  if (p <= 0) return -Infinity;
  if (p >= 1) return 0;
  const first = logChoose(n, m) + m * Math.log(p) + (n - m) * Math.log1p(-p);
  const odds = p / (1 - p);
  const mode = (n + 1) * p;
  let term = 1;
  let sum = 1;
  let offset = 0; // ln of the factor taken out of term and sum
  for (let k = m; k < n; k++) {
    term *= ((n - k) / (k + 1)) * odds;
    sum += term;
    if (sum > 1e250) {
      term *= 1e-250;
      sum *= 1e-250;
      offset += 250 * Math.LN10;
    }
    if (k + 1 >= mode && term < 1e-18 * sum) break;
  }
  return Math.min(0, (first + offset + Math.log(sum)) / Math.LN10);
}
