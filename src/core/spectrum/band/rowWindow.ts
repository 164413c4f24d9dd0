/**
 * A photo of which only a band of rows was decoded (a "row window"), and the rows a band search needs.
 *
 * A large JPEG's band is found coarsely on its 1/8-scale preview; the stages after that (refinement, height, extraction)
 * read only the band and a margin around it. Decoding just those rows costs the decoder the entropy decode of the rows
 * above but no colour conversion or copy of the rest, and the photo's 36 MB buffer shrinks to a few MB. The windowed
 * image keeps the photo's full `width` × `height` and its coordinates, so every geometric test (where the band meets
 * the image edge, which samples are outside the photo) is the one made on the whole photo; its `codes` hold the rows
 * [firstRowPx, firstRowPx + rowCount) only. A sampler that would read a row outside the window throws RowWindowMiss,
 * and the caller decodes the whole photo and runs again: the results are those of the whole photo, or no results.
 */
import type { BandGeometry, LinearImage, PointPx } from '../../types.js';
import { bandFrame, imageToBandPx } from './frame.js';

export interface RowWindow {
  /** First decoded row of the photo. */
  firstRowPx: number;
  /** Number of decoded rows. */
  rowCount: number;
}

/** A LinearImage with `codes` for the rows of `rowWindow` only (see the file comment); `data` is not available. */
export type WindowedImage = LinearImage & { rowWindow: RowWindow };

export function rowWindowOf(image: LinearImage): RowWindow | undefined {
  return (image as Partial<WindowedImage>).rowWindow;
}

/** Thrown by a sampler asked for a pixel of the photo that lies outside the decoded rows. */
export class RowWindowMiss extends Error {
  constructor(readonly window: RowWindow, readonly rowPx: number) {
    super(`row ${rowPx} lies outside the decoded rows ${window.firstRowPx}–${window.firstRowPx + window.rowCount - 1}`);
    this.name = 'RowWindowMiss';
  }
}

export interface BandRowsOptions {
  /**
   * Half-width sampled across the band, as a multiple of its height, before `extraPx` is added: the height measurement's
   * first window is max(1.5 H, H/2 + 30 px) and refinement and extraction read less. @default 2
   */
  heightMultiple?: number;
  /** Added to the half-width across and to the ends along the band (px). @default 48 */
  extraPx?: number;
}

export const BAND_ROWS_DEFAULTS = { heightMultiple: 2, extraPx: 48 } as const satisfies Required<BandRowsOptions>;

/**
 * The rows [fromPx, toPx) (clamped to the photo) that cover a band found coarsely: the parallelogram of the band's
 * extent along its axis — from its own ends and the coarse components' ends, whichever reach further — by
 * ±(heightMultiple · heightPx + extraPx) across, along the line images' direction.
 * The refinement may still turn or widen the band beyond it; RowWindowMiss then says so.
 */
export function bandRows(
  band: BandGeometry,
  memberEnds: PointPx[],
  heightPx: number,
  options: BandRowsOptions = {},
): { fromPx: number; toPx: number } {
  const heightMultiple = options.heightMultiple ?? BAND_ROWS_DEFAULTS.heightMultiple;
  const extraPx = options.extraPx ?? BAND_ROWS_DEFAULTS.extraPx;
  const f = bandFrame(band);
  let lo = 0;
  let hi = band.lengthPx;
  for (const pt of memberEnds) {
    const p = imageToBandPx(band, pt).positionPx;
    lo = Math.min(lo, p);
    hi = Math.max(hi, p);
  }
  lo -= extraPx;
  hi += extraPx;
  const half = heightMultiple * band.heightPx + extraPx;
  let yMin = Infinity;
  let yMax = -Infinity;
  for (const p of [lo, hi]) {
    for (const q of [-half, half]) {
      const y = f.startY + p * f.uy + q * f.vy;
      yMin = Math.min(yMin, y);
      yMax = Math.max(yMax, y);
    }
  }
  return { fromPx: Math.max(0, Math.floor(yMin) - 1), toPx: Math.min(heightPx, Math.ceil(yMax) + 2) };
}
