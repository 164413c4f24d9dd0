/**
 * The grating bench: a laser through the grating onto a screen (spot positions or ±m separations, with the distance)
 * or a goniometer (angles), the labelled line density to check, and the answer — lines/mm ± u, the tilt, the
 * uncertainty budget, the verdict, and a plot of the measured against the fitted spots. The fit is the core's
 * (fitScreen / fitAngles, as `glowprint grating`), run in the page.
 */
import * as d3 from 'd3';
import {
  derivedFigures,
  fitAngles,
  fitScreen,
  gratingVerdict,
  parseTolerance,
  screenPositionMm,
  type GratingMeasurement,
  type GratingVerdict,
} from '../../../src/core/grating/index.js';
import { InputError } from '../../../src/core/errors.js';
import { createChart, PALETTE } from '../../../src/core/plot/chart.js';
import { parseQuantity } from '../../../src/core/units/quantity.js';
import { exportButtons } from '../plots/exporters.js';
import { append, button, card, clear, field, formatPm, h, select } from '../ui/dom.js';
import { say } from '../ui/status.js';

interface Row {
  order: HTMLInputElement;
  value: HTMLInputElement;
  sigma: HTMLInputElement;
  el: HTMLElement;
}

export function gratingBench(): { root: HTMLElement } {
  const method = select(
    [
      { value: 'position', label: 'spots on a screen: positions from the undeviated spot' },
      { value: 'separation', label: 'spots on a screen: distance between the +m and −m spots' },
      { value: 'angle', label: 'goniometer: angles of the orders' },
    ],
    { id: 'gr-method' },
  );
  const wavelength = h('input', { type: 'text', id: 'gr-wavelength', value: '632.816 nm', 'aria-label': 'laser wavelength in air' });
  const wavelengthU = h('input', { type: 'text', id: 'gr-wavelength-u', placeholder: '0 (HeNe); a few nm for a diode', 'aria-label': 'wavelength uncertainty' });
  const distance = h('input', { type: 'text', id: 'gr-distance', value: '1000 mm', 'aria-label': 'grating to screen distance' });
  const distanceU = h('input', { type: 'text', id: 'gr-distance-u', placeholder: '0.2 % of it', 'aria-label': 'distance uncertainty' });
  const itemU = h('input', { type: 'text', id: 'gr-item-u', placeholder: '1 mm / 0.05°', 'aria-label': 'uncertainty of each reading' });
  const reference = select(
    [
      { value: 'undeviated', label: 'from the undeviated beam' },
      { value: 'normal', label: 'from the grating normal' },
    ],
    { id: 'gr-reference' },
  );
  const incidence = h('input', { type: 'text', id: 'gr-incidence', placeholder: 'fitted when both sides are measured', 'aria-label': 'fixed angle of incidence' });
  const nominal = h('input', { type: 'number', id: 'gr-nominal', step: 'any', placeholder: 'e.g. 600', 'aria-label': 'labelled line density, lines/mm' });
  const tolerance = h('input', { type: 'text', id: 'gr-tolerance', value: '2%', 'aria-label': 'accepted deviation' });
  const rowsBox = h('div', { class: 'order-rows', id: 'gr-rows' });
  const rows: Row[] = [];
  const addRow = (order = '', value = '', sigma = ''): Row => {
    const r: Row = {
      order: h('input', { type: 'number', step: '1', value: order, 'aria-label': 'order m', class: 'order' }),
      value: h('input', { type: 'text', value, 'aria-label': 'reading (mm or °, units allowed)', class: 'reading' }),
      sigma: h('input', { type: 'text', value: sigma, 'aria-label': 'its uncertainty (optional)', class: 'sigma' }),
      el: h('div', { class: 'order-row' }),
    };
    r.el.append(field('m', r.order), field('reading', r.value), field('±', r.sigma), button('×', () => {
      rows.splice(rows.indexOf(r), 1);
      r.el.remove();
    }, { class: 'small', 'aria-label': 'remove this order' }));
    rows.push(r);
    rowsBox.append(r.el);
    return r;
  };
  for (const m of ['-2', '-1', '1', '2']) addRow(m);
  const showFields = (): void => {
    const angles = method.value === 'angle';
    distance.closest('label')!.hidden = angles;
    distanceU.closest('label')!.hidden = angles;
    reference.closest('label')!.hidden = !angles;
  };
  method.addEventListener('change', showFields);

  const resultBox = h('div', { class: 'verdict-box', id: 'gr-result' }, h('p', { class: 'muted' }, 'Enter the spots (or angles) and press Measure.'));
  const figure = h('div', { class: 'sheet', id: 'gr-figure' });
  let last: { m: GratingMeasurement; verdict: GratingVerdict | null; derived: ReturnType<typeof derivedFigures> } | null = null;

  const measure = (): void => {
    try {
      const kind = method.value as 'position' | 'separation' | 'angle';
      const unit = kind === 'angle' ? 'deg' : 'mm';
      const items = rows
        .filter((r) => r.value.value.trim() !== '')
        .map((r, i) => {
          const order = Number(r.order.value);
          if (!Number.isInteger(order)) throw new InputError(`row ${i + 1}: expected a whole diffraction order m, got ${JSON.stringify(r.order.value)}`, 'order');
          const value = parseQuantity(r.value.value, { name: `order ${order}`, unit });
          const sigma = r.sigma.value.trim() ? parseQuantity(r.sigma.value, { name: `order ${order} uncertainty`, unit, positive: true }) : undefined;
          return { order, value, sigma };
        });
      if (items.length === 0) throw new InputError('no readings: enter the position (or angle) of at least one order', 'orders');
      const wavelengthNm = parseQuantity(wavelength.value, { name: 'wavelength', unit: 'nm', positive: true });
      const wavelengthUncertaintyNm = wavelengthU.value.trim() ? parseQuantity(wavelengthU.value, { name: 'wavelength uncertainty', unit: 'nm', nonNegative: true }) : undefined;
      const incidenceDeg = incidence.value.trim() ? parseQuantity(incidence.value, { name: 'incidence', unit: 'deg' }) : undefined;
      const itemUncertainty = itemU.value.trim() ? parseQuantity(itemU.value, { name: 'reading uncertainty', unit, positive: true }) : undefined;
      let m: GratingMeasurement;
      let distanceMm: number | undefined;
      if (kind === 'angle') {
        m = fitAngles({
          wavelengthNm,
          wavelengthUncertaintyNm,
          angles: items.map((i) => ({ order: i.order, angleDeg: i.value, uncertaintyDeg: i.sigma })),
          angleUncertaintyDeg: itemUncertainty,
          reference: reference.value as 'undeviated' | 'normal',
          incidenceDeg,
        });
      } else {
        distanceMm = parseQuantity(distance.value, { name: 'distance', unit: 'mm', positive: true });
        const distanceUncertaintyMm = distanceU.value.trim() ? parseQuantity(distanceU.value, { name: 'distance uncertainty', unit: 'mm', nonNegative: true }) : undefined;
        m = fitScreen({
          wavelengthNm,
          wavelengthUncertaintyNm,
          distanceMm,
          distanceUncertaintyMm,
          positionUncertaintyMm: itemUncertainty,
          ...(kind === 'position'
            ? { positions: items.map((i) => ({ order: i.order, positionMm: i.value, uncertaintyMm: i.sigma })) }
            : { separations: items.map((i) => ({ order: i.order, separationMm: i.value, uncertaintyMm: i.sigma })) }),
          incidenceDeg,
        });
      }
      const verdict = nominal.value.trim()
        ? gratingVerdict({ linesPerMm: m.linesPerMm, linesPerMmUncertainty: m.linesPerMmUncertainty, nominalLinesPerMm: Number(nominal.value), tolerance: parseTolerance(tolerance.value, 'tolerance') })
        : null;
      const derived = derivedFigures({ linesPerMm: m.linesPerMm, linesPerMmUncertainty: m.linesPerMmUncertainty, wavelengthNm, distanceMm });
      last = { m, verdict, derived };
      render(distanceMm);
      say(`Line density ${formatPm(m.linesPerMm, m.linesPerMmUncertainty)} lines/mm.`, 'ok');
    } catch (err) {
      say((err as Error).message, 'error');
    }
  };

  const render = (distanceMm: number | undefined): void => {
    if (!last) return;
    const { m, verdict, derived } = last;
    clear(resultBox);
    clear(figure);
    append(
      resultBox,
      h('p', { class: 'headline', id: 'gr-density' }, `${formatPm(m.linesPerMm, m.linesPerMmUncertainty)} lines/mm`, h('span', { class: 'muted' }, ' (k = 1)')),
      verdict ? h('p', { class: `verdict ${verdict.verdict}`, id: 'gr-verdict' }, h('strong', {}, verdict.verdict.replace('_', ' ')), ' — ', verdict.explanation) : null,
      h(
        'dl',
        { class: 'figures' },
        h('dt', {}, 'Period'),
        h('dd', {}, `${formatPm(m.periodUm, m.periodUncertaintyUm)} µm`),
        h('dt', {}, 'Incidence'),
        h('dd', {}, m.incidenceUncertaintyDeg !== null ? `${formatPm(m.incidenceDeg, m.incidenceUncertaintyDeg)}° (fitted)` : `${m.incidenceDeg.toFixed(2)}° (assumed)`),
        h('dt', {}, 'Budget'),
        h('dd', {}, `fit ${m.budget.fitLinesPerMm.toPrecision(2)}, distance ${m.budget.distanceLinesPerMm.toPrecision(2)}, wavelength ${m.budget.wavelengthLinesPerMm.toPrecision(2)} lines/mm`),
        h('dt', {}, 'Orders'),
        h('dd', {}, `${derived.minOrder} … +${derived.maxOrder} at ${m.wavelengthNm} nm`),
      ),
      ...m.warnings.map((w) => h('p', { class: 'warning' }, w)),
    );
    figure.append(residualPlot(m, distanceMm));
  };

  const formCard = card('Measurement', { id: 'gr-form' });
  formCard.body.append(
    field('Method', method),
    h('div', { class: 'grid2' }, field('Wavelength', wavelength, 'air; nm unless a unit is given'), field('± wavelength', wavelengthU), field('Grating → screen', distance, 'along the incident beam'), field('± distance', distanceU), field('Angles measured', reference), field('± each reading', itemU), field('Fix incidence (°)', incidence)),
    h('h3', {}, 'Orders'),
    rowsBox,
    button('Add an order', () => addRow(String((Math.max(0, ...rows.map((r) => Number(r.order.value) || 0)) || 0) + 1)).value.focus(), { id: 'gr-add-row' }),
    h('div', { class: 'grid2' }, field('Labelled line density (lines/mm)', nominal), field('Tolerance', tolerance, 'a percentage or lines/mm')),
    button('Measure', measure, { class: 'primary', id: 'gr-measure' }),
  );
  showFields();
  const resultCard = card('Line density', {
    id: 'gr-result-card',
    tools: [
      exportButtons({
        baseName: () => 'grating',
        svg: () => figure.querySelector('svg'),
        csv: () => (last ? ['order,kind,measured,fitted,residual,uncertainty', ...last.m.residuals.map((r) => (r.kind === 'angle' ? [r.order, r.kind, r.measuredDeg, r.fittedDeg, r.residualDeg, r.uncertaintyDeg] : [r.order, r.kind, r.measuredMm, r.fittedMm, r.residualMm, r.uncertaintyMm]).join(','))].join('\n') + '\n' : null),
        json: () => (last ? { ...last.m, verdict: last.verdict?.verdict ?? null, verdictDetail: last.verdict, derived: last.derived } : null),
      }),
    ],
  });
  resultCard.body.append(resultBox, figure);
  return { root: h('div', { class: 'bench grating-bench' }, formCard.root, resultCard.root) };
}

/** Measured against fitted spots (or angles) by order, with the fitted curve through the orders and error bars. */
function residualPlot(m: GratingMeasurement, distanceMm: number | undefined): SVGSVGElement {
  const res = m.residuals;
  const isAngle = res[0]?.kind === 'angle';
  const meas = res.map((r) => (r.kind === 'angle' ? r.measuredDeg : r.measuredMm));
  const fit = res.map((r) => (r.kind === 'angle' ? r.fittedDeg : r.fittedMm));
  const sig = res.map((r) => (r.kind === 'angle' ? r.uncertaintyDeg : r.uncertaintyMm));
  const orders = res.map((r) => r.order);
  const lo = Math.min(...orders, 0) - 0.5;
  const hi = Math.max(...orders, 0) + 0.5;
  const all = [...meas, ...fit, 0];
  const pad = 0.08 * (Math.max(...all) - Math.min(...all) || 1);
  const unit = isAngle ? '°' : 'mm';
  const chart = createChart({
    document,
    widthPx: 620,
    heightPx: 340,
    title: `${formatPm(m.linesPerMm, m.linesPerMmUncertainty)} lines/mm — measured (dots) and fitted (rings) by order`,
    xLabel: 'diffraction order m',
    yLabel: isAngle ? 'angle (deg)' : res[0]?.kind === 'separation' ? 'separation of ±m spots (mm)' : 'position on the screen (mm)',
    xDomain: [lo, hi],
    yDomain: [Math.min(...all) - pad, Math.max(...all) + pad],
  });
  const { plot, x, y } = chart;
  if (!isAngle && distanceMm && res[0]?.kind === 'position') {
    const curve = d3
      .range(lo, hi + 0.001, 0.05)
      .map((o) => [o, screenPositionMm(o, m.linesPerMm, m.incidenceDeg, distanceMm, m.wavelengthNm * 1e-6) + (m.zeroPositionMm ?? 0)] as [number, number])
      .filter((p) => Number.isFinite(p[1]));
    plot.append('path').attr('d', d3.line()(curve.map(([o, v]) => [x(o), y(v)]))).attr('fill', 'none').attr('stroke', PALETTE.series[0]).attr('stroke-width', 1.2).attr('stroke-dasharray', '4 3');
  }
  res.forEach((r, i) => {
    const g = plot.append('g');
    g.append('line').attr('x1', x(orders[i])).attr('x2', x(orders[i])).attr('y1', y(meas[i] - sig[i])).attr('y2', y(meas[i] + sig[i])).attr('stroke', PALETTE.ink);
    g.append('circle').attr('cx', x(orders[i])).attr('cy', y(fit[i])).attr('r', 6).attr('fill', 'none').attr('stroke', PALETTE.series[1]).attr('stroke-width', 1.5);
    g.append('circle').attr('cx', x(orders[i])).attr('cy', y(meas[i])).attr('r', 3).attr('fill', PALETTE.ink);
    const residual = r.kind === 'angle' ? r.residualDeg : r.residualMm;
    g.append('title').text(`order ${r.order}: measured ${meas[i].toFixed(3)} ${unit}, fitted ${fit[i].toFixed(3)} ${unit}, residual ${residual.toFixed(3)} ${unit} (± ${sig[i].toPrecision(2)})`);
  });
  const svg = chart.svg.node()!;
  svg.setAttribute('role', 'img');
  svg.setAttribute('aria-label', `Measured and fitted ${isAngle ? 'angles' : 'spot positions'} by diffraction order`);
  return svg;
}
