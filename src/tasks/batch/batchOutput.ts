import path from 'node:path';
import type { BatchCommand } from './jobs.js';
import type { BatchRun } from './runBatch.js';
import { itemJson } from './runBatch.js';

/** What the command prints for a batch: the JSON object (--json), the readable text, and the lines for stderr. */
export interface BatchOutput {
  json: Record<string, unknown>;
  text: string;
  /**
   * For stderr, without the "glowprint: " prefix: warnings (text mode; in the JSON otherwise), then each failed file as
   * "<file>: <why>" — worded as the command words that file's error when it is the only input — then the tally and
   * the files written.
   */
  notes: string[];
}

/**
 * A batch's output. Several inputs: `{command, results: [...], warnings}`, a failed file as `{command, file, error}`
 * (`error` says why, without the file's name, which is beside it) and "<file>: <why>" among the warnings. One input:
 * that result's own object, the run's warnings in front of its own. `done` words the tally ("identified", "measured").
 */
export function batchOutput(command: BatchCommand, batch: BatchRun, options: { several: boolean; warnings: readonly string[]; done: string; json: boolean }): BatchOutput {
  const warnings = [...options.warnings];
  const failed = batch.items.filter((r) => r.status === 'failed');
  for (const f of failed) warnings.push(`${f.file}: ${f.error}`);
  const results = batch.items.map((r) => itemJson(command, r));
  const json = options.several
    ? { command, results, warnings }
    : { ...results[0], warnings: [...warnings, ...((results[0] as { warnings?: string[] }).warnings ?? [])] };
  const text = batch.items.map((r) => (r.status === 'failed' ? `${r.file}: not ${options.done}: ${r.error}\n` : r.result.text)).join('');
  const notes: string[] = [];
  if (!options.json) {
    for (const r of batch.items) if (r.status === 'ok') for (const w of r.result.warnings) notes.push(`warning: ${path.basename(r.file)}: ${w}`);
    for (const w of options.warnings) notes.push(`warning: ${w}`);
  }
  // A failure is an error (it makes the exit code 1), not a warning: said on stderr with --json too.
  for (const f of failed) notes.push(`${f.file}: ${f.error}`);
  const n = batch.items.length;
  if (options.several) notes.push(`${n - failed.length} of ${n} files ${options.done}${failed.length ? `, ${failed.length} failed` : ''}`);
  if (batch.summaryFile) notes.push(`summary written to ${batch.summaryFile}`);
  if (batch.reportFile) notes.push(`report written to ${batch.reportFile}`);
  return { json, text, notes };
}
