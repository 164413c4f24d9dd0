import { InputError, UsageError } from '../core/errors.js';
import { analyzeModeSeries, cavityLengthFromSpacing, fsrFromMirrorSpacing, plotModes, type ModeAnalysis, type ModeSeries } from '../core/modes/index.js';
import { parseQuantity } from '../core/units/quantity.js';
import { readScopeCsv } from '../io/scopeCsv.js';
import { createSvgDocument } from '../io/svgDocument.js';
import { writeFileAtomic } from '../io/writeAtomic.js';

export interface ModesOptions {
  fsr?: string;
  fsrUncertainty?: string;
  mirrorSpacing?: string;
  confocal?: boolean;
  planar?: boolean;
  signal?: string;
  ramp?: string;
  trigger?: string;
  interval?: string;
  times?: string;
  refractiveIndex: string;
  envelope: string;
  json?: boolean;
  svg?: string;
}



/** The mode analysis behind `glowprint modes` and the API, with options as the command takes them (text). */
export async function runModes(files: string[], opts: ModesOptions): Promise<{ json: Record<string, unknown>; text: string; warnings: string[] }> {
  const warnings: string[] = [];
  let fsrHz: number;
  if (opts.fsr !== undefined) {
    if (opts.mirrorSpacing !== undefined) throw new UsageError('give either --fsr or --mirror-spacing, not both');
    fsrHz = parseQuantity(opts.fsr, { name: '--fsr', unit: 'Hz', positive: true });
  } else if (opts.mirrorSpacing !== undefined) {
    if (!!opts.confocal === !!opts.planar) throw new UsageError('--mirror-spacing needs exactly one of --confocal (FSR = c/4d) or --planar (FSR = c/2d)');
    const d = parseQuantity(opts.mirrorSpacing, { name: '--mirror-spacing', unit: 'm', positive: true });
    fsrHz = fsrFromMirrorSpacing({ mirrorSpacingM: d, kind: opts.confocal ? 'confocal' : 'planar' });
  } else {
    throw new UsageError('the interferometer\'s free spectral range is needed: --fsr 10GHz, or --mirror-spacing 7.5mm --confocal');
  }
  let fsrUncertaintyHz = 0;
  if (opts.fsrUncertainty !== undefined) {
    const t = opts.fsrUncertainty.trim();
    const pct = /^((?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*%$/.exec(t);
    fsrUncertaintyHz = pct ? (Number(pct[1]) / 100) * fsrHz : parseQuantity(t, { name: '--fsr-uncertainty', unit: 'Hz', nonNegative: true });
  }
  const refractiveIndex = Number(opts.refractiveIndex);
  if (!(refractiveIndex >= 1 && refractiveIndex < 5)) throw new InputError(`--refractive-index: expected a refractive index ≥ 1, got ${JSON.stringify(opts.refractiveIndex)}`, '--refractive-index');
  if (opts.envelope !== 'gaussian' && opts.envelope !== 'above-threshold') {
    throw new InputError(`--envelope: expected "gaussian" or "above-threshold", got ${JSON.stringify(opts.envelope)}`, '--envelope');
  }

  const parsed = [];
  for (const file of files) parsed.push(await readScopeCsv(file, { signal: opts.signal, ramp: opts.ramp, trigger: opts.trigger }));
  for (const p of parsed) warnings.push(...p.warnings);
  // Capture times for the drift: given, or an interval, or from the files.
  if (opts.times !== undefined) {
    const times = opts.times.split(',').map((s) => parseQuantity(s.trim(), { name: '--times', unit: 's' }));
    if (times.length !== files.length) throw new InputError(`--times: expected ${files.length} times, one per trace, got ${times.length}`, '--times');
    parsed.forEach((p, i) => (p.trace.captureTimeS = times[i]));
  } else if (opts.interval !== undefined) {
    const dt = parseQuantity(opts.interval, { name: '--interval', unit: 's', positive: true });
    parsed.forEach((p, i) => (p.trace.captureTimeS = i * dt));
  } else if (files.length > 1) {
    const fromFiles = parsed.filter((p) => p.captureTimeFrom === 'file').length;
    if (fromFiles > 0) warnings.push(`capture times of ${fromFiles} trace(s) taken from the files' modification times; give --interval or --times if the files were copied`);
    const times = parsed.map((p) => p.trace.captureTimeS ?? 0);
    if (new Set(times).size < times.length) {
      warnings.push('some traces share a capture time: the drift is not measured (give --interval or --times)');
      parsed.forEach((p) => delete p.trace.captureTimeS);
    }
  }
  const series = analyzeModeSeries(
    parsed.map((p) => p.trace),
    { fsrHz, fsrUncertaintyHz, refractiveIndex, gainModel: opts.envelope },
  );
  warnings.push(...series.warnings);
  if (opts.svg) {
    await writeFileAtomic(opts.svg, plotModes(series, { document: createSvgDocument() }), { inputs: files });
  }
  const summary = combine(series, fsrHz, refractiveIndex);
  const allWarnings = [...warnings, ...series.traces.flatMap((t) => (series.traces.length > 1 ? t.warnings.map((w) => `${t.source}: ${w}`) : t.warnings))];
  const json = {
      command: 'modes',
      ...summary,
      traces: series.traces.map(({ plot: _plot, warnings: w, ...rest }) => ({ ...rest, warnings: w })),
      drift: series.drift
        ? {
            driftHzPerS: series.drift.driftHzPerS,
            driftUncertaintyHzPerS: series.drift.driftUncertaintyHzPerS,
            driftMhzPerS: series.drift.driftHzPerS / 1e6,
            spanS: series.drift.spanS,
            points: series.drift.points.map((p) => ({ source: p.source, timeS: p.timeS, combPositionHz: p.combPositionHz, unwrappedHz: p.unwrappedHz, uncertaintyHz: p.uncertaintyHz })),
          }
        : null,
      warnings: [...new Set(allWarnings)],
  };
  return { json, text: formatText(summary, series, [...new Set(allWarnings)]), warnings: [] };
}

/**
 * The figures of the whole series: for one trace, that trace's; for several, the weighted mean of the spacing (and
 * the cavity length from it) and the means of FSR period, finesse and gain width; modes and count from the last trace
 * (the state the laser settled in).
 */
function combine(series: ModeSeries, fsrHz: number, refractiveIndex: number) {
  const traces = series.traces;
  const last = traces[traces.length - 1];
  const withSpacing = traces.filter((t) => t.modeSpacingHz !== null && t.modeSpacingUncertaintyHz !== null && t.modeSpacingUncertaintyHz > 0);
  let spacing: number | null = last.modeSpacingHz;
  let spacingSigma: number | null = last.modeSpacingUncertaintyHz;
  if (withSpacing.length > 1) {
    const w = withSpacing.map((t) => 1 / t.modeSpacingUncertaintyHz! ** 2);
    spacing = withSpacing.reduce((s, t, i) => s + w[i] * t.modeSpacingHz!, 0) / w.reduce((a, b) => a + b, 0);
    spacingSigma = 1 / Math.sqrt(w.reduce((a, b) => a + b, 0));
  }
  const meanOf = (values: Array<number | null>): number | null => {
    const v = values.filter((x): x is number => x !== null && Number.isFinite(x));
    return v.length ? v.reduce((a, b) => a + b, 0) / v.length : null;
  };
  const cavityLengthM = spacing ? cavityLengthFromSpacing({ modeSpacingHz: spacing, refractiveIndex }) : null;
  // One trace: its own uncertainty; several: the standard error of their mean.
  const spread = (values: Array<number | null>, own: number | null): number | null => {
    const v = values.filter((x): x is number => x !== null && Number.isFinite(x));
    if (v.length < 2) return own;
    const m = v.reduce((a, b) => a + b, 0) / v.length;
    return Math.sqrt(v.reduce((a, b) => a + (b - m) ** 2, 0) / (v.length - 1) / v.length);
  };
  return {
    fsrHz,
    fsrPeriodS: meanOf(traces.map((t) => t.fsrPeriodS)),
    fsrPeriodUncertaintyS: spread(traces.map((t) => t.fsrPeriodS), last.fsrPeriodUncertaintyS),
    modeSpacingHz: spacing,
    modeSpacingUncertaintyHz: spacingSigma,
    cavityLengthM,
    cavityLengthUncertaintyM: cavityLengthM && spacing && spacingSigma ? (cavityLengthM * spacingSigma) / spacing : null,
    modeCount: last.modeCount,
    modes: last.modes.map((m) => ({ index: m.index, offsetHz: m.offsetHz, offsetUncertaintyHz: m.offsetUncertaintyHz, relativePower: m.relativePower, lasing: m.lasing, offsetFromGainCenterHz: m.offsetFromGainCenterHz })),
    modesFrom: last.source,
    gainModel: last.gainModel,
    gainFwhmHz: meanOf(traces.map((t) => t.gainFwhmHz)),
    gainFwhmUncertaintyHz: spread(traces.map((t) => t.gainFwhmHz), last.gainFwhmUncertaintyHz),
    finesse: meanOf(traces.map((t) => t.finesse)),
    finesseUncertainty: spread(traces.map((t) => t.finesse), last.finesseUncertainty),
    peakFwhmHz: meanOf(traces.map((t) => t.peakFwhmHz)),
    driftHzPerS: series.drift?.driftHzPerS ?? null,
    driftUncertaintyHzPerS: series.drift?.driftUncertaintyHzPerS ?? null,
  };
}

function formatText(s: ReturnType<typeof combine>, series: ModeSeries, warnings: string[]): string {
  const lines: string[] = [];
  const mhz = (v: number | null, d = 2): string => (v === null ? '—' : (v / 1e6).toFixed(d));
  lines.push(`FSR               ${(s.fsrHz / 1e9).toFixed(4)} GHz, repeat period ${s.fsrPeriodS === null ? '—' : (s.fsrPeriodS * 1e3).toFixed(4) + ' ms'}`);
  lines.push(`Mode spacing      ${mhz(s.modeSpacingHz, 3)} ± ${mhz(s.modeSpacingUncertaintyHz, 3)} MHz`);
  lines.push(`Cavity length     ${s.cavityLengthM === null ? '—' : (s.cavityLengthM * 1000).toFixed(2) + ' ± ' + ((s.cavityLengthUncertaintyM ?? NaN) * 1000).toFixed(2) + ' mm'} (L = c/2nΔν)`);
  lines.push(`Lasing modes      ${s.modeCount} (≥ 5 % of the strongest)${series.traces.length > 1 ? `, in ${s.modesFrom}` : ''}`);
  lines.push(`Gain FWHM         ${s.gainFwhmHz === null ? '—' : (s.gainFwhmHz / 1e9).toFixed(3) + ' GHz'} (${s.gainModel})`);
  lines.push(`Finesse           ${s.finesse === null ? '—' : s.finesse.toFixed(0)} (peak FWHM ${mhz(s.peakFwhmHz, 1)} MHz)`);
  if (series.drift) lines.push(`Drift             ${(series.drift.driftHzPerS / 1e6).toFixed(3)} ± ${(series.drift.driftUncertaintyHzPerS / 1e6).toFixed(3)} MHz/s over ${series.drift.spanS.toFixed(0)} s (along the scan)`);
  lines.push('');
  lines.push('  mode   offset MHz   rel. power');
  for (const m of s.modes) lines.push(`${String(m.index).padStart(6)}   ${(m.offsetHz / 1e6).toFixed(1).padStart(10)}   ${m.relativePower.toFixed(3).padStart(10)}${m.lasing ? '' : '  (below 5 %)'}`);
  if (series.traces.length > 1) {
    lines.push('');
    lines.push('  trace                          modes   spacing MHz   comb position MHz');
    for (const t of series.traces as ModeAnalysis[]) {
      lines.push(`  ${tailFitted(t.source, 30)} ${String(t.modeCount).padStart(5)}   ${mhz(t.modeSpacingHz, 3).padStart(11)}   ${mhz(t.combPositionHz, 1).padStart(17)}`);
    }
  }
  for (const w of warnings) lines.push(`warning: ${w}`);
  return lines.join('\n') + '\n';
}

/** `text` in a column `width` characters wide: padded, or cut at the front ("…modes/warmup-1.csv") so the file name shows. */
function tailFitted(text: string, width: number): string {
  return text.length <= width ? text.padEnd(width) : `…${text.slice(text.length - width + 1)}`;
}
