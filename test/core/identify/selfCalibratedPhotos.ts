/**
 * The seeded evaluation set of self-calibrating identification: rendered photos of single-gas tubes (lines from the
 * OUTSIDE reference, NIST ASD via test/helpers/nistReference.ts, each intensity ×3 at random either way) on several
 * instruments — 1000 and 600 lines/mm gratings, 0.3–0.63 nm/px, wavelength growing either way along the band —
 * through the pipeline of `glowprint spectrum` (extraction along the band, peak search). No profile is made.
 */
import { renderSpectroscopePhoto, type RenderOptionsInput } from '../../../src/core/render/index.js';
import { extractSpectrum } from '../../../src/core/spectrum/extract.js';
import { findPeaksDetailed } from '../../../src/core/spectrum/peaks/index.js';
import type { Peak } from '../../../src/core/types.js';
import { RIG, tubeSource } from './renderedTubes.js';

export interface Instrument {
  name: string;
  linesPerMm: number;
  focalLengthPx: number;
  /** θc: order +1 of about 550 nm on the optical axis. */
  cameraAngleDeg: number;
  rangeNm: [number, number];
  widthPx: number;
  /** Wavelength decreases along the band's position (the photo's band read the other way). */
  reversed: boolean;
}

/** Dispersion at 550 nm ≈ d cos β / f: 0.63, 0.42, 0.30 nm/px (1000 l/mm), 0.56, 0.39 nm/px (600 l/mm). */
export const INSTRUMENTS: readonly Instrument[] = [
  { name: 'phone 1000/mm 0.63 nm/px', linesPerMm: 1000, focalLengthPx: 1324, cameraAngleDeg: 33.5, rangeNm: [400, 700], widthPx: 1100, reversed: false },
  { name: 'phone 1000/mm 0.42 nm/px reversed', linesPerMm: 1000, focalLengthPx: 2000, cameraAngleDeg: 33.5, rangeNm: [390, 710], widthPx: 1100, reversed: true },
  { name: 'webcam 1000/mm 0.30 nm/px', linesPerMm: 1000, focalLengthPx: 2800, cameraAngleDeg: 33.5, rangeNm: [410, 690], widthPx: 1300, reversed: false },
  { name: 'camera 600/mm 0.56 nm/px reversed', linesPerMm: 600, focalLengthPx: 2800, cameraAngleDeg: 19.3, rangeNm: [395, 705], widthPx: 1100, reversed: true },
  { name: 'camera 600/mm 0.39 nm/px', linesPerMm: 600, focalLengthPx: 4000, cameraAngleDeg: 19.3, rangeNm: [400, 700], widthPx: 1300, reversed: false },
];

export const SELF_GASES = ['H', 'He', 'Ne', 'Ar', 'Kr', 'Xe', 'Hg', 'Na'] as const;

export interface EvaluationPhoto {
  gas: string;
  instrument: string;
  seed: number;
  peaks: Peak[];
  positionRangePx: [number, number];
  dispersionNmPerPx: number;
  /** The renderer's order-1 lines: position along the band as read (px) and wavelength (nm), the true scale. */
  truthLines: Array<[number, number]>;
}

/** One photo: tube `gas` (seeded intensities) on `instrument`, its peaks along the band. */
export function evaluationPhoto(gas: string, instrument: Instrument, seed: number): EvaluationPhoto {
  const options: RenderOptionsInput = {
    ...RIG,
    widthPx: instrument.widthPx,
    grating: { ...RIG.grating!, linesPerMm: instrument.linesPerMm },
    camera: { focal: { kind: 'px', focalLengthPx: instrument.focalLengthPx }, cameraAngleDeg: instrument.cameraAngleDeg },
    band: { ...RIG.band!, rangeNm: instrument.rangeNm, angleDeg: instrument.reversed ? 181.2 : 1.2 },
    spectralRangeNm: [instrument.rangeNm[0] - 20, instrument.rangeNm[1] + 20],
  };
  const photo = renderSpectroscopePhoto({ ...options, source: { lines: tubeSource([[gas, 1]], 1000 + seed) }, seed });
  const truth = photo.truth.band;
  // Reversed: the band read from the other end (position grows to the right, wavelength to the left).
  const band = instrument.reversed ? { ...truth, angleDeg: truth.angleDeg > 0 ? truth.angleDeg - 180 : truth.angleDeg + 180 } : truth;
  const spectrum = extractSpectrum(photo.image, band).spectrum;
  const peaks = findPeaksDetailed(spectrum).peaks;
  const pos = spectrum.positionPx;
  const length = truth.lengthPx;
  const truthLines = photo.truth.lines
    .filter((l) => l.order === 1)
    .map((l) => [instrument.reversed ? length - l.positionPx : l.positionPx, l.wavelengthNm] as [number, number]);
  return { gas, instrument: instrument.name, seed, peaks, positionRangePx: [pos[0], pos[pos.length - 1]], dispersionNmPerPx: photo.truth.dispersionNmPerPx, truthLines };
}

/** The set: every gas on every instrument once (seeds differ), `perGas` photos per gas in all. */
export function evaluationSet(perGas = 5, seedOffset = 0): EvaluationPhoto[] {
  const out: EvaluationPhoto[] = [];
  SELF_GASES.forEach((gas, g) => {
    for (let k = 0; k < perGas; k++) out.push(evaluationPhoto(gas, INSTRUMENTS[(g + k + seedOffset) % INSTRUMENTS.length], 17 * g + k + 1 + seedOffset));
  });
  return out;
}
