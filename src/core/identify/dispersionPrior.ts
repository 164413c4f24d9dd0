import { MATCH_LINES_DEFAULTS } from '../calibration/matchLines.js';
import { assertFinite } from '../errors.js';
import { focalLengthPxFrom35mm } from '../render/gratingCamera.js';

/**
 * What a photo says about its dispersion before any line is matched: a transmission grating of `linesPerMm` in front
 * of a camera of focal length f (px) spreads first-order light by
 *
 *   dλ/dx = d cos β · cos²φ / f,   sin β = λ / d (normal incidence),   φ the angle off the lens axis,
 *
 * from the grating equation and the pinhole projection x = f tan φ. The largest value is that of the coarsest grating
 * on the axis (cos β ≈ 1: d / f); the smallest that of the finest grating at the red end of the visible, at the edge
 * of the field (cos β at 700 nm, cos²φ at `maxFieldTan`).
 */
export interface DispersionPriorInput {
  /** A focal length known in pixels (e.g. from EXIF through the image size). */
  focalLengthPx?: number;
  /** EXIF FocalLengthIn35mmFilm (mm), with the photo's size: f px = f35 · diagonal px / 43.27 mm. */
  focalLength35mmMm?: number;
  /** The photo's size (px): with no focal length, the usual range of 35-mm equivalents is assumed. */
  image?: { widthPx: number; heightPx: number };
}

export interface DispersionPriorOptions {
  /** Grating line densities a bench may use (lines/mm). @default [300, 1200] */
  linesPerMm?: readonly [number, number];
  /** 35-mm-equivalent focal lengths of phone main cameras and webcams, when EXIF gives none (mm). @default [18, 50] */
  focalLength35mmRangeMm?: readonly [number, number];
  /** Reddest wavelength of the visible a scale must hold there (nm). @default 700 */
  reddestNm?: number;
  /** tan φ at the edge of the field (half the diagonal over f for a 26-mm equivalent: 0.83). @default 0.85 */
  maxFieldTan?: number;
  /**
   * Each end widened by this factor: a cropped photo (whose diagonal understates f), an EXIF equivalent matched on
   * another dimension, incidence off the normal. @default 1.3
   */
  margin?: number;
  /** The widest range returned, what a camera spectroscope can have at all (nm/px). @default [0.05, 2] */
  limitNmPerPx?: readonly [number, number];
}

export const DISPERSION_PRIOR_DEFAULTS = {
  linesPerMm: [300, 1200] as readonly [number, number],
  focalLength35mmRangeMm: [18, 50] as readonly [number, number],
  reddestNm: 700,
  maxFieldTan: 0.85,
  margin: 1.3,
  limitNmPerPx: MATCH_LINES_DEFAULTS.dispersionNmPerPx as readonly [number, number],
} as const;

/**
 * The range of |dλ/dx| (nm/px) a photo's grating spectroscope can have: from its focal length (given, or EXIF's
 * 35-mm equivalent with the image size), or with only the image size the range of usual equivalents; with neither,
 * `limitNmPerPx`. Always within `limitNmPerPx`.
 */
export function dispersionPriorNmPerPx(input: DispersionPriorInput, options: DispersionPriorOptions = {}): [number, number] {
  const o = { ...DISPERSION_PRIOR_DEFAULTS, ...Object.fromEntries(Object.entries(options).filter(([, v]) => v !== undefined)) };
  const limit: [number, number] = [o.limitNmPerPx[0], o.limitNmPerPx[1]];
  let focal: [number, number] | null = null;
  if (input.focalLengthPx !== undefined) {
    assertFinite('focalLengthPx', input.focalLengthPx, Number.MIN_VALUE);
    focal = [input.focalLengthPx, input.focalLengthPx];
  } else if (input.image && input.focalLength35mmMm !== undefined && input.focalLength35mmMm > 0) {
    const f = focalLengthPxFrom35mm({ focalLength35mmMm: input.focalLength35mmMm, ...input.image });
    focal = [f, f];
  } else if (input.image) {
    focal = [
      focalLengthPxFrom35mm({ focalLength35mmMm: o.focalLength35mmRangeMm[0], ...input.image }),
      focalLengthPxFrom35mm({ focalLength35mmMm: o.focalLength35mmRangeMm[1], ...input.image }),
    ];
  }
  if (!focal) return limit;
  const dCoarseNm = 1e6 / o.linesPerMm[0];
  const dFineNm = 1e6 / o.linesPerMm[1];
  const cosBeta = Math.sqrt(Math.max(0, 1 - (o.reddestNm / dFineNm) ** 2));
  const cos2Field = 1 / (1 + o.maxFieldTan ** 2);
  const lo = ((dFineNm * cosBeta * cos2Field) / focal[1]) / o.margin;
  const hi = (dCoarseNm / focal[0]) * o.margin;
  const out: [number, number] = [Math.max(limit[0], Math.min(lo, limit[1])), Math.min(limit[1], Math.max(hi, limit[0]))];
  return out[0] < out[1] ? out : limit;
}
