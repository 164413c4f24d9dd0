import { type Command, Option } from 'commander';
import { HIGH_VOLTAGE_CAUTION, LASER_CAUTION, UV_CAUTION } from '../core/safety.js';
import { DECODE_IMAGE_DEFAULTS } from '../io/image.js';
import { formatCalibrateReport, runCalibrate, type CalibrateOptions } from '../tasks/calibrate.js';
import { action, note, printJson } from './run.js';

const HELP_AFTER = `
Finds a wavelength scale for photos of one grating rig from a lamp whose lines are known, and saves it as an
instrument profile for later photos of the same rig (glowprint spectrum <photo> --calibration profile.json).

Lamps (--lamp, any combination: "Ne,Hg"): Hg, Ne, He, Ar, Kr, Xe, H, Na, fluorescent (mercury lines and the rare-
earth phosphor peaks of a fluorescent tube), any element of the line list, laser:632.816 (a line at that air
wavelength), laser:<name>, or a line-list file (NIST ASD export or CSV of wavelength_nm,intensity,spectrum).
Lines are matched to the peaks automatically; --pairs gives known pairs as position_px=wavelength_nm, alone or with
a lamp (e.g. --pairs "812.4=546.074,1040.2=611.6"). A lamp that does not match is an error, never a guessed scale;
the message lists the brightest peaks' positions. Dense lamps (Ne, Ar) at about 1 nm/px and more blend their lines
and may need two such pairs: with them and --lamp, the other lines are matched as usual. A pair that the lamp's own
scale contradicts is an error naming the pair; with two or more pairs and a lamp that matches neither with them nor
alone, the scale comes from the pairs alone, with a warning.
Keep the zero order (the undispersed spot of the lamp) in the frame when the lens allows: it is the 0 nm point of
the first order, and a scale whose grating model puts it there gains that agreement as evidence (the summary says
when it counted).

Models (--model): poly — polynomial of degree 1–4, chosen by AICc (or --degree); grating — the physical model of
grating and camera, λ = (d/m)(sin θi + sin(θc + atan((x − x0)/f))), which also gives the grating's lines/mm; auto
(default) — the grating model unless a polynomial fits clearly better. The focal length f comes from the photo's
EXIF 35-mm-equivalent focal length (f_px = f35 · image diagonal / 43.27 mm, ±2 %), from --focal-px, or is fitted.
A spectrum CSV from "glowprint spectrum --csv" keeps the photo's size, band, focal length and zero order, and is
calibrated as the photo would be; a CSV from elsewhere knows none of them (give --focal-px if you know f).

Wavelengths are in standard air (the NIST convention for 200–2000 nm); --vacuum reports vacuum wavelengths
(Ciddor 1996). The profile file itself always holds air wavelengths.

Outputs: a summary and the residual table (or one JSON object with --json); warnings on stderr; --out writes the
profile atomically and never over an input.

Safety:
  ${HIGH_VOLTAGE_CAUTION}
  ${UV_CAUTION}
  ${LASER_CAUTION}
`;

export function registerCalibrate(program: Command): void {
  program
    .command('calibrate')
    .description('Wavelength calibration from a lamp photo (or spectrum CSV): match its lines, fit the dispersion, save an instrument profile')
    .argument('<input>', 'photo (JPEG, PNG, TIFF, WebP) of the lamp through the grating, or a spectrum CSV in pixels')
    .option('--lamp <names>', 'reference lamp(s): Hg, Ne, He, Ar, Kr, Xe, H, Na, fluorescent, laser:632.816, a line-list file; "Ne,Hg" for several')
    .option('--pairs <list>', 'known pairs position_px=wavelength_nm (position along the band, as in the peak table of glowprint spectrum), e.g. "812.4=546.074,1040.2=611.6" (alone or with --lamp)')
    .addOption(new Option('--model <kind>', 'dispersion model').choices(['poly', 'grating', 'auto']).default('auto'))
    .option('--degree <n>', 'polynomial degree 1–4 (default: chosen by AICc)')
    .option('--order <m>', 'diffraction order of the band for the grating model', '1')
    .option('--focal-px <f>', 'camera focal length in pixels, when EXIF lacks it or is wrong (fixes f in the grating model)')
    .addOption(new Option('--direction <dir>', 'whether wavelength grows along the band').choices(['either', 'increasing', 'decreasing']).default('either'))
    .option('--out <file>', 'write the instrument profile (JSON) here')
    .option('--vacuum', 'report vacuum wavelengths (the profile keeps air wavelengths)')
    .option('--json', 'print one JSON object instead of the summary')
    .option('--band <geometry>', 'band by hand: "cx,cy,angleDeg,lengthPx,heightPx[,slantDeg]" (see glowprint spectrum --help)')
    .option('--dark <file>', 'dark frame to subtract')
    .option('--max-pixels <n>', 'refuse photos with more pixels than this', String(DECODE_IMAGE_DEFAULTS.maxPixels))
    .addHelpText('after', HELP_AFTER)
    .action(
      action(async (input: string, opts: CalibrateOptions) => {
        const { report } = await runCalibrate(input, opts);
        if (opts.json) printJson(report);
        else process.stdout.write(formatCalibrateReport(report));
        for (const w of report.warnings) note(`glowprint: warning: ${w}`);
      }),
    );
}
