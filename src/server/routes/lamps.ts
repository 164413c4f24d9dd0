/**
 * GET /api/lamps — the reference lamps and laser kinds glowprint knows (data/lamps.json, data/lasers.json), each lamp
 * with the lines calibration uses (data/lines/): what a client offers in its "which lamp is this" choice.
 */
import type { Router } from 'express';
import { lampLines } from '../../core/lines/index.js';
import { loadLampCatalog } from '../../io/lineList.js';
import { sendResult } from '../app.js';
import type { RouteContext } from './index.js';

export function registerLampRoutes(router: Router, _ctx: RouteContext): void {
  router.get('/lamps', (_req, res) => {
    const catalog = loadLampCatalog();
    const warnings: string[] = [];
    const lamps = catalog.lamps.map((lamp) => {
      const lines = lampLines(lamp.name, { catalog });
      warnings.push(...lines.warnings);
      return {
        name: lamp.name,
        aliases: lamp.aliases,
        description: lamp.description,
        spectra: lamp.spectra,
        lines: lines.lines.map((l) => ({
          wavelengthNm: l.wavelengthNm,
          spectrum: l.spectrum,
          relativeIntensity: l.relativeIntensity,
          blended: l.blended,
          kind: l.kind,
          ...(l.widthNm !== undefined ? { widthNm: l.widthNm } : {}),
        })),
      };
    });
    sendResult(res, { lamps, lasers: catalog.lasers, warnings });
  });
}
