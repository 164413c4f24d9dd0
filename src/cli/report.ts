import type { Command } from 'commander';
import { REPORT_DEFAULTS, runReport } from '../tasks/report.js';
import { action, note, printJson } from './run.js';

export function registerReport(program: Command): void {
  program
    .command('report')
    .description('One self-contained HTML report (plots, tables with uncertainties, warnings, safety notes) from results saved with --json')
    .argument('<results...>', 'result files: the JSON a command printed with --json, a batch file {"results": [...]}, or a watch log (one JSON object per line)')
    .option('--out <folder>', 'folder to write index.html and summary.csv into (created if needed; files are replaced atomically)', REPORT_DEFAULTS.outDir)
    .option('--title <text>', 'title of the report', REPORT_DEFAULTS.title)
    .option('--intro <text>', 'a line under the title: where, when, which rig (default: the files it was made from)')
    .option('--json', 'print one JSON object (the file written and a summary row per result) instead of text')
    .addHelpText(
      'after',
      `
Any mix of results works: spectrum, calibrate, identify, polarization, grating and modes. Each becomes a section
with its verdict, key figures with uncertainties, plots, tables and warnings; several results also get a summary
table, also written as summary.csv. The HTML has no scripts and loads nothing from the network: open it in any
browser, print it or file it.

Examples:
  glowprint identify tube-a.jpg --calibration rig.json --json > tube-a.json
  glowprint polarization --table laser-a.csv --json > laser-a.json
  glowprint report tube-a.json laser-a.json --out audit/ --title "Stockroom audit, room P-017"
  glowprint report results.jsonl            (a watch log)
`,
    )
    .action(
      action(async (files: string[], opts: { out: string; title: string; intro?: string; json?: boolean }) => {
        const run = await runReport(files, { outDir: opts.out, title: opts.title, intro: opts.intro });
        if (opts.json) {
          printJson({
            reportFile: run.file,
            summaryCsvFile: run.csvFile,
            results: run.sections.map((s) => ({ kind: s.kind, ...s.summary })),
            warnings: run.warnings,
          });
          return;
        }
        process.stdout.write(`Report written: ${run.file} (${run.sections.length} ${run.sections.length === 1 ? 'result' : 'results'}; summary table in ${run.csvFile})\n`);
        for (const s of run.sections) {
          const flag = s.summary.warnings ? `  [${s.summary.warnings} warning${s.summary.warnings === 1 ? '' : 's'}]` : '';
          process.stdout.write(`  ${s.summary.item}: ${s.summary.result} — ${s.summary.keyFigure.replace(/\u00a0/g, ' ')}${flag}\n`);
        }
        if (run.warnings.length) note(`${run.warnings.length} warning(s) in the results; they are listed in the report`);
      }),
    );
}
