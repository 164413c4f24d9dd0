/**
 * Wavelength scales in the page: calibrating a capture from a lamp (automatic matching) and/or clicked pairs, turning
 * the fit into an instrument profile (the same JSON format as `glowprint calibrate --out`), and applying a profile to
 * a spectrum and its peaks. All of it is the core's (src/core/calibration); this file only wires it to a capture.
 */
import { calibrateFromPeaks, gratingPriors, type CalibrationResult, zeroOrderSighting } from '../../../src/core/calibration/calibrate.js';
import { calibrationLampLines } from '../../../src/core/calibration/calibrationLines.js';
import type { DispersionFit, ModelChoice } from '../../../src/core/calibration/fitDispersion.js';
import type { ManualPair } from '../../../src/core/calibration/matchLines.js';
import { dispersionAtNmPerPx, wavelengthAtNm } from '../../../src/core/calibration/model.js';
import type { CalibrationScale } from '../../../src/core/calibration/uncertainty.js';
import type { CalibrationSummary } from '../../../src/core/identify/identifySpectrum.js';
import {
  applyProfileToPeaks,
  buildProfile,
  positionsInProfileFrame,
  type AppliedProfile,
  type CameraSummary,
  type InstrumentProfile,
} from '../../../src/core/calibration/profile.js';
import type { BandGeometry } from '../../../src/core/types.js';
import { lampCatalog } from '../data/catalog.js';
import type { SpectrumCapture } from './pipeline.js';

export const SOFTWARE = { name: 'glowprint web', version: '0.1.0' } as const;

export interface CalibrateCaptureOptions {
  /** Lamp spec ('fluorescent', 'Ne,Hg', 'laser:632.816'), or null for pairs alone. */
  lamp: string | null;
  pairs: ManualPair[];
  model: ModelChoice;
  camera: CameraSummary | null;
}

export interface ScaleResult {
  profile: InstrumentProfile;
  calibration: CalibrationResult;
  lampDescription: string | null;
  warnings: string[];
}

/** Capture (+ lamp and/or pairs) → calibration and an instrument profile of this rig. */
export function calibrateCapture(capture: SpectrumCapture, options: CalibrateCaptureOptions): ScaleResult {
  const warnings: string[] = [];
  let lines = null;
  let lampDescription: string | null = null;
  if (options.lamp) {
    // Every listed line of the lamp, blends re-judged at the capture's resolution: as glowprint calibrate does.
    const lamp = calibrationLampLines(options.lamp, lampCatalog());
    lines = lamp.lines;
    lampDescription = lamp.description;
    warnings.push(...lamp.warnings);
  }
  const priors = gratingPriors({
    image: capture.image,
    band: capture.band,
    focalLength35mmMm: options.camera?.focalLength35mmMm,
  });
  const grating = {
    ...(priors.focalLengthPx ? { focalLengthPx: priors.focalLengthPx } : {}),
    ...(priors.axisPositionPx ? { axisPositionPx: priors.axisPositionPx } : {}),
  };
  const spec = options.lamp;
  const calibration = calibrateFromPeaks(capture.peaks, lines, {
    pairs: options.pairs,
    // The zero order the band search found is the 0 nm point of the first-order scale (as glowprint calibrate).
    match: { zeroOrder: zeroOrderSighting(capture.band?.zeroOrderPx) },
    fit: { model: options.model, grating },
    linesAtResolution: spec ? (resolutionNm) => calibrationLampLines(spec, lampCatalog(), resolutionNm).lines : null,
  });
  warnings.push(...calibration.warnings);
  const profile = profileFromFit(calibration.fit, capture, {
    lamp: options.lamp ?? 'pairs',
    camera: options.camera,
    focalLengthSource: priors.focalLengthSource,
  });
  return { profile, calibration, lampDescription, warnings };
}

/** A fit made on `capture` → an instrument profile (as `glowprint calibrate --out` writes). */
export function profileFromFit(
  fit: DispersionFit,
  capture: SpectrumCapture,
  context: { lamp: string; camera: CameraSummary | null; focalLengthSource?: 'exif' | 'given' | 'fitted' },
): InstrumentProfile {
  const band: BandGeometry | null = capture.band
    ? { angleDeg: capture.band.angleDeg, slantDeg: capture.band.slantDeg, center: { ...capture.band.center }, lengthPx: capture.band.lengthPx, heightPx: capture.band.heightPx }
    : null;
  return buildProfile(fit, {
    lamp: context.lamp,
    sourceFile: capture.kind === 'camera' ? null : capture.sourceName,
    image: capture.image,
    camera: context.camera,
    band,
    focalLengthSource: context.focalLengthSource,
    createdAt: new Date().toISOString(),
    software: { ...SOFTWARE },
  });
}

/**
 * The scale a spectrum gave itself (self-calibrating identification) as an instrument profile, so later captures of
 * the same rig can use it. The profile records it (lamp `self:<lamp>`); the matched lines themselves are not listed.
 */
export function profileFromSelfScale(
  scale: CalibrationScale,
  summary: CalibrationSummary,
  capture: SpectrumCapture,
  camera: CameraSummary | null,
): InstrumentProfile {
  const [x0, x1] = scale.rangePx;
  const a = wavelengthAtNm(scale.model, x0);
  const b = wavelengthAtNm(scale.model, x1);
  const dispersion = dispersionAtNmPerPx(scale.model, (x0 + x1) / 2);
  const rmsNm = summary.rmsNm ?? 0;
  const fit = {
    model: scale.model,
    checkModel: scale.checkModel,
    rangePx: [x0, x1],
    rangeNm: [Math.min(a, b), Math.max(a, b)],
    dispersionNmPerPx: dispersion,
    rmsNm,
    rmsPx: rmsNm / Math.abs(dispersion),
    birgeRatio: NaN,
    linesUsed: summary.linesUsed ?? 2,
    lines: [],
  } as unknown as DispersionFit;
  return profileFromFit(fit, capture, { lamp: `self:${summary.lamp ?? 'spectrum'}`, camera });
}

/**
 * Wavelength of each sample of a spectrum measured along `band` (null for a CSV spectrum) under `profile`: positions
 * are carried into the profile's band frame through the image, as applyProfileToPeaks does for peaks.
 */
export function sampleWavelengths(positionsPx: ArrayLike<number>, band: BandGeometry | null, profile: InstrumentProfile): Float64Array {
  const xs = Array.from(positionsPx);
  const inFrame = band && profile.band ? positionsInProfileFrame(xs, band, profile.band).positionsPx : xs;
  return Float64Array.from(inFrame, (x) => wavelengthAtNm(profile.model, x));
}

/** Peaks of a capture with wavelengths and uncertainties from a profile, and the geometry warnings. */
export function applyProfile(capture: SpectrumCapture, profile: InstrumentProfile): AppliedProfile {
  return applyProfileToPeaks(capture.peaks, profile, {
    image: capture.image,
    band: capture.band,
    source: capture.sourceName,
  });
}
