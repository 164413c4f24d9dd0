import exifr from 'exifr';

/** The EXIF fields that matter for a measurement (exposure, gain, optics, camera, time), read with exifr. */
export interface ExifSummary {
  exposureTimeS?: number;
  iso?: number;
  fNumber?: number;
  focalLengthMm?: number;
  /** 35-mm-equivalent focal length (EXIF FocalLengthIn35mmFilm). */
  focalLength35mmMm?: number;
  cameraMake?: string;
  cameraModel?: string;
  /** EXIF DateTimeOriginal as ISO 8601 local time (`2024-05-01T12:34:56`), with the offset when the file records one. */
  dateTaken?: string;
}

const PICK = [
  'Make',
  'Model',
  'ExposureTime',
  'ISO',
  'FNumber',
  'FocalLength',
  'FocalLengthIn35mmFormat',
  'DateTimeOriginal',
  'OffsetTimeOriginal',
];

/**
 * Reads the summary from an EXIF block (as sharp's metadata returns it: `Exif\0\0` + TIFF structure, or the bare TIFF
 * structure) or from a whole TIFF file. Missing or zero fields are left out rather than guessed.
 */
export async function readExifSummary(block: Buffer | undefined): Promise<ExifSummary> {
  if (!block || block.length < 8) return {};
  const tiff = block.subarray(0, 6).toString('latin1') === 'Exif\0\0' ? block.subarray(6) : block;
  const tags = ((await exifr.parse(tiff, { pick: PICK, reviveValues: false, translateValues: false })) ?? {}) as Record<string, unknown>;
  const out: ExifSummary = {};
  const exposure = positive(tags.ExposureTime);
  if (exposure !== undefined) out.exposureTimeS = exposure;
  const iso = positive(Array.isArray(tags.ISO) ? tags.ISO[0] : tags.ISO);
  if (iso !== undefined) out.iso = iso;
  const fNumber = positive(tags.FNumber);
  if (fNumber !== undefined) out.fNumber = fNumber;
  const focal = positive(tags.FocalLength);
  if (focal !== undefined) out.focalLengthMm = focal;
  const focal35 = positive(tags.FocalLengthIn35mmFormat);
  if (focal35 !== undefined) out.focalLength35mmMm = focal35;
  const make = text(tags.Make);
  if (make) out.cameraMake = make;
  const model = text(tags.Model);
  if (model) out.cameraModel = model;
  const date = exifDate(tags.DateTimeOriginal, tags.OffsetTimeOriginal);
  if (date) out.dateTaken = date;
  return out;
}

function positive(v: unknown): number | undefined {
  return typeof v === 'number' && Number.isFinite(v) && v > 0 ? v : undefined;
}

function text(v: unknown): string | undefined {
  // EXIF ASCII fields are NUL-padded and often space-padded by cameras.
  return typeof v === 'string' ? v.replace(/\0+$/, '').trim() || undefined : undefined;
}

/** EXIF writes `YYYY:MM:DD HH:MM:SS` (EXIF 2.32 §4.6.5); the offset tag `±HH:MM` came with EXIF 2.31. */
function exifDate(value: unknown, offset: unknown): string | undefined {
  if (typeof value !== 'string') return undefined;
  const m = /^(\d{4}):(\d{2}):(\d{2})[ T](\d{2}):(\d{2}):(\d{2})/.exec(value.trim());
  if (!m || m[1] === '0000') return undefined;
  const zone = typeof offset === 'string' && /^[+-]\d{2}:\d{2}$/.test(offset.trim()) ? offset.trim() : '';
  return `${m[1]}-${m[2]}-${m[3]}T${m[4]}:${m[5]}:${m[6]}${zone}`;
}
