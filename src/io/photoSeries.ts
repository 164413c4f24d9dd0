import { existsSync, promises as fs } from 'node:fs';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { InputError } from '../core/errors.js';
import type { FrameExposure } from '../core/polarization/spotPhotometry.js';
import type { LinearImage } from '../core/types.js';
import { decodeImage } from './image.js';

/**
 * A photo series at known analyser angles: where the angles come from (an explicit list, a start and a step, a sidecar
 * CSV, or numbers in the file names) and the decoded frames with their exposure.
 */

export interface AngleSpec {
  /** `--angles`: "0,15,30" or a range "0:15:180" (start:step:end, end included). */
  angles?: string;
  /** `--start` and `--step` (deg), applied in the order the files are given. */
  startDeg?: number;
  stepDeg?: number;
  /** A sidecar CSV with columns `file,angle_deg` (file names as given or their base names). */
  anglesCsv?: string;
}

/** The name of the sidecar looked for beside the photos when no angles are given. */
export const SIDECAR_NAME = 'angles.csv';

export type AngleSource = 'list' | 'start-step' | 'sidecar' | 'file-names';

export interface ResolvedAngles {
  anglesDeg: number[];
  source: AngleSource;
  /** The sidecar file used, where one was. */
  sidecar?: string;
  warnings: string[];
}

/** Parses `--angles`: a comma (or space) separated list, or start:step:end with the end included. */
export function parseAngleList(text: string, option = '--angles'): number[] {
  const t = text.trim();
  const range = /^([+-]?[\d.]+):([+-]?[\d.]+):([+-]?[\d.]+)$/.exec(t);
  if (range) {
    const [start, step, end] = range.slice(1).map(Number);
    if (![start, step, end].every(Number.isFinite) || step === 0 || Math.sign(end - start) * Math.sign(step) < 0) {
      throw new InputError(`${option}: "${text}" is not a usable start:step:end range (e.g. 0:15:180)`, option);
    }
    const n = Math.floor((end - start) / step + 1e-9) + 1;
    if (n > 10000) throw new InputError(`${option}: "${text}" gives ${n} angles; that is not a photo series`, option);
    return Array.from({ length: n }, (_, i) => round9(start + i * step));
  }
  const parts = t.split(/[\s,;]+/).filter((p) => p !== '');
  if (parts.length === 0) throw new InputError(`${option}: expected a list of angles in degrees (e.g. 0,15,30), got nothing`, option);
  return parts.map((p) => {
    const v = Number(p.replace(/°$/, ''));
    if (!Number.isFinite(v)) throw new InputError(`${option}: expected angles in degrees, got "${p}" in "${text}"`, option);
    return v;
  });
}

/**
 * Reads an angle from a file name: a number marked as degrees ("spot_045deg.jpg", "a-22.5°.png", "pol 90 deg.jpg")
 * wins; otherwise the last number in the base name ("hene_b_135.jpg"). Returns null when there is none.
 */
export function angleFromFileName(file: string): number | null {
  const base = path.basename(file, path.extname(file));
  const marked = /([+-]?\d+(?:[.,]\d+)?)\s*(?:deg|°|d(?![a-z]))/i.exec(base);
  if (marked) return Number(marked[1].replace(',', '.'));
  const all = base.match(/[+-]?\d+(?:[.,]\d+)?/g);
  if (!all) return null;
  // A leading sign is only a sign when it does not join two words ("spot-30" is 30, "a_-30" is −30 only after _ or space).
  const last = all[all.length - 1];
  const at = base.lastIndexOf(last);
  const joined = last.startsWith('-') && at > 0 && /[A-Za-z0-9]/.test(base[at - 1]);
  return Number((joined ? last.slice(1) : last).replace(',', '.'));
}

/** Works out the analyser angle of each photo (in the order given) from the options, a sidecar or the file names. */
export async function resolveAngles(files: readonly string[], spec: AngleSpec): Promise<ResolvedAngles> {
  const warnings: string[] = [];
  const hasList = spec.angles !== undefined;
  const hasStart = spec.startDeg !== undefined || spec.stepDeg !== undefined;
  const given = [hasList, hasStart, spec.anglesCsv !== undefined].filter(Boolean).length;
  if (given > 1) throw new InputError('angles: give only one of --angles, --start/--step and --angles-csv', '--angles');
  if (hasList) {
    const anglesDeg = parseAngleList(spec.angles!);
    if (anglesDeg.length !== files.length) {
      throw new InputError(
        `--angles: ${anglesDeg.length} angle${anglesDeg.length === 1 ? '' : 's'} for ${files.length} image${files.length === 1 ? '' : 's'}; give one angle per image, in the same order`,
        '--angles',
      );
    }
    return { anglesDeg, source: 'list', warnings };
  }
  if (hasStart) {
    if (spec.startDeg === undefined || spec.stepDeg === undefined) {
      throw new InputError('--start/--step: give both the first angle and the step (deg)', '--start');
    }
    if (spec.stepDeg === 0) throw new InputError('--step: expected a non-zero step in degrees, got 0', '--step');
    return { anglesDeg: files.map((_, i) => round9(spec.startDeg! + i * spec.stepDeg!)), source: 'start-step', warnings };
  }
  const sidecar = spec.anglesCsv ?? findSidecar(files);
  if (sidecar) {
    return { anglesDeg: await anglesFromSidecar(sidecar, files), source: 'sidecar', sidecar, warnings };
  }
  const anglesDeg: number[] = [];
  for (const f of files) {
    const a = angleFromFileName(f);
    if (a === null || Math.abs(a) > 360) {
      throw new InputError(
        `${f}: no analyser angle in the file name${a === null ? '' : ` (${a} is not an angle in degrees — a frame counter?)`}; give the angles with --angles, --start/--step, or a sidecar ${SIDECAR_NAME} (columns file,angle_deg)`,
        f,
      );
    }
    anglesDeg.push(a);
  }
  const steps = anglesDeg.slice(1).map((a, i) => a - anglesDeg[i]);
  if (anglesDeg.length > 3 && steps.every((s) => s === 1)) {
    warnings.push(
      `the angles read from the file names are consecutive integers (${anglesDeg[0]}, ${anglesDeg[1]}, …): are they frame numbers rather than angles? Give --angles or --start/--step if so`,
    );
  }
  return { anglesDeg, source: 'file-names', warnings };
}

/** `angles.csv` in the folder that holds all the photos, if there is one. */
function findSidecar(files: readonly string[]): string | undefined {
  if (files.length === 0) return undefined;
  const dirs = new Set(files.map((f) => path.dirname(path.resolve(f))));
  if (dirs.size !== 1) return undefined;
  const candidate = path.join([...dirs][0], SIDECAR_NAME);
  return existsSync(candidate) ? candidate : undefined;
}

/** Reads a sidecar CSV (header with `file` and `angle_deg` columns) and picks the angle of every photo. */
export async function anglesFromSidecar(csvPath: string, files: readonly string[]): Promise<number[]> {
  const text = await fs.readFile(csvPath, 'utf8');
  let records: string[][];
  try {
    records = parse(text.replace(/^\uFEFF/, ''), { skip_empty_lines: true, trim: true, comment: '#', relax_column_count: true }) as string[][];
  } catch (err) {
    throw new InputError(`${csvPath}: not a readable CSV (${(err as Error).message.split('\n')[0]})`, csvPath);
  }
  if (records.length < 2) throw new InputError(`${csvPath}: expected a header (file,angle_deg) and one row per photo`, csvPath);
  const header = records[0].map((h) => h.toLowerCase());
  const fileCol = header.findIndex((h) => /^(file|filename|file_name|image|photo|name)$/.test(h));
  const angleCol = header.findIndex((h) => /^(angle_deg|angle|analyser_deg|analyzer_deg|deg)$/.test(h));
  if (fileCol < 0 || angleCol < 0) {
    throw new InputError(`${csvPath}, line 1: expected a header with columns "file" and "angle_deg", got "${records[0].join(',')}"`, csvPath);
  }
  const byName = new Map<string, number>();
  records.slice(1).forEach((r, i) => {
    const name = r[fileCol] ?? '';
    const v = Number(r[angleCol]);
    if (!name || !Number.isFinite(v)) {
      throw new InputError(`${csvPath}, line ${i + 2}: expected a file name and an angle in degrees, got "${r.join(',')}"`, csvPath);
    }
    byName.set(name, v);
    byName.set(path.basename(name), v);
  });
  return files.map((f) => {
    const v = byName.get(f) ?? byName.get(path.basename(f));
    if (v === undefined) throw new InputError(`${csvPath}: has no angle for ${path.basename(f)}`, csvPath);
    return v;
  });
}

export interface PhotoSeries {
  files: string[];
  images: LinearImage[];
  exposures: FrameExposure[];
  anglesDeg: number[];
  angleSource: AngleSource;
  sidecar?: string;
  warnings: string[];
}

/** Decodes the photos (with io/image's decodeImage: sRGB → linear light, EXIF) and pairs them with their angles. */
export async function loadPhotoSeries(files: readonly string[], spec: AngleSpec): Promise<PhotoSeries> {
  if (files.length === 0) throw new InputError('photo series: no photos given', 'images');
  const resolved = await resolveAngles(files, spec);
  const images: LinearImage[] = [];
  const exposures: FrameExposure[] = [];
  const warnings = [...resolved.warnings];
  for (const f of files) {
    const decoded = await decodeImage(f, { source: f });
    images.push(decoded.image);
    exposures.push({ exposureTimeS: decoded.exif.exposureTimeS, iso: decoded.exif.iso, fNumber: decoded.exif.fNumber });
    warnings.push(...decoded.warnings);
  }
  return {
    files: [...files],
    images,
    exposures,
    anglesDeg: resolved.anglesDeg,
    angleSource: resolved.source,
    ...(resolved.sidecar ? { sidecar: resolved.sidecar } : {}),
    warnings,
  };
}

function round9(v: number): number {
  return Math.round(v * 1e9) / 1e9;
}
