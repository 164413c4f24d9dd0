import { InputError } from '../errors.js';
import { focalLengthPxFrom35mm } from '../render/gratingCamera.js';
import { imageToBandPx } from '../spectrum/band/frame.js';
import type { BandGeometry, Peak, SpectralLine } from '../types.js';
import {
  FIT_DISPERSION_DEFAULTS,
  fitDispersion,
  type CalibrationPoint,
  type DispersionFit,
  type FitDispersionOptions,
} from './fitDispersion.js';
import type { GratingFitOptions, ParameterPrior } from './gratingModel.js';
import { colourAllows, colourBandNm } from './colourPrior.js';
import { isBroadFeature, type LampLineInfo, referenceUncertaintyNm } from './lineReference.js';
import { matchLines, type ManualPair, type MatchLinesOptions, type MatchResult, type ZeroOrderSighting } from './matchLines.js';
import { dispersionAtNmPerPx, wavelengthAtNm } from './model.js';

/** Where the physical model's focal length and axis come from, for a photo. */
export interface GratingPriorsInput {
  image: { widthPx: number; heightPx: number } | null;
  band: BandGeometry | null;
  /** EXIF FocalLengthIn35mmFilm (mm). */
  focalLength35mmMm?: number;
  /** A focal length the user knows (px); fixes f. */
  focalLengthPx?: number;
}

export interface GratingPriors {
  focalLengthPx: ParameterPrior | null;
  axisPositionPx: ParameterPrior | null;
  focalLengthSource: 'exif' | 'given' | 'fitted';
}

/**
 * Relative standard uncertainty given to an EXIF-derived focal length: EXIF stores whole millimetres (±0.5 mm of
 * ~26 mm is ±2 %, uniform → 1.1 %), and cameras differ in how they match the 35-mm equivalent (diagonal, width,
 * before or after a crop). 2 % is common practice, no source.
 */
export const EXIF_FOCAL_LENGTH_RELATIVE_SIGMA = 0.02;
/**
 * Standard uncertainty of the principal point about the image centre, as a fraction of the image diagonal (phone and
 * webcam lenses are centred to about 1–2 %; common practice, no source).
 */
export const PRINCIPAL_POINT_RELATIVE_SIGMA = 0.015;

/**
 * Priors for the grating model from the photo: f from a given value (fixed) or from EXIF's 35-mm-equivalent focal
 * length, f_px = f35 · (image diagonal in px) / 43.27 mm — the equivalence matched on the diagonal of the 36 × 24 mm
 * frame (see focalLengthPxFrom35mm) — with a 2 % standard uncertainty; x0 from the image centre projected onto the
 * band axis. Without an image (a spectrum file) neither is known and both are fitted.
 */
export function gratingPriors(input: GratingPriorsInput): GratingPriors {
  let focalLengthPx: ParameterPrior | null = null;
  let focalLengthSource: GratingPriors['focalLengthSource'] = 'fitted';
  if (input.focalLengthPx !== undefined) {
    if (!(input.focalLengthPx > 0 && Number.isFinite(input.focalLengthPx))) {
      throw new InputError(`focal length: expected a positive number of pixels, got ${input.focalLengthPx}`, 'focal-px');
    }
    focalLengthPx = { value: input.focalLengthPx, sigma: 0 };
    focalLengthSource = 'given';
  } else if (input.image && input.focalLength35mmMm && input.focalLength35mmMm > 0) {
    const f = focalLengthPxFrom35mm({
      focalLength35mmMm: input.focalLength35mmMm,
      widthPx: input.image.widthPx,
      heightPx: input.image.heightPx,
    });
    focalLengthPx = { value: f, sigma: EXIF_FOCAL_LENGTH_RELATIVE_SIGMA * f };
    focalLengthSource = 'exif';
  }
  let axisPositionPx: ParameterPrior | null = null;
  if (input.image && input.band) {
    // Pixel centres sit at integer coordinates: the centre of a W-pixel row is at (W − 1)/2.
    const centre = { x: (input.image.widthPx - 1) / 2, y: (input.image.heightPx - 1) / 2 };
    const diag = Math.hypot(input.image.widthPx, input.image.heightPx);
    axisPositionPx = { value: imageToBandPx(input.band, centre).positionPx, sigma: PRINCIPAL_POINT_RELATIVE_SIGMA * diag };
  }
  return { focalLengthPx, axisPositionPx, focalLengthSource };
}

export interface CalibrateOptions {
  /** Known correspondences (position px = wavelength nm). @default [] */
  pairs: ManualPair[];
  /** Automatic matching options (the pairs above are passed on). */
  match: Partial<Omit<MatchLinesOptions, 'pairs'>>;
  /** Dispersion fit options (model, degree, criterion, clipping, grating priors). */
  fit: Partial<FitDispersionOptions>;
  /** A manual pair snaps to a peak within this distance (px). @default 3 */
  snapPx: number;
  /**
   * The lamp's lines with blends judged at a given resolution (nm), when the caller can give them (the line list
   * marks blends for a nominal resolution; the photo's own is FWHM × dispersion, known only after matching). Null:
   * the lines as given are kept. @default null
   */
  linesAtResolution: ((resolutionNm: number) => readonly SpectralLine[]) | null;
}

/**
 * Matching for a calibration works with every listed line of the lamp (see calibrationLineCatalog): more seed lines
 * per peak keep the lines a photo shows among the triplets' seeds, and solutions are also judged by how many peaks
 * land within a few σ of their lines (evidence 'windows'), which a dense full list does not dilute as it does the
 * count within the matching tolerance; a scale that puts three bright peaks at invisible UV wavelengths (the second
 * order taken for the first) is no solution.
 */
export const CALIBRATE_MATCH_DEFAULTS: Partial<MatchLinesOptions> = { seedLinesPerPeak: 4, evidence: 'windows', invisiblePeaksVeto: 3 };

/**
 * Standard uncertainty (px) of the zero order's position as the band search finds it (the centroid of its component in
 * the coarse photo, carried to full resolution). In the 15 photos of the rendered calibration-lamp sweep where the search
 * found it (test/core/calibration/renderedSweep.test.ts), it lay within 1 px of the renderer's; 2 px leaves room for
 * real, bloomed spots.
 */
export const ZERO_ORDER_SIGHTING_SIGMA_PX = 2;

/** The zero order a band search found (position along the band, px) as the matcher takes it, or null. */
export function zeroOrderSighting(zeroOrderPx: number | undefined): ZeroOrderSighting | null {
  return zeroOrderPx !== undefined && Number.isFinite(zeroOrderPx) ? { positionPx: zeroOrderPx, uncertaintyPx: ZERO_ORDER_SIGHTING_SIGMA_PX } : null;
}

export const CALIBRATE_DEFAULTS: CalibrateOptions = {
  pairs: [],
  match: CALIBRATE_MATCH_DEFAULTS,
  fit: {},
  snapPx: 3,
  linesAtResolution: null,
};

export interface CalibrationResult {
  fit: DispersionFit;
  /** The automatic matching, when a lamp was given. */
  match: MatchResult | null;
  points: CalibrationPoint[];
  warnings: string[];
}

function lineLabel(line: SpectralLine): string {
  return `${line.spectrum} ${line.wavelengthNm.toFixed(3)}`;
}

/**
 * Peaks (+ a lamp's lines and/or manual pairs) → calibration: automatic matching when lines are given (mixed with
 * the pairs), else the pairs alone, each snapped to the nearest peak; then the robust dispersion fit. A lamp that does
 * not match throws InputError with the matcher's reason: no scale is ever returned for a wrong lamp.
 */
export function calibrateFromPeaks(
  peaks: readonly Peak[],
  lines: readonly SpectralLine[] | null,
  options: Partial<CalibrateOptions> = {},
): CalibrationResult {
  const o: CalibrateOptions = { ...CALIBRATE_DEFAULTS, ...options };
  checkPairColours(peaks, o);
  const warnings: string[] = [];
  let points: CalibrationPoint[];
  let match: MatchResult | null = null;
  // Broad bands (a phosphor's 50 nm wide Eu²⁺ band) have no position to calibrate with.
  const usable = lines ? lines.filter((l) => !isBroadFeature(l)) : null;
  if (usable && usable.length > 0) {
    // With priors from the photo, the matcher also scores its solutions with the physical model.
    const g = o.fit.grating;
    const priors = g && (g.focalLengthPx || g.axisPositionPx) ? g : null;
    match = matchLines(peaks, usable, { grating: priors, ...CALIBRATE_MATCH_DEFAULTS, ...o.match, pairs: o.pairs, snapPx: o.snapPx });
    warnings.push(...match.warnings);
    if (!match.accepted && o.match.direction !== undefined && o.match.direction !== 'either') checkDirection(peaks, usable, o, priors);
    if (!match.accepted && o.pairs.length < 2) throw new InputError(match.message, 'lamp');
    if (!match.accepted) match = checkPairsAgainstLamp(peaks, usable, match, o, priors, warnings);
  }
  if (match && match.accepted) {
    points = match.matches.map((m) => {
      const peak = m.peakIndex >= 0 ? peaks[m.peakIndex] : undefined;
      const lampBlended = (m.line as { blended?: boolean } | undefined)?.blended === true;
      return {
        positionPx: m.positionPx,
        positionUncertaintyPx: peak ? peak.positionUncertaintyPx : m.positionUncertaintyPx,
        wavelengthNm: m.wavelengthNm,
        referenceUncertaintyNm: m.line ? referenceUncertaintyNm(m.line, usable!) : 0,
        source: m.source,
        label: m.line ? lineLabel(m.line) : `${m.wavelengthNm} nm (given)`,
        saturated: m.saturated,
        blended: m.blended || lampBlended,
        peakIndex: m.peakIndex >= 0 ? m.peakIndex : undefined,
      };
    });
  } else {
    if (o.pairs.length === 0) throw new InputError('nothing to calibrate with: give --lamp, --pairs, or both', 'lamp');
    if (match) {
      const sc = match.score;
      warnings.push(
        `the lamp's lines match the peaks neither tied to the given pairs nor on their own` +
          (sc ? ` (at best ${sc.matched} of ${sc.peaksInRange} peaks, where chance alone gives ${sc.expectedByChance.toFixed(1)})` : '') +
          `: wrong lamp, or too few of its lines visible; calibrated from the pairs alone, which nothing checks`,
      );
      match = null;
    }
    points = o.pairs.map((pair) => {
      const best = nearestPeakIndex(peaks, pair.positionPx, o.snapPx);
      const peak = best >= 0 ? peaks[best] : undefined;
      if (!peak && peaks.length > 0) {
        warnings.push(`no peak within ${o.snapPx} px of the pair at ${pair.positionPx} px: the position is used as given (±0.5 px)`);
      }
      return {
        positionPx: peak ? peak.positionPx : pair.positionPx,
        positionUncertaintyPx: peak ? peak.positionUncertaintyPx : 0.5,
        wavelengthNm: pair.wavelengthNm,
        source: 'manual' as const,
        label: `${pair.wavelengthNm} nm (given)`,
        saturated: peak?.saturated ?? false,
        blended: peak?.blended ?? false,
        peakIndex: best >= 0 ? best : undefined,
      };
    });
  }
  // Blends at the photo's own resolution: FWHM of the matched peaks × the local dispersion (median).
  if (match && o.linesAtResolution && match.model) {
    const widths = match.matches
      .filter((m) => m.peakIndex >= 0)
      .map((m) => peaks[m.peakIndex].fwhmPx * Math.abs(dispersionAtNmPerPx(match!.model!, m.positionPx)))
      .filter((v) => Number.isFinite(v) && v > 0)
      .sort((a, b) => a - b);
    const resolutionNm = widths.length ? widths[widths.length >> 1] : NaN;
    if (resolutionNm > 1) {
      const relisted = o.linesAtResolution(resolutionNm);
      // A neighbour that has a peak of its own was resolved by the peak finder's joint fit: it shifts nothing.
      const seen = new Set(points.map((p) => p.wavelengthNm.toFixed(4)));
      const sigmaAtResolution = (line: LampLineInfo) =>
        referenceUncertaintyNm({ ...line, blendedWith: (line.blendedWith ?? []).filter((w) => !seen.has(w.toFixed(4))) }, relisted);
      points = points.map((p) => {
        const line = relisted.find((l) => Math.abs(l.wavelengthNm - p.wavelengthNm) < 1e-6) as LampLineInfo | undefined;
        if (!line || p.source === 'manual') return p;
        return { ...p, referenceUncertaintyNm: Math.max(p.referenceUncertaintyNm ?? 0, sigmaAtResolution(line)) };
      });
      // Peaks the matcher left alone because they sit on a known blend (their centre lies between the lines) are
      // listed with it, for the residual table; too vague to calibrate with, the fit leaves them out.
      const maxSigma = o.fit.maxReferenceUncertaintyNm ?? FIT_DISPERSION_DEFAULTS.maxReferenceUncertaintyNm;
      const taken = new Set(points.map((p) => p.peakIndex).filter((i) => i !== undefined));
      const model = match.model;
      peaks.forEach((peak, index) => {
        if (taken.has(index) || peak.saturated || !(peak.positionUncertaintyPx <= 0.5)) return;
        const lambda = wavelengthAtNm(model, peak.positionPx);
        const disp = Math.abs(dispersionAtNmPerPx(model, peak.positionPx));
        let best: LampLineInfo | undefined;
        for (const l of relisted) if (!best || Math.abs(l.wavelengthNm - lambda) < Math.abs(best.wavelengthNm - lambda)) best = l;
        if (!best || seen.has(best.wavelengthNm.toFixed(4)) || isBroadFeature(best)) return;
        const sigma = sigmaAtResolution(best);
        if (!(sigma > maxSigma)) return;
        // A blend's centre lies within its components' extent.
        const extent = Math.max(0, ...(best.blendedWith ?? []).map((w) => Math.abs(w - best!.wavelengthNm)));
        if (Math.abs(best.wavelengthNm - lambda) > 3 * Math.max(peak.positionUncertaintyPx, 0.1) * disp + extent) return;
        seen.add(best.wavelengthNm.toFixed(4));
        points.push({
          positionPx: peak.positionPx,
          positionUncertaintyPx: peak.positionUncertaintyPx,
          wavelengthNm: best.wavelengthNm,
          referenceUncertaintyNm: sigma,
          source: 'matched',
          label: lineLabel(best),
          saturated: false,
          blended: peak.blended,
          peakIndex: index,
        });
      });
    }
  }
  const fit = fitDispersion(points, o.fit);
  warnings.push(...fit.warnings);
  return { fit, match, points, warnings };
}

/** Index of the peak nearest to positionPx within snapPx, or −1. */
function nearestPeakIndex(peaks: readonly Peak[], positionPx: number, snapPx: number): number {
  let best = -1;
  for (let i = 0; i < peaks.length; i++) {
    const d = Math.abs(peaks[i].positionPx - positionPx);
    if (d <= snapPx && (best < 0 || d < Math.abs(peaks[best].positionPx - positionPx))) best = i;
  }
  return best;
}

/**
 * A pair whose peak has a colour no camera gives its wavelength (a red peak named 435.8 nm: two pairs swapped, a line
 * misread) is an error naming it, before it can be fitted into a scale nothing else would check. Saturated peaks are
 * not judged (clipped channels whiten them); see colourPrior.ts for the rules.
 */
function checkPairColours(peaks: readonly Peak[], o: CalibrateOptions): void {
  for (const pair of o.pairs) {
    const index = nearestPeakIndex(peaks, pair.positionPx, o.snapPx);
    const best = index >= 0 ? peaks[index] : undefined;
    if (!best || best.saturated || !best.rgb) continue;
    const band = colourBandNm(best.rgb);
    if (colourAllows(band, pair.wavelengthNm)) continue;
    const { r, g, b } = best.rgb;
    const sum = r + g + b;
    const share = (v: number) => Math.round((100 * v) / sum);
    const hue = band![1] <= 530 ? 'blue' : band![0] >= 560 ? 'red' : 'green';
    throw new InputError(
      `--pairs ${pair.positionPx}=${pair.wavelengthNm}: the peak at ${best.positionPx.toFixed(1)} px is ${hue} ` +
        `(R ${share(r)} %, G ${share(g)} %, B ${share(b)} % of its signal), which puts it ` +
        `${!Number.isFinite(band![1]) ? `above ${band![0]}` : band![0] > 0 ? `at ${band![0]}–${band![1]}` : `below ${band![1]}`} nm, ` +
        `not ${pair.wavelengthNm} nm; check the pair (two swapped, or another line)`,
      'pairs',
    );
  }
}

/**
 * The lamp's lines did not match with the direction given: when they match with the other one, the direction is the
 * mistake (a photo flipped, the rig turned round), and the error says so rather than blaming the lamp.
 */
function checkDirection(peaks: readonly Peak[], usable: readonly SpectralLine[], o: CalibrateOptions, priors: MatchLinesOptions['grating']): void {
  const given = o.match.direction;
  const other = given === 'increasing' ? 'decreasing' : 'increasing';
  const flipped = matchLines(peaks, usable, { grating: priors, ...CALIBRATE_MATCH_DEFAULTS, ...o.match, direction: other, pairs: o.pairs, snapPx: o.snapPx });
  if (!flipped.accepted) return;
  throw new InputError(
    `--direction ${given}: the lamp's lines match the peaks only with wavelength ${other} along the band ` +
      `(${flipped.score?.matched ?? flipped.matches.length} peaks, false-match bound ${(flipped.score?.falseMatchProbability ?? NaN).toExponential(1)}); ` +
      `give --direction ${other}, or leave it out to let the matching decide`,
    'direction',
  );
}

/**
 * The lamp's lines did not match together with two or more pairs. Without the pairs they may match on their own: then
 * the scale they give is an independent check of the pairs. A pair it contradicts (a line misread, a digit slipped,
 * another lamp's line) is an error naming the pair and what the lamp's scale reads there; pairs it agrees with were only
 * too imprecise to hold the matching together, and the lamp's match is taken, with a warning. When the lamp fails on its
 * own too, the declined match is returned, for the caller to fall back on the pairs alone.
 */
function checkPairsAgainstLamp(
  peaks: readonly Peak[],
  usable: readonly SpectralLine[],
  declined: MatchResult,
  o: CalibrateOptions,
  priors: MatchLinesOptions['grating'],
  warnings: string[],
): MatchResult {
  const alone = matchLines(peaks, usable, { grating: priors, ...CALIBRATE_MATCH_DEFAULTS, ...o.match, pairs: [], snapPx: o.snapPx });
  if (!alone.accepted || !alone.model) return declined;
  const model = alone.model;
  const readings = o.pairs.map((pair) => {
    const readNm = wavelengthAtNm(model, pair.positionPx);
    // The pair may sit up to snapPx off its peak, and the lamp's scale is good to a few tenths of a px inside its lines.
    const toleranceNm = (o.snapPx + 1) * Math.abs(dispersionAtNmPerPx(model, pair.positionPx));
    const line = alone.matches.find((m) => m.line && Math.abs(m.positionPx - pair.positionPx) <= o.snapPx)?.line;
    return { pair, readNm, toleranceNm, line };
  });
  const wrong = readings.filter((r) => !(Math.abs(r.readNm - r.pair.wavelengthNm) <= r.toleranceNm));
  if (wrong.length > 0) {
    const what = wrong.map(
      (r) => `${r.readNm.toFixed(2)} nm at ${r.pair.positionPx} px` + (r.line ? ` (${lineLabel(r.line)})` : '') + `, not ${r.pair.wavelengthNm}`,
    );
    const one = wrong.length === 1;
    throw new InputError(
      `--pairs ${wrong.map((r) => `${r.pair.positionPx}=${r.pair.wavelengthNm}`).join(', ')} ${one ? 'contradicts' : 'contradict'} the lamp's lines: ` +
        `on their own they match ${alone.score?.matched ?? alone.matches.length} peaks (false-match bound ${(alone.score?.falseMatchProbability ?? NaN).toExponential(1)}) ` +
        `and their scale reads ${what.join('; ')}; tied to the pair${one ? '' : 's'} they match no scale. ` +
        `Correct or drop the pair${one ? '' : 's'}, or check --lamp`,
      'pairs',
    );
  }
  warnings.push(
    `the lamp's lines match the peaks on their own but not tied to the given pairs, which agree with their scale only to ` +
      `${Math.max(...readings.map((r) => Math.abs(r.readNm - r.pair.wavelengthNm))).toFixed(2)} nm: calibrated from the lamp's lines, ` +
      'the pairs used as a check only',
  );
  warnings.push(...alone.warnings.filter((w) => !warnings.includes(w)));
  return alone;
}

export type { GratingFitOptions };
