/**
 * POST /api/grating — the grating task (src/tasks/grating.ts, the same as `glowprint grating --json`): a JSON body (or
 * form fields, with an optional `table` CSV upload) with the command's options in snake_case: `wavelength`,
 * `distance`, `positions` ("-1:-410.2,1:410.4"), `separations`, `angles`, `nominal`, `tolerance`, …. Lists may also
 * come as JSON arrays of {order, value[, uncertainty]}.
 */
import type { Router } from 'express';
import { InputError } from '../../core/errors.js';
import { GRATING_OPTION_DEFAULTS, runGrating, type GratingOptions } from '../../tasks/grating.js';
import { sendResult } from '../app.js';
import type { RouteContext } from './index.js';
import { checkUpload, filesOf, handle, optionsOf, textOption, withUploads } from './spectrum.js';

const TEXT = [
  ['wavelength', 'wavelength'],
  ['wavelength_uncertainty', 'wavelengthUncertainty'],
  ['distance', 'distance'],
  ['distance_uncertainty', 'distanceUncertainty'],
  ['position_uncertainty', 'positionUncertainty'],
  ['angle_uncertainty', 'angleUncertainty'],
  ['angle_reference', 'angleReference'],
  ['incidence', 'incidence'],
  ['nominal', 'nominal'],
  ['tolerance', 'tolerance'],
  ['beam_width', 'beamWidth'],
] as const;
const LISTS = ['positions', 'separations', 'angles'] as const;

/** A list option as the command's text: "m:value±u,…", from text or from [{order, value, uncertainty}]. */
function listOption(options: Record<string, unknown>, key: string): string | undefined {
  const v = options[key];
  if (!Array.isArray(v)) return textOption(options, key);
  return v
    .map((item, i) => {
      const o = item as Record<string, unknown>;
      const value = o.value ?? o.position_mm ?? o.separation_mm ?? o.angle_deg;
      const u = o.uncertainty ?? o.uncertainty_mm ?? o.uncertainty_deg;
      if (!Number.isInteger(o.order) || typeof value !== 'number' || (u !== undefined && typeof u !== 'number')) {
        throw new InputError(`${key}[${i}]: expected {order: integer, value: number, uncertainty?: number}`, key);
      }
      return `${o.order}:${value}${u !== undefined ? `±${u}` : ''}`;
    })
    .join(',');
}

export function registerGratingRoutes(router: Router, { upload }: RouteContext): void {
  router.post(
    '/grating',
    upload.fields([{ name: 'table', maxCount: 1 }]),
    handle(async (req, res) => {
      const o = optionsOf(req);
      const opts: GratingOptions = { ...GRATING_OPTION_DEFAULTS };
      for (const [key, name] of TEXT) {
        const v = textOption(o, key);
        if (v !== undefined) opts[name] = v;
      }
      for (const key of LISTS) {
        const v = listOption(o, key);
        if (v !== undefined) opts[key] = v;
      }
      const table = filesOf(req, 'table')[0];
      const run = table
        ? await withUploads([{ file: table, kind: checkUpload(table, ['text']) }], ([p]) => runGrating({ ...opts, table: p }))
        : await runGrating(opts);
      sendResult(res, run.json);
    }),
  );
}
