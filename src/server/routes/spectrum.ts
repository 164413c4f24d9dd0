/**
 * POST /api/spectrum — a photo (or spectrum CSV) → spectrum → peak table, the same JSON as `glowprint spectrum --json`.
 * Also the upload handling the other routes share: which files came, what they really are (magic bytes, against the
 * declared type), the options (form fields or one JSON `options` field), and a private temporary folder for the
 * pipelines that still read files by path.
 */
import type { NextFunction, Request, Response, Router } from 'express';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { InputError, UsageError } from '../../core/errors.js';
import { sniffKind, type SniffedKind } from '../../io/sniff.js';
import { analyseSpectrumInput, parseBandOption } from '../../tasks/spectrum.js';
import { sendResult } from '../app.js';
import type { RouteContext } from './index.js';

/** A problem with an upload that has its own HTTP status (415 for a file that is not what it must be). */
export class UploadError extends Error {
  constructor(
    readonly status: 400 | 415,
    message: string,
  ) {
    super(message);
  }
}

export type UploadedFile = Express.Multer.File;

/** Wraps a route: UploadErrors answer with their status, usage mistakes of a task with 400; the rest goes to the app's handler. */
export function handle(fn: (req: Request, res: Response) => Promise<void>) {
  return async (req: Request, res: Response, next: NextFunction): Promise<void> => {
    try {
      await fn(req, res);
    } catch (err) {
      if (err instanceof UploadError) {
        res.status(err.status).json({ error: err.message, warnings: [] });
      } else if (err instanceof UsageError) {
        // The tasks' "how the command was called" mistakes (exit 2 on the command line): a bad request here.
        res.status(400).json({ error: err.message, warnings: [] });
      } else {
        next(err);
      }
    }
  };
}

/** The uploaded files of the named fields, in the order they came. */
export function filesOf(req: Request, ...fields: string[]): UploadedFile[] {
  const files = (req.files ?? {}) as Record<string, UploadedFile[]>;
  return fields.flatMap((f) => files[f] ?? []);
}

/**
 * Options of a request: form fields (multipart) or the JSON body, plus the keys of an `options` field holding JSON.
 * Keys are taken as written; values stay as sent (strings from forms).
 */
export function optionsOf(req: Request): Record<string, unknown> {
  const body = (req.body && typeof req.body === 'object' ? req.body : {}) as Record<string, unknown>;
  const out: Record<string, unknown> = { ...body };
  if (typeof body.options === 'string' && body.options.trim() !== '') {
    let parsed: unknown;
    try {
      parsed = JSON.parse(body.options);
    } catch {
      throw new InputError('options: expected a JSON object in the "options" field');
    }
    if (!parsed || typeof parsed !== 'object' || Array.isArray(parsed)) throw new InputError('options: expected a JSON object in the "options" field');
    Object.assign(out, parsed);
  }
  delete out.options;
  return out;
}

/** An option as the string a command-line flag would carry (numbers and booleans from JSON are turned into text). */
export function textOption(options: Record<string, unknown>, key: string): string | undefined {
  const v = options[key];
  if (v === undefined || v === null || v === '') return undefined;
  if (typeof v === 'string') return v;
  if (typeof v === 'number' || typeof v === 'boolean') return String(v);
  throw new InputError(`${key}: expected a text or number value, got ${Array.isArray(v) ? 'an array' : typeof v}`, key);
}

export function flagOption(options: Record<string, unknown>, key: string): boolean {
  const v = options[key];
  if (v === undefined || v === null || v === '' || v === false) return false;
  if (v === true) return true;
  const t = String(v).toLowerCase();
  if (['1', 'true', 'yes', 'on'].includes(t)) return true;
  if (['0', 'false', 'no', 'off'].includes(t)) return false;
  throw new InputError(`${key}: expected true or false, got ${JSON.stringify(v)}`, key);
}

const IMAGE_TYPES = new Set(['jpeg', 'png', 'tiff', 'webp']);
const DECLARED: Record<string, SniffedKind[]> = {
  'image/jpeg': ['jpeg'],
  'image/jpg': ['jpeg'],
  'image/pjpeg': ['jpeg'],
  'image/png': ['png'],
  'image/tiff': ['tiff'],
  'image/webp': ['webp'],
  'text/csv': ['text'],
  'text/plain': ['text'],
  'text/tab-separated-values': ['text'],
  'application/csv': ['text'],
  'application/vnd.ms-excel': ['text'],
};

/**
 * What an upload really is, from its first bytes; refused (415) when it is none of `accept`, or when its declared
 * Content-Type names a different kind (a PNG sent as image/jpeg is a client bug worth naming).
 */
export function checkUpload(file: UploadedFile, accept: ReadonlyArray<'image' | 'text'>): SniffedKind {
  const kind = sniffKind(file.buffer.subarray(0, 4096));
  const ok = (IMAGE_TYPES.has(kind) && accept.includes('image')) || (kind === 'text' && accept.includes('text'));
  const what = accept.map((a) => (a === 'image' ? 'a JPEG, PNG, TIFF or WebP photo' : 'a CSV/text file')).join(' or ');
  const name = `${file.fieldname} ${JSON.stringify(file.originalname)}`;
  if (file.size === 0) throw new UploadError(400, `${name}: the upload is empty`);
  if (!ok) {
    throw new UploadError(415, `${name}: expected ${what}, but its first bytes are ${kind === 'unknown' ? 'of no supported format' : `those of ${kind === 'text' ? 'a text file' : `a ${kind.toUpperCase()}`}`}`);
  }
  const declared = (file.mimetype ?? '').split(';')[0].trim().toLowerCase();
  const expected = DECLARED[declared];
  if (expected && !expected.includes(kind)) {
    throw new UploadError(415, `${name}: declared as ${declared}, but its bytes are ${kind === 'text' ? 'text' : `a ${kind.toUpperCase()}`}`);
  }
  if (!expected && declared && declared !== 'application/octet-stream') {
    throw new UploadError(415, `${name}: unsupported Content-Type ${declared} (send ${what})`);
  }
  return kind;
}

/** A safe file name for an upload inside the private folder: its own base name, or the field name. */
function safeName(file: UploadedFile, index: number, kind: SniffedKind): string {
  const base = path.basename(file.originalname || '').replace(/[^A-Za-z0-9._+-]/g, '_').replace(/^\.+/, '');
  const ext = kind === 'text' ? '.csv' : kind === 'jpeg' ? '.jpg' : `.${kind}`;
  const name = base && base.length <= 120 ? base : `${file.fieldname}-${index + 1}${ext}`;
  return /\.[A-Za-z0-9]{1,5}$/.test(name) ? name : name + ext;
}

/**
 * Writes the uploads into a fresh private folder (mkdtemp, removed afterwards whatever happens), calls `fn` with
 * their paths, and takes the folder's path out of whatever comes back or is thrown, so no server path leaks.
 * For pipelines that take file paths; they will take bytes later, and this goes away.
 */
export async function withUploads<T>(files: ReadonlyArray<{ file: UploadedFile; kind: SniffedKind }>, fn: (paths: string[], dir: string) => Promise<T>): Promise<T> {
  const dir = await mkdtemp(path.join(os.tmpdir(), 'glowprint-upload-'));
  try {
    const used = new Set<string>();
    const paths: string[] = [];
    for (const [i, { file, kind }] of files.entries()) {
      let name = safeName(file, i, kind);
      while (used.has(name.toLowerCase())) name = `${i + 1}-${name}`;
      used.add(name.toLowerCase());
      const p = path.join(dir, name);
      await writeFile(p, file.buffer, { mode: 0o600 });
      paths.push(p);
    }
    try {
      return scrubPaths(await fn(paths, dir), dir);
    } catch (err) {
      if (err instanceof Error) err.message = err.message.split(dir + path.sep).join('');
      throw err;
    }
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}

function scrubPaths<T>(value: T, dir: string): T {
  const prefix = dir + path.sep;
  const walk = (v: unknown): unknown => {
    if (typeof v === 'string') return v.includes(prefix) ? v.split(prefix).join('') : v;
    if (Array.isArray(v)) return v.map(walk);
    if (v && typeof v === 'object' && !ArrayBuffer.isView(v)) {
      const out: Record<string, unknown> = {};
      for (const [k, x] of Object.entries(v as Record<string, unknown>)) out[k] = walk(x);
      return out;
    }
    return v;
  };
  return walk(value) as T;
}

/** The one photo or CSV of a request (field `image`, `images` or `file`). */
export function singleInput(req: Request): UploadedFile {
  const files = filesOf(req, 'image', 'images', 'file');
  if (files.length === 0) throw new UploadError(400, 'no file: send the photo (or spectrum CSV) as multipart field "image"');
  if (files.length > 1) throw new UploadError(400, `${files.length} files: this route takes one photo (field "image")`);
  return files[0];
}

export const SINGLE_INPUT_FIELDS = [
  { name: 'image', maxCount: 1 },
  { name: 'images', maxCount: 2 },
  { name: 'file', maxCount: 1 },
];

export function registerSpectrumRoutes(router: Router, { config, upload }: RouteContext): void {
  router.post(
    '/spectrum',
    upload.fields(SINGLE_INPUT_FIELDS),
    handle(async (req, res) => {
      const file = singleInput(req);
      const kind = checkUpload(file, ['image', 'text']);
      const o = optionsOf(req);
      const bandText = textOption(o, 'band');
      const transfer = textOption(o, 'transfer');
      if (transfer !== undefined && transfer !== 'srgb' && transfer !== 'linear') throw new InputError(`transfer: expected "srgb" or "linear", got ${JSON.stringify(transfer)}`, 'transfer');
      const run = await withUploads([{ file, kind }], ([p]) =>
        analyseSpectrumInput(p, { band: bandText ? parseBandOption(bandText) : undefined, maxPixels: config.maxPixels, transfer: transfer as 'srgb' | 'linear' | undefined }),
      );
      sendResult(res, run.analysis);
    }),
  );
}
