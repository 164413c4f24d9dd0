/**
 * POST /api/polarization — the polarization task (src/tasks/polarization.ts, the same as `glowprint polarization`)
 * over uploads: photos of the spot (field `images`, one per analyser angle; angles from `angles`, `start`/`step` or
 * the file names), or a readings table (`table`), and/or a fixed-analyser time series (`time_series`, with
 * `reference`). Options are the command's flags in snake_case (`extinction_ratio`, `keep_saturated`, `qwp`, …);
 * `analyser` names a saved analyser profile. `calibrate_analyser` with `save` measures the analyser's offset on the
 * series and saves the profile in the workspace. Also registers the analyser profile's validator.
 */
import type { Router } from 'express';
import { readFile, writeFile } from 'node:fs/promises';
import path from 'node:path';
import { InputError } from '../../core/errors.js';
import { ANALYSER_PROFILE_FORMAT, parseAnalyserProfile } from '../../io/analyserProfile.js';
import { checkProfileName, loadProfile, saveProfile } from '../../io/workspace.js';
import { runPolarization, type PolarizationOptions } from '../../tasks/polarization.js';
import { sendResult } from '../app.js';
import type { RouteContext } from './index.js';
import { profileValidators } from './profiles.js';
import { checkUpload, filesOf, flagOption, handle, optionsOf, textOption, withUploads } from './spectrum.js';

/** Form fields passed to the task as its string options, by their snake_case names. */
const TEXT_OPTIONS = [
  ['angles', 'angles'],
  ['start', 'start'],
  ['step', 'step'],
  ['roi', 'roi'],
  ['extinction_ratio', 'extinctionRatio'],
  ['retardance', 'retardance'],
  ['analyser_angle', 'analyserAngle'],
  ['reference_azimuth', 'referenceAzimuth'],
  ['reference_azimuth_uncertainty', 'referenceAzimuthUncertainty'],
  ['name', 'name'],
  ['polarized_min', 'polarizedMin'],
  ['unpolarized_max', 'unpolarizedMax'],
  ['coverage_factor', 'coverageFactor'],
] as const;
const FLAG_OPTIONS = [
  ['keep_saturated', 'keepSaturated'],
  ['qwp', 'qwp'],
  ['correct_drift', 'correctDrift'],
  ['simultaneous', 'simultaneous'],
] as const;

export function registerPolarizationRoutes(router: Router, { config, upload }: RouteContext): void {
  profileValidators.set(ANALYSER_PROFILE_FORMAT, (json, source) => {
    parseAnalyserProfile(json, source);
  });
  router.post(
    '/polarization',
    upload.fields([
      { name: 'images', maxCount: config.maxFiles },
      { name: 'image', maxCount: config.maxFiles },
      { name: 'table', maxCount: 1 },
      { name: 'time_series', maxCount: 1 },
      { name: 'reference', maxCount: 1 },
    ]),
    handle(async (req, res) => {
      const o = optionsOf(req);
      const photos = filesOf(req, 'images', 'image').map((file) => ({ file, kind: checkUpload(file, ['image']) }));
      const tables = ['table', 'time_series', 'reference'].map((f) => filesOf(req, f)[0]).map((file) => (file ? { file, kind: checkUpload(file, ['text']) } : null));
      const opts: PolarizationOptions = {};
      for (const [key, name] of TEXT_OPTIONS) {
        const v = textOption(o, key);
        if (v !== undefined) opts[name] = v;
      }
      for (const [key, name] of FLAG_OPTIONS) if (flagOption(o, key)) opts[name] = true;
      const analyserName = textOption(o, 'analyser');
      let analyserJson: unknown = null;
      if (analyserName !== undefined) {
        analyserJson = await loadProfile(config.workspaceDir, checkProfileName(analyserName));
        if (analyserJson === null) throw new InputError(`analyser: no saved profile named ${analyserName}`, 'analyser');
      }
      const calibrate = flagOption(o, 'calibrate_analyser');
      const save = textOption(o, 'save');
      if (calibrate && save === undefined) throw new InputError('calibrate_analyser: give `save`, the name to keep the analyser profile under', 'save');
      if (save !== undefined) checkProfileName(save);
      const uploads = [...photos, ...tables.filter((t): t is NonNullable<typeof t> => t !== null)];
      const result = await withUploads(uploads, async (paths, dir) => {
        const photoPaths = paths.slice(0, photos.length);
        let k = photos.length;
        if (tables[0]) opts.table = paths[k++];
        if (tables[1]) opts.timeSeries = paths[k++];
        if (tables[2]) opts.reference = paths[k++];
        if (analyserJson !== null) {
          opts.analyser = path.join(dir, 'analyser-profile.json');
          await writeFile(opts.analyser, JSON.stringify(analyserJson), { mode: 0o600 });
        }
        if (calibrate) {
          opts.calibrateAnalyser = true;
          opts.out = path.join(dir, 'calibrated-analyser.json');
        }
        const run = await runPolarization(photoPaths, opts);
        const profile = calibrate ? JSON.parse(await readFile(opts.out!, 'utf8')) : null;
        return { run, profile };
      });
      if (result.profile && save !== undefined) await saveProfile(config.workspaceDir, save, result.profile);
      const json = { ...result.run.json };
      if (calibrate) {
        delete json.profileFile;
        delete json.profile_file;
        json.saved = save;
      }
      sendResult(res, json);
    }),
  );
}
