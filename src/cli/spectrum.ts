import { type Command, Option } from 'commander';
import { promises as fs } from 'node:fs';
import path from 'node:path';
import { InputError } from '../core/errors.js';
import { HIGH_VOLTAGE_CAUTION, LASER_CAUTION, UV_CAUTION } from '../core/safety.js';
import { DECODE_IMAGE_DEFAULTS } from '../io/image.js';
import { readProfile } from '../io/profileFile.js';
import { sniffKind } from '../io/sniff.js';
import { writeFileAtomic } from '../io/writeAtomic.js';
import { analyseSpectrumInput, formatSpectrumTable, parseBandOption, photoGeometryOf, spectrumSvg, spectrumToCsv } from '../tasks/spectrum.js';
import { batchOutput } from '../tasks/batch/batchOutput.js';
import { batchProgress } from '../tasks/batch/progress.js';
import { perInputName } from '../tasks/batch/perInputName.js';
import { parseWorkers, runBatch } from '../tasks/batch/runBatch.js';
import { action, note, numberOption, printJson, requireReadableFile } from './run.js';

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
  workers?: string;
  summary?: string;
  report?: string;
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
(position_px,intensity,r,g,b,saturated) after a "# photo_geometry:" comment line that keeps the photo's size, band,
EXIF focal length and zero order, so "glowprint calibrate spectrum.csv" knows what it would from the photo (and a
"# wavelength_nm:" line saying air or vacuum when wavelengths are added); --svg a plot with the peaks marked.
Existing files are replaced atomically; an input file is never overwritten.

Batch (several inputs, e.g. photos/*.jpg): one result each, in the order given (--json prints {"results": [...],
"warnings": [...]}), measured by worker threads across the cores (--workers N; 1 runs them one after another), with
the same answers whatever the worker count; --csv and --svg write one file per input (out-<input>.csv). A file that
fails is reported with its error and the others go on. --summary writes one CSV row per input, --report an HTML
report of them all; a progress bar shows on a terminal. Exit code: 0 when every input was measured, 1 when any
failed (after the others have been processed).

Safety:
  ${HIGH_VOLTAGE_CAUTION}
  ${UV_CAUTION}
  ${LASER_CAUTION}
`;

/**
 * The dark frame is subtracted from every input: checked once, before any input is measured, that it is a readable
 * file and not empty or text, so a batch fails with one message naming it rather than every input failing with the
 * same error. (Decoding it, and whether it matches each photo's size and settings, is for the measurement.)
 */
async function checkDarkFrame(file: string): Promise<void> {
  await requireReadableFile(file, '--dark');
  const handle = await fs.open(file, 'r');
  let head: Uint8Array;
  try {
    const buffer = Buffer.alloc(4096);
    const { bytesRead } = await handle.read(buffer, 0, buffer.length, 0);
    head = buffer.subarray(0, bytesRead);
  } finally {
    await handle.close();
  }
  // An empty file or text (a CSV given by mistake) is refused here; other bytes are left to the image decoder, which
  // names the format it found.
  if (head.length === 0 || sniffKind(head) === 'text') {
    const what = head.length === 0 ? 'is empty' : 'contains text, not image data';
    throw new InputError(`--dark ${file}: ${what}; expected a photo (JPEG, PNG, TIFF or WebP) taken with the light blocked`, file);
  }
}

export function registerSpectrum(program: Command): void {
  program
    .command('spectrum')
    .description('Photo of a grating spectrum (or a spectrum CSV) → 1-D spectrum and its peak table')
    .argument('<inputs...>', 'photo (JPEG, PNG, TIFF, WebP) or spectrum CSV; several make a batch (see below)')
    .option('--json', 'print one JSON object instead of the table')
    .option('--csv <file>', 'write the extracted spectrum as CSV')
    .option('--svg <file>', 'write a plot of the spectrum with its peaks as SVG')
    .option('--dark <file>', 'dark frame (same camera settings, light blocked) to subtract in linear light')
    .option('--band <geometry>', 'band by hand: "cx,cy,angleDeg,lengthPx,heightPx[,slantDeg]" (see below)')
    .option('--calibration <profile>', 'instrument profile (JSON) from "glowprint calibrate --out": adds wavelengths with uncertainties')
    .option('--vacuum', 'with --calibration: report vacuum wavelengths instead of standard-air ones')
    .option('--max-pixels <n>', 'refuse photos with more pixels than this (decompression-bomb guard)', String(DECODE_IMAGE_DEFAULTS.maxPixels))
    .addOption(new Option('--transfer <curve>', 'pixel values are sRGB-encoded or linear (default: 8-bit sRGB, 16-bit linear)').choices(['srgb', 'linear']))
    .option('--summary <file.csv>', 'write the batch summary as CSV (one row per input: status, band, peaks, brightest peak, error)')
    .option('--report <folder>', 'write the HTML report of all inputs into this folder (index.html, and summary.csv unless --summary says where)')
    .option('--workers <n>', 'worker threads for several inputs (default: one per 12 inputs, at most one per core but one; 1 = one after another in this process)')
    .addHelpText('after', HELP_AFTER)
    .action(
      action(async (files: string[], opts: SpectrumCliOptions) => {
        const input = files[0];
        const several = files.length > 1;
        const maxPixels = numberOption('--max-pixels', opts.maxPixels);
        if (maxPixels !== undefined && !(maxPixels >= 1)) throw new InputError(`--max-pixels: expected a pixel count ≥ 1, got ${opts.maxPixels}`, '--max-pixels');
        const band = opts.band === undefined ? undefined : parseBandOption(opts.band);
        if (opts.vacuum && !opts.calibration) throw new InputError('--vacuum needs --calibration <profile>: without one the peaks have no wavelengths', '--vacuum');
        const inputs = [...files, ...(opts.dark ? [opts.dark] : []), ...(opts.calibration ? [opts.calibration] : [])];
        for (const out of [opts.csv, opts.svg]) {
          if (out && inputs.some((f) => files.some((i) => path.resolve(perInputName(out, i, several)) === path.resolve(f)))) {
            throw new InputError(`${out}: refusing to write over an input file; choose another output name`, out);
          }
        }
        if (opts.csv && opts.svg && path.resolve(opts.csv) === path.resolve(opts.svg)) {
          throw new InputError(`${opts.csv}: --csv and --svg name the same file`, opts.csv);
        }
        if (opts.dark !== undefined) await checkDarkFrame(opts.dark);
        const calibration = opts.calibration ? { profile: await readProfile(opts.calibration), file: opts.calibration } : undefined;
        if (several || opts.summary || opts.report) {
          // A batch (src/tasks/batch): worker threads, one result per input, a failing file reported and the rest go on.
          const progress = batchProgress('spectrum', files.length);
          const job = { command: 'spectrum' as const, dark: opts.dark, band, maxPixels, transfer: opts.transfer, calibration, vacuum: opts.vacuum, csv: opts.csv, svg: opts.svg, several, readFiles: inputs };
          const batch = await runBatch(files, job, { workers: parseWorkers(opts.workers), summaryFile: opts.summary, reportDir: opts.report, readFiles: inputs, onSettled: progress.onSettled, rethrow: !several }).finally(progress.stop);
          const out = batchOutput('spectrum', batch, { several, warnings: [], done: 'measured', json: opts.json === true });
          if (opts.json) printJson(out.json);
          else process.stdout.write(out.text);
          for (const line of out.notes) note(`glowprint: ${line}`);
          if (batch.failed > 0) process.exitCode = 1;
          return;
        }
        const run = await analyseSpectrumInput(input, { dark: opts.dark, band, maxPixels, transfer: opts.transfer, calibration, vacuum: opts.vacuum });
        const { analysis, spectrum } = run;
        // Outputs are written only once everything has been measured: a bad input leaves no half-written files.
        if (opts.csv) await writeFileAtomic(opts.csv, spectrumToCsv(spectrum, photoGeometryOf(run), analysis.calibration?.medium), { inputs });
        if (opts.svg) await writeFileAtomic(opts.svg, spectrumSvg({ analysis, spectrum }), { inputs });
        if (opts.json) printJson({ command: 'spectrum', ...analysis });
        else process.stdout.write(formatSpectrumTable(analysis));
        for (const w of analysis.warnings) note(`glowprint: warning: ${w}`);
      }),
    );
}
