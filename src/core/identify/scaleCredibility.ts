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
  /** Chance that one line's flux is off beyond the scatter (self-absorbed resonance line, table error). @default 0.15 */
  fluxOutlierProbability: number;
  /**
   * σ of such an outlier about the common level, in units of `fluxScatterLn`: 2, a factor of about 20 — lines off by
   * that much happen; a lamp's brightest line 10³ times above the level its other lines set does not. @default 2
   */
  fluxOutlierTail: number;
  /** Fewest lines of one spectrum for the flux check. @default 3 */
  minFluxLines: number;
}

export const SCALE_CREDIBILITY_DEFAULTS: ScaleCredibilityOptions = {
  brightShare: 0.05,
  unexplainedBeta: 6,
  fluxScatterLn: Math.SQRT2 * Math.log(3),
  fluxOutlierProbability: 0.15,
  fluxOutlierTail: 2,
  minFluxLines: 3,
};

/** Of the four brightest line-like peaks, the fewest a brightest-line scale's species must explain (see brightestExplained). */
export const MIN_BRIGHTEST_EXPLAINED = 3;

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

/**
 * How many of the `count` brightest line-like peaks some present species explains. The brightest-line search
 * (brightLineScales.ts) seeds its scales on the premise that a tube's brightest peaks are its gas's strongest lines; a
 * scale on which the species found leave two of the four brightest unexplained contradicts the premise that made it —
 * Balmer lines put on a mercury lamp's 404.7 and 435.8 nm lines with its 546.1 nm line, as bright as the one taken
 * for Hα, left over. Over four seeded sets of 40 rendered tubes (160 photos) no right answer had fewer than 3 of 4
 * explained on a brightest-line scale; the hydrogen scales that named mercury, krypton and xenon tubes had 2.
 */
export function brightestExplained(identification: IdentifiedPeaks, minSnr: number, count = 4): number {
  const top = identification.peaks
    .filter((p) => p.snr >= minSnr && p.area > 0)
    .sort((a, b) => b.area - a.area)
    .slice(0, count);
  // Fewer line-like peaks than `count`: the missing ones count as explained (nothing bright is left over).
  return count - top.filter((p) => !p.line).length;
}

export interface FluxConsistency {
  /** ln likelihood ratio of the lines' fluxes: "these are the species' lines" against "peaks at random". */
  nats: number;
  /** Lines compared. */
  lines: number;
}

/**
 * Whether the peaks a species' lines were put on are as bright as its lines should be: what a scale built from few
 * lines may claim. For the peaks given to one spectrum of the species (first order, not clipped), r = ln(area /
 * tabulated intensity). On the right scale r scatters about a common level with σ = `fluxScatterLn` (a wider tail,
 * `fluxOutlierTail` σ, of weight `fluxOutlierProbability` for lines far off). For peaks a scale put there by chance,
 * the area is that of a random peak: its ln area a draw from the photo's own line-like peaks (a kernel density estimate
 * of their ln areas). The check is the ln likelihood ratio of the two, the first at its fitted level (the median, one
 * nat for it): positive for lines that keep roughly their tabulated order, negative when the species' strongest line
 * sits on a faint peak beside a bright one, or one line is a thousand times above the level its others set. Spectra
 * (I, II) are compared separately; blended features use the summed intensity of their lines of that spectrum, a peak
 * the peak finder marked blended its whole area (at most about twice the line's), and clipped peaks (area a lower
 * bound) are left out.
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
  const lnArea = Float64Array.from(lineLike, (p) => Math.log(p.area));
  const bandwidth = kdeBandwidth(lnArea);
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
      const tail = o.fluxOutlierTail * s;
      const level = median(r);
      list.forEach((x, k) => {
        const present = (1 - o.fluxOutlierProbability) * normalPdf(r[k] - level, s) + o.fluxOutlierProbability * normalPdf(r[k] - level, tail);
        nats += Math.log(present) - Math.log(kdeDensity(lnArea, Math.log(x.area), bandwidth));
      });
      // The common level was fitted: one parameter, worth one nat (Akaike 1974).
      nats -= 1;
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

/** Gaussian kernel density estimate of `samples` at x. */
function kdeDensity(samples: Float64Array, x: number, h: number): number {
  let sum = 0;
  for (const v of samples) sum += normalPdf(x - v, h);
  return sum / samples.length;
}

/**
 * Silverman's rule of thumb, 0.9 · min(SD, IQR / 1.34) · n^(−1/5) (Silverman, *Density Estimation for Statistics and
 * Data Analysis*, 1986, eq. 3.31), at least KDE_MIN_BANDWIDTH: peak areas of one photo cluster, and a spiky estimate
 * would make any match to a cluster look improbable by chance.
 */
function kdeBandwidth(samples: Float64Array): number {
  const n = samples.length;
  const sorted = Float64Array.from(samples).sort();
  const mean = sorted.reduce((a, b) => a + b, 0) / n;
  const sd = Math.sqrt(sorted.reduce((a, b) => a + (b - mean) ** 2, 0) / Math.max(n - 1, 1));
  const q = (f: number) => sorted[Math.min(n - 1, Math.max(0, Math.round(f * (n - 1))))];
  const spread = Math.min(sd, (q(0.75) - q(0.25)) / 1.34) || sd;
  return Math.max(KDE_MIN_BANDWIDTH, 0.9 * spread * n ** -0.2);
}

/** Least kernel width for ln(area) (nats: a factor of 1.65). */
const KDE_MIN_BANDWIDTH = 0.5;

function median(values: readonly number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}
