import { ANALYZE_MODES_DEFAULTS } from '../../modes/analyzeModes.js';
import { PALETTE } from '../../plot/chart.js';
import type { ReportTable } from '../html.js';
import { count, frequency, length, percent, plain, withU } from './format.js';
import { plotPoints } from './plotPoints.js';
import { plotSticks } from './plotSticks.js';
import { baseName, JsonView } from './read.js';
import type { ResultSection, SectionOptions } from './types.js';
import { KIND_LABEL } from './types.js';

/** FWHM = 2√(2 ln 2) σ for a Gaussian. */
const FWHM_PER_SIGMA = 2 * Math.sqrt(2 * Math.LN2);

interface ModeRow {
  index: number;
  offsetHz: number;
  offsetUncertaintyHz?: number;
  relativePower: number;
  lasing: boolean;
  offsetFromGainCenterHz?: number;
}

/**
 * `glowprint modes --json` → a report section: mode count, spacing and cavity length with uncertainties, gain width,
 * finesse, drift; the mode comb (relative powers with the gain envelope redrawn from its fitted centre and FWHM),
 * the drift of the comb over a warm-up, and a table per mode and per trace.
 */
export function modesSection(json: unknown, options: SectionOptions): ResultSection {
  const r = new JsonView(json);
  const id = options.id ?? 'modes';
  const warnings = r.warnings();
  const traces = r.optObjects('traces');
  const sources = traces.map((t) => t.optStr('source')).filter((s): s is string => !!s);
  const item = sources.length > 1 ? `${baseName(sources[0])} … ${baseName(sources[sources.length - 1])} (${sources.length} traces)` : sources.length ? baseName(sources[0]) : options.source ? baseName(options.source) : 'mode trace';
  const modes: ModeRow[] = r.objects('modes').map((m) => ({
    index: m.num('index'),
    offsetHz: m.num('offset_hz'),
    offsetUncertaintyHz: m.optNum('offset_uncertainty_hz'),
    relativePower: m.num('relative_power'),
    lasing: m.optBool('lasing') ?? true,
    offsetFromGainCenterHz: m.optNum('offset_from_gain_center_hz'),
  }));
  const modeCount = r.num('mode_count');
  const spacing = r.optNum('mode_spacing_hz');
  const spacingU = r.optNum('mode_spacing_uncertainty_hz');
  const cavity = r.optNum('cavity_length_m');
  const cavityU = r.optNum('cavity_length_uncertainty_m');
  const gainFwhm = r.optNum('gain_fwhm_hz');
  const modesFrom = r.optStr('modes_from');

  const verdict =
    `${count(modeCount, 'lasing mode')}` +
    (spacing !== undefined ? `, spacing ${frequency(spacing, spacingU)}` : ', spacing not measured') +
    (cavity !== undefined ? ` → cavity length ${length(cavity, cavityU)}` : '');
  const figures: Array<[string, string]> = [
    ['Lasing modes', `${modeCount} (at or above ${percent(ANALYZE_MODES_DEFAULTS.countThreshold, 0)} of the strongest)${modesFrom && sources.length > 1 ? `, in ${baseName(modesFrom)}` : ''}`],
    ['Mode spacing Δν', frequency(spacing, spacingU)],
    ['Cavity length L = c/(2nΔν)', length(cavity, cavityU)],
    ['Interferometer FSR', `${frequency(r.optNum('fsr_hz'))}, one FSR every ${withU(scale(r.optNum('fsr_period_s'), 1e3), scale(r.optNum('fsr_period_uncertainty_s'), 1e3), 'ms')} of the sweep`],
    [`Gain FWHM (${r.optStr('gain_model') ?? 'gaussian'} envelope)`, frequency(gainFwhm, r.optNum('gain_fwhm_uncertainty_hz'))],
    ['Finesse', withU(r.optNum('finesse'), r.optNum('finesse_uncertainty'))],
    ['Interferometer peak FWHM', frequency(r.optNum('peak_fwhm_hz'))],
  ];
  if (r.has('drift_hz_per_s')) {
    const d = r.optObj('drift');
    figures.push(['Drift of the modes', `${withU(r.num('drift_hz_per_s') / 1e6, scale(r.optNum('drift_uncertainty_hz_per_s'), 1e-6), 'MHz/s')}${d?.has('span_s') ? ` over ${plain(d.num('span_s'), 's', 4)}` : ''}`]);
  }

  const svgs: string[] = [];
  if (modes.length) {
    const toMHz = (hz: number): number => hz / 1e6;
    const last = traces.length ? traces[traces.length - 1] : undefined;
    const threshold = r.optNum('gain_threshold_fraction') ?? last?.optNum('gain_threshold_fraction');
    let curve: Array<[number, number]> | undefined;
    const envelope = gainEnvelope(modes, { gainFwhmHz: gainFwhm, thresholdFraction: threshold });
    if (envelope) {
      const lo = Math.min(...modes.map((m) => m.offsetHz)) - (spacing ?? 1e8);
      const hi = Math.max(...modes.map((m) => m.offsetHz)) + (spacing ?? 1e8);
      curve = [];
      for (let i = 0; i <= 200; i++) {
        const hz = lo + ((hi - lo) * i) / 200;
        curve.push([toMHz(hz), envelope(hz)]);
      }
    }
    svgs.push(
      plotSticks({
        document: options.document,
        sticks: modes.map((m) => ({
          x: toMHz(m.offsetHz),
          height: m.relativePower,
          colour: m.lasing ? PALETTE.series[0] : PALETTE.muted,
          hollow: !m.lasing,
        })),
        title: `Mode powers: ${modeCount} lasing`,
        xLabel: 'offset from the strongest mode (MHz)',
        yLabel: 'relative power',
        curve,
        level: { y: ANALYZE_MODES_DEFAULTS.countThreshold, label: `lasing threshold ${percent(ANALYZE_MODES_DEFAULTS.countThreshold, 0)}` },
        legend: [
          ['lasing', PALETTE.series[0]],
          ['below threshold', PALETTE.muted],
          ...(curve ? ([['gain envelope (fit)', PALETTE.series[1]]] as const) : []),
        ],
        widthPx: 760,
        heightPx: 320,
      }),
    );
  }
  const drift = r.optObj('drift');
  const driftPoints = drift?.optObjects('points') ?? [];
  if (drift && driftPoints.length >= 2 && r.has('drift_hz_per_s')) {
    const t0 = driftPoints[0].num('time_s');
    const pts = driftPoints.map((p) => ({
      x: p.num('time_s') - t0,
      y: (p.optNum('unwrapped_hz') ?? p.num('comb_position_hz')) / 1e6,
      uncertainty: scale(p.optNum('uncertainty_hz'), 1e-6),
      label: p.has('source') ? baseName(p.str('source')) : undefined,
    }));
    // The fitted line: the reported slope through the weighted mean of the points (the intercept is not in the JSON).
    const slope = r.num('drift_hz_per_s') / 1e6;
    let sw = 0;
    let sy = 0;
    let sx = 0;
    for (const p of pts) {
      const w = p.uncertainty ? 1 / p.uncertainty ** 2 : 1;
      sw += w;
      sx += w * p.x;
      sy += w * p.y;
    }
    const xm = sx / sw;
    const ym = sy / sw;
    const xs = pts.map((p) => p.x);
    const line: Array<[number, number]> = [Math.min(...xs), Math.max(...xs)].map((x) => [x, ym + slope * (x - xm)] as [number, number]);
    svgs.push(
      plotPoints({
        document: options.document,
        points: pts,
        line,
        title: `Drift over the warm-up: ${withU(slope, scale(r.optNum('drift_uncertainty_hz_per_s'), 1e-6), 'MHz/s')}`,
        xLabel: 'time from the first trace (s)',
        yLabel: 'comb position (MHz, unwrapped)',
        widthPx: 760,
      }),
    );
  }

  const tables: ReportTable[] = [];
  if (modes.length) {
    tables.push({
      caption: `Modes${modesFrom ? ` of ${baseName(modesFrom)}` : ''}`,
      columns: ['mode', 'offset (MHz)', 'from the gain centre (MHz)', 'relative power', 'lasing'],
      numeric: [0, 1, 2, 3],
      rows: modes.map((m) => [
        m.index,
        withU(m.offsetHz / 1e6, scale(m.offsetUncertaintyHz, 1e-6)),
        m.offsetFromGainCenterHz === undefined ? undefined : plain(m.offsetFromGainCenterHz / 1e6, '', 5),
        plain(m.relativePower, '', 3),
        m.lasing ? 'yes' : 'no',
      ]),
    });
  }
  if (traces.length) {
    tables.push({
      caption: 'Traces',
      columns: ['trace', 'sweeps', 'modes', 'Δν (MHz)', 'gain FWHM (MHz)', 'finesse', 'non-linearity', 'warnings'],
      numeric: [1, 2, 3, 4, 5, 6, 7],
      rows: traces.map((t) => [
        baseName(t.optStr('source') ?? '—'),
        t.optObj('segmentation')?.optNum('sweeps_used'),
        t.optNum('mode_count'),
        withU(scale(t.optNum('mode_spacing_hz'), 1e-6), scale(t.optNum('mode_spacing_uncertainty_hz'), 1e-6)),
        withU(scale(t.optNum('gain_fwhm_hz'), 1e-6), scale(t.optNum('gain_fwhm_uncertainty_hz'), 1e-6)),
        withU(t.optNum('finesse'), t.optNum('finesse_uncertainty')),
        t.has('sweep_nonlinearity_percent') ? `${t.num('sweep_nonlinearity_percent').toFixed(1)} %` : undefined,
        t.warnings().length,
      ]),
    });
  }
  // Per-trace warnings name their trace, so that a reader knows which file to look at again.
  const traceWarnings = traces.flatMap((t) => t.warnings().map((w) => `${baseName(t.optStr('source') ?? 'trace')}: ${w}`));
  const allWarnings = [...warnings, ...traceWarnings.filter((w) => !warnings.some((v) => w.endsWith(v)))];

  return {
    kind: 'modes',
    section: { id, heading: `${item} — ${KIND_LABEL.modes.toLowerCase()}`, subtitle: sources.length ? `Scope traces: ${sources.map(baseName).join(', ')}` : undefined, verdict, figures, svgs, tables, warnings: allWarnings },
    summary: {
      id,
      item,
      measurement: KIND_LABEL.modes,
      result: count(modeCount, 'lasing mode'),
      keyFigure: `Δν ${frequency(spacing, spacingU)}${cavity !== undefined ? `, L ${length(cavity, cavityU)}` : ''}`,
      warnings: allWarnings.length,
    },
  };
}

/**
 * The gain envelope as the fit drew it: a Gaussian of the fitted FWHM about the fitted centre (less the loss line
 * for the above-threshold model, `thresholdFraction` of the peak), its height matched to the mode powers by least
 * squares on the shape, clipped at zero. The centre is each mode's offset less its offset from the gain centre. Null
 * without a gain fit.
 */
export function gainEnvelope(
  modes: ReadonlyArray<{ offsetHz: number; relativePower: number; offsetFromGainCenterHz?: number }>,
  gain: { gainFwhmHz?: number; thresholdFraction?: number },
): ((offsetHz: number) => number) | null {
  const withCenter = modes.find((m) => m.offsetFromGainCenterHz !== undefined);
  if (gain.gainFwhmHz === undefined || !(gain.gainFwhmHz > 0) || !withCenter) return null;
  const centerHz = withCenter.offsetHz - withCenter.offsetFromGainCenterHz!;
  const sigma = gain.gainFwhmHz / FWHM_PER_SIGMA;
  const shape = (hz: number): number => Math.exp(-0.5 * ((hz - centerHz) / sigma) ** 2) - (gain.thresholdFraction ?? 0);
  let num = 0;
  let den = 0;
  for (const m of modes) {
    num += shape(m.offsetHz) * m.relativePower;
    den += shape(m.offsetHz) ** 2;
  }
  const amplitude = den > 0 ? num / den : 1;
  return (hz) => Math.max(0, amplitude * shape(hz));
}

function scale(v: number | undefined, factor: number): number | undefined {
  return v === undefined ? undefined : v * factor;
}
