/**
 * Turns a rendered linear image into the integer codes a camera file holds: 8-bit sRGB (IEC 61966-2-1 transfer
 * function from units/srgb) or 16-bit linear. Pure; the file formats themselves are written in io.
 */
import { invalid } from '../errors.js';
import type { LinearImage } from '../types.js';
import { srgbEncode } from '../units/srgb.js';

const LUT_SIZE = 65536;
let srgbLut: Uint8Array | undefined;

/**
 * linear → 8-bit sRGB code through a 65536-step table; the table's step moves a code by at most 0.025, so the result
 * equals round(255 · srgbEncode(L)) except within that distance of a rounding boundary.
 */
function lut(): Uint8Array {
  if (srgbLut) return srgbLut;
  srgbLut = new Uint8Array(LUT_SIZE);
  for (let i = 0; i < LUT_SIZE; i++) srgbLut[i] = Math.round(255 * srgbEncode(i / (LUT_SIZE - 1)));
  return srgbLut;
}

function check(image: LinearImage): void {
  if (!image || !(image.data instanceof Float32Array) || image.data.length !== image.width * image.height * image.channels) {
    throw invalid('image', 'a LinearImage whose data holds width × height × channels values', image?.data);
  }
}

/** 8-bit sRGB codes (interleaved like `image.data`); values are clipped to [0, 1] first. */
export function encodeSrgb8(image: LinearImage): Uint8Array {
  check(image);
  const table = lut();
  const src = image.data;
  const out = new Uint8Array(src.length);
  for (let i = 0; i < src.length; i++) {
    const v = src[i];
    out[i] = v <= 0 ? 0 : v >= 1 ? 255 : table[Math.round(v * (LUT_SIZE - 1))];
  }
  return out;
}

/** 16-bit linear codes: round(65535 · L), clipped to [0, 65535]. */
export function encodeLinear16(image: LinearImage): Uint16Array {
  check(image);
  const src = image.data;
  const out = new Uint16Array(src.length);
  for (let i = 0; i < src.length; i++) {
    const v = src[i];
    out[i] = v <= 0 ? 0 : v >= 1 ? 65535 : Math.round(v * 65535);
  }
  return out;
}
