/**
 * POST /api/calibrate — a photo (or spectrum CSV) of a known lamp → wavelength calibration, the same JSON as
 * `glowprint calibrate --json` (runCalibrate of src/tasks/calibrate.ts), with the instrument profile it makes
 * (`instrument_profile`) and, with `save` (a profile name), that profile kept in the workspace. Fields: `lamp`
 * ('fluorescent', 'Ne,Hg', 'laser:632.816'), `pairs` ('812.4=546.074,…'), `model` ('auto', 'poly', 'grating'),
 * `degree`, `order`, `focal_px`, `direction`, `band`, `vacuum`. Also registers the instrument profile's validator for
 * PUT /api/profiles/:name.
 */
import type { Router } from 'express';
import { PROFILE_FORMAT, profileToJson } from '../../core/calibration/profile.js';
import { parseProfileText } from '../../io/profileFile.js';
import { InputError } from '../../core/errors.js';
import { checkProfileName, saveProfile } from '../../io/workspace.js';
import { runCalibrate } from '../../tasks/calibrate.js';
import { sendResult } from '../app.js';
import type { RouteContext } from './index.js';
import { profileValidators } from './profiles.js';
import { checkUpload, flagOption, handle, optionsOf, SINGLE_INPUT_FIELDS, singleInput, textOption, withUploads } from './spectrum.js';

type CalibrateOptions = Parameters<typeof runCalibrate>[1];

const MODELS: Record<string, CalibrateOptions['model']> = { auto: 'auto', poly: 'poly', polynomial: 'poly', grating: 'grating' };
const DIRECTIONS = ['either', 'increasing', 'decreasing'] as const;

/**
 * A lamp spec names catalogued lamps, elements or laser lines only: the command line also reads line-list files
 * named in it, which a server must never do for a client.
 */
function lampSpec(text: string): string {
  for (const token of text.split(/[,+]/).map((t) => t.trim())) {
    if (/^laser\s*:/i.test(token)) continue;
    if (/[\\/]|\.\w{1,5}$/.test(token) || token.startsWith('.')) {
      throw new InputError(`lamp: expected lamp names such as fluorescent, Ne,Hg or laser:632.816 (files are not read over the API), got ${JSON.stringify(token)}`, 'lamp');
    }
  }
  return text;
}

export function registerCalibrateRoutes(router: Router, { config, upload }: RouteContext): void {
  // The same checks as a profile file read from disk: the JSON Schema (data/schema), then the core's semantic ones.
  profileValidators.set(PROFILE_FORMAT, (json, source) => {
    parseProfileText(JSON.stringify(json), source);
  });
  router.post(
    '/calibrate',
    upload.fields(SINGLE_INPUT_FIELDS),
    handle(async (req, res) => {
      const file = singleInput(req);
      const kind = checkUpload(file, ['image', 'text']);
      const o = optionsOf(req);
      const model = MODELS[(textOption(o, 'model') ?? 'auto').toLowerCase()];
      if (!model) throw new InputError(`model: expected auto, poly or grating, got ${JSON.stringify(textOption(o, 'model'))}`, 'model');
      const direction = (textOption(o, 'direction') ?? 'either') as CalibrateOptions['direction'];
      if (!DIRECTIONS.includes(direction)) throw new InputError(`direction: expected either, increasing or decreasing, got ${JSON.stringify(direction)}`, 'direction');
      const save = textOption(o, 'save');
      if (save !== undefined) checkProfileName(save);
      const lamp = textOption(o, 'lamp');
      const opts: CalibrateOptions = {
        model,
        direction,
        lamp: lamp === undefined ? undefined : lampSpec(lamp),
        pairs: textOption(o, 'pairs'),
        degree: textOption(o, 'degree'),
        order: textOption(o, 'order'),
        focalPx: textOption(o, 'focal_px'),
        band: textOption(o, 'band'),
        vacuum: flagOption(o, 'vacuum'),
        maxPixels: String(config.maxPixels),
      };
      const { report, profile } = await withUploads([{ file, kind }], ([p]) => runCalibrate(p, opts));
      const instrumentProfile = profileToJson({ ...profile, sourceFile: file.originalname || profile.sourceFile });
      if (save !== undefined) await saveProfile(config.workspaceDir, save, instrumentProfile);
      sendResult(res, { ...report, input: { ...report.input, file: file.originalname || report.input.file }, profile: save ?? null, instrumentProfile });
    }),
  );
}
