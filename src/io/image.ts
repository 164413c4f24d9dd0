import { promises as fs } from 'node:fs';
import path from 'node:path';
import sharp from 'sharp';
import { InputError, invalid } from '../core/errors.js';
import type { WindowedImage } from '../core/spectrum/band/rowWindow.js';
import type { LinearImage } from '../core/types.js';
import { linearCodeTable, SRGB_DECODE_LUT_8, srgbDecodeTable } from '../core/units/srgb.js';
import { type ExifSummary, readExifSummary } from './exif.js';
import { sniffKind } from './sniff.js';

export type { ExifSummary } from './exif.js';

/**
 * Photo decoding: file or buffer → linear-light image in the upright orientation, with its EXIF summary.
 *
 * Memory: a 12-MP RGB photo is 36 MB as 8-bit codes but 144 MB as Float32. The returned image therefore keeps the
 * decoded integer codes (`codes`) and the code → linear table (`codeToLinear`), and builds `data` (Float32) and
 * `saturated` lazily on first access. Stages that sample only part of the photo (band finding, extraction) should
 * read `codeToLinear[codes[i]]` and test `codes[i] === codeToLinear.length - 1` for clipping; then the photo costs
 * its 8-bit size plus the file. With a dark frame the subtraction needs real numbers, so `data` is built at once and
 * `codes` is left out.
 */
export interface DecodeImageOptions {
  /** Name of the input in messages. @default the file path, or "image" for a buffer */
  source?: string;
  /**
   * Largest pixel count accepted, checked from the file header before any pixel is decoded (a small file claiming
   * 60000 × 60000 is a decompression bomb). @default 100e6 (100 megapixels: every phone and DSLR photo fits)
   */
  maxPixels?: number;
  /** Dark frame (same size, same exposure, lens capped) subtracted in linear light. */
  dark?: string | Buffer;
  /** Take 16-bit images as linear sensor values (true) or as sRGB-encoded (false). @default true */
  linear16?: boolean;
  /** Take 8-bit images as sRGB-encoded (true, what cameras and phones write) or as linear (false). @default true */
  srgb8?: boolean;
  /** Smallest width and height accepted, in pixels. @default 16 */
  minSidePx?: number;
}

export const DECODE_IMAGE_DEFAULTS = {
  maxPixels: 100e6,
  linear16: true,
  srgb8: true,
  minSidePx: 16,
} as const;

/** The formats glowprint decodes (sharp's `format` names) and how messages call them. */
export const SUPPORTED_IMAGE_FORMATS: Readonly<Record<string, string>> = {
  jpeg: 'JPEG',
  png: 'PNG',
  tiff: 'TIFF',
  webp: 'WebP',
};
const SUPPORTED_LIST = 'JPEG, PNG, TIFF or WebP';

export interface DecodedImage {
  image: LinearImage;
  exif: ExifSummary;
  bitDepth: 8 | 16;
  /** sharp's format name: jpeg, png, tiff, webp. */
  format: string;
  /** Size of the upright image (after EXIF orientation). */
  widthPx: number;
  heightPx: number;
  /** EXIF orientation tag as found (1 = upright), before it was applied. */
  orientation: number;
  /** Things the user should know (unreadable EXIF, dark frame taken with other settings). */
  warnings: string[];
}

/** Decodes a photo (JPEG, PNG 8/16-bit, TIFF 8/16-bit, WebP) into linear light with EXIF orientation applied. */
export async function decodeImage(input: string | Buffer, options: DecodeImageOptions = {}): Promise<DecodedImage> {
  const maxPixels = options.maxPixels ?? DECODE_IMAGE_DEFAULTS.maxPixels;
  if (typeof maxPixels !== 'number' || !(maxPixels >= 1)) throw invalid('maxPixels', 'a pixel count ≥ 1', maxPixels);
  const minSidePx = options.minSidePx ?? DECODE_IMAGE_DEFAULTS.minSidePx;
  const light = await decodeOne(input, {
    source: options.source ?? sourceName(input, 'image'),
    maxPixels,
    minSidePx,
    linear16: options.linear16 ?? DECODE_IMAGE_DEFAULTS.linear16,
    srgb8: options.srgb8 ?? DECODE_IMAGE_DEFAULTS.srgb8,
  });
  if (options.dark === undefined) return light;

  const darkSource = sourceName(options.dark, 'dark frame');
  const dark = await decodeOne(options.dark, {
    source: darkSource,
    maxPixels,
    minSidePx,
    linear16: options.linear16 ?? DECODE_IMAGE_DEFAULTS.linear16,
    srgb8: options.srgb8 ?? DECODE_IMAGE_DEFAULTS.srgb8,
  });
  const a = light.image;
  const d = dark.image;
  if (a.width !== d.width || a.height !== d.height) {
    throw new InputError(
      `${darkSource}: dark frame is ${d.width}×${d.height} px but the photo is ${a.width}×${a.height} px; ` +
        'a dark frame must be taken with the same camera settings and size',
      darkSource,
    );
  }
  if (a.channels !== d.channels) {
    throw new InputError(
      `${darkSource}: dark frame has ${d.channels === 1 ? 'one channel (grey)' : 'three channels (colour)'} but the photo has ` +
        `${a.channels === 1 ? 'one (grey)' : 'three (colour)'}`,
      darkSource,
    );
  }
  return { ...light, image: subtractDark(a, d), warnings: [...light.warnings, ...dark.warnings, ...compareSettings(light.exif, dark.exif)] };
}

/**
 * A reduced-size decode of a photo: pixel (X, Y) of `image` is a mean of the upright photo centred on the block
 * [scale·X, scale·X + scale) × [scale·Y, scale·Y + scale), in linear light; `saturated` flags a pixel whose whole
 * mean is at the maximum code.
 */
export interface ImagePreview {
  image: LinearImage;
  scale: number;
}

export interface StagedDecodeOptions extends DecodeImageOptions {
  /**
   * Whether a preview at 1/`scale` is wanted for a photo of this upright size (the caller knows what its search can
   * use). @default never
   */
  wantPreview?: (uprightWidthPx: number, uprightHeightPx: number, scale: number) => boolean;
  /**
   * Where a preview is made of a photo stored upright (EXIF orientation 1 or none): start no full decode alongside it,
   * and offer `rows` instead, for a caller that will read only part of the photo once the preview has shown where.
   * `decoded` then starts the full decode when first read. @default false
   */
  rowsAfterPreview?: boolean;
}

/**
 * The decodes of decodeImageStaged; `preview` is null where none could be made cheaply. `decoded` is the whole photo:
 * started at once, or on first read when `rows` is offered.
 */
export interface StagedDecode {
  preview: Promise<ImagePreview | null>;
  readonly decoded: Promise<DecodedImage>;
  /**
   * With `rowsAfterPreview` and a preview on its way: decodes the rows [fromPx, toPx) of the photo only, as a
   * WindowedImage (core/spectrum/band/rowWindow.ts: the photo's size and coordinates, codes for those rows). The
   * decoder still reads the compressed data of the rows above (a JPEG holds no index), but converts and keeps only
   * these. The preview reads the whole file first, so a damaged or cut-short JPEG has no preview and goes the whole
   * way, where its error is reported.
   */
  rows?: (fromPx: number, toPx: number) => Promise<DecodedImage>;
}

/**
 * decodeImage, with a 1/8-scale preview decoded alongside for JPEGs the caller wants one of (`wantPreview`): libvips
 * takes it from the decoder's DCT scaling (the JPEG is decoded at 1/4 scale, means of 4 × 4 px, without the full
 * inverse transforms) and reduces that by 2 with a linear kernel, so each preview pixel is a mean centred on its
 * 8 × 8 block (weights 1:3:3:1 over the four 4-px cells across the block and its neighbours; measured, see
 * test/io/image.test.ts). It costs about half the full decode (35 against 76 ms CPU for a 12-MP JPEG: the entropy
 * decode of the whole file, ~25 ms, is paid either way), and the coarse band search can run on it while the full
 * decode goes on (sharp decodes on libuv's thread pool) or, with `rowsAfterPreview`, before only the rows it needs
 * are decoded. Only for 8-bit JPEGs whose sides are whole multiples of 8 and without a dark frame; otherwise
 * `preview` resolves to null. A preview that fails resolves to null too: the full decode's error is the one to report.
 * The header is read and checked (size limits, format) once, before any decode starts.
 */
export async function decodeImageStaged(input: string | Buffer, options: StagedDecodeOptions = {}): Promise<StagedDecode> {
  if (options.dark !== undefined) return { preview: Promise.resolve(null), decoded: decodeImage(input, options) };
  const maxPixels = options.maxPixels ?? DECODE_IMAGE_DEFAULTS.maxPixels;
  if (typeof maxPixels !== 'number' || !(maxPixels >= 1)) throw invalid('maxPixels', 'a pixel count ≥ 1', maxPixels);
  const o: DecodeOneOptions = {
    source: options.source ?? sourceName(input, 'image'),
    maxPixels,
    minSidePx: options.minSidePx ?? DECODE_IMAGE_DEFAULTS.minSidePx,
    linear16: options.linear16 ?? DECODE_IMAGE_DEFAULTS.linear16,
    srgb8: options.srgb8 ?? DECODE_IMAGE_DEFAULTS.srgb8,
  };
  const header = await readHeader(input, o);
  const planned = previewPlanned(header, options.wantPreview ?? (() => false));
  const byRows = planned && options.rowsAfterPreview === true && (header.meta.orientation ?? 1) === 1;
  const whole = (): Promise<DecodedImage> => {
    const p = decodePixels(header, o);
    // It may not reject unobserved while the caller awaits the preview.
    p.catch(() => undefined);
    return p;
  };
  let decoded = byRows ? undefined : whole();
  const preview = planned ? previewOf(header, o) : Promise.resolve(null);
  void exifOf(header, o); // parsed while the decoder works
  return {
    preview,
    get decoded() {
      return (decoded ??= whole());
    },
    ...(byRows ? { rows: (fromPx: number, toPx: number) => decodeRows(header, o, fromPx, toPx) } : {}),
  };
}

const PREVIEW_SCALE = 8;

/** Whether previewOf will be tried: an 8-bit JPEG with sides that are whole multiples of 8, of a size the caller wants. */
function previewPlanned(header: Header, want: NonNullable<StagedDecodeOptions['wantPreview']>): boolean {
  const { meta, format, bitDepth } = header;
  const orientation = meta.orientation ?? 1;
  const storedW = meta.width ?? 0;
  const storedH = meta.height ?? 0;
  const turned = orientation >= 5; // orientations 5–8 swap the sides
  const s = PREVIEW_SCALE;
  if (format !== 'jpeg' || bitDepth !== 8 || storedW % s !== 0 || storedH % s !== 0) return false;
  return want(turned ? storedH : storedW, turned ? storedW : storedH, s);
}

async function previewOf(header: Header, o: DecodeOneOptions): Promise<ImagePreview | null> {
  const { bytes, meta, grey } = header;
  const orientation = meta.orientation ?? 1;
  const storedW = meta.width ?? 0;
  const storedH = meta.height ?? 0;
  const s = PREVIEW_SCALE;
  try {
    // In the stored orientation: with .rotate() first, libvips does not always take the whole 1/8 from the decoder
    // and blends neighbouring blocks instead (measured with orientation 6); the small image is turned here instead.
    const { data, info } = await sharp(bytes, { limitInputPixels: Math.floor(o.maxPixels), failOn: 'error' })
      // An exact 1/8 of each side: shrink-on-load in the decoder, then a 2× linear reduce (kernel 'nearest' would
      // keep one 4 × 4 cell of every four and could miss a narrow line image).
      .resize({ width: storedW / s, height: storedH / s, fit: 'fill', kernel: 'linear' })
      .removeAlpha()
      .toColourspace(grey ? 'b-w' : 'srgb')
      .raw({ depth: 'uchar' })
      .toBuffer({ resolveWithObject: true });
    const channels = grey ? 1 : 3;
    if (info.width !== storedW / s || info.height !== storedH / s || info.channels !== channels) return null;
    // A plain Uint8Array view, not sharp's Buffer: a Buffer made by native code gets its prototype set after creation,
    // and V8 holds the map of that transition only weakly; when the photo's Buffer dies the map goes, and with it the
    // optimized code that reads it and checks for it (--trace-deopt: "weak objects", every other photo).
    const stored = new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
    const upright = orientUpright(stored, info.width, info.height, channels, orientation);
    // Kept as codes (data and saturated built on first read, as for the photo): the coarse search's decimatePreview and
    // guessBandRows read the codes through the table, and a Float32 copy of the preview (2.25 MB, 3–4 ms on the main
    // thread for a 12-MP photo's 500 × 375 preview) is never made.
    const image = linearImageFromCodes({ width: upright.width, height: upright.height, channels, codes: upright.codes, codeToLinear: codeTable(8, o.srgb8) });
    return { image, scale: s };
  } catch {
    return null;
  }
}

/**
 * Stored pixels → the upright image for an EXIF orientation (TIFF 6.0 / EXIF 2.32 tag 274): upright pixel (x, y)
 * is stored pixel (xs, ys) with, for a stored W × H image, 2: (W−1−x, y); 3: (W−1−x, H−1−y); 4: (x, H−1−y);
 * 5: (y, x); 6: (y, H−1−x); 7: (W−1−y, H−1−x); 8: (W−1−y, x).
 */
function orientUpright(codes: Uint8Array, W: number, H: number, C: number, orientation: number): { codes: Uint8Array; width: number; height: number } {
  if (!(orientation >= 2 && orientation <= 8)) return { codes, width: W, height: H };
  const turned = orientation >= 5;
  const w = turned ? H : W;
  const h = turned ? W : H;
  const out = new Uint8Array(codes.length);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      // No [xs, ys] array per pixel: a preview has ~10⁵–10⁶ of them.
      const xs = orientation === 2 || orientation === 3 ? W - 1 - x : orientation === 4 ? x : orientation <= 6 ? y : W - 1 - y;
      const ys = orientation === 2 ? y : orientation === 3 || orientation === 4 ? H - 1 - y : orientation === 5 || orientation === 8 ? x : H - 1 - x;
      for (let c = 0; c < C; c++) out[(y * w + x) * C + c] = codes[(ys * W + xs) * C + c];
    }
  }
  return { codes: out, width: w, height: h };
}

interface DecodeOneOptions {
  source: string;
  maxPixels: number;
  minSidePx: number;
  linear16: boolean;
  srgb8: boolean;
}

interface Header {
  bytes: Buffer;
  meta: sharp.Metadata;
  format: string;
  bitDepth: 8 | 16;
  grey: boolean;
  /** The EXIF summary, read once (exifOf). */
  exif?: Promise<{ exif: ExifSummary; warning?: string }>;
}

/** Reads the file and its header and refuses what cannot be decoded, before a single pixel is decoded. */
async function readHeader(input: string | Buffer, o: DecodeOneOptions): Promise<Header> {
  const bytes = typeof input === 'string' ? await readImageFile(input, o.source) : input;
  if (bytes.length === 0) throw new InputError(`${o.source}: the file is empty (0 bytes), not an image`, o.source);

  let meta: sharp.Metadata;
  try {
    // The header only; sharp's own pixel limit is lifted here so that the check below gives the clear message.
    meta = await sharp(bytes, { limitInputPixels: false }).metadata();
  } catch (err) {
    throw notAnImage(o.source, bytes, err);
  }
  const format = meta.format ?? 'unknown';
  if (!(format in SUPPORTED_IMAGE_FORMATS)) {
    throw new InputError(`${o.source}: ${describeFormat(format)} images are not supported; expected ${SUPPORTED_LIST}`, o.source);
  }
  const width = meta.width ?? 0;
  const height = meta.height ?? 0;
  // Checked from the header before a single pixel is decoded.
  if (width * height > o.maxPixels) {
    throw new InputError(
      `${o.source}: the header claims ${width}×${height} px (${megapixels(width * height)} MP), over the limit of ` +
        `${megapixels(o.maxPixels)} MP; refusing to decode it (raise --max-pixels if the photo is genuine)`,
      o.source,
    );
  }
  if (width < o.minSidePx || height < o.minSidePx) {
    throw new InputError(
      `${o.source}: ${width}×${height} px is too small for a spectrum (at least ${o.minSidePx}×${o.minSidePx} px needed)`,
      o.source,
    );
  }
  const bitDepth = meta.depth === 'uchar' ? 8 : meta.depth === 'ushort' ? 16 : undefined;
  if (bitDepth === undefined) {
    throw new InputError(`${o.source}: ${meta.depth} samples are not supported; expected 8- or 16-bit integer samples`, o.source);
  }
  const grey = (meta.channels ?? 3) <= 2 && meta.space !== 'cmyk';
  return { bytes, meta, format, bitDepth, grey };
}

async function decodeOne(input: string | Buffer, o: DecodeOneOptions): Promise<DecodedImage> {
  return decodePixels(await readHeader(input, o), o);
}

async function decodePixels(header: Header, o: DecodeOneOptions): Promise<DecodedImage> {
  const { bytes, bitDepth, grey } = header;
  const raw = await runDecoder(
    header,
    o,
    sharp(bytes, { limitInputPixels: Math.floor(o.maxPixels), failOn: 'error' })
      .rotate() // applies the EXIF orientation; a no-op on upright photos
      .removeAlpha()
      .toColourspace(grey ? (bitDepth === 16 ? 'grey16' : 'b-w') : bitDepth === 16 ? 'rgb16' : 'srgb')
      .raw({ depth: bitDepth === 16 ? 'ushort' : 'uchar' }),
  );
  const { codes, channels, table } = codesOf(header, o, raw);
  return {
    ...(await describeDecode(header, o, raw.info.width, raw.info.height)),
    image: linearImageFromCodes({ width: raw.info.width, height: raw.info.height, channels, codes, codeToLinear: table }),
  };
}

/**
 * Rows [fromPx, toPx) of a photo stored upright (orientation 1; StagedDecode.rows). No .rotate() in the pipeline:
 * even as a no-op it makes libvips decode the whole photo before the crop (measured: 51 ms wall against 27 ms for
 * 510 rows of a 12-MP JPEG). The rows are the full decode's to the byte (test/io/image.test.ts).
 */
async function decodeRows(header: Header, o: DecodeOneOptions, fromPx: number, toPx: number): Promise<DecodedImage> {
  const { bytes, meta, grey } = header;
  const width = meta.width ?? 0;
  const height = meta.height ?? 0;
  if (!Number.isInteger(fromPx) || !Number.isInteger(toPx) || fromPx < 0 || toPx > height || toPx - fromPx < 2) {
    throw invalid('rows', `whole rows within 0–${height}, at least 2`, `${fromPx}–${toPx}`);
  }
  const raw = await runDecoder(
    header,
    o,
    sharp(bytes, { limitInputPixels: Math.floor(o.maxPixels), failOn: 'error' })
      .extract({ left: 0, top: fromPx, width, height: toPx - fromPx })
      .removeAlpha()
      .toColourspace(grey ? 'b-w' : 'srgb')
      .raw({ depth: 'uchar' }),
  );
  if (raw.info.width !== width || raw.info.height !== toPx - fromPx) {
    throw new InputError(`${o.source}: decoded ${raw.info.width}×${raw.info.height} px of rows ${fromPx}–${toPx - 1}; expected ${width} px wide`, o.source);
  }
  const { codes, channels, table } = codesOf(header, o, raw);
  return {
    ...(await describeDecode(header, o, width, height)),
    image: windowedImageFromCodes({ width, height, channels, codes, codeToLinear: table }, fromPx, toPx - fromPx),
  };
}

async function runDecoder(header: Header, o: DecodeOneOptions, pipeline: sharp.Sharp): Promise<{ data: Buffer; info: sharp.OutputInfo }> {
  try {
    // failOn 'error': damaged or truncated data is refused, while the harmless decoder warnings many phone JPEGs
    // raise (extra bytes after the image, odd markers) are not.
    return await pipeline.toBuffer({ resolveWithObject: true });
  } catch (err) {
    throw new InputError(
      `${o.source}: the ${SUPPORTED_IMAGE_FORMATS[header.format]} data is damaged or cut short and cannot be decoded (${decoderMessage(err)})`,
      o.source,
    );
  }
}

function codesOf(
  header: Header,
  o: DecodeOneOptions,
  raw: { data: Buffer; info: sharp.OutputInfo },
): { codes: Uint8Array | Uint16Array; channels: 1 | 3; table: Float32Array } {
  const { info, data } = raw;
  const bitDepth = header.bitDepth;
  const channels = info.channels === 1 ? 1 : 3;
  if (info.channels !== channels) {
    throw new InputError(`${o.source}: decoded to ${info.channels} channels; expected grey or RGB`, o.source);
  }
  const codes = bitDepth === 16 ? uint16View(data) : new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
  return { codes, channels, table: codeTable(bitDepth, bitDepth === 16 ? !o.linear16 : o.srgb8) };
}

/** Everything of a DecodedImage but its pixels: the EXIF summary (a warning when it cannot be read) and the header's facts. */
async function describeDecode(header: Header, o: DecodeOneOptions, widthPx: number, heightPx: number): Promise<Omit<DecodedImage, 'image'>> {
  const { meta, format, bitDepth } = header;
  const { exif, warning } = await exifOf(header, o);
  return { exif, bitDepth, format, widthPx, heightPx, orientation: meta.orientation ?? 1, warnings: warning ? [warning] : [] };
}

/**
 * The header's EXIF summary, parsed once: decodeImageStaged starts it at once, so that the parse (a few ms on the main
 * thread) runs while the decoder works on its thread pool.
 */
function exifOf(header: Header, o: DecodeOneOptions): Promise<{ exif: ExifSummary; warning?: string }> {
  const { bytes, meta, format } = header;
  return (header.exif ??= readExifSummary(format === 'tiff' && !meta.exif ? bytes : meta.exif).then(
    (exif) => ({ exif }),
    (err: unknown) => ({ exif: {}, warning: `${o.source}: EXIF data could not be read (${(err as Error).message}); exposure and camera are unknown` }),
  ));
}

export interface CodedImageParts {
  width: number;
  height: number;
  channels: 1 | 3;
  /** Integer code values, row-major, interleaved. */
  codes: Uint8Array | Uint16Array;
  /** code → linear light (relative to the maximum); its last entry is the clipping level. */
  codeToLinear: Float32Array;
}

/**
 * A LinearImage over integer codes: `data` (Float32, `codeToLinear[codes[i]]`) and `saturated` (1 where any channel
 * is at the maximum code) are computed on first access and then kept. Both are own enumerable properties, so a
 * spread copy of the image still carries them.
 */
export function linearImageFromCodes(parts: CodedImageParts): LinearImage {
  const { width, height, channels, codes, codeToLinear } = parts;
  if (codes.length !== width * height * channels) {
    throw invalid('codes', `${width * height * channels} values (${width}×${height}×${channels})`, codes);
  }
  const image = { width, height, channels, codes, codeToLinear } as LinearImage;
  let data: Float32Array | undefined;
  let saturated: Uint8Array | undefined;
  Object.defineProperty(image, 'data', {
    enumerable: true,
    configurable: true,
    get: () => (data ??= lineariseCodes(codes, codeToLinear)),
  });
  Object.defineProperty(image, 'saturated', {
    enumerable: true,
    configurable: true,
    get: () => (saturated ??= saturationFlags(codes, channels, codeToLinear.length - 1)),
  });
  return image;
}

/**
 * A WindowedImage (core/spectrum/band/rowWindow.ts): the photo's `width` × `height`, with `codes` for the `rowCount` rows
 * from `firstRowPx` only. Its `data` and `saturated` cannot be built (they would need every row) and throw when read;
 * the band samplers read the codes and throw RowWindowMiss for a pixel outside the rows.
 */
export function windowedImageFromCodes(parts: CodedImageParts, firstRowPx: number, rowCount: number): WindowedImage {
  const { width, height, channels, codes, codeToLinear } = parts;
  if (codes.length !== width * rowCount * channels) {
    throw invalid('codes', `${width * rowCount * channels} values (${width}×${rowCount}×${channels})`, codes);
  }
  const image = { width, height, channels, codes, codeToLinear, rowWindow: { firstRowPx, rowCount } } as WindowedImage;
  const missing = (): never => {
    throw new Error(`only rows ${firstRowPx}–${firstRowPx + rowCount - 1} of this ${width}×${height} image were decoded: read its codes`);
  };
  Object.defineProperty(image, 'data', { enumerable: false, configurable: true, get: missing });
  Object.defineProperty(image, 'saturated', { enumerable: false, configurable: true, get: missing });
  return image;
}

/**
 * A decoded row window narrowed to the rows [fromPx, toPx) inside it, sharing its codes (no copy): what a decode of
 * just those rows would have given, to the byte. Used when rows were decoded from a guess that covers more.
 */
export function narrowRowWindow(decoded: DecodedImage, fromPx: number, toPx: number): DecodedImage {
  const image = decoded.image as WindowedImage;
  const w = image.rowWindow;
  if (w === undefined || !(fromPx >= w.firstRowPx && toPx <= w.firstRowPx + w.rowCount && toPx - fromPx >= 2)) {
    throw invalid('rows', `whole rows inside the decoded ${w ? `${w.firstRowPx}–${w.firstRowPx + w.rowCount}` : 'photo'}`, `${fromPx}–${toPx}`);
  }
  const row = image.width * image.channels;
  const codes = image.codes!.subarray((fromPx - w.firstRowPx) * row, (toPx - w.firstRowPx) * row);
  const parts = { width: image.width, height: image.height, channels: image.channels, codes, codeToLinear: image.codeToLinear! };
  return { ...decoded, image: windowedImageFromCodes(parts, fromPx, toPx - fromPx) };
}

function lineariseCodes(codes: Uint8Array | Uint16Array, table: Float32Array): Float32Array {
  const n = codes.length;
  const out = new Float32Array(n);
  for (let i = 0; i < n; i++) out[i] = table[codes[i]];
  return out;
}

function saturationFlags(codes: Uint8Array | Uint16Array, channels: 1 | 3, maxCode: number): Uint8Array {
  const n = codes.length / channels;
  const flags = new Uint8Array(n);
  if (channels === 1) {
    for (let p = 0; p < n; p++) if (codes[p] === maxCode) flags[p] = 1;
  } else {
    for (let p = 0, i = 0; p < n; p++, i += 3) {
      if (codes[i] === maxCode || codes[i + 1] === maxCode || codes[i + 2] === maxCode) flags[p] = 1;
    }
  }
  return flags;
}

/** light − dark in linear light; saturation comes from the photo alone (a clipped pixel stays clipped). */
function subtractDark(light: LinearImage, dark: LinearImage): LinearImage {
  const a = light.data;
  const b = dark.data;
  const out = new Float32Array(a.length);
  for (let i = 0; i < a.length; i++) out[i] = a[i] - b[i];
  return { width: light.width, height: light.height, channels: light.channels, data: out, saturated: light.saturated };
}

function compareSettings(light: ExifSummary, dark: ExifSummary): string[] {
  const out: string[] = [];
  if (light.exposureTimeS !== undefined && dark.exposureTimeS !== undefined) {
    const ratio = light.exposureTimeS / dark.exposureTimeS;
    if (Math.abs(ratio - 1) > 0.02) {
      out.push(`dark frame exposure ${dark.exposureTimeS} s differs from the photo's ${light.exposureTimeS} s; the dark signal will not cancel`);
    }
  }
  if (light.iso !== undefined && dark.iso !== undefined && light.iso !== dark.iso) {
    out.push(`dark frame ISO ${dark.iso} differs from the photo's ISO ${light.iso}`);
  }
  return out;
}

/** Built on first use: the 16-bit tables are 256 KiB each. */
const tables: { linear8?: Float32Array; linear16?: Float32Array; srgb16?: Float32Array } = {};
function codeTable(bitDepth: 8 | 16, srgb: boolean): Float32Array {
  if (bitDepth === 8) return srgb ? SRGB_DECODE_LUT_8 : (tables.linear8 ??= linearCodeTable(255));
  return srgb ? (tables.srgb16 ??= srgbDecodeTable(65535)) : (tables.linear16 ??= linearCodeTable(65535));
}

function uint16View(data: Buffer): Uint16Array {
  if (data.byteOffset % 2 === 0) return new Uint16Array(data.buffer, data.byteOffset, data.byteLength / 2);
  const copy = new Uint16Array(data.byteLength / 2);
  new Uint8Array(copy.buffer).set(data);
  return copy;
}

async function readImageFile(file: string, source: string): Promise<Buffer> {
  try {
    return await fs.readFile(file);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') throw new InputError(`${source}: no such file`, source);
    if (code === 'EISDIR') throw new InputError(`${source}: is a folder, not an image file`, source);
    throw new InputError(`${source}: cannot be read (${code ?? (err as Error).message})`, source);
  }
}

function notAnImage(source: string, bytes: Buffer, err: unknown): InputError {
  const message = decoderMessage(err);
  const named = extensionFormat(source);
  if (/unsupported image format/i.test(message)) {
    const what = sniffKind(bytes) === 'text' ? 'contains text, not image data' : 'is not an image glowprint can read';
    const despite = named ? ` (despite its .${path.extname(source).slice(1)} name)` : '';
    return new InputError(`${source}: ${what}${despite}; expected ${SUPPORTED_LIST}`, source);
  }
  return new InputError(`${source}: the image header is damaged and cannot be read (${message})`, source);
}

function extensionFormat(file: string): string | undefined {
  const ext = path.extname(file).toLowerCase();
  return { '.jpg': 'JPEG', '.jpeg': 'JPEG', '.png': 'PNG', '.tif': 'TIFF', '.tiff': 'TIFF', '.webp': 'WebP' }[ext];
}

function describeFormat(format: string): string {
  const names: Record<string, string> = { gif: 'GIF', svg: 'SVG', heif: 'HEIF/AVIF', jp2k: 'JPEG 2000', pdf: 'PDF', jxl: 'JPEG XL' };
  return names[format] ?? format.toUpperCase();
}

function decoderMessage(err: unknown): string {
  return String((err as Error)?.message ?? err)
    .split('\n')[0]
    .replace(/^Input (buffer|file) (has corrupt header: )?/i, '')
    .trim();
}

function megapixels(n: number): string {
  const mp = n / 1e6;
  return mp >= 10 ? mp.toFixed(0) : mp.toPrecision(2);
}

function sourceName(input: string | Buffer, fallback: string): string {
  return typeof input === 'string' ? input : fallback;
}
