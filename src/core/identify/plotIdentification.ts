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
  /** At most this many peaks get a text label, the brightest first. @default 60 */
  maxLabels?: number;
}

export const PLOT_IDENTIFICATION_DEFAULTS = { widthPx: 960, heightPx: 420, maxLabels: 60 } as const;

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
  const present = species.filter((s) => s.present);
  const colourOf = new Map(present.map((s, k) => [s.element, PALETTE.series[k % PALETTE.series.length]]));
  // Legend: species present, score and share of the line flux; then how many peaks no species explains.
  const legend: Array<{ text: string; colour: string }> = present.map((s) => ({
    text: `${s.element}${s.molecular ? ' (molecular bands)' : ''}  score ${s.score.toFixed(2)}, ${Math.round(100 * s.fluxFraction)} % of the flux`,
    colour: colourOf.get(s.element)!,
  }));
  const unexplained = peaks.filter((p) => !p.line).length;
  if (unexplained > 0) legend.push({ text: `? ${unexplained} peak${unexplained === 1 ? '' : 's'} no species explains`, colour: PALETTE.muted });
  const chart = plotSpectrum(withWavelength, peaks, {
    document: options.document,
    title: options.title,
    widthPx: options.widthPx ?? PLOT_IDENTIFICATION_DEFAULTS.widthPx,
    heightPx: options.heightPx ?? PLOT_IDENTIFICATION_DEFAULTS.heightPx,
    maxLabels: options.maxLabels ?? PLOT_IDENTIFICATION_DEFAULTS.maxLabels,
    xAxis: useWavelength ? 'wavelength' : 'position',
    legend,
    labelOf: (p) => {
      const line = p.line;
      if (!line) return { text: `? ${useWavelength ? p.wavelengthNm.toFixed(1) : p.positionPx.toFixed(0)}`, colour: PALETTE.muted, className: 'line-label unexplained' };
      return { text: `${line.spectrum} ${line.wavelengthNm.toFixed(1)}${line.order ? ` (order ${line.order})` : ''}`, colour: colourOf.get(line.element) ?? PALETTE.ink, className: 'line-label' };
    },
  });
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
