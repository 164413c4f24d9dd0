/**
 * The `spectrum` task: photo or CSV → 1-D spectrum → peak table, with its text, CSV and SVG renderings. The CLI (and
 * any other front end) only parses arguments, calls analyseSpectrumInput and prints or writes what it returns.
 */
import { promises as fs } from 'node:fs';
import path from 'node:path';
import { applyProfileToPeaks, type InstrumentProfile, positionsInProfileFrame } from '../core/calibration/profile.js';
import { wavelengthAtNm } from '../core/calibration/model.js';
import { InputError } from '../core/errors.js';
import { decimatePreview } from '../core/spectrum/band/decimate.js';
import { bandRows, guessBandRows, RowWindowMiss } from '../core/spectrum/band/rowWindow.js';
import type { CoarseBand } from '../core/spectrum/band/coarse.js';
import { type CoarseSearch, FIND_BAND_DEFAULTS, type FoundBand, findBand, previewSuitsSearch, searchBandCoarse } from '../core/spectrum/findBand.js';
import { type ExtractSpectrumOptions, extractSpectrum } from '../core/spectrum/extract.js';
import { findPeaksDetailed, peaksToWavelength } from '../core/spectrum/peaks/index.js';
import { plotSpectrumSvg } from '../core/spectrum/plotSpectrum.js';
import { type PhotoGeometry, parsePhotoGeometry, photoGeometryComment } from '../core/spectrum/photoGeometry.js';
import type { BandGeometry, Peak, Spectrum } from '../core/types.js';
import { airToVacuumNm } from '../core/units/airVacuum.js';
import { type DecodedImage, decodeImageStaged, type ExifSummary, narrowRowWindow, type StagedDecode } from '../io/image.js';
import { readSpectrumCsv } from '../io/readSpectrumCsv.js';
import { sniffKind } from '../io/sniff.js';
import { Scratch } from '../core/spectrum/scratch.js';
import { createSvgDocument } from '../io/svgDocument.js';

/** What `glowprint spectrum` measures, before printing: the same object the --json output shows (in snake_case). */
export interface SpectrumAnalysis {
  input: SpectrumInputSummary;
  /** Where the band lies in the upright photo; null for a CSV spectrum. */
  band: BandSummary | null;
  spectrum: { samples: number; saturatedSamples: number; noise: number; threshold: number };
  peaks: Peak[];
  /** The instrument profile applied to the peaks (`--calibration`); absent without one. */
  calibration?: SpectrumCalibrationSummary;
  warnings: string[];
}

/** Which profile gave the wavelengths, and how far to trust them. */
export interface SpectrumCalibrationSummary {
  /** The profile file as given. */
  profile: string;
  lamp: string;
  model: string;
  /** Wavelengths are in standard air (the NIST convention) unless --vacuum. */
  medium: 'air' | 'vacuum';
  rmsNm: number;
  /** The range the profile's lines cover (nm, in `medium` like the peaks); peaks beyond it are extrapolated. */
  rangeNm: [number, number];
  linesPerMm?: number;
  extrapolatedPeaks: number;
}

export type BandSummary = BandGeometry & {
  source: 'found' | 'manual';
  /** Standard uncertainties of a found band's axis angle and slant (deg). */
  angleUncertaintyDeg?: number;
  slantUncertaintyDeg?: number | null;
  /**
   * Where along the band (px from its start, often beyond either end) the zero order lies that the band search found
   * on the band's axis and left out; absent when it found none. A first-order calibration reads 0 nm there.
   */
  zeroOrderPx?: number;
};

export interface SpectrumInputSummary {
  file: string;
  kind: 'photo' | 'csv';
  /** CSV input: whether the file's position axis is pixels or wavelengths. */
  axis?: 'pixel' | 'wavelength';
  widthPx?: number;
  heightPx?: number;
  bitDepth?: 8 | 16;
  format?: string;
  /** EXIF orientation found in the file (already applied). */
  orientation?: number;
  exif?: ExifSummary;
  darkFile?: string;
}

export interface AnalyseSpectrumOptions {
  dark?: string;
  band?: BandGeometry;
  maxPixels?: number;
  /** Transfer function of the pixel values; by default 8-bit is sRGB and 16-bit linear. */
  transfer?: 'srgb' | 'linear';
  /** An instrument profile (glowprint calibrate --out) to give every peak and sample a wavelength. */
  calibration?: { profile: InstrumentProfile; file: string };
  /** With a calibration: report vacuum wavelengths (Ciddor 1996, standard air). @default false */
  vacuum?: boolean;
  /** Called after each stage with its wall time (the benchmark's breakdown; see SpectrumStage). */
  onStage?: (stage: SpectrumStage, ms: number) => void;
}

/**
 * The stages of a photo's analysis, in the order they end. A large upright JPEG goes preview (its 1/8-scale decode) →
 * coarse (the band search on it; the decode of the band's rows starts at its beginning, from a guess, or else during
 * its last part) → rows (the rest of that decode) → band → extract → peaks; should the band
 * need rows beyond those ('rows-missed': the refinement's time lost), the whole photo is decoded ('decode') and the
 * band found again. Other large JPEGs decode the whole photo while the preview and coarse search run ('decode' is
 * then the wall time from the start until the photo is ready, which they overlap); other photos have no preview.
 */
export type SpectrumStage = 'preview' | 'coarse' | 'rows' | 'rows-missed' | 'decode' | 'band' | 'extract' | 'peaks';

/** The spectrum with its analysis, for the CSV and SVG outputs. */
export interface SpectrumRun {
  analysis: SpectrumAnalysis;
  spectrum: Spectrum;
  /** CSV input: the geometry of the photo it was written from, when the file keeps it (see photoGeometry.ts). */
  photoGeometry?: PhotoGeometry | null;
}

/**
 * The photo geometry behind a spectrum: a photo's own (size, band, EXIF focal length, zero order), or what a CSV
 * written from one keeps of it; null when unknown.
 */
export function photoGeometryOf(run: SpectrumRun): PhotoGeometry | null {
  const { input, band } = run.analysis;
  if (input.kind === 'csv') return run.photoGeometry ?? null;
  if (!band || !input.widthPx || !input.heightPx) return null;
  return {
    sourceFile: path.basename(input.file),
    widthPx: input.widthPx,
    heightPx: input.heightPx,
    ...(input.exif?.focalLength35mmMm ? { focalLength35mmMm: input.exif.focalLength35mmMm } : {}),
    band: { center: { x: band.center.x, y: band.center.y }, angleDeg: band.angleDeg, slantDeg: band.slantDeg, lengthPx: band.lengthPx, heightPx: band.heightPx },
    ...(band.zeroOrderPx !== undefined && Number.isFinite(band.zeroOrderPx) ? { zeroOrderPx: band.zeroOrderPx } : {}),
  };
}

/**
 * The coarse image's planes, kept from photo to photo (core/spectrum/scratch.ts): decimatePreview and the coarse search
 * that reads them run in one synchronous stretch, and the search keeps none of them.
 */
const PREVIEW_SCRATCH = new Scratch();

const IMAGE_EXTENSIONS = new Set(['.jpg', '.jpeg', '.png', '.tif', '.tiff', '.webp']);
const CSV_EXTENSIONS = new Set(['.csv', '.tsv', '.txt', '.dat']);

/** Photo or CSV → spectrum → peak table: decodeImage → findBand (or the manual band) → extractSpectrum → findPeaks. */
export async function analyseSpectrumInput(file: string, options: AnalyseSpectrumOptions = {}): Promise<SpectrumRun> {
  if (options.vacuum && !options.calibration) {
    throw new InputError('--vacuum needs --calibration: without a profile the peaks have no wavelengths to convert', '--vacuum');
  }
  const run = await measureSpectrum(file, options);
  return options.calibration ? applyCalibration(run, options.calibration, options.vacuum ?? false) : run;
}

async function measureSpectrum(file: string, options: AnalyseSpectrumOptions): Promise<SpectrumRun> {
  const kind = await inputKind(file);
  if (kind === 'csv') {
    if (options.band || options.dark) {
      throw new InputError(`${file}: --band and --dark apply to photos; this input is a CSV spectrum`, file);
    }
    return analyseCsv(file);
  }
  const clock = stageClock(options.onStage);
  const staged = await decodeImageStaged(file, {
    source: file,
    dark: options.dark,
    maxPixels: options.maxPixels,
    srgb8: options.transfer === undefined ? undefined : options.transfer === 'srgb',
    linear16: options.transfer === undefined ? undefined : options.transfer === 'linear',
    // A manual band needs no search; else a preview where the coarse search can use one.
    wantPreview: options.band ? undefined : (w, h, scale) => previewSuitsSearch(w, h, scale),
    rowsAfterPreview: !options.band,
  });
  // A large JPEG's coarse band search runs on its 1/8-scale preview (while the full decode goes on, unless only the
  // band's rows are to be decoded).
  const coarse = options.band ? null : await coarseFromPreview(staged, file, options.onStage);
  let decoded: DecodedImage | null = null;
  let measured: MeasuredBand | null = null;
  if (coarse && 'search' in coarse && coarse.rows) {
    // Only the rows the band and its margins cover (their decode started during the coarse search); should the band
    // need more of the photo, the whole of it.
    clock.restart();
    decoded = await coarse.rows;
    clock('rows');
    try {
      measured = measureBand(decoded, file, options, coarse);
    } catch (err) {
      if (!(err instanceof RowWindowMiss)) throw err;
      clock('rows-missed');
    }
  }
  if (measured === null) {
    decoded = await staged.decoded; // a decode error wins over the coarse search's
    clock('decode');
    measured = measureBand(decoded, file, options, coarse);
  }
  options.onStage?.('band', measured.bandMs);
  options.onStage?.('extract', measured.extractMs);
  clock.restart();
  decoded = decoded!;
  const { found, band, extracted } = measured;
  const warnings = [...decoded.warnings, ...measured.bandWarnings];
  const bandSource: 'found' | 'manual' = found === null ? 'manual' : 'found';
  const uncertainties: Pick<BandSummary, 'angleUncertaintyDeg' | 'slantUncertaintyDeg' | 'zeroOrderPx'> = found
    ? {
        angleUncertaintyDeg: found.diagnostics.angleUncertaintyDeg,
        slantUncertaintyDeg: found.diagnostics.slantUncertaintyDeg,
        ...(found.diagnostics.zeroOrder ? { zeroOrderPx: found.diagnostics.zeroOrder.positionPx } : {}),
      }
    : {};
  const spectrum = extracted.spectrum;
  warnings.push(...extracted.warnings);
  const search = namingFile(file, () => findPeaksDetailed(spectrum));
  clock('peaks');
  warnings.push(...search.warnings);
  const analysis: SpectrumAnalysis = {
    input: {
      file,
      kind: 'photo',
      widthPx: decoded.widthPx,
      heightPx: decoded.heightPx,
      bitDepth: decoded.bitDepth,
      format: decoded.format,
      orientation: decoded.orientation,
      exif: decoded.exif,
      darkFile: options.dark,
    },
    band: { ...band, source: bandSource, ...uncertainties },
    spectrum: summarise(spectrum, search.noise, search.threshold),
    peaks: search.peaks,
    warnings,
  };
  return { analysis, spectrum };
}

/**
 * Gives the peaks and every sample of a measured spectrum their wavelengths from an instrument profile: positions are
 * carried into the profile's band frame (when both bands are known), then λ(x) with its standard uncertainty
 * (applyProfileToPeaks; vacuum by Ciddor 1996 when asked). A spectrum that already has a wavelength axis is refused.
 */
function applyCalibration(run: SpectrumRun, calibration: { profile: InstrumentProfile; file: string }, vacuum: boolean): SpectrumRun {
  const { analysis, spectrum } = run;
  const { profile, file: profileFile } = calibration;
  const file = analysis.input.file;
  if (spectrum.wavelengthNm) {
    throw new InputError(`${file}: this spectrum already has a wavelength axis; --calibration applies to photos and pixel-axis spectra`, file);
  }
  const image = analysis.input.kind === 'photo' ? { widthPx: analysis.input.widthPx!, heightPx: analysis.input.heightPx! } : null;
  const band = analysis.band;
  const applied = applyProfileToPeaks(analysis.peaks, profile, { image, band, source: file, vacuum });
  const pos = Array.from(spectrum.positionPx);
  const framePx = profile.band && band ? positionsInProfileFrame(pos, band, profile.band).positionsPx : pos;
  const toMedium = (airNm: number): number => {
    if (!vacuum) return airNm;
    try {
      return airToVacuumNm(airNm);
    } catch {
      return Number.NaN; // beyond the air-index formula's range; the peaks' warning says so
    }
  };
  const wavelengthNm = Float64Array.from(framePx, (x) => toMedium(wavelengthAtNm(profile.model, x)));
  return {
    spectrum: { ...spectrum, wavelengthNm },
    analysis: {
      ...analysis,
      peaks: applied.peaks,
      calibration: {
        profile: profileFile,
        lamp: profile.lamp,
        model: profile.model.kind,
        medium: applied.medium,
        rmsNm: profile.rmsNm,
        rangeNm: [toMedium(profile.rangeNm[0]), toMedium(profile.rangeNm[1])],
        ...(profile.linesPerMm !== undefined ? { linesPerMm: profile.linesPerMm } : {}),
        extrapolatedPeaks: applied.peaks.filter((p) => p.extrapolated).length,
      },
      warnings: [...analysis.warnings, ...applied.warnings],
    },
  };
}

async function analyseCsv(file: string): Promise<SpectrumRun> {
  const table = await readSpectrumCsv(file, { source: file });
  const spectrum = table.spectrum;
  const search = findPeaksDetailed(spectrum);
  const peaks = spectrum.wavelengthNm ? peaksToWavelength(search.peaks, spectrum) : search.peaks;
  const kept = parsePhotoGeometry(table.metadata, file);
  return {
    spectrum,
    photoGeometry: kept.geometry,
    analysis: {
      input: { file, kind: 'csv', axis: table.axis },
      band: null,
      spectrum: summarise(spectrum, search.noise, search.threshold),
      peaks,
      warnings: [...table.warnings, ...kept.warnings, ...search.warnings],
    },
  };
}

interface MeasuredBand {
  /** The band found; null for a manual band. */
  found: FoundBand | null;
  band: BandGeometry;
  /** The band search's warnings, or the manual band's. */
  bandWarnings: string[];
  extracted: ReturnType<typeof extractSpectrum>;
  bandMs: number;
  extractMs: number;
}

/**
 * The band (found, or the manual one) and its extraction from a decoded photo or a row window of it (RowWindowMiss
 * when the band needs rows beyond the window), with the wall time of each.
 */
function measureBand(
  decoded: DecodedImage,
  file: string,
  options: AnalyseSpectrumOptions,
  coarse: { search: CoarseSearch } | { error: unknown } | null,
): MeasuredBand {
  const t0 = performance.now();
  let found: FoundBand | null = null;
  let band: BandGeometry;
  let bandWarnings: string[];
  let extraction: ExtractSpectrumOptions = {};
  if (options.band) {
    band = options.band;
    bandWarnings = checkBandInside(band, decoded.widthPx, decoded.heightPx);
  } else {
    found = namingFile(file, () => {
      if (coarse && 'error' in coarse) throw coarse.error;
      return findBand(decoded.image, { source: file, coarse: coarse?.search });
    });
    band = found.band;
    bandWarnings = found.warnings;
    extraction = found.extraction;
  }
  const t1 = performance.now();
  const extracted = namingFile(file, () => extractSpectrum(decoded.image, band, extraction));
  return { found, band, bandWarnings, extracted, bandMs: t1 - t0, extractMs: performance.now() - t1 };
}

interface StageClock {
  (stage: SpectrumStage): void;
  /** The next stage's time starts now (the stages before it were reported by others). */
  restart(): void;
}

function stageClock(onStage: AnalyseSpectrumOptions['onStage']): StageClock {
  let t = performance.now();
  const clock = (stage: SpectrumStage): void => {
    const now = performance.now();
    onStage?.(stage, now - t);
    t = now;
  };
  return Object.assign(clock, { restart: () => void (t = performance.now()) });
}

/**
 * The coarse band search on the preview, when the decoder made one (null otherwise); its error ("no spectrum found")
 * is kept and thrown only after the full decode, whose own error comes first. Reports its wall time as the stage
 * 'coarse', which overlaps 'decode'.
 */
async function coarseFromPreview(
  staged: StagedDecode,
  file: string,
  onStage: AnalyseSpectrumOptions['onStage'],
): Promise<{ search: CoarseSearch; rows?: Promise<DecodedImage> } | { error: unknown } | null> {
  const start = performance.now();
  const preview = await staged.preview;
  if (!preview) return null;
  const t0 = performance.now();
  onStage?.('preview', t0 - start);
  let rows: Promise<DecodedImage> | undefined;
  try {
    const { width, height } = { width: preview.image.width * preview.scale, height: preview.image.height * preview.scale };
    const d = FIND_BAND_DEFAULTS;
    const startRows = staged.rows;
    // The band's rows are decoded while the coarse search runs: from a guess made on the preview at once
    // (guessBandRows), kept when it covers the rows the coarse band needs (bandRows) and narrowed to them, so that the
    // band stages read (and miss, RowWindowMiss) exactly the rows they always did; else those rows are decoded as
    // soon as the coarse components are known and the decode runs while the coarse band is refined on the coarse
    // image (bandRows' margins hold the refinement's few pixels of change: measured 3–15 px at the window's edges
    // against margins of 2 H + 48 px).
    const guess = startRows ? guessBandRows(preview.image, preview.scale, height) : null;
    if (guess && startRows) {
      rows = startRows(guess.fromPx, guess.toPx);
      rows.catch(() => undefined); // awaited after the search, if that succeeds
    }
    const dec = decimatePreview(preview.image, preview.scale, width, height, d.coarseMaxSidePx, d.saturationLevel, PREVIEW_SCRATCH);
    const onComponents = startRows
      ? (c: CoarseBand): void => {
          const r = bandRows(c.band, c.memberEnds, height);
          if (guess && rows && guess.fromPx <= r.fromPx && guess.toPx >= r.toPx) {
            // The same window as a decode of r alone (shared codes), so that the band stages see what they always did.
            rows = rows.then((d) => narrowRowWindow(d, r.fromPx, r.toPx));
          } else rows = startRows(r.fromPx, r.toPx);
          rows.catch(() => undefined);
        }
      : undefined;
    return { search: searchBandCoarse(dec, width, height, { source: file, onComponents }), rows };
  } catch (error) {
    return { error };
  } finally {
    onStage?.('coarse', performance.now() - t0);
  }
}

/** Core stages do not know the file: their bad-input messages get its name in front. */
function namingFile<T>(file: string, stage: () => T): T {
  try {
    return stage();
  } catch (err) {
    if (err instanceof InputError && !err.message.includes(file)) throw new InputError(`${file}: ${err.message}`, file);
    throw err;
  }
}

function summarise(spectrum: Spectrum, noise: number, threshold: number): SpectrumAnalysis['spectrum'] {
  let saturatedSamples = 0;
  if (spectrum.saturated) for (const s of spectrum.saturated) saturatedSamples += s;
  return { samples: spectrum.intensity.length, saturatedSamples, noise, threshold };
}

/** By extension first (a .jpg holding text is a broken photo, not a CSV), else by the first bytes. */
async function inputKind(file: string): Promise<'photo' | 'csv'> {
  const ext = path.extname(file).toLowerCase();
  if (IMAGE_EXTENSIONS.has(ext)) return 'photo';
  if (CSV_EXTENSIONS.has(ext)) return 'csv';
  const handle = await fs.open(file, 'r');
  try {
    const head = Buffer.alloc(4096);
    const { bytesRead } = await handle.read(head, 0, head.length, 0);
    return sniffKind(head.subarray(0, bytesRead)) === 'text' ? 'csv' : 'photo';
  } finally {
    await handle.close();
  }
}

/**
 * `--band cx,cy,angleDeg,lengthPx,heightPx[,slantDeg]`: centre (px, upright photo, x right, y down), direction in which
 * position grows (deg from +x towards +y), length along it and height across it (px), slant of the line images.
 */
export function parseBandOption(text: string): BandGeometry {
  const parts = text.split(',').map((s) => s.trim());
  const values = parts.map(Number);
  if ((parts.length !== 5 && parts.length !== 6) || parts.some((s) => s === '') || values.some((v) => !Number.isFinite(v))) {
    throw new InputError(`--band: expected 5 or 6 numbers "cx,cy,angleDeg,lengthPx,heightPx[,slantDeg]", got ${JSON.stringify(text)}`, '--band');
  }
  const [cx, cy, angleDeg, lengthPx, heightPx, slantDeg = 0] = values;
  if (lengthPx < 5) throw new InputError(`--band: lengthPx must be at least 5 px, got ${lengthPx}`, '--band');
  if (heightPx < 1) throw new InputError(`--band: heightPx must be at least 1 px, got ${heightPx}`, '--band');
  if (Math.abs(slantDeg) >= 45) throw new InputError(`--band: slantDeg must lie between −45 and 45, got ${slantDeg}`, '--band');
  // Normalise the direction into (−180, 180].
  let angle = ((angleDeg % 360) + 360) % 360;
  if (angle > 180) angle -= 360;
  return { center: { x: cx, y: cy }, angleDeg: angle, lengthPx, heightPx, slantDeg };
}

function checkBandInside(band: BandGeometry, widthPx: number, heightPx: number): string[] {
  const { x, y } = band.center;
  if (!(x >= 0 && x <= widthPx - 1 && y >= 0 && y <= heightPx - 1)) {
    throw new InputError(`--band: centre (${x}, ${y}) lies outside the ${widthPx}×${heightPx} px photo`, '--band');
  }
  const a = (band.angleDeg * Math.PI) / 180;
  const ux = Math.cos(a);
  const uy = Math.sin(a);
  const corners = [
    [-1, -1],
    [-1, 1],
    [1, -1],
    [1, 1],
  ].map(([s, t]) => ({
    x: x + (s * band.lengthPx * ux) / 2 - (t * band.heightPx * uy) / 2,
    y: y + (s * band.lengthPx * uy) / 2 + (t * band.heightPx * ux) / 2,
  }));
  const outside = corners.some((c) => c.x < 0 || c.y < 0 || c.x > widthPx - 1 || c.y > heightPx - 1);
  return outside ? ['the manual band reaches beyond the photo; samples outside it are missing from the spectrum'] : [];
}

/**
 * The spectrum as CSV: one row per sample (`position_px,intensity,r,g,b,saturated`, then `wavelength_nm` if known),
 * after a comment line with the photo's geometry when known (a calibration from the CSV then knows what one from the
 * photo knows) and one saying whether the wavelengths are in standard air or vacuum.
 */
export function spectrumToCsv(spectrum: Spectrum, geometry: PhotoGeometry | null = null, medium: 'air' | 'vacuum' = 'air'): string {
  const n = spectrum.intensity.length;
  const wl = spectrum.wavelengthNm;
  const ch = spectrum.channels;
  const lines: string[] = [];
  if (geometry) lines.push(photoGeometryComment(geometry));
  if (wl) lines.push(`# wavelength_nm: ${medium === 'vacuum' ? 'vacuum wavelengths' : 'wavelengths in standard air (the NIST convention)'}`);
  lines.push(`position_px,intensity,r,g,b,saturated${wl ? ',wavelength_nm' : ''}`);
  const num = (v: number | undefined): string => (v === undefined || !Number.isFinite(v) ? '' : String(Number(v.toPrecision(7))));
  for (let i = 0; i < n; i++) {
    const row = [
      num(spectrum.positionPx[i]),
      num(spectrum.intensity[i]),
      num(ch?.r[i]),
      num(ch?.g[i]),
      num(ch?.b[i]),
      spectrum.saturated ? String(spectrum.saturated[i]) : '',
    ];
    if (wl) row.push(num(wl[i]));
    lines.push(row.join(','));
  }
  return lines.join('\n') + '\n';
}

/** The readable report: input, band geometry, then the peak table. */
export function formatSpectrumTable(a: SpectrumAnalysis): string {
  const out: string[] = [];
  const i = a.input;
  if (i.kind === 'photo') {
    const exif = i.exif ?? {};
    const bits = [
      `${i.widthPx}×${i.heightPx} px`,
      `${i.bitDepth}-bit ${i.format?.toUpperCase()}`,
      exif.exposureTimeS !== undefined ? `${formatExposure(exif.exposureTimeS)}` : undefined,
      exif.iso !== undefined ? `ISO ${exif.iso}` : undefined,
      exif.cameraModel,
      i.darkFile ? `dark frame ${i.darkFile} subtracted` : undefined,
    ].filter(Boolean);
    out.push(`${i.file}: ${bits.join(', ')}`);
  } else {
    out.push(`${i.file}: 1-D spectrum, ${a.spectrum.samples} samples`);
  }
  if (a.band) {
    const b = a.band;
    out.push(
      `band (${b.source === 'manual' ? 'given' : 'found'}): angle ${b.angleDeg.toFixed(2)}°${pm(b.angleUncertaintyDeg)}, ` +
        `slant ${b.slantDeg.toFixed(2)}°${pm(b.slantUncertaintyDeg)}, ` +
        `centre (${b.center.x.toFixed(1)}, ${b.center.y.toFixed(1)}) px, length ${b.lengthPx.toFixed(0)} px, height ${b.heightPx.toFixed(0)} px`,
    );
  }
  out.push(
    `spectrum: ${a.spectrum.samples} samples${a.spectrum.saturatedSamples ? `, ${a.spectrum.saturatedSamples} clipped` : ''}; ` +
      `noise σ ${fmt(a.spectrum.noise)}, detection threshold ${fmt(a.spectrum.threshold)}`,
  );
  if (a.calibration) {
    const c = a.calibration;
    out.push(
      `wavelengths (${c.medium}) from ${c.profile}: ${c.lamp} lamp, ${c.model} model, RMS ${c.rmsNm.toFixed(3)} nm, ` +
        `calibrated ${c.rangeNm[0].toFixed(1)}–${c.rangeNm[1].toFixed(1)} nm` +
        (c.extrapolatedPeaks ? `; ${c.extrapolatedPeaks} peak(s) beyond that range are extrapolated` : ''),
    );
  }
  const withWl = a.peaks.some((p) => p.wavelengthNm !== undefined);
  if (a.peaks.length === 0) {
    out.push('no peaks above the detection threshold');
    return out.join('\n') + '\n';
  }
  const header = ['#', 'position (px)', ...(withWl ? ['wavelength (nm)'] : []), 'FWHM (px)', 'height', 'SNR', 'flags'];
  const rows = a.peaks.map((p, k) => [
    String(k + 1),
    `${p.positionPx.toFixed(2)} ± ${p.positionUncertaintyPx.toFixed(2)}`,
    ...(withWl ? [formatWavelength(p)] : []),
    p.fwhmPx.toFixed(2),
    fmt(p.height),
    p.snr >= 100 ? p.snr.toFixed(0) : p.snr.toFixed(1),
    [p.saturated ? 'saturated' : '', p.blended ? 'blended' : '', (p as { extrapolated?: boolean }).extrapolated ? 'extrapolated' : '']
      .filter(Boolean)
      .join(' '),
  ]);
  const widths = header.map((h, c) => Math.max(h.length, ...rows.map((r) => r[c].length)));
  const line = (cells: string[]): string =>
    cells
      .map((cell, c) => (c === cells.length - 1 ? cell : c === 0 ? cell.padStart(widths[c]) : cell.padStart(widths[c])))
      .join('  ')
      .trimEnd();
  out.push('', line(header), ...rows.map(line));
  out.push(
    '',
    `${a.peaks.length} peak${a.peaks.length === 1 ? '' : 's'}; positions along the band from its start, uncertainties 1σ` +
      (a.peaks.some((p) => p.wavelengthUncertaintyNm !== undefined && !Number.isFinite(p.wavelengthUncertaintyNm))
        ? ' (? = an extrapolation this profile cannot bound)'
        : ''),
  );
  return out.join('\n') + '\n';
}

/** `λ ± u` in nm; an extrapolation the profile cannot bound shows its uncertainty as unknown. */
function formatWavelength(p: Peak): string {
  if (p.wavelengthNm === undefined) return '';
  if (!Number.isFinite(p.wavelengthNm)) return 'n/a';
  const u = p.wavelengthUncertaintyNm;
  return `${p.wavelengthNm.toFixed(3)} ± ${u !== undefined && Number.isFinite(u) ? u.toFixed(3) : '?'}`;
}

function pm(u: number | null | undefined): string {
  if (u === undefined || u === null || !Number.isFinite(u)) return '';
  return ` ± ${u >= 0.01 ? u.toFixed(2) : u.toPrecision(1)}°`;
}

function fmt(v: number): string {
  if (!Number.isFinite(v)) return 'n/a';
  if (v === 0) return '0';
  const a = Math.abs(v);
  return a >= 1000 || a < 0.001 ? v.toExponential(2) : v.toPrecision(4);
}

function formatExposure(s: number): string {
  return s < 1 ? `1/${Math.round(1 / s)} s` : `${s} s`;
}

/** The plot of a run as SVG text (peaks marked). */
export function spectrumSvg(run: SpectrumRun): string {
  return plotSpectrumSvg(run.spectrum, run.analysis.peaks, { document: createSvgDocument(), title: `Spectrum of ${path.basename(run.analysis.input.file)}` });
}
