import { type Command, Option } from 'commander';
import path from 'node:path';
import { InputError } from '../core/errors.js';
import { HIGH_VOLTAGE_CAUTION, LASER_CAUTION, UV_CAUTION } from '../core/safety.js';
import { DECODE_IMAGE_DEFAULTS } from '../io/image.js';
import { readProfile } from '../io/profileFile.js';
import { writeFileAtomic } from '../io/writeAtomic.js';
import { analyseSpectrumInput, formatSpectrumTable, parseBandOption, spectrumSvg, spectrumToCsv } from '../tasks/spectrum.js';
import { action, note, numberOption, printJson } from './run.js';

interface SpectrumCliOptions {
  json?: boolean;
  csv?: string;
  svg?: string;
  dark?: string;
  band?: string;
  maxPixels?: string;
  transfer?: 'srgb' | 'linear';
  calibration?: string;
  vacuum?: boolean;
}

const HELP_AFTER = `
Input: a photo (JPEG, PNG or TIFF 8/16-bit, WebP) of a grating spectrum, or a 1-D spectrum as CSV
(pixel,intensity or wavelength_nm,intensity; header and comment lines are fine). 8-bit photos are taken
as sRGB-encoded, 16-bit ones as linear (change with --transfer).

Geometry (pixels of the upright photo, after EXIF orientation; x to the right, y down):
  angle_deg    direction in which position_px grows, from +x towards +y, in (−180, 180]
  slant_deg    tilt of the line images against the normal of that direction
  center       middle of the band; the band starts length_px / 2 before it
  position_px  distance along the band's centre line from its start
  --band "cx,cy,angleDeg,lengthPx,heightPx[,slantDeg]" sets the band by hand, e.g.
  --band "2000,1480,2.5,3000,80" for a band running left to right, tilted 2.5° downwards.

Wavelengths: --calibration profile.json (from "glowprint calibrate --out") gives every peak wavelength_nm
and wavelength_uncertainty_nm (1σ, growing beyond the profile's calibrated range, where peaks are flagged
as extrapolated) and adds a wavelength_nm column to --csv; the plot is drawn in nm. Wavelengths are in
standard air (the NIST convention); --vacuum converts them (Ciddor 1996).
  glowprint spectrum tube.jpg --calibration rig.json --json

Outputs: a table on stdout (or one JSON object with --json), warnings on stderr; --csv writes the spectrum
(position_px,intensity,r,g,b,saturated), --svg a plot with the peaks marked. Existing files are replaced
atomically; an input file is never overwritten.

Safety:
  ${HIGH_VOLTAGE_CAUTION}
  ${UV_CAUTION}
  ${LASER_CAUTION}
`;

export function registerSpectrum(program: Command): void {
  program
    .command('spectrum')
    .description('Photo of a grating spectrum (or a spectrum CSV) → 1-D spectrum and its peak table')
    .argument('<input>', 'photo (JPEG, PNG, TIFF, WebP) or spectrum CSV')
    .option('--json', 'print one JSON object instead of the table')
    .option('--csv <file>', 'write the extracted spectrum as CSV')
    .option('--svg <file>', 'write a plot of the spectrum with its peaks as SVG')
    .option('--dark <file>', 'dark frame (same camera settings, light blocked) to subtract in linear light')
    .option('--band <geometry>', 'band by hand: "cx,cy,angleDeg,lengthPx,heightPx[,slantDeg]" (see below)')
    .option('--calibration <profile>', 'instrument profile (JSON) from "glowprint calibrate --out": adds wavelengths with uncertainties')
    .option('--vacuum', 'with --calibration: report vacuum wavelengths instead of standard-air ones')
    .option('--max-pixels <n>', 'refuse photos with more pixels than this (decompression-bomb guard)', String(DECODE_IMAGE_DEFAULTS.maxPixels))
    .addOption(new Option('--transfer <curve>', 'pixel values are sRGB-encoded or linear (default: 8-bit sRGB, 16-bit linear)').choices(['srgb', 'linear']))
    .addHelpText('after', HELP_AFTER)
    .action(
      action(async (input: string, opts: SpectrumCliOptions) => {
        const maxPixels = numberOption('--max-pixels', opts.maxPixels);
        if (maxPixels !== undefined && !(maxPixels >= 1)) throw new InputError(`--max-pixels: expected a pixel count ≥ 1, got ${opts.maxPixels}`, '--max-pixels');
        const band = opts.band === undefined ? undefined : parseBandOption(opts.band);
        if (opts.vacuum && !opts.calibration) throw new InputError('--vacuum needs --calibration <profile>: without one the peaks have no wavelengths', '--vacuum');
        const inputs = [input, ...(opts.dark ? [opts.dark] : []), ...(opts.calibration ? [opts.calibration] : [])];
        for (const out of [opts.csv, opts.svg]) {
          if (out && inputs.some((f) => path.resolve(f) === path.resolve(out))) {
            throw new InputError(`${out}: refusing to write over an input file; choose another output name`, out);
          }
        }
        if (opts.csv && opts.svg && path.resolve(opts.csv) === path.resolve(opts.svg)) {
          throw new InputError(`${opts.csv}: --csv and --svg name the same file`, opts.csv);
        }
        const calibration = opts.calibration ? { profile: await readProfile(opts.calibration), file: opts.calibration } : undefined;
        const { analysis, spectrum } = await analyseSpectrumInput(input, { dark: opts.dark, band, maxPixels, transfer: opts.transfer, calibration, vacuum: opts.vacuum });
        // Outputs are written only once everything has been measured: a bad input leaves no half-written files.
        if (opts.csv) await writeFileAtomic(opts.csv, spectrumToCsv(spectrum), { inputs });
        if (opts.svg) await writeFileAtomic(opts.svg, spectrumSvg({ analysis, spectrum }), { inputs });
        if (opts.json) printJson({ command: 'spectrum', ...analysis });
        else process.stdout.write(formatSpectrumTable(analysis));
        for (const w of analysis.warnings) note(`glowprint: warning: ${w}`);
      }),
    );
}
