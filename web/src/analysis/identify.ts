/**
 * "Which gas is in this tube": the core's identification on a capture, with a profile (the peaks get wavelengths from
 * it) or without one (the spectrum calibrates itself from the candidate lamps' line patterns and says so), plus the
 * laser check for a single dominant line. Mirrors what `glowprint identify` reports.
 */
import type { InstrumentProfile } from '../../../src/core/calibration/profile.js';
import { detectLaser, type LaserResult } from '../../../src/core/identify/detectLaser.js';
import { identifySelfCalibrated, type SelfCalibration } from '../../../src/core/identify/identifySelfCalibrated.js';
import { identifySpecies, IDENTIFY_DEFAULTS, type CalibratedPeak, type Identification } from '../../../src/core/identify/identifySpecies.js';
import { lampCatalog } from '../data/catalog.js';
import type { SpectrumCapture } from './pipeline.js';
import { applyProfile } from './scale.js';

export interface IdentifyOutcome {
  identification: Identification;
  calibration: { from: 'profile'; rmsNm: number; lamp: string } | (Omit<SelfCalibration, 'fit'> & { fit: SelfCalibration['fit'] }) | { from: 'file'; rmsNm: null } | null;
  laser: LaserResult | null;
  warnings: string[];
}

/** Identification of a capture; `profile` null → self-calibrating (or the file's own wavelengths for a CSV that has them). */
export function identifyCapture(capture: SpectrumCapture, profile: InstrumentProfile | null): IdentifyOutcome {
  const { lines, lasers } = lampCatalog();
  const warnings: string[] = [];
  if (profile) {
    const applied = applyProfile(capture, profile);
    warnings.push(...applied.warnings);
    const peaks = applied.peaks.filter((p) => Number.isFinite(p.wavelengthNm) && Number.isFinite(p.wavelengthUncertaintyNm));
    const systematicNm = Math.max(profile.rmsNm, IDENTIFY_DEFAULTS.systematicNm);
    const identification = identifySpecies(peaks, { lines, systematicNm });
    const laser = detectLaser(peaks, { kinds: lasers, systematicNm });
    return { identification, calibration: { from: 'profile', rmsNm: profile.rmsNm, lamp: profile.lamp }, laser, warnings: [...warnings, ...identification.warnings] };
  }
  if (capture.spectrum.wavelengthNm && capture.peaks.every((p) => p.wavelengthNm !== undefined)) {
    const peaks = capture.peaks as CalibratedPeak[];
    const identification = identifySpecies(peaks, { lines });
    const laser = detectLaser(peaks, { kinds: lasers });
    return { identification, calibration: { from: 'file', rmsNm: null }, laser, warnings: identification.warnings };
  }
  const positions = capture.spectrum.positionPx;
  const self = identifySelfCalibrated(capture.peaks, {
    lines,
    positionRangePx: [positions[0], positions[positions.length - 1]],
  });
  let laser: LaserResult | null = null;
  if (self.calibration) {
    laser = detectLaser(self.peaks, { kinds: lasers, systematicNm: Math.max(self.calibration.rmsNm, IDENTIFY_DEFAULTS.systematicNm) });
  }
  const { calibration, candidates: _candidates, ...identification } = self;
  return { identification, calibration, laser, warnings: self.warnings };
}
