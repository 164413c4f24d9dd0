import * as d3 from 'd3';
import { type Chart, chartInnerSizePx, chartToSvgText, createChart, PALETTE } from '../../plot/chart.js';
import { arrangePeakLabels, drawPeakLabels, placePeakLabels, type PeakLabelRequest, scaleTopForLabels, UPRIGHT_LABEL_PITCH_EM } from '../../plot/peakLabels.js';
import { formatNumber } from '../html.js';

/** One vertical line of a stick plot: a peak of a peak table, a laser mode. */
export interface Stick {
  x: number;
  height: number;
  /** Text written above the stick (on the highest `maxLabels` sticks; spread sideways with a leader where they crowd). */
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
  /** At most this many sticks get a label, the highest first. @default 60 */
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

export const PLOT_STICKS_DEFAULTS = { widthPx: 900, heightPx: 400, maxLabels: 60, yScale: 'linear' } as const;

/** Heights spanning more than this ratio get a logarithmic axis under yScale 'auto'. */
export const LOG_SPAN = 100;

/** Font size of the stick labels (px). */
const LABEL_FONT_PX = 10;
/** Radius of the marker on each stick's top (px). */
const MARKER_RADIUS_PX = 3;

/**
 * A stick plot on the project's chart frame: each stick from zero to its height, a marker on top (hollow for
 * `hollow`), dashed for lower bounds, and upright labels on the highest sticks, spread sideways where they crowd and
 * tied to their sticks by leaders (plot/peakLabels.ts), the scale's top raised to give them room. For peak tables
 * whose samples are not at hand (a result's JSON carries the peaks, not the spectrum).
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
  // On a log axis the sticks stand on a floor half a decade below the weakest one; values are drawn as log10.
  const floor = log ? minPositive / Math.sqrt(10) : 0;
  const t = (v: number): number => (log ? Math.log10(Math.max(v, floor)) : v);
  const bottom = t(floor);
  const span = maxHeight > 0 ? t(maxHeight) - bottom : 1;

  // Labels, laid out sideways first: their room above the sticks under them sets the top of the scale.
  const inner = chartInnerSizePx({ widthPx, heightPx, title: options.title });
  const xScale = d3.scaleLinear().domain([x0, x1]).range([0, inner.widthPx]);
  const room = Math.floor(inner.widthPx / (UPRIGHT_LABEL_PITCH_EM * LABEL_FONT_PX));
  const maxLabels = Math.min(room, options.maxLabels ?? PLOT_STICKS_DEFAULTS.maxLabels);
  const labelled = sticks
    .filter((s) => s.label && xScale(s.x) >= 0 && xScale(s.x) <= inner.widthPx)
    .sort((a, b) => b.height - a.height)
    .slice(0, maxLabels);
  const requests: PeakLabelRequest[] = labelled.map((s) => ({ xPx: xScale(s.x), text: s.label!, fontPx: LABEL_FONT_PX }));
  const arrangement = arrangePeakLabels(requests, inner.widthPx);
  const tallestIn = (a: number, b: number): number => {
    let h = Number.NEGATIVE_INFINITY;
    for (const s of sticks) if (xScale(s.x) >= a && xScale(s.x) <= b && s.height > h) h = s.height;
    return h;
  };
  // A small margin above the tallest stick, raised where labels need room.
  let top = maxHeight > 0 ? bottom + span / 0.9 : 1;
  if (labelled.length && maxHeight > 0) {
    top = scaleTopForLabels(arrangement, (crowd) => t(Math.max(floor, tallestIn(crowd.x0Px, crowd.x1Px))), () => MARKER_RADIUS_PX + 2, inner.heightPx, bottom, top);
  }
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
  // Labels upright above their sticks, spread where they crowd, with leaders (plot/peakLabels.ts).
  const placed = placePeakLabels(
    requests,
    arrangement,
    labelled.map((s) => y(s.height) - MARKER_RADIUS_PX),
    (a, b) => {
      const h = tallestIn(a, b);
      return Number.isFinite(h) ? y(h) - MARKER_RADIUS_PX : chart.innerHeightPx;
    },
  );
  drawPeakLabels(
    plot.append('g').attr('class', 'labels'),
    arrangement,
    placed,
    (i) => ({ text: labelled[i].label!, colour: labelled[i].colour ?? PALETTE.ink, className: 'stick-label' }),
    LABEL_FONT_PX,
    (at) => at.endYPx >= 0, // no room even with the scale raised: the stick stays unlabelled
  );
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
