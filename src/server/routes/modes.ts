/**
 * POST /api/modes — the laser-modes task (src/tasks/modes.ts, the same as `glowprint modes --json`) over uploaded
 * scope CSV traces (field `traces`, several = a warm-up series in time order). Fields: `fsr` ("10 GHz") or
 * `mirror_spacing` ("7.5 mm") with `interferometer` ("confocal" | "planar"), `fsr_uncertainty`, `signal`, `ramp`,
 * `trigger`, `interval`, `times`, `refractive_index`, `envelope`; `svg=true` adds the plots as SVG text (`svg`).
 */
import type { Router } from 'express';
import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { InputError } from '../../core/errors.js';
import { runModes, type ModesOptions } from '../../tasks/modes.js';
import { sendResult } from '../app.js';
import type { RouteContext } from './index.js';
import { checkUpload, filesOf, flagOption, handle, optionsOf, textOption, UploadError, withUploads } from './spectrum.js';

const TEXT = [
  ['fsr', 'fsr'],
  ['fsr_uncertainty', 'fsrUncertainty'],
  ['mirror_spacing', 'mirrorSpacing'],
  ['signal', 'signal'],
  ['ramp', 'ramp'],
  ['trigger', 'trigger'],
  ['interval', 'interval'],
  ['times', 'times'],
] as const;

export function registerModesRoutes(router: Router, { config, upload }: RouteContext): void {
  router.post(
    '/modes',
    upload.fields([
      { name: 'traces', maxCount: config.maxFiles },
      { name: 'trace', maxCount: config.maxFiles },
      { name: 'file', maxCount: config.maxFiles },
    ]),
    handle(async (req, res) => {
      const files = filesOf(req, 'traces', 'trace', 'file');
      if (files.length === 0) throw new UploadError(400, 'no traces: send the scope CSV exports as multipart field "traces"');
      const uploads = files.map((file) => ({ file, kind: checkUpload(file, ['text']) }));
      const o = optionsOf(req);
      const opts: ModesOptions = { refractiveIndex: textOption(o, 'refractive_index') ?? '1', envelope: textOption(o, 'envelope') ?? 'gaussian' };
      for (const [key, name] of TEXT) {
        const v = textOption(o, key);
        if (v !== undefined) opts[name] = v;
      }
      const kind = textOption(o, 'interferometer');
      if (kind !== undefined) {
        if (kind !== 'confocal' && kind !== 'planar') throw new InputError(`interferometer: expected "confocal" or "planar", got ${JSON.stringify(kind)}`, 'interferometer');
        opts[kind] = true;
      }
      const wantSvg = flagOption(o, 'svg');
      const out = await withUploads(uploads, async (paths, dir) => {
        if (wantSvg) opts.svg = path.join(dir, 'modes.svg');
        const run = await runModes(paths, opts);
        return { json: run.json, svg: wantSvg ? await readFile(opts.svg!, 'utf8') : undefined };
      });
      sendResult(res, { ...out.json, ...(out.svg !== undefined ? { svg: out.svg } : {}) });
    }),
  );
}
