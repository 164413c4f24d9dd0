import type { CalibrationScale } from '../calibration/uncertainty.js';
import type { Peak } from '../types.js';
import { detectLaser, type LaserKind, type LaserResult } from './detectLaser.js';
import { IDENTIFY_DEFAULTS, identifySpecies, type CalibratedPeak, type Identification, type IdentifyOptions } from './identifySpecies.js';
import { identifySelfCalibrated, type ScaleCandidate, type SelfCalibrationOptions } from './identifySelfCalibrated.js';

/** Where the peaks' wavelengths come from. */
export type IdentifyInput =
  /** A calibration profile applied to the peaks (calibration/profile.ts: applyProfileToPeaks). */
  | { from: 'profile'; peaks: readonly CalibratedPeak[]; rmsNm: number; coveredRangeNm?: readonly [number, number]; lamp?: string }
  /** A spectrum file with a wavelength axis: calibrated by whoever wrote it, with no RMS known. */
  | { from: 'file'; peaks: readonly CalibratedPeak[]; coveredRangeNm?: readonly [number, number] }
  /**
   * Positions only: the spectrum calibrates itself (identifySelfCalibrated), its scales held to `dispersionNmPerPx`
   * (|dλ/dx|, nm/px) when the photo says what it can be (dispersionPrior.ts).
   */
  | { from: 'self'; peaks: readonly Peak[]; positionRangePx?: readonly [number, number]; dispersionNmPerPx?: readonly [number, number] };

export interface IdentifySpectrumOptions extends Omit<IdentifyOptions, 'rangeNm' | 'systematicNm' | 'evidencePenalty'> {
  /** Laser kinds (data/lasers.json) for a spectrum of one dominant line. @default none: no laser is reported */
  lasers?: readonly LaserKind[];
  /** Self-calibration only: the lamps tried and the matcher's options. */
  self?: Pick<SelfCalibrationOptions, 'lamps' | 'match' | 'cameraRangeNm'>;
}

/** How the wavelength scale was obtained, for the report. */
export interface CalibrationSummary {
  from: 'profile' | 'self' | 'file';
  /** RMS of the scale's fit (nm); null when not known (a wavelength file). */
  rmsNm: number | null;
  /** The lamp of the profile, or the lamp whose lines made a self-calibrated scale. */
  lamp?: string;
  linesUsed?: number;
  dispersionNmPerPx?: number;
  /** Self-calibration: posterior probability of the chosen scale among the candidates. */
  probability?: number;
  /** Wavelength range the spectrum covers on the scale (nm). */
  coveredRangeNm?: [number, number];
}

export interface SpectrumIdentification extends Identification {
  /** null only when a self-calibration found no scale. */
  calibration: CalibrationSummary | null;
  /** One dominant narrow line, when the spectrum is a laser's; null otherwise. */
  laser: LaserResult | null;
  /** Self-calibration: every candidate scale considered. */
  scaleCandidates?: ScaleCandidate[];
  /** Self-calibration: the scale chosen (position px → wavelength nm), to plot or save. */
  scale?: CalibrationScale;
}

/**
 * One spectrum identified on whatever scale it has: a profile's, the file's own, or one it gives itself. A single
 * dominant narrow line is also reported as a laser with the kinds it may be — unless it matches no laser kind and a
 * species present explains it (a sodium lamp's blended D lines). Identification with no emission lines names
 * nothing (identifySpecies: "no emission lines found").
 */
export function identifySpectrum(input: IdentifyInput, options: IdentifySpectrumOptions): SpectrumIdentification {
  const { lasers, self, ...identify } = options;
  if (input.from === 'self') {
    const prior = input.dispersionNmPerPx;
    const match = prior ? { ...self?.match, dispersionNmPerPx: [prior[0], prior[1]] as [number, number] } : self?.match;
    const r = identifySelfCalibrated(input.peaks, { ...identify, ...self, match, positionRangePx: input.positionRangePx });
    const warnings = [...r.warnings];
    const total = input.peaks.reduce((s, p) => s + Math.max(p.area, 0), 0);
    const top = input.peaks.reduce((m, p) => Math.max(m, p.area), 0);
    if (!r.calibration && total > 0 && top / total >= 0.8) {
      warnings.push('one line carries most of the light (a laser, or a single-line lamp such as sodium): one line cannot set a wavelength scale; give --calibration to measure it');
    }
    const { calibration, candidates, ...rest } = r;
    return {
      ...rest,
      warnings,
      calibration: calibration
        ? {
            from: 'self',
            rmsNm: calibration.rmsNm,
            lamp: calibration.lamp,
            linesUsed: calibration.linesUsed,
            dispersionNmPerPx: calibration.dispersionNmPerPx,
            probability: calibration.probability,
            coveredRangeNm: calibration.coveredRangeNm,
          }
        : null,
      laser: null,
      scaleCandidates: candidates,
      ...(calibration ? { scale: { model: calibration.fit.model, rangePx: calibration.fit.rangePx, checkModel: calibration.fit.checkModel } } : {}),
    };
  }
  const rmsNm = input.from === 'profile' ? input.rmsNm : null;
  const systematicNm = rmsNm ?? IDENTIFY_DEFAULTS.systematicNm;
  const identification = identifySpecies(input.peaks, { ...identify, rangeNm: input.coveredRangeNm, systematicNm });
  let laser = lasers ? detectLaser(input.peaks, { kinds: lasers, systematicNm }) : null;
  if (laser && laser.candidates.length === 0) {
    const explained = identification.peaks.some((p) => p.line && Math.abs(p.wavelengthNm - laser!.wavelengthNm) < 1e-9);
    if (explained) laser = null;
  }
  const warnings = [...identification.warnings];
  if (laser) {
    warnings.push(
      laser.candidates.length
        ? `one dominant narrow line at ${laser.wavelengthNm.toFixed(2)} nm: a laser (${laser.candidates.map((c) => c.name).join(', ')})`
        : `one dominant narrow line at ${laser.wavelengthNm.toFixed(2)} nm that matches no known laser kind`,
    );
  }
  return {
    ...identification,
    warnings,
    calibration: {
      from: input.from,
      rmsNm,
      ...(input.from === 'profile' && input.lamp ? { lamp: input.lamp } : {}),
      ...(input.coveredRangeNm ? { coveredRangeNm: [input.coveredRangeNm[0], input.coveredRangeNm[1]] as [number, number] } : {}),
    },
    laser,
  };
}
