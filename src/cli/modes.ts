import type { Command } from 'commander';
import { LASER_CAUTION } from '../core/safety.js';
import { runModes, type ModesOptions } from '../tasks/modes.js';
import { action, printJson } from './run.js';

export function registerModes(program: Command): void {
  program
    .command('modes')
    .description('Longitudinal modes of a laser from scanning Fabry-Perot scope traces: mode spacing, cavity length, mode count, gain width, finesse, drift')
    .argument('<traces...>', 'scope CSV exports (time, photodiode, ramp and/or trigger channels); several = a warm-up series in time order')
    .option('--fsr <value>', 'free spectral range of the interferometer, with a unit (e.g. 10GHz, 1.5 GHz)')
    .option('--fsr-uncertainty <value>', 'standard uncertainty of the FSR, as a frequency (20MHz) or a percentage (0.2%)')
    .option('--mirror-spacing <value>', 'mirror spacing d of the interferometer (e.g. 7.5mm), instead of --fsr; needs --confocal or --planar')
    .option('--confocal', 'confocal interferometer: FSR = c/(4d)')
    .option('--planar', 'planar (plane-parallel) interferometer: FSR = c/(2d)')
    .option('--signal <column>', 'the photodiode column (header name or 1-based number); guessed from the data otherwise')
    .option('--ramp <column>', 'the piezo ramp column, or "none"')
    .option('--trigger <column>', 'the trigger / sync column, or "none"')
    .option('--interval <time>', 'time between successive traces (e.g. 30s, 2min), for the drift; else from the files')
    .option('--times <list>', 'capture time of each trace in seconds, comma-separated, for the drift')
    .option('--refractive-index <n>', 'refractive index inside the laser cavity, for L = c/(2nΔν)', '1')
    .option('--envelope <model>', '"gaussian": width of the envelope of the mode powers; "above-threshold": gain curve minus the loss line (≥ 5 modes), its FWHM is the gain width itself', 'gaussian')
    .option('--json', 'print one JSON object (snake_case keys with units) instead of text')
    .option('--svg <file>', 'write the plots (sweep on its frequency scale, mode powers with gain envelope, drift) as SVG')
    .addHelpText(
      'after',
      `
The mode pattern repeats once every free spectral range; its repeat period calibrates the time axis, with a low-order
polynomial for the piezo's non-linearity. Show the pattern at least twice per sweep, better three times.

Examples:
  glowprint modes data/demo/modes/warmup-1.csv --fsr 10GHz
  glowprint modes data/demo/modes/warmup-*.csv --mirror-spacing 7.5mm --confocal --json --svg modes.svg

Safety:
  ${LASER_CAUTION}
`,
    )
    .action(
      action(async (files: string[], opts: ModesOptions) => {
        const run = await runModes(files, opts);
        if (opts.json) printJson(run.json);
        else process.stdout.write(run.text);
      }),
    );
}
