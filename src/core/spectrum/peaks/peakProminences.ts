import { invalid } from '../../errors.js';

export interface PeakProminences {
  prominences: Float64Array;
  /** Index of the lowest sample on each side within the search range (the bases of the prominence). */
  leftBases: Int32Array;
  rightBases: Int32Array;
}

export interface PeakProminencesOptions {
  /**
   * Window length in samples: only samples within ±⌈wlen⌉/2 (integer division) of the peak are searched, as scipy's
   * `wlen`. @default the whole signal
   */
  wlen?: number;
}

/**
 * Topographic prominence of each peak, as scipy.signal.peak_prominences defines it: from the peak, extend a
 * horizontal line left and right until it meets a higher sample or the signal's (or window's) end; on each side take
 * the lowest sample of that stretch; the prominence is the peak's height minus the higher of those two minima
 * (the "key col"). A peak at the edge of the window, or on a rising edge, can have prominence 0.
 */
export function peakProminences(
  x: ArrayLike<number>,
  peaks: ArrayLike<number>,
  options: PeakProminencesOptions = {},
): PeakProminences {
  const n = x.length;
  const half = windowHalf(options.wlen);
  const m = peaks.length;
  const prominences = new Float64Array(m);
  const leftBases = new Int32Array(m);
  const rightBases = new Int32Array(m);
  for (let p = 0; p < m; p++) {
    const peak = checkedIndex(peaks[p], n);
    const iMin = half >= 0 ? Math.max(peak - half, 0) : 0;
    const iMax = half >= 0 ? Math.min(peak + half, n - 1) : n - 1;
    const top = x[peak];
    let leftMin = top;
    let leftBase = peak;
    for (let i = peak; i >= iMin && x[i] <= top; i--) {
      if (x[i] < leftMin) {
        leftMin = x[i];
        leftBase = i;
      }
    }
    let rightMin = top;
    let rightBase = peak;
    for (let i = peak; i <= iMax && x[i] <= top; i++) {
      if (x[i] < rightMin) {
        rightMin = x[i];
        rightBase = i;
      }
    }
    prominences[p] = top - Math.max(leftMin, rightMin);
    leftBases[p] = leftBase;
    rightBases[p] = rightBase;
  }
  return { prominences, leftBases, rightBases };
}

/** scipy's wlen handling: absent → whole signal (−1); otherwise ⌈wlen⌉ (must exceed 1) and half of it, rounded down. */
export function windowHalf(wlen: number | undefined): number {
  if (wlen === undefined) return -1;
  if (!(typeof wlen === 'number' && wlen > 1)) throw invalid('wlen', 'a window length > 1 sample', wlen);
  if (wlen === Infinity) return -1;
  return Math.floor(Math.ceil(wlen) / 2);
}

export function checkedIndex(value: number, n: number): number {
  if (!Number.isInteger(value) || value < 0 || value >= n) {
    throw invalid('peaks', `sample indices between 0 and ${n - 1}`, value);
  }
  return value;
}
