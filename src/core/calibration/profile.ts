/**
 * Instrument profiles: a saved wavelength calibration of one rig (camera + grating + geometry), our own versioned
 * JSON format `glowprint-instrument-profile` (schema: data/schema/instrument-profile.schema.json). A profile is
 * re-applied to later photos of the same rig: their peaks are carried into the profile's band frame (through the
 * image: the band found in a new photo of another lamp starts and ends elsewhere), then λ(x) and σλ(x) follow from
 * the stored model and covariance.
 */
import { InputError } from '../errors.js';
import { toSnakeCase } from '../json/toSnakeCase.js';
import { bandPointPx, imageToBandPx } from '../spectrum/band/frame.js';
import type { BandGeometry, Peak } from '../types.js';
import { airToVacuumNm, type AirConditions } from '../units/airVacuum.js';
import type { DispersionFit } from './fitDispersion.js';
import type { GratingModel } from './gratingModel.js';
import type { DispersionModel } from './model.js';
import type { PolynomialModel } from './polynomialModel.js';
import { wavelengthWithUncertainty, type CalibrationScale } from './uncertainty.js';

export const PROFILE_FORMAT = 'glowprint-instrument-profile';
export const PROFILE_VERSION = 1;

/** Camera facts from EXIF worth keeping with a calibration (the same fields as the image reader's summary). */
export interface CameraSummary {
  cameraMake?: string;
  cameraModel?: string;
  focalLengthMm?: number;
  focalLength35mmMm?: number;
  fNumber?: number;
  exposureTimeS?: number;
  iso?: number;
  dateTaken?: string;
}

export interface ProfileLine {
  positionPx: number;
  wavelengthNm: number;
  residualNm: number;
  used: boolean;
  source: 'manual' | 'matched';
  label?: string;
}

export interface InstrumentProfile {
  format: typeof PROFILE_FORMAT;
  version: typeof PROFILE_VERSION;
  /** ISO 8601 time the profile was made. */
  createdAt: string;
  software: { name: string; version: string };
  /** Wavelengths in the profile are air wavelengths (standard air, the NIST convention for 200–2000 nm). */
  medium: 'air';
  /** The lamp spec the lines came from ('fluorescent', 'Ne,Hg', or 'pairs' for manual pairs alone). */
  lamp: string;
  /** The calibration input's file name (no folder). */
  sourceFile: string | null;
  /** Size of the upright image (px), null for a CSV spectrum. */
  image: { widthPx: number; heightPx: number } | null;
  camera: CameraSummary | null;
  /** The band the positions are measured along, null for a CSV spectrum. */
  band: BandGeometry | null;
  model: DispersionModel;
  checkModel: PolynomialModel | null;
  /** For the grating model: where the focal length came from. */
  focalLengthSource?: 'exif' | 'given' | 'fitted';
  rangePx: [number, number];
  rangeNm: [number, number];
  dispersionNmPerPx: number;
  rmsNm: number;
  rmsPx: number;
  /** χ²/dof of the fit (null without degrees of freedom). */
  birgeRatio: number | null;
  linesUsed: number;
  linesPerMm?: number;
  linesPerMmUncertainty?: number;
  lines: ProfileLine[];
}

export interface ProfileContext {
  lamp: string;
  sourceFile: string | null;
  image: { widthPx: number; heightPx: number } | null;
  camera: CameraSummary | null;
  band: BandGeometry | null;
  focalLengthSource?: 'exif' | 'given' | 'fitted';
  createdAt: string;
  software: { name: string; version: string };
}

/** A profile from a dispersion fit and where it was made. */
export function buildProfile(fit: DispersionFit, context: ProfileContext): InstrumentProfile {
  const profile: InstrumentProfile = {
    format: PROFILE_FORMAT,
    version: PROFILE_VERSION,
    createdAt: context.createdAt,
    software: context.software,
    medium: 'air',
    lamp: context.lamp,
    sourceFile: context.sourceFile,
    image: context.image,
    camera: context.camera,
    band: context.band,
    model: fit.model,
    checkModel: fit.checkModel,
    rangePx: fit.rangePx,
    rangeNm: fit.rangeNm,
    dispersionNmPerPx: fit.dispersionNmPerPx,
    rmsNm: fit.rmsNm,
    rmsPx: fit.rmsPx,
    birgeRatio: Number.isFinite(fit.birgeRatio) ? fit.birgeRatio : null,
    linesUsed: fit.linesUsed,
    lines: fit.lines.map((l) => ({
      positionPx: l.positionPx,
      wavelengthNm: l.wavelengthNm,
      residualNm: l.residualNm,
      used: l.used,
      source: l.source,
      ...(l.label ? { label: l.label } : {}),
    })),
  };
  if (fit.model.kind === 'grating') {
    profile.focalLengthSource = context.focalLengthSource ?? 'fitted';
    profile.linesPerMm = fit.linesPerMm;
    profile.linesPerMmUncertainty = fit.linesPerMmUncertainty;
  }
  return profile;
}

/** The JSON object written to disk: snake_case keys with units (`coefficients_nm`, `range_px`). */
export function profileToJson(profile: InstrumentProfile): Record<string, unknown> {
  return toSnakeCase(profile) as Record<string, unknown>;
}

/** `focal_length35mm_mm` → `focalLength35mmMm`: the inverse of the JSON contract's key mapping. */
function camelKey(key: string): string {
  return key.replace(/_([a-z0-9])/g, (_, c: string) => c.toUpperCase());
}

function camelCase(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(camelCase);
  if (value === null || typeof value !== 'object') return value;
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(value as Record<string, unknown>)) out[camelKey(k)] = camelCase(v);
  return out;
}

class ProfileReader {
  constructor(readonly source: string) {}
  fail(path: string, expected: string, got: unknown): never {
    const shown =
      got === undefined ? 'nothing (the field is missing)' : got === null ? 'null' : typeof got === 'number' ? String(got) : Array.isArray(got) ? `an array of ${got.length}` : typeof got === 'string' ? JSON.stringify(got) : typeof got;
    throw new InputError(`${this.source}: ${path}: expected ${expected}, got ${shown}`, this.source);
  }
  object(v: unknown, path: string): Record<string, unknown> {
    if (v === null || typeof v !== 'object' || Array.isArray(v)) this.fail(path, 'an object', v);
    return v as Record<string, unknown>;
  }
  number(v: unknown, path: string, min = -Infinity, max = Infinity): number {
    if (typeof v !== 'number' || !Number.isFinite(v)) this.fail(path, 'a finite number', v);
    if ((v as number) < min || (v as number) > max) this.fail(path, `a number in [${min}, ${max}]`, v);
    return v as number;
  }
  string(v: unknown, path: string): string {
    if (typeof v !== 'string') this.fail(path, 'a string', v);
    return v as string;
  }
  numbers(v: unknown, path: string, length?: number): number[] {
    if (!Array.isArray(v) || (length !== undefined && v.length !== length)) {
      this.fail(path, length === undefined ? 'an array of numbers' : `an array of ${length} numbers`, v);
    }
    return (v as unknown[]).map((x, i) => this.number(x, `${path}[${i}]`));
  }
  interval(v: unknown, path: string): [number, number] {
    const [a, b] = this.numbers(v, path, 2);
    if (!(b >= a)) this.fail(path, '[lo, hi] with lo ≤ hi', `[${a}, ${b}]`);
    return [a, b];
  }
  covariance(v: unknown, path: string, size: number): number[][] {
    if (!Array.isArray(v) || v.length !== size) this.fail(path, `a ${size}×${size} matrix`, v);
    const m = (v as unknown[]).map((row, i) => this.numbers(row, `${path}[${i}]`, size));
    for (let i = 0; i < size; i++) {
      if (m[i][i] < 0) this.fail(`${path}[${i}][${i}]`, 'a variance ≥ 0', m[i][i]);
      for (let j = 0; j < i; j++) {
        const tol = 1e-9 * Math.max(Math.abs(m[i][j]), Math.abs(m[j][i]), Math.sqrt(Math.abs(m[i][i] * m[j][j])), 1e-300);
        if (Math.abs(m[i][j] - m[j][i]) > tol) this.fail(`${path}[${i}][${j}]`, `the symmetric element (${m[j][i]})`, m[i][j]);
        if (m[i][j] ** 2 > m[i][i] * m[j][j] * (1 + 1e-9) + 1e-300) {
          this.fail(`${path}[${i}][${j}]`, 'a covariance with |correlation| ≤ 1', m[i][j]);
        }
      }
    }
    return m;
  }
}

function readPolynomial(r: ProfileReader, v: unknown, path: string): PolynomialModel {
  const o = r.object(v, path);
  const degree = r.number(o.degree, `${path}.degree`, 1, 5);
  if (!Number.isInteger(degree)) r.fail(`${path}.degree`, 'an integer', degree);
  return {
    kind: 'polynomial',
    degree,
    centerPx: r.number(o.centerPx, `${path}.center_px`),
    scalePx: r.number(o.scalePx, `${path}.scale_px`, Number.MIN_VALUE),
    coefficientsNm: r.numbers(o.coefficientsNm, `${path}.coefficients_nm`, degree + 1),
    covariance: r.covariance(o.covariance, `${path}.covariance`, degree + 1),
  };
}

function readGrating(r: ProfileReader, o: Record<string, unknown>, path: string): GratingModel {
  const order = r.number(o.order, `${path}.order`, 1, 10);
  if (!Number.isInteger(order)) r.fail(`${path}.order`, 'an integer diffraction order', order);
  const direction = r.number(o.direction, `${path}.direction`);
  if (direction !== 1 && direction !== -1) r.fail(`${path}.direction`, '1 or -1', direction);
  const free = o.free;
  if (!Array.isArray(free) || free.length !== 4 || !free.every((b) => typeof b === 'boolean')) {
    r.fail(`${path}.free`, 'an array of 4 booleans', free);
  }
  return {
    kind: 'grating',
    order,
    incidenceAngleDeg: r.number(o.incidenceAngleDeg, `${path}.incidence_angle_deg`, -89, 89),
    direction: direction as 1 | -1,
    grooveSpacingNm: r.number(o.grooveSpacingNm, `${path}.groove_spacing_nm`, Number.MIN_VALUE),
    cameraAngleDeg: r.number(o.cameraAngleDeg, `${path}.camera_angle_deg`, -89, 89),
    axisPositionPx: r.number(o.axisPositionPx, `${path}.axis_position_px`),
    focalLengthPx: r.number(o.focalLengthPx, `${path}.focal_length_px`, Number.MIN_VALUE),
    covariance: r.covariance(o.covariance, `${path}.covariance`, 4),
    free: free as [boolean, boolean, boolean, boolean],
  };
}

function readBand(r: ProfileReader, v: unknown, path: string): BandGeometry {
  const o = r.object(v, path);
  const c = r.object(o.center, `${path}.center`);
  return {
    angleDeg: r.number(o.angleDeg, `${path}.angle_deg`, -180, 180),
    slantDeg: r.number(o.slantDeg, `${path}.slant_deg`, -89, 89),
    center: { x: r.number(c.x, `${path}.center.x`), y: r.number(c.y, `${path}.center.y`) },
    lengthPx: r.number(o.lengthPx, `${path}.length_px`, Number.MIN_VALUE),
    heightPx: r.number(o.heightPx, `${path}.height_px`, 0),
  };
}

/**
 * Reads a profile from parsed JSON (snake_case keys as written), checking every field it uses: the format and
 * version, finite numbers, matrix sizes, symmetric covariances with correlations within ±1. Errors name the file and
 * the field (`profile.json: model.coefficients_nm[1]: expected a finite number, got null`).
 */
export function profileFromJson(json: unknown, source: string): InstrumentProfile {
  const r = new ProfileReader(source);
  const raw = r.object(json, '(top level)');
  if (raw.format !== PROFILE_FORMAT) {
    throw new InputError(
      `${source}: not a glowprint instrument profile (format is ${raw.format === undefined ? 'missing' : JSON.stringify(raw.format)}, expected "${PROFILE_FORMAT}")`,
      source,
    );
  }
  if (raw.version !== PROFILE_VERSION) {
    const newer = typeof raw.version === 'number' && raw.version > PROFILE_VERSION;
    throw new InputError(
      `${source}: profile version ${JSON.stringify(raw.version)} ${newer ? 'is newer than this glowprint reads' : 'is not one this glowprint reads'} (it reads version ${PROFILE_VERSION})` +
        (newer ? '; update glowprint' : ''),
      source,
    );
  }
  const o = camelCase(raw) as Record<string, unknown>;
  const medium = o.medium;
  if (medium !== 'air') r.fail('medium', '"air"', medium);
  const software = r.object(o.software, 'software');
  const modelObj = r.object(o.model, 'model');
  let model: DispersionModel;
  if (modelObj.kind === 'polynomial') model = readPolynomial(r, modelObj, 'model');
  else if (modelObj.kind === 'grating') model = readGrating(r, modelObj, 'model');
  else r.fail('model.kind', '"polynomial" or "grating"', modelObj.kind);
  const image = o.image === null ? null : r.object(o.image, 'image');
  const linesRaw = o.lines;
  if (!Array.isArray(linesRaw)) r.fail('lines', 'an array of lines', linesRaw);
  const lines: ProfileLine[] = (linesRaw as unknown[]).map((l, i) => {
    const lo = r.object(l, `lines[${i}]`);
    if (typeof lo.used !== 'boolean') r.fail(`lines[${i}].used`, 'true or false', lo.used);
    if (lo.source !== 'manual' && lo.source !== 'matched') r.fail(`lines[${i}].source`, '"manual" or "matched"', lo.source);
    const line: ProfileLine = {
      positionPx: r.number(lo.positionPx, `lines[${i}].position_px`),
      wavelengthNm: r.number(lo.wavelengthNm, `lines[${i}].wavelength_nm`, Number.MIN_VALUE),
      residualNm: r.number(lo.residualNm, `lines[${i}].residual_nm`),
      used: lo.used as boolean,
      source: lo.source as 'manual' | 'matched',
    };
    if (lo.label !== undefined) line.label = r.string(lo.label, `lines[${i}].label`);
    return line;
  });
  const linesUsed = r.number(o.linesUsed, 'lines_used', 2);
  const profile: InstrumentProfile = {
    format: PROFILE_FORMAT,
    version: PROFILE_VERSION,
    createdAt: r.string(o.createdAt, 'created_at'),
    software: { name: r.string(software.name, 'software.name'), version: r.string(software.version, 'software.version') },
    medium: 'air',
    lamp: r.string(o.lamp, 'lamp'),
    sourceFile: o.sourceFile === null || o.sourceFile === undefined ? null : r.string(o.sourceFile, 'source_file'),
    image: image ? { widthPx: r.number(image.widthPx, 'image.width_px', 1), heightPx: r.number(image.heightPx, 'image.height_px', 1) } : null,
    camera: o.camera === null || o.camera === undefined ? null : (r.object(o.camera, 'camera') as CameraSummary),
    band: o.band === null || o.band === undefined ? null : readBand(r, o.band, 'band'),
    model: model!,
    checkModel: o.checkModel === null || o.checkModel === undefined ? null : readPolynomial(r, o.checkModel, 'check_model'),
    rangePx: r.interval(o.rangePx, 'range_px'),
    rangeNm: r.interval(o.rangeNm, 'range_nm'),
    dispersionNmPerPx: r.number(o.dispersionNmPerPx, 'dispersion_nm_per_px'),
    rmsNm: r.number(o.rmsNm, 'rms_nm', 0),
    rmsPx: r.number(o.rmsPx, 'rms_px', 0),
    birgeRatio: o.birgeRatio === null || o.birgeRatio === undefined ? null : r.number(o.birgeRatio, 'birge_ratio', 0),
    linesUsed,
    lines,
  };
  if (model!.kind === 'grating') {
    const src = o.focalLengthSource;
    if (src !== undefined && src !== 'exif' && src !== 'given' && src !== 'fitted') r.fail('focal_length_source', '"exif", "given" or "fitted"', src);
    profile.focalLengthSource = (src as InstrumentProfile['focalLengthSource']) ?? 'fitted';
    if (o.linesPerMm !== undefined) profile.linesPerMm = r.number(o.linesPerMm, 'lines_per_mm', Number.MIN_VALUE);
    if (o.linesPerMmUncertainty !== undefined) profile.linesPerMmUncertainty = r.number(o.linesPerMmUncertainty, 'lines_per_mm_uncertainty', 0);
  }
  // The model must give finite wavelengths over the range it claims.
  const scale = profileScale(profile);
  for (const x of [profile.rangePx[0], (profile.rangePx[0] + profile.rangePx[1]) / 2, profile.rangePx[1]]) {
    const e = wavelengthWithUncertainty(scale, x);
    if (!Number.isFinite(e.wavelengthNm) || !(e.wavelengthNm > 0)) {
      throw new InputError(`${source}: the model gives no valid wavelength at ${x} px inside its own range_px: the profile is damaged`, source);
    }
  }
  return profile;
}

export function profileScale(profile: InstrumentProfile): CalibrationScale {
  return { model: profile.model, rangePx: profile.rangePx, checkModel: profile.checkModel };
}

export interface GeometryTolerances {
  /** Relative image-size difference that only warns; beyond `imageSizeErrorFraction` it is an error. @default 0 */
  imageSizeWarnFraction: number;
  /** @default 0.05 */
  imageSizeErrorFraction: number;
  /** Band axis or slant turned by more than this warns (deg). @default 0.5 */
  angleDeg: number;
  /** The band's centre line moved sideways by more than this warns (px). @default 5 */
  offsetPx: number;
}

export const GEOMETRY_TOLERANCES: GeometryTolerances = {
  imageSizeWarnFraction: 0,
  imageSizeErrorFraction: 0.05,
  angleDeg: 0.5,
  offsetPx: 5,
};

export interface GeometryCheck {
  warnings: string[];
}

/**
 * Compares a new photo's geometry with the profile's: the image size (a different size means another camera mode,
 * hence another pixel scale: an error beyond `imageSizeErrorFraction`, a warning for any smaller difference) and the
 * band (turned, or moved across its axis: the rig or the source moved). Throws InputError for the errors.
 */
export function compareGeometry(
  profile: InstrumentProfile,
  photo: { image: { widthPx: number; heightPx: number } | null; band: BandGeometry | null },
  source: string,
  tolerances: Partial<GeometryTolerances> = {},
): GeometryCheck {
  const t = { ...GEOMETRY_TOLERANCES, ...tolerances };
  const warnings: string[] = [];
  const pi = profile.image;
  const ni = photo.image;
  if (pi && ni) {
    const dw = Math.abs(ni.widthPx - pi.widthPx) / pi.widthPx;
    const dh = Math.abs(ni.heightPx - pi.heightPx) / pi.heightPx;
    const rotated = ni.widthPx === pi.heightPx && ni.heightPx === pi.widthPx && pi.widthPx !== pi.heightPx;
    const sizes = `the profile was made on ${pi.widthPx}×${pi.heightPx} px images, ${source} is ${ni.widthPx}×${ni.heightPx} px`;
    if (rotated) {
      throw new InputError(`${sizes}: the photo is turned by 90°; take it in the profile's orientation or calibrate again`, source);
    }
    if (Math.max(dw, dh) > t.imageSizeErrorFraction) {
      throw new InputError(`${sizes}: another camera mode or zoom changes the pixel scale; calibrate this rig again`, source);
    }
    if (Math.max(dw, dh) > t.imageSizeWarnFraction) warnings.push(`${sizes}: positions may be shifted; check a known line`);
  } else if (pi && !ni) {
    warnings.push(`the profile was made on a photo; ${source} is a spectrum file: its positions are taken as they are`);
  } else if (!pi && ni) {
    warnings.push(`the profile was made on a spectrum file; ${source} is a photo: its band positions are taken as they are`);
  }
  const pb = profile.band;
  const nb = photo.band;
  if (pb && nb) {
    const turn = angleDifferenceDeg(nb.angleDeg, pb.angleDeg);
    if (Math.abs(turn) > 90) {
      warnings.push(`the band of ${source} runs the other way (axis ${nb.angleDeg.toFixed(1)}° against the profile's ${pb.angleDeg.toFixed(1)}°)`);
    } else if (Math.abs(turn) > t.angleDeg) {
      warnings.push(`the band of ${source} is turned by ${turn.toFixed(2)}° from the profile's: the camera or the grating moved; wavelengths may be off`);
    }
    const slant = nb.slantDeg - pb.slantDeg;
    if (Math.abs(slant) > t.angleDeg) {
      warnings.push(`the line images of ${source} slant ${slant.toFixed(2)}° differently from the profile's: the grating turned`);
    }
    const side = imageToBandPx(pb, nb.center).offsetPx;
    if (Math.abs(side) > Math.max(t.offsetPx, pb.heightPx / 2)) {
      warnings.push(`the band of ${source} lies ${side.toFixed(1)} px to the side of the profile's: the source or the rig moved; wavelengths may be shifted`);
    }
  }
  return { warnings };
}

function angleDifferenceDeg(a: number, b: number): number {
  let d = (a - b) % 360;
  if (d > 180) d -= 360;
  if (d <= -180) d += 360;
  return d;
}

/** Positions carried from a new photo's band into the profile's band frame. */
export interface FrameTransfer {
  positionsPx: number[];
  /**
   * Standard uncertainty the transfer adds to each position (px). With slanted line images, a band that lies to the
   * side of the profile's (offset q) can map either straight across (the source moved perpendicular to the
   * dispersion) or along the line images (it moved along its own length); the two differ by q·tan(slant). Which
   * happened is unknown: the straight projection is used, and half the difference is counted as uncertainty.
   */
  uncertaintyPx: number;
}

/**
 * Positions along `from` (a band found in a new photo) → positions along `to` (the profile's band): each position's
 * point on the centre line of `from`, projected perpendicularly onto the axis of `to` (see FrameTransfer).
 */
export function positionsInProfileFrame(positionsPx: readonly number[], from: BandGeometry, to: BandGeometry): FrameTransfer {
  const out = positionsPx.map((p) => {
    const point = bandPointPx(from, p, 0);
    const { positionPx, offsetPx } = imageToBandPx(to, point);
    // imageToBandPx follows the line images; undo its slant term for the perpendicular projection.
    return { p: positionPx - offsetPx * Math.tan((to.slantDeg * Math.PI) / 180), q: offsetPx };
  });
  const qMax = out.reduce((a, v) => Math.max(a, Math.abs(v.q)), 0);
  return {
    positionsPx: out.map((v) => v.p),
    uncertaintyPx: (qMax * Math.abs(Math.tan((to.slantDeg * Math.PI) / 180))) / 2,
  };
}

export interface ApplyProfileOptions {
  /** Report vacuum wavelengths (converted from air by Ciddor 1996 under `air`). @default false */
  vacuum: boolean;
  /** Air conditions for the conversion. @default standard air */
  air: AirConditions;
  /** The photo's image size (null for a spectrum file). */
  image: { widthPx: number; heightPx: number } | null;
  /** The band the peaks were measured along (null for a spectrum file). */
  band: BandGeometry | null;
  /** Name of the input, for messages. @default 'the input' */
  source: string;
  tolerances: Partial<GeometryTolerances>;
}

export const APPLY_PROFILE_DEFAULTS: ApplyProfileOptions = {
  vacuum: false,
  air: {},
  image: null,
  band: null,
  source: 'the input',
  tolerances: {},
};

export type CalibratedPeak = Peak & {
  wavelengthNm: number;
  /** Combined standard uncertainty (nm); Infinity (JSON null) where an extrapolation cannot be bounded. */
  wavelengthUncertaintyNm: number;
  /** FWHM converted with the local dispersion (nm). */
  fwhmNm: number;
  /** True beyond the profile's calibrated range. */
  extrapolated: boolean;
  /** Position in the profile's frame (px), when it differs from the peak's own. */
  profilePositionPx?: number;
};

export interface AppliedProfile {
  peaks: CalibratedPeak[];
  medium: 'air' | 'vacuum';
  warnings: string[];
}

/**
 * Gives every peak its wavelength and standard uncertainty from a profile: position → profile frame (when both
 * bands are known) → λ(x) with σ² = gᵀCg + (dλ/dx·σx)² (+ the extrapolation term beyond the range) → vacuum if asked.
 * Geometry differences warn (or throw, for a drastically different image size); peaks beyond the calibrated range are
 * flagged and warned about. Returns new peak objects.
 */
export function applyProfileToPeaks(
  peaks: readonly Peak[],
  profile: InstrumentProfile,
  options: Partial<ApplyProfileOptions> = {},
): AppliedProfile {
  const o: ApplyProfileOptions = { ...APPLY_PROFILE_DEFAULTS, ...options };
  const { warnings } = compareGeometry(profile, { image: o.image, band: o.band }, o.source, o.tolerances);
  const scale = profileScale(profile);
  const transfer: FrameTransfer =
    profile.band && o.band
      ? positionsInProfileFrame(peaks.map((p) => p.positionPx), o.band, profile.band)
      : { positionsPx: peaks.map((p) => p.positionPx), uncertaintyPx: 0 };
  const positions = transfer.positionsPx;
  if (transfer.uncertaintyPx > 0.1) {
    warnings.push(
      `the band lies to the side of the profile's, and the line images slant: carrying positions across adds ` +
        `±${transfer.uncertaintyPx.toFixed(2)} px to every position (photograph with the source where it was for the calibration to avoid it)`,
    );
  }
  let beyond = 0;
  let farthestNm = 0;
  let unbounded = 0;
  let outsideAir = 0;
  const out = peaks.map((peak, i) => {
    const x = positions[i];
    const e = wavelengthWithUncertainty(scale, x, Math.hypot(peak.positionUncertaintyPx, transfer.uncertaintyPx));
    let lambda = e.wavelengthNm;
    let sigma = e.uncertaintyNm;
    let fwhmNm = Math.abs(e.dispersionNmPerPx) * peak.fwhmPx;
    if (e.extrapolated) {
      beyond++;
      farthestNm = Math.max(farthestNm, e.beyondRangePx * Math.abs(e.dispersionNmPerPx));
      if (!Number.isFinite(sigma)) unbounded++;
    }
    if (o.vacuum) {
      try {
        const vac = airToVacuumNm(lambda, o.air);
        const scaleFactor = vac / lambda; // n(λ): dλvac/dλair to 1 part in 10⁶
        lambda = vac;
        sigma *= scaleFactor;
        fwhmNm *= scaleFactor;
      } catch {
        outsideAir++;
        lambda = NaN;
      }
    }
    const calibrated: CalibratedPeak = {
      ...peak,
      wavelengthNm: lambda,
      wavelengthUncertaintyNm: sigma,
      fwhmNm,
      extrapolated: e.extrapolated,
    };
    if (x !== peak.positionPx) calibrated.profilePositionPx = x;
    return calibrated;
  });
  if (beyond > 0) {
    warnings.push(
      `${beyond} peak(s) lie beyond the calibrated range ${profile.rangeNm[0].toFixed(1)}–${profile.rangeNm[1].toFixed(1)} nm ` +
        `(up to ${farthestNm.toFixed(0)} nm beyond): extrapolated, with uncertainties that grow accordingly` +
        (unbounded ? `; ${unbounded} of them cannot be bounded with this profile's few lines (uncertainty null)` : ''),
    );
  }
  if (outsideAir > 0) warnings.push(`${outsideAir} peak(s) lie outside the air-index formula's range (300–1700 nm): no vacuum wavelength`);
  return { peaks: out, medium: o.vacuum ? 'vacuum' : 'air', warnings };
}
