import type { Command } from 'commander';
import { FIT_ANGLES_DEFAULTS, FIT_SCREEN_DEFAULTS } from '../core/grating/index.js';
import { LASER_CAUTION } from '../core/safety.js';
import { GRATING_OPTION_DEFAULTS, runGrating, type GratingOptions } from '../tasks/grating.js';
import { action, printJson } from './run.js';

export function registerGrating(program: Command): void {
  program
    .command('grating')
    .description('Measure a grating\'s line density from laser spots on a screen or goniometer angles, and check it against its label')
    .option('--wavelength <value>', 'laser wavelength in air (nm unless a unit is given; HeNe 632.816)')
    .option('--wavelength-uncertainty <value>', 'standard uncertainty of the wavelength (nm; a diode laser is known to a few nm)')
    .option('--distance <value>', 'grating to screen along the incident beam (mm unless a unit is given)')
    .option('--distance-uncertainty <value>', `standard uncertainty of the distance (mm; default ${FIT_SCREEN_DEFAULTS.distanceUncertaintyFraction * 100} % of it)`)
    .option('--positions <list>', 'spots as order:position from the undeviated spot, e.g. "-1:-410.2,1:410.4,2:1167"; include 0:reading to give ruler readings; ±u per spot allowed')
    .option('--separations <list>', 'distances between the +m and −m spots as m:separation, e.g. "1:820.6,2:2334"')
    .option('--position-uncertainty <value>', `standard uncertainty of each spot (mm; default ${FIT_SCREEN_DEFAULTS.positionUncertaintyMm})`)
    .option('--angles <list>', 'goniometer angles as order:angle in degrees, e.g. "1:22.3,2:49.4"')
    .option('--profile <file>', 'photo method: the line density from an instrument profile made by glowprint calibrate --model grating')
    .option('--table <file>', 'read the measurements from a CSV file: an "order" column and "position_mm", "separation_mm" or "angle_deg" (optional "uncertainty_mm"/"uncertainty_deg")')
    .option('--angle-uncertainty <value>', `standard uncertainty of each angle (deg; default ${FIT_ANGLES_DEFAULTS.angleUncertaintyDeg})`)
    .option('--angle-reference <ref>', 'angles measured from the "undeviated" beam or from the grating "normal"', GRATING_OPTION_DEFAULTS.angleReference)
    .option('--incidence <deg>', 'fix the angle of incidence (tilt); otherwise fitted when orders on both sides are given')
    .option('--nominal <lines/mm>', 'the labelled line density to check against')
    .option('--tolerance <tol>', 'accepted deviation from the nominal: a percentage (2%) or lines/mm', GRATING_OPTION_DEFAULTS.tolerance)
    .option('--beam-width <value>', 'illuminated width of the grating (mm): gives the resolving power mN')
    .option('--json', 'print one JSON object (snake_case keys with units) instead of text')
    .addHelpText(
      'after',
      `
Screen method: the screen square to the incident beam, D from the grating; spot m lies at x = D tan θ from the
undeviated spot, with θ = α + β and mλ = d(sin α + sin β). Positions on both sides let the tilt α be fitted.

Examples:
  glowprint grating --wavelength 632.816 --distance 1000 --positions "-2:-1167.3,-1:-410.1,1:410.4,2:1167.9" --nominal 600
  glowprint grating --wavelength 632.816 --angles "1:22.3,2:49.4" --nominal 600 --tolerance 1%

Safety:
  ${LASER_CAUTION}
  Read the spots on a matte screen (diffuse light); the grating's own surface sends specular beams back towards you.
`,
    )
    .action(
      action(async (opts: GratingOptions & { json?: boolean }) => {
        const run = await runGrating(opts);
        if (opts.json) printJson(run.json);
        else process.stdout.write(run.text);
      }),
    );
}
