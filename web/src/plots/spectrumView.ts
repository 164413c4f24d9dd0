/**
 * The interactive spectrum plot of the page (d3): intensity against wavelength (nm) once a scale is known, else
 * against position along the band (px); RGB channel traces beneath; clipped samples shaded; peak markers and line
 * labels; hover read-out; zoom and pan on the x axis (wheel, drag, keys); a peak can be picked by click or keyboard.
 * Colours are set as attributes, so the exported SVG looks like the screen.
 */
import * as d3 from 'd3';
import { textWidthPx } from '../../../src/core/plot/labelLayout.js';
import { spreadPositions } from '../../../src/core/plot/peakLabels.js';
import { h } from '../ui/dom.js';
import { wavelengthCss } from './wavelengthColour.js';

export interface ViewData {
  positionPx: Float64Array;
  intensity: Float64Array;
  channels?: { r: Float64Array; g: Float64Array; b: Float64Array } | null;
  saturated?: Uint8Array;
  /** Wavelength of each sample (nm), when a scale is known. */
  wavelengthNm?: Float64Array | null;
}

export interface ViewPeak {
  positionPx: number;
  wavelengthNm?: number;
  height: number;
  saturated?: boolean;
  blended?: boolean;
  /** Line label drawn above the marker ('Ne I 585.25'). */
  label?: string;
  /** Marker and label colour (e.g. the species'). */
  colour?: string;
}

export const PLOT_THEME = {
  background: '#0f1419',
  grid: '#243040',
  axis: '#9fb0c3',
  trace: '#eef3f8',
  channels: ['#ff6b6b', '#5fd38d', '#6ea8ff'],
  marker: '#ffb84d',
  saturated: '#ff4d6d',
  selection: '#4dd0e1',
  font: 'system-ui, -apple-system, "Segoe UI", sans-serif',
} as const;

const MARGIN = { top: 16, right: 18, bottom: 42, left: 62 };
/** Room above the plot for line labels (vertical text), when there are labels to show: at least this… */
const LABEL_STRIP_PX = 84;
/** …and as much as the longest label needs ("Ar I 415.86 (order 2)"), up to this. */
const MAX_LABEL_STRIP_PX = 150;

export interface SpectrumViewOptions {
  heightPx?: number;
  /** Accessible name of the plot. */
  label: string;
  /** Called when a peak is picked (click, or Enter on the keyboard-selected one). */
  onPeakPick?: (index: number) => void;
  /** Live data: no label layout work, y scale follows the data with some inertia. */
  live?: boolean;
}

export class SpectrumView {
  readonly root: HTMLElement;
  private svg: d3.Selection<SVGSVGElement, unknown, null, undefined>;
  private plot: d3.Selection<SVGGElement, unknown, null, undefined>;
  private widthPx = 860;
  private heightPx: number;
  private data: ViewData | null = null;
  private peaks: ViewPeak[] = [];
  private selected: number | null = null;
  private transform = d3.zoomIdentity;
  private yMax = 1;
  private readout: HTMLElement;
  private zoom: d3.ZoomBehavior<SVGRectElement, unknown>;
  private gradientId = `wl-${Math.random().toString(36).slice(2, 8)}`;
  private clipId = `clip-${Math.random().toString(36).slice(2, 8)}`;
  private margin = { ...MARGIN };

  constructor(private options: SpectrumViewOptions) {
    this.heightPx = options.heightPx ?? 320;
    this.readout = h('div', { class: 'plot-readout', 'aria-live': 'polite' }, 'Wheel or + − to zoom, drag to pan, double-click or 0 to reset; hover for values.');
    this.root = h('div', { class: 'plot' });
    const svgNode = document.createElementNS('http://www.w3.org/2000/svg', 'svg');
    this.svg = d3.select(svgNode);
    this.svg
      .attr('xmlns', 'http://www.w3.org/2000/svg')
      .attr('role', 'img')
      .attr('tabindex', 0)
      .attr('aria-label', `${options.label}. Keys: left and right arrows select peaks, Enter picks the selected peak, plus and minus zoom, 0 resets the zoom.`)
      .attr('font-family', PLOT_THEME.font)
      .attr('font-size', 11);
    this.svg.append('defs').call((defs) => {
      defs.append('linearGradient').attr('id', this.gradientId).attr('gradientUnits', 'userSpaceOnUse');
      defs.append('clipPath').attr('id', this.clipId).append('rect');
    });
    this.svg.append('rect').attr('class', 'bg').attr('fill', PLOT_THEME.background);
    this.plot = this.svg.append('g');
    for (const cls of ['grid', 'axis-x', 'axis-y']) this.plot.append('g').attr('class', cls);
    const clipped = this.plot.append('g').attr('class', 'clipped').attr('clip-path', `url(#${this.clipId})`);
    clipped.append('g').attr('class', 'sat');
    clipped.append('path').attr('class', 'fill').attr('stroke', 'none');
    clipped.append('g').attr('class', 'channels');
    clipped.append('path').attr('class', 'trace').attr('fill', 'none').attr('stroke', PLOT_THEME.trace).attr('stroke-width', 1.3);
    clipped.append('g').attr('class', 'selection');
    clipped.append('g').attr('class', 'peaks');
    clipped.append('line').attr('class', 'hover').attr('stroke', PLOT_THEME.axis).attr('stroke-dasharray', '3 3').attr('visibility', 'hidden');
    this.plot.append('g').attr('class', 'labels');
    this.plot.append('text').attr('class', 'x-label').attr('fill', PLOT_THEME.axis).attr('text-anchor', 'middle');
    this.plot.append('text').attr('class', 'y-label').attr('fill', PLOT_THEME.axis).attr('text-anchor', 'middle').text('intensity (linear, summed across the band)');
    const overlay = this.plot.append('rect').attr('class', 'overlay').attr('fill', 'transparent').style('cursor', 'crosshair');
    this.zoom = d3
      .zoom<SVGRectElement, unknown>()
      .scaleExtent([1, 400])
      .on('zoom', (event: d3.D3ZoomEvent<SVGRectElement, unknown>) => {
        this.transform = event.transform;
        this.render();
      });
    overlay.call(this.zoom).on('dblclick.zoom', null).on('dblclick', () => this.resetZoom());
    overlay.on('pointermove', (event: PointerEvent) => this.hover(event)).on('pointerleave', () => this.hover(null));
    overlay.on('click', (event: MouseEvent) => this.click(event));
    svgNode.addEventListener('keydown', (e) => this.key(e));
    this.root.append(svgNode, this.readout);
    const ro = new ResizeObserver((entries) => {
      const w = Math.max(320, Math.floor(entries[0].contentRect.width));
      if (Math.abs(w - this.widthPx) > 2) {
        this.widthPx = w;
        this.layout();
        this.render();
      }
    });
    ro.observe(this.root);
    this.layout();
  }

  get svgElement(): SVGSVGElement {
    return this.svg.node()!;
  }

  private get innerW(): number {
    return this.widthPx - this.margin.left - this.margin.right;
  }

  private get innerH(): number {
    return this.heightPx - this.margin.top - this.margin.bottom;
  }

  private layout(): void {
    const W = this.widthPx;
    const H = this.heightPx;
    this.plot.attr('transform', `translate(${this.margin.left},${this.margin.top})`);
    this.svg.attr('width', W).attr('height', H).attr('viewBox', `0 0 ${W} ${H}`);
    this.svg.select('rect.bg').attr('width', W).attr('height', H);
    this.svg.select(`#${this.clipId} rect`).attr('width', this.innerW).attr('height', this.innerH);
    this.plot.select('rect.overlay').attr('width', this.innerW).attr('height', this.innerH);
    this.plot.select('g.axis-x').attr('transform', `translate(0,${this.innerH})`);
    this.plot.select('text.x-label').attr('x', this.innerW / 2).attr('y', this.innerH + 34);
    this.plot.select('text.y-label').attr('transform', `translate(-48,${this.innerH / 2}) rotate(-90)`);
    this.zoom.extent([
      [0, 0],
      [this.innerW, this.innerH],
    ]).translateExtent([
      [0, 0],
      [this.innerW, this.innerH],
    ]);
  }

  /** Whether the x axis is wavelength (a scale is known) or position. */
  get usesWavelength(): boolean {
    return !!this.data?.wavelengthNm;
  }

  setData(data: ViewData | null, peaks: ViewPeak[] = []): void {
    const axisChanged = !!data?.wavelengthNm !== !!this.data?.wavelengthNm;
    this.data = data;
    this.peaks = peaks;
    const longest = Math.max(0, ...peaks.map((p) => (p.label ? textWidthPx(p.label, 10) : 0)));
    const strip = Math.min(MAX_LABEL_STRIP_PX, Math.max(LABEL_STRIP_PX, Math.ceil(longest) + 6));
    const top = !this.options.live && longest > 0 ? MARGIN.top + strip : MARGIN.top;
    if (top !== this.margin.top) {
      this.margin.top = top;
      this.layout();
    }
    if (this.selected !== null && this.selected >= peaks.length) this.selected = null;
    if (axisChanged) this.resetZoom();
    else this.render();
  }

  /** The peak the keyboard or a click selected (index into the peaks given to setData). */
  select(index: number | null): void {
    this.selected = index;
    this.render();
    if (index !== null) this.describePeak(index);
  }

  get selectedPeak(): number | null {
    return this.selected;
  }

  resetZoom(): void {
    const overlay = this.plot.select<SVGRectElement>('rect.overlay');
    this.transform = d3.zoomIdentity;
    overlay.call(this.zoom.transform, d3.zoomIdentity);
    this.render();
  }

  private xs(): Float64Array | null {
    if (!this.data) return null;
    return this.data.wavelengthNm ?? this.data.positionPx;
  }

  private baseScale(): d3.ScaleLinear<number, number> {
    const xs = this.xs();
    let lo = 0;
    let hi = 1;
    if (xs && xs.length > 1) {
      lo = Infinity;
      hi = -Infinity;
      for (const v of xs) {
        if (!Number.isFinite(v)) continue;
        if (v < lo) lo = v;
        if (v > hi) hi = v;
      }
      if (!(hi > lo)) {
        lo = 0;
        hi = 1;
      }
    }
    return d3.scaleLinear().domain([lo, hi]).range([0, this.innerW]);
  }

  /** The x scale as shown (zoom applied). */
  xScale(): d3.ScaleLinear<number, number> {
    return this.transform.rescaleX(this.baseScale());
  }

  private peakX(p: ViewPeak): number {
    return this.usesWavelength ? (p.wavelengthNm ?? NaN) : p.positionPx;
  }

  private render(): void {
    const x = this.xScale();
    const xs = this.xs();
    const data = this.data;
    const [x0, x1] = x.domain();
    // y: the visible maximum (live: follows it with inertia, so the axis does not jitter).
    let vmax = 0;
    let vmin = 0;
    if (data && xs) {
      for (let i = 0; i < xs.length; i++) {
        const v = xs[i];
        if (v < Math.min(x0, x1) || v > Math.max(x0, x1)) continue;
        const y = data.intensity[i];
        if (y > vmax) vmax = y;
        if (y < vmin) vmin = y;
      }
    }
    // Nothing above zero in view (no spectrum yet, a dark frame): a 0–1 axis, not one of nano-units around nothing.
    const target = vmax > 0 ? vmax * 1.12 : 1;
    this.yMax = this.options.live ? (target > this.yMax || target < 0.6 * this.yMax ? target : this.yMax) : target;
    const y = d3.scaleLinear().domain([Math.min(0, vmin * 1.1), this.yMax]).range([this.innerH, 0]).nice(6);
    const plot = this.plot;
    plot
      .select<SVGGElement>('g.axis-x')
      .call(d3.axisBottom(x).ticks(Math.max(3, Math.floor(this.innerW / 80))))
      .call((g) => styleAxis(g));
    plot
      .select<SVGGElement>('g.axis-y')
      .call(d3.axisLeft(y).ticks(5, '~s'))
      .call((g) => styleAxis(g));
    plot
      .select('g.grid')
      .selectAll('line')
      .data(y.ticks(5))
      .join('line')
      .attr('x1', 0)
      .attr('x2', this.innerW)
      .attr('y1', (d) => y(d))
      .attr('y2', (d) => y(d))
      .attr('stroke', PLOT_THEME.grid);
    plot.select('text.x-label').text(this.usesWavelength ? 'wavelength (nm, air)' : 'position along the band (px)');

    const trace = plot.select<SVGPathElement>('path.trace');
    const fill = plot.select<SVGPathElement>('path.fill');
    if (!data || !xs || xs.length < 2) {
      trace.attr('d', null);
      fill.attr('d', null);
      plot.select('g.channels').selectAll('path').remove();
      plot.select('g.peaks').selectAll('*').remove();
      plot.select('g.labels').selectAll('*').remove();
      plot.select('g.sat').selectAll('*').remove();
      return;
    }
    const n = xs.length;
    const line = (values: Float64Array): string => pathOf(xs, values, x, y);
    trace.attr('d', line(data.intensity));
    // Fill under the trace: wavelength colours once there is a scale.
    if (data.wavelengthNm) {
      const grad = this.svg.select(`#${this.gradientId}`).attr('x1', 0).attr('x2', this.innerW).attr('y1', 0).attr('y2', 0);
      const stops = d3.range(0, 1.0001, 1 / 24).map((t) => x.invert(t * this.innerW));
      grad
        .selectAll('stop')
        .data(stops)
        .join('stop')
        .attr('offset', (_d, i) => i / (stops.length - 1))
        .attr('stop-color', (d) => wavelengthCss(d));
      fill.attr('d', areaOf(xs, data.intensity, x, y)).attr('fill', `url(#${this.gradientId})`).attr('fill-opacity', 0.5);
    } else {
      fill.attr('d', areaOf(xs, data.intensity, x, y)).attr('fill', PLOT_THEME.trace).attr('fill-opacity', 0.08);
    }
    const ch = data.channels;
    plot
      .select('g.channels')
      .selectAll('path')
      .data(ch ? [ch.r, ch.g, ch.b] : [])
      .join('path')
      .attr('fill', 'none')
      .attr('stroke', (_d, i) => PLOT_THEME.channels[i])
      .attr('stroke-opacity', 0.55)
      .attr('stroke-width', 0.9)
      .attr('d', (d) => pathOf(xs, d, x, y, 1 / 3));
    // Clipped runs.
    const runs: Array<[number, number]> = [];
    if (data.saturated) {
      let start = -1;
      for (let i = 0; i <= n; i++) {
        const s = i < n && data.saturated[i] === 1;
        if (s && start < 0) start = i;
        if (!s && start >= 0) {
          runs.push([xs[start], xs[i - 1]]);
          start = -1;
        }
      }
    }
    plot
      .select('g.sat')
      .selectAll('rect')
      .data(runs)
      .join('rect')
      .attr('x', (d) => Math.min(x(d[0]), x(d[1])) - 1)
      .attr('width', (d) => Math.abs(x(d[1]) - x(d[0])) + 2)
      .attr('y', 0)
      .attr('height', this.innerH)
      .attr('fill', PLOT_THEME.saturated)
      .attr('fill-opacity', 0.18);

    // Peaks: a marker above each; labels for those that carry one, spread along the top where they crowd.
    const peaks = this.peaks.map((p, i) => ({ p, i, px: x(this.peakX(p)), py: y(p.height) })).filter((q) => Number.isFinite(q.px));
    plot
      .select('g.peaks')
      .selectAll('path')
      .data(peaks)
      .join('path')
      .attr('d', (q) => `M${q.px},${q.py - 4}l-4,-7h8z`)
      .attr('fill', (q) => (q.p.blended ? 'none' : q.p.saturated ? PLOT_THEME.saturated : (q.p.colour ?? PLOT_THEME.marker)))
      .attr('stroke', (q) => (q.p.saturated ? PLOT_THEME.saturated : (q.p.colour ?? PLOT_THEME.marker)))
      .attr('stroke-width', 1.2);
    const labelled = this.options.live ? [] : placeLabels(peaks.filter((q) => q.p.label), this.innerW);
    const labelGroups = plot
      .select('g.labels')
      .selectAll<SVGGElement, (typeof labelled)[number]>('g')
      .data(labelled)
      .join((enter) => {
        const g = enter.append('g');
        g.append('path');
        g.append('text');
        return g;
      });
    // Leader: from the label's foot aslant to above its peak within a short band under the top (where the labels
    // were spread, so no two leaders cross), then straight down to the peak's marker.
    labelGroups
      .select('path')
      .attr('d', (q) => {
        const foot = Math.max(LEADER_BAND_PX, q.py - 12);
        return `M${q.lx.toFixed(1)},-2L${q.px.toFixed(1)},${LEADER_BAND_PX}L${q.px.toFixed(1)},${foot.toFixed(1)}`;
      })
      .attr('fill', 'none')
      .attr('stroke', (q) => q.p.colour ?? PLOT_THEME.marker)
      .attr('stroke-opacity', 0.35)
      .attr('stroke-dasharray', '1 2');
    labelGroups
      .select('text')
      .attr('transform', (q) => `translate(${(q.lx + 3.5).toFixed(1)},-4) rotate(-90)`)
      .attr('fill', (q) => q.p.colour ?? PLOT_THEME.marker)
      .attr('font-size', 10)
      .text((q) => q.p.label ?? '');
    const sel = this.selected !== null ? peaks.find((q) => q.i === this.selected) : undefined;
    plot
      .select('g.selection')
      .selectAll('line')
      .data(sel ? [sel] : [])
      .join('line')
      .attr('x1', (q) => q.px)
      .attr('x2', (q) => q.px)
      .attr('y1', 0)
      .attr('y2', this.innerH)
      .attr('stroke', PLOT_THEME.selection)
      .attr('stroke-width', 2)
      .attr('stroke-opacity', 0.8);
  }

  private nearestSample(px: number): number {
    const xs = this.xs();
    if (!xs) return -1;
    const v = this.xScale().invert(px);
    let best = -1;
    let bd = Infinity;
    for (let i = 0; i < xs.length; i++) {
      const d = Math.abs(xs[i] - v);
      if (d < bd) {
        bd = d;
        best = i;
      }
    }
    return best;
  }

  private nearestPeak(px: number, withinPx = 8): number | null {
    const x = this.xScale();
    let best: number | null = null;
    let bd = withinPx;
    this.peaks.forEach((p, i) => {
      const d = Math.abs(x(this.peakX(p)) - px);
      if (d <= bd) {
        bd = d;
        best = i;
      }
    });
    return best;
  }

  private hover(event: PointerEvent | null): void {
    const line = this.plot.select('line.hover');
    if (!event || !this.data) {
      line.attr('visibility', 'hidden');
      return;
    }
    const [px] = d3.pointer(event, this.plot.node());
    const i = this.nearestSample(px);
    if (i < 0) return;
    const xs = this.xs()!;
    const xv = this.xScale()(xs[i]);
    line.attr('visibility', 'visible').attr('x1', xv).attr('x2', xv).attr('y1', 0).attr('y2', this.innerH);
    const d = this.data;
    const parts = [
      d.wavelengthNm ? `λ ${d.wavelengthNm[i].toFixed(2)} nm` : null,
      `position ${d.positionPx[i].toFixed(1)} px`,
      `intensity ${fmt(d.intensity[i])}`,
      d.saturated?.[i] ? 'clipped' : null,
    ].filter(Boolean);
    const near = this.nearestPeak(px);
    if (near !== null) parts.push(`peak ${near + 1}${this.peaks[near].label ? ` (${this.peaks[near].label})` : ''}`);
    this.readout.textContent = parts.join(' · ');
  }

  private click(event: MouseEvent): void {
    const [px] = d3.pointer(event, this.plot.node());
    const near = this.nearestPeak(px, 10);
    if (near === null) return;
    this.select(near);
    this.options.onPeakPick?.(near);
  }

  private describePeak(i: number): void {
    const p = this.peaks[i];
    if (!p) return;
    this.readout.textContent = [
      `peak ${i + 1} of ${this.peaks.length}`,
      p.wavelengthNm !== undefined ? `λ ${p.wavelengthNm.toFixed(2)} nm` : null,
      `position ${p.positionPx.toFixed(2)} px`,
      p.label ?? null,
      p.saturated ? 'clipped' : null,
      p.blended ? 'blended' : null,
    ]
      .filter(Boolean)
      .join(' · ');
  }

  private key(e: KeyboardEvent): void {
    const n = this.peaks.length;
    const overlay = this.plot.select<SVGRectElement>('rect.overlay');
    const centre = (): number => (this.selected !== null ? this.xScale()(this.peakX(this.peaks[this.selected])) : this.innerW / 2);
    switch (e.key) {
      case 'ArrowRight':
      case 'ArrowLeft': {
        if (n === 0) return;
        const step = e.key === 'ArrowRight' ? 1 : -1;
        const order = this.peaks.map((p, i) => ({ i, x: this.peakX(p) })).sort((a, b) => a.x - b.x);
        const at = this.selected === null ? (step > 0 ? -1 : order.length) : order.findIndex((o) => o.i === this.selected);
        const next = order[Math.max(0, Math.min(order.length - 1, at + step))];
        this.select(next.i);
        break;
      }
      case 'Home':
      case 'End': {
        if (n === 0) return;
        const order = this.peaks.map((p, i) => ({ i, x: this.peakX(p) })).sort((a, b) => a.x - b.x);
        this.select((e.key === 'Home' ? order[0] : order[order.length - 1]).i);
        break;
      }
      case 'Enter':
        if (this.selected !== null) this.options.onPeakPick?.(this.selected);
        break;
      case '+':
      case '=':
        overlay.call(this.zoom.scaleBy, 1.6, [centre(), this.innerH / 2]);
        break;
      case '-':
        overlay.call(this.zoom.scaleBy, 1 / 1.6, [centre(), this.innerH / 2]);
        break;
      case '0':
        this.resetZoom();
        break;
      default:
        return;
    }
    e.preventDefault();
  }

  /** The samples inside the shown x range, as CSV (position_px, wavelength_nm when known, intensity, r, g, b, saturated). */
  visibleCsv(): string {
    const d = this.data;
    const xs = this.xs();
    if (!d || !xs) return '';
    const [a, b] = this.xScale().domain();
    const lo = Math.min(a, b);
    const hi = Math.max(a, b);
    const rows = [['position_px', ...(d.wavelengthNm ? ['wavelength_nm'] : []), 'intensity', 'r', 'g', 'b', 'saturated'].join(',')];
    const num = (v: number | undefined): string => (v === undefined || !Number.isFinite(v) ? '' : String(Number(v.toPrecision(7))));
    for (let i = 0; i < xs.length; i++) {
      if (xs[i] < lo || xs[i] > hi) continue;
      rows.push(
        [
          num(d.positionPx[i]),
          ...(d.wavelengthNm ? [num(d.wavelengthNm[i])] : []),
          num(d.intensity[i]),
          num(d.channels?.r[i]),
          num(d.channels?.g[i]),
          num(d.channels?.b[i]),
          d.saturated ? String(d.saturated[i]) : '',
        ].join(','),
      );
    }
    return rows.join('\n') + '\n';
  }
}

function styleAxis(g: d3.Selection<SVGGElement, unknown, null, undefined>): void {
  g.selectAll('path, line').attr('stroke', PLOT_THEME.axis);
  g.selectAll('text').attr('fill', PLOT_THEME.axis);
}

/** Path of a series, one vertex per screen pixel column at most (min and max kept), so 4000 samples draw as fast as 800. */
function pathOf(xs: Float64Array, ys: Float64Array, x: d3.ScaleLinear<number, number>, y: d3.ScaleLinear<number, number>, scale = 1): string {
  const parts: string[] = [];
  let col = NaN;
  let lo = 0;
  let hi = 0;
  let first = true;
  const flush = (): void => {
    if (Number.isNaN(col)) return;
    const c = col.toFixed(1);
    parts.push(`${first ? 'M' : 'L'}${c},${y(hi).toFixed(1)}`);
    first = false;
    if (lo !== hi) parts.push(`L${c},${y(lo).toFixed(1)}`);
  };
  for (let i = 0; i < xs.length; i++) {
    const px = Math.round(x(xs[i]));
    const v = ys[i] * scale;
    if (!Number.isFinite(px) || !Number.isFinite(v)) continue;
    if (px !== col) {
      flush();
      col = px;
      lo = v;
      hi = v;
    } else {
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  }
  flush();
  return parts.join('');
}

function areaOf(xs: Float64Array, ys: Float64Array, x: d3.ScaleLinear<number, number>, y: d3.ScaleLinear<number, number>): string {
  const top = pathOf(xs, ys, x, y);
  if (!top) return '';
  const y0 = y(Math.max(0, y.domain()[0])).toFixed(1);
  const a = x(xs[0]).toFixed(1);
  const b = x(xs[xs.length - 1]).toFixed(1);
  return `M${a},${y0}` + top.replace(/^M/, 'L') + `L${b},${y0}Z`;
}

/** Room one upright label takes across the plot (px at font size 10). */
const LABEL_PITCH_PX = 11;
/** Depth of the band under the plot's top in which leaders run aslant from a spread label to above its peak (px). */
const LEADER_BAND_PX = 10;

/**
 * The labels drawn along the top: the highest peaks in view, as many as the width holds, each moved sideways as
 * little as keeps it clear of its neighbours (least squares under a minimum spacing, plot/peakLabels.ts); `lx` is
 * where its text stands.
 */
function placeLabels<T extends { px: number; p: ViewPeak }>(items: T[], widthPx: number): Array<T & { lx: number }> {
  const room = Math.max(0, Math.floor(widthPx / LABEL_PITCH_PX));
  const shown = items
    .filter((q) => q.px >= 0 && q.px <= widthPx)
    .sort((a, b) => b.p.height - a.p.height)
    .slice(0, room)
    .sort((a, b) => a.px - b.px);
  const lx = spreadPositions(
    shown.map((q) => q.px),
    LABEL_PITCH_PX,
    LABEL_PITCH_PX / 2,
    widthPx - LABEL_PITCH_PX / 2,
  );
  return shown.map((q, k) => ({ ...q, lx: lx[k] }));
}

function fmt(v: number): string {
  if (!Number.isFinite(v)) return '—';
  const a = Math.abs(v);
  return a !== 0 && (a >= 1e4 || a < 1e-2) ? v.toExponential(2) : v.toPrecision(4);
}
