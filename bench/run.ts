/**
 * `npm run bench`: performance as ratios against a floor measured in the same run (never as timed tests). Each section
 * prints its figures with their targets; the run is a report and exits 0 even when a target is missed.
 * Add a section by appending it to SECTIONS; BENCH_ONLY=<text> runs only the sections whose name contains it.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { type BenchFigure, type BenchSection, passes } from './section.js';
import { analysisSection } from './analysisBench.js';
import { batchSection } from './batchBench.js';
import { browserSection } from './browser.js';
import { spectrumSection } from './spectrumBench.js';

const SECTIONS: BenchSection[] = [spectrumSection, analysisSection, batchSection, browserSection];

/** `BENCH_ONLY=batch npm run bench` runs only the sections whose name contains that text (case-insensitive). */
function selectedSections(): BenchSection[] {
  const only = process.env.BENCH_ONLY?.trim().toLowerCase();
  return only ? SECTIONS.filter((s) => s.name.toLowerCase().includes(only)) : SECTIONS;
}

function formatFigure(f: BenchFigure): string {
  const verdict = passes(f) ? 'PASS' : 'OVER TARGET';
  const op = f.kind === 'max' ? '≤' : '≥';
  const head = `  ${f.name}: ${f.value.toFixed(2)}${f.unit}  (target ${op} ${f.target}${f.unit})  ${verdict}`;
  return f.detail ? `${head}\n      ${f.detail}` : head;
}

async function main(): Promise<void> {
  if (!(globalThis as { gc?: () => void }).gc) process.stderr.write('bench: run with node --expose-gc for steadier figures\n');
  const workDir = mkdtempSync(path.join(tmpdir(), 'glowprint-bench-'));
  const log = (m: string): void => void process.stderr.write(m + '\n');
  const all: BenchFigure[] = [];
  try {
    for (const section of selectedSections()) {
      log(`\n${section.name}`);
      try {
        const figures = await section.run({ workDir, log });
        process.stdout.write(`\n${section.name}\n${figures.map(formatFigure).join('\n')}\n`);
        all.push(...figures);
      } catch (err) {
        process.stdout.write(`\n${section.name}\n  FAILED TO RUN: ${(err as Error).stack ?? String(err)}\n`);
      }
    }
  } finally {
    rmSync(workDir, { recursive: true, force: true });
  }
  const missed = all.filter((f) => !passes(f)).length;
  process.stdout.write(`\n${all.length} figure(s), ${missed} over target${missed ? ' (a report, not a test: exit 0)' : ''}\n`);
}

await main();
