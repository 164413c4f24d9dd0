import { InputError } from '../../errors.js';
import { HIGH_VOLTAGE_CAUTION, LASER_CAUTION, UV_CAUTION } from '../../safety.js';
import { buildReport, type ReportSection } from '../buildReport.js';
import type { ReportTable } from '../html.js';
import { calibrationSection } from './calibrationSection.js';
import { gratingSection } from './gratingSection.js';
import { identificationSection } from './identificationSection.js';
import { modesSection } from './modesSection.js';
import { polarizationSection } from './polarizationSection.js';
import { baseName, isRecord } from './read.js';
import { spectrumSection } from './spectrumSection.js';
import { KIND_LABEL, type ResultKind, type ResultSection, type SectionOptions, type SummaryRow } from './types.js';

export { calibrationSection, gratingSection, identificationSection, modesSection, polarizationSection, spectrumSection };
export { COMMAND_OF_KIND, KIND_LABEL } from './types.js';
export type { ResultKind, ResultSection, SectionOptions, SummaryRow } from './types.js';

const ADAPTERS: Record<ResultKind, (json: unknown, options: SectionOptions) => ResultSection> = {
  spectrum: spectrumSection,
  calibration: calibrationSection,
  identification: identificationSection,
  polarization: polarizationSection,
  grating: gratingSection,
  modes: modesSection,
};

/** Values of a result's `"command"` key, and the kind each means. */
const KIND_OF_COMMAND: Record<string, ResultKind> = {
  spectrum: 'spectrum',
  calibrate: 'calibration',
  calibration: 'calibration',
  identify: 'identification',
  identification: 'identification',
  polarization: 'polarization',
  grating: 'grating',
  modes: 'modes',
};

const KNOWN = 'the JSON of glowprint spectrum, calibrate, identify, polarization, grating or modes';

/**
 * Which command printed this JSON: its `"command"` key when it has one, else its shape (the keys each command's
 * contract requires). Throws InputError for anything else.
 */
export function resultKind(json: unknown): ResultKind {
  if (!isRecord(json)) throw new InputError(`expected ${KNOWN} (one JSON object), got ${Array.isArray(json) ? 'an array' : typeof json}`);
  const command = json.command;
  if (command !== undefined) {
    const kind = typeof command === 'string' ? KIND_OF_COMMAND[command] : undefined;
    if (!kind) throw new InputError(`"command": ${JSON.stringify(command)} is not a glowprint command with a report (expected one of ${Object.keys(KIND_OF_COMMAND).join(', ')})`);
    return kind;
  }
  const has = (k: string): boolean => k in json;
  const arr = (k: string): boolean => Array.isArray(json[k]);
  if (arr('species') && arr('peaks') && has('calibration')) return 'identification';
  if (has('rms_nm') && has('dispersion_nm_per_px') && arr('lines')) return 'calibration';
  if (has('mode_spacing_hz') && arr('modes')) return 'modes';
  if (has('lines_per_mm') && (arr('residuals') || has('period_um'))) return 'grating';
  if ((has('dolp') && has('verdict')) || has('time_series') || (has('offset_deg') && has('reference'))) return 'polarization';
  if (arr('peaks') && has('band') && isRecord(json.spectrum)) return 'spectrum';
  throw new InputError(`not a glowprint result: expected ${KNOWN}; found keys ${Object.keys(json).slice(0, 8).join(', ') || '(none)'}`);
}

/**
 * One result's JSON (exactly what a command's --json printed, or the same object with a top-level `"command"` key)
 * → its report section and summary row. A batch entry that failed (`{"error": "…"}`) becomes a short section that
 * says so. Bad or unknown JSON throws InputError naming the key at fault.
 */
export function sectionFromResult(json: unknown, options: SectionOptions): ResultSection {
  if (isRecord(json) && typeof json.error === 'string' && !('peaks' in json) && !('dolp' in json)) return failedSection(json, options);
  return ADAPTERS[resultKind(json)](json, options);
}

/** The results in one JSON value: a single result, or a batch `{"results": [...]}`. */
export function unpackResults(json: unknown): unknown[] {
  if (isRecord(json) && Array.isArray(json.results)) return json.results;
  return [json];
}

/**
 * A batch entry that failed: the file (named once, in the heading, with its full path under it when that says more)
 * and why, so the report shows what is missing and why. An error that starts with the file's name (as earlier
 * versions wrote it, "x.jpg: no such file", "x.csv, line 3: …") is shown without it.
 */
function failedSection(json: Record<string, unknown>, options: SectionOptions): ResultSection {
  const input = typeof json.file === 'string' ? json.file : typeof json.input === 'string' ? json.input : undefined;
  const file = input || options.source;
  const item = file ? baseName(file) : 'input';
  const id = options.id ?? 'failed';
  const raw = String(json.error);
  const error = input && (raw.startsWith(`${input}: `) || raw.startsWith(`${input}, `)) ? raw.slice(input.length + 2) : raw;
  const measurement = typeof json.command === 'string' && KIND_OF_COMMAND[json.command] ? KIND_LABEL[KIND_OF_COMMAND[json.command]] : 'Measurement';
  return {
    kind: 'failed',
    section: { id, heading: `${item} — not measured`, subtitle: input && input !== item ? `Input: ${input}` : undefined, verdict: 'This input could not be measured', warnings: [error] },
    summary: { id, item, measurement, result: 'failed', keyFigure: error.length > 90 ? error.slice(0, 87) + '…' : error, warnings: 1 },
  };
}

/** The report's table for the lot: one row per result. */
export function summaryTable(rows: readonly SummaryRow[]): ReportTable {
  return {
    caption: `Summary (${rows.length} ${rows.length === 1 ? 'result' : 'results'}; details below)`,
    columns: ['item', 'measurement', 'result', 'key figure', 'warnings'],
    numeric: [4],
    rows: rows.map((r) => [r.item, r.measurement, r.result, r.keyFigure, r.warnings]),
  };
}

/**
 * The summary table as CSV (RFC 4180: comma-separated, fields with commas, quotes or line breaks quoted, quotes
 * doubled), one row per result, for a spreadsheet or the stock list.
 */
export function summaryCsv(rows: readonly SummaryRow[]): string {
  const field = (v: string | number): string => {
    const s = String(v).replace(/\u00a0/g, ' ');
    return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
  };
  const lines = [['item', 'measurement', 'result', 'key_figure', 'warnings'].join(',')];
  for (const r of rows) lines.push([r.item, r.measurement, r.result, r.keyFigure, r.warnings].map(field).join(','));
  return lines.join('\r\n') + '\r\n';
}

/** The cautions that apply to the measurements in a report: lasers for laser work, high voltage and UV for lamps. */
export function cautionsFor(kinds: Iterable<ResultSection['kind']>): string[] {
  const set = new Set(kinds);
  const out: string[] = [];
  if (set.has('spectrum') || set.has('calibration') || set.has('identification') || set.has('failed')) out.push(HIGH_VOLTAGE_CAUTION, UV_CAUTION);
  if (set.has('polarization') || set.has('grating') || set.has('modes') || set.has('identification') || set.has('failed')) out.push(LASER_CAUTION);
  return out;
}

export interface ResultsReportOptions {
  document: Document;
  title: string;
  intro?: string;
  /**
   * Where each result came from (its JSON file, and the place in it), parallel to the results: named in error messages,
   * and as the item when a result does not say which input it measured.
   */
  sources?: ReadonlyArray<string | undefined>;
  generatedAt?: Date;
  version?: string;
}

export interface ResultsReport {
  html: string;
  sections: ResultSection[];
}

/** Many results → one self-contained HTML report: the summary table, a section per result, the cautions that apply. */
export function reportFromResults(results: readonly unknown[], options: ResultsReportOptions): ResultsReport {
  const used = new Set<string>();
  const sections = results.map((json, i) => {
    const source = options.sources?.[i];
    let first: ResultSection;
    try {
      first = sectionFromResult(json, { document: options.document, source, id: `r${i + 1}` });
    } catch (err) {
      // Name the result at fault: its file (and place in it) when known, else its position.
      if (err instanceof InputError) throw new InputError(`${source ?? `result ${i + 1}`}: ${err.message}`, source ?? err.source);
      throw err;
    }
    const id = uniqueId(first.summary.item, used);
    return { ...first, section: { ...first.section, id }, summary: { ...first.summary, id } };
  });
  const reportSections: ReportSection[] = sections.map((s) => s.section);
  const html = buildReport({
    title: options.title,
    intro: options.intro,
    summary: sections.length > 1 ? summaryTable(sections.map((s) => s.summary)) : undefined,
    sections: reportSections,
    cautions: cautionsFor(sections.map((s) => s.kind)),
    generatedAt: options.generatedAt,
    version: options.version,
  });
  return { html, sections };
}

function uniqueId(item: string, used: Set<string>): string {
  const base = item.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '') || 'result';
  let id = base;
  for (let n = 2; used.has(id); n++) id = `${base}-${n}`;
  used.add(id);
  return id;
}
