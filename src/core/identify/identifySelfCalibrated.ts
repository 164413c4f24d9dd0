import type { CalibrationPoint } from '../calibration/fitDispersion.js';
import { fitScale, type ScaleFit } from './scaleFit.js';
import { MATCH_LINES_DEFAULTS, matchLines, type MatchLinesOptions } from '../calibration/matchLines.js';
import { dispersionAtNmPerPx, wavelengthAtNm } from '../calibration/model.js';
import type { CalibrationScale } from '../calibration/uncertainty.js';
import { invalid } from '../errors.js';
import type { Peak, SpectralLine } from '../types.js';
import { brightLineScales } from './brightLineScales.js';
import { calibratePeaks } from './calibratePeaks.js';
import { identifySpecies, IDENTIFY_DEFAULTS, NO_EMISSION_LINES, type Identification, type IdentifyOptions } from './identifySpecies.js';
import { brightCoverage, brightestExplained, fluxConsistency, MIN_BRIGHTEST_EXPLAINED } from './scaleCredibility.js';

/**
 * Lamps tried as the calibration when there is no profile: the fills of discharge tubes and sign tubing, alone and in
 * the usual mixtures. Other elements are still identified on the scale one of these gives.
 */
export const SELF_CALIBRATION_LAMPS: readonly string[] = ['Ne', 'Ar', 'He', 'Hg', 'Kr', 'Xe', 'H', 'Na', 'Ar+Hg', 'Ne+Hg', 'He+Ne', 'Ne+Ar'];

export interface SelfCalibrationOptions extends Omit<IdentifyOptions, 'rangeNm' | 'systematicNm' | 'evidencePenalty'> {
  /** Lamp specs ('Ne', 'Ar+Hg'), each a set of elements whose lines (from `lines`) are tried as the calibration. */
  lamps?: readonly string[];
  /**
   * Of `lamps`, those given to the spacing-ratio line matcher (the costly search, worth it for line-rich spectra);
   * the other single-element lamps get the brightest-line search. @default SELF_CALIBRATION_DEFAULTS.matcherLamps
   */
  matcherLamps?: readonly string[];
  /** Extent of the spectrum along the band (px): its wavelength range on each candidate scale. @default the peaks' extent */
  positionRangePx?: readonly [number, number];
  /** What a camera can see at all (nm): the covered range is clipped to it. @default [350, 1000] */
  cameraRangeNm?: readonly [number, number];
  /** Passed to the line matcher (e.g. a known dispersion range). */
  match?: Partial<MatchLinesOptions>;
  /** Joint evidence (nats) of "none of these scales". @default SELF_CALIBRATION_DEFAULTS.noneEvidence */
  noneEvidence?: number;
  /**
   * A candidate scale is judged with the whole list only when its lamp, judged with its own lines alone, comes within
   * this many nats of `presentEvidence`. @default SELF_CALIBRATION_DEFAULTS.screenMarginNats
   */
  screenMarginNats?: number;
  /** A matcher solution at or below this log10 chance ends the search. @default SELF_CALIBRATION_DEFAULTS.decisiveLog10FalseMatch */
  decisiveLog10FalseMatch?: number;
}

export const SELF_CALIBRATION_DEFAULTS = {
  lamps: SELF_CALIBRATION_LAMPS,
  /** Argon first: its match is the cheaper one when it fails, and a decisive argon scale spares neon's (below). */
  matcherLamps: ['Ar', 'Ne'] as readonly string[],
  /**
   * A matcher solution this improbable as chance (log10, after the matcher's Bonferroni factor) settles the scale:
   * the search stops there — no further lamp is matched and no brightest-line scale sought — and the spectrum is
   * identified on it with the whole list, mixtures included. Wrong lamps never came below −1.3 in 140 matches over the
   * two seeded evaluation sets; true neon lamps reach −8 to −23, argon −3 to −15.
   */
  decisiveLog10FalseMatch: -8,
  /**
   * Matcher options for self-calibration: half its grown hypotheses (20 of 40) halve its time on a 48-peak tube photo
   * and lost no scale in the seeded evaluation; fewer seeds (16 of 24) lose the Ne and Ar+Hg tubes' scales.
   */
  match: { maxGrown: 20 } as Partial<MatchLinesOptions>,
  cameraRangeNm: [350, 1000] as readonly [number, number],
  /** Two scales are one when they put every peak within this many RMS of each other. */
  sameScaleRms: 3,
  /**
   * Joint evidence (nats) of "none of these scales": a scale must beat it to be believed. Above 0 because the
   * search tries many scales for many species and keeps the best, so a few nats arise by chance (seen in the seeded
   * evaluation on sodium lamps, whose one doublet cannot set a scale).
   */
  noneEvidence: 2,
  /** Room for the rank term other species can add to the lamp's evidence (ln of a few dozen peaks ≈ 3–4 nats). */
  screenMarginNats: 4,
} as const;

/** The scale the spectrum gave itself. */
export interface SelfCalibration {
  from: 'self';
  /** The lamp whose lines made the scale ('Ne', 'Ar+Hg'). */
  lamp: string;
  /** Other lamps that gave the same scale. */
  agreeingLamps: string[];
  rmsNm: number;
  linesUsed: number;
  /** Whether the line matcher accepted the lamp on its own (else the identification on the scale carried it). */
  matcherAccepted: boolean;
  /** log10 of the chance that the line match is a coincidence (the matcher's Bonferroni bound; 0 when the scale came from the brightest-line search). */
  log10FalseMatch: number;
  /** Refitted to every line the identification placed, not only the lamp's own. */
  refined: boolean;
  /** Posterior probability of this scale among the candidates and "none of them" (see identifySelfCalibrated). */
  probability: number;
  dispersionNmPerPx: number;
  /** Wavelengths of the first and last line used (nm). */
  rangeNm: [number, number];
  /** Wavelength range the spectrum covers on this scale (nm). */
  coveredRangeNm: [number, number];
  /** Evidence (nats) taken off the lamp's species for fitting the scale to their own lines. */
  evidencePenalty: number;
  fit: ScaleFit;
}

/** One candidate scale, for the record. */
export interface ScaleCandidate {
  lamp: string;
  agreeingLamps: string[];
  linesUsed: number;
  rmsNm: number;
  matcherAccepted: boolean;
  log10FalseMatch: number;
  /** ln posterior odds of the identification on this scale (identifySpecies' modelEvidence). */
  modelEvidence: number;
  /** Bayes factor (nats) of the share of bright peaks the present species leave unexplained (scaleCredibility.ts). */
  brightCoverageNats: number;
  /** ln likelihood ratio (nats) of the lamp's lines' fluxes against their tabulated intensities (scaleCredibility.ts). */
  fluxConsistencyNats: number;
  /**
   * modelEvidence less the search that found the scale (ln of its number of scale hypotheses), plus the two checks
   * above: what the scales are ranked by.
   */
  jointEvidence: number;
  probability: number;
  present: string[];
  chosen: boolean;
}

export interface SelfCalibratedIdentification extends Identification {
  /** null when no candidate scale explains the peaks (then nothing is identified). */
  calibration: SelfCalibration | null;
  candidates: ScaleCandidate[];
}

interface Solution {
  lamp: string;
  /** Element of each matched line. */
  lines: string[];
  agreeing: string[];
  fit: ScaleFit;
  accepted: boolean;
  log10FalseMatch: number;
  /** ln of the number of scale hypotheses the matcher's search could produce. */
  searchNats: number;
  /** Made by the brightest-line search (brightLineScales.ts), not the spacing-ratio matcher. */
  brightLines: boolean;
  wavelengths: Float64Array;
}

interface Evaluated {
  s: Solution;
  fit: ScaleFit;
  refined: boolean;
  identification: Identification;
  covered: [number, number];
  penalty: number;
  coverageNats: number;
  fluxNats: number;
  joint: number;
  probability: number;
}

function lampElements(spec: string): string[] {
  const parts = spec.split('+').map((x) => x.trim()).filter(Boolean);
  if (parts.length === 0) throw invalid('lamps', "lamp specs such as 'Ne' or 'Ar+Hg'", spec);
  return parts;
}

/** A scale needs lines beyond its own parameters to be checked at all. */
const MIN_SCALE_LINES = 4;

/**
 * Identification with no profile: the spectrum calibrates itself.
 *
 * 1. Candidate scales: for each line-rich lamp (`matcherLamps`: Ar, then Ne) its lines go to the automatic line
 *    matcher (calibration/matchLines.ts); its best solution with at least 4 lines is fitted (scaleFit.ts), whether
 *    or not the matcher accepted it on its own. Solutions that put the peaks at the same wavelengths are merged. A
 *    decisive solution (`decisiveLog10FalseMatch`) ends the search there. Otherwise the other single-element lamps get
 *    scale hypotheses from their brightest peaks (brightLineScales.ts); mixtures are found on one gas's scale,
 *    refitted in step 2. Scales that collapse or turn over across the spectrum, or whose dispersion lies more than a
 *    factor of 2 outside the plausible range (the photo's prior `match.dispersionNmPerPx`, dispersionPrior.ts), are
 *    dropped.
 * 2. Each scale is screened with its own lamp's lines alone (the lamp must come within `screenMarginNats` of
 *    presence on the scale its lines made); on a scale that passes, the peaks are identified with the whole line list
 *    (identifySpecies), then the scale is refitted to every single, unblended line the identification placed with
 *    confidence ≥ 0.9 and the peaks identified again; the refit is kept when it explains the peaks better.
 * 3. Scales are ranked by the joint evidence J = modelEvidence − ln T + C + F, T the number of scale hypotheses the
 *    search could produce (the matcher's count, or the brightest-line pairs tried: the look-elsewhere cost of the
 *    search), C and F what a self-made scale must show beyond the identification on it (scaleCredibility.ts): C the
 *    Bayes factor of the share of bright peaks no present species explains (a Beta prior that expects few on the right
 *    scale, against any share: a few Balmer lines placed among a xenon tube's thirty peaks leave most bright ones
 *    over), F the likelihood ratio of the lamp's line fluxes against their tabulated intensities (a sodium lamp's D
 *    line put on He 706.5 nm with helium's strongest line, 587.6 nm, on a peak 200 times fainter). Their posterior
 *    probabilities, with "none of these scales" at J = 2 (`noneEvidence`),
 *    are p_c = e^{J_c} / (1 + Σ e^{J}); a species' score is its score on each scale weighted by p_c (Bayesian model
 *    averaging), so competing scales lower every confidence; presence is judged on the most probable scale.
 *
 * The lamp's own species lose further evidence: their lines made the scale and are evidence on it. The scale's p
 * fitted parameters are worth p nats (Akaike's estimate of the optimism of a fitted log-likelihood, Akaike 1974) and
 * the K lamps tried ln K (a Bonferroni bound); both come off their evidence, shared by the lines each element gave.
 * Every species is judged with the self-calibration's RMS as the scale's uncertainty.
 */
export function identifySelfCalibrated(peaks: readonly Peak[], options: SelfCalibrationOptions): SelfCalibratedIdentification {
  const lamps = options.lamps ?? SELF_CALIBRATION_DEFAULTS.lamps;
  const camera = options.cameraRangeNm ?? SELF_CALIBRATION_DEFAULTS.cameraRangeNm;
  const usable = peaks.filter((p) => Number.isFinite(p.positionPx) && Number.isFinite(p.area));
  const positions = usable.map((p) => p.positionPx);
  const extent = options.positionRangePx ?? ([Math.min(...positions), Math.max(...positions)] as const);
  const base: Omit<IdentifyOptions, 'rangeNm' | 'systematicNm'> = { ...options };
  const minSnr = options.minLineSnr ?? IDENTIFY_DEFAULTS.minLineSnr;
  const lineLike = usable.filter((p) => p.snr >= minSnr).length;
  const empty = (): Identification => identifySpecies([], { ...base, rangeNm: [camera[0], camera[1]] });
  if (lineLike === 0) {
    const why = usable.length === 0 ? 'the spectrum has no peaks' : `${usable.length} peak(s), none with SNR ≥ ${minSnr}: noise or continuum only`;
    return { ...empty(), warnings: [`${NO_EMISSION_LINES}: ${why}; no species is named`], calibration: null, candidates: [] };
  }

  const matcherLamps = (options.matcherLamps ?? SELF_CALIBRATION_DEFAULTS.matcherLamps).filter((l) => lamps.includes(l));
  const found = usable.length >= MIN_SCALE_LINES ? candidateScales(usable, matcherLamps, options, camera) : [];
  const decisive = found.some((s) => s.accepted && s.log10FalseMatch <= (options.decisiveLog10FalseMatch ?? SELF_CALIBRATION_DEFAULTS.decisiveLog10FalseMatch));
  // The brightest-line search for the lamps the matcher leaves: for the line-rich ones it finds the matcher's scales
  // again, at the cost of their identifications.
  if (usable.length >= MIN_SCALE_LINES && !decisive) addBrightLineScales(found, usable, lamps.filter((l) => !matcherLamps.includes(l)), options, camera);
  // A scale is physical only when its dispersion is plausible and it runs one way across the whole spectrum: a fit
  // through few lines can collapse (every peak at one wavelength) or turn over between them.
  const solutions = found.filter((s) => plausibleScale(s.fit, extent, options.match?.dispersionNmPerPx ?? PLAUSIBLE_DISPERSION_NM_PER_PX));
  const screenMargin = options.screenMarginNats ?? SELF_CALIBRATION_DEFAULTS.screenMarginNats;
  const presentEvidence = options.presentEvidence ?? IDENTIFY_DEFAULTS.presentEvidence;
  const ownLines = new Map<string, SpectralLine[]>();
  const evaluated: Evaluated[] = solutions.flatMap((s) => {
    const penalty = (s.fit.model.kind === 'polynomial' ? s.fit.model.degree + 1 : 3) + Math.log(lamps.length);
    const evidencePenalty: Record<string, number> = {};
    const count = new Map<string, number>();
    for (const e of s.lines) count.set(e, (count.get(e) ?? 0) + 1);
    const own = lampElements(s.lamp);
    for (const e of own) evidencePenalty[e] = (penalty * (count.get(e) ?? 0)) / Math.max(s.lines.length, 1);
    // Screen: a scale made from a lamp's lines stands only if that lamp is present on it (else its line assignments
    // are a chance fit). Judged first with the lamp's own lines alone — a fraction of the cost of the whole list, and
    // with no other species to take its peaks, about the most evidence the lamp can get — with a margin for what other
    // species can add to it (the rank term, when they explain a brighter peak).
    let mine = ownLines.get(s.lamp);
    if (!mine) ownLines.set(s.lamp, (mine = options.lines.filter((l) => own.includes(l.element))));
    const screen = identifyOnScale(usable, s.fit, extent, camera, { ...base, lines: mine }, evidencePenalty).identification;
    if (!screen.species.some((x) => own.includes(x.element) && x.evidence >= presentEvidence - screenMargin)) return [];
    const first = identifyOnScale(usable, s.fit, extent, camera, base, evidencePenalty);
    let best = { fit: s.fit, refined: false, ...first };
    const refit = first.identification.species.some((x) => x.present) ? refineScale(usable, first.identification, s.fit) : null;
    if (refit) {
      const second = identifyOnScale(usable, refit, extent, camera, base, evidencePenalty);
      if (second.identification.modelEvidence > first.identification.modelEvidence) best = { fit: refit, refined: true, ...second };
    }
    // The scale's evidence: the identification's, its own-line penalties given back (the search term counts the
    // fitting; which species the lamp is, is already paid for by each species' prior), less the search that found it.
    const given = best.identification.species.filter((x) => x.present).reduce((sum, x) => sum + (evidencePenalty[x.element] ?? 0), 0);
    // What a self-made scale must show beyond the identification on it (scaleCredibility.ts): the present species
    // explain most bright peaks, and the lamp's lines are about as bright as its lines should be.
    const coverageNats = brightCoverage(best.identification, minSnr).nats;
    // The flux check is for scales built from few bright lines; a matcher solution's spacing ratios carry their own
    // chance (its log10FalseMatch), and a line-rich lamp's table intensities are the least reliable part of it.
    const fluxNats = s.brightLines ? fluxConsistency(best.identification, options.lines, own, minSnr).nats : 0;
    // A brightest-line scale stands on the premise that the tube's brightest peaks are its lines: when the species
    // the identification finds on it leave two of the four brightest unexplained, the premise failed and the scale is
    // a chance fit (scaleCredibility.ts: brightestExplained).
    if (s.brightLines && brightestExplained(best.identification, minSnr) < MIN_BRIGHTEST_EXPLAINED) return [];
    const joint = best.identification.modelEvidence + given - s.searchNats + coverageNats + fluxNats;
    return [{ s, ...best, penalty, coverageNats, fluxNats, joint, probability: 0 }];
  });
  evaluated.sort((a, b) => b.joint - a.joint || a.s.log10FalseMatch - b.s.log10FalseMatch);
  // Posterior probabilities of the scales, "none of them" at joint evidence NONE_EVIDENCE (log-sum-exp).
  const none = options.noneEvidence ?? SELF_CALIBRATION_DEFAULTS.noneEvidence;
  const top = Math.max(none, ...evaluated.map((e) => e.joint));
  const norm = Math.exp(none - top) + evaluated.reduce((sum, e) => sum + Math.exp(e.joint - top), 0);
  for (const e of evaluated) e.probability = Math.exp(e.joint - top) / norm;

  const candidates: ScaleCandidate[] = evaluated.map((e, k) => ({
    lamp: e.s.lamp,
    agreeingLamps: e.s.agreeing,
    linesUsed: e.fit.linesUsed,
    rmsNm: e.fit.rmsNm,
    matcherAccepted: e.s.accepted,
    log10FalseMatch: e.s.log10FalseMatch,
    modelEvidence: e.identification.modelEvidence,
    brightCoverageNats: e.coverageNats,
    fluxConsistencyNats: e.fluxNats,
    jointEvidence: e.joint,
    probability: e.probability,
    present: e.identification.species.filter((x) => x.present).map((x) => x.element),
    chosen: k === 0 && e.joint > none,
  }));
  const best = evaluated[0];
  if (!best || best.joint <= none || !best.identification.species.some((x) => x.present)) {
    const why =
      usable.length < MIN_SCALE_LINES
        ? `${usable.length} peak(s): a wavelength scale from the spectrum itself needs at least ${MIN_SCALE_LINES} lines`
        : `no candidate lamp (${lamps.join(', ')}) gives a scale on which the peaks are explained, so the spectrum cannot calibrate itself`;
    return {
      ...empty(),
      emissionLinesFound: true,
      unexplainedFluxFraction: 1,
      warnings: [`${why}; nothing is identified — give a calibration profile (--calibration)`],
      calibration: null,
      candidates,
    };
  }

  // Model averaging of the scores over the candidate scales.
  const averaged = new Map<string, number>();
  for (const e of evaluated) {
    for (const x of e.identification.species) averaged.set(x.element, (averaged.get(x.element) ?? 0) + e.probability * x.score);
  }
  const species = best.identification.species
    .map((x) => {
      const score = averaged.get(x.element) ?? 0;
      return { ...x, score, present: x.present && score >= 0.5 };
    })
    .sort((a, b) => Number(b.present) - Number(a.present) || b.score - a.score);
  const fit = best.fit;
  const calibration: SelfCalibration = {
    from: 'self',
    lamp: best.s.lamp,
    agreeingLamps: best.s.agreeing,
    rmsNm: fit.rmsNm,
    linesUsed: fit.linesUsed,
    matcherAccepted: best.s.accepted,
    log10FalseMatch: best.s.log10FalseMatch,
    refined: best.refined,
    probability: best.probability,
    dispersionNmPerPx: fit.dispersionNmPerPx,
    rangeNm: fit.rangeNm,
    coveredRangeNm: best.covered,
    evidencePenalty: best.penalty,
    fit,
  };
  const own = lampElements(best.s.lamp);
  const notes = [
    `wavelength scale from the spectrum itself (${best.s.lamp} lines, ${fit.linesUsed} used, RMS ${fit.rmsNm.toFixed(2)} nm, ` +
      `probability ${best.probability.toFixed(2)} among the candidate scales): scores are averaged over those scales and ` +
      `${own.join(' and ')} lose${own.length > 1 ? '' : 's'} evidence for making the scale; a calibration profile gives firmer answers`,
  ];
  if (!species.some((x) => x.present)) {
    notes.push(
      `no species is named: averaged over the candidate scales none reaches a score of 0.5 (the most probable scale has ` +
        `probability ${best.probability.toFixed(2)}); the spectrum cannot calibrate itself convincingly — give a calibration profile (--calibration)`,
    );
  }
  const runner = evaluated.find((e) => e !== best && presentKey(e.identification) !== presentKey(best.identification) && e.joint > none);
  if (runner && best.joint - runner.joint < 3) {
    notes.push(
      `another self-calibrated scale (${runner.s.lamp} lines) explains the peaks almost as well, as ${presentKey(runner.identification) || 'nothing'}: ` +
        `the identification is ambiguous without a calibration profile`,
    );
  }
  return { ...best.identification, species, warnings: [...notes, ...best.identification.warnings], calibration, candidates };
}

/** Each lamp's best line match as a fitted scale, same scales merged (the most significant kept). */
function candidateScales(
  usable: readonly Peak[],
  lamps: readonly string[],
  options: SelfCalibrationOptions,
  camera: readonly [number, number],
): Solution[] {
  const solutions: Solution[] = [];
  const decisive = options.decisiveLog10FalseMatch ?? SELF_CALIBRATION_DEFAULTS.decisiveLog10FalseMatch;
  for (const lamp of lamps) {
    const lines = calibrationLines(lamp, options.lines, camera);
    if (lines.length < MIN_SCALE_LINES) continue;
    const match = matchLines(usable, lines, { wavelengthRangeNm: [camera[0], camera[1]], ...SELF_CALIBRATION_DEFAULTS.match, ...options.match });
    if (!match.score || !match.model) continue;
    const matched = match.matches.filter((m) => m.source === 'matched');
    if (matched.length < MIN_SCALE_LINES) continue;
    const fit = fitScale(
      matched.map((m) => ({
        positionPx: m.positionPx,
        positionUncertaintyPx: m.positionUncertaintyPx,
        wavelengthNm: m.wavelengthNm,
        source: 'matched' as const,
        saturated: m.saturated,
        blended: m.blended,
        peakIndex: m.peakIndex,
      })),
    );
    if (!fit) continue;
    const wavelengths = Float64Array.from(usable, (p) => wavelengthAtNm(fit.model, p.positionPx));
    const log10Trials = match.score.log10Trials ?? 0;
    const solution: Solution = {
      lamp,
      lines: matched.filter((m) => m.line).map((m) => m.line!.element),
      agreeing: [],
      fit,
      accepted: match.accepted,
      log10FalseMatch: match.score.log10Chance + log10Trials,
      searchNats: Math.LN10 * Math.max(log10Trials, 0),
      brightLines: false,
      wavelengths,
    };
    const same = solutions.find((x) => sameScale(x, wavelengths, fit.rmsNm));
    if (!same) {
      solutions.push(solution);
    } else if (solution.log10FalseMatch < same.log10FalseMatch) {
      solution.agreeing = [same.lamp, ...same.agreeing];
      solutions[solutions.indexOf(same)] = solution;
    } else {
      same.agreeing.push(lamp);
    }
    if (match.accepted && solution.log10FalseMatch <= decisive) break;
  }
  return solutions;
}

/** Scale hypotheses from the brightest peaks (brightLineScales.ts) for each single-element lamp, merged in. */
function addBrightLineScales(
  solutions: Solution[],
  usable: readonly Peak[],
  lamps: readonly string[],
  options: SelfCalibrationOptions,
  camera: readonly [number, number],
): void {
  const elements = lamps.filter((l) => lampElements(l).length === 1);
  const lineLike = usable.filter((p) => p.snr >= (options.minLineSnr ?? IDENTIFY_DEFAULTS.minLineSnr));
  for (const h of brightLineScales(lineLike, options.lines, elements, camera, { dispersionNmPerPx: options.match?.dispersionNmPerPx })) {
    const fit = fitScale(h.points);
    if (!fit) continue;
    const wavelengths = Float64Array.from(usable, (p) => wavelengthAtNm(fit.model, p.positionPx));
    // Kept even where a matcher solution gives much the same scale: the two fits differ, and the ranking picks.
    solutions.push({
      lamp: h.element,
      lines: h.points.map(() => h.element),
      agreeing: [],
      fit,
      accepted: false,
      log10FalseMatch: 0,
      searchNats: h.searchNats,
      brightLines: true,
      wavelengths,
    });
  }
}

function identifyOnScale(
  usable: readonly Peak[],
  fit: ScaleFit,
  extent: readonly [number, number],
  camera: readonly [number, number],
  base: Omit<IdentifyOptions, 'rangeNm' | 'systematicNm'>,
  evidencePenalty: Record<string, number>,
): { identification: Identification; covered: [number, number] } {
  const scale: CalibrationScale = { model: fit.model, rangePx: fit.rangePx, checkModel: fit.checkModel };
  // The covered range: the spectrum's ends on the scale where the scale is monotonic out there, else (a polynomial
  // turning over far beyond its lines) the calibrated peaks' own span; within what a camera sees.
  const calibrated = calibratePeaks(usable, scale);
  const lo = wavelengthAtNm(fit.model, extent[0]);
  const hi = wavelengthAtNm(fit.model, extent[1]);
  const monotonic = [extent[0], extent[1]].every((x) => Math.sign(dispersionAtNmPerPx(fit.model, x)) === Math.sign(fit.dispersionNmPerPx));
  let span: [number, number] = [Math.min(lo, hi), Math.max(lo, hi)];
  if (!monotonic && calibrated.length > 0) {
    const ws = calibrated.map((p) => p.wavelengthNm);
    span = [Math.min(...ws) - 5, Math.max(...ws) + 5];
  }
  const covered: [number, number] = [Math.max(camera[0], span[0]), Math.min(camera[1], span[1])];
  const identification = identifySpecies(calibrated, {
    ...base,
    rangeNm: covered[1] > covered[0] ? covered : [camera[0], camera[1]],
    systematicNm: Math.max(fit.rmsNm, IDENTIFY_DEFAULTS.systematicNm),
    evidencePenalty,
  });
  return { identification, covered };
}

/** The scale refitted to the lines the identification placed: single lines, unblended, unclipped, confident. */
function refineScale(usable: readonly Peak[], identification: Identification, fit: ScaleFit): ScaleFit | null {
  const byPosition = new Map(usable.map((p) => [p.positionPx, p]));
  const points: CalibrationPoint[] = [];
  for (const p of identification.peaks) {
    const l = p.line;
    if (!l || l.molecular || l.order !== undefined || l.blendedWithNm || p.blended || p.saturated || p.confidence < 0.9) continue;
    const peak = byPosition.get(p.positionPx);
    if (!peak) continue;
    points.push({ positionPx: peak.positionPx, positionUncertaintyPx: peak.positionUncertaintyPx, wavelengthNm: l.wavelengthNm, source: 'matched' });
  }
  if (points.length < Math.max(MIN_SCALE_LINES, fit.linesUsed)) return null;
  return fitScale(points);
}

/**
 * The lines a lamp spec calibrates with: every atomic line of its elements in the camera's range (the curated list
 * holds strong lines only; the matcher seeds on the brightest).
 */
function calibrationLines(lamp: string, lines: readonly SpectralLine[], camera: readonly [number, number]): SpectralLine[] {
  const elements = new Set(lampElements(lamp));
  return lines.filter(
    (l) => elements.has(l.element) && (l as { kind?: string }).kind !== 'band-head' && l.wavelengthNm >= camera[0] && l.wavelengthNm <= camera[1],
  );
}

/** |dλ/dx| a camera spectroscope can have (nm/px), as the line matcher assumes by default. */
const PLAUSIBLE_DISPERSION_NM_PER_PX: readonly [number, number] = MATCH_LINES_DEFAULTS.dispersionNmPerPx;

function plausibleScale(fit: ScaleFit, extent: readonly [number, number], range: readonly [number, number]): boolean {
  const ends = [extent[0], (extent[0] + extent[1]) / 2, extent[1]].map((x) => dispersionAtNmPerPx(fit.model, x));
  const sign = Math.sign(fit.dispersionNmPerPx);
  return ends.every((d) => Math.sign(d) === sign && Math.abs(d) >= range[0] / 2 && Math.abs(d) <= range[1] * 2);
}

function presentKey(identification: Identification): string {
  return identification.species
    .filter((x) => x.present)
    .map((x) => x.element)
    .sort()
    .join('+');
}

function sameScale(a: Solution, wavelengths: Float64Array, rmsNm: number): boolean {
  const tol = SELF_CALIBRATION_DEFAULTS.sameScaleRms * Math.max(a.fit.rmsNm, rmsNm, 0.05);
  let compared = 0;
  const [lo, hi] = a.fit.rangeNm;
  for (let i = 0; i < wavelengths.length; i++) {
    const w = a.wavelengths[i];
    if (w < lo || w > hi) continue;
    compared++;
    if (Math.abs(w - wavelengths[i]) > tol) return false;
  }
  return compared > 0;
}
