/**
 * POST /api/calibrate — a photo (or spectrum CSV) of a known lamp → wavelength calibration → instrument profile,
 * optionally saved in the workspace (`save`: a profile name). Fields: `lamp` ('fluorescent', 'Ne,Hg',
 * 'laser:632.816'), `pairs` ('812.4=546.074,1033.2=632.816'), `model` ('auto', 'polynomial' or 'poly', 'grating').
 * Also registers the instrument profile's validator for PUT /api/profiles/:name.
 *
 * The stages are the ones `glowprint calibrate` chains (spectrum task → calibrateFromPeaks → buildProfile); when
 * that command's task lands in src/tasks, this route should call it instead.
 */
import type { Router } from 'express';
import { gratingPriors, calibrateFromPeaks } from '../../core/calibration/calibrate.js';
import type { ModelChoice } from '../../core/calibration/fitDispersion.js';
import type { ManualPair } from '../../core/calibration/matchLines.js';
import { buildProfile, PROFILE_FORMAT, profileFromJson, profileToJson } from '../../core/calibration/profile.js';
import { InputError } from '../../core/errors.js';
import { lampLines } from '../../core/lines/index.js';
import { loadLampCatalog } from '../../io/lineList.js';
import { packageVersion } from '../../io/projectRoot.js';
import { checkProfileName, saveProfile } from '../../io/workspace.js';
import { analyseSpectrumInput } from '../../tasks/spectrum.js';
import { sendResult } from '../app.js';
import type { RouteContext } from './index.js';
import { profileValidators } from './profiles.js';
import { checkUpload, handle, optionsOf, SINGLE_INPUT_FIELDS, singleInput, textOption, withUploads } from './spectrum.js';

const MODELS: Record<string, ModelChoice> = { auto: 'auto', polynomial: 'polynomial', poly: 'polynomial', grating: 'grating' };

/** `812.4=546.074,1033.2=632.816` → pairs (position px = wavelength nm). */
export function parsePairs(text: string): ManualPair[] {
  return text
    .split(/[,;]/)
    .map((s) => s.trim())
    .filter(Boolean)
    .map((item) => {
      const m = /^([+-]?(?:\d+\.?\d*|\.\d+))\s*=\s*((?:\d+\.?\d*|\.\d+))$/.exec(item);
      if (!m) throw new InputError(`pairs: expected position_px=wavelength_nm items such as "812.4=546.074", got ${JSON.stringify(item)}`, 'pairs');
      return { positionPx: Number(m[1]), wavelengthNm: Number(m[2]) };
    });
}

/**
 * A lamp spec names catalogued lamps or laser lines only: the command line also reads line-list files named in it,
 * which a server must never do for a client.
 */
function lampSpec(text: string): string {
  if (/[\\/]|\.\w{2,5}$/.test(text) && !/^\s*laser\s*:/i.test(text)) {
    throw new InputError(`lamp: expected lamp names such as fluorescent, Ne,Hg or laser:632.816 (files are not read over the API), got ${JSON.stringify(text)}`, 'lamp');
  }
  return text;
}

export function registerCalibrateRoutes(router: Router, { config, upload }: RouteContext): void {
  profileValidators.set(PROFILE_FORMAT, (json, source) => {
    profileFromJson(json, source);
  });
  router.post(
    '/calibrate',
    upload.fields(SINGLE_INPUT_FIELDS),
    handle(async (req, res) => {
      const file = singleInput(req);
      const kind = checkUpload(file, ['image', 'text']);
      const o = optionsOf(req);
      const lampText = textOption(o, 'lamp');
      const pairsText = textOption(o, 'pairs');
      const modelText = (textOption(o, 'model') ?? 'auto').toLowerCase();
      const save = textOption(o, 'save');
      const model = MODELS[modelText];
      if (!model) throw new InputError(`model: expected auto, polynomial or grating, got ${JSON.stringify(modelText)}`, 'model');
      if (save !== undefined) checkProfileName(save);
      const pairs = pairsText ? parsePairs(pairsText) : [];
      if (!lampText && pairs.length === 0) throw new InputError('nothing to calibrate with: give a lamp, pairs, or both', 'lamp');
      const catalog = loadLampCatalog();
      const lamp = lampText ? lampLines(lampSpec(lampText), { catalog }) : null;
      const run = await withUploads([{ file, kind }], ([p]) => analyseSpectrumInput(p, { maxPixels: config.maxPixels }));
      const a = run.analysis;
      const image = a.input.widthPx && a.input.heightPx ? { widthPx: a.input.widthPx, heightPx: a.input.heightPx } : null;
      const band = a.band ? { angleDeg: a.band.angleDeg, slantDeg: a.band.slantDeg, center: a.band.center, lengthPx: a.band.lengthPx, heightPx: a.band.heightPx } : null;
      const priors = gratingPriors({ image, band, focalLength35mmMm: a.input.exif?.focalLength35mmMm });
      const cal = calibrateFromPeaks(a.peaks, lamp ? lamp.lines : null, {
        pairs,
        fit: {
          model,
          grating: {
            ...(priors.focalLengthPx ? { focalLengthPx: priors.focalLengthPx } : {}),
            ...(priors.axisPositionPx ? { axisPositionPx: priors.axisPositionPx } : {}),
          },
        },
      });
      const profile = buildProfile(cal.fit, {
        lamp: lampText ?? 'pairs',
        sourceFile: file.originalname || null,
        image,
        camera: a.input.exif ?? null,
        band,
        focalLengthSource: priors.focalLengthSource,
        createdAt: new Date().toISOString(),
        software: { name: 'glowprint', version: packageVersion() },
      });
      const json = profileToJson(profile);
      if (save !== undefined) await saveProfile(config.workspaceDir, save, json);
      sendResult(res, {
        ...json,
        saved: save ?? null,
        match: cal.match?.score ?? null,
        warnings: [...a.warnings, ...(lamp?.warnings ?? []), ...cal.warnings],
      });
    }),
  );
}
