import { parse } from 'csv-parse/sync';
import { InputError } from '../errors.js';
import { vacuumToAirNm } from '../units/airVacuum.js';
import { readIntensityCode } from './intensityCode.js';
import type { LineListResult, ListedLine } from './lineTypes.js';
import { formatSpectrum, normalizeElement, parseSpectrumName } from './spectrumName.js';

export interface ParseLineTableOptions {
  /** Name of the input in messages (a file name). */
  source: string;
  /** Spectrum of every row when the table has no spectrum column, e.g. 'Ne I'. */
  spectrum?: string;
  /** A row that cannot be read: 'fail' throws an InputError naming the row, 'skip' drops it with a warning. @default 'fail' */
  onBadRow?: 'fail' | 'skip';
}

export const LINE_TABLE_DEFAULTS = Object.freeze({ onBadRow: 'fail' as 'fail' | 'skip' });

/** Flags of the project's list: P persistent, S strong (calibration), B unresolved blend, M molecular band head. */
const FLAG_LETTERS = /^[PSBM]*$/;
const COMMENT = /^\s*(#|\/\/)/;

type Column = 'wavelength' | 'intensity' | 'spectrum' | 'element' | 'ion' | 'flags' | 'source' | 'note';

interface Layout {
  index: Partial<Record<Column, number>>;
  /** Wavelength unit factor to nm, and whether the column holds vacuum wavelengths. */
  toNm: number;
  vacuum: boolean;
}

function classify(header: string): { column: Column; toNm?: number; vacuum?: boolean } | null {
  const h = header.trim().toLowerCase().replace(/\s+/g, '_');
  if (/^(air_|vac_|vacuum_)?(wavelength|lambda|wl)(_(air|vac|vacuum))?(_?\(?(nm|a|å|angstrom|um|µm)\)?)?$/.test(h) ||
    /^wavelength_(air|vac|vacuum)_(nm|a|å)$/.test(h)) {
    const toNm = /(\(|_)(a|å|angstrom)\)?$/.test(h) ? 0.1 : /(\(|_)(um|µm)\)?$/.test(h) ? 1000 : 1;
    return { column: 'wavelength', toNm, vacuum: /vac/.test(h) };
  }
  if (/^(rel(ative)?_?)?(intensity|intens|int)(\.|_.*)?$/.test(h)) return { column: 'intensity' };
  if (/^(spectrum|species)$/.test(h)) return { column: 'spectrum' };
  if (/^(element|elem)$/.test(h)) return { column: 'element' };
  if (/^(ion|ion_stage|sp_num|stage|charge_stage)$/.test(h)) return { column: 'ion' };
  if (/^flags?$/.test(h)) return { column: 'flags' };
  if (/^(source|reference|ref)$/.test(h)) return { column: 'source' };
  if (/^(note|notes|comment|comments)$/.test(h)) return { column: 'note' };
  return null;
}

function detectDelimiter(line: string): string {
  if (line.includes('\t')) return '\t';
  if (line.includes(';') && !line.includes(',')) return ';';
  return ',';
}

/**
 * Reads a line table: the project's own `data/lines/*.tsv` (wavelength_nm, intensity, spectrum, flags, source, note)
 * or a user's plain CSV/TSV (`wavelength_nm,intensity,spectrum`; comma, semicolon or tab; `element` + `ion` columns
 * instead of `spectrum`; a header-less table is read as wavelength_nm[, intensity[, spectrum]]). A header naming
 * Å or vacuum is honoured (vacuum converted to standard air by the IAU formula, with a warning). Comment lines start with
 * # or //. A row that cannot be read is an InputError naming the source and line, or a warning with `onBadRow: 'skip'`.
 */
export function parseLineTable(text: string, options: ParseLineTableOptions): LineListResult {
  const { source } = options;
  const onBadRow = options.onBadRow ?? LINE_TABLE_DEFAULTS.onBadRow;
  const all = text.replace(/^\uFEFF/, '').split(/\r\n|\n|\r/);
  const kept: Array<{ line: number; text: string }> = [];
  all.forEach((t, i) => {
    if (t.trim() !== '' && !COMMENT.test(t)) kept.push({ line: i + 1, text: t });
  });
  if (kept.length === 0) throw new InputError(`${source}: no line rows (the file is empty or only comments)`, source);
  const delimiter = detectDelimiter(kept[0].text);
  let records: string[][];
  try {
    records = parse(kept.map((k) => k.text).join('\n'), {
      delimiter,
      relax_column_count: true,
      relax_quotes: true,
      trim: true,
      skip_empty_lines: false,
    }) as string[][];
  } catch (e) {
    throw new InputError(`${source}: cannot read the table (${(e as Error).message})`, source);
  }
  const warnings: string[] = [];
  const first = records[0];
  const headerCells = first.map(classify);
  const hasHeader = headerCells.some((c) => c !== null) || !/^\s*[\d.]+([eE][+-]?\d+)?\s*$/.test(first[0] ?? '');
  let layout: Layout;
  let start = 0;
  if (hasHeader) {
    start = 1;
    layout = { index: {}, toNm: 1, vacuum: false };
    headerCells.forEach((c, i) => {
      if (!c || layout.index[c.column] !== undefined) return;
      layout.index[c.column] = i;
      if (c.column === 'wavelength') {
        layout.toNm = c.toNm ?? 1;
        layout.vacuum = c.vacuum ?? false;
      }
    });
    if (layout.index.wavelength === undefined) {
      throw new InputError(
        `${source}: line ${kept[0].line}: expected a header with a wavelength column (wavelength_nm), got ${first.join(delimiter === '\t' ? ' | ' : delimiter)}`,
        source,
      );
    }
  } else {
    layout = { index: { wavelength: 0, intensity: 1, spectrum: 2 }, toNm: 1, vacuum: false };
  }
  const { index } = layout;
  const fixedSpectrum = options.spectrum === undefined ? undefined : parseSpectrumName(options.spectrum, 'spectrum');
  if (index.spectrum === undefined && index.element === undefined && !fixedSpectrum) {
    throw new InputError(
      `${source}: the table has no spectrum column; add one (e.g. 'Ne I') or give the spectrum of the whole file`,
      source,
    );
  }
  if (layout.vacuum) warnings.push(`${source}: vacuum wavelengths from 200 nm up converted to standard air (IAU formula, Morton 2000)`);

  const lines: ListedLine[] = [];
  for (let r = start; r < records.length; r++) {
    const cells = records[r];
    const lineNo = kept[r].line;
    const cell = (c: Column) => (index[c] === undefined ? '' : (cells[index[c]!] ?? '').trim());
    const fail = (what: string, got: string) => {
      const message = `${source}: line ${lineNo}: expected ${what}, got ${JSON.stringify(got)}`;
      if (onBadRow === 'skip') warnings.push(`${message} (row skipped)`);
      else throw new InputError(message, source);
    };
    const wlText = cell('wavelength');
    const wl = Number(wlText) * layout.toNm;
    if (wlText === '' || !Number.isFinite(wl) || wl <= 0 || wl > 1e6) {
      fail(`a wavelength in ${layout.toNm === 0.1 ? 'Å' : 'nm'}`, wlText);
      continue;
    }
    let intensity = 1;
    if (index.intensity !== undefined) {
      const reading = readIntensityCode(cell('intensity'));
      if (!reading || reading.value === null) {
        fail('a relative intensity (a number ≥ 0)', cell('intensity'));
        continue;
      }
      intensity = reading.value;
    }
    const flags = cell('flags');
    if (!FLAG_LETTERS.test(flags)) {
      fail('flags made of P (persistent), S (strong), B (blend), M (molecular band head)', flags);
      continue;
    }
    const molecular = flags.includes('M');
    let element: string;
    let ionStage: number;
    let spectrum: string;
    if (index.spectrum !== undefined && cell('spectrum') !== '') {
      const text = cell('spectrum');
      if (molecular) {
        element = /^[A-Z][a-z]?\d*/.exec(text)?.[0] ?? text.split(/\s+/)[0]; // 'N2+ 1st negative' → N2
        ionStage = 0;
        spectrum = text;
      } else {
        try {
          ({ element, ionStage, spectrum } = parseSpectrumName(text));
        } catch {
          fail("a spectrum such as 'Ne I' or 'Ar II'", text);
          continue;
        }
      }
    } else if (index.element !== undefined && cell('element') !== '') {
      const el = normalizeElement(cell('element'));
      const ionText = cell('ion') || 'I';
      let stage: number | null = null;
      try {
        stage = /^\d+$/.test(ionText) ? Number(ionText) : parseSpectrumName(`H ${ionText}`).ionStage;
      } catch {
        stage = null;
      }
      if (!el || !stage || stage < 1) {
        fail('an element symbol and ion stage (e.g. Ne, I)', `${cell('element')} ${ionText}`);
        continue;
      }
      element = el;
      ionStage = stage;
      spectrum = formatSpectrum(el, stage);
    } else if (fixedSpectrum) {
      ({ element, ionStage, spectrum } = fixedSpectrum);
    } else {
      fail("a spectrum such as 'Ne I'", '');
      continue;
    }
    const line: ListedLine = {
      // ASD convention: air wavelengths from 200 nm up, vacuum below.
      wavelengthNm: layout.vacuum && wl >= 200 ? vacuumToAirNm(wl, { formula: 'iau' }) : wl,
      intensity,
      element,
      spectrum,
      ionStage,
      kind: molecular ? 'band-head' : 'atomic',
      persistent: flags.includes('P'),
      strong: flags.includes('P') || flags.includes('S'),
      blend: flags.includes('B'),
    };
    const src = cell('source');
    line.source = src || source;
    const note = cell('note');
    if (note) line.note = note;
    lines.push(line);
  }
  if (lines.length === 0) throw new InputError(`${source}: no readable line rows`, source);
  return { lines, warnings, format: 'line-table' };
}
