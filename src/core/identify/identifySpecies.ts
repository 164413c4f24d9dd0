import { colourAllows, colourBandNm } from '../calibration/colourPrior.js';
import { assertFinite, invalid } from '../errors.js';
import { normalCdf } from '../render/lineSpread.js';
import type { Peak, SpectralLine } from '../types.js';
import { buildSpeciesTemplates, compareText, TEMPLATE_DEFAULTS, type SpeciesTemplate, type TemplateFeature, type TemplateOptions } from './speciesTemplates.js';
import { fitMixture, matchTemplate, type MixtureFit, type TemplateMatch } from './templateMatch.js';

/** A peak with a calibrated wavelength (the identification works on the wavelength scale). */
export interface CalibratedPeak extends Peak {
  wavelengthNm: number;
  wavelengthUncertaintyNm: number;
  /** FWHM on the wavelength scale, where known. */
  fwhmNm?: number;
}

export interface MissingLineOptions {
  /** A feature counts as missing only when predicted at least this many times above the detection limit. @default 3 */
  minExcess: number;
  /**
   * σ of ln(actual / predicted flux): the lamp's scatter (a factor of 3), the scale estimated from few lines and the
   * camera's colour response together. @default ln 3
   */
  scatterLn: number;
  /**
   * Chance that any one line is absent whatever its prediction: a wrong table entry, a filter, a blend, or a
   * resonance line whose self-absorption makes every prediction from it unreliable. @default 0.15
   */
  outlierProbability: number;
  /** The camera's sensitivity falls towards the ends of its range: predictions taper to 0 over this share of it. @default 0.05 */
  edgeFraction: number;
}

export interface IdentifyOptions extends Omit<TemplateOptions, 'rangeNm' | 'resolutionNm'> {
  /** The line list to explain the peaks with (every species in it is a candidate; band heads make molecular ones). */
  lines: readonly SpectralLine[];
  /** Wavelength range the spectrum covers (nm); peaks outside it are left out. @default the peaks' span widened by 5 % each side */
  rangeNm?: readonly [number, number];
  /**
   * Where the camera is known to see lines: absent lines are predicted only here. A camera's sensitivity beyond its
   * outermost detected lines is unknown (infrared-cut filters, falling blue response), so by default this is the span
   * of the line-like peaks widened by 3 resolution elements, and at least `surelySeenNm`, within `rangeNm`.
   */
  sensitiveRangeNm?: readonly [number, number];
  /** What any colour camera sees (common practice, no source). @default [420, 680] */
  surelySeenNm?: readonly [number, number];
  /** Calibration uncertainty (e.g. its RMS, nm) added in quadrature to each peak's own. @default 0.15 */
  systematicNm?: number;
  /** Instrument line width (FWHM, nm) for merging close lines. @default the median fwhmNm of the peaks, else 1 */
  resolutionNm?: number;
  /** A peak can match a feature within this many combined standard uncertainties. @default 4 */
  matchSigma?: number;
  /**
   * Evidence (ln of the Bayes factor) a species needs to be judged present: the prior odds against any one species of
   * the list being in the tube, and the look-elsewhere cost of trying them all. The score is the posterior
   * probability 1/(1 + e^−(evidence − presentEvidence)): 0.5 at the threshold. @default 6
   */
  presentEvidence?: number;
  /**
   * A peak the peak finder marked as blended sits between its components, and a clipped peak's flat top hides its
   * centre and any neighbour under it: σ grows by this fraction of its FWHM. @default 0.25
   */
  blendWidening?: number;
  /** Weakest peak area the peak finder could have found. @default 0.8 × the smallest area found */
  detectionLimitArea?: number;
  missing?: Partial<MissingLineOptions>;
  /** Peaks below this SNR are not taken as evidence of emission lines ("no emission lines found"). @default 5 */
  minLineSnr?: number;
  /** Peaks broader than this (nm) are continuum structure, not lines. @default 12 */
  maxLineFwhmNm?: number;
  /**
   * Evidence (nats) subtracted from a species before every decision, e.g. for the species whose own lines set a
   * self-calibrated scale. @default {}
   */
  evidencePenalty?: Readonly<Record<string, number>>;
}

export const IDENTIFY_DEFAULTS = {
  systematicNm: 0.15,
  matchSigma: 4,
  presentEvidence: 6,
  blendWidening: 0.25,
  minLineSnr: 5,
  maxLineFwhmNm: 12,
  missing: { minExcess: 3, scatterLn: Math.log(3), outlierProbability: 0.15, edgeFraction: 0.05 } as MissingLineOptions,
  /** The rank term trusts the template's dominance only this far (a table can be wrong). */
  maxDominance: 0.8,
  /** "Brightest" needs this margin over the next peak (equal peaks carry no rank information). */
  brightestMargin: 1.1,
  /** Species enter the stepwise selection this much below `presentEvidence` (nats). */
  entryMargin: 2,
  surelySeenNm: [420, 680] as readonly [number, number],
} as const;

export interface MatchedLine {
  element: string;
  spectrum: string;
  wavelengthNm: number;
  /** Other lines of the same species merged into this feature at the instrument's resolution (nm). */
  blendedWithNm?: number[];
  /** A molecular band head rather than an atomic line. */
  molecular?: boolean;
  /** Diffraction order, when not the first (a second-order image: of a line seen in first order too, or told by its colour). */
  order?: number;
}

/** The parts of a species' evidence (nats). */
export interface EvidenceTerms {
  /** Peak positions: the mixture likelihood ratio gained with this species. */
  position: number;
  /** Its strongest feature is (or is not) the brightest of the peaks no other species explains. */
  rank: number;
  /** Lines predicted well above the detection limit but absent (≤ 0). */
  missing: number;
  /** Subtracted by the caller (self-calibration). */
  penalty: number;
}

export interface SpeciesResult {
  element: string;
  /** A molecular band system (e.g. N2), not an element's atomic lines. */
  molecular: boolean;
  /** 0–1: posterior probability that this species contributes lines (0.5 at the presence threshold). */
  score: number;
  present: boolean;
  /** ln of the Bayes factor: with this species against without it, the other present species given. */
  evidence: number;
  evidenceTerms: EvidenceTerms;
  /** Peaks attributed to this species (present species), or that would be (absent ones). */
  linesMatched: number;
  /** Lines of this species that should have been clearly visible but are absent (nm). */
  missingLinesNm: number[];
  /** Share of the total peak flux (area) its peaks carry (0 when not present). */
  fluxFraction: number;
}

export interface IdentifiedPeak extends CalibratedPeak {
  line: MatchedLine | null;
  /** Distance to the line's feature in combined standard uncertainties. */
  matchSigma?: number;
  /** Probability that the peak comes from the species named in `line` (or from none, for an unexplained peak). */
  confidence: number;
}

export interface Identification {
  /** Present species first, then by score. */
  species: SpeciesResult[];
  peaks: IdentifiedPeak[];
  /** Peaks no present species explains (possible contaminant, molecular band, stray light), brightest first. */
  unexplained: IdentifiedPeak[];
  /** Share of the total peak flux that no present species explains. */
  unexplainedFluxFraction: number;
  /** False when no peak looks like an emission line (none, or only weak or broad ones): nothing is guessed then. */
  emissionLinesFound: boolean;
  /** What was used: range, systematic uncertainty, resolution, detection limit. */
  settings: {
    rangeNm: [number, number];
    sensitiveRangeNm: [number, number];
    systematicNm: number;
    resolutionNm: number;
    detectionLimitArea: number;
    presentEvidence: number;
  };
  /**
   * ln of the posterior odds of the whole explanation (the present set) against "no species": the mixture's likelihood
   * ratio with every present species' rank and missing terms, less the prior cost `presentEvidence` per species.
   * Comparable between wavelength scales of the same peaks (self-calibration picks the scale with the largest).
   */
  modelEvidence: number;
  warnings: string[];
}

export const NO_EMISSION_LINES = 'no emission lines found';

/** Flux-class edges as fractions of the brightest peak: ≥ 5 %, 0.5–5 %, below 0.5 %. */
const FLUX_CLASS_EDGES = [0.05, 0.005];

/**
 * A scale set by one matched feature predicts only the features tabulated stronger than it when that feature may be
 * a resonance line (Na D, Li 670.8 nm), whose self-absorption in a lamp makes its ratio to weaker lines vary by orders
 * of magnitude; but a weak line seen without the strong ones is not that species. Two or more features predict all,
 * and so does one feature whose lines are all listed as not persistent (see mayBeResonanceLine).
 */
const FULL_SCALE_FEATURES = 2;

/**
 * Whether a line may be a resonance line, for the one-feature rule above. The resonance lines of the visible range
 * are the persistent lines of their spectra (flag P: the NIST Handbook's persistent lines, the last to fade as the
 * element's amount falls; a fact of the trade, no source); a line listed without P is not one. Lines of an imported
 * list carry no such flag and may be. A single N II line (flag S) that fits a peak the list cannot otherwise explain
 * now predicts N II's other lines, so N is not named on that one line (rendered Ar + Hg tubes, where a mercury
 * line the list lacks sits 0.4 nm from N II 567.956 nm).
 */
function mayBeResonanceLine(line: SpectralLine): boolean {
  const persistent = (line as { persistent?: unknown }).persistent;
  return typeof persistent !== 'boolean' || persistent;
}

/**
 * A spectrum of a species other than its main one (most matched features) predicts missing lines only from this many
 * matched features on: one ion line among a neutral spectrum's lines is as likely a coincidence as a sign of the ion.
 */
const MINOR_SPECTRUM_FEATURES = 2;

/**
 * Which species explain a calibrated peak table.
 *
 * Model: each peak is a line of one of the present species or "unexplained" (uniform over the covered range W). For
 * species s, a peak at λ has likelihood ratio q = W Σ_f w_f 𝒩(λ; λ_f, σ) against the uniform (see templateMatch.ts):
 * features f are its lines merged at the instrument's resolution, w_f ∝ √(tabulated flux) a tempered prior on which
 * line a peak is, σ the peak's wavelength uncertainty, the calibration's and the blend's in quadrature. The shares of
 * the mixture are fitted by EM; a species' evidence is the gain in ln L when it joins the mixture (a Bayes factor at
 * the fitted shares, e.g. Gregory, *Bayesian Logical Data Analysis for the Physical Sciences*, 2005, ch. 3), plus two
 * terms that use intensities only coarsely, because real lamps differ from tables by factors of several:
 * - rank: under "no such species" the peak that lands on its strongest feature has a uniformly random flux rank
 *   among the n peaks no other species explains; under "present" it is the brightest with probability q (from the
 *   template, the tabulated lead of that feature against the lamp's and the camera's scatter, capped at 0.8).
 *   Likelihood ratio n·q + 1 − q
 *   when it is the brightest, 1 − q when it is not. This is what makes a sodium lamp (one blended doublet) count.
 * - missing: the matched peaks set a flux scale per spectrum (lower quartile of area / tabulated flux); features predicted
 *   well above the detection limit (locally raised beside a bright peak) but with no peak near them cost −ln(ε + (1 − ε) Φ(−ln k / s)), k the predicted excess over
 *   the limit, s the scatter of ln flux (widened by the scale's own), ε the chance of a wrong table entry — at most
 *   −ln ε (1.9 nats) each.
 * Species are added stepwise (largest evidence first) while their evidence reaches `presentEvidence` less a small
 * entry margin, then any whose evidence given the others is below `presentEvidence` are removed, weakest first. Every peak goes to the component with the largest
 * responsibility.
 */
export function identifySpecies(peaks: readonly CalibratedPeak[], options: IdentifyOptions): Identification {
  const o = { ...IDENTIFY_DEFAULTS, ...options, missing: { ...IDENTIFY_DEFAULTS.missing, ...options.missing } };
  if (!Array.isArray(options.lines)) throw invalid('lines', 'an array of spectral lines', options.lines);
  assertFinite('systematicNm', o.systematicNm, 0);
  assertFinite('presentEvidence', o.presentEvidence);
  const warnings: string[] = [];

  const withWavelength = peaks.filter((p) => Number.isFinite(p.wavelengthNm) && Number.isFinite(p.area));
  if (withWavelength.length < peaks.length) warnings.push(`${peaks.length - withWavelength.length} peak(s) without a wavelength were left out`);
  const rangeNm = options.rangeNm ? ([options.rangeNm[0], options.rangeNm[1]] as [number, number]) : spanOf(withWavelength);
  assertFinite('rangeNm[0]', rangeNm[0], 0);
  assertFinite('rangeNm[1]', rangeNm[1], rangeNm[0]);
  const usable = withWavelength.filter((p) => p.wavelengthNm >= rangeNm[0] && p.wavelengthNm <= rangeNm[1]);
  if (usable.length < withWavelength.length) {
    const k = withWavelength.length - usable.length;
    warnings.push(`${k} peak(s) outside ${rangeNm[0].toFixed(0)}–${rangeNm[1].toFixed(0)} nm left out (zero order, other orders, or beyond the scale)`);
  }
  const widthNm = Math.max(rangeNm[1] - rangeNm[0], 1);
  const widths = usable.map((p) => p.fwhmNm).filter((w): w is number => w !== undefined && Number.isFinite(w) && w > 0);
  const resolutionNm = options.resolutionNm ?? (widths.length ? median(widths) : 1);
  const minArea = usable.reduce((m, p) => (p.area > 0 ? Math.min(m, p.area) : m), Infinity);
  const detectionLimitArea = options.detectionLimitArea ?? (Number.isFinite(minArea) ? 0.8 * minArea : 0);
  const lineLike = usable.filter((p) => p.snr >= o.minLineSnr && !((p.fwhmNm ?? 0) > o.maxLineFwhmNm));
  // Second-order images of bright lines reach far into the red on a first-order scale, and faint peaks may be noise
  // or stray light: neither says how far the camera sees, so the sensitive range spans the first-order peaks with
  // at least 1 % of the brightest one's flux.
  const brightestLine = lineLike.reduce((m, p) => Math.max(m, p.area), 0);
  const firstOrder = lineLike.filter(
    (p) =>
      p.area >= 0.01 * brightestLine &&
      !secondOrderByColour(p) &&
      !lineLike.some(
        (q) =>
          q.area >= 3 * p.area &&
          Math.abs(p.wavelengthNm / 2 - q.wavelengthNm) <=
            o.matchSigma * Math.sqrt((p.wavelengthUncertaintyNm / 2) ** 2 + q.wavelengthUncertaintyNm ** 2 + o.systematicNm ** 2) +
              0.25 * (q.fwhmNm ?? resolutionNm),
      ),
  );
  const sensitiveRangeNm = sensitiveRange(options.sensitiveRangeNm, firstOrder, rangeNm, resolutionNm, o.surelySeenNm);
  const settings = { rangeNm, sensitiveRangeNm, systematicNm: o.systematicNm, resolutionNm, detectionLimitArea, presentEvidence: o.presentEvidence };

  const templates = buildSpeciesTemplates(options.lines, {
    rangeNm,
    resolutionNm,
    mergeFraction: o.mergeFraction,
    ionWeight: o.ionWeight,
    minRelativeIntensity: o.minRelativeIntensity,
    weightExponent: o.weightExponent,
    scatterLn: o.scatterLn,
  });

  if (lineLike.length === 0) {
    const why =
      usable.length === 0
        ? 'the spectrum has no peaks'
        : `${usable.length} peak(s), none with SNR ≥ ${o.minLineSnr} and FWHM ≤ ${o.maxLineFwhmNm} nm: noise or continuum only`;
    warnings.push(`${NO_EMISSION_LINES}: ${why}; no species is named`);
    return {
      species: templates.map((t) => emptyResult(t, 0)),
      peaks: usable.map((p) => ({ ...p, line: null, confidence: 1 })),
      unexplained: [],
      unexplainedFluxFraction: usable.length ? 1 : 0,
      emissionLinesFound: false,
      settings,
      modelEvidence: 0,
      warnings,
    };
  }

  const n = usable.length;
  const lambda = Float64Array.from(usable, (p) => p.wavelengthNm);
  const sigma = Float64Array.from(usable, (p) => {
    const u = Number.isFinite(p.wavelengthUncertaintyNm) ? p.wavelengthUncertaintyNm : 0;
    const blend = p.blended || p.saturated ? o.blendWidening * (p.fwhmNm ?? resolutionNm) : 0;
    return Math.sqrt(u * u + o.systematicNm ** 2 + blend * blend) || 1e-3;
  });
  const area = Float64Array.from(usable, (p) => Math.max(p.area, 0));
  const totalFlux = area.reduce((s, a) => s + a, 0) || 1;
  // Flux classes relative to the brightest peak (each class has its own mixture shares, see fitMixture).
  const brightest = area.reduce((m, a) => Math.max(m, a), 0) || 1;
  const classes = Int32Array.from(area, (a) => FLUX_CLASS_EDGES.filter((edge) => a < edge * brightest).length);
  const tables: TemplateMatch[] = templates.map((t) => matchTemplate(t, lambda, sigma, widthNm, o.matchSigma));
  // A peak the camera saw as blue is no first-order line beyond the red: no line of any species there (labelSecondOrder
  // may still name it as the second-order image of a line at half its reading).
  usable.forEach((p, i) => {
    if (secondOrderByColour(p)) for (const t of tables) t.ratio[i] = 0;
  });
  // A species none of whose features any peak reaches cannot gain evidence: skip its fits.
  const reachable = tables.map((t) => t.ratio.some((r) => r > 0));

  const fitCache = new Map<string, MixtureFit>();
  const fit = (set: readonly number[]): MixtureFit => {
    const key = [...set].sort((a, b) => a - b).join(',');
    let f = fitCache.get(key);
    if (!f) {
      f = fitMixture(
        [...set].sort((a, b) => a - b).map((s) => tables[s].ratio),
        n,
        { iterations: 200, tolerance: 1e-5, classes, classCount: FLUX_CLASS_EDGES.length + 1 },
      );
      fitCache.set(key, f);
    }
    return f;
  };
  const sortedIndex = (set: readonly number[], s: number) => [...set].sort((a, b) => a - b).indexOf(s);

  const terms = (s: number, set: readonly number[]): { rank: number; missing: number; missingNm: number[]; matched: number } => {
    const f = fit(set);
    const k = sortedIndex(set, s);
    const own = f.responsibilities[k];
    const others = new Float64Array(n);
    set.forEach((c) => {
      if (c === s) return;
      const r = f.responsibilities[sortedIndex(set, c)];
      for (let i = 0; i < n; i++) others[i] += r[i];
    });
    const t = templates[s];
    const table = tables[s];
    // Rank of the peak on the strongest feature among the peaks the others leave.
    let rank = 0;
    const available: number[] = [];
    for (let i = 0; i < n; i++) if (others[i] < 0.5) available.push(i);
    const onTop = available.filter((i) => table.feature[i] === t.topFeature);
    if (onTop.length > 0 && onTop.length < available.length) {
      const q = Math.min(t.topDominance, o.maxDominance);
      let top = 0;
      let rest = 0;
      for (const i of available) {
        if (table.feature[i] === t.topFeature) top = Math.max(top, area[i]);
        else rest = Math.max(rest, area[i]);
      }
      // Within the margin the order carries no information (equal peaks).
      if (top > o.brightestMargin * rest) rank = Math.log(available.length * q + 1 - q);
      else if (rest > o.brightestMargin * top) rank = Math.log(1 - q);
    }
    // Flux scale from the features this species' peaks sit on, then the features that should show but do not.
    const featureFlux = new Map<number, number>();
    let matched = 0;
    for (let i = 0; i < n; i++) {
      if (own[i] < 0.5 || table.feature[i] < 0) continue;
      matched++;
      featureFlux.set(table.feature[i], (featureFlux.get(table.feature[i]) ?? 0) + area[i]);
    }
    // Per spectrum: the scales of Ne I and Ne II (or of two band systems) are unrelated, and the balance between them
    // varies from tube to tube, so a spectrum none of whose features is seen predicts nothing.
    let missing = 0;
    const missingNm: number[] = [];
    if (featureFlux.size > 0 && detectionLimitArea > 0) {
      // Scale of each spectrum from the features it dominates (see FULL_SCALE_FEATURES for a scale from one).
      const ratios = new Map<string, number[]>();
      const strongestSeen = new Map<string, number>();
      const mayBeResonance = new Map<string, boolean>();
      for (const [fi, flux] of featureFlux) {
        const f = t.features[fi];
        if (f.purity < 0.8) continue;
        const list = ratios.get(f.spectrum) ?? [];
        list.push(flux / f.relative);
        ratios.set(f.spectrum, list);
        strongestSeen.set(f.spectrum, Math.max(strongestSeen.get(f.spectrum) ?? 0, f.relative));
        mayBeResonance.set(f.spectrum, (mayBeResonance.get(f.spectrum) ?? false) || f.lines.some(mayBeResonanceLine));
      }
      // The lower quartile, not the median: the lines that were seen are the ones that came out bright (selection),
      // and a scale set too high would call faint lines missing.
      const scales = new Map(
        [...ratios].map(([key, list]) => [
          key,
          { scale: lowerQuartile(list), count: list.length, above: list.length >= FULL_SCALE_FEATURES || !mayBeResonance.get(key) ? 0 : strongestSeen.get(key)! },
        ]),
      );
      // The species' main spectrum here is the one with the most matched features. A single feature of another
      // spectrum (an ion line beside the neutral ones) may as well be a coincidence — a line the list lacks, another
      // species, a scale slightly off at the band's end — whose peak the mixture could leave unexplained at little
      // cost; it predicts no missing lines (see MINOR_SPECTRUM_FEATURES).
      let mainCount = 0;
      for (const v of scales.values()) mainCount = Math.max(mainCount, v.count);
      const m = o.missing;
      const [slo, shi] = sensitiveRangeNm;
      const edge = m.edgeFraction * (shi - slo);
      t.features.forEach((feature, fi) => {
        const known = scales.get(feature.spectrum);
        if (known === undefined || featureFlux.has(fi)) return;
        if (known.count < MINOR_SPECTRUM_FEATURES && known.count < mainCount) return;
        const { scale, count, above } = known;
        if (feature.relative <= above) return;
        const taper = edge > 0 ? Math.min(1, (feature.wavelengthNm - slo) / edge, (shi - feature.wavelengthNm) / edge) : 1;
        // A line in the wing of a bright neighbour is harder to find: the local limit is a fifth of that neighbour.
        let limit = detectionLimitArea;
        let seen = false;
        usable.forEach((p, i) => {
          const d = Math.abs(p.wavelengthNm - feature.wavelengthNm);
          const width = p.fwhmNm ?? resolutionNm;
          if (d <= o.matchSigma * Math.sqrt(sigma[i] ** 2 + feature.spreadSigmaNm ** 2) + 0.5 * width) seen = true;
          if (d <= 1.5 * Math.max(width, resolutionNm)) limit = Math.max(limit, 0.2 * area[i]);
        });
        if (seen) return;
        const excess = (scale * feature.relative * Math.max(taper, 0)) / limit;
        if (!(excess >= m.minExcess)) return;
        // The scale itself rests on `count` lines: its own scatter adds, σ √(1 + 1/count).
        const spread = m.scatterLn * Math.sqrt(1 + 1 / count);
        const pAbsent = m.outlierProbability + (1 - m.outlierProbability) * normalCdf(-Math.log(excess) / spread);
        missing += Math.log(pAbsent);
        missingNm.push(Number(feature.lines[0].wavelengthNm.toFixed(3)));
      });
    }
    return { rank, missing, missingNm, matched };
  };

  const penaltyOf = (s: number) => options.evidencePenalty?.[templates[s].element] ?? 0;
  const evidenceOf = (s: number, set: readonly number[]): { total: number; terms: EvidenceTerms; missingNm: number[]; matched: number } => {
    const withS = set.includes(s) ? [...set] : [...set, s];
    const without = withS.filter((c) => c !== s);
    const position = fit(withS).logLikelihoodRatio - fit(without).logLikelihoodRatio;
    const t = terms(s, withS);
    const penalty = penaltyOf(s);
    return {
      total: position + t.rank + t.missing - penalty,
      terms: { position, rank: t.rank, missing: t.missing, penalty },
      missingNm: t.missingNm,
      matched: t.matched,
    };
  };

  // Upper bound on what a species can add to the mixture: its new density (1 − π)D_i + π q_i never exceeds
  // max(D_i, q_i), and the rank term never exceeds ln(n q + 1 − q) ≤ ln n. Species that cannot win are not fitted.
  const bound = (s: number, set: readonly number[]): number => {
    const f = fit(set);
    const order = [...set].sort((a, b) => a - b);
    let gain = 0;
    for (let i = 0; i < n; i++) {
      const row = f.fractions[classes[i]];
      let d = row[order.length];
      order.forEach((c, k) => (d += row[k] * tables[c].ratio[i]));
      const q = tables[s].ratio[i];
      if (q > d) gain += Math.log(q / d);
    }
    return gain + Math.log(n) - penaltyOf(s);
  };

  // Stepwise selection: species enter while their evidence reaches the entry level (a little below the presence
  // threshold, so that emitters that share a spectrum's peaks — air's N, O and N2 in a leaky tube — can support each
  // other), then any below the threshold given the others leave, weakest first; repeated at the threshold until
  // nothing changes.
  const present: number[] = [];
  const addWhile = (threshold: number): boolean => {
    let added = false;
    for (;;) {
      let best = -1;
      let bestE = -Infinity;
      for (let s = 0; s < templates.length; s++) {
        if (present.includes(s) || !reachable[s]) continue;
        if (bound(s, present) < Math.max(bestE, threshold)) continue;
        const e = evidenceOf(s, present).total;
        if (e > bestE) {
          bestE = e;
          best = s;
        }
      }
      if (best < 0 || bestE < threshold) return added;
      present.push(best);
      added = true;
    }
  };
  const removeBelow = (threshold: number): boolean => {
    let removed = false;
    for (;;) {
      let worst = -1;
      let worstE = Infinity;
      for (const s of present) {
        const e = evidenceOf(s, present).total;
        if (e < worstE) {
          worstE = e;
          worst = s;
        }
      }
      if (worst < 0 || worstE >= threshold) return removed;
      present.splice(present.indexOf(worst), 1);
      removed = true;
    }
  };
  addWhile(o.presentEvidence - o.entryMargin);
  removeBelow(o.presentEvidence);
  for (let round = 0; round < 5; round++) {
    const changed = addWhile(o.presentEvidence);
    if (!removeBelow(o.presentEvidence) && !changed) break;
  }

  const finalFit = fit(present);
  const order = [...present].sort((a, b) => a - b);
  const identified: IdentifiedPeak[] = usable.map((p, i) => {
    let bestC = -1;
    let bestR = finalFit.responsibilities[order.length][i];
    order.forEach((s, k) => {
      const r = finalFit.responsibilities[k][i];
      if (r > bestR) {
        bestR = r;
        bestC = s;
      }
    });
    if (bestC < 0) return { ...p, line: null, confidence: bestR };
    const t = templates[bestC];
    const table = tables[bestC];
    const feature = t.features[table.feature[i]];
    const nearest = [...feature.lines].sort((a, b) => Math.abs(a.wavelengthNm - p.wavelengthNm) - Math.abs(b.wavelengthNm - p.wavelengthNm))[0];
    const others = feature.lines.filter((l) => l !== nearest).map((l) => l.wavelengthNm);
    const line: MatchedLine = { element: t.element, spectrum: nearest.spectrum, wavelengthNm: nearest.wavelengthNm };
    if (others.length) line.blendedWithNm = others.sort((a, b) => a - b);
    if (t.molecular) line.molecular = true;
    return { ...p, line, matchSigma: table.z[i], confidence: bestR };
  });
  labelSecondOrder(identified, area, sigma, present.map((s) => ({ template: templates[s], table: tables[s] })), o.matchSigma, options.lines);
  resolveClaimedBlends(identified);

  const fluxOf = new Map<string, number>();
  for (let i = 0; i < n; i++) {
    const l = identified[i].line;
    if (l) fluxOf.set(l.element, (fluxOf.get(l.element) ?? 0) + area[i]);
  }
  const species: SpeciesResult[] = templates.map((t, s) => {
    const isPresent = present.includes(s);
    if (!reachable[s]) return emptyResult(t, logistic(-o.presentEvidence - penaltyOf(s)));
    const e = evidenceOf(s, present);
    return {
      element: t.element,
      molecular: t.molecular,
      score: logistic(e.total - o.presentEvidence),
      present: isPresent,
      evidence: e.total,
      evidenceTerms: e.terms,
      linesMatched: isPresent ? identified.filter((p) => p.line?.element === t.element).length : e.matched,
      missingLinesNm: e.missingNm,
      fluxFraction: isPresent ? (fluxOf.get(t.element) ?? 0) / totalFlux : 0,
    };
  });
  species.sort((a, b) => Number(b.present) - Number(a.present) || b.score - a.score || compareText(a.element, b.element));

  const unexplained = identified.filter((p) => !p.line).sort((a, b) => b.area - a.area);
  const unexplainedFluxFraction = unexplained.reduce((s, p) => s + Math.max(p.area, 0), 0) / totalFlux;
  if (present.length === 0) {
    warnings.push('no species of the line list explains these peaks convincingly; check the calibration, or bring a bigger line list');
  } else if (unexplainedFluxFraction > 0.1) {
    warnings.push(
      `${Math.round(unexplainedFluxFraction * 100)} % of the line flux is not explained by any species of the line list ` +
        `(${unexplained.length} peak${unexplained.length === 1 ? '' : 's'}; see the unexplained list)`,
    );
  }
  let modelEvidence = finalFit.logLikelihoodRatio;
  for (const s of present) {
    const t = terms(s, present);
    modelEvidence += t.rank + t.missing - penaltyOf(s) - o.presentEvidence;
  }
  return { species, peaks: identified, unexplained, unexplainedFluxFraction, emissionLinesFound: true, settings, modelEvidence, warnings };
}

/**
 * Beyond this first-order reading (nm) a peak whose colour rules its reading out but allows half of it is
 * second-order light (colourPrior.ts: a mostly blue peak lies short of 500–530 nm; light beyond the red reaches a
 * colour sensor, if at all, through its red filter or all three alike, never mostly the blue), as the order-2 image
 * of a 350–470 nm line is: blue, at 700–940 nm on a first-order scale.
 */
export const SECOND_ORDER_COLOUR_MIN_NM = 700;

/** See SECOND_ORDER_COLOUR_MIN_NM. Peaks without colour (a spectrum CSV of one channel) and saturated ones are never flagged. */
export function secondOrderByColour(p: CalibratedPeak): boolean {
  if (!p.rgb || p.saturated || !(p.wavelengthNm > SECOND_ORDER_COLOUR_MIN_NM)) return false;
  const band = colourBandNm(p.rgb);
  return band !== null && !colourAllows(band, p.wavelengthNm) && colourAllows(band, p.wavelengthNm / 2);
}

/**
 * A grating sends every line into the second order too, at twice its first-order position on a scale calibrated in
 * order 1 (mλ = d(sin α + sin β)): an unexplained peak at λ whose λ/2 is a line of a present species, seen itself in
 * first order at least 3× brighter, is that line's second order; so is a peak blue beyond the red (secondOrderByColour)
 * at half whose reading a present species has a listed line, seen in first order or not.
 */
function labelSecondOrder(
  identified: IdentifiedPeak[],
  area: Float64Array,
  sigma: Float64Array,
  present: ReadonlyArray<{ template: SpeciesTemplate; table: TemplateMatch }>,
  matchSigma: number,
  lines: readonly SpectralLine[],
): void {
  const presentElements = new Set(present.map((s) => s.template.element));
  const strongest = new Map<string, number>();
  for (const l of lines) if (presentElements.has(l.element)) strongest.set(l.element, Math.max(strongest.get(l.element) ?? 0, l.intensity));
  identified.forEach((p, i) => {
    if (p.line) return;
    const half = p.wavelengthNm / 2;
    for (const { template, table } of present) {
      for (let j = 0; j < identified.length; j++) {
        const first = identified[j];
        if (first.line?.element !== template.element || first.line.order !== undefined || area[j] < 3 * area[i]) continue;
        const f = template.features[table.feature[j]];
        const tol = matchSigma * Math.sqrt((sigma[i] / 2) ** 2 + f.spreadSigmaNm ** 2 + sigma[j] ** 2);
        if (Math.abs(half - first.wavelengthNm) > tol) continue;
        identified[i] = { ...p, line: secondOrderLine(first.line, f, half, p.fwhmNm), matchSigma: Math.abs(half - first.wavelengthNm) / tol * matchSigma, confidence: 1 };
        return;
      }
    }
    // Blue beyond the red is second-order light for certain: its line need not show in first order (it may lie
    // short of the band's blue end), so the present species' listed lines at half the reading are taken directly,
    // the strongest of its species within the tolerance.
    if (secondOrderByColour(p)) {
      const tol = matchSigma * (sigma[i] / 2);
      let best: SpectralLine | undefined;
      for (const l of lines) {
        if (!presentElements.has(l.element) || Math.abs(l.wavelengthNm - half) > tol) continue;
        const rel = l.intensity / (strongest.get(l.element) || 1);
        if (!best || rel > best.intensity / (strongest.get(best.element) || 1)) best = l;
      }
      if (best) {
        identified[i] = {
          ...p,
          line: { element: best.element, spectrum: best.spectrum, wavelengthNm: best.wavelengthNm, order: 2 },
          matchSigma: (Math.abs(half - best.wavelengthNm) / (sigma[i] / 2)) || 0,
          confidence: 1,
        };
        return;
      }
    }
  });
}

/**
 * The line a second-order image at `halfNm` (half its first-order reading) shows of the first-order feature it
 * doubles. In order 2 the lines stand twice as far apart on the scale while the image is as wide as any, so a blend
 * of first order may be resolved there: the member line nearest half the reading is named, blended only with the
 * members closer to it than the image's width in first-order wavelength (half its width on the scale). Without a
 * width the first order's blend is kept.
 */
function secondOrderLine(first: MatchedLine, feature: TemplateFeature, halfNm: number, fwhmNm: number | undefined): MatchedLine {
  if (!(fwhmNm !== undefined && fwhmNm > 0) || feature.lines.length < 2) return { ...first, order: 2 };
  const nearest = [...feature.lines].sort((a, b) => Math.abs(a.wavelengthNm - halfNm) - Math.abs(b.wavelengthNm - halfNm))[0];
  const others = feature.lines.filter((l) => l !== nearest && Math.abs(l.wavelengthNm - nearest.wavelengthNm) < fwhmNm / 2).map((l) => l.wavelengthNm);
  const line: MatchedLine = { element: first.element, spectrum: nearest.spectrum, wavelengthNm: nearest.wavelengthNm, order: 2 };
  if (others.length) line.blendedWithNm = others.sort((a, b) => a - b);
  if (first.molecular) line.molecular = true;
  return line;
}

/**
 * A line another peak is named after (same species, same order) is resolved there, so it is no part of a blend named
 * at this one: e.g. in order 2 the images of Hg I 433.922 and 434.749 nm stand apart, though the first's width would
 * allow the second.
 */
function resolveClaimedBlends(identified: IdentifiedPeak[]): void {
  const key = (element: string, wavelengthNm: number, order: number | undefined) => `${element} ${order ?? 1} ${wavelengthNm.toFixed(4)}`;
  const named = new Set(identified.filter((p) => p.line).map((p) => key(p.line!.element, p.line!.wavelengthNm, p.line!.order)));
  identified.forEach((p, i) => {
    const line = p.line;
    if (!line?.blendedWithNm) return;
    const kept = line.blendedWithNm.filter((w) => !named.has(key(line.element, w, line.order)));
    if (kept.length === line.blendedWithNm.length) return;
    const { blendedWithNm: _all, ...rest } = line;
    identified[i] = { ...p, line: kept.length ? { ...rest, blendedWithNm: kept } : rest };
  });
}

/** A species no peak comes near: no evidence either way (or, with no emission lines at all, nothing to score). */
function emptyResult(t: SpeciesTemplate, score: number): SpeciesResult {
  return {
    element: t.element,
    molecular: t.molecular,
    score,
    present: false,
    evidence: 0,
    evidenceTerms: { position: 0, rank: 0, missing: 0, penalty: 0 },
    linesMatched: 0,
    missingLinesNm: [],
    fluxFraction: 0,
  };
}

function logistic(x: number): number {
  return 1 / (1 + Math.exp(-x));
}

function sensitiveRange(
  given: readonly [number, number] | undefined,
  lineLike: readonly CalibratedPeak[],
  rangeNm: [number, number],
  resolutionNm: number,
  surelySeen: readonly [number, number],
): [number, number] {
  if (given) return [Math.max(given[0], rangeNm[0]), Math.min(given[1], rangeNm[1])];
  if (lineLike.length === 0) return [...rangeNm];
  let lo = surelySeen[0] + 3 * resolutionNm;
  let hi = surelySeen[1] - 3 * resolutionNm;
  for (const p of lineLike) {
    lo = Math.min(lo, p.wavelengthNm);
    hi = Math.max(hi, p.wavelengthNm);
  }
  return [Math.max(rangeNm[0], lo - 3 * resolutionNm), Math.min(rangeNm[1], hi + 3 * resolutionNm)];
}

function spanOf(peaks: readonly CalibratedPeak[]): [number, number] {
  if (peaks.length === 0) return [400, 700];
  let lo = Infinity;
  let hi = -Infinity;
  for (const p of peaks) {
    lo = Math.min(lo, p.wavelengthNm);
    hi = Math.max(hi, p.wavelengthNm);
  }
  const pad = Math.max(0.05 * (hi - lo), 5);
  return [Math.max(1, lo - pad), hi + pad];
}

/** The 25th percentile (linear interpolation); the minimum of one or two values. */
function lowerQuartile(values: readonly number[]): number {
  const s = [...values].sort((a, b) => a - b);
  if (s.length <= 2) return s[0];
  const h = 0.25 * (s.length - 1);
  const i = Math.floor(h);
  return s[i] + (h - i) * ((s[Math.min(i + 1, s.length - 1)] ?? s[i]) - s[i]);
}

function median(values: readonly number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

export { TEMPLATE_DEFAULTS };
