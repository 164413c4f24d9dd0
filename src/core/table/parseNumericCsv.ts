import { parse } from 'csv-parse/sync';
import { InputError } from '../errors.js';

export interface NumericTable {
  /** Header cells as written (trimmed), or null when the file has none. */
  header: string[] | null;
  /** The numeric rows; an empty cell is NaN only when `allowEmpty` is set. */
  rows: number[][];
  /** 1-based line number in the file of each row, for messages. */
  lineNumbers: number[];
  /** Lines before the header (instrument metadata) and comment lines, as written. */
  metadata: string[];
  /** The delimiter found: ',', ';', '\t' or 'whitespace'. */
  delimiter: string;
}

export interface ParseNumericCsvOptions {
  /** Name of the input in messages (a file name or form field). */
  source: string;
  /** The least number of columns a data row needs. @default 1 */
  minColumns?: number;
  /** Read empty cells as NaN instead of failing. @default false */
  allowEmpty?: boolean;
}

const COMMENT = /^\s*(#|\/\/|%)/;

/**
 * Reads a numeric table from CSV-like text as instruments and spreadsheets write it: comma, semicolon, tab or
 * whitespace delimited (found from the text), an optional header row, comment lines (#, //, %), and leading metadata
 * lines (oscilloscope exports) that are kept aside. The data block starts at the first pair of consecutive numeric
 * rows; from there on every row must be numeric, and a cell that is not is reported with its line number.
 */
export function parseNumericCsv(text: string, options: ParseNumericCsvOptions): NumericTable {
  const source = options.source;
  const minColumns = options.minColumns ?? 1;
  const lines = text.replace(/^\uFEFF/, '').split(/\r\n|\n|\r/);
  const metadata: string[] = [];
  const content: Array<{ line: number; text: string }> = [];
  lines.forEach((t, i) => {
    if (t.trim() === '') return;
    if (COMMENT.test(t)) metadata.push(t);
    else content.push({ line: i + 1, text: t });
  });
  if (content.length === 0) throw new InputError(`${source}: no data rows (the file is empty or only comments)`, source);
  const delimiter = detectDelimiter(content.slice(-200).map((c) => c.text));
  const cellsOf = splitter(delimiter, content);
  const decimalComma = delimiter === ';' || delimiter === '\t' || delimiter === 'whitespace';
  const numeric = (cells: string[]): number[] | null => {
    const out: number[] = [];
    for (const raw of cells) {
      const v = toNumber(raw, decimalComma);
      if (v === null) {
        if (raw.trim() === '' && options.allowEmpty) {
          out.push(NaN);
          continue;
        }
        return null;
      }
      out.push(v);
    }
    return out;
  };
  const parsedRows = content.map((c, i) => ({ line: c.line, cells: options.allowEmpty ? cellsOf(i) : trimTrailingEmpty(cellsOf(i)) }));
  let start = -1;
  for (let i = 0; i < parsedRows.length; i++) {
    const here = numeric(parsedRows[i].cells);
    if (!here || here.length < minColumns) continue;
    const next = parsedRows[i + 1];
    if (!next || numeric(next.cells)) {
      start = i;
      break;
    }
  }
  if (start < 0) {
    const first = content[0];
    throw new InputError(
      `${source}: no numeric data found (line ${first.line} reads ${JSON.stringify(first.text.slice(0, 60))}); expected rows of numbers${
        minColumns > 1 ? ` with at least ${minColumns} columns` : ''
      }`,
      source,
    );
  }
  // A numeric row above the data block, or a "header" that starts with a number, is a broken data row (a NaN or a
  // typo near the top), not metadata: report it rather than read around it.
  const firstNumeric = parsedRows.findIndex((r) => {
    const v = numeric(r.cells);
    return v !== null && v.length >= minColumns;
  });
  const suspect =
    firstNumeric >= 0 && firstNumeric < start
      ? parsedRows.slice(firstNumeric + 1, start).find((r) => !numeric(r.cells))
      : start > 0 && toNumber(parsedRows[start - 1].cells[0] ?? '', decimalComma) !== null
        ? parsedRows[start - 1]
        : undefined;
  if (suspect) {
    const bad = suspect.cells.find((c) => toNumber(c, decimalComma) === null) ?? '';
    throw new InputError(
      `${source}, line ${suspect.line}, column ${suspect.cells.indexOf(bad) + 1}: expected a number, got ${JSON.stringify(bad.trim())}`,
      source,
    );
  }
  const width = parsedRows[start].cells.length;
  let header: string[] | null = null;
  if (start > 0) {
    const prev = parsedRows[start - 1];
    if (prev.cells.length === width || prev.cells.length === width + 1 || prev.cells.length + 1 === width) {
      header = prev.cells.map((c) => c.trim());
      for (let i = 0; i < start - 1; i++) metadata.push(content[i].text);
    } else {
      for (let i = 0; i < start; i++) metadata.push(content[i].text);
    }
  }
  const rows: number[][] = [];
  const lineNumbers: number[] = [];
  for (let i = start; i < parsedRows.length; i++) {
    const { line, cells } = parsedRows[i];
    const values = numeric(cells);
    if (!values) {
      const bad = cells.find((c) => toNumber(c, decimalComma) === null) ?? '';
      const col = cells.indexOf(bad);
      const name = header?.[col] ? ` (${header[col]})` : '';
      throw new InputError(
        `${source}, line ${line}, column ${col + 1}${name}: expected a number, got ${JSON.stringify(bad.trim())}`,
        source,
      );
    }
    if (values.length !== width) {
      throw new InputError(`${source}, line ${line}: expected ${width} columns like the rows above, got ${values.length}`, source);
    }
    rows.push(values);
    lineNumbers.push(line);
  }
  return { header, rows, lineNumbers, metadata, delimiter };
}

/** Column `index` of a table as a Float64Array. */
export function column(table: NumericTable, index: number): Float64Array {
  const out = new Float64Array(table.rows.length);
  for (let i = 0; i < out.length; i++) out[i] = table.rows[i][index];
  return out;
}

function toNumber(raw: string, decimalComma: boolean): number | null {
  let s = raw.trim();
  if (s === '') return null;
  if (decimalComma && /^[+-]?\d*,\d+([eE][+-]?\d+)?$/.test(s)) s = s.replace(',', '.');
  if (!/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(s)) {
    if (/^[+-]?(inf|infinity)$/i.test(s)) return s.startsWith('-') ? -Infinity : Infinity;
    return null;
  }
  return Number(s);
}

function trimTrailingEmpty(cells: string[]): string[] {
  let n = cells.length;
  while (n > 1 && cells[n - 1].trim() === '') n--;
  return n === cells.length ? cells : cells.slice(0, n);
}

function detectDelimiter(sample: string[]): string {
  let best = 'whitespace';
  let bestScore = 0;
  for (const d of [',', ';', '\t']) {
    const counts = sample.map((t) => t.split(d).length);
    const multi = counts.filter((c) => c > 1);
    if (multi.length < sample.length / 2) continue;
    // The most common count, and how many rows share it: consistent multi-column rows win.
    const freq = new Map<number, number>();
    for (const c of multi) freq.set(c, (freq.get(c) ?? 0) + 1);
    const score = Math.max(...freq.values());
    if (score > bestScore) {
      bestScore = score;
      best = d;
    }
  }
  return best;
}

function splitter(
  delimiter: string,
  content: Array<{ line: number; text: string }>,
): (i: number) => string[] {
  if (delimiter === 'whitespace') return (i) => content[i].text.trim().split(/\s+/);
  return (i) => {
    const t = content[i].text;
    if (!t.includes('"')) return t.split(delimiter);
    try {
      const rec = parse(t, { delimiter, relax_quotes: true, relax_column_count: true }) as string[][];
      return rec[0] ?? [];
    } catch {
      return t.split(delimiter);
    }
  };
}
