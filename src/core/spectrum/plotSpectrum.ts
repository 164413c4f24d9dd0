import * as d3 from 'd3';
import { invalid } from '../errors.js';
import { type Chart, chartInnerSizePx, chartToSvgText, createChart, PALETTE } from '../plot/chart.js';
import { textWidthPx } from '../plot/labelLayout.js';
import { arrangePeakLabels, drawPeakLabels, placePeakLabels, type PeakLabelRequest, scaleTopForLabels, UPRIGHT_LABEL_PITCH_EM } from '../plot/peakLabels.js';
import type { Peak, Spectrum } from '../types.js';

/** How one peak's label reads and looks. */
export interface PeakLabelStyle {
  text: string;
  /** @default the plot's ink colour */
  colour?: string;
  /** The text element's class. @default 'peak-label' */
  className?: string;
}

export interface PlotSpectrumOptions<P extends Peak = Peak> {
  /** The browser's document, or one from src/io/svgDocument on Node. */
  document: Document;
  title?: string;
  /** @default 900 */
  widthPx?: number;
  /** @default 380 */
  heightPx?: number;
  /** Draw the R, G, B channel spectra under the combined one, where the spectrum has them. @default true */
  showChannels?: boolean;
  /** At most this many peaks get a text label (the highest); every peak gets a marker. @default 24 */
  maxLabels?: number;
  /** Horizontal axis: along-band position or calibrated wavelength. @default 'wavelength' when the spectrum has one */
  xAxis?: 'position' | 'wavelength';
  /**
   * A peak's label, or undefined for a marker only. @default its wavelength (or position) to 0.1, with "(clipped)"
   * for a saturated peak
   */
  labelOf?: (p: P) => PeakLabelStyle | undefined;
  /** Lines written at the top right, right-aligned; the peak labels keep clear of them. */
  legend?: ReadonlyArray<{ text: string; colour: string }>;
}

export const PLOT_SPECTRUM_DEFAULTS = { widthPx: 900, heightPx: 380, showChannels: true, maxLabels: 24 } as const;

/** Font size of the peak labels (px). */
const LABEL_FONT_PX = 9;
/** Font size and line pitch of the legend (px), and its inset from the plot area's top right corner. */
const LEGEND_FONT_PX = 10;
const LEGEND_LINE_PX = 12;
const LEGEND_INSET_PX = 8;
/** Clearance kept between a label and the top of the plot area or the legend (px). */
const LABEL_CLEAR_PX = 2;

/**
 * A spectrum plot: the combined intensity, the colour channels faintly beneath it, clipped samples shaded, and a
 * marker with its position on each peak (a hollow marker for a blended peak, a red one for a saturated peak).
 */
export function plotSpectrum<P extends Peak>(spectrum: Spectrum, peaks: readonly P[], options: PlotSpectrumOptions<P>): Chart {
  const n = spectrum.intensity.length;
  if (n < 2 || spectrum.positionPx.length !== n) {
    throw invalid('spectrum', 'at least 2 samples with matching positionPx and intensity', spectrum.intensity);
  }
  const useWavelength = (options.xAxis ?? (spectrum.wavelengthNm ? 'wavelength' : 'position')) === 'wavelength';
  if (useWavelength && !spectrum.wavelengthNm) throw invalid('xAxis', "'position' for a spectrum without calibration", 'wavelength');
  const xs = useWavelength ? spectrum.wavelengthNm! : spectrum.positionPx;
  const xOf = (p: P): number => (useWavelength ? (p.wavelengthNm ?? Number.NaN) : p.positionPx);

  const showChannels = (options.showChannels ?? PLOT_SPECTRUM_DEFAULTS.showChannels) && spectrum.channels !== undefined;
  const series: Float64Array[] = [spectrum.intensity];
  if (showChannels) series.push(spectrum.channels!.r, spectrum.channels!.g, spectrum.channels!.b);
  let yMin = 0;
  let yMax = 0;
  for (const s of series) {
    for (let i = 0; i < n; i++) {
      const v = s[i];
      if (Number.isFinite(v)) {
        if (v < yMin) yMin = v;
        if (v > yMax) yMax = v;
      }
    }
  }
  if (yMax <= yMin) yMax = yMin + 1;
  const pad = 0.08 * (yMax - yMin);
  const [x0, x1] = d3.extent(xs) as [number, number];
  const xDomain: [number, number] = [x0, x1 > x0 ? x1 : x0 + 1];
  const widthPx = options.widthPx ?? PLOT_SPECTRUM_DEFAULTS.widthPx;
  const heightPx = options.heightPx ?? PLOT_SPECTRUM_DEFAULTS.heightPx;
  const inner = chartInnerSizePx({ widthPx, heightPx, title: options.title });
  const xScale = d3.scaleLinear().domain(xDomain).range([0, inner.widthPx]);

  // The labels, laid out sideways before the chart is drawn: their room above the traces sets the top of the scale.
  const shown = peaks.filter((p) => Number.isFinite(xOf(p)));
  const labelOf = options.labelOf ?? ((p: P) => ({ text: (useWavelength ? p.wavelengthNm! : p.positionPx).toFixed(1) + (p.saturated ? ' (clipped)' : '') }));
  const pitchPx = UPRIGHT_LABEL_PITCH_EM * LABEL_FONT_PX;
  const room = Math.max(0, Math.floor(inner.widthPx / pitchPx));
  const maxLabels = Math.min(room, options.maxLabels ?? PLOT_SPECTRUM_DEFAULTS.maxLabels);
  const labelled: Array<{ peak: P; style: PeakLabelStyle }> = [];
  for (const p of [...shown].sort((a, b) => b.height - a.height)) {
    if (labelled.length >= maxLabels) break;
    const atPx = xScale(xOf(p));
    if (!(atPx >= 0 && atPx <= inner.widthPx)) continue;
    const style = labelOf(p);
    if (style) labelled.push({ peak: p, style });
  }
  const requests: PeakLabelRequest[] = labelled.map(({ peak, style }) => ({ xPx: xScale(xOf(peak)), text: style.text, fontPx: LABEL_FONT_PX }));
  const arrangement = arrangePeakLabels(requests, inner.widthPx);

  // The highest value any drawn trace reaches over a span of the plot's width, from the samples' positions.
  const samplePx = Float64Array.from(xs, (v) => xScale(v));
  const sampleTop = new Float64Array(n).fill(Number.NEGATIVE_INFINITY);
  for (const s of series) for (let i = 0; i < n; i++) if (Number.isFinite(s[i]) && s[i] > sampleTop[i]) sampleTop[i] = s[i];
  const highestIn = (a: number, b: number): number => {
    let top = Number.NEGATIVE_INFINITY;
    for (let i = 0; i < n; i++) if (samplePx[i] >= a && samplePx[i] <= b && sampleTop[i] > top) top = sampleTop[i];
    return top;
  };
  const legend = options.legend ?? [];
  const legendBox = {
    x0: inner.widthPx - LEGEND_INSET_PX - Math.max(0, ...legend.map((l) => textWidthPx(l.text, LEGEND_FONT_PX))) - LABEL_CLEAR_PX,
    y1: legend.length ? LEGEND_INSET_PX + LEGEND_LINE_PX * (legend.length - 1) + 0.22 * LEGEND_FONT_PX + LABEL_CLEAR_PX : 0,
  };
  const underLegend = (rightPx: number): boolean => legend.length > 0 && rightPx > legendBox.x0;
  const yBottom = Math.min(0, yMin - pad);
  const markerTops = labelled.map(({ peak }) => peakTop(spectrum, peak));
  const yTop = scaleTopForLabels(
    arrangement,
    (crowd) => Math.max(highestIn(crowd.x0Px, crowd.x1Px), ...crowd.members.map((i) => markerTops[i])),
    (crowd) => LABEL_CLEAR_PX + (underLegend(crowd.x1Px) ? legendBox.y1 : 0),
    inner.heightPx,
    yBottom,
    yMax + 2.5 * pad,
  );

  const chart = createChart({
    document: options.document,
    widthPx,
    heightPx,
    title: options.title,
    xLabel: useWavelength ? 'wavelength (nm)' : 'position along the band (px)',
    yLabel: 'intensity (linear, relative)',
    xDomain,
    yDomain: [yBottom, yTop],
  });
  const { plot, x, y, innerHeightPx } = chart;

  // Clipped samples: a light red strip behind the traces, merged into runs.
  if (spectrum.saturated) {
    const runs: Array<[number, number]> = [];
    for (let i = 0; i < n; i++) {
      if (!spectrum.saturated[i]) continue;
      const start = i;
      while (i + 1 < n && spectrum.saturated[i + 1]) i++;
      runs.push([start, i]);
    }
    const half = (i: number): number => (i + 1 < n ? (xs[i + 1] - xs[i]) / 2 : (xs[i] - xs[i - 1]) / 2);
    plot
      .append('g')
      .attr('class', 'saturated')
      .selectAll('rect')
      .data(runs)
      .join('rect')
      .attr('x', ([a]) => Math.min(x(xs[a] - half(a)), x(xs[a] + half(a))))
      .attr('width', ([a, b]) => Math.max(1, Math.abs(x(xs[b] + half(b)) - x(xs[a] - half(a)))))
      .attr('y', 0)
      .attr('height', innerHeightPx)
      .attr('fill', PALETTE.marker)
      .attr('opacity', 0.12);
  }

  const line = (s: Float64Array): string =>
    d3
      .line<number>()
      .defined((i) => Number.isFinite(s[i]))
      .x((i) => x(xs[i]))
      .y((i) => y(s[i]))(d3.range(n)) ?? '';
  if (showChannels) {
    const colours = [PALETTE.channelR, PALETTE.channelG, PALETTE.channelB];
    ['r', 'g', 'b'].forEach((key, k) => {
      plot
        .append('path')
        .attr('class', `channel-${key}`)
        .attr('d', line(series[k + 1]))
        .attr('fill', 'none')
        .attr('stroke', colours[k])
        .attr('stroke-width', 0.8)
        .attr('opacity', 0.55);
    });
  }
  plot.append('path').attr('class', 'intensity').attr('d', line(spectrum.intensity)).attr('fill', 'none').attr('stroke', PALETTE.ink).attr('stroke-width', 1.3);

  const markers = plot.append('g').attr('class', 'peaks');
  for (const p of shown) {
    const px = x(xOf(p));
    const top = y(peakTop(spectrum, p));
    const colour = p.saturated ? PALETTE.marker : PALETTE.series[0];
    markers
      .append('path')
      .attr('class', 'peak-marker')
      .attr('d', `M${px},${top - 3}l-4,-7h8z`)
      .attr('fill', p.blended ? 'none' : colour)
      .attr('stroke', colour);
  }

  // Labels upright above their peaks, spread where they crowd and tied to their peaks by leaders (plot/peakLabels.ts).
  const placed = placePeakLabels(
    requests,
    arrangement,
    labelled.map(({ peak }) => y(peakTop(spectrum, peak))),
    (a, b) => y(highestIn(a, b)),
  );
  drawPeakLabels(
    plot.append('g').attr('class', 'labels'),
    arrangement,
    placed,
    (i) => ({ text: labelled[i].style.text, colour: labelled[i].style.colour ?? PALETTE.ink, className: labelled[i].style.className ?? 'peak-label' }),
    LABEL_FONT_PX,
    // No room even with the scale raised (or under the legend): a marker only.
    (at) => at.endYPx >= 0 && !(underLegend(at.xPx + pitchPx / 2) && at.endYPx < legendBox.y1),
  );

  if (legend.length > 0) {
    const g = plot.append('g').attr('class', 'legend').attr('transform', `translate(${inner.widthPx - LEGEND_INSET_PX},${LEGEND_INSET_PX})`);
    legend.forEach((l, k) => {
      g.append('text').attr('x', 0).attr('y', LEGEND_LINE_PX * k).attr('text-anchor', 'end').attr('font-size', LEGEND_FONT_PX).attr('fill', l.colour).text(l.text);
    });
  }
  return chart;
}

/** The plot as a standalone SVG file's text. */
export function plotSpectrumSvg(spectrum: Spectrum, peaks: readonly Peak[], options: PlotSpectrumOptions): string {
  return chartToSvgText(plotSpectrum(spectrum, peaks, options));
}

/** The curve's value at the peak (the marker sits on the trace, not at the fitted height above a baseline). */
function peakTop(spectrum: Spectrum, p: Peak): number {
  const pos = spectrum.positionPx;
  const n = pos.length;
  const ascending = pos[n - 1] >= pos[0];
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (pos[mid] <= p.positionPx === ascending) lo = mid;
    else hi = mid;
  }
  const v = Math.max(spectrum.intensity[lo], spectrum.intensity[hi]);
  return Number.isFinite(v) ? v : p.height;
}
