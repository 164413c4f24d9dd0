import * as d3 from 'd3';
import { chartToSvgText, createChart, PALETTE } from '../../plot/chart.js';
import { formatNumber } from '../html.js';
import { type Box, type LabelCandidate, type LabelRequest, layoutLabels, textBox } from '../../plot/labelLayout.js';

/** One measured point with its standard uncertainty. */
export interface PlotPoint {
  x: number;
  y: number;
  /** Standard uncertainty of y: drawn as a ±1σ bar. */
  uncertainty?: number;
  /** Left out of the fit: drawn hollow and crossed. */
  excluded?: boolean;
  /**
   * Small text beside the point. Labels (and the values of off-scale points) are laid out so that none covers another,
   * a marker or the axes: moved below, or further away on a leader line, when their usual place is taken.
   */
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
   * the rest; excluded points beyond it are pinned to the edge with a ▲/▼ and their value (values of neighbouring
   * pinned points stacked inwards from the edge, each hung on a leader from its triangle). @default 'all'
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
  const W = chart.innerWidthPx;
  const H = chart.innerHeightPx;
  // Markers are drawn first and their boxes kept, so that the labels can be laid out around them afterwards.
  const requests: Array<LabelRequest & { pinned: boolean }> = [];
  const hard: Box[] = [];
  const soft: Box[] = [];
  const texts: Box[] = [];
  for (const l of options.levels ?? []) {
    if (l.label) texts.push(textBox(W - 4, y(l.y) - 4, 'end', l.label, LEVEL_FONT_PX));
  }
  for (const p of pts) {
    const cx = x(p.x);
    // Labels of points in the right half go to their left, so that none runs off the plot.
    const right = cx > W / 2;
    if (p.y > y1 || p.y < y0) {
      // Off the scale: a triangle at the edge pointing the way, with the value.
      const up = p.y > y1;
      const edge = up ? 4 : H - 4;
      g.append('path')
        .attr('class', 'offscale')
        .attr('d', up ? `M${cx},${edge - 4}l-5,8h10z` : `M${cx},${edge + 4}l-5,-8h10z`)
        .attr('fill', p.excluded ? '#ffffff' : PALETTE.ink)
        .attr('stroke', p.excluded ? PALETTE.marker : PALETTE.ink);
      requests.push({
        text: `${formatNumber(p.y, 3)}${p.label ? ' ' + p.label : ''}`,
        fontPx: LABEL_FONT_PX,
        marker: { x0: cx - 5, y0: edge - 4, x1: cx + 5, y1: edge + 4 },
        candidates: pinnedCandidates(cx, edge, up, right, H),
        priority: true,
        pinned: true,
      });
      continue;
    }
    const cy = y(p.y);
    if (p.uncertainty !== undefined && p.uncertainty > 0) {
      const ya = y(Math.max(y0, p.y - p.uncertainty));
      const yb = y(Math.min(y1, p.y + p.uncertainty));
      g.append('line').attr('class', 'error-bar').attr('x1', cx).attr('x2', cx).attr('y1', ya).attr('y2', yb).attr('stroke', PALETTE.ink);
      soft.push({ x0: cx - 1, y0: Math.min(ya, yb), x1: cx + 1, y1: Math.max(ya, yb) });
    }
    g.append('circle')
      .attr('cx', cx)
      .attr('cy', cy)
      .attr('r', MARKER_RADIUS_PX)
      .attr('fill', p.excluded ? '#ffffff' : PALETTE.ink)
      .attr('stroke', p.excluded ? PALETTE.marker : PALETTE.ink);
    if (p.excluded) {
      g.append('path')
        .attr('class', 'excluded')
        .attr('d', `M${cx - 5},${cy - 5}L${cx + 5},${cy + 5}M${cx - 5},${cy + 5}L${cx + 5},${cy - 5}`)
        .attr('stroke', PALETTE.marker);
    }
    const half = p.excluded ? 5 : MARKER_RADIUS_PX;
    const marker = { x0: cx - half, y0: cy - half, x1: cx + half, y1: cy + half };
    if (p.label) {
      requests.push({ text: p.label, fontPx: LABEL_FONT_PX, marker, candidates: pointCandidates(cx, cy, half, right, H), pinned: false });
    } else {
      hard.push(marker);
    }
  }
  const placed = layoutLabels(requests, { hard, soft, texts }, { x0: 0, y0: 0, x1: W, y1: H });
  placed.forEach((l, i) => {
    const colour = requests[i].pinned ? PALETTE.marker : PALETTE.ink;
    if (l.leader) {
      g.append('line')
        .attr('class', 'leader')
        .attr('x1', l.leader.x1)
        .attr('y1', l.leader.y1)
        .attr('x2', l.leader.x2)
        .attr('y2', l.leader.y2)
        .attr('stroke', colour)
        .attr('stroke-width', 0.75);
    }
    g.append('text')
      .attr('class', requests[i].pinned ? 'value-label' : 'point-label')
      .attr('x', l.x)
      .attr('y', l.baseline)
      .attr('text-anchor', l.anchor)
      .attr('font-size', l.fontPx)
      .attr('fill', colour)
      .text(l.text);
  });
  return chartToSvgText(chart);
}

/** Font size of the labels beside points (px); the level labels inherit the chart's 11 px. */
export const LABEL_FONT_PX = 10;
const LEVEL_FONT_PX = 11;
const MARKER_RADIUS_PX = 3.2;
/** Pitch of stacked labels (px): a 10 px label's box with clearance. */
const ROW_PX = 12;

/**
 * Where the value of an off-scale point may go: beside its triangle (its own side first, as always drawn), else
 * stacked in rows inwards from the edge, with a leader down (up) from the triangle's tip along which it hangs.
 */
function pinnedCandidates(cx: number, edge: number, up: boolean, right: boolean, heightPx: number): LabelCandidate[] {
  const s = right ? -1 : 1;
  const anchor = (side: number): 'start' | 'end' => (side > 0 ? 'start' : 'end');
  const beside = up ? edge + 8 : edge;
  const out: LabelCandidate[] = [
    { x: cx + 8 * s, baseline: beside, anchor: anchor(s), cost: 0 },
    { x: cx - 8 * s, baseline: beside, anchor: anchor(-s), cost: 1 },
  ];
  const tip = up ? edge + 4 : edge - 4;
  for (let k = 1; k * ROW_PX < heightPx; k++) {
    const baseline = beside + (up ? 1 : -1) * k * ROW_PX;
    const leader = { x1: cx, y1: tip, x2: cx, y2: baseline - 0.3 * LABEL_FONT_PX };
    out.push({ x: cx + 3 * s, baseline, anchor: anchor(s), cost: 2 * k, leader });
    // The other side only when its own side has no row left: close neighbours then stack as a staircase, each
    // label hanging clear of the leaders of those placed before it.
    out.push({ x: cx - 3 * s, baseline, anchor: anchor(-s), cost: 2 * k + 4 * heightPx, leader });
  }
  return out;
}

/**
 * Where a point's label may go: above beside it (its own side first, as always drawn), below beside it, else
 * further above or below with a leader from the marker's rim to the label's near corner.
 */
function pointCandidates(cx: number, cy: number, half: number, right: boolean, heightPx: number): LabelCandidate[] {
  const s = right ? -1 : 1;
  const anchor = (side: number): 'start' | 'end' => (side > 0 ? 'start' : 'end');
  const above = cy - 6;
  const below = cy + 6 + 0.8 * LABEL_FONT_PX;
  const out: LabelCandidate[] = [
    { x: cx + 6 * s, baseline: above, anchor: anchor(s), cost: 0 },
    { x: cx - 6 * s, baseline: above, anchor: anchor(-s), cost: 1 },
    { x: cx + 6 * s, baseline: below, anchor: anchor(s), cost: 1.5 },
    { x: cx - 6 * s, baseline: below, anchor: anchor(-s), cost: 2.5 },
  ];
  const leader = (tx: number, ty: number) => {
    const d = Math.hypot(tx - cx, ty - cy) || 1;
    const r = half + 1.5;
    return { x1: cx + ((tx - cx) / d) * r, y1: cy + ((ty - cy) / d) * r, x2: tx, y2: ty };
  };
  for (let k = 1; k * ROW_PX < heightPx; k++) {
    for (const side of [s, -s]) {
      const extra = side === s ? 0 : 1;
      const up = above - k * ROW_PX;
      out.push({ x: cx + 8 * side, baseline: up, anchor: anchor(side), cost: 2 * k + extra, leader: leader(cx + 8 * side, up + 0.22 * LABEL_FONT_PX) });
      const down = below + k * ROW_PX;
      out.push({ x: cx + 8 * side, baseline: down, anchor: anchor(side), cost: 2 * k + 1.5 + extra, leader: leader(cx + 8 * side, down - 0.8 * LABEL_FONT_PX) });
    }
  }
  return out;
}
