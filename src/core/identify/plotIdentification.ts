import { chartToSvgText, PALETTE, type Chart } from '../plot/chart.js';
import { plotSpectrum } from '../spectrum/plotSpectrum.js';
import type { Spectrum } from '../types.js';
import type { IdentifiedPeak, SpeciesResult } from './identifySpecies.js';

export interface PlotIdentificationOptions {
  /** The browser's document, or one from src/io/svgDocument on Node. */
  document: Document;
  title?: string;
  /** @default 960 */
  widthPx?: number;
  /** @default 420 */
  heightPx?: number;
  /** Wavelength of every sample, when the spectrum itself has none (a photo calibrated by a profile or by itself). */
  wavelengthNm?: Float64Array;
  /** At most this many peaks get a text label, the brightest first. @default 30 */
  maxLabels?: number;
}

export const PLOT_IDENTIFICATION_DEFAULTS = { widthPx: 960, heightPx: 420, maxLabels: 30 } as const;

/**
 * The spectrum plot (spectrum/plotSpectrum.ts: trace, colour channels, clipped samples, peak markers) with every
 * identified peak labelled by its line ("Ne I 640.2"), one colour per present species, a legend with each species'
 * score and flux share, and the peaks no species explains marked "?".
 */
export function plotIdentification(
  spectrum: Spectrum,
  peaks: readonly IdentifiedPeak[],
  species: readonly SpeciesResult[],
  options: PlotIdentificationOptions,
): Chart {
  const withWavelength: Spectrum = options.wavelengthNm ? { ...spectrum, wavelengthNm: options.wavelengthNm } : spectrum;
  const useWavelength = withWavelength.wavelengthNm !== undefined;
  const chart = plotSpectrum(withWavelength, peaks, {
    document: options.document,
    title: options.title,
    widthPx: options.widthPx ?? PLOT_IDENTIFICATION_DEFAULTS.widthPx,
    heightPx: options.heightPx ?? PLOT_IDENTIFICATION_DEFAULTS.heightPx,
    maxLabels: 0,
    xAxis: useWavelength ? 'wavelength' : 'position',
  });
  const { plot, x, y, innerWidthPx } = chart;
  const present = species.filter((s) => s.present);
  const colourOf = new Map(present.map((s, k) => [s.element, PALETTE.series[k % PALETTE.series.length]]));
  const maxLabels = options.maxLabels ?? PLOT_IDENTIFICATION_DEFAULTS.maxLabels;
  const labelled = new Set([...peaks].sort((a, b) => b.height - a.height).slice(0, maxLabels));
  const [x0, x1] = x.domain();
  const layer = plot.append('g').attr('class', 'line-labels');
  for (const p of peaks) {
    if (!labelled.has(p)) continue;
    const at = useWavelength ? p.wavelengthNm : p.positionPx;
    if (!(at >= Math.min(x0, x1) && at <= Math.max(x0, x1))) continue;
    const top = y(peakTop(withWavelength, p.positionPx, p.height));
    const line = p.line;
    const text = line
      ? `${line.spectrum} ${line.wavelengthNm.toFixed(1)}${line.order ? ` (order ${line.order})` : ''}`
      : `? ${useWavelength ? p.wavelengthNm.toFixed(1) : p.positionPx.toFixed(0)}`;
    layer
      .append('text')
      .attr('class', line ? 'line-label' : 'line-label unexplained')
      .attr('transform', `translate(${x(at) + 3},${top - 13}) rotate(-60)`)
      .attr('font-size', 9)
      .attr('fill', line ? (colourOf.get(line.element) ?? PALETTE.ink) : PALETTE.muted)
      .text(text);
  }
  // Legend: species present, score and share of the line flux.
  const legend = plot.append('g').attr('class', 'legend').attr('transform', `translate(${innerWidthPx - 8},8)`);
  present.forEach((s, k) => {
    legend
      .append('text')
      .attr('x', 0)
      .attr('y', 12 * k)
      .attr('text-anchor', 'end')
      .attr('font-size', 10)
      .attr('fill', colourOf.get(s.element)!)
      .text(`${s.element}${s.molecular ? ' (molecular bands)' : ''}  score ${s.score.toFixed(2)}, ${Math.round(100 * s.fluxFraction)} % of the flux`);
  });
  const unexplained = peaks.filter((p) => !p.line).length;
  if (unexplained > 0) {
    legend
      .append('text')
      .attr('x', 0)
      .attr('y', 12 * present.length)
      .attr('text-anchor', 'end')
      .attr('font-size', 10)
      .attr('fill', PALETTE.muted)
      .text(`? ${unexplained} peak${unexplained === 1 ? '' : 's'} no species explains`);
  }
  return chart;
}

export function plotIdentificationSvg(
  spectrum: Spectrum,
  peaks: readonly IdentifiedPeak[],
  species: readonly SpeciesResult[],
  options: PlotIdentificationOptions,
): string {
  return chartToSvgText(plotIdentification(spectrum, peaks, species, options));
}

/** The trace's value at a position (labels sit on the curve); the peak height where the sample is missing. */
function peakTop(spectrum: Spectrum, positionPx: number, fallback: number): number {
  const pos = spectrum.positionPx;
  const n = pos.length;
  const ascending = pos[n - 1] >= pos[0];
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (pos[mid] <= positionPx === ascending) lo = mid;
    else hi = mid;
  }
  const v = Math.max(spectrum.intensity[lo], spectrum.intensity[hi]);
  return Number.isFinite(v) ? v : fallback;
}
