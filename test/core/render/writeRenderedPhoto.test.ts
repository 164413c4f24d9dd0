import sharp from 'sharp';
import { describe, expect, it } from 'vitest';
import { encodeLinear16, encodeSrgb8, renderSpectroscopePhoto } from '../../../src/core/render/index.js';
import type { LinearImage } from '../../../src/core/types.js';
import { srgbEncode } from '../../../src/core/units/srgb.js';
import { decodeImage } from '../../../src/io/image.js';
import { encodeRenderedPhoto } from '../../../src/io/writeRenderedPhoto.js';

const ramp = (): LinearImage => {
  const width = 64;
  const height = 16;
  const data = new Float32Array(width * height * 3);
  for (let i = 0; i < data.length; i++) data[i] = (i % 193) / 192;
  return { width, height, channels: 3, data };
};

describe('encodeSrgb8(image) / encodeLinear16(image)', () => {
  it('encodes 0.18 as code 118: sRGB encode(0.18) = 0.461356 (IEC 61966-2-1 check value, CHECK_VALUES.md)', () => {
    const img: LinearImage = { width: 1, height: 1, channels: 3, data: Float32Array.of(0.18, 0, 1) };
    expect([...encodeSrgb8(img)]).toEqual([Math.round(255 * 0.461356129500442), 0, 255]);
    expect([...encodeLinear16(img)]).toEqual([Math.round(0.18 * 65535), 0, 65535]);
  });

  it('agrees with round(255·srgbEncode(L)) except within 0.03 code of a rounding boundary', () => {
    const img = ramp();
    const codes = encodeSrgb8(img);
    for (let i = 0; i < codes.length; i++) {
      const exact = 255 * srgbEncode(img.data[i]);
      if (Math.abs((exact % 1) - 0.5) < 0.03) continue;
      expect(codes[i]).toBe(Math.round(exact));
    }
  });
});

describe('encodeRenderedPhoto(image, {format, exif})', () => {
  it('writes a JPEG that the project decoder reads back as the same linear light, with the EXIF facts', async () => {
    const { image } = renderSpectroscopePhoto({ widthPx: 480, heightPx: 270, source: { lines: [{ wavelengthNm: 546, intensity: 1 }] }, camera: { focal: { kind: 'px', focalLengthPx: 500 }, cameraAngleDeg: 34 }, seed: 2 });
    const jpeg = await encodeRenderedPhoto(image, {
      format: { kind: 'jpeg', quality: 95 },
      exif: { make: 'Fictional', model: 'Bench Phone 2', exposureTimeS: 1 / 30, isoSpeed: 200, focalLengthMm: 4.3, focalLength35mmMm: 26, fNumber: 1.8, dateTimeOriginal: '2031:04:02 10:15:00' },
    });
    const decoded = await decodeImage(jpeg, { source: 'rendered.jpg' });
    expect(decoded.format).toBe('jpeg');
    expect([decoded.widthPx, decoded.heightPx]).toEqual([480, 270]);
    expect(decoded.exif).toMatchObject({ cameraMake: 'Fictional', cameraModel: 'Bench Phone 2', iso: 200, focalLengthMm: 4.3, focalLength35mmMm: 26, fNumber: 1.8, dateTaken: '2031-04-02T10:15:00' });
    expect(Math.abs(decoded.exif.exposureTimeS! - 1 / 30)).toBeLessThanOrEqual(1e-9);
    // JPEG at quality 95 with 4:2:0 chroma: the mean linear level survives to within 2 % of the brightest value.
    let a = 0;
    let b = 0;
    const d = decoded.image.data;
    for (let i = 0; i < image.data.length; i++) {
      a += image.data[i];
      b += d[i];
    }
    expect(Math.abs(a - b) / image.data.length).toBeLessThanOrEqual(0.02);
  });

  it('writes 16-bit linear PNG and TIFF that decode to the exact 16-bit codes', async () => {
    const img = ramp();
    for (const kind of ['png16', 'tiff16'] as const) {
      const bytes = await encodeRenderedPhoto(img, { format: { kind } });
      const decoded = await decodeImage(bytes, { source: `ramp.${kind}` });
      expect(decoded.bitDepth).toBe(16);
      const d = decoded.image.data;
      for (let i = 0; i < img.data.length; i++) {
        expect(Math.abs(d[i] - Math.round(img.data[i] * 65535) / 65535)).toBeLessThanOrEqual(1e-6);
      }
    }
  });

  it('writes an 8-bit PNG holding exactly the sRGB codes of encodeSrgb8', async () => {
    const img = ramp();
    const bytes = await encodeRenderedPhoto(img, { format: { kind: 'png8' } });
    const raw = await sharp(bytes).raw().toBuffer();
    expect(Buffer.from(encodeSrgb8(img)).equals(raw)).toBe(true);
  });

  it('rejects a JPEG quality outside 1–100 naming format.quality', async () => {
    await expect(encodeRenderedPhoto(ramp(), { format: { kind: 'jpeg', quality: 0 } })).rejects.toThrow(/format\.quality/);
  });
});
