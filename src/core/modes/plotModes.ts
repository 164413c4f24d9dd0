import { PALETTE, createChart, type Chart } from '../plot/chart.js';
import { FWHM_PER_SIGMA } from '../spectrum/peaks/index.js';
import type { ModeAnalysis, ModeSeries } from './analyzeModes.js';

/**
 * The mode plots, drawn with d3 on the project's chart frame and stacked in one SVG:
 * 1. one sweep of the interferometer on its fitted frequency scale, peaks marked with their mode index;
 * 2. the mode powers against offset, with the fitted gain envelope;
 * 3. over a warm-up, the comb position (unwrapped) against time with the fitted drift line.
 */
export interface PlotModesOptions {
  document: Document;
  /** @default 760 */
  widthPx?: number;
}

export const PLOT_MODES_DEFAULTS = { widthPx: 760 } as const;

export function plotModes(series: ModeSeries, options: PlotModesOptions): string {
  const doc = options.document;
  const widthPx = options.widthPx ?? PLOT_MODES_DEFAULTS.widthPx;
  const panels: Chart[] = [];
  const last = series.traces[series.traces.length - 1];
  panels.push(sweepPanel(series.traces[0], doc, widthPx));
  panels.push(powerPanel(last, doc, widthPx));
  if (series.drift) panels.push(driftPanel(series, doc, widthPx));
  const heights = panels.map((p) => Number(p.svg.attr('height')));
  const total = heights.reduce((a, b) => a + b, 0);
  const root = doc.createElementNS('http://www.w3.org/2000/svg', 'svg');
  root.setAttribute('xmlns', 'http://www.w3.org/2000/svg');
  root.setAttribute('width', String(widthPx));
  root.setAttribute('height', String(total));
  root.setAttribute('viewBox', `0 0 ${widthPx} ${total}`);
  let y = 0;
  panels.forEach((p, i) => {
    const node = p.svg.node() as SVGSVGElement;
    node.setAttribute('y', String(y));
    node.removeAttribute('xmlns');
    root.appendChild(node);
    y += heights[i];
  });
  return '<?xml version="1.0" encoding="UTF-8"?>\n' + root.outerHTML + '\n';
}

function extent(values: ArrayLike<number>): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < values.length; i++) {
    if (!Number.isFinite(values[i])) continue;
    lo = Math.min(lo, values[i]);
    hi = Math.max(hi, values[i]);
  }
  if (!(hi > lo)) return [lo - 1, hi + 1];
  return [lo, hi];
}

function sweepPanel(a: ModeAnalysis, doc: Document, widthPx: number): Chart {
  const f = Float64Array.from(a.plot.frequencyHz, (v) => v / 1e9);
  const [ylo, yhi] = extent(a.plot.signal);
  const chart = createChart({
    document: doc,
    widthPx,
    heightPx: 300,
    title: `${a.source}: one sweep on the fitted frequency scale (FSR ${(a.fsrHz / 1e9).toFixed(3)} GHz)`,
    xLabel: 'frequency from the strongest mode (GHz)',
    yLabel: 'photodiode signal',
    xDomain: extent(f),
    yDomain: [ylo, yhi + 0.12 * (yhi - ylo)],
  });
  const points: string[] = [];
  for (let i = 0; i < f.length; i++) points.push(`${chart.x(f[i]).toFixed(1)},${chart.y(a.plot.signal[i]).toFixed(1)}`);
  chart.plot.append('polyline').attr('points', points.join(' ')).attr('fill', 'none').attr('stroke', PALETTE.series[0]).attr('stroke-width', 1);
  const marks = chart.plot.append('g').attr('class', 'peaks');
  for (const p of a.plot.peaks) {
    if (p.mode === null) continue;
    const x = chart.x(p.frequencyHz / 1e9);
    marks.append('line').attr('x1', x).attr('x2', x).attr('y1', chart.y(yhi + 0.02 * (yhi - ylo))).attr('y2', chart.y(yhi + 0.06 * (yhi - ylo))).attr('stroke', PALETTE.marker);
  }
  return chart;
}

function powerPanel(a: ModeAnalysis, doc: Document, widthPx: number): Chart {
  const offsets = a.modes.map((m) => m.offsetHz / 1e6);
  const [lo, hi] = extent(offsets);
  const pad = Math.max(0.1 * (hi - lo), (a.modeSpacingHz ?? 1e8) / 1e6);
  const chart = createChart({
    document: doc,
    widthPx,
    heightPx: 300,
    title: `${a.source}: ${a.modeCount} lasing mode(s)${a.modeSpacingHz ? `, spacing ${(a.modeSpacingHz / 1e6).toFixed(2)} MHz` : ''}${a.gainFwhmHz ? `, gain FWHM ${(a.gainFwhmHz / 1e9).toFixed(2)} GHz` : ''}`,
    xLabel: 'offset from the strongest mode (MHz)',
    yLabel: 'relative power',
    xDomain: [lo - pad, hi + pad],
    yDomain: [0, 1.1],
  });
  const g = chart.plot.append('g').attr('class', 'modes');
  for (const m of a.modes) {
    const x = chart.x(m.offsetHz / 1e6);
    g.append('line')
      .attr('x1', x)
      .attr('x2', x)
      .attr('y1', chart.y(0))
      .attr('y2', chart.y(m.relativePower))
      .attr('stroke', m.lasing ? PALETTE.series[0] : PALETTE.muted)
      .attr('stroke-width', 3);
  }
  chart.plot
    .append('line')
    .attr('x1', 0)
    .attr('x2', chart.innerWidthPx)
    .attr('y1', chart.y(0.05))
    .attr('y2', chart.y(0.05))
    .attr('stroke', PALETTE.muted)
    .attr('stroke-dasharray', '4 3');
  const gain = a.plot.gain;
  if (gain) {
    const sigma = gain.fwhmHz / FWHM_PER_SIGMA;
    const peak = Math.max(...a.modes.map((m) => m.relativePower));
    // Scale the drawn curve to the fitted powers (least squares on the shape), so it reads against the stems.
    const shape = (v: number): number => {
      const g0 = Math.exp(-0.5 * ((v - gain.centerHz) / sigma) ** 2);
      return gain.thresholdFraction !== undefined ? g0 - gain.thresholdFraction : g0;
    };
    let num = 0;
    let den = 0;
    for (const m of a.modes) {
      num += shape(m.offsetHz) * m.relativePower;
      den += shape(m.offsetHz) ** 2;
    }
    const amp = den > 0 ? num / den : peak;
    const pts: string[] = [];
    const [x0, x1] = chart.x.domain();
    for (let i = 0; i <= 200; i++) {
      const v = (x0 + ((x1 - x0) * i) / 200) * 1e6;
      const yv = Math.max(0, amp * shape(v));
      pts.push(`${chart.x(v / 1e6).toFixed(1)},${chart.y(Math.min(1.1, yv)).toFixed(1)}`);
    }
    chart.plot.append('polyline').attr('points', pts.join(' ')).attr('fill', 'none').attr('stroke', PALETTE.series[1]).attr('stroke-width', 1.5);
  }
  return chart;
}

function driftPanel(series: ModeSeries, doc: Document, widthPx: number): Chart {
  const d = series.drift!;
  const t0 = d.points[0].timeS;
  const xs = d.points.map((p) => p.timeS - t0);
  const ys = d.points.map((p) => p.unwrappedHz / 1e6);
  const [xlo, xhi] = extent(xs);
  const [ylo, yhi] = extent(ys);
  const chart = createChart({
    document: doc,
    widthPx,
    heightPx: 280,
    title: `mode drift ${(d.driftHzPerS / 1e6).toFixed(3)} ± ${(d.driftUncertaintyHzPerS / 1e6).toFixed(3)} MHz/s over ${d.spanS.toFixed(0)} s`,
    xLabel: 'time from the first trace (s)',
    yLabel: 'comb position (MHz, unwrapped)',
    xDomain: [xlo, xhi],
    yDomain: [ylo - 0.1 * (yhi - ylo + 1), yhi + 0.1 * (yhi - ylo + 1)],
  });
  const g = chart.plot.append('g').attr('class', 'drift');
  d.points.forEach((p, i) => {
    g.append('circle').attr('cx', chart.x(xs[i])).attr('cy', chart.y(ys[i])).attr('r', 3.5).attr('fill', PALETTE.series[0]);
  });
  const intercept = d.interceptHz / 1e6;
  chart.plot
    .append('line')
    .attr('x1', chart.x(xlo))
    .attr('x2', chart.x(xhi))
    .attr('y1', chart.y(intercept + (d.driftHzPerS / 1e6) * xlo))
    .attr('y2', chart.y(intercept + (d.driftHzPerS / 1e6) * xhi))
    .attr('stroke', PALETTE.series[1]);
  return chart;
}
