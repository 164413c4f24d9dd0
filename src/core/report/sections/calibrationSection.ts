import type { ReportTable } from '../html.js';
import { count, likeU, plain, withU } from './format.js';
import { plotPoints } from './plotPoints.js';
import { baseName, JsonView } from './read.js';
import type { ResultSection, SectionOptions } from './types.js';
import { KIND_LABEL } from './types.js';

/**
 * `glowprint calibrate --json` → a report section: the wavelength scale's model, RMS, range and dispersion (and the
 * grating's line density from the physical model), the line table, and the residuals against wavelength with ±RMS.
 */
export function calibrationSection(json: unknown, options: SectionOptions): ResultSection {
  const r = new JsonView(json);
  const id = options.id ?? 'calibration';
  const warnings = r.warnings();
  const input = r.optObj('input');
  const file = input?.optStr('file') ?? r.optStr('file');
  const item = file ? baseName(file) : options.source ? baseName(options.source) : 'calibration';
  const rmsNm = r.num('rms_nm');
  const rmsPx = r.optNum('rms_px');
  const [lo, hi] = r.numbers('range_nm');
  const dispersion = r.num('dispersion_nm_per_px');
  const model = r.obj('model');
  const kind = model.str('kind');
  const lines = r.objects('lines').map((l) => ({
    positionPx: l.num('position_px'),
    positionUncertaintyPx: l.optNum('position_uncertainty_px'),
    wavelengthNm: l.num('wavelength_nm'),
    residualNm: l.num('residual_nm'),
    used: l.optBool('used') ?? true,
    why: l.optStr('excluded'),
    label: l.optStr('label') ?? l.optStr('spectrum'),
    source: l.optStr('source'),
    saturated: l.optBool('saturated') ?? false,
  }));
  const used = lines.filter((l) => l.used).length;
  // A line's position uncertainty in nm, through the local dispersion (for error bars and residual digits).
  const uncertaintyNm = (l: { positionUncertaintyPx?: number }): number | undefined =>
    l.positionUncertaintyPx !== undefined ? Math.abs(l.positionUncertaintyPx * dispersion) : undefined;
  const lamp = lampText(r);
  const lpmm = r.optNum('lines_per_mm') ?? model.optNum('lines_per_mm');
  const lpmmU = r.optNum('lines_per_mm_uncertainty') ?? model.optNum('lines_per_mm_uncertainty');
  const modelText = kind === 'polynomial' && model.has('degree') ? `polynomial of degree ${model.num('degree')}` : kind === 'grating' ? 'grating + camera (physical model)' : kind;

  const verdict = `Wavelength scale: ${modelText}, RMS ${plain(rmsNm, 'nm', 2)} over ${lo.toFixed(1)}–${hi.toFixed(1)} nm (${used} of ${count(lines.length, 'line')})`;
  const figures: Array<[string, string]> = [];
  if (file) figures.push(['Calibration photo', file]);
  if (lamp) figures.push(['Lamp', lamp]);
  figures.push(['Model', modelText]);
  figures.push(['RMS of the residuals', `${plain(rmsNm, 'nm', 3)}${rmsPx !== undefined ? ` (${plain(rmsPx, 'px', 3)})` : ''}`]);
  figures.push(['Range covered by the lines', `${lo.toFixed(2)}–${hi.toFixed(2)} nm (beyond it the scale extrapolates; its uncertainty grows)`]);
  // Results from before these keys existed simply lack them.
  if (r.has('scale_uncertainty_nm')) {
    const [uLo, uHi] = r.numbers('scale_uncertainty_nm');
    figures.push(['Uncertainty of the scale inside the range (1σ)', `${plain(uLo, 'nm', 2)} to ${plain(uHi, 'nm', 2)}`]);
  }
  const predictionNm = r.optNum('prediction_rms_nm');
  if (predictionNm !== undefined) figures.push(['Each line predicted by the fit of the others (RMS)', plain(predictionNm, 'nm', 2)]);
  figures.push(['Dispersion at mid-range', `${plain(Math.abs(dispersion), 'nm/px', 4)}${dispersion < 0 ? ' (wavelength falls along the band)' : ''}`]);
  if (lpmm !== undefined) figures.push(['Grating line density (from the model)', withU(lpmm, lpmmU, 'lines/mm')]);
  const profile = r.optStr('profile_file') ?? r.optStr('profile') ?? r.optStr('out');
  if (profile) figures.push(['Instrument profile written', profile]);
  if (r.has('air_or_vacuum') || r.has('medium')) figures.push(['Wavelengths in', r.optStr('air_or_vacuum') ?? r.str('medium')]);

  const svgs = lines.length
    ? [
        plotPoints({
          document: options.document,
          points: lines.map((l) => ({ x: l.wavelengthNm, y: l.residualNm, uncertainty: uncertaintyNm(l), excluded: !l.used })),
          title: `Residuals (reference − fitted), RMS ${plain(rmsNm, 'nm', 2)}; crossed: left out of the fit`,
          yRange: 'included',
          xLabel: 'reference wavelength (nm)',
          yLabel: 'residual (nm)',
          levels: [{ y: 0 }, { y: rmsNm, label: '+RMS' }, { y: -rmsNm, label: '−RMS' }],
        }),
      ]
    : [];
  const table: ReportTable = {
    caption: `Lines (${used} used of ${lines.length})`,
    columns: ['position (px)', 'reference λ (nm)', 'line', 'residual (nm)', 'used', 'note'],
    numeric: [0, 1, 3],
    rows: lines.map((l) => [
      withU(l.positionPx, l.positionUncertaintyPx),
      plain(l.wavelengthNm, '', 7),
      l.label,
      likeU(l.residualNm, uncertaintyNm(l) ?? rmsNm),
      l.used ? 'yes' : 'no',
      [EXCLUSION_WORDS[l.why ?? ''] ?? l.why, l.saturated ? 'saturated peak' : '', l.source === 'manual' ? 'manual pair' : ''].filter(Boolean).join(', '),
    ]),
  };
  return {
    kind: 'calibration',
    section: { id, heading: `${item} — ${KIND_LABEL.calibration.toLowerCase()}`, subtitle: lamp ? `Lamp: ${lamp}` : undefined, verdict, figures, svgs, tables: [table], warnings },
    summary: {
      id,
      item,
      measurement: KIND_LABEL.calibration,
      result: `${modelText}, ${used} lines`,
      keyFigure: `RMS ${plain(rmsNm, 'nm', 2)}, ${lo.toFixed(0)}–${hi.toFixed(0)} nm`,
      warnings: warnings.length,
    },
  };
}

/** Why a line was left out of the fit, in words. */
const EXCLUSION_WORDS: Record<string, string> = {
  outlier: 'outlier (rejected by the robust fit)',
  // Results from earlier builds, which named this reason 'clipped' (it read as saturation).
  clipped: 'outlier (rejected by the robust fit)',
  blended: 'blended with a neighbour',
  imprecise: 'wavelength too uncertain as the camera records it (blend or broad band)',
};

/** The lamp as the result names it: a string, a list, or an object with a name. */
function lampText(r: JsonView): string | undefined {
  const v = r.value.lamp ?? r.value.lamps;
  if (typeof v === 'string') return v;
  if (Array.isArray(v)) return v.filter((x) => typeof x === 'string').join(', ') || undefined;
  if (v && typeof v === 'object' && typeof (v as Record<string, unknown>).name === 'string') return (v as Record<string, string>).name;
  return undefined;
}
