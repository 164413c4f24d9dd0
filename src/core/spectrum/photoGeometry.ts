/**
 * What a spectrum CSV written from a photo keeps of the photo, so that a later calibration from the CSV knows what a
 * calibration from the photo knows: the image size and the band (where the image centre, the lens axis, falls on it),
 * the EXIF 35-mm-equivalent focal length, and where the zero order was seen. It travels as one comment line of JSON,
 * which CSV readers that skip comments ignore:
 *
 *   # photo_geometry: {"source_file":"rig.jpg","width_px":1920,"height_px":1080,"focal_length_35mm_mm":26,
 *     "band":{"center_x_px":…,"center_y_px":…,"angle_deg":…,"slant_deg":…,"length_px":…,"height_px":…},"zero_order_px":…}
 *
 * (on one line). The format is glowprint's own.
 */
import type { BandGeometry } from '../types.js';

export interface PhotoGeometry {
  sourceFile: string;
  widthPx: number;
  heightPx: number;
  focalLength35mmMm?: number;
  band: BandGeometry;
  /** Position of the zero order along the band (px), when the band search saw it. */
  zeroOrderPx?: number;
}

const KEY = 'photo_geometry:';

/** The comment line (without a newline). */
export function photoGeometryComment(g: PhotoGeometry): string {
  const json = {
    source_file: g.sourceFile,
    width_px: g.widthPx,
    height_px: g.heightPx,
    ...(g.focalLength35mmMm !== undefined ? { focal_length_35mm_mm: g.focalLength35mmMm } : {}),
    band: {
      center_x_px: g.band.center.x,
      center_y_px: g.band.center.y,
      angle_deg: g.band.angleDeg,
      slant_deg: g.band.slantDeg,
      length_px: g.band.lengthPx,
      height_px: g.band.heightPx,
    },
    ...(g.zeroOrderPx !== undefined ? { zero_order_px: g.zeroOrderPx } : {}),
  };
  return `# ${KEY} ${JSON.stringify(json)}`;
}

/**
 * The geometry from a CSV's comment lines: null when there is none; a damaged one is left out with a warning (the
 * spectrum itself is still good).
 */
export function parsePhotoGeometry(metadata: readonly string[], source: string): { geometry: PhotoGeometry | null; warnings: string[] } {
  const line = metadata.find((m) => m.replace(/^#\s*/, '').startsWith(KEY));
  if (!line) return { geometry: null, warnings: [] };
  const damaged = (why: string) => ({
    geometry: null,
    warnings: [`${source}: the photo_geometry comment is damaged (${why}); read without it, as a spectrum of unknown geometry`],
  });
  let j: Record<string, unknown>;
  try {
    j = JSON.parse(line.replace(/^#\s*/, '').slice(KEY.length)) as Record<string, unknown>;
  } catch {
    return damaged('not JSON');
  }
  if (!j || typeof j !== 'object') return damaged('not a JSON object');
  const b = j.band as Record<string, unknown> | undefined;
  const num = (v: unknown) => typeof v === 'number' && Number.isFinite(v);
  const positive = (v: unknown) => num(v) && (v as number) > 0;
  for (const k of ['width_px', 'height_px'] as const) if (!positive(j[k])) return damaged(`${k}: expected a positive number`);
  if (j.focal_length_35mm_mm !== undefined && !positive(j.focal_length_35mm_mm)) return damaged('focal_length_35mm_mm: expected a positive number');
  if (j.zero_order_px !== undefined && !num(j.zero_order_px)) return damaged('zero_order_px: expected a number');
  if (!b || typeof b !== 'object') return damaged('band: missing');
  for (const k of ['center_x_px', 'center_y_px', 'angle_deg', 'slant_deg'] as const) if (!num(b[k])) return damaged(`band.${k}: expected a number`);
  for (const k of ['length_px', 'height_px'] as const) if (!positive(b[k])) return damaged(`band.${k}: expected a positive number`);
  return {
    geometry: {
      sourceFile: typeof j.source_file === 'string' ? j.source_file : '',
      widthPx: j.width_px as number,
      heightPx: j.height_px as number,
      ...(j.focal_length_35mm_mm !== undefined ? { focalLength35mmMm: j.focal_length_35mm_mm as number } : {}),
      band: {
        center: { x: b.center_x_px as number, y: b.center_y_px as number },
        angleDeg: b.angle_deg as number,
        slantDeg: b.slant_deg as number,
        lengthPx: b.length_px as number,
        heightPx: b.height_px as number,
      },
      ...(j.zero_order_px !== undefined ? { zeroOrderPx: j.zero_order_px as number } : {}),
    },
    warnings: [],
  };
}
