import * as d3 from 'd3';
import { type Chart, chartToSvgText, createChart, PALETTE } from '../../plot/chart.js';
import { formatNumber } from '../html.js';

/** One vertical line of a stick plot: a peak of a peak table, a laser mode. */
export interface Stick {
  x: number;
  height: number;
  /** Text written above the stick (only the highest `maxLabels` sticks whose labels do not collide get one). */
  label?: string;
  /** @default PALETTE.series[0] */
  colour?: string;
  /** Drawn dashed: the value is a lower bound (a clipped peak). */
  lowerBound?: boolean;
  /** Drawn hollow-topped (a blended peak, a mode below the lasing threshold). */
  hollow?: boolean;
}

export interface PlotSticksOptions {
  document: Document;
  sticks: readonly Stick[];
  title?: string;
  xLabel: string;
  yLabel: string;
  /** @default 900 */
  widthPx?: number;
  /** @default 400 */
  heightPx?: number;
  /** @default 24 */
  maxLabels?: number;
  /** Horizontal range; default the sticks' extent with a margin. */
  xDomain?: [number, number];
  /** A smooth curve drawn over the sticks (e.g. a gain envelope), in data units. */
  curve?: ReadonlyArray<readonly [number, number]>;
  /** A dashed horizontal level with its label (e.g. a lasing threshold). */
  level?: { y: number; label: string };
  /** Colour key drawn in the top-left corner. */
  legend?: ReadonlyArray<readonly [string, string]>;
  /**
   * Vertical scale. 'log' spreads lines of very different strength (a clipped zero order beside faint lines);
   * 'auto' picks it when the heights span more than `LOG_SPAN` (100×). @default 'linear'
   */
  yScale?: 'linear' | 'log' | 'auto';
}

export const PLOT_STICKS_DEFAULTS = { widthPx: 900, heightPx: 400, maxLabels: 24, yScale: 'linear' } as const;

/** Heights spanning more than this ratio get a logarithmic axis under yScale 'auto'. */
export const LOG_SPAN = 100;

/** Rotated labels are this wide on screen (px at font size 10): closer labels would overlap. */
const LABEL_SPACING_PX = 12;

/**
 * A stick plot on the project's chart frame: each stick from zero to its height, a marker on top (hollow for
 * `hollow`), dashed for lower bounds, and rotated labels on the highest sticks, skipping any that would overlap a
 * taller one's. For peak tables whose samples are not at hand (a result's JSON carries the peaks, not the spectrum).
 */
export function plotSticks(options: PlotSticksOptions): string {
  const sticks = options.sticks.filter((s) => Number.isFinite(s.x) && Number.isFinite(s.height));
  const widthPx = options.widthPx ?? PLOT_STICKS_DEFAULTS.widthPx;
  const heightPx = options.heightPx ?? PLOT_STICKS_DEFAULTS.heightPx;
  let [x0, x1] = options.xDomain ?? (sticks.length ? (d3.extent(sticks, (s) => s.x) as [number, number]) : [0, 1]);
  if (!options.xDomain) {
    const pad = Math.max(0.03 * (x1 - x0), 1e-9 + Math.abs(x0) * 1e-6);
    x0 -= pad;
    x1 += pad;
  }
  if (!(x1 > x0)) x1 = x0 + 1;
  const maxHeight = Math.max(
    0,
    ...sticks.map((s) => s.height),
    ...(options.curve ?? []).map((p) => p[1]),
    options.level?.y ?? 0,
  );
  const positive = sticks.map((s) => s.height).filter((h) => h > 0);
  const minPositive = positive.length ? Math.min(...positive) : 0;
  const scaleOption = options.yScale ?? PLOT_STICKS_DEFAULTS.yScale;
  const log = minPositive > 0 && (scaleOption === 'log' || (scaleOption === 'auto' && maxHeight / minPositive > LOG_SPAN));
  const labelled = sticks.some((s) => s.label);
  // On a log axis the sticks stand on a floor half a decade below the weakest one; values are drawn as log10.
  const floor = log ? minPositive / Math.sqrt(10) : 0;
  const t = (v: number): number => (log ? Math.log10(Math.max(v, floor)) : v);
  const bottom = t(floor);
  const span = maxHeight > 0 ? t(maxHeight) - bottom : 1;
  // Room above the tallest stick for its rotated label (about 70 px), else a small margin.
  const innerHeightPx = heightPx - 78;
  const headroom = labelled ? Math.min(0.4, 70 / innerHeightPx) : 0.1;
  const top = maxHeight > 0 ? bottom + span / (1 - headroom) : 1;
  const chart = createChart({
    document: options.document,
    widthPx,
    heightPx,
    title: options.title,
    xLabel: options.xLabel,
    yLabel: options.yLabel + (log ? ' (log scale)' : ''),
    xDomain: [x0, x1],
    yDomain: [bottom, top],
  });
  if (log) decadeAxis(chart, bottom, top);
  const { plot, x } = chart;
  const y = (v: number): number => chart.y(t(v));
  if (options.level) {
    plot
      .append('line')
      .attr('class', 'level')
      .attr('x1', 0)
      .attr('x2', chart.innerWidthPx)
      .attr('y1', y(options.level.y))
      .attr('y2', y(options.level.y))
      .attr('stroke', PALETTE.muted)
      .attr('stroke-dasharray', '4 3');
    plot
      .append('text')
      .attr('x', chart.innerWidthPx - 4)
      .attr('y', y(options.level.y) - 4)
      .attr('text-anchor', 'end')
      .attr('fill', PALETTE.muted)
      .text(options.level.label);
  }
  const g = plot.append('g').attr('class', 'sticks');
  for (const s of sticks) {
    const colour = s.colour ?? PALETTE.series[0];
    const px = x(s.x);
    g.append('line')
      .attr('class', 'stick')
      .attr('x1', px)
      .attr('x2', px)
      .attr('y1', chart.y(bottom))
      .attr('y2', y(s.height))
      .attr('stroke', colour)
      .attr('stroke-width', 2)
      .attr('stroke-dasharray', s.lowerBound ? '4 2' : null);
    g.append('circle')
      .attr('cx', px)
      .attr('cy', y(s.height))
      .attr('r', 3)
      .attr('fill', s.hollow ? '#ffffff' : colour)
      .attr('stroke', colour);
  }
  if (options.curve && options.curve.length > 1) {
    const inside = options.curve.filter((p) => p[0] >= x0 && p[0] <= x1);
    plot
      .append('path')
      .attr('class', 'curve')
      .attr('d', d3.line<readonly [number, number]>().x((p) => x(p[0])).y((p) => chart.y(Math.min(top, t(p[1]))))(inside) ?? '')
      .attr('fill', 'none')
      .attr('stroke', PALETTE.series[1])
      .attr('stroke-width', 1.5);
  }
  // Labels: tallest first; one whose position is too close to an already placed label is left out.
  const maxLabels = options.maxLabels ?? PLOT_STICKS_DEFAULTS.maxLabels;
  const placed: number[] = [];
  const labels = plot.append('g').attr('class', 'labels');
  for (const s of [...sticks].filter((s) => s.label).sort((a, b) => b.height - a.height)) {
    if (placed.length >= maxLabels) break;
    const px = x(s.x);
    if (placed.some((p) => Math.abs(p - px) < LABEL_SPACING_PX)) continue;
    placed.push(px);
    labels
      .append('text')
      .attr('class', 'stick-label')
      .attr('transform', `translate(${px + 3.5},${y(s.height) - 6}) rotate(-90)`)
      .attr('font-size', 10)
      .attr('fill', s.colour ?? PALETTE.ink)
      .text(s.label!);
  }
  if (options.legend && options.legend.length > 0) {
    // In the title row, right-aligned, where it covers no stick or label (about 6 px per character at 11 px).
    const widths = options.legend.map(([label]) => 15 + 6 * label.length + 14);
    let xKey = widthPx - 18 - widths.reduce((a, b) => a + b, 0);
    const key = chart.svg.append('g').attr('class', 'legend');
    options.legend.forEach(([label, colour], i) => {
      key.append('rect').attr('x', xKey).attr('y', 11).attr('width', 10).attr('height', 10).attr('fill', colour);
      key.append('text').attr('x', xKey + 15).attr('y', 20).attr('fill', PALETTE.ink).text(label);
      xKey += widths[i];
    });
  }
  return chartToSvgText(chart);
}

/** Replaces the frame's linear grid and y axis by decades (1, 10, 100 …) for values drawn as log10. */
function decadeAxis(chart: Chart, lo: number, hi: number): void {
  const decades = d3.range(Math.ceil(lo), Math.floor(hi) + 1);
  const ticks = decades.length >= 2 ? decades : d3.ticks(lo, hi, 4);
  chart.plot.select('.grid').selectAll('line').remove();
  chart.plot
    .select('.grid')
    .selectAll('line')
    .data(ticks)
    .join('line')
    .attr('x1', 0)
    .attr('x2', chart.innerWidthPx)
    .attr('y1', (d) => chart.y(d))
    .attr('y2', (d) => chart.y(d));
  chart.plot
    .select<SVGGElement>('.axis-y')
    .call(d3.axisLeft(chart.y).tickValues(ticks).tickFormat((d) => formatNumber(10 ** Number(d), 3)));
}
