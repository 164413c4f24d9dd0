import { InputError, invalid } from '../errors.js';
import { withDefaults } from './options.js';

/**
 * Random versus unpolarized. A laser that reads "unpolarized" behind a rotating analyser may emit several longitudinal
 * modes whose linear polarizations are orthogonal and whose powers trade off as the cavity length drifts (mode
 * competition): the total stays steady while the power through a fixed analyser swings by tens of percent. Truly
 * unpolarized light (a lamp, a depolarized beam) is as steady through the analyser as without it.
 */

export interface TimeSeries {
  timeS: ArrayLike<number>;
  intensity: ArrayLike<number>;
  /** Name in messages (a file name). */
  source?: string;
  /** Where each sample came from ("line 12"), parallel to the arrays, for messages. */
  labels?: readonly string[];
}

export interface TimeSeriesOptions {
  /** The same source without the analyser (total power), for comparison. */
  reference?: TimeSeries;
  /**
   * The reference was recorded at the same time (a beam splitter and a second detector): the ratio analysed/reference
   * is then formed sample by sample, interpolating the reference in time. @default false
   */
  simultaneous?: boolean;
  /** With a reference: fluctuating when the analysed relative fluctuation exceeds the reference's by this factor. @default 3 */
  fluctuationRatio?: number;
  /** With a reference: and when it is at least this (a fraction of the mean). @default 0.02 */
  minRelativeFluctuation?: number;
  /** Without a reference: fluctuating from this slow relative fluctuation on. @default 0.05 */
  minRelativeFluctuationNoReference?: number;
  /** The least number of samples per series. @default 10 */
  minSamples?: number;
}

/** Thresholds of the random-vs-unpolarized test (common practice, no source), settable per call. */
export const TIME_SERIES_DEFAULTS = {
  simultaneous: false,
  fluctuationRatio: 3,
  minRelativeFluctuation: 0.02,
  minRelativeFluctuationNoReference: 0.05,
  minSamples: 10,
} as const;

export interface SeriesStatistics {
  count: number;
  durationS: number;
  mean: number;
  min: number;
  max: number;
  /** (max − min)/mean. */
  relativeRange: number;
  /** Standard deviation about a fitted straight line, over the mean: the fluctuation with slow warm-up drift removed. */
  relativeFluctuation: number;
  /** Relative change along that straight line from the first sample to the last. */
  relativeTrend: number;
  /**
   * Sample-to-sample (white) noise over the mean, from successive differences: σ_w² = ⟨(x_{i+1} − x_i)²⟩/2
   * (von Neumann's mean square successive difference).
   */
  relativeWhiteNoise: number;
  /** √max(0, σ² − σ_w²)/mean: the part of the fluctuation slower than the sampling (what mode competition gives). */
  relativeSlowFluctuation: number;
  /** Lag at which the autocorrelation of the detrended series first falls below 1/e; null if it never does. */
  correlationTimeS: number | null;
}

export type TimeSeriesVerdict = 'stable' | 'fluctuating';

export interface TimeSeriesAnalysis {
  verdict: TimeSeriesVerdict;
  /** One sentence for people. */
  interpretation: string;
  analysed: SeriesStatistics;
  reference?: SeriesStatistics;
  /** Analysed/reference sample by sample (only for a simultaneous reference). */
  ratio?: SeriesStatistics;
  /** analysed.relativeSlowFluctuation / reference.relativeSlowFluctuation, where there is a reference. */
  fluctuationRatio?: number;
  thresholds: {
    fluctuationRatio: number;
    minRelativeFluctuation: number;
    minRelativeFluctuationNoReference: number;
  };
  warnings: string[];
}

/**
 * Decides "stable" or "fluctuating" for a time series taken through a fixed analyser, optionally with a reference
 * series of the total power: fluctuating when the slow relative fluctuation through the analyser is large and (with a
 * reference) several times that of the total.
 */
export function analyseTimeSeries(series: TimeSeries, options: TimeSeriesOptions = {}): TimeSeriesAnalysis {
  const o = withDefaults(TIME_SERIES_DEFAULTS, options) as Required<Omit<TimeSeriesOptions, 'reference'>> & TimeSeriesOptions;
  const warnings: string[] = [];
  const a = checkSeries(series, 'time series', o.minSamples);
  const analysed = seriesStatistics(a.t, a.y);
  const thresholds = {
    fluctuationRatio: o.fluctuationRatio,
    minRelativeFluctuation: o.minRelativeFluctuation,
    minRelativeFluctuationNoReference: o.minRelativeFluctuationNoReference,
  };
  const pct = (v: number): string => `${(100 * v).toFixed(v < 0.01 ? 2 : 1)} %`;
  if (!o.reference) {
    const fluctuating = analysed.relativeSlowFluctuation >= o.minRelativeFluctuationNoReference;
    warnings.push(
      'no reference series without the analyser: a fluctuation of the total power cannot be told from a fluctuating polarization; record one for a firm answer',
    );
    return {
      verdict: fluctuating ? 'fluctuating' : 'stable',
      interpretation: fluctuating
        ? `the power through the fixed analyser fluctuates slowly by ${pct(analysed.relativeSlowFluctuation)} (range ${pct(
            analysed.relativeRange,
          )}): fluctuating polarization, as from mode competition in a randomly polarized laser — or an unsteady source`
        : `the power through the fixed analyser is steady (slow fluctuation ${pct(analysed.relativeSlowFluctuation)}): no sign of fluctuating polarization`,
      analysed,
      thresholds,
      warnings,
    };
  }
  const r = checkSeries(o.reference, 'reference series', o.minSamples);
  const reference = seriesStatistics(r.t, r.y);
  let ratio: SeriesStatistics | undefined;
  if (o.simultaneous) {
    const t0 = Math.max(a.t[0], r.t[0]);
    const t1 = Math.min(a.t[a.t.length - 1], r.t[r.t.length - 1]);
    const keepT: number[] = [];
    const keepY: number[] = [];
    for (let i = 0; i < a.t.length; i++) {
      if (a.t[i] < t0 || a.t[i] > t1) continue;
      const ref = interpolate(r.t, r.y, a.t[i]);
      if (ref > 0) {
        keepT.push(a.t[i]);
        keepY.push(a.y[i] / ref);
      }
    }
    if (keepT.length < o.minSamples) {
      throw new InputError(
        `${o.reference.source ?? 'reference series'}: overlaps the analysed series in time at only ${keepT.length} samples; a simultaneous reference must cover the same times`,
        o.reference.source,
      );
    }
    ratio = seriesStatistics(Float64Array.from(keepT), Float64Array.from(keepY));
  }
  const refSlow = reference.relativeSlowFluctuation;
  const fluctuationRatio = analysed.relativeSlowFluctuation / Math.max(refSlow, 1e-12);
  const metric = ratio ? ratio.relativeSlowFluctuation : analysed.relativeSlowFluctuation;
  const fluctuating = ratio
    ? metric >= o.minRelativeFluctuation
    : metric >= o.minRelativeFluctuation && fluctuationRatio >= o.fluctuationRatio;
  if (!fluctuating && analysed.relativeSlowFluctuation >= o.minRelativeFluctuation && !ratio) {
    warnings.push(
      `the power through the analyser fluctuates by ${pct(analysed.relativeSlowFluctuation)}, but the total fluctuates comparably (${pct(
        refSlow,
      )}): the source itself is unsteady`,
    );
  }
  const interpretation = fluctuating
    ? `fluctuating polarization (mode competition): through the analyser the power wanders by ${pct(
        analysed.relativeSlowFluctuation,
      )}${ratio ? ` relative to the total (ratio fluctuation ${pct(ratio.relativeSlowFluctuation)})` : `, ${fluctuationRatio.toFixed(1)}× the total's ${pct(refSlow)}`}`
    : `stable: through the analyser ${pct(analysed.relativeSlowFluctuation)}, total ${pct(refSlow)}${
        ratio ? `, ratio ${pct(ratio.relativeSlowFluctuation)}` : ''
      }`;
  return {
    verdict: fluctuating ? 'fluctuating' : 'stable',
    interpretation,
    analysed,
    reference,
    ...(ratio ? { ratio } : {}),
    fluctuationRatio,
    thresholds,
    warnings,
  };
}

/** Statistics of one series (times strictly increasing, intensities positive on average). */
export function seriesStatistics(t: Float64Array, y: Float64Array): SeriesStatistics {
  const n = y.length;
  let mean = 0;
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < n; i++) {
    mean += y[i];
    min = Math.min(min, y[i]);
    max = Math.max(max, y[i]);
  }
  mean /= n;
  // Straight-line fit y ≈ α + β (t − t̄).
  let tm = 0;
  for (let i = 0; i < n; i++) tm += t[i];
  tm /= n;
  let stt = 0;
  let sty = 0;
  for (let i = 0; i < n; i++) {
    stt += (t[i] - tm) ** 2;
    sty += (t[i] - tm) * (y[i] - mean);
  }
  const beta = stt > 0 ? sty / stt : 0;
  const resid = new Float64Array(n);
  let ss = 0;
  for (let i = 0; i < n; i++) {
    resid[i] = y[i] - mean - beta * (t[i] - tm);
    ss += resid[i] ** 2;
  }
  const variance = ss / Math.max(1, n - 2);
  let sd = 0;
  for (let i = 1; i < n; i++) sd += (resid[i] - resid[i - 1]) ** 2;
  const white = sd / (2 * (n - 1));
  const duration = t[n - 1] - t[0];
  // Autocorrelation of the detrended series; the lag where it first drops below 1/e, in time via the median step.
  let correlationTimeS: number | null = null;
  if (ss > 0) {
    const steps = Array.from({ length: n - 1 }, (_, i) => t[i + 1] - t[i]).sort((p, q) => p - q);
    const dt = steps[Math.floor((n - 2) / 2)];
    for (let lag = 1; lag < Math.floor(n / 2); lag++) {
      let c = 0;
      for (let i = 0; i + lag < n; i++) c += resid[i] * resid[i + lag];
      if (c / ss < Math.exp(-1)) {
        correlationTimeS = lag * dt;
        break;
      }
    }
  }
  return {
    count: n,
    durationS: duration,
    mean,
    min,
    max,
    relativeRange: (max - min) / mean,
    relativeFluctuation: Math.sqrt(variance) / mean,
    relativeTrend: (beta * duration) / mean,
    relativeWhiteNoise: Math.sqrt(white) / mean,
    relativeSlowFluctuation: Math.sqrt(Math.max(0, variance - white)) / mean,
    correlationTimeS,
  };
}

function checkSeries(s: TimeSeries, name: string, minSamples: number): { t: Float64Array; y: Float64Array } {
  const source = s.source ?? name;
  const n = s.timeS.length;
  if (n !== s.intensity.length) {
    throw new InputError(`${source}: ${n} times but ${s.intensity.length} intensities`, source);
  }
  if (n < minSamples) throw new InputError(`${source}: expected at least ${minSamples} samples, got ${n}`, source);
  const t = Float64Array.from(s.timeS);
  const y = Float64Array.from(s.intensity);
  for (let i = 0; i < n; i++) {
    const where = `${source}, ${s.labels?.[i] ?? `sample ${i + 1}`}`;
    if (!Number.isFinite(t[i])) throw invalid(`${where}: time_s`, 'a finite time in seconds', t[i]);
    if (!Number.isFinite(y[i]) || y[i] < 0) throw invalid(`${where}: intensity`, 'a finite, non-negative intensity', y[i]);
    if (i > 0 && !(t[i] > t[i - 1])) {
      throw invalid(`${where}: time_s`, `a time later than the previous sample's ${t[i - 1]} s (times must increase)`, t[i]);
    }
  }
  let mean = 0;
  for (let i = 0; i < n; i++) mean += y[i];
  if (!(mean > 0)) throw new InputError(`${source}: all intensities are zero`, source);
  return { t, y };
}

function interpolate(t: Float64Array, y: Float64Array, at: number): number {
  let lo = 0;
  let hi = t.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (t[mid] <= at) lo = mid;
    else hi = mid;
  }
  if (hi === lo) return y[lo];
  const f = (at - t[lo]) / (t[hi] - t[lo]);
  return y[lo] + f * (y[hi] - y[lo]);
}
