/**
 * The `calibrate` task: a lamp photo (or pixel-axis spectrum CSV) → lamp-line matching and/or given pairs → dispersion
 * fit → the report `glowprint calibrate --json` prints, and the instrument profile (written with `out`). The CLI, the
 * server route and the demo call runCalibrate; options come as the command takes them (text).
 */
import path from 'node:path';
import { existsSync, statSync } from 'node:fs';
import { calibrateFromPeaks, gratingPriors, type CalibrationResult, zeroOrderSighting } from '../core/calibration/calibrate.js';
import type { DispersionFit } from '../core/calibration/fitDispersion.js';
import type { ManualPair } from '../core/calibration/matchLines.js';
import { strength } from '../core/calibration/match/context.js';
import { calibrationLampLines } from '../core/calibration/calibrationLines.js';
import { dispersionAtNmPerPx, wavelengthAtNm } from '../core/calibration/model.js';
import { buildProfile, type InstrumentProfile } from '../core/calibration/profile.js';
import { InputError, parseNumberOption } from '../core/errors.js';
import { lampLines, type LampLines } from '../core/lines/index.js';
import type { Peak } from '../core/types.js';
import { airToVacuumNm } from '../core/units/airVacuum.js';
import { lampLinesFor, loadLampCatalog } from '../io/lineList.js';
import { writeProfile } from '../io/profileFile.js';
import { packageVersion } from '../io/projectRoot.js';
import { analyseSpectrumInput, parseBandOption, photoGeometryOf } from './spectrum.js';

/** The options of `glowprint calibrate`, as text the way the command (or an API form) gives them. */
export interface CalibrateOptions {
  lamp?: string;
  pairs?: string;
  model: 'poly' | 'grating' | 'auto';
  degree?: string;
  order?: string;
  focalPx?: string;
  direction: 'either' | 'increasing' | 'decreasing';
  out?: string;
  json?: boolean;
  vacuum?: boolean;
  band?: string;
  dark?: string;
  maxPixels?: string;
}

/**
 * The lines automatic matching works with: every listed line of the lamp's spectra (calibrationLampLines, shared with
 * the web app). A spec naming a line-list file is read as the user gave it.
 */
export function calibrationLines(spec: string, resolutionNm?: number): LampLines {
  const tokens = spec.split(/[,+]/).map((t) => t.trim());
  const names = (t: string) => /[\\/]/.test(t) || /\.(csv|tsv|txt|ascii|dat)$/i.test(t) || (existsSync(t) && statSync(t).isFile());
  if (tokens.some(names)) return lampLinesFor(spec, resolutionNm === undefined ? {} : { resolutionNm });
  return calibrationLampLines(spec, loadLampCatalog(), resolutionNm);
}

/** `812.4=546.074,1040.2=611.6` → pairs; each bad item is named. */
export function parsePairs(text: string): ManualPair[] {
  const items = text.split(',').map((s) => s.trim()).filter((s) => s !== '');
  if (items.length === 0) throw new InputError('--pairs: expected position_px=wavelength_nm items separated by commas', '--pairs');
  return items.map((item) => {
    const m = /^([^=]+)=([^=]+)$/.exec(item);
    const x = m ? Number(m[1].trim()) : NaN;
    const l = m ? Number(m[2].trim()) : NaN;
    if (!m || !Number.isFinite(x) || !Number.isFinite(l) || m[1].trim() === '' || m[2].trim() === '') {
      throw new InputError(`--pairs: ${JSON.stringify(item)} is not position_px=wavelength_nm (e.g. 812.4=546.074)`, '--pairs');
    }
    if (!(l >= 100 && l <= 3000)) throw new InputError(`--pairs: ${JSON.stringify(item)}: the wavelength ${l} nm is not a plausible air wavelength (100–3000 nm)`, '--pairs');
    return { positionPx: x, wavelengthNm: l };
  });
}

/** What `glowprint calibrate --json` prints (before snake_case). */
export interface CalibrateReport {
  command: 'calibrate';
  input: { file: string; kind: 'photo' | 'csv'; widthPx?: number; heightPx?: number };
  lamp: string | null;
  lampLines: number;
  medium: 'air' | 'vacuum';
  model: Record<string, unknown>;
  rmsNm: number;
  rmsPx: number;
  dispersionNmPerPx: number;
  rangeNm: [number, number];
  rangePx: [number, number];
  linesUsed: number;
  /** Least and greatest 1σ of the fitted scale inside the range (nm), from the parameter covariance. */
  scaleUncertaintyNm: [number, number];
  /** RMS of each used line's prediction by the fit of the others (nm); null when too few lines. */
  predictionRmsNm: number | null;
  linesPerMm?: number;
  linesPerMmUncertainty?: number;
  lines: Array<{
    positionPx: number;
    positionUncertaintyPx: number;
    wavelengthNm: number;
    fittedNm: number;
    residualNm: number;
    residualPx: number;
    used: boolean;
    excluded?: string;
    label?: string;
    source: 'manual' | 'matched';
    /** Diffraction order of the peak: order-2 images of matched lines are listed, never used (their residual is 2λ against the scale). */
    order: 1 | 2;
  }>;
  match: Record<string, unknown> | null;
  modelSelection: Array<Record<string, unknown>>;
  profile: string | null;
  warnings: string[];
}

function modelSummary(fit: DispersionFit, focalLengthSource: string): Record<string, unknown> {
  const m = fit.model;
  if (m.kind === 'polynomial') {
    return { kind: 'polynomial', degree: m.degree, centerPx: m.centerPx, scalePx: m.scalePx, coefficientsNm: m.coefficientsNm };
  }
  const sd = (i: number) => Math.sqrt(Math.max(0, m.covariance[i][i]));
  return {
    kind: 'grating',
    order: m.order,
    linesPerMm: fit.linesPerMm,
    linesPerMmUncertainty: fit.linesPerMmUncertainty,
    grooveSpacingNm: m.grooveSpacingNm,
    grooveSpacingUncertaintyNm: sd(0),
    cameraAngleDeg: m.cameraAngleDeg,
    cameraAngleUncertaintyDeg: sd(1),
    incidenceAngleDeg: m.incidenceAngleDeg,
    axisPositionPx: m.axisPositionPx,
    axisPositionUncertaintyPx: sd(2),
    focalLengthPx: m.focalLengthPx,
    focalLengthUncertaintyPx: sd(3),
    focalLengthSource,
    direction: m.direction,
  };
}

/** Builds the report; in vacuum mode wavelengths (reference, fitted, range) are converted from air by Ciddor (1996). */
export function calibrateReport(
  result: CalibrationResult,
  context: {
    input: CalibrateReport['input'];
    lamp: string | null;
    lampLines: number;
    vacuum: boolean;
    focalLengthSource: string;
    profile: string | null;
    warnings: string[];
    /** Where the band search saw the zero order (px along the band), when it did and the matcher was given it. */
    zeroOrderSeenPx?: number;
  },
): CalibrateReport {
  const { fit, match } = result;
  const conv = (l: number) => (context.vacuum ? airToVacuumNm(l) : l);
  const n = (l: number) => (context.vacuum ? airToVacuumNm(l) / l : 1);
  const report: CalibrateReport = {
    command: 'calibrate',
    input: context.input,
    lamp: context.lamp,
    lampLines: context.lampLines,
    medium: context.vacuum ? 'vacuum' : 'air',
    model: modelSummary(fit, context.focalLengthSource),
    rmsNm: fit.rmsNm,
    rmsPx: fit.rmsPx,
    dispersionNmPerPx: fit.dispersionNmPerPx * n((fit.rangeNm[0] + fit.rangeNm[1]) / 2),
    rangeNm: [conv(fit.rangeNm[0]), conv(fit.rangeNm[1])],
    rangePx: fit.rangePx,
    linesUsed: fit.linesUsed,
    scaleUncertaintyNm: [fit.scaleUncertaintyNm[0] * n(fit.rangeNm[0]), fit.scaleUncertaintyNm[1] * n(fit.rangeNm[1])],
    predictionRmsNm: fit.predictionRmsNm,
    lines: fit.lines.map((l): CalibrateReport['lines'][number] => ({
      positionPx: l.positionPx,
      positionUncertaintyPx: l.positionUncertaintyPx,
      wavelengthNm: conv(l.wavelengthNm),
      fittedNm: conv(l.fittedNm),
      residualNm: conv(l.wavelengthNm) - conv(l.fittedNm),
      residualPx: l.residualPx,
      used: l.used,
      excluded: l.excluded,
      label: l.label,
      source: l.source,
      order: 1,
    })).concat(
      (match?.accepted ? match.secondOrder : []).map((m): CalibrateReport['lines'][number] => {
        // The order-2 image of λ lies where the order-1 scale reads 2λ: its fitted value is half that reading.
        const fittedNm = wavelengthAtNm(fit.model, m.positionPx) / 2;
        return {
          positionPx: m.positionPx,
          positionUncertaintyPx: m.positionUncertaintyPx,
          wavelengthNm: conv(m.wavelengthNm),
          fittedNm: conv(fittedNm),
          residualNm: conv(m.wavelengthNm) - conv(fittedNm),
          residualPx: (2 * (m.wavelengthNm - fittedNm)) / dispersionAtNmPerPx(fit.model, m.positionPx),
          used: false,
          excluded: 'order 2',
          label: m.line ? `${m.line.spectrum} ${m.line.wavelengthNm.toFixed(3)} (order 2)` : undefined,
          source: 'matched',
          order: 2,
        };
      }),
    ),
    match: match?.score
      ? {
          matched: match.score.matched,
          secondOrder: match.score.secondOrder,
          peaksInRange: match.score.peaksInRange,
          expectedByChance: match.score.expectedByChance,
          falseMatchProbability: match.score.falseMatchProbability,
          tolerancePx: match.score.tolerancePx,
          scoredWith: match.score.model,
          ...(context.zeroOrderSeenPx !== undefined
            ? {
                zeroOrder: {
                  seenPx: context.zeroOrderSeenPx,
                  counted: match.score.zeroOrder !== undefined,
                  ...(match.score.zeroOrder
                    ? {
                        predictedPx: match.score.zeroOrder.predictedPx,
                        agreementHalfWidthPx: match.score.zeroOrder.halfWidthPx,
                        chanceOfAgreement: 10 ** match.score.zeroOrder.log10Probability,
                      }
                    : {}),
                },
              }
            : {}),
        }
      : null,
    modelSelection: fit.candidates.map((c) => ({ ...c, criterionName: fit.criterion })),
    profile: context.profile,
    warnings: context.warnings,
  };
  if (fit.linesPerMm !== undefined) {
    report.linesPerMm = fit.linesPerMm;
    report.linesPerMmUncertainty = fit.linesPerMmUncertainty;
  }
  return report;
}

/** The focal length with its uncertainty and where it came from: fixed when given, else fitted (to an EXIF prior). */
function focalLengthText(m: Record<string, unknown>): string {
  const f = (m.focalLengthPx as number).toFixed(0);
  const u = m.focalLengthUncertaintyPx as number;
  if (m.focalLengthSource === 'given') return `${f} px (given)`;
  const pm = Number.isFinite(u) && u > 0 ? ` ± ${u.toFixed(0)}` : '';
  return `${f}${pm} px (${m.focalLengthSource === 'exif' ? 'fitted to the EXIF focal length' : 'fitted'})`;
}

/** The readable summary and residual table of a calibration. */
export function formatCalibrateReport(r: CalibrateReport): string {
  const out: string[] = [];
  const unit = r.medium === 'vacuum' ? 'nm (vacuum)' : 'nm (air)';
  out.push(`calibration of ${r.input.file}${r.lamp ? ` with ${r.lamp} (${r.lampLines} lines)` : ' from the given pairs'}`);
  const m = r.model;
  if (m.kind === 'grating') {
    out.push(
      `model: grating, order ${m.order}: ${(m.linesPerMm as number).toFixed(1)} ± ${(m.linesPerMmUncertainty as number).toFixed(1)} lines/mm, ` +
        `camera at ${(m.cameraAngleDeg as number).toFixed(2)}°, f = ${focalLengthText(m)}`,
    );
  } else {
    out.push(`model: polynomial of degree ${m.degree}`);
  }
  out.push(
    `range ${r.rangeNm[0].toFixed(2)}–${r.rangeNm[1].toFixed(2)} ${unit}, ${r.dispersionNmPerPx.toFixed(4)} nm/px at its middle; ` +
      `RMS ${r.rmsNm.toFixed(3)} nm = ${r.rmsPx.toFixed(3)} px over ${r.linesUsed} lines`,
  );
  const [uLo, uHi] = r.scaleUncertaintyNm;
  const digits = (v: number) => (v >= 0.1 ? 2 : v >= 0.001 ? 3 : 4);
  out.push(
    `scale uncertainty (1σ) ${uLo.toFixed(digits(uLo))}–${uHi.toFixed(digits(uLo))} nm inside the range` +
      (r.predictionRmsNm !== null ? `; each line predicted by the fit of the others to ${r.predictionRmsNm.toFixed(3)} nm RMS` : ''),
  );
  if (r.match) {
    out.push(
      `matching: ${r.match.matched} of ${r.match.peaksInRange} peaks on lamp lines` +
        `${r.match.secondOrder ? ` and ${r.match.secondOrder} on their order-2 images` : ''} (chance alone: ${(r.match.expectedByChance as number).toFixed(1)}; ` +
        `false-match bound ${(r.match.falseMatchProbability as number).toExponential(1)})`,
    );
    const z = r.match.zeroOrder as
      | { seenPx: number; counted: boolean; predictedPx?: number; agreementHalfWidthPx?: number; chanceOfAgreement?: number }
      | undefined;
    // The agreement is judged with the matching's scale, a grating model unless the matching fell back on polynomials.
    const scaleName = m.kind === 'grating' || r.match.scoredWith !== 'grating' ? 'scale' : "matching's grating scale";
    if (z?.counted) {
      out.push(
        `zero order: seen at ${z.seenPx.toFixed(1)} px, where the ${scaleName} puts 0 nm (${z.predictedPx!.toFixed(1)} ± ${z.agreementHalfWidthPx!.toFixed(1)} px); ` +
          `chance of that agreement ${z.chanceOfAgreement!.toExponential(1)}, counted in the bound`,
      );
    } else if (z) {
      out.push(
        `zero order: seen at ${z.seenPx.toFixed(1)} px, but the ${scaleName} does not put 0 nm there (a grating not square to the light, ` +
          'or the spot is no zero order): not counted',
      );
    }
  }
  out.push('');
  out.push('position_px   wavelength_nm   fitted_nm   residual_nm  used  line');
  for (const l of r.lines) {
    out.push(
      `${l.positionPx.toFixed(2).padStart(11)}  ${l.wavelengthNm.toFixed(3).padStart(14)}  ${l.fittedNm.toFixed(3).padStart(10)}  ` +
        `${l.residualNm.toFixed(3).padStart(12)}  ${(l.used ? 'yes' : l.excluded ?? 'no').padEnd(4)}  ${l.label ?? ''}`,
    );
  }
  if (r.profile) out.push('', `profile written to ${r.profile}`);
  return out.join('\n') + '\n';
}

/** The whole command without printing: input → peaks → calibration → report (+ profile). */
export async function runCalibrate(input: string, opts: CalibrateOptions): Promise<{ report: CalibrateReport; profile: InstrumentProfile }> {
  if (!opts.lamp && !opts.pairs) throw new InputError('nothing to calibrate with: give --lamp (e.g. --lamp Hg), --pairs, or both', '--lamp');
  const degree = parseNumberOption('--degree', opts.degree);
  if (degree !== undefined && !(Number.isInteger(degree) && degree >= 1 && degree <= 4)) {
    throw new InputError(`--degree: expected an integer from 1 to 4, got ${opts.degree}`, '--degree');
  }
  if (degree !== undefined && opts.model === 'grating') throw new InputError('--degree applies to --model poly, not to the grating model', '--degree');
  const order = parseNumberOption('--order', opts.order) ?? 1;
  if (!(Number.isInteger(order) && order >= 1 && order <= 10)) throw new InputError(`--order: expected a diffraction order from 1 to 10, got ${opts.order}`, '--order');
  const focalLengthPx = parseNumberOption('--focal-px', opts.focalPx);
  if (focalLengthPx !== undefined && !(focalLengthPx > 0)) throw new InputError(`--focal-px: expected a positive focal length in pixels, got ${opts.focalPx}`, '--focal-px');
  const maxPixels = parseNumberOption('--max-pixels', opts.maxPixels);
  const pairs = opts.pairs ? parsePairs(opts.pairs) : [];
  const inputs = [input, ...(opts.dark ? [opts.dark] : [])];
  if (opts.out && inputs.some((f) => path.resolve(f) === path.resolve(opts.out!))) {
    throw new InputError(`${opts.out}: refusing to write over an input file; choose another output name`, opts.out);
  }
  // Lamp lines first: a misspelt lamp should not wait for a photo to be decoded.
  const lamp = opts.lamp ? calibrationLines(opts.lamp) : null;

  const band = opts.band === undefined ? undefined : parseBandOption(opts.band);
  const run = await analyseSpectrumInput(input, { dark: opts.dark, band, maxPixels });
  const { analysis, spectrum } = run;
  checkPairsInside(pairs, spectrum.positionPx, input, analysis.input.kind === 'photo');
  if (analysis.input.kind === 'csv' && analysis.input.axis === 'wavelength') {
    throw new InputError(`${input}: this spectrum already has a wavelength axis; calibration needs positions in pixels`, input);
  }
  const photo = analysis.input.kind === 'photo';
  // A photo's geometry, or what a CSV written from one by glowprint spectrum --csv keeps of it: the same priors then.
  const geometry = photoGeometryOf(run);
  const image = geometry ? { widthPx: geometry.widthPx, heightPx: geometry.heightPx } : null;
  const bandGeometry = geometry ? geometry.band : null;
  const priors = gratingPriors({ image, band: bandGeometry, focalLength35mmMm: geometry?.focalLength35mmMm, focalLengthPx });
  const modelChoice = opts.model === 'poly' ? 'polynomial' : opts.model;
  // A zero order in the photo is the 0 nm point of a first-order scale: evidence for the scale that puts it there.
  const zeroOrder = order === 1 ? zeroOrderSighting(geometry?.zeroOrderPx) : null;
  let result: CalibrationResult;
  try {
    result = calibrateFromPeaks(analysis.peaks, lamp ? lamp.lines : null, {
      pairs,
      match: { direction: opts.direction, zeroOrder },
      linesAtResolution: opts.lamp ? (resolutionNm) => calibrationLines(opts.lamp!, resolutionNm).lines : null,
      fit: {
        model: modelChoice,
        degree: degree ?? null,
        grating: { order, focalLengthPx: priors.focalLengthPx, axisPositionPx: priors.axisPositionPx },
      },
    });
  } catch (e) {
    // The lamp's lines were declined: say where the brightest peaks are, for --pairs.
    if (e instanceof InputError && e.source === 'lamp') throw new InputError(`${e.message}${brightestPeaksHint(analysis.peaks)}`, e.source);
    throw e;
  }
  const warnings = [...analysis.warnings, ...(lamp?.warnings ?? []), ...result.warnings];
  if (result.fit.model.kind === 'grating' && priors.focalLengthSource === 'fitted') {
    warnings.push('no focal length known (no EXIF 35-mm focal length, no --focal-px): f was fitted, and the line density is correspondingly uncertain');
  }
  const profile = buildProfile(result.fit, {
    lamp: opts.lamp ?? 'pairs',
    sourceFile: path.basename(input),
    image,
    camera: photo && analysis.input.exif && Object.keys(analysis.input.exif).length ? { ...analysis.input.exif } : null,
    band: bandGeometry,
    focalLengthSource: priors.focalLengthSource,
    createdAt: new Date().toISOString(),
    software: { name: 'glowprint', version: packageVersion() },
  });
  if (opts.out) await writeProfile(opts.out, profile, { inputs });
  const report = calibrateReport(result, {
    input: { file: input, kind: analysis.input.kind, widthPx: analysis.input.widthPx, heightPx: analysis.input.heightPx },
    lamp: opts.lamp ?? null,
    lampLines: lamp ? lamp.lines.length : 0,
    vacuum: opts.vacuum === true,
    focalLengthSource: priors.focalLengthSource,
    profile: opts.out ?? null,
    warnings,
    ...(zeroOrder ? { zeroOrderSeenPx: zeroOrder.positionPx } : {}),
  });
  return { report, profile };
}

/**
 * A given pair must lie on the spectrum: a position beyond its ends (a typo, an image coordinate instead of one
 * along the band) would otherwise be fitted as given and saved as a scale.
 */
function checkPairsInside(pairs: readonly ManualPair[], positionsPx: ArrayLike<number>, input: string, photo: boolean): void {
  if (pairs.length === 0 || positionsPx.length === 0) return;
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < positionsPx.length; i++) {
    lo = Math.min(lo, positionsPx[i]);
    hi = Math.max(hi, positionsPx[i]);
  }
  const outside = pairs.find((q) => q.positionPx < lo - 0.5 || q.positionPx > hi + 0.5);
  if (!outside) return;
  const where = photo ? 'measured along the band, as in the peak table of glowprint spectrum' : "in the CSV's position column";
  throw new InputError(
    `--pairs: ${outside.positionPx}=${outside.wavelengthNm}: position ${outside.positionPx} px lies beyond the spectrum of ${input} ` +
      `(${lo.toFixed(0)}–${hi.toFixed(0)} px); positions are ${where}, written position_px=wavelength_nm`,
    '--pairs',
  );
}

/** The positions of the brightest peaks, for a user who must name two of them with --pairs. */
function brightestPeaksHint(peaks: readonly Peak[]): string {
  const shown = [...peaks]
    .filter((p) => Number.isFinite(p.positionPx))
    .sort((a, b) => strength(b) - strength(a))
    .slice(0, BRIGHTEST_PEAKS_SHOWN)
    .sort((a, b) => a.positionPx - b.positionPx);
  if (shown.length < 2) return '';
  const list = shown.map((p) => `${p.positionPx.toFixed(1)}${p.saturated ? ' (saturated)' : ''}`).join(', ');
  // The example pairs the two unsaturated ones farthest apart (a clipped peak's centre is the less certain).
  const clean = shown.filter((p) => !p.saturated);
  const [a, b] = clean.length >= 2 ? [clean[0], clean[clean.length - 1]] : [shown[0], shown[shown.length - 1]];
  return ` (the brightest peaks lie at ${list} px; name two you know, e.g. --pairs ${a.positionPx.toFixed(1)}=…,${b.positionPx.toFixed(1)}=…; the spectrum's peak table lists them all)`;
}

/** How many of the brightest peaks the declined-lamp message names. */
const BRIGHTEST_PEAKS_SHOWN = 5;
