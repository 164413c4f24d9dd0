import type { Command } from 'commander';
import path from 'node:path';
import { ALL_CAUTIONS } from '../core/safety.js';
import { runDemo } from '../tasks/demo.js';
import { action, note } from './run.js';

export function registerDemo(program: Command): void {
  program
    .command('demo')
    .description('Run the whole bundled scenario (data/demo) and write a report with every result, plot and caution')
    .option('--out <dir>', 'folder for the report, results (JSON), summary CSV and spectra', 'report')
    .addHelpText('after', `\nThe demo data is synthetic (a fictional stockroom audit). On real equipment:\n${ALL_CAUTIONS.map((c) => `  ${c}`).join('\n')}\n`)
    .action(
      action(async (opts: { out: string }) => {
        const outcome = await runDemo({
          outDir: opts.out,
          onStep: (i, n, step) => {
            if (process.stderr.isTTY) note(`[${i + 1}/${n}] ${step.title}`);
          },
        });
        const rows = outcome.summary;
        const w = (k: 'item' | 'measurement' | 'result'): number => Math.max(k.length, ...rows.map((r) => r[k].length));
        const [wi, wm, wr] = [w('item'), w('measurement'), w('result')];
        const lines = [
          `${'item'.padEnd(wi)}  ${'measurement'.padEnd(wm)}  ${'result'.padEnd(wr)}  key figure`,
          ...rows.map((r) => `${r.item.padEnd(wi)}  ${r.measurement.padEnd(wm)}  ${r.result.padEnd(wr)}  ${r.keyFigure}${r.warnings ? `  (${r.warnings} warning${r.warnings > 1 ? 's' : ''})` : ''}`),
          '',
          `Report: ${path.relative(process.cwd(), path.join(outcome.outDir, 'index.html')) || 'index.html'} (open it in a browser); results as JSON in ${path.relative(process.cwd(), path.join(outcome.outDir, 'results')) || 'results'}/, summary.csv beside it.`,
        ];
        process.stdout.write(lines.join('\n') + '\n');
        for (const f of outcome.failures) note(`glowprint demo: step ${f.step} failed: ${f.error}`);
        if (outcome.failures.length > 0) process.exitCode = 1;
      }),
    );
}
