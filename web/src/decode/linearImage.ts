/**
 * Canvas pixels → the core's LinearImage. A canvas gives 8-bit sRGB-encoded RGBA; the core wants linear light. The
 * 8-bit codes are kept (LinearImage.codes) with the IEC 61966-2-1 decode table from src/core/units/srgb.ts, so the
 * band samplers read `table[code]` for the pixels they touch; the Float32 `data` and the clip flags are built only if
 * a stage asks for them (a 12-MP photo would need 144 MB of Float32).
 */
import { invalid } from '../../../src/core/errors.js';
import type { LinearImage } from '../../../src/core/types.js';
import { SRGB_DECODE_LUT_8 } from '../../../src/core/units/srgb.js';

const LITTLE_ENDIAN = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1;

export interface RectPx {
  x: number;
  y: number;
  width: number;
  height: number;
}

/** RGBA (canvas order) → interleaved RGB codes, optionally of a sub-rectangle, into `out` when it has the size. */
export function rgbaToRgb(rgba: Uint8ClampedArray | Uint8Array, width: number, height: number, rect?: RectPx, out?: Uint8Array): Uint8Array {
  const r = rect ?? { x: 0, y: 0, width, height };
  if (r.x < 0 || r.y < 0 || r.x + r.width > width || r.y + r.height > height) {
    throw invalid('rect', `a rectangle inside ${width}×${height}`, `${r.width}×${r.height} at (${r.x}, ${r.y})`);
  }
  const n = r.width * r.height * 3;
  const dst = out && out.length === n ? out : new Uint8Array(n);
  // Whole pixels read as 32-bit words where the buffer allows it (about twice as fast as four byte reads): on a
  // little-endian machine, as all browsers' are, a word is A<<24 | B<<16 | G<<8 | R.
  const words = LITTLE_ENDIAN && rgba.byteOffset % 4 === 0 ? new Uint32Array(rgba.buffer, rgba.byteOffset, width * height) : null;
  let o = 0;
  for (let y = r.y; y < r.y + r.height; y++) {
    let p = y * width + r.x;
    if (words) {
      for (let x = 0; x < r.width; x++, p++) {
        const w = words[p];
        dst[o] = w & 255;
        dst[o + 1] = (w >>> 8) & 255;
        dst[o + 2] = (w >>> 16) & 255;
        o += 3;
      }
    } else {
      let i = p * 4;
      for (let x = 0; x < r.width; x++, i += 4) {
        dst[o++] = rgba[i];
        dst[o++] = rgba[i + 1];
        dst[o++] = rgba[i + 2];
      }
    }
  }
  return dst;
}

/** A LinearImage over 8-bit sRGB codes; `data` and `saturated` are computed on first access and then kept. */
export function linearImageFromSrgb8(codes: Uint8Array, width: number, height: number): LinearImage {
  if (codes.length !== width * height * 3) throw invalid('codes', `${width * height * 3} values (${width}×${height}×3)`, codes);
  const table = SRGB_DECODE_LUT_8;
  const image = { width, height, channels: 3, codes, codeToLinear: table } as LinearImage;
  let data: Float32Array | undefined;
  let saturated: Uint8Array | undefined;
  Object.defineProperty(image, 'data', {
    enumerable: true,
    configurable: true,
    get: () => {
      if (!data) {
        data = new Float32Array(codes.length);
        for (let i = 0; i < codes.length; i++) data[i] = table[codes[i]];
      }
      return data;
    },
  });
  Object.defineProperty(image, 'saturated', {
    enumerable: true,
    configurable: true,
    get: () => {
      if (!saturated) {
        saturated = new Uint8Array(width * height);
        for (let p = 0, i = 0; p < saturated.length; p++, i += 3) {
          if (codes[i] === 255 || codes[i + 1] === 255 || codes[i + 2] === 255) saturated[p] = 1;
        }
      }
      return saturated;
    },
  });
  return image;
}
