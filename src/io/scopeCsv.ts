import { readFile, stat } from 'node:fs/promises';
import { InputError } from '../core/errors.js';
import { assignChannels } from '../core/modes/channels.js';
import type { ModeTrace } from '../core/modes/types.js';
import { column, parseNumericCsv } from '../core/table/parseNumericCsv.js';
import { parseUnit, unitInHeader, type ParsedUnit } from '../core/units/quantity.js';

/**
 * Oscilloscope CSV exports → a mode trace. The table itself is read by parseNumericCsv (delimiters, decimal commas,
 * metadata lines, row-named errors); this file interprets what scopes put around it:
 * - units in the headers (`Time (ms)`, `CH1[mV]`, `t/us`), or a second header row of units under the names
 *   (`Second,Volt,Volt`), or a metadata line giving the horizontal unit (`Horizontal Units,S`);
 * - the time column by its unit or name (time, t, x, sec…), else the first column if it increases in even steps, else
 *   a sample interval from the metadata (`Sample Interval,2e-06`, `X Increment`, `dt`);
 * - a capture date and time in the metadata (`2026-03-02 14:03:22`, ISO 8601), for drift over a warm-up;
 * - which channel is the photodiode, the ramp and the trigger: from the user's choice (a header name or a 1-based
 *   column number; `none` for ramp and trigger), else from the shape of the data (core/modes/channels.ts).
 */
export interface ScopeCsvOptions {
  /** Name of the input in messages. */
  source: string;
  signal?: string;
  /** A column, or 'none'. */
  ramp?: string;
  trigger?: string;
}

export interface ScopeColumn {
  /** Header as written, or `column N`. */
  header: string;
  name: string;
  unit: ParsedUnit | null;
}

export interface ScopeCsv {
  trace: ModeTrace;
  columns: ScopeColumn[];
  /** 0-based column indices, null when absent; time is null when built from a sample interval. */
  roles: { time: number | null; signal: number; ramp: number | null; trigger: number | null };
  sampleIntervalS: number;
  warnings: string[];
}

const TIME_NAMES = /^(time|t|x|sec|secs|second|seconds|s|zeit|temps|tiempo)$/i;
const INTERVAL_KEYS = /^\s*(sample\s*interval|x\s*increment|xincrement|xinc|time\s*per\s*point|sampling\s*period|dt|delta\s*t)\s*[:=,;\t ]\s*([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*([A-Za-zµμ]*)/i;
const HORIZONTAL_UNIT = /^\s*(horizontal\s*units?|x\s*units?|time\s*units?)\s*[:=,;\t ]\s*([A-Za-zµμ]+)/i;
const DATE_TIME = /(\d{4})[-/.](\d{2})[-/.](\d{2})[ T,]+(\d{1,2}):(\d{2}):(\d{2}(?:\.\d+)?)/;

export function parseScopeCsv(text: string, options: ScopeCsvOptions): ScopeCsv {
  const src = options.source;
  const table = parseNumericCsv(text, { source: src });
  const width = table.rows[0].length;
  const warnings: string[] = [];
  const metaInterval = metadataInterval(table.metadata);
  if (width < 2 && metaInterval === null) {
    throw new InputError(`${src}: one column of numbers; expected a time column and the photodiode signal (and ideally the ramp or trigger) from the scope`, src);
  }
  if (table.rows.length < 32) throw new InputError(`${src}: ${table.rows.length} rows is too short a trace (expected hundreds of samples or more)`, src);

  // Headers: names and units, from one row, or names over a row of units.
  let names: string[] = Array.from({ length: width }, (_, i) => `column ${i + 1}`);
  let units: Array<ParsedUnit | null> = new Array(width).fill(null);
  const header = table.header?.length === width ? table.header : null;
  if (header) {
    const asUnits = header.map((h) => safeUnit(h));
    const allUnits = header.every((h, i) => h === '' || asUnits[i] !== null);
    const above = table.metadata.length ? splitCells(table.metadata[table.metadata.length - 1]) : [];
    if (allUnits && header.some((h) => h !== '') && above.length === width) {
      names = above.map((c, i) => c || `column ${i + 1}`);
      units = asUnits;
    } else {
      names = header.map((h, i) => unitInHeader(h).name || `column ${i + 1}`);
      units = header.map((h) => unitInHeader(h).unit);
    }
  }
  const columns: ScopeColumn[] = names.map((name, i) => ({ header: header?.[i] ?? name, name, unit: units[i] }));

  // Time column.
  let timeCol: number | null = columns.findIndex((c) => c.unit?.dimension === 'time');
  if (timeCol < 0) timeCol = columns.findIndex((c) => TIME_NAMES.test(c.name.trim()));
  if (timeCol < 0 && isEvenlyIncreasing(column(table, 0))) {
    timeCol = 0;
    if (!header) warnings.push(`${src}: no header: column 1 taken as time`);
  }
  if (timeCol < 0) timeCol = null;
  let timeS: Float64Array;
  let sampleIntervalS: number;
  if (timeCol !== null) {
    const raw = column(table, timeCol);
    let factor = columns[timeCol].unit?.dimension === 'time' ? columns[timeCol].unit!.factor : NaN;
    if (!Number.isFinite(factor)) {
      const declared = metadataTimeUnit(table.metadata);
      factor = declared ?? 1;
      if (declared === null) warnings.push(`${src}: the time column has no unit; seconds assumed`);
    }
    timeS = Float64Array.from(raw, (v) => v * factor);
    for (let i = 1; i < timeS.length; i++) {
      if (!(timeS[i] > timeS[i - 1])) {
        throw new InputError(`${src}, line ${table.lineNumbers[i]}: time does not increase (${raw[i - 1]} then ${raw[i]}); expected one sample per row in time order`, src);
      }
    }
    sampleIntervalS = (timeS[timeS.length - 1] - timeS[0]) / (timeS.length - 1);
    const t0 = timeS[0];
    for (let i = 0; i < timeS.length; i++) timeS[i] -= t0;
  } else if (metaInterval !== null) {
    sampleIntervalS = metaInterval;
    timeS = Float64Array.from({ length: table.rows.length }, (_, i) => i * metaInterval);
  } else {
    throw new InputError(`${src}: no time column (a header such as "Time (s)") and no sample interval in the header lines; cannot tell the time scale`, src);
  }

  // Channel roles.
  const dataCols = columns.map((_, i) => i).filter((i) => i !== timeCol);
  if (dataCols.length === 0) throw new InputError(`${src}: only a time column; expected the photodiode signal beside it`, src);
  const pickUser = (role: string, value: string | undefined): number | null | undefined => {
    if (value === undefined) return undefined;
    if (role !== 'signal' && value.trim().toLowerCase() === 'none') return null;
    const idx = resolveColumn(value, columns);
    if (idx === null) {
      throw new InputError(`--${role}: no column ${JSON.stringify(value)} in ${src} (columns: ${columns.map((c) => JSON.stringify(c.header)).join(', ')})`, `--${role}`);
    }
    if (idx === timeCol) throw new InputError(`--${role}: column ${JSON.stringify(value)} of ${src} is the time axis`, `--${role}`);
    return idx;
  };
  const given = { signal: pickUser('signal', options.signal), ramp: pickUser('ramp', options.ramp), trigger: pickUser('trigger', options.trigger) };
  const values = dataCols.map((i) => column(table, i));
  const toLocal = (i: number | null | undefined): number | null | undefined => (i === undefined || i === null ? i : dataCols.indexOf(i));
  const picked = assignChannels(values, {
    signal: toLocal(given.signal) ?? undefined,
    ramp: toLocal(given.ramp),
    trigger: toLocal(given.trigger),
  });
  if (picked.signal === null) throw new InputError(`${src}: no column looks like the photodiode signal; name it with --signal`, src);
  const toGlobal = (i: number | null): number | null => (i === null ? null : dataCols[i]);
  const roles = { time: timeCol, signal: toGlobal(picked.signal)!, ramp: toGlobal(picked.ramp), trigger: toGlobal(picked.trigger) };
  const trace: ModeTrace = {
    source: src,
    timeS,
    signal: column(table, roles.signal),
    ...(roles.ramp !== null ? { ramp: column(table, roles.ramp) } : {}),
    ...(roles.trigger !== null ? { trigger: column(table, roles.trigger) } : {}),
  };
  const captured = metadataCaptureTime(table.metadata);
  if (captured !== null) trace.captureTimeS = captured;
  return { trace, columns, roles, sampleIntervalS, warnings };
}

/** Reads a scope CSV file; the capture time falls back to the file's modification time (flagged in the warnings). */
export async function readScopeCsv(path: string, options: Omit<ScopeCsvOptions, 'source'> & { source?: string }): Promise<ScopeCsv & { captureTimeFrom: 'metadata' | 'file' }> {
  const text = await readFile(path, 'utf8');
  const parsed = parseScopeCsv(text, { ...options, source: options.source ?? path });
  if (parsed.trace.captureTimeS !== undefined) return { ...parsed, captureTimeFrom: 'metadata' };
  const info = await stat(path);
  parsed.trace.captureTimeS = info.mtimeMs / 1000;
  return { ...parsed, captureTimeFrom: 'file' };
}

function safeUnit(text: string): ParsedUnit | null {
  const t = text.trim();
  if (t === '') return null;
  if (t === 'S') return parseUnit('s');
  try {
    return parseUnit(t);
  } catch {
    return null;
  }
}

function splitCells(line: string): string[] {
  const d = line.includes('\t') ? '\t' : line.includes(';') && !line.includes(',') ? ';' : ',';
  return line.split(d).map((c) => c.trim().replace(/^"|"$/g, ''));
}

function resolveColumn(value: string, columns: readonly ScopeColumn[]): number | null {
  const v = value.trim();
  if (/^\d+$/.test(v)) {
    const i = Number(v) - 1;
    return i >= 0 && i < columns.length ? i : null;
  }
  const lower = v.toLowerCase();
  const byHeader = columns.findIndex((c) => c.header.trim().toLowerCase() === lower);
  if (byHeader >= 0) return byHeader;
  const byName = columns.findIndex((c) => c.name.trim().toLowerCase() === lower);
  return byName >= 0 ? byName : null;
}

function isEvenlyIncreasing(values: Float64Array): boolean {
  const n = values.length;
  if (n < 3) return false;
  const step = (values[n - 1] - values[0]) / (n - 1);
  if (!(step > 0)) return false;
  for (let i = 1; i < n; i++) if (Math.abs(values[i] - values[i - 1] - step) > 0.01 * step + 1e-12 * Math.abs(values[i])) return false;
  return true;
}

function metadataInterval(metadata: readonly string[]): number | null {
  for (const line of metadata) {
    const m = INTERVAL_KEYS.exec(line);
    if (!m) continue;
    const v = Number(m[2]);
    const unit = m[3] ? safeUnit(m[3]) : null;
    const factor = unit?.dimension === 'time' ? unit.factor : 1;
    if (v > 0 && Number.isFinite(v)) return v * factor;
  }
  return null;
}

function metadataTimeUnit(metadata: readonly string[]): number | null {
  for (const line of metadata) {
    const m = HORIZONTAL_UNIT.exec(line);
    if (!m) continue;
    const unit = safeUnit(m[2]);
    if (unit?.dimension === 'time') return unit.factor;
  }
  return null;
}

function metadataCaptureTime(metadata: readonly string[]): number | null {
  for (const line of metadata) {
    const m = DATE_TIME.exec(line);
    if (!m) continue;
    const ms = Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3]), Number(m[4]), Number(m[5]), 0) + Number(m[6]) * 1000;
    if (Number.isFinite(ms)) return ms / 1000;
  }
  return null;
}
