/**
 * POST /api/identify — a photo (or spectrum CSV) of a tube or lamp → which species, how sure, what is unexplained,
 * and the laser kind for a single dominant line: the same JSON as `glowprint identify --json` (identifyFile and
 * identificationJson of src/tasks/identify.ts). With `profile` (the name of a saved instrument profile) the peaks get
 * their wavelengths from it; without, the spectrum calibrates itself and the answer says so.
 */
import type { Router } from 'express';
import { profileFromJson, type InstrumentProfile } from '../../core/calibration/profile.js';
import { InputError } from '../../core/errors.js';
import { loadLineList } from '../../io/lineList.js';
import { checkProfileName, loadProfile } from '../../io/workspace.js';
import { identificationJson, identifyFile } from '../../tasks/identify.js';
import { sendResult } from '../app.js';
import type { RouteContext } from './index.js';
import { checkUpload, handle, optionsOf, SINGLE_INPUT_FIELDS, singleInput, textOption, withUploads } from './spectrum.js';

export function registerIdentifyRoutes(router: Router, { config, upload }: RouteContext): void {
  router.post(
    '/identify',
    upload.fields(SINGLE_INPUT_FIELDS),
    handle(async (req, res) => {
      const file = singleInput(req);
      const kind = checkUpload(file, ['image', 'text']);
      const name = textOption(optionsOf(req), 'profile');
      let profile: InstrumentProfile | undefined;
      if (name !== undefined) {
        const json = await loadProfile(config.workspaceDir, checkProfileName(name));
        if (json === null) throw new InputError(`profile: no saved profile named ${name}`, 'profile');
        profile = profileFromJson(json, `profile ${name}`);
      }
      // The CLI's default line list: the project's, with the N2 band heads as a molecular candidate.
      const lines = loadLineList({ includeBands: true });
      const json = await withUploads([{ file, kind }], async ([p]) => identificationJson(await identifyFile(p, { profile, lines })));
      sendResult(res, { ...json, file: file.originalname || json.file, ...(name !== undefined ? { profile: name } : {}) });
    }),
  );
}
