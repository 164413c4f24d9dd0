import type { CalibratedPeak } from './identifySpecies.js';

/** A kind of laser and the band its units emit in (air, nm): an entry of data/lasers.json. */
export interface LaserKind {
  name: string;
  wavelengthNm: number;
  /** Half-width of the band in which units of this kind are found (manufacturing spread, temperature); 0 for a gas line. */
  toleranceNm: number;
  description?: string;
  kind?: string;
  source?: string;
}

export interface LaserDetectOptions {
  kinds: readonly LaserKind[];
  /** The strongest peak must carry at least this share of all peak flux. @default 0.8 */
  minFluxFraction?: number;
  /** Calibration uncertainty (e.g. its RMS, nm) added in quadrature to the peak's own. @default 0.15 */
  systematicNm?: number;
  /**
   * A peak broader than this (FWHM, nm) is an LED, a phosphor band or a blend, not a laser line: a laser's line is
   * far narrower than any camera spectroscope resolves, so its width is the instrument's (a few nm at most with a
   * phone and a film grating; common practice, no source). @default 6
   */
  maxFwhmNm?: number;
  /** A kind matches within this many combined standard uncertainties. @default 3 */
  matchSigma?: number;
}

export const LASER_DETECT_DEFAULTS = { minFluxFraction: 0.8, systematicNm: 0.15, maxFwhmNm: 6, matchSigma: 3 } as const;

export interface LaserMatch {
  name: string;
  description?: string;
  /** Tabulated wavelength of that kind. */
  nominalWavelengthNm: number;
  /** Measured minus nominal, in combined standard uncertainties (the kind's spread counted as uniform, σ = tolerance/√3). */
  deviationSigma: number;
  source?: string;
}

export interface LaserResult {
  wavelengthNm: number;
  /** Standard uncertainty: the peak's centroid and the calibration's, in quadrature. */
  wavelengthUncertaintyNm: number;
  fwhmNm?: number;
  /** Share of all peak flux in this line. */
  fluxFraction: number;
  /** Whether the line clips the sensor (the position stays good; the flux share is a lower bound). */
  saturated: boolean;
  /** Kinds consistent with the measured line, most likely first; empty when no known kind emits there. */
  candidates: LaserMatch[];
}

/**
 * One dominant narrow line is a laser: its wavelength with uncertainty, and the kinds whose band contains it within
 * `matchSigma` combined standard uncertainties. Returns null when no single line dominates (a discharge spectrum) or
 * the dominant one is too broad or blended to be a laser line.
 */
export function detectLaser(peaks: readonly CalibratedPeak[], options: LaserDetectOptions): LaserResult | null {
  const o = { ...LASER_DETECT_DEFAULTS, ...definedOnly(options) };
  const usable = peaks.filter((p) => Number.isFinite(p.wavelengthNm) && p.area > 0);
  if (usable.length === 0) return null;
  const total = usable.reduce((s, p) => s + p.area, 0);
  const top = usable.reduce((a, b) => (b.area > a.area ? b : a));
  if (top.area / total < o.minFluxFraction || top.blended) return null;
  if (top.fwhmNm !== undefined && top.fwhmNm > o.maxFwhmNm) return null;
  const u = Number.isFinite(top.wavelengthUncertaintyNm) ? top.wavelengthUncertaintyNm : 0;
  const sigma = Math.sqrt(u * u + o.systematicNm ** 2);
  const candidates = options.kinds
    .map((k) => {
      const combined = Math.sqrt(sigma ** 2 + (k.toleranceNm / Math.sqrt(3)) ** 2);
      return {
        name: k.name,
        description: k.description,
        nominalWavelengthNm: k.wavelengthNm,
        deviationSigma: (top.wavelengthNm - k.wavelengthNm) / combined,
        source: k.source,
      };
    })
    .filter((m) => Math.abs(m.deviationSigma) <= o.matchSigma)
    .sort((a, b) => Math.abs(a.deviationSigma) - Math.abs(b.deviationSigma));
  return {
    wavelengthNm: top.wavelengthNm,
    wavelengthUncertaintyNm: sigma,
    fwhmNm: top.fwhmNm,
    fluxFraction: top.area / total,
    saturated: top.saturated,
    candidates,
  };
}

function definedOnly<T extends object>(o: T): Partial<T> {
  return Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as Partial<T>;
}
