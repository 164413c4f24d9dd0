import * as d3 from 'd3';
import { PALETTE, createChart } from '../plot/chart.js';
import { toRad } from './angles.js';
import { type MalusFit, malusIntensity } from './malusFit.js';
import type { TimeSeries } from './timeSeries.js';

export interface PolarizationPlotOptions {
  document: Document;
  fit: MalusFit;
  title?: string;
  /** Azimuth to mark (deg), e.g. the offset-corrected one; the fit's own azimuth on the scale is always drawn. */
  correctedAzimuthDeg?: number;
  /** Unit of the intensity axis. @default 'relative' */
  intensityUnit?: string;
}

/** Size of each panel (px); the Cartesian panel is the wider. */
export const POLARIZATION_PLOT_SIZE = { cartesianWidthPx: 640, polarWidthPx: 380, heightPx: 380 } as const;

/**
 * One SVG with two panels: the Cartesian plot of intensity against analyser angle with the fitted Malus curve
 * (excluded points hollow and crossed, error bars where the readings carry uncertainties), and a polar plot of the
 * same (radius = intensity, drawn over 360° since I(θ + 180°) = I(θ), 0° to the right, angles counter-clockwise) with
 * the azimuth of the transmission maximum.
 */
export function plotPolarization(options: PolarizationPlotOptions): SVGSVGElement {
  const { document, fit } = options;
  const size = POLARIZATION_PLOT_SIZE;
  const unit = options.intensityUnit ?? 'relative';
  const outerNode = document.createElementNS('http://www.w3.org/2000/svg', 'svg') as SVGSVGElement;
  const width = size.cartesianWidthPx + size.polarWidthPx;
  const outer = d3
    .select(outerNode)
    .attr('xmlns', 'http://www.w3.org/2000/svg')
    .attr('width', width)
    .attr('height', size.heightPx)
    .attr('viewBox', `0 0 ${width} ${size.heightPx}`)
    .attr('font-family', 'system-ui, sans-serif')
    .attr('font-size', 11);
  outer.append('rect').attr('width', width).attr('height', size.heightPx).attr('fill', '#ffffff');

  const pts = fit.points;
  const maxI = Math.max(fit.iMax, ...pts.map((p) => p.intensity + (p.uncertainty ?? 0)));
  const minAngle = Math.min(0, ...pts.map((p) => p.angleDeg));
  const maxAngle = Math.max(180, ...pts.map((p) => p.angleDeg));
  const chart = createChart({
    document,
    widthPx: size.cartesianWidthPx,
    heightPx: size.heightPx,
    title: options.title ?? `Malus fit: DoLP ${fit.dolp.toFixed(3)} ± ${fit.dolpUncertainty.toFixed(3)}, azimuth ${fit.azimuthDeg.toFixed(1)}°`,
    xLabel: 'analyser angle (deg, scale reading)',
    yLabel: `transmitted intensity (${unit})`,
    xDomain: [minAngle, maxAngle],
    yDomain: [Math.min(0, fit.iMin), maxI * 1.08],
  });
  const { plot, x, y } = chart;
  const curve = d3.range(minAngle, maxAngle + 0.5, 1).map((a) => [a, malusIntensity(fit, a)] as [number, number]);
  plot
    .append('path')
    .attr('class', 'fit')
    .attr('d', d3.line().x((d) => x(d[0])).y((d) => y(d[1]))(curve) ?? '')
    .attr('fill', 'none')
    .attr('stroke', PALETTE.series[0])
    .attr('stroke-width', 1.6);
  for (const [level, label] of [
    [fit.iMax, 'I_max'],
    [fit.iMin, 'I_min'],
  ] as const) {
    plot
      .append('line')
      .attr('x1', 0)
      .attr('x2', chart.innerWidthPx)
      .attr('y1', y(level))
      .attr('y2', y(level))
      .attr('stroke', PALETTE.muted)
      .attr('stroke-dasharray', '4 3');
    plot.append('text').attr('x', chart.innerWidthPx - 4).attr('y', y(level) - 4).attr('text-anchor', 'end').attr('fill', PALETTE.muted).text(label);
  }
  for (let a = fit.azimuthDeg; a <= maxAngle; a += 180) {
    if (a < minAngle) continue;
    plot.append('line').attr('class', 'azimuth').attr('x1', x(a)).attr('x2', x(a)).attr('y1', 0).attr('y2', chart.innerHeightPx).attr('stroke', PALETTE.series[1]).attr('stroke-dasharray', '2 3');
  }
  const withBars = pts.filter((p) => p.uncertainty !== undefined);
  plot
    .append('g')
    .attr('class', 'error-bars')
    .selectAll('line')
    .data(withBars)
    .join('line')
    .attr('x1', (p) => x(p.angleDeg))
    .attr('x2', (p) => x(p.angleDeg))
    .attr('y1', (p) => y(p.intensity - p.uncertainty!))
    .attr('y2', (p) => y(p.intensity + p.uncertainty!))
    .attr('stroke', PALETTE.ink);
  plot
    .append('g')
    .attr('class', 'points')
    .selectAll('circle')
    .data(pts)
    .join('circle')
    .attr('cx', (p) => x(p.angleDeg))
    .attr('cy', (p) => y(p.intensity))
    .attr('r', 3.2)
    .attr('fill', (p) => (p.excluded ? '#ffffff' : PALETTE.ink))
    .attr('stroke', (p) => (p.excluded ? PALETTE.marker : PALETTE.ink))
    .append('title')
    .text((p) => `${p.source ? p.source + ': ' : ''}${p.angleDeg}° → ${p.intensity.toPrecision(4)}${p.excluded ? ` (excluded: ${p.exclusionReason ?? 'by request'})` : ''}`);
  plot
    .append('g')
    .attr('class', 'excluded')
    .selectAll('path')
    .data(pts.filter((p) => p.excluded))
    .join('path')
    .attr('d', (p) => {
      const cx = x(p.angleDeg);
      const cy = y(p.intensity);
      return `M${cx - 5},${cy - 5}L${cx + 5},${cy + 5}M${cx - 5},${cy + 5}L${cx + 5},${cy - 5}`;
    })
    .attr('stroke', PALETTE.marker);
  const chartNode = chart.svg.node() as SVGSVGElement;
  chartNode.setAttribute('x', '0');
  chartNode.setAttribute('y', '0');
  outerNode.appendChild(chartNode);

  // Polar panel.
  const polar = outer.append('g').attr('class', 'polar').attr('transform', `translate(${size.cartesianWidthPx},0)`);
  const cx = size.polarWidthPx / 2;
  const cy = size.heightPx / 2 + 10;
  const radiusPx = Math.min(size.polarWidthPx, size.heightPx) / 2 - 36;
  const r = d3.scaleLinear().domain([0, maxI * 1.05]).range([0, radiusPx]);
  polar.append('text').attr('x', 12).attr('y', 20).attr('font-size', 13).attr('font-weight', 600).attr('fill', PALETTE.ink).text('Polar view');
  const at = (angleDeg: number, value: number): [number, number] => {
    const t = toRad(angleDeg);
    const rr = r(Math.max(0, value));
    return [cx + rr * Math.cos(t), cy - rr * Math.sin(t)];
  };
  const rings = r.ticks(4).filter((v) => v > 0);
  polar
    .append('g')
    .attr('class', 'rings')
    .selectAll('circle')
    .data(rings)
    .join('circle')
    .attr('cx', cx)
    .attr('cy', cy)
    .attr('r', (v) => r(v))
    .attr('fill', 'none')
    .attr('stroke', PALETTE.grid);
  polar
    .append('g')
    .selectAll('text')
    .data(rings)
    .join('text')
    .attr('x', cx + 3)
    .attr('y', (v) => cy - r(v) - 2)
    .attr('fill', PALETTE.muted)
    .attr('font-size', 9)
    .text((v) => String(v));
  for (const a of [0, 45, 90, 135, 180, 225, 270, 315]) {
    const [ex, ey] = at(a, maxI * 1.05);
    polar.append('line').attr('x1', cx).attr('y1', cy).attr('x2', ex).attr('y2', ey).attr('stroke', PALETTE.grid);
    const [lx, ly] = [cx + (radiusPx + 14) * Math.cos(toRad(a)), cy - (radiusPx + 14) * Math.sin(toRad(a))];
    polar.append('text').attr('x', lx).attr('y', ly + 4).attr('text-anchor', 'middle').attr('fill', PALETTE.muted).text(`${a}°`);
  }
  const polarCurve = d3.range(0, 361, 2).map((a) => at(a, malusIntensity(fit, a)));
  polar
    .append('path')
    .attr('class', 'fit')
    .attr('d', d3.line()(polarCurve) ?? '')
    .attr('fill', PALETTE.series[0])
    .attr('fill-opacity', 0.08)
    .attr('stroke', PALETTE.series[0])
    .attr('stroke-width', 1.6);
  const axes: Array<[number, string, string]> = [[fit.azimuthDeg, PALETTE.series[1], 'azimuth (scale)']];
  if (options.correctedAzimuthDeg !== undefined) axes.push([options.correctedAzimuthDeg, PALETTE.series[2], 'azimuth (corrected)']);
  axes.forEach(([a, colour, label], i) => {
    const [x1, y1] = at(a, maxI * 1.05);
    const [x2, y2] = at(a + 180, maxI * 1.05);
    polar.append('line').attr('class', 'azimuth').attr('x1', x1).attr('y1', y1).attr('x2', x2).attr('y2', y2).attr('stroke', colour).attr('stroke-dasharray', '5 3');
    polar
      .append('text')
      .attr('x', 12)
      .attr('y', size.heightPx - 12 - 14 * i)
      .attr('fill', colour)
      .text(`${label} ${a.toFixed(1)}°`);
  });
  // Each reading at θ and, lighter, at θ + 180° (the same analyser setting).
  const mirrored = pts.flatMap((p) => [
    { p, a: p.angleDeg, mirror: false },
    { p, a: p.angleDeg + 180, mirror: true },
  ]);
  polar
    .append('g')
    .attr('class', 'points')
    .selectAll('circle')
    .data(mirrored)
    .join('circle')
    .attr('cx', (d) => at(d.a, d.p.intensity)[0])
    .attr('cy', (d) => at(d.a, d.p.intensity)[1])
    .attr('r', 2.8)
    .attr('fill', (d) => (d.p.excluded ? '#ffffff' : PALETTE.ink))
    .attr('fill-opacity', (d) => (d.mirror ? 0.35 : 1))
    .attr('stroke', (d) => (d.p.excluded ? PALETTE.marker : PALETTE.ink))
    .attr('stroke-opacity', (d) => (d.mirror ? 0.35 : 1));
  return outerNode;
}

/**
 * A fixed-analyser time series (and its total-power reference), each divided by its own mean so that the relative
 * fluctuations compare directly.
 */
export function plotTimeSeries(options: { document: Document; series: TimeSeries; reference?: TimeSeries; widthPx?: number; title?: string }): SVGSVGElement {
  const norm = (s: TimeSeries): Array<[number, number]> => {
    const y = Array.from(s.intensity);
    const mean = y.reduce((a, b) => a + b, 0) / y.length;
    return Array.from(s.timeS, (t, i) => [t, y[i] / mean] as [number, number]);
  };
  const a = norm(options.series);
  const r = options.reference ? norm(options.reference) : [];
  const all = [...a, ...r];
  const ys = all.map((p) => p[1]);
  const chart = createChart({
    document: options.document,
    widthPx: options.widthPx ?? POLARIZATION_PLOT_SIZE.cartesianWidthPx + POLARIZATION_PLOT_SIZE.polarWidthPx,
    heightPx: 300,
    title: options.title ?? 'Fixed-analyser time series (each divided by its mean)',
    xLabel: 'time (s)',
    yLabel: 'intensity / mean',
    xDomain: [Math.min(...all.map((p) => p[0])), Math.max(...all.map((p) => p[0]))],
    yDomain: [Math.min(0.9, Math.min(...ys) - 0.02), Math.max(1.1, Math.max(...ys) + 0.02)],
  });
  const line = d3.line<[number, number]>().x((d) => chart.x(d[0])).y((d) => chart.y(d[1]));
  const traces: Array<[Array<[number, number]>, string, string]> = [[a, PALETTE.series[0], 'through the analyser']];
  if (r.length) traces.push([r, PALETTE.series[2], 'total (reference)']);
  traces.forEach(([data, colour, label], i) => {
    chart.plot.append('path').attr('class', 'trace').attr('d', line(data) ?? '').attr('fill', 'none').attr('stroke', colour).attr('stroke-width', 1.3);
    chart.plot.append('text').attr('x', 8).attr('y', 14 + 14 * i).attr('fill', colour).text(label);
  });
  return chart.svg.node() as SVGSVGElement;
}

/**
 * The command's figure: the Malus panels (when there is a rotation series) above the time-series panel (when there is
 * one), in one standalone SVG file.
 */
export function polarizationFigureSvgText(options: {
  document: Document;
  rotation?: PolarizationPlotOptions;
  timeSeries?: { series: TimeSeries; reference?: TimeSeries };
}): string {
  const { document } = options;
  const parts: SVGSVGElement[] = [];
  if (options.rotation) parts.push(plotPolarization(options.rotation));
  if (options.timeSeries) parts.push(plotTimeSeries({ document, ...options.timeSeries }));
  if (parts.length === 1) return '<?xml version="1.0" encoding="UTF-8"?>\n' + parts[0].outerHTML + '\n';
  const width = Math.max(...parts.map((p) => Number(p.getAttribute('width'))));
  const heights = parts.map((p) => Number(p.getAttribute('height')));
  const outer = document.createElementNS('http://www.w3.org/2000/svg', 'svg') as SVGSVGElement;
  const total = heights.reduce((x, y) => x + y, 0);
  outer.setAttribute('xmlns', 'http://www.w3.org/2000/svg');
  outer.setAttribute('width', String(width));
  outer.setAttribute('height', String(total));
  outer.setAttribute('viewBox', `0 0 ${width} ${total}`);
  let y = 0;
  parts.forEach((p, i) => {
    p.setAttribute('x', '0');
    p.setAttribute('y', String(y));
    y += heights[i];
    outer.appendChild(p);
  });
  return '<?xml version="1.0" encoding="UTF-8"?>\n' + outer.outerHTML + '\n';
}

/** The plot as a standalone SVG file's text. */
export function polarizationSvgText(options: PolarizationPlotOptions): string {
  return '<?xml version="1.0" encoding="UTF-8"?>\n' + plotPolarization(options).outerHTML + '\n';
}
