import { parse } from 'csv-parse/sync';
import { InputError } from '../errors.js';
import { vacuumToAirNm } from '../units/airVacuum.js';
import { readIntensityCode } from './intensityCode.js';
import type { LineListResult, ListedLine } from './lineTypes.js';
import { formatSpectrum, parseSpectrumName, type SpectrumName } from './spectrumName.js';

export interface ParseNistAsdOptions {
  /**
   * Which wavelength to keep: 'observed', 'ritz' (computed from the energy levels), or 'prefer-observed' (observed
   * where the row has one, else Ritz). @default 'prefer-observed'
   */
  wavelength?: 'observed' | 'ritz' | 'prefer-observed';
  /** Spectrum of an export without a spectrum column; else read from the file name ('HgI_air.ascii' → Hg I). */
  spectrum?: string;
  /** Rows without a numeric intensity: 'skip' them (counted in one warning) or keep them with intensity 0. @default 'skip' */
  missingIntensity?: 'skip' | 'zero';
  /** A row that cannot be read: 'fail' throws an InputError naming the line, 'skip' drops it with a warning. @default 'fail' */
  onBadRow?: 'fail' | 'skip';
}

export const NIST_ASD_DEFAULTS = Object.freeze({
  wavelength: 'prefer-observed' as 'observed' | 'ritz' | 'prefer-observed',
  missingIntensity: 'skip' as 'skip' | 'zero',
  onBadRow: 'fail' as 'fail' | 'skip',
});

/** Where a wavelength column's values are and in which unit and medium. */
interface WavelengthColumn {
  index: number;
  header: string;
  toNm: number;
  vacuum: boolean;
}

interface Columns {
  observed?: WavelengthColumn;
  ritz?: WavelengthColumn;
  intensity?: number;
  spectrum?: number;
  element?: number;
  ionStage?: number;
}

/** Raw rows from any of the three layouts, with their 1-based line numbers. */
interface Table {
  format: LineListResult['format'];
  columns: Columns;
  rows: Array<{ line: number; cells: string[] }>;
}

const WAVELENGTH_TEXT = /^(\d+(?:\.\d*)?|\.\d+)\s*[+*?:&a-z]{0,2}$/i;

function unitOf(header: string): { toNm: number; vacuum: boolean } | null {
  const h = header.toLowerCase();
  const vacuum = /vac/.test(h);
  if (/\(nm\)|\bnm\b/.test(h)) return { toNm: 1, vacuum };
  if (/\((å|a|angstrom)\)|å/.test(h)) return { toNm: 0.1, vacuum };
  if (/\((µm|um)\)/.test(h)) return { toNm: 1000, vacuum };
  return null;
}

/** The spectrum from a file name as the ASD or its users name exports: 'nist_HgII.txt', 'ArI_air.ascii', 'Ne_I.csv'. */
export function spectrumFromFileName(source: string): SpectrumName | null {
  const base = source.split(/[\\/]/).pop() ?? source;
  const m = /(?:^|[_\-\s.])([A-Z][a-z]?)[_\s-]?(I{1,3}|IV|V|VI)(?=[_\-\s.]|$)/.exec(base) ?? /^([A-Z][a-z]?)(I{1,3}|IV|V)(?=[_\-.])/.exec(base);
  if (!m) return null;
  try {
    return parseSpectrumName(`${m[1]} ${m[2]}`);
  } catch {
    return null;
  }
}

/**
 * The ASD's fixed-width text output: '|'-separated cells under a header of several lines (optionally starting with
 * '#'), closed by a dashed rule. Header cells are matched to data cells by character position, since the level
 * columns split into sub-columns (Conf. | Term | J) only on the last header line.
 */
function readAscii(lines: string[], source: string): Table | null {
  const strip = (t: string) => t.replace(/^#/, '');
  const isRule = (t: string) => /^[\s\-|+=]+$/.test(strip(t)) && /-{5,}/.test(t);
  const headerStart = lines.findIndex((t) => t.includes('|') && /observed|ritz/i.test(t) && /wavelength|observed/i.test(t));
  if (headerStart < 0) return null;
  // The header ends at a dashed rule, or (in a hand-trimmed export) just before the first row starting with a number.
  let headerEnd = headerStart;
  while (headerEnd < lines.length && !isRule(lines[headerEnd]) && !(headerEnd > headerStart && /^\s*\|?\s*\d/.test(lines[headerEnd]))) {
    headerEnd++;
  }
  const closedByRule = headerEnd < lines.length && isRule(lines[headerEnd]);
  const header = lines.slice(headerStart, headerEnd).map((t) => (t.startsWith('#') ? ' ' + t.slice(1) : t));
  const spans = header.map((t) => {
    const out: Array<{ start: number; end: number; text: string }> = [];
    let start = 0;
    for (let i = 0; i <= t.length; i++) {
      if (i === t.length || t[i] === '|') {
        out.push({ start, end: i, text: t.slice(start, i).trim() });
        start = i + 1;
      }
    }
    return out;
  });
  const nameAt = (mid: number) =>
    spans
      .map((row) => row.find((s) => s.start <= mid && mid < s.end + 1)?.text ?? '')
      .filter((t) => t !== '' && !/^-+$/.test(t))
      .join(' ')
      .replace(/\s+/g, ' ');
  // Column names from the first data line's cell positions.
  const dataLines: Array<{ line: number; text: string }> = [];
  for (let i = closedByRule ? headerEnd + 1 : headerEnd; i < lines.length; i++) {
    const t = lines[i];
    if (t.trim() === '' || t.startsWith('#') || isRule(t)) continue;
    if (/^[\s|]*$/.test(t)) continue;
    if (/observed|ritz|wavelength|air\s*\(|vac\s*\(/i.test(t) && !/\d{3}/.test(t.split('|')[0] ?? '')) continue; // repeated header
    dataLines.push({ line: i + 1, text: t });
  }
  const first = dataLines[0]?.text ?? header[header.length - 1];
  const cellSpans: Array<{ start: number; end: number }> = [];
  let s0 = 0;
  for (let i = 0; i <= first.length; i++) {
    if (i === first.length || first[i] === '|') {
      cellSpans.push({ start: s0, end: i });
      s0 = i + 1;
    }
  }
  const names = cellSpans.map((s) => nameAt((s.start + s.end) / 2));
  const columns = findColumns(names, source);
  return {
    format: 'nist-asd-ascii',
    columns,
    rows: dataLines.map((d) => ({ line: d.line, cells: d.text.split('|') })),
  };
}

/** The ASD's CSV and tab-delimited outputs: one header row (obs_wl_air(nm), ritz_wl_air(nm), intens, …), cells maybe written as ="…". */
function readDelimited(lines: string[], source: string): Table | null {
  const headerIndex = lines.findIndex((t) => /(obs|ritz)_wl_(air|vac)/i.test(t));
  if (headerIndex < 0) return null;
  const tab = lines[headerIndex].includes('\t');
  const body = lines.slice(headerIndex).join('\n');
  let records: Array<{ record: string[]; info: { lines: number } }>;
  try {
    records = parse(body, {
      delimiter: tab ? '\t' : ',',
      relax_column_count: true,
      relax_quotes: true,
      skip_empty_lines: true,
      info: true,
    }) as unknown as Array<{ record: string[]; info: { lines: number } }>;
  } catch (e) {
    throw new InputError(`${source}: cannot read the ASD table (${(e as Error).message})`, source);
  }
  const clean = (c: string) => c.trim().replace(/^="?/, '').replace(/"$/, '').trim();
  const names = records[0].record.map(clean);
  const columns = findColumns(names, source);
  return {
    format: tab ? 'nist-asd-tab' : 'nist-asd-csv',
    columns,
    rows: records.slice(1).map((r) => ({ line: headerIndex + r.info.lines, cells: r.record.map(clean) })),
  };
}

function findColumns(names: string[], source: string): Columns {
  const columns: Columns = {};
  names.forEach((raw, index) => {
    const n = raw.toLowerCase();
    const wl = (kind: 'observed' | 'ritz') => {
      const unit = unitOf(raw);
      if (!unit) throw new InputError(`${source}: cannot tell the unit of the column "${raw}" (expected nm or Å)`, source);
      columns[kind] ??= { index, header: raw, ...unit };
    };
    if (/^obs_wl_|observed.*wavelength|^observed/.test(n) && !/unc|obs-ritz/.test(n)) wl('observed');
    else if (/^ritz_wl_|ritz.*wavelength|^ritz/.test(n) && !/unc/.test(n)) wl('ritz');
    else if (/^intens|rel\.?\s*int/.test(n)) columns.intensity ??= index;
    else if (/^spectrum|^sp\.?$/.test(n)) columns.spectrum ??= index;
    else if (n === 'element') columns.element ??= index;
    else if (n === 'sp_num') columns.ionStage ??= index;
  });
  if (!columns.observed && !columns.ritz) {
    throw new InputError(`${source}: no observed or Ritz wavelength column in this ASD export`, source);
  }
  return columns;
}

/**
 * Reads a line list exported by the NIST Atomic Spectra Database: the fixed-width text output ('|' cells, as in
 * `nist_HgI.txt` / `HgI_air.ascii` exports), the CSV output, or the tab-delimited output. Keeps the observed or
 * Ritz wavelength (see `wavelength`), converted to nm (vacuum values from 200 nm up converted to standard air by the
 * IAU formula); the relative intensity with its character codes stripped (`1000h`, `50*`, `(200)`, `200bl`).
 * A row whose wavelength or intensity cell is not what the ASD writes is an InputError naming `source` and the line
 * (or a warning per row with `onBadRow: 'skip'`).
 */
export function parseNistAsd(text: string, source: string, options: ParseNistAsdOptions = {}): LineListResult {
  const o = { ...NIST_ASD_DEFAULTS, ...options };
  if (!['observed', 'ritz', 'prefer-observed'].includes(o.wavelength)) {
    throw new InputError(`wavelength: expected 'observed', 'ritz' or 'prefer-observed', got ${JSON.stringify(o.wavelength)}`, 'wavelength');
  }
  const lines = text.replace(/^\uFEFF/, '').split(/\r\n|\n|\r/);
  const table = readDelimited(lines, source) ?? readAscii(lines, source);
  if (!table) {
    throw new InputError(
      `${source}: not a NIST ASD line export (expected the text table with Observed/Ritz wavelength columns, or the CSV/tab output with obs_wl_… columns)`,
      source,
    );
  }
  const { columns } = table;
  const wanted =
    o.wavelength === 'observed' ? [columns.observed] : o.wavelength === 'ritz' ? [columns.ritz] : [columns.observed, columns.ritz];
  if (!wanted.some((c) => c)) {
    throw new InputError(`${source}: the export has no ${o.wavelength} wavelength column`, source);
  }
  const fileSpectrum = o.spectrum !== undefined ? parseSpectrumName(o.spectrum) : spectrumFromFileName(source);
  const perRowSpectrum = columns.spectrum !== undefined || columns.element !== undefined;
  if (!perRowSpectrum && !fileSpectrum) {
    throw new InputError(
      `${source}: the export names no spectrum (no Spectrum/element column, and none in the file name); give it, e.g. 'Hg I'`,
      source,
    );
  }
  const warnings: string[] = [];
  const out: ListedLine[] = [];
  let noWavelength = 0;
  let noIntensity = 0;
  let vacuumSeen = false;
  for (const { line, cells } of table.rows) {
    const fail = (what: string, got: string) => {
      const message = `${source}: line ${line}: expected ${what}, got ${JSON.stringify(got.trim())}`;
      if (o.onBadRow === 'skip') warnings.push(`${message} (row skipped)`);
      else throw new InputError(message, source);
    };
    if (cells.every((c) => c.trim() === '')) continue;
    if (table.format === 'nist-asd-ascii' && cells.length < 3) {
      fail("a row of '|'-separated cells", cells.join('|'));
      continue;
    }
    let wavelengthNm: number | null = null;
    let bad = false;
    for (const col of wanted) {
      if (!col) continue;
      const raw = (cells[col.index] ?? '').trim();
      if (raw === '') continue;
      if (!WAVELENGTH_TEXT.test(raw)) {
        fail(`a wavelength in column "${col.header}"`, raw);
        bad = true;
        break;
      }
      const value = Number((parseFloat(raw) * col.toNm).toPrecision(12));
      if (!(value > 0)) {
        fail(`a positive wavelength in column "${col.header}"`, raw);
        bad = true;
        break;
      }
      if (col.vacuum) vacuumSeen = true;
      wavelengthNm = col.vacuum && value >= 200 ? vacuumToAirNm(value, { formula: 'iau' }) : value;
      break;
    }
    if (bad) continue;
    if (wavelengthNm === null) {
      noWavelength++;
      continue;
    }
    let intensity = 0;
    let codes = '';
    if (columns.intensity !== undefined) {
      const raw = cells[columns.intensity] ?? '';
      const reading = readIntensityCode(raw);
      if (!reading) {
        fail('a relative intensity as the ASD writes it (e.g. 1000, 50*, 200h, (30))', raw);
        continue;
      }
      codes = reading.codes;
      if (reading.value === null) {
        noIntensity++;
        if (o.missingIntensity === 'skip') continue;
      } else intensity = reading.value;
    }
    let spectrum: SpectrumName;
    if (columns.spectrum !== undefined && (cells[columns.spectrum] ?? '').trim() !== '') {
      try {
        spectrum = parseSpectrumName(cells[columns.spectrum]);
      } catch {
        fail("a spectrum such as 'Ne I'", cells[columns.spectrum]);
        continue;
      }
    } else if (columns.element !== undefined && (cells[columns.element] ?? '').trim() !== '') {
      const stage = Number((cells[columns.ionStage ?? -1] ?? '1').trim() || '1');
      try {
        spectrum = parseSpectrumName(formatSpectrum(cells[columns.element].trim(), stage));
      } catch {
        fail('an element and sp_num', `${cells[columns.element]} ${stage}`);
        continue;
      }
    } else if (fileSpectrum) {
      spectrum = fileSpectrum;
    } else {
      fail('a spectrum in the Spectrum column', '');
      continue;
    }
    const entry: ListedLine = {
      wavelengthNm,
      intensity,
      element: spectrum.element,
      spectrum: spectrum.spectrum,
      ionStage: spectrum.ionStage,
      kind: 'atomic',
      persistent: false,
      strong: false,
      blend: /bl/.test(codes),
      source,
    };
    if (codes) entry.note = `ASD intensity codes: ${codes}`;
    out.push(entry);
  }
  if (noWavelength > 0) {
    warnings.push(`${source}: ${noWavelength} rows without ${o.wavelength === 'ritz' ? 'a Ritz' : 'an observed'} wavelength skipped`);
  }
  if (noIntensity > 0) {
    warnings.push(
      o.missingIntensity === 'skip'
        ? `${source}: ${noIntensity} rows without a numeric intensity skipped`
        : `${source}: ${noIntensity} rows without a numeric intensity kept with intensity 0`,
    );
  }
  if (vacuumSeen) warnings.push(`${source}: vacuum wavelengths from 200 nm up converted to standard air (IAU formula, Morton 2000)`);
  if (out.length === 0) throw new InputError(`${source}: no lines with a wavelength and intensity in this ASD export`, source);
  out.sort((a, b) => a.wavelengthNm - b.wavelengthNm);
  return { lines: out, warnings, format: table.format };
}
