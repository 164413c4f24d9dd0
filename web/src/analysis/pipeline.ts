/**
 * The capture path, in the page: the same stages as `glowprint spectrum` (src/cli/spectrum.ts analyseSpectrumInput)
 * on an image the page decoded or a frame it captured — findBand (unless the band is given) → extractSpectrum
 * (optimal extraction) → findPeaksDetailed — and on spectrum CSV text. Pure: used by the analysis worker and the tests.
 */
import { InputError } from '../../../src/core/errors.js';
import { findBand } from '../../../src/core/spectrum/findBand.js';
import { type ExtractSpectrumOptions, extractSpectrum } from '../../../src/core/spectrum/extract.js';
import { findPeaksDetailed, peaksToWavelength } from '../../../src/core/spectrum/peaks/index.js';
import { parseSpectrumCsv } from '../../../src/core/spectrum/spectrumCsv.js';
import type { BandGeometry, LinearImage, Peak, Spectrum } from '../../../src/core/types.js';

export interface SpectrumCapture {
  /** File name, or "camera frame" with the time. */
  sourceName: string;
  kind: 'photo' | 'csv' | 'camera';
  /** Size of the (upright) image the band lives in; null for a CSV spectrum. */
  image: { widthPx: number; heightPx: number } | null;
  /** zeroOrderPx: where along the band the zero order lies that the band search found and left out (as spectrum --json). */
  band: (BandGeometry & { source: 'found' | 'manual'; zeroOrderPx?: number }) | null;
  spectrum: Spectrum;
  peaks: Peak[];
  /** Noise σ and detection threshold of the peak search. */
  noise: number;
  threshold: number;
  /** CSV input: whether the positions are pixels or wavelengths. */
  axis?: 'pixel' | 'wavelength';
  warnings: string[];
}

export interface AnalyseImageOptions {
  sourceName: string;
  kind: 'photo' | 'camera';
  /** The band to extract; found automatically when absent. */
  band?: BandGeometry;
  /** Offset of `image` in the frame the band is given in (a crop around the band), px. @default {x: 0, y: 0} */
  origin?: { x: number; y: number };
  /** Size of that frame; @default the image's. */
  frame?: { widthPx: number; heightPx: number };
}

/** Image → band → optimal extraction → peak table. Band and positions are in frame coordinates. */
export function analyseImage(image: LinearImage, options: AnalyseImageOptions): SpectrumCapture {
  const origin = options.origin ?? { x: 0, y: 0 };
  const warnings: string[] = [];
  let band: BandGeometry;
  let bandSource: 'found' | 'manual';
  let extraction: ExtractSpectrumOptions = {};
  let zeroOrderPx: number | undefined;
  if (options.band) {
    band = options.band;
    bandSource = 'manual';
  } else {
    const found = naming(options.sourceName, () => findBand(image, { source: options.sourceName }));
    band = { ...found.band, center: { x: found.band.center.x + origin.x, y: found.band.center.y + origin.y } };
    bandSource = 'found';
    extraction = found.extraction;
    zeroOrderPx = found.diagnostics.zeroOrder?.positionPx;
    warnings.push(...found.warnings);
  }
  const local: BandGeometry = { ...band, center: { x: band.center.x - origin.x, y: band.center.y - origin.y } };
  const extracted = naming(options.sourceName, () => extractSpectrum(image, local, extraction));
  warnings.push(...extracted.warnings);
  const search = naming(options.sourceName, () => findPeaksDetailed(extracted.spectrum));
  warnings.push(...search.warnings);
  return {
    sourceName: options.sourceName,
    kind: options.kind,
    image: options.frame ?? { widthPx: image.width, heightPx: image.height },
    band: { ...band, source: bandSource, ...(zeroOrderPx !== undefined ? { zeroOrderPx } : {}) },
    spectrum: extracted.spectrum,
    peaks: search.peaks,
    noise: search.noise,
    threshold: search.threshold,
    warnings,
  };
}

/** Spectrum CSV text → peak table (wavelengths filled in when the file has a wavelength column). */
export function analyseSpectrumText(text: string, sourceName: string): SpectrumCapture {
  const table = parseSpectrumCsv(text, { source: sourceName });
  const search = findPeaksDetailed(table.spectrum);
  const peaks = table.spectrum.wavelengthNm ? peaksToWavelength(search.peaks, table.spectrum) : search.peaks;
  return {
    sourceName,
    kind: 'csv',
    image: null,
    band: null,
    spectrum: table.spectrum,
    peaks,
    noise: search.noise,
    threshold: search.threshold,
    axis: table.axis,
    warnings: [...table.warnings, ...search.warnings],
  };
}

/** Core stages do not know the file: their bad-input messages get its name in front (as the CLI does). */
function naming<T>(source: string, stage: () => T): T {
  try {
    return stage();
  } catch (err) {
    if (err instanceof InputError && !err.message.includes(source)) throw new InputError(`${source}: ${err.message}`, source);
    throw err;
  }
}
