import * as d3 from 'd3';
import { chartToSvgText, createChart, PALETTE } from '../../plot/chart.js';
import { formatNumber } from '../html.js';

/** One measured point with its standard uncertainty. */
export interface PlotPoint {
  x: number;
  y: number;
  /** Standard uncertainty of y: drawn as a ±1σ bar. */
  uncertainty?: number;
  /** Left out of the fit: drawn hollow and crossed. */
  excluded?: boolean;
  /** Small text beside the point. */
  label?: string;
}

export interface PlotPointsOptions {
  document: Document;
  points: readonly PlotPoint[];
  title?: string;
  xLabel: string;
  yLabel: string;
  /** @default 720 */
  widthPx?: number;
  /** @default 300 */
  heightPx?: number;
  /** Dashed horizontal levels with labels (zero, ±RMS). */
  levels?: ReadonlyArray<{ y: number; label?: string }>;
  /** A fitted line or curve through the points, in data units. */
  line?: ReadonlyArray<readonly [number, number]>;
  /** Include y = 0 in the vertical range. @default false */
  includeZero?: boolean;
  /** Ticks on whole numbers only (diffraction orders). @default false */
  xIntegerTicks?: boolean;
  /**
   * 'included': the vertical range follows the points used (not excluded), so that one wild outlier does not flatten
   * the rest; excluded points beyond it are pinned to the edge with a ▲/▼ and their value. @default 'all'
   */
  yRange?: 'all' | 'included';
}

export const PLOT_POINTS_DEFAULTS = { widthPx: 720, heightPx: 300 } as const;

/** Points with error bars on the project's chart frame, for residual plots and trends (mode drift). */
export function plotPoints(options: PlotPointsOptions): string {
  const pts = options.points.filter((p) => Number.isFinite(p.x) && Number.isFinite(p.y));
  const ys: number[] = [];
  const ranged = options.yRange === 'included' && pts.some((p) => !p.excluded) ? pts.filter((p) => !p.excluded) : pts;
  for (const p of ranged) ys.push(p.y - (p.uncertainty ?? 0), p.y + (p.uncertainty ?? 0));
  for (const l of options.levels ?? []) ys.push(l.y);
  for (const q of options.line ?? []) ys.push(q[1]);
  if (options.includeZero) ys.push(0);
  const xs = [...pts.map((p) => p.x), ...(options.line ?? []).map((q) => q[0])];
  let [x0, x1] = xs.length ? (d3.extent(xs) as [number, number]) : [0, 1];
  let [y0, y1] = ys.length ? (d3.extent(ys) as [number, number]) : [-1, 1];
  const xPad = x1 > x0 ? 0.06 * (x1 - x0) : Math.max(1, Math.abs(x0) * 0.1);
  const yPad = y1 > y0 ? 0.1 * (y1 - y0) : Math.max(1e-9, Math.abs(y0) * 0.1, 1);
  x0 -= xPad;
  x1 += xPad;
  y0 -= yPad;
  y1 += yPad;
  const chart = createChart({
    document: options.document,
    widthPx: options.widthPx ?? PLOT_POINTS_DEFAULTS.widthPx,
    heightPx: options.heightPx ?? PLOT_POINTS_DEFAULTS.heightPx,
    title: options.title,
    xLabel: options.xLabel,
    yLabel: options.yLabel,
    xDomain: [x0, x1],
    yDomain: [y0, y1],
  });
  const { plot, x, y } = chart;
  if (options.xIntegerTicks) {
    const ticks = d3.range(Math.ceil(x0), Math.floor(x1) + 1);
    plot.select<SVGGElement>('.axis-x').call(d3.axisBottom(x).tickValues(ticks).tickFormat(d3.format('d')));
  }
  for (const l of options.levels ?? []) {
    plot
      .append('line')
      .attr('class', 'level')
      .attr('x1', 0)
      .attr('x2', chart.innerWidthPx)
      .attr('y1', y(l.y))
      .attr('y2', y(l.y))
      .attr('stroke', PALETTE.muted)
      .attr('stroke-dasharray', '4 3');
    if (l.label) {
      plot.append('text').attr('x', chart.innerWidthPx - 4).attr('y', y(l.y) - 4).attr('text-anchor', 'end').attr('fill', PALETTE.muted).text(l.label);
    }
  }
  if (options.line && options.line.length > 1) {
    plot
      .append('path')
      .attr('class', 'fit')
      .attr('d', d3.line<readonly [number, number]>().x((q) => x(q[0])).y((q) => y(q[1]))(options.line) ?? '')
      .attr('fill', 'none')
      .attr('stroke', PALETTE.series[1])
      .attr('stroke-width', 1.5);
  }
  const g = plot.append('g').attr('class', 'points');
  for (const p of pts) {
    const cx = x(p.x);
    if (p.y > y1 || p.y < y0) {
      // Off the scale: a triangle at the edge pointing the way, with the value.
      const up = p.y > y1;
      const edge = up ? 4 : chart.innerHeightPx - 4;
      g.append('path')
        .attr('class', 'offscale')
        .attr('d', up ? `M${cx},${edge - 4}l-5,8h10z` : `M${cx},${edge + 4}l-5,-8h10z`)
        .attr('fill', p.excluded ? '#ffffff' : PALETTE.ink)
        .attr('stroke', p.excluded ? PALETTE.marker : PALETTE.ink);
      const right = cx > chart.innerWidthPx / 2;
      g.append('text')
        .attr('x', right ? cx - 8 : cx + 8)
        .attr('y', up ? edge + 8 : edge)
        .attr('text-anchor', right ? 'end' : 'start')
        .attr('font-size', 10)
        .attr('fill', PALETTE.marker)
        .text(`${formatNumber(p.y, 3)}${p.label ? ' ' + p.label : ''}`);
      continue;
    }
    const cy = y(p.y);
    if (p.uncertainty !== undefined && p.uncertainty > 0) {
      g.append('line')
        .attr('class', 'error-bar')
        .attr('x1', cx)
        .attr('x2', cx)
        .attr('y1', y(Math.max(y0, p.y - p.uncertainty)))
        .attr('y2', y(Math.min(y1, p.y + p.uncertainty)))
        .attr('stroke', PALETTE.ink);
    }
    g.append('circle')
      .attr('cx', cx)
      .attr('cy', cy)
      .attr('r', 3.2)
      .attr('fill', p.excluded ? '#ffffff' : PALETTE.ink)
      .attr('stroke', p.excluded ? PALETTE.marker : PALETTE.ink);
    if (p.excluded) {
      g.append('path')
        .attr('class', 'excluded')
        .attr('d', `M${cx - 5},${cy - 5}L${cx + 5},${cy + 5}M${cx - 5},${cy + 5}L${cx + 5},${cy - 5}`)
        .attr('stroke', PALETTE.marker);
    }
    if (p.label) {
      // Labels of points in the right half go to their left, so that none runs off the plot.
      const right = cx > chart.innerWidthPx / 2;
      g.append('text')
        .attr('x', right ? cx - 6 : cx + 6)
        .attr('y', cy - 6)
        .attr('text-anchor', right ? 'end' : 'start')
        .attr('font-size', 10)
        .attr('fill', PALETTE.ink)
        .text(p.label);
    }
  }
  return chartToSvgText(chart);
}
