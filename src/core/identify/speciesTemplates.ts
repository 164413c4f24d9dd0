import { assertFinite } from '../errors.js';
import { normalCdf } from '../render/lineSpread.js';
import type { SpectralLine } from '../types.js';

/**
 * What one species is expected to show on a camera spectrum: its lines inside the covered range, lines closer than the
 * instrument's resolution merged into one feature (they make one peak), each feature with a tempered prior weight.
 */
export interface TemplateFeature {
  /** Intensity-weighted centroid of the merged lines (nm, air); band heads shifted, see `BAND_HEAD_SHIFT_NM`. */
  wavelengthNm: number;
  /** Standard uncertainty of where the peak of this feature falls, beyond the measurement's (nm). */
  spreadSigmaNm: number;
  /** Expected flux relative to the species' strongest feature (tabulated, so good to a factor of several only). */
  relative: number;
  /** The member lines, strongest first (after the ion weighting). */
  lines: SpectralLine[];
  /** The spectrum that carries most of the feature's expected flux ('Ne I'). */
  spectrum: string;
  /** That spectrum's share of the feature's expected flux (1 for a feature of one spectrum). */
  purity: number;
  /**
   * Where its peak may fall, with probabilities summing to 1: a single line has one component; a blend is found
   * either as one unresolved peak (the centroid) or resolved into its lines (shared by flux), the split set by the
   * lines' extent against the line width.
   */
  components: FeatureComponent[];
}

export interface FeatureComponent {
  wavelengthNm: number;
  /** Standard uncertainty beyond the measurement's (nm). */
  sigmaNm: number;
  weight: number;
}

export interface SpeciesTemplate {
  element: string;
  /** A molecular band system (band heads), not atomic lines. */
  molecular: boolean;
  /** Sorted by wavelength. */
  features: TemplateFeature[];
  /** Prior probability that a peak of this species is feature f (per spectrum ∝ relative^weightExponent; sums to 1). */
  weights: Float64Array;
  /** Index of the strongest feature. */
  topFeature: number;
  /** Probability that the strongest feature also outshines every other one once each varies by the lamp scatter. */
  topDominance: number;
}

export interface TemplateOptions {
  /** Wavelength range the spectrum covers (nm). */
  rangeNm: readonly [number, number];
  /** Line width of the instrument (FWHM, nm): lines closer than `mergeFraction` × this make one feature. @default 1 */
  resolutionNm?: number;
  /** Lines within one FWHM may come out as one peak or two: both are allowed for (see `components`). @default 1 */
  mergeFraction?: number;
  /**
   * Ion lines (spectrum II) relative to neutral ones: in the glow of a discharge tube the neutral spectrum dominates
   * (common practice, no source), and the two spectra's tabulated scales are unrelated. @default 0.3
   */
  ionWeight?: number;
  /** Lines weaker than this fraction of their spectrum's strongest line in range are dropped. @default 0.0005 */
  minRelativeIntensity?: number;
  /**
   * Prior weight of a feature ∝ relative^exponent. The square root halves every tabulated factor: a line tabulated ×3
   * too bright gains only ×1.7 in weight, so the method does not rest on exact ratios. @default 0.5
   */
  weightExponent?: number;
  /** σ of ln(actual / tabulated flux) of a line in a real lamp: a factor of 3 at 2σ. @default ln(3)/2 */
  scatterLn?: number;
  /** σ of ln of a camera's relative colour response between two lines (a factor of 3 at 2σ across the visible). @default ln(3)/2 */
  responseLn?: number;
}

export const TEMPLATE_DEFAULTS = {
  resolutionNm: 1,
  mergeFraction: 1,
  ionWeight: 0.3,
  minRelativeIntensity: 0.0005,
  weightExponent: 0.5,
  scatterLn: Math.log(3) / 2,
  responseLn: Math.log(3) / 2,
} as const;

/**
 * A band head is the sharp edge of a band degraded towards the violet: at camera resolution the peak of the band sits
 * slightly to the violet of the head, by a fraction of a nanometre that depends on the temperature of the discharge
 * (common practice, no source). The feature is shifted by this much and widened by `BAND_HEAD_SIGMA_NM`.
 */
export const BAND_HEAD_SHIFT_NM = -0.4;
export const BAND_HEAD_SIGMA_NM = 0.6;

function ionStageOf(spectrum: string): number {
  const m = /\s(I{1,3}|IV|V)$/.exec(spectrum.trim());
  if (!m) return 0;
  return { I: 1, II: 2, III: 3, IV: 4, V: 5 }[m[1]] ?? 0;
}

/** One template per element (or molecule) that has at least one line in range, sorted by element. */
export function buildSpeciesTemplates(lines: readonly SpectralLine[], options: TemplateOptions): SpeciesTemplate[] {
  // Options given as undefined take their defaults.
  const given = Object.fromEntries(Object.entries(options).filter(([, v]) => v !== undefined));
  const o = { ...TEMPLATE_DEFAULTS, ...given } as Required<TemplateOptions>;
  const [lo, hi] = o.rangeNm;
  assertFinite('rangeNm[0]', lo, 0);
  assertFinite('rangeNm[1]', hi, lo);
  assertFinite('resolutionNm', o.resolutionNm, 0);
  const maxBySpectrum = new Map<string, number>();
  const inRange = lines.filter((l) => l.wavelengthNm >= lo && l.wavelengthNm <= hi && l.intensity > 0 && Number.isFinite(l.intensity));
  for (const l of inRange) maxBySpectrum.set(l.spectrum, Math.max(maxBySpectrum.get(l.spectrum) ?? 0, l.intensity));
  const byElement = new Map<string, Array<{ line: SpectralLine; relative: number; molecular: boolean }>>();
  for (const l of inRange) {
    const rel = l.intensity / maxBySpectrum.get(l.spectrum)!;
    if (rel < o.minRelativeIntensity) continue;
    const molecular = isBandHead(l);
    const stage = ionStageOf(l.spectrum);
    const weighted = rel * (stage >= 2 ? o.ionWeight ** (stage - 1) : 1);
    const list = byElement.get(l.element) ?? [];
    list.push({ line: l, relative: weighted, molecular });
    byElement.set(l.element, list);
  }
  const templates: SpeciesTemplate[] = [];
  for (const [element, list] of byElement) {
    list.sort((a, b) => a.line.wavelengthNm - b.line.wavelengthNm);
    const molecular = list.every((e) => e.molecular);
    const features: TemplateFeature[] = [];
    const mergeNm = o.mergeFraction * o.resolutionNm;
    for (let i = 0; i < list.length; ) {
      let j = i;
      while (j + 1 < list.length && list[j + 1].line.wavelengthNm - list[i].line.wavelengthNm <= mergeNm) j++;
      const members = list.slice(i, j + 1);
      const total = members.reduce((s, m) => s + m.relative, 0);
      const centroid = members.reduce((s, m) => s + m.relative * m.line.wavelengthNm, 0) / total;
      const extent = members[members.length - 1].line.wavelengthNm - members[0].line.wavelengthNm;
      // Unknown ratios inside a blend put its centroid anywhere over its extent: σ of a uniform spread, extent/√12.
      let spread = extent / Math.sqrt(12);
      let centre = centroid;
      if (members[0].molecular) {
        centre += BAND_HEAD_SHIFT_NM;
        spread = Math.sqrt(spread ** 2 + BAND_HEAD_SIGMA_NM ** 2);
      }
      const bySpectrum = new Map<string, number>();
      for (const m of members) bySpectrum.set(m.line.spectrum, (bySpectrum.get(m.line.spectrum) ?? 0) + m.relative);
      const [spectrum, share] = [...bySpectrum].sort((a, b) => b[1] - a[1])[0];
      // Resolved or not: lines closer than half the line width always make one peak; at a full line width the peak
      // finder splits them about half the time (common practice, no source). Linear in between.
      const resolved = Math.min(1, Math.max(0, extent / o.resolutionNm - 0.5)) * 0.5;
      const components: FeatureComponent[] =
        members.length === 1
          ? [{ wavelengthNm: centre, sigmaNm: spread, weight: 1 }]
          : [
              { wavelengthNm: centre, sigmaNm: spread, weight: 1 - resolved },
              ...members.map((m) => ({
                wavelengthNm: m.line.wavelengthNm + (m.molecular ? BAND_HEAD_SHIFT_NM : 0),
                sigmaNm: m.molecular ? BAND_HEAD_SIGMA_NM : 0,
                weight: (resolved * m.relative) / total,
              })),
            ].filter((c) => c.weight > 0);
      features.push({
        wavelengthNm: centre,
        spreadSigmaNm: spread,
        relative: total,
        lines: [...members].sort((a, b) => b.relative - a.relative).map((m) => m.line),
        spectrum,
        purity: share / total,
        components,
      });
      i = j + 1;
    }
    const top = features.reduce((best, f, k) => (f.relative > features[best].relative ? k : best), 0);
    const max = features[top].relative;
    for (const f of features) f.relative /= max;
    // Which line a peak is: first which spectrum (the balance of Ne I and Ne II, or of two band systems, varies from
    // tube to tube and their tabulated scales are unrelated: a fixed prior, `ionWeight` for ions), then which line
    // of that spectrum, ∝ relative^exponent.
    const stageWeight = (spectrumName: string) => (ionStageOf(spectrumName) >= 2 ? o.ionWeight : 1);
    const spectraPresent = [...new Set(features.map((f) => f.spectrum))];
    const priorTotal = spectraPresent.reduce((sum, name) => sum + stageWeight(name), 0);
    const weights = Float64Array.from(features, (f) => f.relative ** o.weightExponent);
    for (const name of spectraPresent) {
      let sum = 0;
      features.forEach((f, k) => f.spectrum === name && (sum += weights[k]));
      features.forEach((f, k) => f.spectrum === name && (weights[k] *= stageWeight(name) / priorTotal / sum));
    }
    // P(top outshines f) with independent log-normal scatter on both lines and the camera's colour response between
    // them: Φ(ln(ratio) / √(2σ² + σ_r²)).
    const spread = Math.sqrt(2 * o.scatterLn ** 2 + o.responseLn ** 2);
    let dominance = 1;
    for (let k = 0; k < features.length; k++) {
      if (k === top) continue;
      dominance *= normalCdf(Math.log(1 / features[k].relative) / spread);
    }
    templates.push({ element, molecular, features, weights, topFeature: top, topDominance: dominance });
  }
  return templates.sort((a, b) => compareText(a.element, b.element));
}

function isBandHead(line: SpectralLine): boolean {
  return (line as { kind?: string }).kind === 'band-head';
}

/** Plain code-unit order (localeCompare builds a collator per call and is slow in hot paths). */
export function compareText(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}
