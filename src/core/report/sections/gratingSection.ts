import type { ReportTable } from '../html.js';
import { deg, likeU, plain, withU } from './format.js';
import { plotPoints } from './plotPoints.js';
import { baseName, JsonView } from './read.js';
import type { ResultSection, SectionOptions } from './types.js';
import { KIND_LABEL } from './types.js';

const METHOD_NAME: Record<string, string> = {
  screen: 'laser spots on a screen',
  angles: 'diffraction angles (goniometer / spectrometer table)',
  profile: 'calibrated spectroscope photo (physical grating model)',
};

const VERDICT_WORDS: Record<string, string> = {
  within: 'Matches its label',
  outside: 'Does not match its label',
  cannot_tell: 'Cannot tell: the uncertainty straddles a tolerance limit',
};

/**
 * `glowprint grating --json` → a report section: line density with its uncertainty budget, the verdict against the
 * nominal, the tilt, residuals per order (table and plot in units of each order's own uncertainty), derived figures.
 */
export function gratingSection(json: unknown, options: SectionOptions): ResultSection {
  const r = new JsonView(json);
  const id = options.id ?? 'grating';
  const method = r.optStr('method') ?? '';
  const warnings = r.warnings();
  const lpmm = r.num('lines_per_mm');
  const lpmmU = r.optNum('lines_per_mm_uncertainty');
  const detail = r.optObj('verdict_detail');
  const verdictKey = r.optStr('verdict');
  const inputFile = r.optObj('input')?.optStr('file');
  const item = inputFile ? baseName(inputFile) : options.source ? baseName(options.source) : `grating (${method || 'line density'})`;
  const density = withU(lpmm, lpmmU, 'lines/mm');

  let verdict = `${density}`;
  let result = 'measured';
  if (verdictKey && detail) {
    const nominal = detail.num('nominal_lines_per_mm');
    verdict = `${VERDICT_WORDS[verdictKey] ?? verdictKey} (${plain(nominal)} lines/mm): measured ${density}`;
    result = verdictKey === 'within' ? `matches ${plain(nominal)} l/mm` : verdictKey === 'outside' ? `not ${plain(nominal)} l/mm` : `cannot tell (${plain(nominal)} l/mm)`;
  }

  const figures: Array<[string, string]> = [];
  if (detail?.has('explanation')) figures.push(['Verdict', detail.str('explanation')]);
  if (detail) {
    figures.push([
      'Nominal, tolerance band',
      `${plain(detail.num('nominal_lines_per_mm'))} lines/mm, ${plain(detail.optNum('lower_limit_lines_per_mm'))}–${plain(detail.optNum('upper_limit_lines_per_mm'))} lines/mm; deviation ${plain(detail.optNum('deviation_percent'), '%', 3)}`,
    ]);
  }
  figures.push(['Line density (k = 1)', density]);
  if (detail?.has('expanded_uncertainty_lines_per_mm')) {
    figures.push([`Expanded uncertainty (k = ${detail.optNum('coverage_factor') ?? 2})`, `± ${plain(detail.num('expanded_uncertainty_lines_per_mm'), 'lines/mm', 3)}`]);
  }
  figures.push(['Grating period', withU(r.optNum('period_um'), r.optNum('period_uncertainty_um'), 'µm')]);
  figures.push(['Method', METHOD_NAME[method] ?? (method || '—')]);
  if (r.has('wavelength_nm')) figures.push(['Laser wavelength', plain(r.num('wavelength_nm'), 'nm', 7)]);
  if (r.has('incidence_deg')) {
    const fitted = r.optBool('incidence_fitted');
    figures.push([
      'Tilt (angle of incidence)',
      fitted ? `${deg(r.num('incidence_deg'), r.optNum('incidence_uncertainty_deg'))} (fitted)` : `${deg(r.num('incidence_deg'), undefined)} (given or assumed)`,
    ]);
  }
  const budget = r.optObj('budget');
  if (budget) {
    const parts: string[] = [];
    for (const [key, label] of [
      ['fit_lines_per_mm', 'fit'],
      ['distance_lines_per_mm', 'distance'],
      ['wavelength_lines_per_mm', 'wavelength'],
      ['calibration_lines_per_mm', 'calibration'],
    ] as const) {
      const v = budget.optNum(key);
      if (v !== undefined && v > 0) parts.push(`${label} ${plain(v, '', 2)}`);
    }
    if (parts.length) figures.push(['Uncertainty budget (lines/mm, 1σ each)', parts.join(', ')]);
  }
  if (r.has('chi2')) {
    const birge = r.optNum('birge_ratio');
    figures.push(['Fit', `χ² ${plain(r.num('chi2'), '', 3)} on ${r.optNum('dof')} dof${birge !== undefined ? `, Birge ratio ${plain(birge, '', 3)}` : ''}`]);
  }

  const residuals = r.optObjects('residuals').map((q) => {
    const kind = q.optStr('kind') ?? 'position';
    const unit = kind === 'angle' ? 'deg' : 'mm';
    return {
      order: q.num('order'),
      kind,
      unit,
      measured: q.num(`measured_${unit}`),
      fitted: q.num(`fitted_${unit}`),
      residual: q.num(`residual_${unit}`),
      uncertainty: q.optNum(`uncertainty_${unit}`),
    };
  });
  const tables: ReportTable[] = [];
  const svgs: string[] = [];
  if (residuals.length) {
    tables.push({
      caption: 'Measured orders',
      columns: ['order', 'what', 'measured', 'fitted', 'residual', 'residual / uncertainty'],
      numeric: [0, 2, 3, 4, 5],
      rows: residuals.map((q) => [
        q.order,
        q.kind,
        withU(q.measured, q.uncertainty, q.unit === 'deg' ? '°' : 'mm'),
        likeU(q.fitted, q.uncertainty, q.unit === 'deg' ? '°' : 'mm'),
        likeU(q.residual, q.uncertainty, q.unit === 'deg' ? '°' : 'mm'),
        q.uncertainty ? plain(q.residual / q.uncertainty, '', 3) : undefined,
      ]),
    });
    const normalised = residuals.every((q) => q.uncertainty !== undefined && q.uncertainty > 0);
    svgs.push(
      plotPoints({
        document: options.document,
        points: residuals.map((q) => ({
          x: q.order,
          y: normalised ? q.residual / q.uncertainty! : q.residual,
          uncertainty: normalised ? 1 : undefined,
          label: `m = ${q.order}`,
        })),
        title: normalised ? 'Residual of each order / its uncertainty (beyond ±3: re-measure that spot)' : 'Residuals per order',
        xLabel: 'diffraction order m',
        yLabel: normalised ? 'residual / uncertainty' : `residual (${residuals[0].unit})`,
        levels: normalised ? [{ y: 0 }, { y: 3, label: '+3' }, { y: -3, label: '−3' }] : [{ y: 0 }],
        widthPx: 640,
        heightPx: 280,
        xIntegerTicks: true,
      }),
    );
  }
  const derived = r.optObj('derived');
  if (derived) {
    const orders = derived.optObjects('orders');
    if (orders.length) {
      const linear = orders.some((o) => o.has('linear_dispersion_mm_per_nm'));
      const resolving = orders.some((o) => o.has('resolving_power'));
      tables.push({
        caption: `Derived figures at ${plain(r.optNum('wavelength_nm'), 'nm', 7)} (orders ${derived.optNum('min_order')} to +${derived.optNum('max_order')} exist)`,
        columns: ['order', 'diffraction angle (°)', 'deviation (°)', 'angular dispersion (°/nm)', ...(linear ? ['on the screen (mm/nm)'] : []), ...(resolving ? ['resolving power mN'] : [])],
        rows: orders.map((o) => [
          o.num('order'),
          plain(o.optNum('diffraction_angle_deg'), '', 5),
          plain(o.optNum('deviation_deg'), '', 5),
          plain(o.optNum('angular_dispersion_deg_per_nm'), '', 4),
          ...(linear ? [plain(o.optNum('linear_dispersion_mm_per_nm'), '', 4)] : []),
          ...(resolving ? [plain(o.optNum('resolving_power'), '', 5)] : []),
        ]),
        numeric: [0, 1, 2, 3, 4, 5],
      });
    }
  }
  return {
    kind: 'grating',
    section: { id, heading: `${item} — ${KIND_LABEL.grating.toLowerCase()}`, subtitle: `Method: ${METHOD_NAME[method] ?? method}`, verdict, figures, svgs, tables, warnings },
    summary: { id, item, measurement: KIND_LABEL.grating, result, keyFigure: density, warnings: warnings.length },
  };
}
