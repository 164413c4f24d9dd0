/**
 * Which scope channel is which, from the shape of the data (used when the user names none):
 * - trigger: two-level — nearly all samples sit near the lowest or highest level, with sharp edges (few samples in
 *   between compared with those at the top);
 * - ramp: spread over its range (the median near mid-range), long monotonic stretches, not two-level;
 * - signal (interferometer transmission): mostly near the baseline with narrow peaks — the median sits low in the
 *   range and few samples are near the top.
 */
export type ChannelRole = 'signal' | 'ramp' | 'trigger' | 'other';

export interface ChannelShape {
  role: ChannelRole;
  /** (median − min)/(max − min). */
  medianPosition: number;
  /** Fraction of samples within 15 % of the range from either extreme. */
  twoLevelFraction: number;
  /** Fraction of samples within 20 % of the range from the top. */
  topFraction: number;
  /** Fraction of successive 1 %-of-length steps that move the same way as the one before. */
  monotonicity: number;
}

export function channelShape(values: ArrayLike<number>): ChannelShape {
  const n = values.length;
  const sorted = Float64Array.from(values).filter(Number.isFinite).sort();
  const lo = sorted[Math.floor(0.005 * (sorted.length - 1))];
  const hi = sorted[Math.ceil(0.995 * (sorted.length - 1))];
  const range = hi - lo;
  if (!(range > 0)) return { role: 'other', medianPosition: NaN, twoLevelFraction: 1, topFraction: 0, monotonicity: 0 };
  const median = sorted[Math.floor(0.5 * (sorted.length - 1))];
  let nearEnds = 0;
  let nearTop = 0;
  for (let i = 0; i < n; i++) {
    const r = (values[i] - lo) / range;
    if (r < 0.15 || r > 0.85) nearEnds++;
    if (r > 0.8) nearTop++;
  }
  const step = Math.max(1, Math.floor(n / 100));
  let same = 0;
  let total = 0;
  let prev = 0;
  for (let i = step; i < n; i += step) {
    const d = Math.sign(values[i] - values[i - step]);
    if (prev !== 0 && d !== 0) {
      total++;
      if (d === prev) same++;
    }
    if (d !== 0) prev = d;
  }
  const shape = {
    medianPosition: (median - lo) / range,
    twoLevelFraction: nearEnds / n,
    topFraction: nearTop / n,
    monotonicity: total > 0 ? same / total : 0,
  };
  let role: ChannelRole = 'other';
  // Transmission peaks have flanks: at least as many samples between the levels as at the top. A trigger's edges
  // are a sample or two per transition.
  const between = 1 - shape.twoLevelFraction;
  if (shape.twoLevelFraction > 0.9 && shape.topFraction > 0.001 && shape.topFraction < 0.999 && between < 0.2 * shape.topFraction) role = 'trigger';
  else if (shape.medianPosition > 0.2 && shape.medianPosition < 0.8 && shape.monotonicity > 0.7) role = 'ramp';
  else if (shape.medianPosition < 0.25 && shape.topFraction < 0.1) role = 'signal';
  return { role, ...shape };
}

/**
 * Assigns the roles among data columns: the best candidate for each of signal, ramp, trigger (at most one each).
 * `fixed` holds roles the user gave (column indices); they are kept and excluded from the guessing.
 */
export function assignChannels(
  columns: ReadonlyArray<ArrayLike<number>>,
  fixed: { signal?: number; ramp?: number | null; trigger?: number | null } = {},
): { signal: number | null; ramp: number | null; trigger: number | null; shapes: ChannelShape[] } {
  const shapes = columns.map(channelShape);
  const taken = new Set<number>([fixed.signal, fixed.ramp, fixed.trigger].filter((v): v is number => typeof v === 'number'));
  const pick = (role: ChannelRole, given: number | null | undefined, score: (s: ChannelShape) => number): number | null => {
    if (given !== undefined) return given;
    let best: number | null = null;
    let bestScore = -Infinity;
    shapes.forEach((s, i) => {
      if (taken.has(i) || s.role !== role) return;
      const v = score(s);
      if (v > bestScore) {
        bestScore = v;
        best = i;
      }
    });
    if (best !== null) taken.add(best);
    return best;
  };
  const trigger = pick('trigger', fixed.trigger, (s) => s.twoLevelFraction);
  const ramp = pick('ramp', fixed.ramp, (s) => s.monotonicity);
  let signal = pick('signal', fixed.signal, (s) => -s.medianPosition);
  if (signal === null && fixed.signal === undefined) {
    // Nothing looks like a transmission trace: take the first column not used otherwise, the usual CH1.
    const free = columns.findIndex((_, i) => !taken.has(i) && shapes[i].role !== 'trigger');
    signal = free >= 0 ? free : null;
  }
  return { signal, ramp, trigger, shapes };
}
