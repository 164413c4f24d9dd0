import cliProgress from 'cli-progress';
import type { Command } from 'commander';
import path from 'node:path';
import { InputError } from '../core/errors.js';
import { SELF_CALIBRATION_LAMPS } from '../core/identify/identifySelfCalibrated.js';
import { HIGH_VOLTAGE_CAUTION, LASER_CAUTION, UV_CAUTION } from '../core/safety.js';
import { readProfile } from '../io/profileFile.js';
import { writeFileAtomic } from '../io/writeAtomic.js';
import { formatIdentification, identificationJson, identificationSvg, identifyFile, identifyLines, svgTarget, type IdentifyFileResult } from '../tasks/identify.js';
import { action, note, printJson } from './run.js';

interface IdentifyCliOptions {
  calibration?: string;
  json?: boolean;
  svg?: string;
  elements?: string;
  lineList?: string;
  bands?: boolean;
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
them out). Several inputs: one result each (--json prints {"results": [...], "warnings": [...]}); a file that
cannot be read is reported and the others go on. --svg writes the spectrum with the lines labelled (for several
inputs, one file each: out-<input>.svg).

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
    .addHelpText('after', HELP_AFTER)
    .action(
      action(async (inputs: string[], opts: IdentifyCliOptions) => {
        const warnings: string[] = [];
        const lines = identifyLines(opts, warnings);
        const profile = opts.calibration ? await readProfile(opts.calibration) : undefined;
        const readFiles = [...inputs, ...(opts.calibration ? [opts.calibration] : []), ...(opts.lineList ? [opts.lineList] : [])];
        const several = inputs.length > 1;
        if (opts.svg && readFiles.some((f) => inputs.some((i) => path.resolve(svgTarget(opts.svg!, i, several)) === path.resolve(f)))) {
          throw new InputError(`${opts.svg}: refusing to write over an input file; choose another output name`, opts.svg);
        }
        const bar =
          several && process.stderr.isTTY
            ? new cliProgress.SingleBar({ format: 'identify [{bar}] {value}/{total} {file}', stream: process.stderr, clearOnComplete: true, hideCursor: true }, cliProgress.Presets.shades_classic)
            : null;
        bar?.start(inputs.length, 0, { file: '' });
        const results: Array<IdentifyFileResult | { file: string; error: string }> = [];
        for (const file of inputs) {
          bar?.update({ file: path.basename(file) });
          try {
            const r = await identifyFile(file, { profile, lines });
            if (opts.svg) {
              await writeFileAtomic(svgTarget(opts.svg, file, several), identificationSvg(r), { inputs: readFiles });
            }
            results.push(r);
          } catch (e) {
            // One bad file in a batch is reported and the rest go on; alone, it is the command's error.
            if (!several || !(e instanceof InputError)) throw e;
            results.push({ file, error: e.message });
          } finally {
            bar?.increment();
          }
        }
        bar?.stop();
        const failed = results.filter((r): r is { file: string; error: string } => 'error' in r);
        for (const f of failed) warnings.push(`${f.file}: ${f.error}`);
        if (opts.json) {
          const json = results.map((r) => ('error' in r ? { file: r.file, error: r.error } : identificationJson(r)));
          printJson(several ? { command: 'identify', results: json, warnings } : { ...json[0], warnings: [...warnings, ...((json[0] as { warnings: string[] }).warnings ?? [])] });
        } else {
          for (const r of results) process.stdout.write('error' in r ? `${r.file}: not identified: ${r.error}\n` : formatIdentification(r));
          for (const r of results) if (!('error' in r)) for (const w of r.warnings) note(`glowprint: warning: ${path.basename(r.file)}: ${w}`);
          for (const w of warnings) note(`glowprint: warning: ${w}`);
        }
        if (failed.length > 0) process.exitCode = 1;
      }),
    );
}
