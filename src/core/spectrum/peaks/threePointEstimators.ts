/**
 * Sub-sample offset of a peak from three samples y₋ = y[i−1], y₀ = y[i], y₊ = y[i+1] around a maximum at i. Each
 * returns the offset from i in samples, in (−1, 1) for a true maximum, or NaN when the formula is undefined.
 */

/** Vertex of the parabola through the three samples: δ = (y₋ − y₊) / (2(y₋ − 2y₀ + y₊)). */
export function parabolicOffset(yMinus: number, y0: number, yPlus: number): number {
  const denom = yMinus - 2 * y0 + yPlus;
  return denom < 0 ? (yMinus - yPlus) / (2 * denom) : NaN;
}

/**
 * Vertex of the parabola through ln y (exact for a point-sampled Gaussian on a zero baseline, whatever its width):
 * δ = (ln y₋ − ln y₊) / (2(ln y₋ − 2 ln y₀ + ln y₊)). Needs all three samples > 0.
 */
export function gaussianOffset(yMinus: number, y0: number, yPlus: number): number {
  if (!(yMinus > 0 && y0 > 0 && yPlus > 0)) return NaN;
  return parabolicOffset(Math.log(yMinus), Math.log(y0), Math.log(yPlus));
}

/** Centre of mass of the three samples: δ = (y₊ − y₋) / (y₋ + y₀ + y₊). Biased towards i for any real peak. */
export function centroidOffset(yMinus: number, y0: number, yPlus: number): number {
  const sum = yMinus + y0 + yPlus;
  return sum > 0 ? (yPlus - yMinus) / sum : NaN;
}
