/**
 * Conversions between fractional sample index s and a sampled coordinate c[i] (positionPx, wavelengthNm), by linear
 * interpolation between neighbouring samples and linear extrapolation past the ends.
 */

/** c(s) for a fractional sample index s. */
export function valueAtSample(c: ArrayLike<number>, s: number): number {
  const n = c.length;
  if (n === 0) return NaN;
  if (n === 1) return c[0];
  const i = Math.min(n - 2, Math.max(0, Math.floor(s)));
  return c[i] + (s - i) * (c[i + 1] - c[i]);
}

/** dc/ds at a fractional sample index s (the step of the interval holding s). */
export function stepAtSample(c: ArrayLike<number>, s: number): number {
  const n = c.length;
  if (n < 2) return 1;
  const i = Math.min(n - 2, Math.max(0, Math.floor(s)));
  return c[i + 1] - c[i];
}

/** The fractional sample index at which a monotonic c takes the value v (inverse of valueAtSample). */
export function sampleAtValue(c: ArrayLike<number>, v: number): number {
  const n = c.length;
  if (n < 2) return 0;
  const ascending = c[n - 1] >= c[0];
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if ((c[mid] <= v) === ascending) lo = mid;
    else hi = mid;
  }
  const step = c[lo + 1] - c[lo];
  return step === 0 ? lo : lo + (v - c[lo]) / step;
}
