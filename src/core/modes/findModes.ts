import { linearLeastSquares } from '../fit/index.js';
import { findPeaksDetailed, peakWidths, type FindPeaksOptions } from '../spectrum/peaks/index.js';
import type { ModePeak, ModeTrace, RampSegment } from './types.js';

/**
 * The transmission peaks of every sweep, found with the project's peak finder (core/spectrum/peaks: noise-based
 * threshold, baseline, Gaussian-fitted centres with uncertainties). Widths are the sampled full width at half
 * height above the baseline (via peakWidths), not the Gaussian model's: the interferometer's Airy peaks are not
 * Gaussian, and the finesse needs their true FWHM.
 *
 * Removed: peaks closer to a sweep's end than half their width (cut off), and peaks narrower than `flybackWidthRatio`
 * of the trace's typical (upper-quartile) width — modes passing by during a flyback (time-compressed) or spikes — and broad bumps more
 * than 2.5× that width.
 */
export interface FindModePeaksOptions {
  /** Detection threshold in noise σ (see findPeaks). @default 5 */
  thresholdSigma?: number;
  /** @default 0.35 */
  flybackWidthRatio?: number;
}

/** Peaks wider than this multiple of the median width are not transmission peaks. */
const WIDE_RATIO = 2.5;

export const FIND_MODE_PEAKS_DEFAULTS = { thresholdSigma: 5, flybackWidthRatio: 0.35 } as const;

export interface ModePeakSearch {
  peaks: ModePeak[];
  /** Bumps much wider than the interferometer's peaks (merged, unresolved modes), left out. */
  rejectedWide: number;
  /** Per segment: duration (s) and noise σ of the signal. */
  segments: Array<{ durationS: number; noise: number; peakCount: number }>;
  /** Peaks dropped as flyback or spikes. */
  rejectedNarrow: number;
  warnings: string[];
}

export function findModePeaks(trace: ModeTrace, segments: readonly RampSegment[], options: FindModePeaksOptions = {}): ModePeakSearch {
  const thresholdSigma = options.thresholdSigma ?? FIND_MODE_PEAKS_DEFAULTS.thresholdSigma;
  const flybackWidthRatio = options.flybackWidthRatio ?? FIND_MODE_PEAKS_DEFAULTS.flybackWidthRatio;
  const { timeS, signal } = trace;
  const raw: ModePeak[] = [];
  const info: ModePeakSearch['segments'] = [];
  const warnings: string[] = [];
  segments.forEach((seg, si) => {
    const m = seg.endIndex - seg.startIndex;
    if (m < 16) {
      info.push({ durationS: 0, noise: NaN, peakCount: 0 });
      return;
    }
    // The sweep in its own time order (reversed for falling sweeps).
    const y = new Float64Array(m);
    const t = new Float64Array(m);
    for (let i = 0; i < m; i++) {
      const src = seg.direction === 1 ? seg.startIndex + i : seg.endIndex - 1 - i;
      y[i] = signal[src];
      t[i] = seg.direction === 1 ? timeS[src] - seg.originS : seg.originS - timeS[src];
    }
    // The floor is the photodiode's dark level, flat, seen between the mode groups: a sliding baseline would ride up
    // the pedestal that the Airy wings of neighbouring modes build under a group, and shrink heights and widths.
    // Most of a sweep is dark (the groups and their wings fill a fraction of each FSR): the 40 % quantile sits within
    // a quarter σ of the noise mean there, where a low quantile would put the noise itself above the floor.
    const floor = Float64Array.from(y).sort()[Math.floor(0.4 * (m - 1))];
    for (let i = 0; i < m; i++) y[i] -= floor;
    const index = Float64Array.from({ length: m }, (_, i) => i);
    const peakOptions: FindPeaksOptions = { thresholdSigma, baselineWindowSamples: 'none' };
    const search = findPeaksDetailed({ positionPx: index, intensity: y }, peakOptions);
    const r = Float64Array.from(y, (v, i) => v - search.baseline[i]);
    const tops = search.fits.map((f) => f.sampleIndex);
    // Full width at half the height above the baseline: peakWidths with the height as the "prominence" and the
    // sweep's ends as bases (its prominence-based width would be too narrow where Airy wings of neighbours overlap).
    const widths = tops.length
      ? peakWidths(r, tops, {
          prominenceData: {
            prominences: Float64Array.from(tops, (i) => Math.max(r[i], 0)),
            leftBases: new Int32Array(tops.length),
            rightBases: new Int32Array(tops.length).fill(m - 1),
          },
        }).widths
      : new Float64Array(0);
    const dt = Math.abs(t[m - 1] - t[0]) / (m - 1);
    const refined = refineAiryPeaks(
      r,
      // Start from the Gaussian fit's width where the sampled one is inflated by a neighbour's pedestal.
      search.peaks.map((p, j) => ({ center: search.fits[j].centerSample, height: Math.max(p.height, 0), width: Math.max(Math.min(widths[j], p.fwhmPx), 1) })),
    );
    search.peaks.forEach((p, j) => {
      const { center: s, height, width } = refined[j];
      if (s - 0.5 * width < 0 || s + 0.5 * width > m - 1) return;
      const i0 = Math.min(m - 2, Math.max(0, Math.floor(s)));
      // Midpoint of the two half-height crossings: each is off by noise/slope, the slope there being height/width.
      const crossingSd = (search.noise * width) / (Math.max(height, search.noise) * Math.SQRT2);
      raw.push({
        segment: si,
        timeS: t[i0] + (s - i0) * (t[i0 + 1] - t[i0]),
        timeUncertaintyS: Math.max(p.positionUncertaintyPx, crossingSd) * dt,
        height,
        fwhmS: width * dt,
        blended: p.blended,
      });
    });
    info.push({ durationS: Math.abs(t[m - 1] - t[0]), noise: search.noise, peakCount: 0 });
  });
  // The reference width is the upper quartile: with a trigger-only segmentation the flyback's compressed peaks can
  // be as many as the sweep's, and a median would then fall among them.
  const sortedWidths = raw.map((p) => p.fwhmS).sort((a, b) => a - b);
  const median = sortedWidths.length ? sortedWidths[Math.floor(0.75 * (sortedWidths.length - 1))] : 0;
  // Much wider than the instrument's peaks is no single transmission peak either (a bump on overlapping wings); an
  // unresolved pair of modes is about twice as wide and stays.
  const narrowOnes = raw.filter((p) => p.fwhmS < flybackWidthRatio * median).length;
  let peaks = raw.filter((p) => p.fwhmS >= flybackWidthRatio * median && p.fwhmS <= WIDE_RATIO * median);
  const rejectedNarrow = narrowOnes;
  const rejectedWide = raw.length - peaks.length - narrowOnes;
  peaks.sort((a, b) => a.segment - b.segment || a.timeS - b.timeS);
  // Noise on a well-sampled flank can raise a second local maximum within one peak: closer than half a width, the
  // weaker of two goes (real modes closer than that would be unresolved anyway).
  for (let i = peaks.length - 1; i > 0; i--) {
    const a = peaks[i - 1];
    const b = peaks[i];
    if (a.segment === b.segment && b.timeS - a.timeS < 0.5 * median) peaks.splice(a.height >= b.height ? i : i - 1, 1);
  }
  // Overlap with a neighbour, judged on the sweep's own peaks (the peak finder's flag compares widths across the whole
  // segment, flyback peaks included): closer than 1.2 FWHM, the Airy profiles overlap by more than a few per cent.
  for (let i = 0; i < peaks.length; i++) {
    const p = peaks[i];
    const near = [peaks[i - 1], peaks[i + 1]].some((q) => q && q.segment === p.segment && Math.abs(q.timeS - p.timeS) < 1.2 * Math.max(p.fwhmS, q.fwhmS));
    p.blended = near;
  }
  for (const p of peaks) info[p.segment].peakCount++;
  return { peaks, segments: info, rejectedNarrow, rejectedWide, warnings };
}

/**
 * Centres, heights and FWHM of Airy peaks that sit on each other's wings. Near a transmission maximum the Airy
 * function is a Lorentzian, 1/(1 + (2δ/w)²) for F ≫ 1. Each pass (three in all):
 *  1. heights by joint linear least squares of all the sweep's Lorentzians (current centres and widths) over the
 *     samples within one width of any peak — stable where the wings overlap, and unbiased by noise;
 *  2. each peak's centre and width from the half-height crossings of the trace with its neighbours' Lorentzians
 *     subtracted (centre midway between the crossings), accepted only if the centre moves by less than half a width
 *     and the width changes by less than a factor 1.6 — otherwise the previous values stay.
 * Without this the pedestal of overlapping wings pulls the centres of a mode group together and biases widths and
 * powers.
 */
/** Wings are followed this many widths out (a Lorentzian is down to 1/(1 + 4·REACH²) ≈ 0.06 % there). */
const REACH = 20;

export function refineAiryPeaks(
  y: ArrayLike<number>,
  peaks: ReadonlyArray<{ center: number; height: number; width: number }>,
  passes = 3,
): Array<{ center: number; height: number; width: number }> {
  const n = y.length;
  let est = peaks.map((p) => ({ ...p }));
  const lorentz = (i: number, p: { center: number; width: number }): number => {
    const d = (2 * (i - p.center)) / p.width;
    return 1 / (1 + d * d);
  };
  for (let pass = 0; pass < passes && est.length > 0; pass++) {
    // 1. Heights, jointly within each cluster of peaks whose wings reach each other (gaps under REACH widths).
    const order = est.map((_, j) => j).sort((a, b) => est[a].center - est[b].center);
    const clusters: number[][] = [];
    for (const j of order) {
      const last = clusters[clusters.length - 1];
      const prev = last ? est[last[last.length - 1]] : null;
      if (prev && est[j].center - prev.center < REACH * Math.max(prev.width, est[j].width)) last.push(j);
      else clusters.push([j]);
    }
    const heights = est.map((p) => p.height);
    for (const cluster of clusters) {
      const rows: number[][] = [];
      const rhs: number[] = [];
      const lo = Math.max(0, Math.floor(Math.min(...cluster.map((j) => est[j].center - est[j].width))));
      const hi = Math.min(n - 1, Math.ceil(Math.max(...cluster.map((j) => est[j].center + est[j].width))));
      for (let i = lo; i <= hi; i++) {
        if (!cluster.some((j) => Math.abs(i - est[j].center) <= est[j].width)) continue;
        rows.push(cluster.map((j) => lorentz(i, est[j])));
        rhs.push(y[i]);
      }
      const fit = rows.length > cluster.length ? linearLeastSquares(rows, rhs) : null;
      if (fit) cluster.forEach((j, c) => (heights[j] = fit.params[c] > 0 ? fit.params[c] : heights[j]));
    }
    est = est.map((p, j) => ({ ...p, height: heights[j] }));
    // 2. Centres and widths, one at a time against the others.
    est = est.map((p, j) => {
      const lo = Math.max(0, Math.floor(p.center - 3 * p.width));
      const hi = Math.min(n - 1, Math.ceil(p.center + 3 * p.width));
      const z = new Float64Array(hi - lo + 1);
      for (let i = lo; i <= hi; i++) {
        let v = y[i];
        for (let q = 0; q < est.length; q++) if (q !== j && Math.abs(i - est[q].center) < REACH * est[q].width) v -= est[q].height * lorentz(i, est[q]);
        z[i - lo] = v;
      }
      // On finely sampled traces noise makes an early half-height crossing: smooth over ≈ w/8 first (it widens a
      // Lorentzian by a negligible (w/8)²/12 in variance).
      const k = Math.floor(p.width / 16);
      if (k >= 1) {
        const prefix = new Float64Array(z.length + 1);
        for (let i = 0; i < z.length; i++) prefix[i + 1] = prefix[i] + z[i];
        for (let i = 0; i < z.length; i++) {
          const a = Math.max(0, i - k);
          const b = Math.min(z.length, i + k + 1);
          z[i] = (prefix[b] - prefix[a]) / (b - a);
        }
      }
      const half = p.height / 2;
      let top = Math.min(z.length - 1, Math.max(0, Math.round(p.center) - lo));
      const reach = Math.max(1, Math.round(p.width / 2));
      for (let i = Math.max(0, top - reach); i <= Math.min(z.length - 1, top + reach); i++) if (z[i] > z[top]) top = i;
      let l = top;
      while (l > 0 && z[l] > half) l--;
      let r = top;
      while (r < z.length - 1 && z[r] > half) r++;
      if (z[l] > half || z[r] > half || l === top || r === top) return p;
      const xl = l + (half - z[l]) / (z[l + 1] - z[l]);
      const xr = r - (half - z[r]) / (z[r - 1] - z[r]);
      const width = xr - xl;
      const center = lo + (xl + xr) / 2;
      if (!(width > p.width / 1.6 && width < p.width * 1.6) || !(Math.abs(center - p.center) < 0.5 * p.width)) return p;
      return { center, height: p.height, width };
    });
  }
  return est;
}
