/**
 * Encodes a rendered (or any linear) image as a camera file through sharp: 8-bit sRGB JPEG or PNG, or 16-bit linear
 * PNG or TIFF, optionally with EXIF tags (sharp's withExif; IFD0 = the image, IFD2 = the Exif sub-IFD).
 */
import sharp from 'sharp';
import { invalid } from '../core/errors.js';
import { encodeLinear16, encodeSrgb8 } from '../core/render/encodeRendered.js';
import type { LinearImage } from '../core/types.js';
import { writeFileAtomic } from './writeAtomic.js';

/** Camera facts written as EXIF (the ones glowprint's image reader picks up). */
export interface PhotoExif {
  make?: string;
  model?: string;
  exposureTimeS?: number;
  isoSpeed?: number;
  focalLengthMm?: number;
  focalLength35mmMm?: number;
  fNumber?: number;
  /** `YYYY:MM:DD HH:MM:SS`, the EXIF date format. */
  dateTimeOriginal?: string;
  software?: string;
  imageDescription?: string;
}

export type RenderedPhotoFormat =
  | { kind: 'jpeg'; quality: number }
  | { kind: 'png8' }
  | { kind: 'png16' }
  | { kind: 'tiff16' };

export interface EncodeRenderedPhotoOptions {
  /** @default { kind: 'jpeg', quality: 92 } */
  format: RenderedPhotoFormat;
  exif?: PhotoExif;
}

export const ENCODE_RENDERED_PHOTO_DEFAULTS: EncodeRenderedPhotoOptions = { format: { kind: 'jpeg', quality: 92 } };

/** EXIF rational as libvips parses it from a string: exposure times as 1/N where that is exact enough. */
function rational(value: number): string {
  if (value > 0 && value < 1) {
    const inv = 1 / value;
    if (Math.abs(inv - Math.round(inv)) < 1e-6 * inv) return `1/${Math.round(inv)}`;
  }
  return String(value);
}

function exifTags(exif: PhotoExif, srgb: boolean): sharp.Exif {
  const ifd0: Record<string, string> = {};
  // ColorSpace 1 = sRGB (EXIF 2.32 §4.6.5); libvips would otherwise write 65535, "uncalibrated".
  const ifd2: Record<string, string> = srgb ? { ColorSpace: '1' } : {};
  if (exif.make) ifd0.Make = exif.make;
  if (exif.model) ifd0.Model = exif.model;
  if (exif.software) ifd0.Software = exif.software;
  if (exif.imageDescription) ifd0.ImageDescription = exif.imageDescription;
  if (exif.exposureTimeS !== undefined) ifd2.ExposureTime = rational(exif.exposureTimeS);
  if (exif.isoSpeed !== undefined) ifd2.ISOSpeedRatings = String(Math.round(exif.isoSpeed));
  if (exif.focalLengthMm !== undefined) ifd2.FocalLength = String(exif.focalLengthMm);
  if (exif.focalLength35mmMm !== undefined) ifd2.FocalLengthIn35mmFilm = String(Math.round(exif.focalLength35mmMm));
  if (exif.fNumber !== undefined) ifd2.FNumber = String(exif.fNumber);
  if (exif.dateTimeOriginal) ifd2.DateTimeOriginal = exif.dateTimeOriginal;
  return { IFD0: ifd0, IFD2: ifd2 };
}

/** Encodes `image` (linear, 1 = clipped; 1 or 3 channels) into the bytes of the chosen format. */
export async function encodeRenderedPhoto(
  image: LinearImage,
  options: Partial<EncodeRenderedPhotoOptions> = {},
): Promise<Buffer> {
  const o: EncodeRenderedPhotoOptions = { ...ENCODE_RENDERED_PHOTO_DEFAULTS, ...options };
  const raw = { width: image.width, height: image.height, channels: image.channels };
  let pipeline: sharp.Sharp;
  switch (o.format.kind) {
    case 'jpeg': {
      const q = o.format.quality;
      if (!Number.isInteger(q) || q < 1 || q > 100) throw invalid('format.quality', 'an integer from 1 to 100', q);
      pipeline = sharp(encodeSrgb8(image), { raw }).jpeg({ quality: q, chromaSubsampling: '4:2:0' });
      break;
    }
    case 'png8':
      pipeline = sharp(encodeSrgb8(image), { raw }).png();
      break;
    case 'png16':
      pipeline = sharp(encodeLinear16(image), { raw })
        .toColourspace(image.channels === 1 ? 'grey16' : 'rgb16')
        .png();
      break;
    case 'tiff16':
      pipeline = sharp(encodeLinear16(image), { raw })
        .toColourspace(image.channels === 1 ? 'grey16' : 'rgb16')
        .tiff({ compression: 'deflate' });
      break;
    default:
      throw invalid('format.kind', "'jpeg', 'png8', 'png16' or 'tiff16'", (o.format as { kind: unknown }).kind);
  }
  if (o.exif) pipeline = pipeline.withExif(exifTags(o.exif, o.format.kind === 'jpeg' || o.format.kind === 'png8'));
  return pipeline.toBuffer();
}

/** Encodes and writes atomically (never over a file listed in `inputs`). */
export async function writeRenderedPhoto(
  target: string,
  image: LinearImage,
  options: Partial<EncodeRenderedPhotoOptions> & { inputs?: readonly string[] } = {},
): Promise<void> {
  const { inputs, ...encode } = options;
  await writeFileAtomic(target, await encodeRenderedPhoto(image, encode), { inputs });
}
