/**
 * POST /api/identify — a photo (or spectrum CSV) of a tube or lamp → which species, how sure, what is unexplained,
 * and the laser kind for a single dominant line. With `profile` (the name of a saved instrument profile) the peaks
 * get their wavelengths from it; without, the spectrum calibrates itself from the candidate lamps' line patterns and
 * the answer says so. The stages are the ones `glowprint identify` chains; when its task lands in src/tasks, this
 * route should call it instead.
 */
import type { Router } from 'express';
import { applyProfileToPeaks, profileFromJson } from '../../core/calibration/profile.js';
import { InputError } from '../../core/errors.js';
import { detectLaser } from '../../core/identify/detectLaser.js';
import { identifySelfCalibrated } from '../../core/identify/identifySelfCalibrated.js';
import { identifySpecies, IDENTIFY_DEFAULTS, type CalibratedPeak } from '../../core/identify/identifySpecies.js';
import { loadLampCatalog } from '../../io/lineList.js';
import { checkProfileName, loadProfile } from '../../io/workspace.js';
import { analyseSpectrumInput } from '../../tasks/spectrum.js';
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
      const o = optionsOf(req);
      const profileName = textOption(o, 'profile');
      let profile = null;
      if (profileName !== undefined) {
        const json = await loadProfile(config.workspaceDir, checkProfileName(profileName));
        if (json === null) throw new InputError(`profile: no saved profile named ${profileName}`, 'profile');
        profile = profileFromJson(json, `profile ${profileName}`);
      }
      const run = await withUploads([{ file, kind }], ([p]) => analyseSpectrumInput(p, { maxPixels: config.maxPixels }));
      const a = run.analysis;
      const { lines, lasers } = loadLampCatalog();
      const input = { ...a.input, file: file.originalname || a.input.file };
      if (profile) {
        const band = a.band ? { angleDeg: a.band.angleDeg, slantDeg: a.band.slantDeg, center: a.band.center, lengthPx: a.band.lengthPx, heightPx: a.band.heightPx } : null;
        const image = a.input.widthPx && a.input.heightPx ? { widthPx: a.input.widthPx, heightPx: a.input.heightPx } : null;
        const applied = applyProfileToPeaks(a.peaks, profile, { image, band, source: input.file });
        const peaks = applied.peaks.filter((p) => Number.isFinite(p.wavelengthNm) && Number.isFinite(p.wavelengthUncertaintyNm));
        const systematicNm = Math.max(profile.rmsNm, IDENTIFY_DEFAULTS.systematicNm);
        const id = identifySpecies(peaks, { lines, systematicNm });
        sendResult(res, {
          input,
          species: id.species,
          peaks: id.peaks,
          unexplained: id.unexplained,
          unexplainedFluxFraction: id.unexplainedFluxFraction,
          emissionLinesFound: id.emissionLinesFound,
          calibration: { from: 'profile', profile: profileName, lamp: profile.lamp, rmsNm: profile.rmsNm },
          laser: detectLaser(peaks, { kinds: lasers, systematicNm }),
          warnings: [...a.warnings, ...applied.warnings, ...id.warnings],
        });
        return;
      }
      let calibrated: CalibratedPeak[] | null = null;
      if (a.peaks.length > 0 && a.peaks.every((p) => p.wavelengthNm !== undefined && p.wavelengthUncertaintyNm !== undefined)) {
        calibrated = a.peaks as CalibratedPeak[]; // a wavelength CSV carries its own scale
      }
      if (calibrated) {
        const id = identifySpecies(calibrated, { lines });
        sendResult(res, {
          input,
          species: id.species,
          peaks: id.peaks,
          unexplained: id.unexplained,
          unexplainedFluxFraction: id.unexplainedFluxFraction,
          emissionLinesFound: id.emissionLinesFound,
          calibration: { from: 'file', rmsNm: null },
          laser: detectLaser(calibrated, { kinds: lasers }),
          warnings: [...a.warnings, ...id.warnings],
        });
        return;
      }
      const pos = run.spectrum.positionPx;
      const self = identifySelfCalibrated(a.peaks, { lines, positionRangePx: [pos[0], pos[pos.length - 1]] });
      const c = self.calibration;
      sendResult(res, {
        input,
        species: self.species,
        peaks: self.peaks,
        unexplained: self.unexplained,
        unexplainedFluxFraction: self.unexplainedFluxFraction,
        emissionLinesFound: self.emissionLinesFound,
        calibration: c
          ? { from: 'self', lamp: c.lamp, agreeingLamps: c.agreeingLamps, rmsNm: c.rmsNm, linesUsed: c.linesUsed, dispersionNmPerPx: c.dispersionNmPerPx, coveredRangeNm: c.coveredRangeNm }
          : null,
        candidates: self.candidates,
        laser: c ? detectLaser(self.peaks, { kinds: lasers, systematicNm: Math.max(c.rmsNm, IDENTIFY_DEFAULTS.systematicNm) }) : null,
        warnings: [...a.warnings, ...self.warnings],
      });
    }),
  );
}
