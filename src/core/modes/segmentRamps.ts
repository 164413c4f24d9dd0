import { findPeaksDetailed, peakWidths } from '../spectrum/peaks/index.js';
import type { ModeTrace, RampSegment } from './types.js';

/**
 * Cuts a trace into interferometer sweeps and removes the flyback.
 *
 * - From the ramp channel: a sweep runs from the ramp's crossing of the start level (3 % of its range) to its crossing
 *   of the end level (97 %) without turning back. Sawtooth rises and falls are told apart by their durations: the
 *   short ones are the flyback and are dropped; a triangle (both about equal) gives sweeps both ways, the falling ones
 *   with their time axis reversed so that all sweeps run the same way in frequency. The origin of a sweep is its
 *   start-level crossing, the same piezo voltage every time: mode drift is measured against it.
 * - From a trigger / sync channel: sweeps run from one rising edge (mid-level crossing) to the next; the flyback part
 *   is recognised later by its time-compressed peaks (see findModes).
 * - From the signal alone: during the fast flyback the same modes pass by compressed in time, as peaks several times
 *   narrower than the others; clusters of such peaks mark the flybacks and the sweeps lie between them. Without any,
 *   the whole trace is one sweep.
 */
export interface SegmentRampsOptions {
  /** Start and end levels of a sweep, as fractions of the ramp's range. @default [0.03, 0.97] */
  levels?: [number, number];
  /** A peak narrower than this fraction of the median width is a flyback peak (signal-only segmentation). @default 0.35 */
  flybackWidthRatio?: number;
}

export const SEGMENT_RAMPS_DEFAULTS = { levels: [0.03, 0.97] as [number, number], flybackWidthRatio: 0.35 };

export interface RampSegmentation {
  segments: RampSegment[];
  source: 'ramp' | 'trigger' | 'signal' | 'whole';
  /** Median time from one sweep start to the next (s), when it could be measured. */
  periodS: number | null;
  /** Whether the segment origins mark the same piezo voltage each time (ramp or trigger), so that drift can be measured. */
  originsFixed: boolean;
  warnings: string[];
}

export function segmentRamps(trace: ModeTrace, options: SegmentRampsOptions = {}): RampSegmentation {
  const levels = options.levels ?? SEGMENT_RAMPS_DEFAULTS.levels;
  const warnings: string[] = [];
  if (trace.ramp) {
    const r = fromRamp(trace.timeS, trace.ramp, levels);
    if (r) return { ...r, warnings: [...r.warnings, ...warnings] };
    warnings.push('the ramp channel shows no complete sweep; trying the trigger or the signal instead');
  }
  if (trace.trigger) {
    const r = fromTrigger(trace.timeS, trace.trigger);
    if (r) return { ...r, warnings: [...r.warnings, ...warnings] };
    warnings.push('the trigger channel shows no edges; segmenting from the signal instead');
  }
  const r = fromSignal(trace.timeS, trace.signal, options.flybackWidthRatio ?? SEGMENT_RAMPS_DEFAULTS.flybackWidthRatio);
  return { ...r, warnings: [...warnings, ...r.warnings] };
}

function quantile(values: ArrayLike<number>, q: number): number {
  const s = Float64Array.from(values).filter(Number.isFinite).sort();
  return s[Math.min(s.length - 1, Math.max(0, Math.round(q * (s.length - 1))))];
}

/** Centred moving average over w samples (w odd), for crossing detection only. */
function smooth(y: ArrayLike<number>, w: number): Float64Array {
  const n = y.length;
  const out = new Float64Array(n);
  if (w <= 1) {
    for (let i = 0; i < n; i++) out[i] = y[i];
    return out;
  }
  const h = Math.floor(w / 2);
  const prefix = new Float64Array(n + 1);
  for (let i = 0; i < n; i++) prefix[i + 1] = prefix[i] + y[i];
  for (let i = 0; i < n; i++) {
    const a = Math.max(0, i - h);
    const b = Math.min(n, i + h + 1);
    out[i] = (prefix[b] - prefix[a]) / (b - a);
  }
  return out;
}

interface Crossing {
  /** Fractional sample index. */
  at: number;
  level: 0 | 1;
  up: boolean;
}

function crossings(y: Float64Array, lo: number, hi: number): Crossing[] {
  const out: Crossing[] = [];
  const levels = [lo, hi];
  for (let i = 1; i < y.length; i++) {
    for (const l of [0, 1] as const) {
      const v = levels[l];
      const a = y[i - 1] - v;
      const b = y[i] - v;
      if ((a < 0 && b >= 0) || (a >= 0 && b < 0)) out.push({ at: i - 1 + a / (a - b), level: l, up: b >= 0 });
    }
  }
  return out.sort((p, q) => p.at - q.at);
}

function timeAt(timeS: Float64Array, s: number): number {
  const i = Math.min(timeS.length - 2, Math.max(0, Math.floor(s)));
  return timeS[i] + (s - i) * (timeS[i + 1] - timeS[i]);
}

function fromRamp(timeS: Float64Array, ramp: Float64Array, levels: [number, number]): Omit<RampSegmentation, 'warnings'> & { warnings: string[] } | null {
  const n = ramp.length;
  const y = smooth(ramp, Math.max(1, 2 * Math.floor(n / 4000) + 1));
  const lo = quantile(y, 0.002);
  const hi = quantile(y, 0.998);
  const range = hi - lo;
  if (!(range > 0)) return null;
  const l0 = lo + levels[0] * range;
  const l1 = lo + levels[1] * range;
  const cs = crossings(y, l0, l1);
  const rising: Array<[number, number]> = [];
  const falling: Array<[number, number]> = [];
  for (let i = 0; i + 1 < cs.length; i++) {
    const a = cs[i];
    const b = cs[i + 1];
    if (a.level === 0 && a.up && b.level === 1 && b.up) rising.push([a.at, b.at]);
    if (a.level === 1 && !a.up && b.level === 0 && !b.up) falling.push([a.at, b.at]);
  }
  if (rising.length + falling.length === 0) return null;
  const med = (list: Array<[number, number]>): number => (list.length ? quantile(list.map(([a, b]) => b - a), 0.5) : 0);
  const riseLen = med(rising);
  const fallLen = med(falling);
  const useRising = riseLen >= 0.5 * fallLen;
  const useFalling = fallLen >= 0.5 * riseLen;
  const warnings: string[] = [];
  if (useRising && useFalling) warnings.push('triangle ramp: sweeps in both directions are used, the falling ones reversed in time');
  const segments: RampSegment[] = [];
  if (useRising) {
    for (const [a, b] of rising) segments.push({ startIndex: Math.ceil(a), endIndex: Math.floor(b) + 1, originS: timeAt(timeS, a), direction: 1, complete: true, originValid: true });
  }
  if (useFalling) {
    // Reversed: the sweep "starts" at its low-voltage end, like a rising one.
    for (const [a, b] of falling) segments.push({ startIndex: Math.ceil(a), endIndex: Math.floor(b) + 1, originS: timeAt(timeS, b), direction: -1, complete: true, originValid: true });
  }
  // Sweeps cut by the trace's ends: usable for the frequency scale (not for drift, their origin is unknown) when
  // they are at least half as long as a complete one.
  const full = useRising ? riseLen : fallLen;
  const first = cs[0];
  const last = cs[cs.length - 1];
  if (first && first.level === 1 && first.up === useRising && first.at >= 0.5 * full) {
    segments.push({ startIndex: 0, endIndex: Math.floor(first.at) + 1, originS: useRising ? timeS[0] : timeAt(timeS, first.at), direction: useRising ? 1 : -1, complete: false, originValid: !useRising });
  }
  if (last && last.level === 0 && last.up === useRising && n - 1 - last.at >= 0.5 * full) {
    segments.push({ startIndex: Math.ceil(last.at), endIndex: n, originS: useRising ? timeAt(timeS, last.at) : timeS[n - 1], direction: useRising ? 1 : -1, complete: false, originValid: useRising });
  }
  segments.sort((p, q) => p.startIndex - q.startIndex);
  const starts = segments.filter((s) => s.complete && s.direction === (useRising ? 1 : -1)).map((s) => s.originS);
  const periods = starts.slice(1).map((t, i) => t - starts[i]);
  return { segments, source: 'ramp', periodS: periods.length ? quantile(periods, 0.5) : null, originsFixed: true, warnings };
}

function fromTrigger(timeS: Float64Array, trigger: Float64Array): (Omit<RampSegmentation, 'warnings'> & { warnings: string[] }) | null {
  const lo = quantile(trigger, 0.01);
  const hi = quantile(trigger, 0.99);
  const range = hi - lo;
  if (!(range > 0)) return null;
  // Hysteresis: an edge needs the signal to pass from below 40 % to above 60 % of the range.
  const low = lo + 0.4 * range;
  const high = lo + 0.6 * range;
  const mid = lo + 0.5 * range;
  const edges: number[] = [];
  let state: 'low' | 'high' | null = null;
  let lastBelowMid = 0;
  for (let i = 0; i < trigger.length; i++) {
    const v = trigger[i];
    if (v < mid) lastBelowMid = i;
    if (v <= low) state = 'low';
    else if (v >= high) {
      if (state === 'low') {
        // Interpolate the mid-level crossing next to the last sample below mid.
        const j = lastBelowMid;
        const a = trigger[j] - mid;
        const b = trigger[Math.min(j + 1, trigger.length - 1)] - mid;
        edges.push(j + (a !== b ? a / (a - b) : 0));
      }
      state = 'high';
    }
  }
  if (edges.length < 2) return null;
  const segments: RampSegment[] = [];
  for (let i = 0; i + 1 < edges.length; i++) {
    segments.push({ startIndex: Math.ceil(edges[i]), endIndex: Math.floor(edges[i + 1]) + 1, originS: timeAt(timeS, edges[i]), direction: 1, complete: true, originValid: true });
  }
  const periods = segments.map((s, i) => (i + 1 < segments.length ? segments[i + 1].originS - s.originS : NaN)).filter(Number.isFinite);
  return {
    segments,
    source: 'trigger',
    periodS: periods.length ? quantile(periods, 0.5) : timeAt(timeS, edges[1]) - timeAt(timeS, edges[0]),
    originsFixed: true,
    warnings: [],
  };
}

function fromSignal(timeS: Float64Array, signal: Float64Array, flybackWidthRatio: number): Omit<RampSegmentation, 'warnings'> & { warnings: string[] } {
  const n = signal.length;
  const whole = (why: string): Omit<RampSegmentation, 'warnings'> & { warnings: string[] } => ({
    segments: [{ startIndex: 0, endIndex: n, originS: timeS[0], direction: 1, complete: false, originValid: false }],
    source: 'whole',
    periodS: null,
    originsFixed: false,
    warnings: [`no ramp or trigger channel and ${why}: the whole trace is taken as one sweep`],
  });
  const index = new Float64Array(n);
  for (let i = 0; i < n; i++) index[i] = i;
  const search = findPeaksDetailed({ positionPx: index, intensity: signal });
  const peaks = search.peaks;
  if (peaks.length < 4) return whole('too few peaks to find the flybacks');
  const r = Float64Array.from(signal, (v, i) => v - search.baseline[i]);
  const at = search.fits.map((f) => f.sampleIndex);
  const widths = peakWidths(r, at).widths;
  // Upper quartile as the sweep's typical width: the flyback can show as many (narrow) peaks as the sweep itself.
  const median = quantile(widths, 0.75);
  const narrow = at.map((_, i) => widths[i] < flybackWidthRatio * median);
  // Clusters of narrow peaks: consecutive narrow peaks (in peak order) belong to one flyback.
  const clusters: Array<[number, number]> = [];
  for (let i = 0; i < at.length; i++) {
    if (!narrow[i]) continue;
    const lo = at[i] - 2 * widths[i];
    const hi = at[i] + 2 * widths[i];
    const last = clusters[clusters.length - 1];
    if (last && i > 0 && narrow[i - 1]) last[1] = hi;
    else clusters.push([lo, hi]);
  }
  if (clusters.length === 0) return whole('no flyback could be seen in the signal');
  const segments: RampSegment[] = [];
  let start = 0;
  for (const [lo, hi] of clusters) {
    const end = Math.max(0, Math.floor(lo));
    if (end - start > 0.05 * n) segments.push({ startIndex: start, endIndex: end, originS: timeS[start], direction: 1, complete: start > 0, originValid: false });
    start = Math.min(n, Math.ceil(hi) + 1);
  }
  if (n - start > 0.05 * n) segments.push({ startIndex: start, endIndex: n, originS: timeS[start], direction: 1, complete: false, originValid: false });
  const inner = segments.filter((s) => s.complete);
  const periods = inner.slice(1).map((s, i) => s.originS - inner[i].originS);
  return {
    segments,
    source: 'signal',
    periodS: periods.length ? quantile(periods, 0.5) : null,
    originsFixed: false,
    warnings: ['no ramp or trigger channel: sweeps found from the flybacks seen in the signal (record the ramp for drift measurements)'],
  };
}
