/**
 * What the camera looks at: a light source's spectrum as discrete emission lines plus continua (a thermal
 * continuum, phosphor bands, molecular bands). Intensities are relative photon fluxes in one arbitrary unit shared by
 * lines (integrated over the line) and continua (integrated over wavelength); the exposure maps that unit to
 * photoelectrons.
 */
import { assertFinite, invalid } from '../errors.js';

export interface EmissionLine {
  /** Air wavelength (nm). */
  wavelengthNm: number;
  /** Relative photon flux of the line. */
  intensity: number;
  /** Spectrum notation of the emitter, e.g. `Hg I` (carried into the ground truth). */
  species?: string;
}

/** A continuous part of a spectrum; `intensity` is its photon flux integrated over wavelength. */
export type ContinuumComponent =
  | {
      /** Planck's law in photons: n(λ) ∝ λ⁻⁴ / (exp(c₂/λT) − 1); intensity integrates over `normalizeRangeNm`. */
      kind: 'blackbody';
      temperatureK: number;
      intensity: number;
      /** @default [380, 780] */
      normalizeRangeNm?: [number, number];
      label?: string;
    }
  | {
      /** A Gaussian band in wavelength (a phosphor emission band, a blended multiplet). */
      kind: 'gaussianBand';
      centerNm: number;
      fwhmNm: number;
      intensity: number;
      label?: string;
    }
  | {
      /**
       * A molecular band: sharp head at headNm, intensity falling off exponentially over tailNm towards the violet
       * (shorter wavelengths) or the red.
       */
      kind: 'bandHead';
      headNm: number;
      tailNm: number;
      degradesTo: 'violet' | 'red';
      intensity: number;
      label?: string;
    };

export interface SourceSpectrum {
  lines: EmissionLine[];
  continua?: ContinuumComponent[];
}

/** Second radiation constant c₂ = hc/k in nm·K (CODATA 2018: 1.438776877e-2 m·K). */
export const SECOND_RADIATION_CONSTANT_NM_K = 1.438776877e7;

/** Photon spectral density (relative, per nm) of one continuum component; it integrates to `intensity`. */
export function continuumDensity(component: ContinuumComponent): (wavelengthNm: number) => number {
  switch (component.kind) {
    case 'blackbody': {
      assertFinite('temperatureK', component.temperatureK, 1);
      assertFinite('intensity', component.intensity, 0);
      const [lo, hi] = component.normalizeRangeNm ?? [380, 780];
      assertFinite('normalizeRangeNm[0]', lo, 1);
      assertFinite('normalizeRangeNm[1]', hi, lo + 1e-9);
      const t = component.temperatureK;
      const planck = (l: number): number => 1 / (l ** 4 * Math.expm1(SECOND_RADIATION_CONSTANT_NM_K / (l * t)));
      let sum = 0;
      const steps = 2000;
      const dl = (hi - lo) / steps;
      for (let i = 0; i < steps; i++) sum += planck(lo + (i + 0.5) * dl) * dl;
      const k = component.intensity / sum;
      return (l) => (l > 0 ? k * planck(l) : 0);
    }
    case 'gaussianBand': {
      assertFinite('centerNm', component.centerNm, 0);
      assertFinite('fwhmNm', component.fwhmNm, Number.MIN_VALUE);
      assertFinite('intensity', component.intensity, 0);
      const sigma = component.fwhmNm / (2 * Math.sqrt(2 * Math.LN2));
      const k = component.intensity / (sigma * Math.sqrt(2 * Math.PI));
      return (l) => k * Math.exp(-0.5 * ((l - component.centerNm) / sigma) ** 2);
    }
    case 'bandHead': {
      assertFinite('headNm', component.headNm, 0);
      assertFinite('tailNm', component.tailNm, Number.MIN_VALUE);
      assertFinite('intensity', component.intensity, 0);
      const sign = component.degradesTo === 'violet' ? 1 : component.degradesTo === 'red' ? -1 : 0;
      if (sign === 0) throw invalid('degradesTo', "'violet' or 'red'", component.degradesTo);
      const k = component.intensity / component.tailNm;
      return (l) => {
        const beyond = sign * (component.headNm - l);
        return beyond >= 0 ? k * Math.exp(-beyond / component.tailNm) : 0;
      };
    }
    default:
      throw invalid('continua[].kind', "'blackbody', 'gaussianBand' or 'bandHead'", (component as { kind: unknown }).kind);
  }
}

/** The wavelength that marks a continuum component in the ground truth: a band's centre or head, else null. */
export function continuumMarkNm(component: ContinuumComponent): number | null {
  if (component.kind === 'gaussianBand') return component.centerNm;
  if (component.kind === 'bandHead') return component.headNm;
  return null;
}

/** Checks a source spectrum, naming the offending entry. */
export function checkSourceSpectrum(source: SourceSpectrum): void {
  if (!source || !Array.isArray(source.lines)) throw invalid('source.lines', 'an array of emission lines', source?.lines);
  source.lines.forEach((line, i) => {
    assertFinite(`source.lines[${i}].wavelengthNm`, line.wavelengthNm, Number.MIN_VALUE);
    assertFinite(`source.lines[${i}].intensity`, line.intensity, 0);
  });
  if (source.continua !== undefined && !Array.isArray(source.continua)) {
    throw invalid('source.continua', 'an array of continuum components', source.continua);
  }
}
