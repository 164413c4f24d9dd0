import { logGamma } from '../render/noise.js';
import type { SpectralLine } from '../types.js';
import type { IdentifiedPeak } from './identifySpecies.js';

/** What the checks read of an identification: its peaks with the lines they were given. */
export interface IdentifiedPeaks {
  peaks: readonly IdentifiedPeak[];
}

/**
 * Two checks a wavelength scale the spectrum gave itself must pass beyond the identification on it: with a profile
 * the scale is independent of the peaks, so peaks no species explains are contaminants or unlisted lines and the
 * mixture fits their share freely; on a self-made scale they are also what a wrong scale leaves over, and the lines
 * that made the scale were chosen because they fit it, so their positions prove little by themselves.
 */
export interface ScaleCredibilityOptions {
  /** Peaks with at least this share of the brightest line-like peak's area are the bright ones. @default 0.05 */
  brightShare: number;
  /**
   * β of the Beta(1, β) prior on the share of bright peaks that no listed line of the present species explains, on the
   * right scale: mean 1/(1 + β). @default 6 (one in seven: the list holds a tube's strong lines; a bright peak it
   * leaves is a line the curation missed, a contaminant or a ghost. Measured on the seeded self-calibration set, not
   * from a source: β = 4 left a xenon tube named hydrogen at 0.2 nats above "none of these scales", β = 6 and 8 decline
   * it and keep every right answer)
   */
  unexplainedBeta: number;
  /**
   * σ of ln(peak area / tabulated intensity) about its mean for one species' lines on the right scale: the lamp's
   * scatter (a factor of 3) and the camera's colour response (another) in quadrature. @default √2 · ln 3
   */
  fluxScatterLn: number;
  /** Chance that one line's flux is off whatever the scatter (self-absorbed resonance line, table error). @default 0.15 */
  fluxOutlierProbability: number;
  /** Fewest lines of one spectrum for the flux check. @default 3 */
  minFluxLines: number;
}

export const SCALE_CREDIBILITY_DEFAULTS: ScaleCredibilityOptions = {
  brightShare: 0.05,
  unexplainedBeta: 6,
  fluxScatterLn: Math.SQRT2 * Math.log(3),
  fluxOutlierProbability: 0.15,
  minFluxLines: 3,
};

export interface BrightCoverage {
  /** ln Bayes factor (≤ 0 when most bright peaks are unexplained). */
  nats: number;
  bright: number;
  unexplained: number;
}

/**
 * The share of bright peaks the present species must explain. Of the B bright line-like peaks, u are explained by no
 * present species. On the right scale a tube's bright peaks are nearly all its gas's strong lines, which the curated
 * list holds: the unexplained share π has a Beta(1, β) prior (mean 1/(1 + β)); on a scale that fits by chance π is
 * anything (uniform). The Bayes factor of the two for u of B (beta-binomial marginal likelihoods, e.g. Gelman et al.,
 * *Bayesian Data Analysis*, 3rd ed., 2013, ch. 5) is
 *
 *   B(u + 1, B − u + β) / B(1, β)  ÷  B(u + 1, B − u + 1),
 *
 * about +1 nat when every bright peak is explained, below −2 when three in four are not. Second-order images of
 * explained lines count as explained.
 */
export function brightCoverage(identification: IdentifiedPeaks, minSnr: number, options: Partial<ScaleCredibilityOptions> = {}): BrightCoverage {
  const o = { ...SCALE_CREDIBILITY_DEFAULTS, ...options };
  const lineLike = identification.peaks.filter((p) => p.snr >= minSnr && p.area > 0);
  const brightest = lineLike.reduce((m, p) => Math.max(m, p.area), 0);
  const bright = lineLike.filter((p) => p.area >= o.brightShare * brightest);
  const B = bright.length;
  const u = bright.filter((p) => !p.line).length;
  if (B === 0) return { nats: 0, bright: 0, unexplained: 0 };
  const b = o.unexplainedBeta;
  const nats = lnBeta(u + 1, B - u + b) - lnBeta(1, b) - lnBeta(u + 1, B - u + 1);
  return { nats, bright: B, unexplained: u };
}

export interface FluxConsistency {
  /** ln likelihood ratio of the lines' fluxes: "these are the species' lines" against "peaks at random". */
  nats: number;
  /** Lines compared. */
  lines: number;
}

/**
 * Whether the peaks a species' lines were put on are as bright as its lines should be: what a scale built from few
 * lines may claim. For the peaks given to one spectrum of the species (first order, not clipped, not blended), r =
 * ln(area / tabulated intensity). On the right scale r scatters about a common level with σ = `fluxScatterLn`
 * (a heavy tail of weight `fluxOutlierProbability` for lines far off); for peaks the scale put there by chance, the
 * area is that of a random peak, so r scatters as ln area does over all line-like peaks together with ln intensity over
 * these lines, S² = Var(ln area) + Var(ln I) (at least σ²). The check is the ln likelihood ratio of the two normal
 * models, each at its own fitted level (the median, the mean): positive for lines that keep roughly their tabulated
 * order, negative when the species' strongest line sits on a faint peak beside a bright one. Spectra (I, II) are
 * compared separately; blended features use the summed intensity of their lines of that spectrum, a peak the peak finder
 * marked blended its whole area (at most about twice the line's), and clipped peaks (area a lower bound) are left out.
 */
export function fluxConsistency(
  identification: IdentifiedPeaks,
  lines: readonly SpectralLine[],
  elements: readonly string[],
  minSnr: number,
  options: Partial<ScaleCredibilityOptions> = {},
): FluxConsistency {
  const o = { ...SCALE_CREDIBILITY_DEFAULTS, ...options };
  const lineLike = identification.peaks.filter((p) => p.snr >= minSnr && p.area > 0);
  if (lineLike.length < o.minFluxLines) return { nats: 0, lines: 0 };
  const lnArea = lineLike.map((p) => Math.log(p.area));
  const areaVar = variance(lnArea);
  const intensityOf = new Map<string, number>();
  for (const l of lines) if (elements.includes(l.element)) intensityOf.set(lineKey(l.element, l.spectrum, l.wavelengthNm), l.intensity);
  let nats = 0;
  let compared = 0;
  for (const element of elements) {
    const groups = new Map<string, Array<{ area: number; intensity: number }>>();
    for (const p of lineLike) {
      const l = p.line;
      if (!l || l.element !== element || l.order !== undefined || l.molecular || p.saturated) continue;
      let intensity = intensityOf.get(lineKey(element, l.spectrum, l.wavelengthNm)) ?? 0;
      for (const w of l.blendedWithNm ?? []) intensity += intensityOf.get(lineKey(element, l.spectrum, w)) ?? 0;
      if (!(intensity > 0)) continue;
      const list = groups.get(l.spectrum) ?? [];
      list.push({ area: p.area, intensity });
      groups.set(l.spectrum, list);
    }
    for (const list of groups.values()) {
      if (list.length < o.minFluxLines) continue;
      const r = list.map((x) => Math.log(x.area) - Math.log(x.intensity));
      const s = o.fluxScatterLn;
      const S = Math.sqrt(Math.max(areaVar + variance(list.map((x) => Math.log(x.intensity))), s * s));
      const level = median(r);
      const mean = r.reduce((a, b) => a + b, 0) / r.length;
      for (const ri of r) {
        const present = (1 - o.fluxOutlierProbability) * normalPdf(ri - level, s) + o.fluxOutlierProbability * normalPdf(ri - level, S);
        nats += Math.log(present) - Math.log(normalPdf(ri - mean, S));
      }
      compared += list.length;
    }
  }
  return { nats, lines: compared };
}

function lineKey(element: string, spectrum: string, wavelengthNm: number): string {
  return `${element}|${spectrum}|${wavelengthNm.toFixed(3)}`;
}

function lnBeta(a: number, b: number): number {
  return logGamma(a) + logGamma(b) - logGamma(a + b);
}

function normalPdf(x: number, sigma: number): number {
  return Math.exp(-0.5 * (x / sigma) ** 2) / (sigma * Math.sqrt(2 * Math.PI));
}

function variance(values: readonly number[]): number {
  if (values.length < 2) return 0;
  const m = values.reduce((a, b) => a + b, 0) / values.length;
  return values.reduce((a, b) => a + (b - m) ** 2, 0) / (values.length - 1);
}

function median(values: readonly number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}
