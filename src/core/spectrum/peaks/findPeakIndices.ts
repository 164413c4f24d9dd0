import { invalid } from '../../errors.js';
import { localMaxima } from './localMaxima.js';
import { peakProminences } from './peakProminences.js';
import { peakWidths } from './peakWidths.js';
import { selectByDistance } from './selectByDistance.js';

/** A condition on a peak property: a minimum, or [minimum, maximum] where null leaves that side open. */
export type Interval = number | readonly [number | null, number | null];

export interface FindPeakIndicesOptions {
  /** Required sample value at the peak. */
  height?: Interval;
  /** Required vertical distance to both neighbouring samples: min over the two ≥ lower, max ≤ upper. */
  threshold?: Interval;
  /** Minimum spacing in samples (≥ 1); lower peaks within it are removed first. */
  distance?: number;
  /** Required prominence (see peakProminences). */
  prominence?: Interval;
  /** Required width in samples at `relHeight` (see peakWidths). */
  width?: Interval;
  /** Window length for prominence (and hence width), in samples. @default the whole signal */
  wlen?: number;
  /** Relative height for `width`. @default 0.5 */
  relHeight?: number;
  /** Required number of samples in a flat top. */
  plateauSize?: Interval;
}

/** The properties computed for the conditions that were given, aligned with `peaks` (as scipy returns them). */
export interface PeakProperties {
  plateauSizes?: Int32Array;
  leftEdges?: Int32Array;
  rightEdges?: Int32Array;
  peakHeights?: Float64Array;
  leftThresholds?: Float64Array;
  rightThresholds?: Float64Array;
  prominences?: Float64Array;
  leftBases?: Int32Array;
  rightBases?: Int32Array;
  widths?: Float64Array;
  widthHeights?: Float64Array;
  leftIps?: Float64Array;
  rightIps?: Float64Array;
}

export interface PeakIndices {
  /** Sample indices of the peaks, ascending. */
  peaks: Int32Array;
  properties: PeakProperties;
}

/**
 * Peak indices of a 1-D signal with the conditions of scipy.signal.find_peaks, applied in scipy's order: plateau
 * size, height, threshold, distance, prominence, width. Candidates are the local maxima (flat tops report their middle
 * sample, rounded down). Interval bounds are inclusive.
 */
export function findPeakIndices(x: ArrayLike<number>, options: FindPeakIndicesOptions = {}): PeakIndices {
  if (options.distance !== undefined && !(options.distance >= 1)) {
    throw invalid('distance', 'a spacing ≥ 1 sample', options.distance);
  }
  const maxima = localMaxima(x);
  let peaks = maxima.midpoints;
  let leftEdges = maxima.leftEdges;
  let rightEdges = maxima.rightEdges;
  const props: PeakProperties = {};
  // Every array here is owned by this call, so filtering compacts in place and keeps views of the front.
  const apply = (keep: Uint8Array): void => {
    peaks = compact(peaks, keep);
    leftEdges = compact(leftEdges, keep);
    rightEdges = compact(rightEdges, keep);
    for (const key of Object.keys(props) as (keyof PeakProperties)[]) {
      const arr = props[key];
      if (arr) (props as Record<string, Int32Array | Float64Array>)[key] = compact(arr, keep);
    }
  };

  if (options.plateauSize !== undefined) {
    const [lo, hi] = bounds('plateauSize', options.plateauSize);
    const sizes = new Int32Array(peaks.length);
    for (let i = 0; i < sizes.length; i++) sizes[i] = rightEdges[i] - leftEdges[i] + 1;
    props.plateauSizes = sizes;
    apply(within(sizes, lo, hi));
  }
  if (options.height !== undefined) {
    const [lo, hi] = bounds('height', options.height);
    const heights = new Float64Array(peaks.length);
    for (let i = 0; i < heights.length; i++) heights[i] = x[peaks[i]];
    props.peakHeights = heights;
    apply(within(heights, lo, hi));
  }
  if (options.threshold !== undefined) {
    const [lo, hi] = bounds('threshold', options.threshold);
    const left = new Float64Array(peaks.length);
    const right = new Float64Array(peaks.length);
    const keep = new Uint8Array(peaks.length);
    for (let i = 0; i < peaks.length; i++) {
      const p = peaks[i];
      left[i] = x[p] - x[p - 1];
      right[i] = x[p] - x[p + 1];
      keep[i] = Math.min(left[i], right[i]) >= lo && Math.max(left[i], right[i]) <= hi ? 1 : 0;
    }
    props.leftThresholds = left;
    props.rightThresholds = right;
    apply(keep);
  }
  if (options.distance !== undefined) {
    const priority = new Float64Array(peaks.length);
    for (let i = 0; i < peaks.length; i++) priority[i] = x[peaks[i]];
    apply(selectByDistance(peaks, priority, options.distance));
  }
  if (options.prominence !== undefined || options.width !== undefined) {
    const data = peakProminences(x, peaks, { wlen: options.wlen });
    props.prominences = data.prominences;
    props.leftBases = data.leftBases;
    props.rightBases = data.rightBases;
    if (options.prominence !== undefined) {
      const [lo, hi] = bounds('prominence', options.prominence);
      apply(within(props.prominences, lo, hi));
    }
  }
  if (options.width !== undefined) {
    const [lo, hi] = bounds('width', options.width);
    const w = peakWidths(x, peaks, {
      relHeight: options.relHeight,
      prominenceData: { prominences: props.prominences!, leftBases: props.leftBases!, rightBases: props.rightBases! },
    });
    Object.assign(props, w);
    apply(within(w.widths, lo, hi));
  }
  if (options.plateauSize !== undefined) {
    props.leftEdges = leftEdges;
    props.rightEdges = rightEdges;
  }
  return { peaks, properties: props };
}

function bounds(name: string, interval: Interval): [number, number] {
  const [lo, hi] = typeof interval === 'number' ? [interval, null] : interval;
  const low = lo ?? -Infinity;
  const high = hi ?? Infinity;
  if (Number.isNaN(low) || Number.isNaN(high) || low > high) {
    throw invalid(name, 'a minimum or a [minimum, maximum] pair', typeof interval === 'number' ? interval : `[${lo}, ${hi}]`);
  }
  return [low, high];
}

function within(values: ArrayLike<number>, lo: number, hi: number): Uint8Array {
  const keep = new Uint8Array(values.length);
  for (let i = 0; i < keep.length; i++) keep[i] = values[i] >= lo && values[i] <= hi ? 1 : 0;
  return keep;
}

function compact<T extends Int32Array | Float64Array>(arr: T, keep: Uint8Array): T {
  let j = 0;
  for (let i = 0; i < keep.length; i++) if (keep[i]) arr[j++] = arr[i];
  return j === arr.length ? arr : (arr.subarray(0, j) as T);
}
