/**
 * "Which gas is in this tube": the core's identifySpectrum on a capture, with the scale the CLI would use
 * (src/tasks/identify.ts identifyFile): a profile's (the peaks and the samples carried onto its band), the CSV's own
 * wavelength axis, or — with neither — the spectrum's own lines (self-calibration, said so and with lowered
 * confidence). A single dominant line is reported as a laser with its likely kinds.
 */
import { wavelengthAtNm } from '../../../src/core/calibration/model.js';
import type { InstrumentProfile } from '../../../src/core/calibration/profile.js';
import type { CalibrationScale } from '../../../src/core/calibration/uncertainty.js';
import { dispersionPriorNmPerPx } from '../../../src/core/identify/dispersionPrior.js';
import type { CalibratedPeak } from '../../../src/core/identify/identifySpecies.js';
import { identifySpectrum, type IdentifyInput, type SpectrumIdentification } from '../../../src/core/identify/identifySpectrum.js';
import { lampCatalog } from '../data/catalog.js';
import type { SpectrumCapture } from './pipeline.js';
import { applyProfile, sampleWavelengths } from './scale.js';

export interface IdentifyOutcome {
  identification: SpectrumIdentification;
  /** Wavelength of every sample on the scale used, null when there is none. */
  sampleWavelengthNm: Float64Array | null;
  warnings: string[];
}

/** Identification of a capture; `profile` null → the file's own wavelengths, else self-calibration. */
export function identifyCapture(capture: SpectrumCapture, profile: InstrumentProfile | null): IdentifyOutcome {
  const { lines, lasers } = lampCatalog();
  const warnings: string[] = [];
  const pos = capture.spectrum.positionPx;
  let input: IdentifyInput;
  let sampleWavelengthNm: Float64Array | null = null;
  if (profile) {
    const applied = applyProfile(capture, profile);
    warnings.push(...applied.warnings);
    sampleWavelengthNm = sampleWavelengths(pos, capture.band, profile);
    input = {
      from: 'profile',
      peaks: applied.peaks.filter((p) => Number.isFinite(p.wavelengthNm) && Number.isFinite(p.wavelengthUncertaintyNm)),
      rmsNm: profile.rmsNm,
      coveredRangeNm: range(sampleWavelengthNm),
      lamp: profile.lamp,
    };
  } else if (capture.spectrum.wavelengthNm) {
    sampleWavelengthNm = capture.spectrum.wavelengthNm;
    input = { from: 'file', peaks: capture.peaks as CalibratedPeak[], coveredRangeNm: range(sampleWavelengthNm) };
  } else {
    // As the CLI does for a photo: its size bounds the dispersion a grating spectroscope can give (the usual 35-mm
    // equivalents; the browser reads no EXIF), and the self-calibration tries no scale outside that range.
    const dispersionNmPerPx = capture.image ? dispersionPriorNmPerPx({ image: capture.image }) : undefined;
    input = { from: 'self', peaks: capture.peaks, positionRangePx: [pos[0], pos[pos.length - 1]], ...(dispersionNmPerPx ? { dispersionNmPerPx } : {}) };
  }
  const identification = identifySpectrum(input, { lines, lasers });
  if (identification.scale) sampleWavelengthNm = Float64Array.from(pos, (x) => wavelengthAtNm(identification.scale!.model, x));
  return { identification, sampleWavelengthNm, warnings: [...warnings, ...identification.warnings] };
}

/** The self-calibrated scale of an identification, if it made one. */
export function selfScale(outcome: IdentifyOutcome | null): CalibrationScale | null {
  return outcome?.identification.calibration?.from === 'self' ? (outcome.identification.scale ?? null) : null;
}

/** Wavelength range covered (nm, ascending) — what camera can see at all, 350–1000 nm, bounds it as in the CLI. */
function range(wl: Float64Array): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of wl) {
    if (!Number.isFinite(v)) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  return [Math.max(350, lo), Math.min(1000, hi)];
}
