/**
 * Uniform read access to a LinearImage for the samplers: either the Float32 linear values or, when the decoder kept
 * them, the integer codes with their code → linear table (so that a 12-MP photo is never expanded to Float32 just to
 * read one band; see LinearImage.codes).
 */
import { invalid } from '../../errors.js';
import type { LinearImage } from '../../types.js';
import { rowWindowOf } from './rowWindow.js';

export interface PixelAccess {
  width: number;
  height: number;
  channels: 1 | 3;
  /** Interleaved linear values (when `codeToLinear` is null) or integer codes. */
  values: Float32Array | Uint8Array | Uint16Array;
  /** code → linear light, or null when `values` are linear already. */
  codeToLinear: Float32Array | null;
  /** With codes: the clipped code (table length − 1). */
  clipCode: number;
  /** With linear values: the decoder's per-pixel clip flags, when it gave them. */
  saturatedFlags: Uint8Array | null;
  /** With linear values and no flags: a value at or above this counts as clipped. */
  saturationLevel: number;
  /**
   * The rows held in `values`: [firstRow, endRow), the whole photo (0, height) unless it is a row window
   * (band/rowWindow.ts); pixel (x, y) is then at index (y·width + x)·channels − base, base = firstRow·width·channels.
   */
  firstRow: number;
  endRow: number;
  base: number;
}

export function pixelAccess(image: LinearImage, saturationLevel: number): PixelAccess {
  const { width, height, channels } = image;
  if (!Number.isInteger(width) || width < 2 || !Number.isInteger(height) || height < 2) {
    throw invalid('image', 'at least 2 × 2 pixels', `${width} × ${height}`);
  }
  if (channels !== 1 && channels !== 3) throw invalid('image.channels', '1 or 3', channels);
  const window = rowWindowOf(image);
  if (window !== undefined) {
    const { firstRowPx, rowCount } = window;
    if (!Number.isInteger(firstRowPx) || !Number.isInteger(rowCount) || firstRowPx < 0 || rowCount < 2 || firstRowPx + rowCount > height) {
      throw invalid('image.rowWindow', `whole rows inside the ${height} rows of the image`, window);
    }
    if (image.codes === undefined || image.codeToLinear === undefined || image.codes.length < rowCount * width * channels) {
      throw invalid('image.codes', `${rowCount * width * channels} codes for the row window`, image.codes);
    }
  }
  const firstRow = window?.firstRowPx ?? 0;
  const endRow = window ? firstRow + window.rowCount : height;
  const n = width * (endRow - firstRow) * channels;
  if (image.codes !== undefined && image.codeToLinear !== undefined) {
    if (image.codes.length < n) throw invalid('image.codes', `${n} values`, image.codes);
    return {
      width,
      height,
      channels,
      values: image.codes,
      codeToLinear: image.codeToLinear,
      clipCode: image.codeToLinear.length - 1,
      saturatedFlags: null,
      saturationLevel,
      firstRow,
      endRow,
      base: firstRow * width * channels,
    };
  }
  const data = image.data;
  if (!(data instanceof Float32Array) || data.length < n) throw invalid('image.data', `${n} Float32 values`, data);
  const flags = image.saturated ?? null;
  return {
    width,
    height,
    channels,
    values: data,
    codeToLinear: null,
    clipCode: -1,
    saturatedFlags: flags && flags.length >= width * height ? flags : null,
    saturationLevel,
    firstRow: 0,
    endRow: height,
    base: 0,
  };
}
