import { linearLeastSquares } from '../../fit/index.js';
import type { MalusFit, MalusPointResult } from '../../polarization/malusFit.js';
import { plotPolarization } from '../../polarization/plotPolarization.js';
import type { ReportTable } from '../html.js';
import { capitalise, count, deg, likeU, percent, plain, signedDeg, withU } from './format.js';
import { plotPoints } from './plotPoints.js';
import { baseName, JsonView } from './read.js';
import type { ResultSection, SectionOptions } from './types.js';
import { KIND_LABEL } from './types.js';

const VERDICT_WORDS: Record<string, string> = {
  polarized: 'Linearly polarized',
  partially_polarized: 'Partially polarized',
  unpolarized: 'Unpolarized (within the uncertainty)',
  inconclusive: 'Inconclusive',
};

const TIME_SERIES_WORDS: Record<string, string> = {
  stable: 'stable in time',
  fluctuating: 'fluctuating polarization (mode competition)',
};

/**
 * `glowprint polarization --json` → a report section: the verdict, DoLP and azimuth with uncertainties, Stokes
 * parameters, the readings, and the Malus plot redrawn from the readings and the fitted I_max, I_min and azimuth (the
 * rotating-plate method gets a plot of its readings); the fixed-analyser time series as figures. An analyser
 * calibration (--calibrate-analyser) becomes a section on the analyser's offset.
 */
export function polarizationSection(json: unknown, options: SectionOptions): ResultSection {
  const r = new JsonView(json);
  if (r.has('offset_deg') && r.has('reference')) return analyserSection(r, options);
  const id = options.id ?? 'polarization';
  const item = itemName(r, options);
  const warnings = r.warnings();
  const method = r.optStr('method');
  const points = r.optObjects('points').map(readPoint);
  const figures: Array<[string, string]> = [];
  const svgs: string[] = [];
  const tables: ReportTable[] = [];
  const corrections = r.optObj('corrections');
  const offset = corrections?.optNum('analyser_offset_deg');
  const er = corrections?.optNum('extinction_ratio');

  let verdict: string;
  let result: string;
  let keyFigure = '—';
  if (r.has('dolp')) {
    const dolp = r.num('dolp');
    const dolpU = r.optNum('dolp_uncertainty');
    const az = r.optNum('azimuth_deg');
    const azU = r.optNum('azimuth_uncertainty_deg');
    const word = VERDICT_WORDS[r.optStr('verdict') ?? ''] ?? capitalise(r.optStr('verdict') ?? 'no verdict');
    const meaningfulAzimuth = r.optStr('verdict') !== 'unpolarized';
    verdict = `${word} — DoLP ${withU(dolp, dolpU)}${meaningfulAzimuth && az !== undefined ? `, axis at ${deg(az, azU)}${offset === undefined ? ' on the analyser scale' : ''}` : ''}`;
    result = word.replace(/ \(within the uncertainty\)$/, '').toLowerCase();
    keyFigure = `DoLP ${withU(dolp, dolpU)}${meaningfulAzimuth && az !== undefined ? `, ${deg(az, azU)}` : ''}`;
    if (r.has('verdict_reason')) figures.push(['Why', r.str('verdict_reason')]);
    figures.push(['Method', methodName(method)]);
    figures.push(['Degree of linear polarization (DoLP)', withU(dolp, dolpU) + (er !== undefined ? ` (corrected for the analyser's extinction ratio ${plain(er)}:1; measured ${withU(r.optNum('dolp_measured'), r.optNum('dolp_measured_uncertainty'))})` : '')]);
    if (r.has('dolp_interval')) {
      const [lo, hi] = r.numbers('dolp_interval');
      const k = r.optObj('verdict_thresholds')?.optNum('coverage_factor');
      figures.push([`DoLP interval${k !== undefined ? ` (k = ${k})` : ''}`, `${Math.max(0, lo).toFixed(3)} – ${Math.min(1, hi).toFixed(3)}`]);
    }
    if (az !== undefined) {
      figures.push([
        'Azimuth of the transmission axis',
        offset !== undefined
          ? `${deg(az, azU)} (scale reading ${deg(r.optNum('azimuth_scale_deg'), undefined)}, analyser offset ${signedDeg(offset, corrections?.optNum('analyser_offset_uncertainty_deg'))})`
          : `${deg(az, azU)} on the analyser's scale (no analyser profile: its zero mark is taken as true)`,
      ]);
    }
    if (r.has('i_max')) {
      figures.push(['I_max, I_min', `${withU(r.num('i_max'), r.optNum('i_max_uncertainty'))}, ${withU(r.optNum('i_min'), r.optNum('i_min_uncertainty'))}`]);
    }
    const s = r.optObj('stokes');
    if (s) {
      const parts = ['s0', 's1', 's2', 's3'].filter((k) => s.has(k)).map((k) => `${k.toUpperCase()} ${withU(s.num(k), s.optNum(`${k}_uncertainty`))}`);
      figures.push([`Stokes parameters${s.optStr('frame') === 'scale' ? ' (analyser-scale frame)' : ''}`, parts.join(', ')]);
      if (s.has('dop')) {
        figures.push(['DoP, degree of circular polarization', `${withU(s.num('dop'), s.optNum('dop_uncertainty'))}, ${withU(s.optNum('docp'), s.optNum('docp_uncertainty'))}`]);
      }
    }
    const fit = r.optObj('fit');
    if (fit) figures.push(['Fit', fitText(fit)]);
    const photometry = r.optObj('photometry');
    if (photometry) {
      const frames = photometry.optObjects('frames');
      const clipped = frames.filter((f) => f.optBool('saturated')).length;
      figures.push([
        'Spot photometry',
        `aperture r = ${plain(photometry.optNum('aperture_radius_px'), 'px', 3)} at (${plain(photometry.optNum('center_x_px'), '', 5)}, ${plain(photometry.optNum('center_y_px'), '', 5)}); ${count(clipped, 'frame')} of ${frames.length} with a clipped spot`,
      ]);
    }
    const malus = malusFitFromJson(r);
    if (malus) {
      // The plot shows the readings as taken (analyser scale, measured DoLP); say so when the figures above are
      // corrected, so that the two do not seem to disagree.
      const corrected = offset !== undefined || er !== undefined;
      svgs.push(
        plotPolarization({
          document: options.document,
          fit: malus,
          correctedAzimuthDeg: offset !== undefined && az !== undefined ? az : undefined,
          title: corrected
            ? `As measured: DoLP ${malus.dolp.toFixed(3)}, max. at ${malus.azimuthDeg.toFixed(1)}° on the scale (corrected: ${dolp.toFixed(3)}${az !== undefined ? `, ${az.toFixed(1)}°` : ''})`
            : undefined,
        }).outerHTML,
      );
    } else if (points.length) {
      svgs.push(
        plotPoints({
          document: options.document,
          points: points.map((p) => ({ x: p.angleDeg, y: p.intensity, uncertainty: p.uncertainty, excluded: p.excluded })),
          title: `${item}: readings`,
          xLabel: method === 'rotating-quarter-wave-plate' ? 'retarder fast-axis angle (deg)' : 'analyser angle (deg, scale reading)',
          yLabel: 'transmitted intensity (relative)',
          includeZero: true,
        }),
      );
    }
  } else {
    verdict = 'No rotation series: fixed-analyser time series only';
    result = 'time series';
  }

  const ts = r.optObj('time_series');
  if (ts) {
    const tsWord = TIME_SERIES_WORDS[ts.optStr('verdict') ?? ''] ?? ts.optStr('verdict') ?? '';
    const tsText = ts.optStr('interpretation');
    figures.push(['Time series (fixed analyser)', tsText && tsText.startsWith(tsWord) ? tsText : `${tsWord}${tsText ? ' — ' + tsText : ''}`]);
    if (ts.has('fluctuation_ratio')) figures.push(['Fluctuation through the analyser / total', `${plain(ts.num('fluctuation_ratio'), '×', 4)}`]);
    tables.push(timeSeriesTable(ts));
    const reading = r.optStr('interpretation');
    if (reading) {
      verdict = capitalise(reading);
      result = reading.split(':')[0];
      if (keyFigure === '—') keyFigure = tsWord;
    } else if (!r.has('dolp')) {
      verdict = capitalise(tsWord);
      result = tsWord;
    }
  }
  // Without stated uncertainties the fit's rms residual sets how many decimals the fitted values deserve.
  if (points.length) tables.push(pointsTable(points, method, r.optObj('fit')?.optNum('rms')));

  return {
    kind: 'polarization',
    section: { id, heading: `${item} — ${KIND_LABEL.polarization.toLowerCase()}`, subtitle: subtitle(r), verdict, figures, svgs, tables, warnings },
    summary: { id, item, measurement: KIND_LABEL.polarization, result, keyFigure, warnings: warnings.length },
  };
}

interface PointRow {
  angleDeg: number;
  intensity: number;
  uncertainty?: number;
  model?: number;
  residual?: number;
  excluded: boolean;
  exclusionReason?: string;
  source?: string;
}

function readPoint(p: JsonView): PointRow {
  const file = p.optStr('file');
  const line = p.value.line;
  return {
    angleDeg: p.num('angle_deg'),
    intensity: p.num('intensity'),
    uncertainty: p.optNum('uncertainty'),
    model: p.optNum('model'),
    residual: p.optNum('residual'),
    excluded: p.optBool('excluded') ?? false,
    exclusionReason: p.optStr('exclusion_reason'),
    source: file ? baseName(file) : typeof line === 'number' ? `line ${line}` : typeof line === 'string' ? line : undefined,
  };
}

/**
 * The Malus fit behind the plot, rebuilt from the JSON: I(θ) = a + b cos 2θ + c sin 2θ with a = (I_max + I_min)/2 and
 * (b, c) = ½(I_max − I_min)(cos 2φ, sin 2φ), φ the azimuth on the analyser's scale. Without I_max (an analyser
 * calibration), a, b, c are fitted to the fitted curve's values at the readings, which they reproduce exactly. The
 * rotating-plate method has no Malus curve: null.
 */
export function malusFitFromJson(json: unknown): MalusFit | null {
  const r = json instanceof JsonView ? json : new JsonView(json);
  const points = r.optObjects('points').map(readPoint);
  if (r.optStr('method') === 'rotating-quarter-wave-plate' || points.length === 0) return null;
  let a: number;
  let b: number;
  let c: number;
  let azimuthDeg: number;
  if (r.has('i_max') && r.has('i_min') && r.has('azimuth_scale_deg')) {
    const iMax = r.num('i_max');
    const iMin = r.num('i_min');
    azimuthDeg = r.num('azimuth_scale_deg');
    const t = (2 * azimuthDeg * Math.PI) / 180;
    a = (iMax + iMin) / 2;
    b = ((iMax - iMin) / 2) * Math.cos(t);
    c = ((iMax - iMin) / 2) * Math.sin(t);
  } else {
    const withModel = points.filter((p) => p.model !== undefined);
    const design = withModel.map((p) => {
      const t = (2 * p.angleDeg * Math.PI) / 180;
      return [1, Math.cos(t), Math.sin(t)];
    });
    const fit = linearLeastSquares(design, withModel.map((p) => p.model!), { scaleByResiduals: false });
    if (!fit) return null;
    [a, b, c] = fit.params;
    azimuthDeg = (((Math.atan2(c, b) * 90) / Math.PI) % 180 + 180) % 180;
  }
  const amplitude = Math.hypot(b, c);
  const reference = r.optObj('reference');
  const fit = r.optObj('fit');
  const dolp = r.optNum('dolp_measured') ?? r.optNum('dolp') ?? reference?.optNum('dolp') ?? amplitude / a;
  const dolpUncertainty = r.optNum('dolp_measured_uncertainty') ?? r.optNum('dolp_uncertainty') ?? reference?.optNum('dolp_uncertainty') ?? 0;
  const pointResults: MalusPointResult[] = points.map((p, i) => ({
    angleDeg: p.angleDeg,
    intensity: p.intensity,
    uncertainty: p.uncertainty,
    model: p.model ?? Number.NaN,
    residual: p.residual ?? Number.NaN,
    excluded: p.excluded,
    exclusionReason: p.exclusionReason,
    source: p.source,
    order: i,
  }));
  return {
    a,
    b,
    c,
    covariance: [],
    iMax: a + amplitude,
    iMaxUncertainty: r.optNum('i_max_uncertainty') ?? 0,
    iMin: a - amplitude,
    iMinUncertainty: r.optNum('i_min_uncertainty') ?? 0,
    dolp,
    dolpUncertainty,
    dolpDebiased: r.optNum('dolp_debiased') ?? dolp,
    azimuthDeg,
    azimuthUncertaintyDeg: r.optNum('azimuth_uncertainty_deg') ?? reference?.optNum('measured_azimuth_uncertainty_deg') ?? 0,
    stokes: { s0: 2 * a, s1: 2 * b, s2: 2 * c, s0Uncertainty: 0, s1Uncertainty: 0, s2Uncertainty: 0 },
    chi2: fit?.optNum('chi2') ?? Number.NaN,
    dof: fit?.optNum('dof') ?? Number.NaN,
    reducedChi2: fit?.optNum('reduced_chi2') ?? Number.NaN,
    chi2PValue: fit?.optNum('chi2_p_value') ?? null,
    rms: fit?.optNum('rms') ?? Number.NaN,
    distinctAnglesDeg: [...new Set(points.filter((p) => !p.excluded).map((p) => ((p.angleDeg % 180) + 180) % 180))],
    angleSpanDeg: fit?.optNum('angle_span_deg') ?? Number.NaN,
    fourTheta: null,
    drift: null,
    driftCorrected: fit?.optBool('drift_corrected') ?? false,
    points: pointResults,
    warnings: [],
  };
}

function analyserSection(r: JsonView, options: SectionOptions): ResultSection {
  const id = options.id ?? 'analyser';
  const ref = r.obj('reference');
  const points = r.optObjects('points').map(readPoint);
  const warnings = r.warnings();
  const offset = r.num('offset_deg');
  const offsetU = r.optNum('offset_uncertainty_deg');
  const profile = r.optStr('profile_file');
  const item = profile ? baseName(profile) : options.source ? baseName(options.source) : 'analyser';
  const figures: Array<[string, string]> = [
    ['Offset (true azimuth = scale reading + offset)', signedDeg(offset, offsetU)],
    ['Reference', `measured at ${deg(ref.optNum('measured_azimuth_deg'), ref.optNum('measured_azimuth_uncertainty_deg'))} on the scale, taken as ${deg(ref.optNum('azimuth_deg'), undefined)}; its DoLP ${withU(ref.optNum('dolp'), ref.optNum('dolp_uncertainty'))}`],
  ];
  if (r.has('extinction_ratio')) figures.push(['Extinction ratio', `${plain(r.num('extinction_ratio'))}:1`]);
  if (profile) figures.push(['Analyser profile written', profile]);
  const malus = malusFitFromJson(r);
  return {
    kind: 'polarization',
    section: {
      id,
      heading: `${item} — analyser calibration`,
      verdict: `Analyser offset ${signedDeg(offset, offsetU)}: later azimuths measured with this analyser are corrected by it`,
      figures,
      svgs: malus ? [plotPolarization({ document: options.document, fit: malus, title: `Reference series: transmission maximum at ${malus.azimuthDeg.toFixed(2)}° on the scale` }).outerHTML] : [],
      tables: points.length ? [pointsTable(points, 'rotating-analyser', r.optObj('fit')?.optNum('rms') ?? rmsOf(points))] : [],
      warnings,
    },
    summary: { id, item, measurement: 'Analyser calibration', result: 'offset measured', keyFigure: `offset ${signedDeg(offset, offsetU)}`, warnings: warnings.length },
  };
}

function itemName(r: JsonView, options: SectionOptions): string {
  const input = r.optObj('input');
  const file = input?.optStr('file');
  if (file) return baseName(file);
  if (input?.has('files')) {
    const files = input.array('files').filter((f): f is string => typeof f === 'string');
    if (files.length) {
      const parts = files[0].split(/[\\/]/);
      return parts.length > 1 ? `${parts[parts.length - 2]}/ (${count(files.length, 'photo')})` : count(files.length, 'photo');
    }
  }
  return options.source ? baseName(options.source) : 'polarization series';
}

function subtitle(r: JsonView): string | undefined {
  const input = r.optObj('input');
  if (!input) return undefined;
  const kind = input.optStr('kind');
  if (kind === 'table') return `Readings from ${input.optStr('file')}`;
  if (kind === 'photos') {
    const n = input.has('files') ? input.array('files').length : 0;
    return `${count(n, 'photo')} of the spot; angles from ${input.optStr('angle_source') ?? 'the command line'}`;
  }
  if (kind === 'time-series') return `Time series from ${input.optStr('file')}`;
  return undefined;
}

function methodName(method: string | undefined): string {
  if (method === 'rotating-analyser') return 'rotating analyser (Malus fit I(θ) = a + b cos 2θ + c sin 2θ)';
  if (method === 'rotating-quarter-wave-plate') return 'rotating quarter-wave plate before a fixed analyser (Fourier analysis → S0…S3)';
  return method ?? '—';
}

function fitText(fit: JsonView): string {
  const parts: string[] = [];
  const p = fit.optNum('chi2_p_value');
  if (p !== undefined) parts.push(`χ²/dof ${plain(fit.optNum('reduced_chi2'), '', 3)} (${fit.optNum('dof')} dof, p = ${plain(p, '', 2)})`);
  else if (fit.has('rms')) parts.push(`rms residual ${plain(fit.num('rms'), '', 3)} (${fit.optNum('dof')} dof; no stated uncertainties, the scatter sets them)`);
  if (fit.has('distinct_angles')) parts.push(`${fit.num('distinct_angles')} angles${fit.has('angle_span_deg') ? ` over ${fit.num('angle_span_deg').toFixed(0)}°` : ''}`);
  const four = fit.optObj('four_theta');
  if (four?.optBool('significant')) parts.push(`4θ term present (${percent(four.optNum('relative_amplitude'))})`);
  const drift = fit.optObj('drift');
  if (drift?.optBool('significant')) parts.push(`drift ${percent(drift.optNum('relative_change'))} over the run`);
  return parts.join('; ');
}

function timeSeriesTable(ts: JsonView): ReportTable {
  const rows: Array<Array<string | number | undefined>> = [];
  const add = (label: string, s: JsonView | undefined): void => {
    if (!s) return;
    rows.push([
      label,
      s.optNum('count'),
      plain(s.optNum('duration_s'), 's', 4),
      percent(s.optNum('relative_slow_fluctuation'), 2),
      percent(s.optNum('relative_white_noise'), 2),
      percent(s.optNum('relative_range'), 1),
      plain(s.optNum('correlation_time_s'), 's', 3),
    ]);
  };
  add('through the analyser', ts.optObj('analysed'));
  add('total (reference)', ts.optObj('reference'));
  return {
    caption: 'Fixed-analyser time series',
    columns: ['series', 'samples', 'duration', 'slow fluctuation', 'white noise', 'range', 'correlation time'],
    numeric: [1, 2, 3, 4, 5, 6],
    rows,
  };
}

function pointsTable(points: PointRow[], method: string | undefined, scatter?: number): ReportTable {
  return {
    caption: `Readings (${points.length})`,
    columns: [method === 'rotating-quarter-wave-plate' ? 'plate angle (°)' : 'analyser angle (°)', 'intensity', 'fitted', 'residual', 'from', 'note'],
    numeric: [0, 1, 2, 3],
    rows: points.map((p) => [
      plain(p.angleDeg, '', 5),
      withU(p.intensity, p.uncertainty),
      likeU(p.model, p.uncertainty ?? scatter),
      likeU(p.residual, p.uncertainty ?? scatter),
      p.source,
      p.excluded ? `left out${p.exclusionReason ? ` (${p.exclusionReason})` : ''}` : '',
    ]),
  };
}

/** rms of the residuals of the points used. */
function rmsOf(points: PointRow[]): number | undefined {
  const r = points.filter((p) => !p.excluded && p.residual !== undefined).map((p) => p.residual!);
  return r.length ? Math.sqrt(r.reduce((a, b) => a + b * b, 0) / r.length) : undefined;
}
