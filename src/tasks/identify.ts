/**
 * The `identify` task: photo or spectrum CSV → wavelength scale → which species, which lines, what is unexplained,
 * which laser. The CLI, the server route, the watch command and the demo call identifyFile and identificationJson, so
 * every front end gives the same answer.
 */
import path from 'node:path';
import { wavelengthAtNm } from '../core/calibration/model.js';
import { applyProfileToPeaks, positionsInProfileFrame, type InstrumentProfile } from '../core/calibration/profile.js';
import { InputError } from '../core/errors.js';
import type { CalibratedPeak } from '../core/identify/identifySpecies.js';
import { dispersionPriorNmPerPx } from '../core/identify/dispersionPrior.js';
import { identifySpectrum, type IdentifyInput, type SpectrumIdentification } from '../core/identify/identifySpectrum.js';
import { plotIdentificationSvg } from '../core/identify/plotIdentification.js';
import type { ListedLine } from '../core/lines/index.js';
import { formatWithUncertainty } from '../core/report/html.js';
import type { Spectrum } from '../core/types.js';
import { loadLaserDefinitions, loadLineFile, loadLineList } from '../io/lineList.js';
import { createSvgDocument } from '../io/svgDocument.js';
import { analyseSpectrumInput } from './spectrum.js';

/** What a camera can see at all: wavelengths outside are other orders or artefacts of the scale. */
const CAMERA_RANGE_NM: [number, number] = [350, 1000];

export interface IdentifyFileOptions {
  /** A calibration profile (already read); without one the spectrum calibrates itself. */
  profile?: InstrumentProfile;
  /** The line list to identify with. */
  lines: readonly ListedLine[];
}

/** One file's identification, with what the outputs need. */
export interface IdentifyFileResult {
  file: string;
  identification: SpectrumIdentification;
  spectrum: Spectrum;
  /** Wavelength of every spectrum sample on the scale used (null when there is none). */
  sampleWavelengthNm: Float64Array | null;
  warnings: string[];
}

/**
 * Photo or spectrum CSV → identification: the spectrum pipeline of `glowprint spectrum` (tasks/spectrum.ts), then the
 * wavelength scale — the profile's (mapped onto this photo's band), the CSV's own wavelength axis, or the spectrum's
 * own lines (self-calibration) — and core/identify.
 */
export async function identifyFile(file: string, options: IdentifyFileOptions): Promise<IdentifyFileResult> {
  const { analysis, spectrum } = await analyseSpectrumInput(file);
  const warnings = [...analysis.warnings];
  const lasers = loadLaserDefinitions();
  const pos = spectrum.positionPx;
  const extent: [number, number] = [pos[0], pos[pos.length - 1]];
  let input: IdentifyInput;
  let sampleWavelengthNm: Float64Array | null = null;
  if (options.profile) {
    const profile = options.profile;
    const image = analysis.input.kind === 'photo' ? { widthPx: analysis.input.widthPx!, heightPx: analysis.input.heightPx! } : null;
    const band = analysis.band;
    const applied = applyProfileToPeaks(analysis.peaks, profile, { image, band, source: file });
    warnings.push(...applied.warnings);
    const framePositions = profile.band && band ? positionsInProfileFrame(Array.from(pos), band, profile.band).positionsPx : Array.from(pos);
    sampleWavelengthNm = Float64Array.from(framePositions, (x) => wavelengthAtNm(profile.model, x));
    input = {
      from: 'profile',
      peaks: applied.peaks.filter((p) => Number.isFinite(p.wavelengthNm) && Number.isFinite(p.wavelengthUncertaintyNm)),
      rmsNm: profile.rmsNm,
      coveredRangeNm: coveredRange(sampleWavelengthNm),
      lamp: profile.lamp,
    };
  } else if (spectrum.wavelengthNm) {
    sampleWavelengthNm = spectrum.wavelengthNm;
    input = { from: 'file', peaks: analysis.peaks as CalibratedPeak[], coveredRangeNm: coveredRange(spectrum.wavelengthNm) };
  } else {
    // The photo's focal length (EXIF 35-mm equivalent and size; without EXIF the usual equivalents) bounds the
    // dispersion its grating can give: the self-calibration tries no scale outside it.
    const photo = analysis.input.kind === 'photo' && analysis.input.widthPx && analysis.input.heightPx;
    const dispersionNmPerPx = photo
      ? dispersionPriorNmPerPx({
          image: { widthPx: analysis.input.widthPx!, heightPx: analysis.input.heightPx! },
          focalLength35mmMm: analysis.input.exif?.focalLength35mmMm,
        })
      : undefined;
    input = { from: 'self', peaks: analysis.peaks, positionRangePx: extent, ...(dispersionNmPerPx ? { dispersionNmPerPx } : {}) };
  }
  const identification = identifySpectrum(input, { lines: options.lines, lasers });
  if (identification.scale) {
    const model = identification.scale.model;
    sampleWavelengthNm = Float64Array.from(pos, (x) => wavelengthAtNm(model, x));
  }
  return { file, identification, spectrum, sampleWavelengthNm, warnings: [...warnings, ...identification.warnings] };
}

function coveredRange(wavelengths: Float64Array): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (const w of wavelengths) {
    if (!Number.isFinite(w)) continue;
    lo = Math.min(lo, w);
    hi = Math.max(hi, w);
  }
  return [Math.max(CAMERA_RANGE_NM[0], lo), Math.min(CAMERA_RANGE_NM[1], hi)];
}

/** The JSON object of one result (printJson turns the keys into snake_case). */
export function identificationJson(r: IdentifyFileResult): Record<string, unknown> {
  const id = r.identification;
  const line = (l: SpectrumIdentification['peaks'][number]['line']) =>
    l ? { element: l.element, spectrum: l.spectrum, wavelengthNm: l.wavelengthNm, ...(l.blendedWithNm ? { blendedWithNm: l.blendedWithNm } : {}), ...(l.order ? { order: l.order } : {}), ...(l.molecular ? { molecular: true } : {}) } : null;
  const peak = (p: SpectrumIdentification['peaks'][number]) => ({
    positionPx: p.positionPx,
    wavelengthNm: p.wavelengthNm,
    wavelengthUncertaintyNm: p.wavelengthUncertaintyNm,
    fwhmNm: p.fwhmNm,
    area: p.area,
    snr: p.snr,
    saturated: p.saturated,
    blended: p.blended,
    line: line(p.line),
    confidence: p.confidence,
  });
  return {
    command: 'identify',
    file: r.file,
    emissionLinesFound: id.emissionLinesFound,
    calibration: id.calibration,
    species: id.species
      .filter((s) => s.present || s.score >= 0.01)
      .map((s) => ({
        element: s.element,
        score: s.score,
        present: s.present,
        linesMatched: s.linesMatched,
        fluxFraction: s.fluxFraction,
        molecular: s.molecular,
        evidence: s.evidence,
        missingLinesNm: s.missingLinesNm,
      })),
    peaks: id.peaks.map(peak),
    unexplained: id.unexplained.map(peak),
    unexplainedFluxFraction: id.unexplainedFluxFraction,
    ...(id.laser ? { laser: id.laser } : {}),
    ...(id.scaleCandidates
      ? {
          scaleCandidates: id.scaleCandidates.map((c) => ({
            lamp: c.lamp,
            linesUsed: c.linesUsed,
            rmsNm: c.rmsNm,
            probability: c.probability,
            present: c.present,
            chosen: c.chosen,
          })),
        }
      : {}),
    warnings: r.warnings,
  };
}

/** The readable report of one result. */
export function formatIdentification(r: IdentifyFileResult): string {
  const id = r.identification;
  const out: string[] = [`${r.file}:`];
  const c = id.calibration;
  if (c) {
    const how =
      c.from === 'profile'
        ? `from the profile${c.lamp ? ` (${c.lamp} lamp)` : ''}, RMS ${c.rmsNm!.toFixed(3)} nm`
        : c.from === 'file'
          ? 'from the file\'s own wavelength axis'
          : `from the spectrum itself (${c.lamp} lines, ${c.linesUsed} used, RMS ${c.rmsNm!.toFixed(2)} nm, probability ${c.probability!.toFixed(2)}): confidence lowered`;
    out.push(`  wavelength scale ${how}`);
  } else {
    out.push('  no wavelength scale');
  }
  if (!id.emissionLinesFound) {
    out.push('  no emission lines found: nothing is identified');
    return out.join('\n') + '\n';
  }
  if (id.laser) {
    const l = id.laser;
    out.push(
      `  laser line ${l.wavelengthNm.toFixed(2)} ± ${l.wavelengthUncertaintyNm.toFixed(2)} nm (${Math.round(100 * l.fluxFraction)} % of the light)` +
        (l.candidates.length ? `: ${l.candidates.map((k) => `${k.name}${k.description ? ` (${k.description})` : ''}`).join('; ')}` : ': no known laser kind'),
    );
  }
  const present = id.species.filter((s) => s.present);
  if (present.length === 0) out.push('  no species of the line list explains the peaks');
  else {
    out.push('  present:');
    for (const s of present) {
      out.push(
        `    ${s.element.padEnd(3)} score ${s.score.toFixed(2)}  ${String(s.linesMatched).padStart(3)} lines  ${(100 * s.fluxFraction).toFixed(1).padStart(5)} % of the line flux` +
          (s.molecular ? '  (molecular bands)' : '') +
          (s.missingLinesNm.length ? `  missing: ${s.missingLinesNm.map((w) => w.toFixed(1)).join(', ')} nm` : ''),
      );
    }
  }
  const next = id.species.filter((s) => !s.present && s.score >= 0.05).slice(0, 3);
  if (next.length) out.push(`  not present (best others): ${next.map((s) => `${s.element} ${s.score.toFixed(2)}`).join(', ')}`);
  const strong = id.unexplained.slice(0, 10);
  if (strong.length) {
    out.push(`  unexplained (${Math.round(100 * id.unexplainedFluxFraction)} % of the flux), brightest first:`);
    // Each to the decimals its uncertainty earns (two significant digits of it): 515.03 ± 0.04 nm, not 515.0 ± 0.0.
    out.push('    ' + strong.map((p) => formatWithUncertainty(p.wavelengthNm, p.wavelengthUncertaintyNm, 'nm')).join(', '));
  }
  return out.join('\n') + '\n';
}

/** Which lines to identify with, as the command takes them. */
export interface IdentifyLineOptions {
  /** Comma-separated species, e.g. "Ne,Ar,Hg" (N2 for the molecular bands). */
  elements?: string;
  /** A line-list file (NIST ASD export or CSV) instead of the project's. */
  lineList?: string;
  /** Include the N2 band heads as a molecular candidate. @default true */
  bands?: boolean;
}

/** The line list for the run: the project's (or the user's file), limited to `elements`, with N2 band heads. */
export function identifyLines(opts: IdentifyLineOptions, warnings: string[]): ListedLine[] {
  const requested = opts.elements?.split(',').map((s) => s.trim()).filter(Boolean);
  let lines: ListedLine[];
  if (opts.lineList) {
    const r = loadLineFile(opts.lineList);
    warnings.push(...r.warnings);
    lines = r.lines;
    if (lines.length === 0) throw new InputError(`${opts.lineList}: the line list has no lines`, opts.lineList);
  } else {
    lines = loadLineList({ includeBands: opts.bands !== false });
  }
  if (!requested) return lines;
  const atoms = requested.filter((e) => !/^N2\+?$/i.test(e));
  const picked = atoms.length ? loadLineList({ elements: atoms }).map((l) => l.element) : [];
  const keep = new Set([...picked, ...(requested.some((e) => /^N2\+?$/i.test(e)) ? ['N2'] : [])]);
  const chosen = lines.filter((l) => keep.has(l.element));
  if (chosen.length === 0) throw new InputError(`--elements: none of ${requested.join(', ')} has lines in the line list`, '--elements');
  return chosen;
}

/** The spectrum of one result with its lines labelled, as SVG text. */
export function identificationSvg(r: IdentifyFileResult): string {
  return plotIdentificationSvg(r.spectrum, r.identification.peaks, r.identification.species, {
    document: createSvgDocument(),
    title: `Lines identified in ${path.basename(r.file)}`,
    wavelengthNm: r.sampleWavelengthNm ?? undefined,
  });
}
