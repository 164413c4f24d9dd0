import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { InputError } from '../core/errors.js';
import {
  lampLines,
  parseLampDefinitions,
  parseLaserDefinitions,
  parseLineFile,
  parseLineTable,
  selectLines,
  type LampCatalog,
  type LampLines,
  type LampLinesOptions,
  type LaserDefinition,
  type LampDefinition,
  type LineListResult,
  type ListedLine,
  type ParseLineFileOptions,
  type SelectLinesOptions,
} from '../core/lines/index.js';
import { dataPath } from './projectRoot.js';

/** Where the project's line list lives: one TSV per element in data/lines/. */
export function lineListDir(): string {
  return dataPath('lines');
}

let cachedLines: ListedLine[] | undefined;

/** Every line of the project's list (data/lines/*.tsv), read once per process. */
export function loadAllListedLines(): ListedLine[] {
  if (cachedLines) return cachedLines;
  const dir = lineListDir();
  const files = readdirSync(dir)
    .filter((f) => f.endsWith('.tsv'))
    .sort();
  const lines: ListedLine[] = [];
  for (const f of files) {
    const text = readFileSync(path.join(dir, f), 'utf8');
    lines.push(...parseLineTable(text, { source: `data/lines/${f}` }).lines);
  }
  lines.sort((a, b) => a.wavelengthNm - b.wavelengthNm);
  cachedLines = lines;
  return lines;
}

export type LoadLineListOptions = SelectLinesOptions;

/**
 * The project's curated line list, selected: `loadLineList({ elements: ['Ne', 'Hg'], rangeNm: [400, 700] })`.
 * Molecular band heads are left out unless `includeBands` is set.
 */
export function loadLineList(options: LoadLineListOptions = {}): ListedLine[] {
  return selectLines(loadAllListedLines(), options);
}

/** Reads a user's line-list file: a NIST ASD export (text, CSV, tab) or a plain CSV/TSV of wavelength_nm, intensity, spectrum. */
export function loadLineFile(file: string, options: ParseLineFileOptions = {}): LineListResult {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    throw new InputError(`${file}: cannot read the line-list file (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`, file);
  }
  return parseLineFile(text, file, options);
}

function readJson(file: string, label: string): unknown {
  try {
    return JSON.parse(readFileSync(file, 'utf8'));
  } catch (e) {
    throw new InputError(`${label}: cannot read (${(e as Error).message})`, label);
  }
}

let cachedLamps: LampDefinition[] | undefined;
let cachedLasers: LaserDefinition[] | undefined;

/** Lamp definitions (data/lamps.json). */
export function loadLampDefinitions(): LampDefinition[] {
  return (cachedLamps ??= parseLampDefinitions(readJson(dataPath('lamps.json'), 'data/lamps.json'), 'data/lamps.json'));
}

/** Laser kinds (data/lasers.json). */
export function loadLaserDefinitions(): LaserDefinition[] {
  return (cachedLasers ??= parseLaserDefinitions(readJson(dataPath('lasers.json'), 'data/lasers.json'), 'data/lasers.json'));
}

/** The project's line list, lamps and lasers, ready for `lampLines`. */
export function loadLampCatalog(): LampCatalog {
  return { lines: loadAllListedLines(), lamps: loadLampDefinitions(), lasers: loadLaserDefinitions() };
}

/** Whether a spec token names a file rather than a lamp: it has a path separator or a file extension, or exists. */
function looksLikeFile(token: string): boolean {
  if (/^laser\s*:/i.test(token)) return false;
  return /[\\/]/.test(token) || /\.(csv|tsv|txt|ascii|dat)$/i.test(token) || (existsSync(token) && statSync(token).isFile());
}

export interface LampLinesForOptions extends Omit<LampLinesOptions, 'catalog' | 'files'> {
  /** Options for reading user files named in the spec. */
  file?: ParseLineFileOptions;
}

/**
 * `lampLines` on the project's catalog, with file tokens read from disk: `lampLinesFor('Ne,Hg')`,
 * `lampLinesFor('laser:632.816')`, `lampLinesFor('Hg,./my-lines.csv')`. Warnings of the file readers are passed on.
 */
export function lampLinesFor(spec: string, options: LampLinesForOptions = {}): LampLines {
  const files: Record<string, ListedLine[]> = {};
  const fileWarnings: string[] = [];
  for (const token of spec.split(/[,+]/).map((t) => t.trim())) {
    if (token === '' || !looksLikeFile(token)) continue;
    const r = loadLineFile(token, options.file);
    // A user's list has no strong-line flags: every line is a reference line.
    files[token] = r.lines.map((l) => ({ ...l, strong: true }));
    fileWarnings.push(...r.warnings);
  }
  const { file: _file, ...rest } = options;
  const result = lampLines(spec, { ...rest, catalog: loadLampCatalog(), files });
  return { ...result, warnings: [...fileWarnings, ...result.warnings] };
}
