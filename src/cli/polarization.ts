import type { Command } from 'commander';
import { ANALYSER_CALIBRATION_DEFAULTS, TIME_SERIES_DEFAULTS, VERDICT_DEFAULTS } from '../core/polarization/index.js';
import { LASER_CAUTION } from '../core/safety.js';
import { runPolarization, type PolarizationOptions } from '../tasks/polarization.js';
import { action, note, printJson } from './run.js';

export function registerPolarization(program: Command): void {
  program
    .command('polarization')
    .description('Is this light polarized? DoLP, azimuth and Stokes parameters from a rotating-analyser table or photo series, and random-vs-unpolarized from a fixed-analyser time series')
    .argument('[images...]', 'photos of the spot on a card, one per analyser angle (JPEG, PNG, TIFF, WebP)')
    .option('--table <file>', 'readings as CSV: angle_deg,intensity[,uncertainty] (any delimiter; a header is matched by name)')
    .option('--angles <list>', 'analyser angle of each photo, in order: "0,15,30,…" or start:step:end such as 0:15:180')
    .option('--start <deg>', 'angle of the first photo (with --step)')
    .option('--step <deg>', 'angle step between photos, in the order given (with --start)')
    .option('--angles-csv <file>', `sidecar CSV with columns file,angle_deg (default: angles.csv beside the photos, else numbers in the file names such as spot_045deg.jpg)`)
    .option('--roi <x,y,r>', 'place the photometry aperture yourself: centre x, y and radius in pixels (default: the brightest compact spot)')
    .option('--keep-saturated', 'keep frames with a clipped spot in the fit (flagged) instead of leaving them out')
    .option('--analyser <profile.json>', 'analyser profile (scale offset, extinction ratio) from --calibrate-analyser')
    .option('--extinction-ratio <ER>', 'extinction ratio k1/k2 of the analyser (e.g. 100 for 100:1); corrects the DoLP, overrides the profile')
    .option('--qwp', 'rotating quarter-wave plate before a fixed analyser: the angles are the plate\'s fast-axis angles; gives S0…S3')
    .option('--retardance <deg>', 'retardance of the plate at this wavelength (with --qwp)', '90')
    .option('--analyser-angle <deg>', 'transmission axis of the fixed analyser on the plate\'s scale (with --qwp)', '0')
    .option('--correct-drift', 'use the drift-corrected fit (needs an angle revisited late in the run, e.g. 0° and 180°)')
    .option('--time-series <file>', 'fixed-analyser time series as CSV: time_s,intensity (random vs unpolarized)')
    .option('--reference <file>', 'total-power time series without the analyser, time_s,intensity (with --time-series)')
    .option('--simultaneous', 'the reference was recorded at the same times (beam splitter): compare sample by sample')
    .option('--calibrate-analyser', 'measure the analyser\'s scale offset from a reference of known polarization and write a profile (--out)')
    .option('--reference-azimuth <deg>', 'true azimuth of the calibration reference (0 = horizontal, e.g. floor glare near Brewster\'s angle)', String(ANALYSER_CALIBRATION_DEFAULTS.referenceAzimuthDeg))
    .option('--reference-azimuth-uncertainty <deg>', 'uncertainty of that azimuth (how level the floor is)', '0')
    .option('--out <file>', 'where --calibrate-analyser writes the analyser profile (JSON)')
    .option('--name <text>', 'a name for the analyser, stored in the profile')
    .option('--polarized-min <dolp>', 'verdict threshold: DoLP from which light counts as polarized', String(VERDICT_DEFAULTS.polarizedMinDolp))
    .option('--unpolarized-max <dolp>', 'verdict threshold: DoLP up to which light counts as unpolarized', String(VERDICT_DEFAULTS.unpolarizedMaxDolp))
    .option('--coverage-factor <k>', 'verdict compares DoLP ± k·σ with the thresholds', String(VERDICT_DEFAULTS.coverageFactor))
    .option('--json', 'print one JSON object (snake_case keys with units) instead of text')
    .option('--svg <file>', 'write the plots (Malus curve, polar view, time series) as one SVG file')
    .addHelpText(
      'after',
      `
Fit: I(θ) = a + b cos 2θ + c sin 2θ by weighted least squares; I_max,min = a ± √(b²+c²), DoLP = √(b²+c²)/a,
azimuth = ½ atan2(c, b); uncertainties from the covariance scaled by the scatter. Needs 3 distinct angles (mod 180°);
rotate through 180° and repeat the first angle at the end (0° … 180°) so that drift can be measured.
Verdict: DoLP ± ${VERDICT_DEFAULTS.coverageFactor}σ against ${VERDICT_DEFAULTS.unpolarizedMaxDolp} (unpolarized) and ${VERDICT_DEFAULTS.polarizedMinDolp} (polarized); "inconclusive" when it reaches both.
Photos: lock the exposure; a clipped spot flattens the curve and makes polarized light look unpolarized, so clipped
frames are left out (or kept with --keep-saturated) and always named.
Time series (random vs unpolarized): fluctuating when the slow fluctuation through the analyser is at least
${TIME_SERIES_DEFAULTS.minRelativeFluctuation * 100} % and ${TIME_SERIES_DEFAULTS.fluctuationRatio}× the total's (with --reference), or ${TIME_SERIES_DEFAULTS.minRelativeFluctuationNoReference * 100} % without one.

Examples:
  glowprint polarization --table laser.csv --extinction-ratio 300
  glowprint polarization photos/*.jpg --start 0 --step 15 --svg laser.svg
  glowprint polarization --table glare.csv --calibrate-analyser --reference-azimuth 0 --out analyser.json
  glowprint polarization --table laser.csv --analyser analyser.json --json
  glowprint polarization --time-series burst.csv --reference total.csv --simultaneous

Safety:
  ${LASER_CAUTION}
  Look at the spot on a matte card, never along the beam; the polarizer (and any grating or glass plate) reflects a
  specular beam whose direction changes as you rotate it — block it. Wear eyewear rated for the wavelength for class
  3B and above, and follow your local laser-safety rules (IEC 60825-1, ANSI Z136.1).
`,
    )
    .action(
      action(async (images: string[], opts: PolarizationOptions & { json?: boolean }) => {
        const run = await runPolarization(images, opts);
        if (opts.json) printJson(run.json);
        else {
          process.stdout.write(run.text);
          for (const w of run.warnings) note(`warning: ${w}`);
        }
      }),
    );
}

