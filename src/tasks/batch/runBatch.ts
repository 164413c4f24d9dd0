/**
 * A batch end to end: the files through the pool, then the summary CSV and the HTML report of the lot (the report
 * builder of `glowprint report`, fed the per-file results), both written atomically and never over an input.
 */
import path from 'node:path';
import { InputError } from '../../core/errors.js';
import { toSnakeCase } from '../../core/json/toSnakeCase.js';
import { reportFromResults } from '../../core/report/sections/index.js';
import { packageVersion } from '../../io/projectRoot.js';
import { createSvgDocument } from '../../io/svgDocument.js';
import { writeFileAtomic } from '../../io/writeAtomic.js';
import type { BatchJob } from './jobs.js';
import { runPool, type BatchItem, type PoolOptions } from './pool.js';
import { batchSummaryCsv } from './summary.js';

export interface BatchOptions extends PoolOptions {
  /** Write the summary CSV here. */
  summaryFile?: string;
  /** Write the report into this folder: index.html, and summary.csv unless `summaryFile` puts it elsewhere. */
  reportDir?: string;
  /** Every file the run reads (inputs, profile, line list): outputs are never written over one. */
  readFiles: readonly string[];
}

export interface BatchRun {
  items: BatchItem[];
  failed: number;
  /** The files written (null when not asked for). */
  summaryFile: string | null;
  reportFile: string | null;
}

/** Where the outputs go, refused before any work when one would land on an input. */
export function batchOutputs(options: Pick<BatchOptions, 'summaryFile' | 'reportDir' | 'readFiles'>): { summaryFile: string | null; reportFile: string | null } {
  const summaryFile = options.summaryFile ?? (options.reportDir !== undefined ? path.join(options.reportDir, 'summary.csv') : null);
  const reportFile = options.reportDir !== undefined ? path.join(options.reportDir, 'index.html') : null;
  for (const out of [summaryFile, reportFile]) {
    if (out && options.readFiles.some((f) => path.resolve(f) === path.resolve(out))) {
      throw new InputError(`${out}: refusing to write over an input file; choose another output name`, out);
    }
  }
  if (summaryFile && reportFile && path.resolve(summaryFile) === path.resolve(reportFile)) {
    throw new InputError(`${summaryFile}: the summary and the report would be the same file`, summaryFile);
  }
  return { summaryFile, reportFile };
}

/** The JSON of each item as the command prints it (snake_case), a failed one as `{command, file, error}`. */
export function itemJson(command: BatchJob['command'], item: BatchItem): Record<string, unknown> {
  return item.status === 'ok' ? item.result.json : { command, file: item.file, error: item.error };
}

/** Runs the batch and writes its summary and report. */
export async function runBatch(files: readonly string[], job: BatchJob, options: BatchOptions): Promise<BatchRun> {
  const { summaryFile, reportFile } = batchOutputs(options);
  const items = await runPool(files, job, options);
  const failed = items.filter((i) => i.status === 'failed').length;
  if (reportFile) {
    const report = reportFromResults(
      items.map((item) => toSnakeCase(itemJson(job.command, item))),
      {
        document: createSvgDocument(),
        title: `glowprint ${job.command}: ${files.length} ${files.length === 1 ? 'file' : 'files'}`,
        intro: `${files.length - failed} of ${files.length} ${files.length === 1 ? 'file' : 'files'} measured${failed ? `; ${failed} failed (named below, with the reason)` : ''}.`,
        sources: [...files],
        version: packageVersion(),
      },
    );
    await writeFileAtomic(reportFile, report.html, { inputs: options.readFiles });
  }
  if (summaryFile) await writeFileAtomic(summaryFile, batchSummaryCsv(job.command, items), { inputs: options.readFiles });
  return { items, failed, summaryFile, reportFile };
}

/** `--workers N`: a whole number ≥ 1; undefined → min(files, cores). */
export function parseWorkers(text: string | undefined): number | undefined {
  if (text === undefined) return undefined;
  const n = Number(text);
  if (text.trim() === '' || !Number.isInteger(n) || n < 1) throw new InputError(`--workers: expected a whole number of worker threads ≥ 1, got ${JSON.stringify(text)}`, '--workers');
  return n;
}
