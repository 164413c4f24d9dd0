/**
 * The `report` task: result files written by any command's --json (one object, a batch's {"results": [...]}, or a
 * watch log with one JSON object per line) → one self-contained HTML report and the summary table as CSV, written
 * atomically as index.html and summary.csv in a folder. The CLI only parses arguments and prints what this returns.
 */
import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { InputError } from '../core/errors.js';
import { reportFromResults, summaryCsv, unpackResults, type ResultSection } from '../core/report/sections/index.js';
import { packageVersion } from '../io/projectRoot.js';
import { createSvgDocument } from '../io/svgDocument.js';
import { writeFileAtomic } from '../io/writeAtomic.js';

export interface ReportTaskOptions {
  /** Folder to write index.html into. @default 'report' */
  outDir?: string;
  /** @default 'glowprint report' */
  title?: string;
  intro?: string;
  generatedAt?: Date;
}

export const REPORT_DEFAULTS = { outDir: 'report', title: 'glowprint report' } as const;

export interface ReportRun {
  /** The HTML file written. */
  file: string;
  /** The summary table as CSV, written beside it. */
  csvFile: string;
  sections: ResultSection[];
  warnings: string[];
}

/** One result with the file (and the place in it) it came from, for messages and item names. */
export interface LoadedResult {
  json: unknown;
  file: string;
  /** "results[3]" in a batch file, "line 12" in a log; undefined for a single result. */
  where?: string;
}

/** Reads result files: a JSON object, a batch `{"results": [...]}`, or JSON Lines (a watch log). */
export async function readResultFiles(files: readonly string[]): Promise<LoadedResult[]> {
  const out: LoadedResult[] = [];
  for (const file of files) {
    const text = await readFile(file, 'utf8');
    if (text.trim() === '') throw new InputError(`${file}: empty file; expected the JSON a glowprint command printed with --json`, file);
    let parsed: unknown;
    try {
      parsed = JSON.parse(text);
    } catch (err) {
      out.push(...parseJsonLines(file, text, (err as Error).message));
      continue;
    }
    const results = unpackResults(parsed);
    if (results.length === 0) throw new InputError(`${file}: "results" is empty: nothing to report`, file);
    results.forEach((json, i) => out.push({ json, file, where: results.length > 1 || results[0] !== parsed ? `results[${i}]` : undefined }));
  }
  return out;
}

/** JSON Lines: every non-blank line one result. A line that does not parse is named (a torn last line is skipped). */
function parseJsonLines(file: string, text: string, wholeFileError: string): LoadedResult[] {
  const lines = text.split('\n');
  const out: LoadedResult[] = [];
  let sawObject = false;
  for (let i = 0; i < lines.length; i++) {
    const line = lines[i].trim();
    if (line === '') continue;
    try {
      const json = JSON.parse(line);
      sawObject = true;
      for (const r of unpackResults(json)) out.push({ json: r, file, where: `line ${i + 1}` });
    } catch {
      // The last line of a log that is being written may be incomplete: not an error in the file.
      const last = lines.slice(i + 1).every((l) => l.trim() === '') && !text.endsWith('\n');
      if (last && sawObject) continue;
      throw new InputError(
        sawObject ? `${file}: line ${i + 1} is not valid JSON` : `${file}: not valid JSON (${oneLine(wholeFileError)}); expected the JSON a glowprint command printed with --json`,
        file,
      );
    }
  }
  return out;
}

/** Reads the results, builds the report and writes `<outDir>/index.html` atomically (never over an input). */
export async function runReport(files: readonly string[], options: ReportTaskOptions = {}): Promise<ReportRun> {
  if (files.length === 0) throw new InputError('report: give at least one result file (the JSON a command printed with --json)');
  const loaded = await readResultFiles(files);
  const outDir = options.outDir ?? REPORT_DEFAULTS.outDir;
  const target = path.join(outDir, 'index.html');
  const report = reportFromResults(
    loaded.map((l) => l.json),
    {
      document: createSvgDocument(),
      title: options.title ?? REPORT_DEFAULTS.title,
      intro: options.intro ?? introFor(files, loaded.length),
      sources: loaded.map((l) => (l.where ? `${l.file} (${l.where})` : l.file)),
      generatedAt: options.generatedAt,
      version: packageVersion(),
    },
  );
  const csvFile = path.join(outDir, 'summary.csv');
  // Both outputs are checked before either is written, so a refused run leaves nothing half-done.
  for (const out of [target, csvFile]) {
    if (files.some((f) => path.resolve(f) === path.resolve(out))) {
      throw new InputError(`${out}: refusing to write over an input file; choose another --out folder`, out);
    }
  }
  await writeFileAtomic(target, report.html, { inputs: files });
  await writeFileAtomic(csvFile, summaryCsv(report.sections.map((s) => s.summary)), { inputs: files });
  const warnings = report.sections.flatMap((s) => (s.section.warnings ?? []).map((w) => `${s.summary.item}: ${w}`));
  return { file: target, csvFile, sections: report.sections, warnings };
}

function introFor(files: readonly string[], n: number): string {
  const names = files.map((f) => path.basename(f));
  const shown = names.length > 4 ? `${names.slice(0, 3).join(', ')} and ${names.length - 3} more` : names.join(', ');
  return `${n} ${n === 1 ? 'result' : 'results'} from ${shown}.`;
}

/** A parser's message on one short line (it may quote the text, newlines and all). */
function oneLine(message: string): string {
  const m = message.replace(/\s+/g, ' ').trim();
  return m.length > 100 ? m.slice(0, 97) + '…' : m;
}
