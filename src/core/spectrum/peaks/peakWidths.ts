import { invalid } from '../../errors.js';
import { checkedIndex, peakProminences, type PeakProminences } from './peakProminences.js';

export interface PeakWidths {
  /** Width in samples at the evaluation height (right − left interpolated positions). */
  widths: Float64Array;
  /** The evaluation height: peak height − relHeight × prominence. */
  widthHeights: Float64Array;
  /** Interpolated left and right crossing positions, in fractional samples. */
  leftIps: Float64Array;
  rightIps: Float64Array;
}

export interface PeakWidthsOptions {
  /** Relative height at which the width is taken, as a fraction of the prominence (0.5 → width at half prominence). @default 0.5 */
  relHeight?: number;
  /** Prominences and bases from `peakProminences`; computed when absent. */
  prominenceData?: PeakProminences;
  /** Window length for computing the prominences when `prominenceData` is absent (see peakProminences). */
  wlen?: number;
}

/**
 * Width of each peak as scipy.signal.peak_widths defines it: the evaluation height is h = x[peak] − relHeight ·
 * prominence; from the peak walk outwards until a sample is at or below h, or the prominence base is reached; the
 * crossing is then interpolated linearly between that sample and its inner neighbour. With relHeight 0.5 this is the
 * full width at half prominence, which equals the FWHM for an isolated peak on a zero baseline.
 */
export function peakWidths(x: ArrayLike<number>, peaks: ArrayLike<number>, options: PeakWidthsOptions = {}): PeakWidths {
  const relHeight = options.relHeight ?? 0.5;
  if (!(relHeight >= 0 && Number.isFinite(relHeight))) throw invalid('relHeight', 'a number ≥ 0', relHeight);
  const n = x.length;
  const m = peaks.length;
  const data = options.prominenceData ?? peakProminences(x, peaks, { wlen: options.wlen });
  if (data.prominences.length !== m || data.leftBases.length !== m || data.rightBases.length !== m) {
    throw invalid('prominenceData', `arrays of ${m} entries, one per peak`, data.prominences.length);
  }
  const widths = new Float64Array(m);
  const widthHeights = new Float64Array(m);
  const leftIps = new Float64Array(m);
  const rightIps = new Float64Array(m);
  for (let p = 0; p < m; p++) {
    const peak = checkedIndex(peaks[p], n);
    const iMin = data.leftBases[p];
    const iMax = data.rightBases[p];
    if (!(iMin >= 0 && iMin <= peak && peak <= iMax && iMax < n)) {
      throw invalid('prominenceData', `bases around peak ${peak} inside the signal`, `${iMin}..${iMax}`);
    }
    const height = x[peak] - data.prominences[p] * relHeight;
    let i = peak;
    while (iMin < i && height < x[i]) i--;
    let leftIp = i;
    if (x[i] < height) leftIp += (height - x[i]) / (x[i + 1] - x[i]);
    i = peak;
    while (i < iMax && height < x[i]) i++;
    let rightIp = i;
    if (x[i] < height) rightIp -= (height - x[i]) / (x[i - 1] - x[i]);
    widths[p] = rightIp - leftIp;
    widthHeights[p] = height;
    leftIps[p] = leftIp;
    rightIps[p] = rightIp;
  }
  return { widths, widthHeights, leftIps, rightIps };
}
