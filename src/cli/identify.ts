import type { Command } from 'commander';
import path from 'node:path';
import { InputError } from '../core/errors.js';
import { SELF_CALIBRATION_LAMPS } from '../core/identify/identifySelfCalibrated.js';
import { HIGH_VOLTAGE_CAUTION, LASER_CAUTION, UV_CAUTION } from '../core/safety.js';
import { readProfile } from '../io/profileFile.js';
import type { IdentifyJob } from '../tasks/batch/jobs.js';
import { batchProgress } from '../tasks/batch/progress.js';
import { batchOutput } from '../tasks/batch/batchOutput.js';
import { perInputName } from '../tasks/batch/perInputName.js';
import { parseWorkers, runBatch } from '../tasks/batch/runBatch.js';
import { identifyLines } from '../tasks/identify.js';
import { action, note, printJson, requireReadableFile } from './run.js';

interface IdentifyCliOptions {
  calibration?: string;
  json?: boolean;
  svg?: string;
  elements?: string;
  lineList?: string;
  bands?: boolean;
  workers?: string;
  summary?: string;
  report?: string;
}

const HELP_AFTER = `
Input: photos of grating spectra (JPEG, PNG, TIFF, WebP) or spectrum CSV files, one result each, through the same
pipeline as "glowprint spectrum". The wavelength scale comes from --calibration (a profile made by
"glowprint calibrate"), from a CSV's own wavelength column, or else from the spectrum itself: the lines of the
usual tube gases (${SELF_CALIBRATION_LAMPS.join(', ')}) are tried as the calibration and the most likely scale is
kept — said so in the output, with lowered confidence. A calibration profile gives firmer answers.

Output: for each species a score (0–1, the probability that it contributes lines; 0.5 is the presence threshold),
present yes/no, the lines matched and its share of the line flux; every peak with its wavelength ± uncertainty and
the line it is (or none); the bright peaks no species explains (a contaminant, molecular bands, stray light); a
laser line with the laser kinds it may be. N2 band heads take part as a molecular candidate (--no-bands to leave
them out). --svg writes the spectrum with the lines labelled (for several inputs, one file each: out-<input>.svg).

Batch (several inputs, e.g. photos/*.jpg): one result each, in the order given (--json prints {"results": [...],
"warnings": [...]}), measured by worker threads across the cores (--workers N; 1 runs them one after another), with
the same answers whatever the worker count. A file that fails is reported with its error and the others go on.
--summary writes one CSV row per input; --report writes an HTML report of them all. A progress bar shows on a
terminal. Exit code: 0 when every input was identified, 1 when any failed (after the others have been processed).

Safety:
  ${HIGH_VOLTAGE_CAUTION}
  ${UV_CAUTION}
  ${LASER_CAUTION}
`;

export function registerIdentify(program: Command): void {
  program
    .command('identify')
    .description('Which gas is in a discharge tube, what else is in it, and which laser: species, lines and unexplained peaks')
    .argument('<inputs...>', 'photos (JPEG, PNG, TIFF, WebP) or spectrum CSV files')
    .option('--calibration <profile>', 'calibration profile (JSON) from "glowprint calibrate"; without it the spectrum calibrates itself')
    .option('--json', 'print one JSON object instead of the report')
    .option('--svg <file>', 'write the spectrum with its lines labelled as SVG')
    .option('--elements <list>', 'consider only these species, e.g. "Ne,Ar,Hg" (N2 for the molecular bands)')
    .option('--line-list <file>', 'identify with this line list (NIST ASD export or CSV of wavelength_nm,intensity,spectrum) instead of the project\'s')
    .option('--no-bands', 'leave the N2 molecular band heads out of the candidates')
    .option('--summary <file.csv>', 'write the batch summary as CSV: one row per input (file, status, species, key figures, error)')
    .option('--report <folder>', 'write the HTML report of all inputs into this folder (index.html, and summary.csv unless --summary says where)')
    .option('--workers <n>', 'worker threads for several inputs (default: one per 12 inputs, at most one per core but one; 1 = one after another in this process)')
    .addHelpText('after', HELP_AFTER)
    .action(
      action(async (inputs: string[], opts: IdentifyCliOptions) => {
        const warnings: string[] = [];
        // A line list that is not there, or a folder, is named as such before it is parsed.
        if (opts.lineList !== undefined) await requireReadableFile(opts.lineList, '--line-list');
        const lines = identifyLines(opts, warnings);
        const profile = opts.calibration ? await readProfile(opts.calibration) : undefined;
        const readFiles = [...inputs, ...(opts.calibration ? [opts.calibration] : []), ...(opts.lineList ? [opts.lineList] : [])];
        const several = inputs.length > 1;
        if (opts.svg && readFiles.some((f) => inputs.some((i) => path.resolve(perInputName(opts.svg!, i, several, '.svg')) === path.resolve(f)))) {
          throw new InputError(`${opts.svg}: refusing to write over an input file; choose another output name`, opts.svg);
        }
        const progress = batchProgress('identify', inputs.length);
        const job: IdentifyJob = { command: 'identify', profile, lines, svg: opts.svg, several, readFiles };
        const batch = await runBatch(inputs, job, {
          workers: parseWorkers(opts.workers),
          summaryFile: opts.summary,
          reportDir: opts.report,
          readFiles,
          onSettled: progress.onSettled,
          // Alone, a file's error is the command's error.
          rethrow: !several,
        }).finally(progress.stop);
        const out = batchOutput('identify', batch, { several, warnings, done: 'identified', json: opts.json === true });
        if (opts.json) printJson(out.json);
        else process.stdout.write(out.text);
        for (const line of out.notes) note(`glowprint: ${line}`);
        if (batch.failed > 0) process.exitCode = 1;
      }),
    );
}
