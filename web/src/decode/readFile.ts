/**
 * Files the user drops or picks → what the analyses take. Photos: createImageBitmap (EXIF orientation applied, colour
 * converted to sRGB by the browser) → canvas → ImageData → 8-bit sRGB codes → LinearImage through the sRGB table.
 * Text files go to the CSV readers. What a file is comes from its first bytes (src/io/sniff.ts), never its name.
 */
import type { CameraSummary } from '../../../src/core/calibration/profile.js';
import { InputError } from '../../../src/core/errors.js';
import { sniffKind, type SniffedKind } from '../../../src/io/sniff.js';
import exifr from 'exifr';
import { rgbaToRgb } from './linearImage.js';

/** Largest photo decoded in the page (pixels): the server's default limit. */
export const MAX_PHOTO_PIXELS = 50e6;
/** Largest file read (bytes). */
export const MAX_FILE_BYTES = 100 * 1024 * 1024;

export interface PhotoFile {
  kind: 'photo';
  name: string;
  width: number;
  height: number;
  /** RGB codes, row-major (8-bit sRGB). */
  codes: Uint8Array;
  /** A bitmap for display. */
  bitmap: ImageBitmap;
  camera: CameraSummary;
  warnings: string[];
}

export interface TextFile {
  kind: 'text';
  name: string;
  text: string;
}

export async function sniffFile(file: Blob): Promise<SniffedKind> {
  return sniffKind(new Uint8Array(await file.slice(0, 4096).arrayBuffer()));
}

/** Reads one file as a photo or as text; anything else is an InputError naming the file. */
export async function readUserFile(file: File): Promise<PhotoFile | TextFile> {
  if (file.size > MAX_FILE_BYTES) {
    throw new InputError(`${file.name}: ${(file.size / 1048576).toFixed(0)} MB is more than the ${MAX_FILE_BYTES / 1048576} MB this page reads`, file.name);
  }
  const kind = await sniffFile(file);
  if (kind === 'text') return { kind: 'text', name: file.name, text: await file.text() };
  if (kind === 'tiff') {
    throw new InputError(`${file.name}: browsers cannot decode TIFF; convert it to PNG, or use \`glowprint spectrum ${file.name}\` on the command line`, file.name);
  }
  if (kind === 'unknown') {
    throw new InputError(`${file.name}: not a JPEG, PNG or WebP photo, nor a text/CSV file (its first bytes match none of them)`, file.name);
  }
  return decodePhoto(file, kind);
}

async function decodePhoto(file: File, kind: SniffedKind): Promise<PhotoFile> {
  const warnings: string[] = [];
  let bitmap: ImageBitmap;
  try {
    bitmap = await createImageBitmap(file, { imageOrientation: 'from-image', premultiplyAlpha: 'none' });
  } catch {
    throw new InputError(`${file.name}: the browser could not decode this ${kind.toUpperCase()} (damaged or cut short?)`, file.name);
  }
  const { width, height } = bitmap;
  if (width * height > MAX_PHOTO_PIXELS) {
    bitmap.close();
    throw new InputError(`${file.name}: ${width}×${height} px is more than ${MAX_PHOTO_PIXELS / 1e6} MP`, file.name);
  }
  if (kind === 'png' && (await pngBitDepth(file)) === 16) {
    warnings.push('16-bit PNG: the browser reads it as 8-bit; use the command line for full precision');
  }
  const canvas = new OffscreenCanvas(width, height);
  const ctx = canvas.getContext('2d', { willReadFrequently: true })!;
  ctx.drawImage(bitmap, 0, 0);
  const rgba = ctx.getImageData(0, 0, width, height).data;
  const codes = rgbaToRgb(rgba, width, height);
  return { kind: 'photo', name: file.name, width, height, codes, bitmap, camera: await cameraSummary(file), warnings };
}

/** Bit depth from the PNG header (IHDR byte 24). */
async function pngBitDepth(file: Blob): Promise<number> {
  const b = new Uint8Array(await file.slice(0, 32).arrayBuffer());
  return b.length > 24 ? b[24] : 8;
}

/** The EXIF fields a measurement uses (as src/io/exif.ts reads them for the CLI); empty when the file has none. */
async function cameraSummary(file: Blob): Promise<CameraSummary> {
  let tags: Record<string, unknown> = {};
  try {
    tags =
      ((await exifr.parse(file, {
        pick: ['Make', 'Model', 'ExposureTime', 'ISO', 'FNumber', 'FocalLength', 'FocalLengthIn35mmFormat', 'DateTimeOriginal'],
        reviveValues: false,
        translateValues: false,
      })) as Record<string, unknown> | undefined) ?? {};
  } catch {
    return {};
  }
  const positive = (v: unknown): number | undefined => (typeof v === 'number' && Number.isFinite(v) && v > 0 ? v : undefined);
  const text = (v: unknown): string | undefined => (typeof v === 'string' ? v.replace(/\0+$/, '').trim() || undefined : undefined);
  const out: CameraSummary = {};
  const set = <K extends keyof CameraSummary>(k: K, v: CameraSummary[K] | undefined): void => {
    if (v !== undefined) out[k] = v;
  };
  set('cameraMake', text(tags.Make));
  set('cameraModel', text(tags.Model));
  set('exposureTimeS', positive(tags.ExposureTime));
  set('iso', positive(Array.isArray(tags.ISO) ? tags.ISO[0] : tags.ISO));
  set('fNumber', positive(tags.FNumber));
  set('focalLengthMm', positive(tags.FocalLength));
  set('focalLength35mmMm', positive(tags.FocalLengthIn35mmFormat));
  const d = typeof tags.DateTimeOriginal === 'string' ? /^(\d{4}):(\d{2}):(\d{2})[ T](\d{2}):(\d{2}):(\d{2})/.exec(tags.DateTimeOriginal) : null;
  if (d) out.dateTaken = `${d[1]}-${d[2]}-${d[3]}T${d[4]}:${d[5]}:${d[6]}`;
  return out;
}
