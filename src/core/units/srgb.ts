/**
 * The sRGB transfer function of IEC 61966-2-1:1999 (amendment 1, 2003), between gamma-encoded values V and linear
 * light L, both in [0, 1]:
 *
 *   decode: L = V / 12.92                    for V ≤ 0.04045
 *           L = ((V + 0.055) / 1.055)^2.4    otherwise
 *   encode: V = 12.92 L                      for L ≤ 0.0031308
 *           V = 1.055 L^(1/2.4) − 0.055      otherwise
 *
 * Values outside [0, 1] are mirrored through zero (decode(−V) = −decode(V)), so that noise around black after a
 * dark-frame subtraction survives a round trip instead of being clipped.
 */
import { invalid } from '../errors.js';

/** Encoded value at which the decode switches from the linear segment to the power law (IEC 61966-2-1). */
export const SRGB_DECODE_THRESHOLD = 0.04045;
/** Linear value at which the encode switches from the linear segment to the power law (IEC 61966-2-1). */
export const SRGB_ENCODE_THRESHOLD = 0.0031308;

/** Gamma-encoded sRGB value → linear light. */
export function srgbDecode(encoded: number): number {
  const v = Math.abs(encoded);
  const l = v <= SRGB_DECODE_THRESHOLD ? v / 12.92 : Math.pow((v + 0.055) / 1.055, 2.4);
  return encoded < 0 ? -l : l;
}

/** Linear light → gamma-encoded sRGB value. */
export function srgbEncode(linear: number): number {
  const l = Math.abs(linear);
  const v = l <= SRGB_ENCODE_THRESHOLD ? 12.92 * l : 1.055 * Math.pow(l, 1 / 2.4) - 0.055;
  return linear < 0 ? -v : v;
}

/**
 * A decode table for integer code values 0…maxCode: `table[c] = srgbDecode(c / maxCode)`. With maxCode = 255 it is the
 * 256-entry table used for 8-bit photos; 65535 gives the 16-bit table (256 KiB).
 */
export function srgbDecodeTable(maxCode = 255): Float32Array {
  if (!Number.isInteger(maxCode) || maxCode < 1 || maxCode > 65535) {
    throw invalid('maxCode', 'an integer between 1 and 65535', maxCode);
  }
  const table = new Float32Array(maxCode + 1);
  for (let c = 0; c <= maxCode; c++) table[c] = srgbDecode(c / maxCode);
  return table;
}

/** A linear table for integer code values: `table[c] = c / maxCode` (for sensors whose output is already linear). */
export function linearCodeTable(maxCode = 255): Float32Array {
  if (!Number.isInteger(maxCode) || maxCode < 1 || maxCode > 65535) {
    throw invalid('maxCode', 'an integer between 1 and 65535', maxCode);
  }
  const table = new Float32Array(maxCode + 1);
  for (let c = 0; c <= maxCode; c++) table[c] = c / maxCode;
  return table;
}

/** The 256-entry 8-bit sRGB decode table (`SRGB_DECODE_LUT_8[c]` = linear light of code value c). */
export const SRGB_DECODE_LUT_8: Float32Array = srgbDecodeTable(255);
