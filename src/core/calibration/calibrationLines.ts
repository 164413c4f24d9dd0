import { lampLines, type LampCatalog, type LampLines } from '../lines/index.js';

/**
 * The lines automatic calibration matches with: every listed line of the lamp's spectra, not only the strong ones
 * the lamp definition selects. A tube shows its weaker lines too, and a peak whose line is missing from the list
 * either goes unexplained (weakening the evidence) or lands on a listed neighbour (a wrong match); the matcher's
 * significance test allows for the denser list. `resolutionNm` re-judges blends at a photo's own resolution.
 * Shared by `glowprint calibrate` and the web app, so both calibrate a capture alike.
 */
export function calibrationLampLines(spec: string, catalog: LampCatalog, resolutionNm?: number): LampLines {
  const everyLine: LampCatalog = { ...catalog, lamps: catalog.lamps.map((l) => ({ ...l, select: 'all' as const })) };
  return lampLines(spec, resolutionNm === undefined ? { catalog: everyLine } : { catalog: everyLine, resolutionNm });
}
