import * as d3 from 'd3';
import { invalid } from '../errors.js';
import { type Chart, chartToSvgText, createChart, PALETTE } from '../plot/chart.js';
import type { Peak, Spectrum } from '../types.js';

export interface PlotSpectrumOptions {
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
}

export const PLOT_SPECTRUM_DEFAULTS = { widthPx: 900, heightPx: 380, showChannels: true, maxLabels: 24 } as const;

/**
 * A spectrum plot: the combined intensity, the colour channels faintly beneath it, clipped samples shaded, and a
 * marker with its position on each peak (a hollow marker for a blended peak, a red one for a saturated peak).
 */
export function plotSpectrum(spectrum: Spectrum, peaks: readonly Peak[], options: PlotSpectrumOptions): Chart {
  const n = spectrum.intensity.length;
  if (n < 2 || spectrum.positionPx.length !== n) {
    throw invalid('spectrum', 'at least 2 samples with matching positionPx and intensity', spectrum.intensity);
  }
  const useWavelength = (options.xAxis ?? (spectrum.wavelengthNm ? 'wavelength' : 'position')) === 'wavelength';
  if (useWavelength && !spectrum.wavelengthNm) throw invalid('xAxis', "'position' for a spectrum without calibration", 'wavelength');
  const xs = useWavelength ? spectrum.wavelengthNm! : spectrum.positionPx;
  const xOf = (p: Peak): number => (useWavelength ? (p.wavelengthNm ?? Number.NaN) : p.positionPx);

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
  const chart = createChart({
    document: options.document,
    widthPx: options.widthPx ?? PLOT_SPECTRUM_DEFAULTS.widthPx,
    heightPx: options.heightPx ?? PLOT_SPECTRUM_DEFAULTS.heightPx,
    title: options.title,
    xLabel: useWavelength ? 'wavelength (nm)' : 'position along the band (px)',
    yLabel: 'intensity (linear, relative)',
    xDomain: [x0, x1 > x0 ? x1 : x0 + 1],
    yDomain: [Math.min(0, yMin - pad), yMax + 2.5 * pad],
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

  const shown = peaks.filter((p) => Number.isFinite(xOf(p)));
  const maxLabels = options.maxLabels ?? PLOT_SPECTRUM_DEFAULTS.maxLabels;
  const labelled = new Set([...shown].sort((a, b) => b.height - a.height).slice(0, maxLabels));
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
    if (labelled.has(p)) {
      const label = useWavelength ? p.wavelengthNm!.toFixed(1) : p.positionPx.toFixed(1);
      markers
        .append('text')
        .attr('class', 'peak-label')
        .attr('transform', `translate(${px + 3},${top - 13}) rotate(-60)`)
        .attr('font-size', 9)
        .attr('fill', PALETTE.ink)
        .text(label + (p.saturated ? ' (clipped)' : ''));
    }
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
