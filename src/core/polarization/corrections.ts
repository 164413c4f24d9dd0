import { InputError, assertFinite, invalid } from '../errors.js';
import { axisDifferenceDeg, wrapAzimuthDeg } from './angles.js';

/**
 * Corrections for a real analyser: its scale's zero is rarely on its transmission axis, and it passes a little of the
 * crossed polarization.
 */

/** What glowprint knows about one analyser (a polarizer on its rotation mount). */
export interface AnalyserProfile {
  /**
   * Add to an azimuth read on the analyser's scale to get the true azimuth: true = scale + offset, in (−90, 90].
   * Measured with a reference of known polarization.
   */
  offsetDeg: number;
  offsetUncertaintyDeg: number;
  /** Principal-transmittance ratio k1/k2 (> 1), where known. */
  extinctionRatio?: number;
  extinctionRatioUncertainty?: number;
}

/**
 * Analyser offset from a reference of known azimuth: offset = ψ_ref − ψ_measured, wrapped into (−90, 90]. Light
 * reflected near Brewster's angle from a floor or a horizontal glass plate is mostly s-polarized, i.e. horizontal
 * (perpendicular to the vertical plane of incidence), azimuth 0° on a scale whose 0° is horizontal (Hecht, *Optics*,
 * §8.6 "Polarization by reflection" — from memory).
 */
export function analyserOffsetFromReference(options: {
  measuredAzimuthDeg: number;
  measuredAzimuthUncertaintyDeg: number;
  /** The reference's true azimuth. @default 0 (horizontal, floor glare) */
  referenceAzimuthDeg?: number;
  /** Uncertainty of the reference's azimuth (how level the floor, how well the reflection plane is known). @default 0 */
  referenceAzimuthUncertaintyDeg?: number;
}): { offsetDeg: number; offsetUncertaintyDeg: number } {
  const ref = options.referenceAzimuthDeg ?? 0;
  const refSigma = options.referenceAzimuthUncertaintyDeg ?? 0;
  assertFinite('measuredAzimuthDeg', options.measuredAzimuthDeg);
  assertFinite('measuredAzimuthUncertaintyDeg', options.measuredAzimuthUncertaintyDeg, 0);
  assertFinite('referenceAzimuthDeg', ref);
  assertFinite('referenceAzimuthUncertaintyDeg', refSigma, 0);
  return {
    offsetDeg: axisDifferenceDeg(ref, options.measuredAzimuthDeg),
    offsetUncertaintyDeg: Math.hypot(options.measuredAzimuthUncertaintyDeg, refSigma),
  };
}

/** An azimuth read on the analyser's scale, corrected by the profile's offset; uncertainties add in quadrature. */
export function applyAnalyserOffset(
  azimuthDeg: number,
  azimuthUncertaintyDeg: number,
  profile: Pick<AnalyserProfile, 'offsetDeg' | 'offsetUncertaintyDeg'>,
): { azimuthDeg: number; azimuthUncertaintyDeg: number } {
  return {
    azimuthDeg: wrapAzimuthDeg(azimuthDeg + profile.offsetDeg),
    azimuthUncertaintyDeg: Math.hypot(azimuthUncertaintyDeg, profile.offsetUncertaintyDeg),
  };
}

/**
 * The factor by which a finite extinction ratio lowers the measured DoLP: (ER − 1)/(ER + 1). A partial polarizer with
 * principal intensity transmittances k1 > k2 has the Mueller matrix ½[[k1+k2, k1−k2, 0, 0], [k1−k2, k1+k2, 0, 0], …]
 * (Collett, *Field Guide to Polarization*, SPIE 2005, "Mueller matrices" — from memory), so behind it
 * I(θ) = ½[(k1+k2)S0 + (k1−k2)(S1 cos 2θ + S2 sin 2θ)] and measured DoLP = true DoLP · (k1 − k2)/(k1 + k2).
 */
export function extinctionFactor(extinctionRatio: number): number {
  if (!(Number.isFinite(extinctionRatio) && extinctionRatio > 1)) {
    throw invalid('extinction ratio', 'a number greater than 1 (k1/k2, e.g. 100 for 100:1)', extinctionRatio);
  }
  return (extinctionRatio - 1) / (extinctionRatio + 1);
}

/**
 * A measured DoLP (and S1, S2 relative to S0) corrected for the analyser's extinction ratio: true = measured ×
 * (ER + 1)/(ER − 1). The uncertainty scales by the same factor, plus the contribution of the ER's own uncertainty
 * (∂/∂ER of (ER + 1)/(ER − 1) = −2/(ER − 1)²).
 */
export function correctExtinction(options: {
  dolp: number;
  dolpUncertainty: number;
  extinctionRatio: number;
  extinctionRatioUncertainty?: number;
}): { dolp: number; dolpUncertainty: number; factor: number; warnings: string[] } {
  const factor = 1 / extinctionFactor(options.extinctionRatio);
  const er = options.extinctionRatio;
  const sEr = options.extinctionRatioUncertainty ?? 0;
  if (!(sEr >= 0)) throw invalid('extinction ratio uncertainty', 'a non-negative number', sEr);
  const dolp = options.dolp * factor;
  const dFactor = (2 / (er - 1) ** 2) * sEr;
  const dolpUncertainty = Math.hypot(options.dolpUncertainty * factor, options.dolp * dFactor);
  const warnings: string[] = [];
  if (dolp > 1 + 2 * dolpUncertainty) {
    warnings.push(
      `the extinction-corrected DoLP is ${dolp.toFixed(3)}, above 1 by more than twice its uncertainty: the analyser's extinction ratio is probably lower than the ${er} given`,
    );
  }
  return { dolp, dolpUncertainty, factor, warnings };
}

/**
 * Checks a profile's values (for one read from a file, say) and returns it normalised. `source` names it in messages.
 */
export function validateAnalyserProfile(profile: AnalyserProfile, source: string): AnalyserProfile {
  const check = (name: string, v: unknown, min = -Infinity, max = Infinity): void => {
    if (typeof v !== 'number' || !Number.isFinite(v) || v < min || v > max) {
      throw invalid(`${source}: ${name}`, min === -Infinity ? 'a finite number' : `a number between ${min} and ${max}`, v);
    }
  };
  check('offset_deg', profile.offsetDeg, -90, 90);
  check('offset_uncertainty_deg', profile.offsetUncertaintyDeg, 0, 90);
  if (profile.extinctionRatio !== undefined) {
    if (!(typeof profile.extinctionRatio === 'number' && profile.extinctionRatio > 1)) {
      throw new InputError(`${source}: extinction_ratio: expected a number greater than 1, got ${profile.extinctionRatio}`, source);
    }
  }
  if (profile.extinctionRatioUncertainty !== undefined) check('extinction_ratio_uncertainty', profile.extinctionRatioUncertainty, 0);
  return { ...profile };
}
