/**
 * Rendered spectroscope photos of discharge tubes for the identification tests. The lines come from the OUTSIDE
 * reference (NIST ASD, ../shared/reference, via test/helpers/nistReference.ts), each tabulated intensity perturbed by
 * a random factor of up to 3 either way (real lamps differ from tables that much); identification uses the PROJECT
 * line list. Photos go through the same pipeline as the CLI: findBand → extractSpectrum → findPeaks.
 */
import { fitDispersion } from '../../../src/core/calibration/fitDispersion.js';
import type { CalibrationScale } from '../../../src/core/calibration/uncertainty.js';
import { createRandom } from '../../../src/core/random.js';
import { renderSpectroscopePhoto, type EmissionLine, type RenderOptionsInput } from '../../../src/core/render/index.js';
import { extractSpectrum } from '../../../src/core/spectrum/extract.js';
import { findBand } from '../../../src/core/spectrum/findBand.js';
import { findPeaksDetailed } from '../../../src/core/spectrum/peaks/index.js';
import type { BandGeometry, Peak, Spectrum, SpectralLine } from '../../../src/core/types.js';
import { lampLinesFor } from '../../../src/io/lineList.js';
import { nistReferenceLines } from '../../helpers/nistReference.js';

const reference = nistReferenceLines();

/** The rig: a phone-like camera behind a 1000 lines/mm film grating, cropped to the band to keep renders fast. */
export const RIG: RenderOptionsInput = {
  widthPx: 1100,
  heightPx: 360,
  grating: { linesPerMm: 1000, incidenceDeg: 0, orders: [{ order: 0, efficiency: 0.1 }, { order: 1, efficiency: 0.3 }, { order: 2, efficiency: 0.03 }] },
  // 26 mm equivalent on a 1920-px-wide frame (f = 1324 px): about 0.63 nm/px, lines ~3 px FWHM, as in a phone photo.
  camera: { focal: { kind: 'px', focalLengthPx: 1324 }, cameraAngleDeg: 33.5 },
  band: { angleDeg: 1.2, slantDeg: 0.5, offsetPx: 0, heightPx: 120, rangeNm: [400, 700] },
  lineSpread: { sigmaPx: 1, slitWidthPx: 2.5, defocusRadiusPx: 0 },
  sensor: { fullWellElectrons: 12000, readNoiseElectrons: 3 },
  exposure: { kind: 'brightestPeak', fractionOfFullWell: 0.9 },
  ambient: { electrons: { r: 20, g: 20, b: 25 }, gradient: { x: 0.3, y: -0.2 }, vignetting: 0.2 },
  strayLight: { fraction: 0.02, sigmaPx: 40 },
  spectralRangeNm: [380, 720],
};

/** Reference lines of one element's neutral spectrum in the camera's range, strongest first. */
function referenceLines(element: string, maxLines: number): SpectralLine[] {
  return reference
    .filter((l) => l.element === element && l.spectrum === `${element} I` && l.wavelengthNm >= 380 && l.wavelengthNm <= 720 && l.intensity > 0)
    .sort((a, b) => b.intensity - a.intensity)
    .slice(0, maxLines);
}

/** A tube's emission: each element's reference lines scaled to its weight, every line perturbed by up to ×3. */
export function tubeSource(recipe: ReadonlyArray<readonly [string, number]>, seed: number, maxLines = 40): EmissionLine[] {
  const rng = createRandom(seed);
  const out: EmissionLine[] = [];
  for (const [element, weight] of recipe) {
    const lines = referenceLines(element, maxLines);
    const max = lines[0]?.intensity ?? 1;
    for (const l of lines) {
      const factor = Math.exp((2 * rng.uniform() - 1) * Math.log(3));
      out.push({ wavelengthNm: l.wavelengthNm, intensity: (weight * l.intensity * factor) / max, species: l.spectrum });
    }
  }
  return out;
}

export interface TubeSpectrum {
  peaks: Peak[];
  spectrum: Spectrum;
  band: BandGeometry;
  positionRangePx: [number, number];
}

/**
 * Photo → spectrum → peaks, as `glowprint spectrum` does: along the rig's band (the renderer's, which a profile made
 * on this rig holds) or the band findBand finds.
 */
export function tubeSpectrum(lines: EmissionLine[], seed: number, band?: BandGeometry | 'found'): TubeSpectrum {
  const photo = renderSpectroscopePhoto({ ...RIG, source: { lines }, seed });
  const useBand = band === 'found' ? findBand(photo.image).band : (band ?? photo.truth.band);
  const spectrum = extractSpectrum(photo.image, useBand).spectrum;
  const peaks = findPeaksDetailed(spectrum).peaks;
  const pos = spectrum.positionPx;
  return { peaks, spectrum, band: useBand, positionRangePx: [pos[0], pos[pos.length - 1]] };
}

export interface RenderedProfile {
  band: BandGeometry;
  scale: CalibrationScale;
  rmsNm: number;
}

/**
 * A calibration of the rig as a careful user makes it, independent of the automatic matcher: a mercury + neon lamp
 * rendered on the rig, its peaks measured along the rig's band, each of the lamp's strong lines (the PROJECT's Hg and
 * Ne calibration lines) taken as the measured peak nearest to where the renderer put it — the user's known pairs —
 * and the dispersion fitted by the calibration module.
 */
export function renderedProfile(seed: number): RenderedProfile {
  const photo = renderSpectroscopePhoto({ ...RIG, source: { lines: tubeSource([['Hg', 1], ['Ne', 0.6]], seed, 15) }, seed: seed + 1 });
  const band = photo.truth.band;
  const peaks = findPeaksDetailed(extractSpectrum(photo.image, band).spectrum).peaks;
  const lamp = lampLinesFor('Hg,Ne', { rangeNm: [380, 720] }).lines.filter((l) => !l.blended);
  const points = [];
  for (const line of lamp) {
    const truth = photo.truth.lines.find((t) => t.order === 1 && Math.abs(t.wavelengthNm - line.wavelengthNm) < 0.01);
    if (!truth) continue;
    const near = peaks.filter((p) => Math.abs(p.positionPx - truth.positionPx) <= 1.5 && !p.blended && !p.saturated);
    if (near.length !== 1) continue;
    points.push({ positionPx: near[0].positionPx, positionUncertaintyPx: near[0].positionUncertaintyPx, wavelengthNm: line.wavelengthNm, source: 'manual' as const });
  }
  if (points.length < 6) throw new Error(`only ${points.length} calibration lines found in the rendered lamp`);
  const fit = fitDispersion(points, { model: 'polynomial' });
  return { band, scale: { model: fit.model, rangePx: fit.rangePx, checkModel: fit.checkModel }, rmsNm: fit.rmsNm };
}
