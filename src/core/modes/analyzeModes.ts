import { InputError, assertFinite } from '../errors.js';
import { assignModes, type LabelledPeak } from './assignModes.js';
import { cavityLengthFromSpacing } from './cavity.js';
import { circularMean, measureDrift, type DriftResult } from './drift.js';
import { findModePeaks } from './findModes.js';
import { fitFrequencyScale, sweepFrequencyHz, sweepRateHzPerS, type FrequencyScale } from './frequencyScale.js';
import { fitGainCurve, type GainFit, type GainModel } from './gainFit.js';
import { segmentRamps, type RampSegmentation } from './segmentRamps.js';
import type { ModeTrace } from './types.js';

/**
 * One scanning Fabry-Perot trace → the laser's longitudinal modes: sweeps (segmentRamps) → peaks (findModes) →
 * mode labels (assignModes) → time-to-frequency scale from the pattern's repeats every FSR (frequencyScale) → mode
 * spacing, cavity length, mode powers and count, gain curve (gainFit), the interferometer's finesse, and the comb
 * position for drift (drift.ts).
 */
export interface AnalyzeModesOptions {
  /** The interferometer's free spectral range (Hz). */
  fsrHz: number;
  /** Standard uncertainty of the FSR (Hz). @default 0 */
  fsrUncertaintyHz?: number;
  /** Refractive index inside the laser cavity, for L = c/(2nΔν). @default 1 */
  refractiveIndex?: number;
  /** Modes at or above this fraction of the strongest count as lasing. @default 0.05 */
  countThreshold?: number;
  /** @default 'gaussian' */
  gainModel?: GainModel;
  /** Peak detection threshold in noise σ. @default 5 */
  thresholdSigma?: number;
  /** Highest degree of the time → frequency polynomial. @default 3 */
  maxDegree?: number;
}

export const ANALYZE_MODES_DEFAULTS = {
  fsrUncertaintyHz: 0,
  refractiveIndex: 1,
  countThreshold: 0.05,
  gainModel: 'gaussian' as GainModel,
  thresholdSigma: 5,
  maxDegree: 3,
};

export interface ModeEntry {
  index: number;
  /** From the strongest mode, along the scan direction (Hz). */
  offsetHz: number;
  offsetUncertaintyHz: number;
  /** From the fitted gain centre, when there is one (Hz). */
  offsetFromGainCenterHz?: number;
  relativePower: number;
  /** At or above the count threshold. */
  lasing: boolean;
  /** Times the mode was seen (repeats × sweeps). */
  appearances: number;
}

export interface ModeAnalysis {
  source: string;
  captureTimeS?: number;
  fsrHz: number;
  /** Time between repeats of the mode pattern, i.e. one FSR (s), mean over the sweeps. */
  fsrPeriodS: number;
  fsrPeriodUncertaintyS: number;
  segmentation: { source: RampSegmentation['source']; sweeps: number; sweepsUsed: number; rampPeriodS: number | null };
  polynomialDegree: number;
  /** Spread of the sweep rate over a sweep, (max − min)/mean (%), median over sweeps. */
  sweepNonlinearityPercent: number;
  /** Frequency covered by one sweep (Hz), mean over the complete sweeps (between the ramp's 3 % and 97 % levels). */
  scanRangeHz: number;
  modeSpacingHz: number | null;
  modeSpacingUncertaintyHz: number | null;
  cavityLengthM: number | null;
  cavityLengthUncertaintyM: number | null;
  modeCount: number;
  modes: ModeEntry[];
  gainModel: GainModel;
  gainFwhmHz: number | null;
  gainFwhmUncertaintyHz: number | null;
  gainThresholdFraction?: number;
  /** Interferometer peak FWHM (Hz), median over strong, clean peaks. */
  peakFwhmHz: number | null;
  peakFwhmUncertaintyHz: number | null;
  finesse: number | null;
  finesseUncertainty: number | null;
  /** Comb position modulo the spacing against the sweep origin (Hz), for drift; null without a fixed origin. */
  combPositionHz: number | null;
  combPositionUncertaintyHz: number | null;
  /** Per sweep with a fixed origin, the same (Hz, in [0, Δν)). */
  combPositionsHz: number[];
  /** RMS of the frequency residuals of the comb fit (Hz). */
  frequencyRmsHz: number;
  warnings: string[];
  /** For plots: the first used sweep on its frequency scale, and the peaks. Not part of the JSON contract. */
  plot: {
    frequencyHz: Float64Array;
    signal: Float64Array;
    peaks: Array<{ frequencyHz: number; height: number; mode: number | null }>;
    gain: GainFit | null;
  };
}

export function analyzeModes(trace: ModeTrace, options: AnalyzeModesOptions): ModeAnalysis {
  const o = { ...ANALYZE_MODES_DEFAULTS, ...Object.fromEntries(Object.entries(options).filter(([, v]) => v !== undefined)) } as Required<AnalyzeModesOptions>;
  assertFinite('fsrHz', o.fsrHz);
  if (!(o.fsrHz > 0)) throw new InputError(`FSR: expected a positive frequency, got ${o.fsrHz} Hz`, 'fsrHz');
  assertFinite('fsrUncertaintyHz', o.fsrUncertaintyHz, 0);
  const src = trace.source;
  const n = trace.timeS.length;
  if (n < 32) throw new InputError(`${src}: ${n} samples is too short a trace for mode analysis (expected hundreds or more)`, src);
  if (trace.signal.length !== n) throw new InputError(`${src}: the signal has ${trace.signal.length} samples, the time axis ${n}`, src);

  const seg = segmentRamps(trace);
  const warnings = [...seg.warnings];
  const search = findModePeaks(trace, seg.segments, { thresholdSigma: o.thresholdSigma });
  warnings.push(...search.warnings);
  if (search.peaks.length === 0) {
    throw new InputError(`${src}: no transmission peaks above the noise in the signal channel; is it the photodiode behind the interferometer, and is the laser on?`, src);
  }
  // Many merged bumps mean the interferometer does not resolve the modes: that, not what fails after it, is the news.
  const unresolved =
    search.rejectedWide >= 0.3 * search.peaks.length
      ? `${src}: the interferometer does not resolve the modes: ${search.rejectedWide} broad, merged peaks against ${search.peaks.length} clean ones (its resolution FSR/finesse is probably coarser than the mode spacing)`
      : null;
  const assignment = assignModes(search.peaks, search.segments.map((x) => x.durationS));
  warnings.push(...assignment.warnings);
  if (assignment.pattern === 'filled') {
    if (unresolved) throw new InputError(unresolved, src);
    throw new InputError(
      `${src}: the peaks are evenly spread with no repeating group: the modes fill the free spectral range (gain wider than the FSR, or a spacing near FSR/2), so the pattern is ambiguous; use an interferometer with a larger FSR`,
      src,
    );
  }
  const durations = search.segments.map((s) => s.durationS);
  const scale = relabelAndFit(assignment.peaks, durations, { fsrHz: o.fsrHz, maxDegree: o.maxDegree });
  if (!scale) {
    if (unresolved) throw new InputError(unresolved, src);
    throw new InputError(
      `${src}: the scan covers less than one free spectral range: the mode pattern does not repeat within a sweep, so time cannot be turned into frequency; widen the ramp to show the pattern at least twice`,
      src,
    );
  }
  // Quality gate: a scale that leaves the peaks scattered by a good part of the mode spacing is no scale at all
  // (unresolved modes, a triangle drive without its ramp channel, several sweeps taken as one).
  const gapScale = Number.isFinite(scale.modeSpacingHz) ? Math.abs(scale.modeSpacingHz) : o.fsrHz / 10;
  if (scale.rmsHz > 0.2 * gapScale) {
    const widths = scale.used.map((p) => p.fwhmS * Math.abs(sweepRateHzPerS(scale.sweeps.find((s) => s.segment === p.segment)!, p.timeS))).sort((a, b) => a - b);
    const width = widths[Math.floor((widths.length - 1) / 2)];
    if (unresolved) throw new InputError(unresolved, src);
    const wide = Number.isFinite(scale.modeSpacingHz) && width >= 0.6 * gapScale;
    throw new InputError(
      `${src}: the peaks do not fit one frequency scale (scatter ${(scale.rmsHz / 1e6).toFixed(0)} MHz against a mode spacing of ${(gapScale / 1e6).toFixed(0)} MHz)` +
        (wide
          ? `: the interferometer's peaks (≈${(width / 1e6).toFixed(0)} MHz wide) do not resolve the modes`
          : seg.source === 'ramp'
            ? ''
            : ': without a ramp channel the sweeps could not be told apart (record the ramp, especially with a triangle drive)'),
      src,
    );
  }
  if (search.rejectedWide > 0) warnings.push(`${search.rejectedWide} broad bump(s) much wider than the interferometer's peaks were left out (merged, unresolved modes?)`);
  const unusable = assignment.repeatsPerSegment.filter((r, i) => r < 2 && search.segments[i].peakCount > 0).length;
  if (unusable > 0) warnings.push(`${unusable} sweep(s) showed the mode pattern only once (less than one FSR) and were not used`);

  // Mode powers and offsets.
  const byMode = new Map<number, number[]>();
  for (const p of scale.used) (byMode.get(p.mode!) ?? byMode.set(p.mode!, []).get(p.mode!)!).push(p.height);
  const meanHeight = new Map([...byMode].map(([m, h]) => [m, h.reduce((a, b) => a + b, 0) / h.length]));
  const maxHeight = Math.max(...meanHeight.values());
  const strongest = [...meanHeight].reduce((a, b) => (b[1] > a[1] ? b : a))[0];
  const f0 = scale.modeOffsetsHz.get(strongest)!;
  const modes: ModeEntry[] = [...meanHeight.keys()]
    .sort((a, b) => scale.modeOffsetsHz.get(a)! - scale.modeOffsetsHz.get(b)!)
    .map((m) => ({
      index: m,
      offsetHz: scale.modeOffsetsHz.get(m)! - f0,
      offsetUncertaintyHz: Math.hypot(scale.modeOffsetUncertaintiesHz.get(m)!, m === strongest ? 0 : scale.modeOffsetUncertaintiesHz.get(strongest)!),
      relativePower: meanHeight.get(m)! / maxHeight,
      lasing: meanHeight.get(m)! / maxHeight >= o.countThreshold,
      appearances: byMode.get(m)!.length,
    }));
  // A weak mode caught in only a few of the repeats is seen when noise lifts it over the threshold: its power reads
  // high (selection bias), so it counts only if clearly above the count threshold.
  const mostSeen = Math.max(...modes.map((m) => m.appearances));
  for (const m of modes) {
    if (m.lasing && m.appearances < 0.5 * mostSeen && m.relativePower < 2 * o.countThreshold) {
      m.lasing = false;
      warnings.push(`mode ${m.index} (${(m.relativePower * 100).toFixed(1)} %) was seen in only ${m.appearances} of ${mostSeen} repeats: too faint to count`);
    }
  }
  const modeCount = modes.filter((m) => m.lasing).length;

  // Spacing, with the FSR's own uncertainty (every frequency scales with it).
  const hasSpacing = Number.isFinite(scale.modeSpacingHz) && modes.length > 1;
  let spacing: number | null = null;
  let spacingSigma: number | null = null;
  if (hasSpacing) {
    spacing = Math.abs(scale.modeSpacingHz);
    spacingSigma = Math.hypot(scale.modeSpacingUncertaintyHz, (spacing * o.fsrUncertaintyHz) / o.fsrHz);
  } else {
    warnings.push('a single longitudinal mode: there is no mode spacing, so the cavity length cannot be measured');
  }
  const cavityLengthM = spacing ? cavityLengthFromSpacing({ modeSpacingHz: spacing, refractiveIndex: o.refractiveIndex }) : null;
  const cavityLengthUncertaintyM = spacing && cavityLengthM ? (cavityLengthM * (spacingSigma ?? 0)) / spacing : null;
  if (spacing && scale.freeChi2PerDof > 0 && scale.combChi2PerDof > 4 * scale.freeChi2PerDof && scale.combChi2PerDof > 4) {
    warnings.push('the modes are not evenly spaced within their uncertainties (transverse modes mixed in, or a mislabelled peak?)');
  }

  // FSR period from repeats of the same mode; sweep non-linearity and scan range from the scales.
  const periods: number[] = [];
  for (const s of scale.sweeps) {
    for (const m of byMode.keys()) {
      const list = scale.used.filter((p) => p.segment === s.segment && p.mode === m).sort((a, b) => a.repeat - b.repeat);
      for (let i = 1; i < list.length; i++) periods.push((list[i].timeS - list[i - 1].timeS) / (list[i].repeat - list[i - 1].repeat));
    }
  }
  const mean = (v: number[]): number => v.reduce((a, b) => a + b, 0) / v.length;
  const sd = (v: number[]): number => (v.length > 1 ? Math.sqrt(v.reduce((s, x) => s + (x - mean(v)) ** 2, 0) / (v.length - 1)) : NaN);
  const fsrPeriodS = mean(periods);
  const fsrPeriodUncertaintyS = sd(periods) / Math.sqrt(periods.length);
  const nonlinearity: number[] = [];
  const ranges: number[] = [];
  const completeSweeps = scale.sweeps.filter((s) => seg.segments[s.segment].complete);
  for (const s of completeSweeps.length ? completeSweeps : scale.sweeps) {
    const rates = Array.from({ length: 21 }, (_, i) => sweepRateHzPerS(s, (i / 20) * s.durationS));
    const rMean = (sweepFrequencyHz(s, s.durationS) - sweepFrequencyHz(s, 0)) / s.durationS;
    nonlinearity.push((100 * (Math.max(...rates) - Math.min(...rates))) / Math.abs(rMean));
    ranges.push(Math.abs(sweepFrequencyHz(s, s.durationS) - sweepFrequencyHz(s, 0)));
  }
  nonlinearity.sort((a, b) => a - b);
  const scanRangeHz = mean(ranges);
  if (scanRangeHz < o.fsrHz) warnings.push(`a sweep covers ${(scanRangeHz / 1e9).toFixed(2)} GHz, less than one FSR`);
  if (Math.max(...scale.sweeps.map((s) => s.repeats)) < 3) {
    warnings.push('the pattern repeats only twice per sweep: the piezo non-linearity is poorly constrained and the spacing may be off by a few per cent; widen the ramp to show three repeats');
  }

  // Finesse from the widths of strong, clean peaks, each converted with the local sweep rate.
  const sweepOf = new Map(scale.sweeps.map((s) => [s.segment, s]));
  const strongHeight = Math.max(...scale.used.map((p) => p.height));
  const fwhmHz = scale.used
    .filter((p) => !p.blended && p.height >= 0.25 * strongHeight && Number.isFinite(p.fwhmS))
    .map((p) => p.fwhmS * Math.abs(sweepRateHzPerS(sweepOf.get(p.segment)!, p.timeS)))
    .sort((a, b) => a - b);
  const peakFwhmHz = fwhmHz.length ? fwhmHz[Math.floor((fwhmHz.length - 1) / 2)] : null;
  // Standard error of a median ≈ 1.2533 σ/√n, floored at 3 % of the width: on synthetic Airy traces sampled with 5–7
  // points per FWHM the half-height width reads 1–4 % wide (sampling and the Lorentzian approximation), more than the
  // scatter says.
  const peakFwhmUncertaintyHz =
    fwhmHz.length > 2 && peakFwhmHz !== null ? Math.max((1.2533 * sd(fwhmHz)) / Math.sqrt(fwhmHz.length), 0.03 * peakFwhmHz) : null;
  const finesse = peakFwhmHz ? o.fsrHz / peakFwhmHz : null;
  const finesseUncertainty = finesse && peakFwhmHz && peakFwhmUncertaintyHz !== null ? (finesse * peakFwhmUncertaintyHz) / peakFwhmHz : null;
  // Resolution: the median width over all used peaks (blended ones too, which the finesse leaves out).
  const allWidths = scale.used
    .map((p) => p.fwhmS * Math.abs(sweepRateHzPerS(sweepOf.get(p.segment)!, p.timeS)))
    .filter(Number.isFinite)
    .sort((a, b) => a - b);
  const typicalWidthHz = allWidths.length ? allWidths[Math.floor((allWidths.length - 1) / 2)] : NaN;
  if (spacing && typicalWidthHz >= 0.8 * spacing) {
    throw new InputError(
      `${src}: the interferometer does not resolve the modes: its peaks are ${(typicalWidthHz / 1e6).toFixed(0)} MHz wide against a mode spacing of ${(spacing / 1e6).toFixed(0)} MHz (resolution FSR/finesse too coarse); no trustworthy mode count`,
      src,
    );
  }
  if (spacing && typicalWidthHz >= 0.5 * spacing) {
    warnings.push(
      `the interferometer's peaks (${(typicalWidthHz / 1e6).toFixed(0)} MHz wide) are at least half the mode spacing: the modes are not cleanly resolved, the mode count and powers are uncertain`,
    );
  } else if (scale.used.some((p) => p.blended)) {
    warnings.push('some peaks overlap their neighbours (blended): the modes are not fully resolved');
  }
  if (spacing && spacing >= 0.4 * o.fsrHz) {
    warnings.push(
      `the mode spacing ${(spacing / 1e9).toFixed(3)} GHz is near or above FSR/2: it cannot be told from FSR − spacing = ${((o.fsrHz - spacing) / 1e9).toFixed(3)} GHz (ambiguous); check with an interferometer of larger FSR`,
    );
  }
  const lasing = modes.filter((m) => m.lasing);
  if (spacing && lasing.length > 1) {
    const span = lasing[lasing.length - 1].offsetHz - lasing[0].offsetHz + spacing;
    if (span > 0.8 * o.fsrHz) warnings.push('the lasing modes span most of the FSR: groups of neighbouring orders may overlap');
  }

  // Gain curve.
  const gain = fitGainCurve(modes.map((m) => ({ offsetHz: m.offsetHz, relativePower: m.relativePower })), { model: o.gainModel });
  if (!gain) {
    warnings.push(o.gainModel === 'gaussian' ? 'fewer than three modes: no gain curve fitted' : 'fewer than five modes: the above-threshold gain curve cannot be fitted');
  } else {
    for (const m of modes) m.offsetFromGainCenterHz = m.offsetHz - gain.centerHz;
    if (!Number.isFinite(gain.fwhmUncertaintyHz)) warnings.push('as many modes as gain-curve parameters: the gain width has no uncertainty');
  }

  // Comb position against the sweep origins (the same piezo voltage each sweep), modulo the spacing.
  let combPositionHz: number | null = null;
  let combPositionUncertaintyHz: number | null = null;
  let combPositionsHz: number[] = [];
  if (spacing && seg.originsFixed) {
    const perSweep = scale.sweeps.filter((s) => seg.segments[s.segment].originValid).map((s) => {
      const v = -s.coefficientsHz[0] * Math.sign(scale.modeSpacingHz);
      return ((v % spacing) + spacing) % spacing;
    });
    combPositionsHz = perSweep;
    if (perSweep.length > 0) {
      const c = circularMean(perSweep, perSweep.map(() => 1), spacing);
      combPositionHz = c.mean;
      combPositionUncertaintyHz = perSweep.length > 1 ? c.spread / Math.sqrt(perSweep.length) : scale.rmsHz;
    }
  }

  // Plot data: the first used sweep on its own frequency scale.
  const first = scale.sweeps[0];
  const segment = seg.segments[first.segment];
  const m = segment.endIndex - segment.startIndex;
  const frequencyHz = new Float64Array(m);
  const signal = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    const idx = segment.direction === 1 ? segment.startIndex + i : segment.endIndex - 1 - i;
    const t = segment.direction === 1 ? trace.timeS[idx] - segment.originS : segment.originS - trace.timeS[idx];
    frequencyHz[i] = sweepFrequencyHz(first, t) - f0;
    signal[i] = trace.signal[idx];
  }
  const plotPeaks = scale.used
    .filter((p) => p.segment === first.segment)
    .map((p) => ({ frequencyHz: sweepFrequencyHz(first, p.timeS) - f0, height: p.height, mode: p.mode }));

  return {
    source: src,
    captureTimeS: trace.captureTimeS,
    fsrHz: o.fsrHz,
    fsrPeriodS,
    fsrPeriodUncertaintyS,
    segmentation: { source: seg.source, sweeps: seg.segments.length, sweepsUsed: scale.sweeps.length, rampPeriodS: seg.periodS },
    polynomialDegree: scale.degree,
    sweepNonlinearityPercent: nonlinearity[Math.floor((nonlinearity.length - 1) / 2)],
    scanRangeHz,
    modeSpacingHz: spacing,
    modeSpacingUncertaintyHz: spacingSigma,
    cavityLengthM,
    cavityLengthUncertaintyM,
    modeCount,
    modes,
    gainModel: o.gainModel,
    gainFwhmHz: gain ? gain.fwhmHz : null,
    gainFwhmUncertaintyHz: gain && Number.isFinite(gain.fwhmUncertaintyHz) ? gain.fwhmUncertaintyHz : null,
    ...(gain?.thresholdFraction !== undefined ? { gainThresholdFraction: gain.thresholdFraction } : {}),
    peakFwhmHz,
    peakFwhmUncertaintyHz,
    finesse,
    finesseUncertainty,
    combPositionHz,
    combPositionUncertaintyHz,
    combPositionsHz,
    frequencyRmsHz: scale.rmsHz,
    warnings,
    plot: { frequencyHz, signal, peaks: plotPeaks, gain },
  };
}

/** Several traces of one laser in time order (a warm-up): each analysed, plus the drift of the modes. */
export interface ModeSeries {
  traces: ModeAnalysis[];
  drift: DriftResult | null;
  warnings: string[];
}

export function analyzeModeSeries(traces: readonly ModeTrace[], options: AnalyzeModesOptions): ModeSeries {
  const results = traces.map((t) => analyzeModes(t, options));
  const warnings: string[] = [];
  let drift: DriftResult | null = null;
  if (results.length >= 2) {
    const spacings = results.map((r) => r.modeSpacingHz).filter((v): v is number => v !== null);
    const spacing = spacings.length ? spacings.reduce((a, b) => a + b, 0) / spacings.length : NaN;
    // Sweep-to-sweep scatter of the comb position (piezo start jitter, ramp noise), pooled over the traces with
    // several sweeps: it bounds how well one trace places the comb, and a single sweep cannot show it.
    let ss = 0;
    let dof = 0;
    for (const r of results) {
      if (r.combPositionsHz.length < 2 || r.combPositionHz === null || !(spacing > 0)) continue;
      for (const v of r.combPositionsHz) {
        let d = v - r.combPositionHz;
        d -= spacing * Math.round(d / spacing);
        ss += d * d;
      }
      dof += r.combPositionsHz.length - 1;
    }
    const jitterHz = dof > 0 ? Math.sqrt(ss / dof) : 0;
    const points = results
      .filter((r) => r.combPositionHz !== null && r.captureTimeS !== undefined)
      .map((r) => ({
        source: r.source,
        timeS: r.captureTimeS!,
        combPositionHz: r.combPositionHz!,
        uncertaintyHz: Math.max(r.combPositionUncertaintyHz ?? 0, jitterHz / Math.sqrt(Math.max(1, r.combPositionsHz.length))),
      }));
    if (points.length < 2) {
      warnings.push('drift needs at least two traces with a ramp or trigger channel and known capture times');
    } else {
      drift = measureDrift(points, spacing);
      if (drift) warnings.push(...drift.warnings);
    }
  }
  return { traces: results, drift, warnings };
}

/**
 * The labels from assignModes rest on each group's own spacing and power pattern; small groups (a few peaks cut off
 * at a sweep's end) can be ambiguous. So: fit the scale on the well-populated groups first (at least half as many
 * peaks as the largest), then relabel every peak from its frequency on that scale — mode k = ref + (ν − jFSR)/Δν,
 * off the comb when more than 0.3 from a whole number — and fit again with all.
 */
function relabelAndFit(peaks: LabelledPeak[], durations: readonly number[], options: { fsrHz: number; maxDegree: number }): FrequencyScale | null {
  const sizes = new Map<number, number>();
  for (const p of peaks) if (p.mode !== null) sizes.set(p.group, (sizes.get(p.group) ?? 0) + 1);
  const largest = Math.max(0, ...sizes.values());
  const reliable = peaks.filter((p) => p.mode !== null && (sizes.get(p.group) ?? 0) >= Math.max(2, 0.5 * largest));
  const first = fitFrequencyScale(reliable.length ? reliable : peaks, durations, options);
  if (!first || !Number.isFinite(first.modeSpacingHz)) return first ?? fitFrequencyScale(peaks, durations, options);
  const bySweep = new Map(first.sweeps.map((s) => [s.segment, s]));
  const relabelled = peaks.map((p) => {
    const sweep = bySweep.get(p.segment);
    if (!sweep || p.repeat < 0) return p;
    const x = first.referenceMode + (sweepFrequencyHz(sweep, p.timeS) - p.repeat * options.fsrHz) / first.modeSpacingHz;
    const k = Math.round(x);
    return { ...p, mode: Math.abs(x - k) <= 0.3 ? k : null };
  });
  return fitFrequencyScale(relabelled, durations, options) ?? first;
}
