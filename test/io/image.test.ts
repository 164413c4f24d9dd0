import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { afterAll, describe, expect, it } from 'vitest';
import { srgbDecode, srgbEncode } from '../../src/core/units/srgb.js';
import { decodeImage, decodeImageStaged, linearImageFromCodes, narrowRowWindow } from '../../src/io/image.js';

// Fixtures are generated here with sharp into a temporary folder; nothing binary is committed.
const dir = mkdtempSync(path.join(tmpdir(), 'glowprint-image-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function file(name: string, data: Buffer | string): string {
  const p = path.join(dir, name);
  writeFileSync(p, data);
  return p;
}

/** A W×H RGB 8-bit gradient: R = x, G = y, B = (x + y) mod 256, plus one pixel (3, 2) with G at 255. */
function rgb8(w: number, h: number): Uint8Array {
  const px = new Uint8Array(w * h * 3);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const i = (y * w + x) * 3;
      px[i] = x % 255;
      px[i + 1] = y % 255;
      px[i + 2] = (x + y) % 255;
    }
  }
  px[(2 * w + 3) * 3 + 1] = 255;
  return px;
}

/** A W×H RGB 16-bit pattern with one pixel (5, 1) whose B is 65535. */
function rgb16(w: number, h: number): Uint16Array {
  const px = new Uint16Array(w * h * 3);
  for (let i = 0; i < px.length; i++) px[i] = (i * 997) % 65535;
  px[(1 * w + 5) * 3 + 2] = 65535;
  return px;
}

const W = 40;
const H = 24;

describe('decodeImage(input, options) — formats and linear light', () => {
  it('8-bit PNG: data = sRGB decode of each code (IEC 61966-2-1), bitDepth 8, saturated where a channel is 255', async () => {
    const px = rgb8(W, H);
    const png = await sharp(px, { raw: { width: W, height: H, channels: 3 } }).png().toBuffer();
    const r = await decodeImage(file('rgb8.png', png));
    expect([r.format, r.bitDepth, r.widthPx, r.heightPx, r.image.channels]).toEqual(['png', 8, W, H, 3]);
    // Pixel (10, 5): R code 10, G code 5, B code 15.
    const i = (5 * W + 10) * 3;
    expect(Math.abs(r.image.data[i] - srgbDecode(10 / 255))).toBeLessThanOrEqual(1e-7);
    expect(Math.abs(r.image.data[i + 2] - srgbDecode(15 / 255))).toBeLessThanOrEqual(1e-7);
    // Code 128 → 0.215860500 (IEC 61966-2-1 formula, CHECK_VALUES.md): pixel (128, 0) of a wider image.
    const wide = rgb8(200, 16);
    const r2 = await decodeImage(await sharp(wide, { raw: { width: 200, height: 16, channels: 3 } }).png().toBuffer());
    expect(Math.abs(r2.image.data[128 * 3] - 0.2158605)).toBeLessThanOrEqual(2e-8);
    const sat = r.image.saturated!;
    expect(sat[2 * W + 3]).toBe(1);
    expect(sat.reduce((a, b) => a + b, 0)).toBe(1);
  });

  it('8-bit with srgb8: false takes codes as linear (code/255)', async () => {
    const png = await sharp(rgb8(W, H), { raw: { width: W, height: H, channels: 3 } }).png().toBuffer();
    const r = await decodeImage(png, { srgb8: false });
    const i = (5 * W + 10) * 3;
    expect(Math.abs(r.image.data[i] - 10 / 255)).toBeLessThanOrEqual(1e-7);
  });

  it('16-bit PNG: taken as linear by default (code/65535); linear16: false applies the sRGB decode', async () => {
    const px = rgb16(W, H);
    const png = await sharp(px, { raw: { width: W, height: H, channels: 3 } }).toColourspace('rgb16').png().toBuffer();
    const r = await decodeImage(png);
    expect(r.bitDepth).toBe(16);
    for (const i of [0, 1, 77, 1000, px.length - 1]) {
      expect(Math.abs(r.image.data[i] - px[i] / 65535)).toBeLessThanOrEqual(1e-7);
    }
    expect(r.image.saturated![1 * W + 5]).toBe(1);
    const s = await decodeImage(png, { linear16: false });
    expect(Math.abs(s.image.data[77] - srgbDecode(px[77] / 65535))).toBeLessThanOrEqual(1e-7);
  });

  it('16-bit TIFF (LZW) keeps all 16 bits; 8-bit TIFF decodes like PNG', async () => {
    const px = rgb16(W, H);
    const tif = await sharp(px, { raw: { width: W, height: H, channels: 3 } }).toColourspace('rgb16').tiff({ compression: 'lzw' }).toBuffer();
    const r = await decodeImage(file('rgb16.tif', tif));
    expect([r.format, r.bitDepth]).toEqual(['tiff', 16]);
    expect(Array.from(r.image.codes!.subarray(0, 9))).toEqual(Array.from(px.subarray(0, 9)));
    const tif8 = await sharp(rgb8(W, H), { raw: { width: W, height: H, channels: 3 } }).tiff({ compression: 'lzw' }).toBuffer();
    const r8 = await decodeImage(tif8);
    expect([r8.format, r8.bitDepth]).toEqual(['tiff', 8]);
    expect(r8.image.codes![(5 * W + 10) * 3]).toBe(10);
  });

  it('WebP (lossless) and JPEG decode; JPEG within its quantisation error', async () => {
    const px = rgb8(W, H);
    const webp = await sharp(px, { raw: { width: W, height: H, channels: 3 } }).webp({ lossless: true }).toBuffer();
    const w = await decodeImage(file('a.webp', webp));
    expect(w.format).toBe('webp');
    expect(Array.from(w.image.codes!.subarray(0, 30))).toEqual(Array.from(px.subarray(0, 30)));
    const flat = new Uint8Array(W * H * 3).fill(128);
    const jpg = await sharp(flat, { raw: { width: W, height: H, channels: 3 } }).jpeg({ quality: 95 }).toBuffer();
    const j = await decodeImage(file('a.jpg', jpg));
    expect(j.format).toBe('jpeg');
    expect(Math.abs(j.image.data[(10 * W + 10) * 3] - 0.2158605)).toBeLessThanOrEqual(0.01);
  });

  it('grey images give one channel; an alpha channel is dropped', async () => {
    const grey = new Uint8Array(W * H).fill(200);
    const g = await decodeImage(await sharp(grey, { raw: { width: W, height: H, channels: 1 } }).toColourspace('b-w').png().toBuffer());
    expect(g.image.channels).toBe(1);
    expect(g.image.data.length).toBe(W * H);
    expect(Math.abs(g.image.data[0] - srgbDecode(200 / 255))).toBeLessThanOrEqual(1e-7);
    const rgba = new Uint8Array(W * H * 4).fill(90);
    const a = await decodeImage(await sharp(rgba, { raw: { width: W, height: H, channels: 4 } }).png().toBuffer());
    expect(a.image.channels).toBe(3);
    expect(a.image.data.length).toBe(W * H * 3);
  });

  it('applies the EXIF orientation: tag 6 (TIFF 6.0 / EXIF 2.32 tag 274: row 0 is the visual right side) turns W×H into H×W, stored top-left → upright top-right', async () => {
    // A bright 8×8 block in the stored top-left corner, the rest dark.
    const px = new Uint8Array(W * H * 3).fill(10);
    for (let y = 0; y < 8; y++) for (let x = 0; x < 8; x++) px.fill(250, (y * W + x) * 3, (y * W + x) * 3 + 3);
    const jpg = await sharp(px, { raw: { width: W, height: H, channels: 3 } }).jpeg({ quality: 100 }).withMetadata({ orientation: 6 }).toBuffer();
    const r = await decodeImage(jpg);
    expect(r.orientation).toBe(6);
    expect([r.widthPx, r.heightPx, r.image.width, r.image.height]).toEqual([H, W, H, W]);
    const codes = r.image.codes!;
    const at = (x: number, y: number) => codes[(y * r.image.width + x) * 3];
    expect(at(H - 3, 2)).toBeGreaterThan(200); // upright top-right
    expect(at(2, 2)).toBeLessThan(40); // upright top-left is dark
  });
});

describe('decodeImage — EXIF summary (read with exifr)', () => {
  it('reads exposure time, ISO, f-number, focal lengths, make, model and date with offset from JPEG and WebP', async () => {
    const exif = {
      IFD0: { Make: 'Acme Optics', Model: 'Bench Cam 2' },
      IFD2: {
        ExposureTime: '1/50',
        ISOSpeedRatings: '200',
        FNumber: '18/10',
        FocalLength: '425/100',
        FocalLengthIn35mmFilm: '26',
        DateTimeOriginal: '2024:05:01 12:34:56',
        OffsetTimeOriginal: '+02:00',
      },
    };
    const base = () => sharp(new Uint8Array(W * H * 3).fill(60), { raw: { width: W, height: H, channels: 3 } });
    for (const buf of [await base().jpeg().withExif(exif).toBuffer(), await base().webp().withExif(exif).toBuffer()]) {
      const r = await decodeImage(buf);
      expect(r.exif).toEqual({
        exposureTimeS: 0.02,
        iso: 200,
        fNumber: 1.8,
        focalLengthMm: 4.25,
        focalLength35mmMm: 26,
        cameraMake: 'Acme Optics',
        cameraModel: 'Bench Cam 2',
        dateTaken: '2024-05-01T12:34:56+02:00',
      });
      expect(r.warnings).toEqual([]);
    }
  });
  it('gives an empty summary for a PNG without EXIF', async () => {
    const r = await decodeImage(await sharp(rgb8(W, H), { raw: { width: W, height: H, channels: 3 } }).png().toBuffer());
    expect(r.exif).toEqual({});
  });
});

describe('linearImageFromCodes(parts) — lazy linear data', () => {
  it('keeps codes + table; data and saturated appear on first access and survive a spread copy', () => {
    const codes = new Uint8Array([0, 128, 255, 10, 20, 30]);
    const img = linearImageFromCodes({ width: 2, height: 1, channels: 3, codes, codeToLinear: new Float32Array(256).map((_, c) => c / 255) });
    expect(img.codes).toBe(codes);
    const copy = { ...img };
    expect(Array.from(copy.data)).toEqual(Array.from(codes, (c) => Math.fround(c / 255)));
    expect(Array.from(copy.saturated!)).toEqual([1, 0]);
    expect(img.data).toBe(img.data); // built once
  });
  it('rejects codes of the wrong length, naming the size expected', () => {
    expect(() => linearImageFromCodes({ width: 2, height: 2, channels: 3, codes: new Uint8Array(5), codeToLinear: new Float32Array(256) })).toThrow(
      /codes: expected 12 values \(2×2×3\)/,
    );
  });
});

describe('decodeImage — dark frame', () => {
  it('subtracts the dark frame in linear light (after sRGB decoding each), keeping the photo\'s saturation flags', async () => {
    const light = rgb8(W, H);
    const dark = new Uint8Array(W * H * 3).fill(8);
    const lightFile = file('light.png', await sharp(light, { raw: { width: W, height: H, channels: 3 } }).png().toBuffer());
    const darkFile = file('dark.png', await sharp(dark, { raw: { width: W, height: H, channels: 3 } }).png().toBuffer());
    const r = await decodeImage(lightFile, { dark: darkFile });
    const i = (5 * W + 30) * 3; // R code 30
    expect(Math.abs(r.image.data[i] - (srgbDecode(30 / 255) - srgbDecode(8 / 255)))).toBeLessThanOrEqual(1e-7);
    expect(r.image.codes).toBeUndefined();
    expect(r.image.saturated![2 * W + 3]).toBe(1);
    // Pixel (0, 0) has R code 0: darker than the dark frame, left negative (noise around black is kept, not clipped).
    expect(r.image.data[0]).toBeLessThan(0);
  });
  it('rejects a dark frame of another size, naming both sizes', async () => {
    const lightFile = file('l2.png', await sharp(rgb8(W, H), { raw: { width: W, height: H, channels: 3 } }).png().toBuffer());
    const darkFile = file('d2.png', await sharp(rgb8(W, H + 2), { raw: { width: W, height: H + 2, channels: 3 } }).png().toBuffer());
    await expect(decodeImage(lightFile, { dark: darkFile })).rejects.toThrow(`${darkFile}: dark frame is 40×26 px but the photo is 40×24 px`);
  });
  it('warns when the dark frame was taken with another exposure time', async () => {
    const make = (t: string) =>
      sharp(new Uint8Array(W * H * 3).fill(50), { raw: { width: W, height: H, channels: 3 } })
        .jpeg()
        .withExif({ IFD2: { ExposureTime: t } })
        .toBuffer();
    const r = await decodeImage(await make('1/50'), { dark: await make('1/100') });
    expect(r.warnings.join('\n')).toMatch(/dark frame exposure 0\.01 s differs from the photo's 0\.02 s/);
  });
});

/** CRC-32 of ISO 3309 / ITU-T V.42 as the PNG specification (W3C PNG, 3rd ed., §5.5) prescribes for chunks. */
function crc32(bytes: Uint8Array): number {
  let c = 0xffffffff;
  for (const b of bytes) {
    c ^= b;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
  }
  return (c ^ 0xffffffff) >>> 0;
}

function pngChunk(type: string, data: Uint8Array): Buffer {
  const body = Buffer.concat([Buffer.from(type, 'latin1'), Buffer.from(data)]);
  const out = Buffer.alloc(12 + data.length);
  out.writeUInt32BE(data.length, 0);
  body.copy(out, 4);
  out.writeUInt32BE(crc32(body), 8 + data.length);
  return out;
}

/** A valid-looking PNG whose IHDR (W3C PNG §11.2.2: width, height, depth 8, colour type 2) claims width × height. */
function bombPng(width: number, height: number): Buffer {
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr[8] = 8;
  ihdr[9] = 2;
  const signature = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
  // A few bytes of zlib data; a decoder that believed the header would expand them towards 10 GB.
  const idat = Buffer.from([0x78, 0x9c, 0x63, 0x60, 0x00, 0x00, 0x00, 0x02, 0x00, 0x01]);
  return Buffer.concat([signature, pngChunk('IHDR', ihdr), pngChunk('IDAT', idat), pngChunk('IEND', new Uint8Array(0))]);
}

describe('decodeImage — bad input gets one clear message naming the file', () => {
  it('zero-byte file', async () => {
    const f = file('empty.jpg', Buffer.alloc(0));
    await expect(decodeImage(f)).rejects.toThrow(`${f}: the file is empty (0 bytes), not an image`);
  });
  it('missing file', async () => {
    const f = path.join(dir, 'nope.jpg');
    await expect(decodeImage(f)).rejects.toThrow(`${f}: no such file`);
  });
  it('truncated JPEG', async () => {
    const px = rgb8(400, 300);
    const jpg = await sharp(px, { raw: { width: 400, height: 300, channels: 3 } }).jpeg().toBuffer();
    const f = file('cut.jpg', jpg.subarray(0, Math.floor(jpg.length / 2)));
    await expect(decodeImage(f)).rejects.toThrow(new RegExp(`^${escape(f)}: the JPEG data is damaged or cut short and cannot be decoded \\(.*premature end`));
  });
  it('a JPEG with stray bytes after its end marker still decodes (a decoder warning, not damage)', async () => {
    const jpg = await sharp(rgb8(W, H), { raw: { width: W, height: H, channels: 3 } }).jpeg().toBuffer();
    const r = await decodeImage(Buffer.concat([jpg, Buffer.from('trailing bytes from a phone app')]));
    expect([r.widthPx, r.heightPx]).toEqual([W, H]);
  });
  it('text renamed .jpg', async () => {
    const f = file('notes.jpg', 'position,intensity\n1,2\n');
    await expect(decodeImage(f)).rejects.toThrow(`${f}: contains text, not image data (despite its .jpg name); expected JPEG, PNG, TIFF or WebP`);
  });
  it('1×1 image: too small for a spectrum', async () => {
    const f = file('dot.png', await sharp(new Uint8Array(3), { raw: { width: 1, height: 1, channels: 3 } }).png().toBuffer());
    await expect(decodeImage(f)).rejects.toThrow(`${f}: 1×1 px is too small for a spectrum (at least 16×16 px needed)`);
  });
  it('a header claiming 60000×60000 px is refused before decoding (decompression bomb)', async () => {
    const bomb = bombPng(60000, 60000);
    expect(bomb.length).toBeLessThan(100);
    expect((await sharp(bomb, { limitInputPixels: false }).metadata()).width).toBe(60000); // the header parses: the check is ours, not a decode failure
    const f = file('bomb.png', bomb);
    await expect(decodeImage(f)).rejects.toThrow(`${f}: the header claims 60000×60000 px (3600 MP), over the limit of 100 MP; refusing to decode it`);
  });
  it('maxPixels lowers the limit; a limit that is not a count is rejected', async () => {
    const png = await sharp(rgb8(W, H), { raw: { width: W, height: H, channels: 3 } }).png().toBuffer();
    await expect(decodeImage(png, { maxPixels: 500 })).rejects.toThrow(/image: the header claims 40×24 px .* over the limit of 0\.00050 MP/);
    await expect(decodeImage(png, { maxPixels: Number.NaN })).rejects.toThrow('maxPixels: expected a pixel count ≥ 1, got NaN');
  });
  it('an unsupported format (GIF) names the formats that are supported', async () => {
    const gif = await sharp(rgb8(W, H), { raw: { width: W, height: H, channels: 3 } }).gif().toBuffer();
    const f = file('anim.gif', gif);
    await expect(decodeImage(f)).rejects.toThrow(`${f}: GIF images are not supported; expected JPEG, PNG, TIFF or WebP`);
  });
  it('random bytes', async () => {
    const f = file('noise.png', Buffer.from(Array.from({ length: 512 }, (_, i) => (i * 131 + 7) % 256)));
    await expect(decodeImage(f)).rejects.toThrow(`${f}: is not an image glowprint can read (despite its .png name); expected JPEG, PNG, TIFF or WebP`);
  });
});

function escape(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

describe('decodeImageStaged(input, options) — the full decode with a 1/8-scale preview alongside', () => {
  const always = (): boolean => true;
  /** A smooth RGB pattern (JPEG-friendly) with one 8 × 8 block (5, 3) at 255 in every channel and a 24 × 24 one at (10..12, 8..10). */
  function smooth(w: number, h: number): Uint8Array {
    const px = new Uint8Array(w * h * 3);
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++) {
        const i = (y * w + x) * 3;
        px[i] = Math.round((200 * x) / w);
        px[i + 1] = Math.round(30 + (180 * y) / h);
        px[i + 2] = Math.round(120 + 60 * Math.sin(x / 40) * Math.cos(y / 30));
      }
    }
    const white = (x0: number, y0: number, size: number): void => {
      for (let y = y0; y < Math.min(h, y0 + size); y++) px.fill(255, (y * w + x0) * 3, (y * w + Math.min(w, x0 + size)) * 3);
    };
    white(40, 24, 8);
    white(80, 64, 24);
    return px;
  }

  /**
   * What libvips makes of a 1/8 resize with shrink-on-load (measured, sharp 0.34): the decoder's 1/4 DCT scaling (means
   * of 4 × 4 px) and a 2× linear reduce, weights 1:3:3:1 over the four 4-px cells across each 8-px block and its
   * neighbours (edges replicated). Computed here from the full decode's codes of channel c.
   */
  function previewModel(codes: Uint8Array, w: number, h: number, c: number): Float64Array {
    const cell = (X: number, Y: number): number => {
      const x0 = 4 * Math.min(w / 4 - 1, Math.max(0, X));
      const y0 = 4 * Math.min(h / 4 - 1, Math.max(0, Y));
      let sum = 0;
      for (let y = 0; y < 4; y++) for (let x = 0; x < 4; x++) sum += codes[((y0 + y) * w + x0 + x) * 3 + c];
      return sum / 16;
    };
    const tap = [1 / 8, 3 / 8, 3 / 8, 1 / 8];
    const out = new Float64Array((w / 8) * (h / 8));
    for (let Y = 0; Y < h / 8; Y++) {
      for (let X = 0; X < w / 8; X++) {
        let v = 0;
        for (let a = 0; a < 4; a++) for (let b = 0; b < 4; b++) v += tap[a] * tap[b] * cell(2 * X - 1 + b, 2 * Y - 1 + a);
        out[Y * (w / 8) + X] = v;
      }
    }
    return out;
  }

  /** Largest |preview − model| over channel c, in codes (the preview's linear values sRGB-encoded back). */
  function worstCodeError(preview: { width: number; height: number; data: Float32Array }, full: Uint8Array, w: number, h: number, c: number): number {
    const model = previewModel(full, w, h, c);
    let worst = 0;
    for (let k = 0; k < model.length; k++) worst = Math.max(worst, Math.abs(255 * srgbEncode(preview.data[k * 3 + c]) - model[k]));
    return worst;
  }

  it('an 8-bit JPEG with sides in multiples of 8: each preview pixel is a mean centred on its 8 × 8 block, in linear light, clipped where the whole mean is', async () => {
    const w = 320;
    const h = 240;
    // Full-resolution chroma (4:4:4), so that every channel follows the model; with 4:2:0 the colour is coarser.
    const jpg = await sharp(smooth(w, h), { raw: { width: w, height: h, channels: 3 } }).jpeg({ quality: 95, chromaSubsampling: '4:4:4' }).toBuffer();
    const staged = await decodeImageStaged(jpg, { wantPreview: always });
    const preview = (await staged.preview)!;
    const full = await staged.decoded;
    expect(preview.scale).toBe(8);
    expect([preview.image.width, preview.image.height, preview.image.channels]).toEqual([w / 8, h / 8, 3]);
    // The full decode is decodeImage's, code for code.
    expect(Buffer.from(full.image.codes!).equals(Buffer.from((await decodeImage(jpg)).image.codes!))).toBe(true);
    // Within 2 codes of the model (the decoders' rounding).
    for (let c = 0; c < 3; c++) expect(worstCodeError(preview.image, full.image.codes as Uint8Array, w, h, c)).toBeLessThanOrEqual(2);
    // Clipped: the centre of the 24-px white square (its mean covers white only); not the lone 8-px block, whose
    // mean takes in its neighbours.
    const pw = w / 8;
    expect(preview.image.saturated![9 * pw + 11]).toBe(1);
    expect(preview.image.saturated![3 * pw + 5]).toBe(0);
    expect(preview.image.data[3 * pw + 5]).toBeGreaterThan(0.2); // about 56 % white, 44 % dark background
    expect(preview.image.data[3 * pw + 5]).toBeLessThan(0.9);
  });

  it('gives no preview (null) unless wanted, for PNG, for sides that are not multiples of 8, and with a dark frame', async () => {
    const px = smooth(320, 240);
    const jpg = await sharp(px, { raw: { width: 320, height: 240, channels: 3 } }).jpeg().toBuffer();
    expect(await (await decodeImageStaged(jpg)).preview).toBeNull();
    const png = await sharp(px, { raw: { width: 320, height: 240, channels: 3 } }).png().toBuffer();
    expect(await (await decodeImageStaged(png, { wantPreview: always })).preview).toBeNull();
    const odd = await sharp(px, { raw: { width: 320, height: 240, channels: 3 } }).extract({ left: 0, top: 0, width: 316, height: 240 }).jpeg().toBuffer();
    expect(await (await decodeImageStaged(odd, { wantPreview: always })).preview).toBeNull();
    const withDark = await decodeImageStaged(jpg, { wantPreview: always, dark: jpg });
    expect(await withDark.preview).toBeNull();
    expect((await withDark.decoded).widthPx).toBe(320);
  });

  it('the preview is upright under every EXIF orientation (1–8), block for block like the full decode', async () => {
    const w = 128;
    const h = 96;
    const px = smooth(w, h);
    for (let orientation = 1; orientation <= 8; orientation++) {
      const jpg = await sharp(px, { raw: { width: w, height: h, channels: 3 } }).jpeg({ quality: 100, chromaSubsampling: '4:4:4' }).withMetadata({ orientation }).toBuffer();
      const staged = await decodeImageStaged(jpg, { wantPreview: always });
      const p = (await staged.preview)!;
      const full = (await staged.decoded).image;
      expect([p.image.width, p.image.height]).toEqual([full.width / 8, full.height / 8]);
      expect(worstCodeError(p.image, full.codes as Uint8Array, full.width, full.height, 0), `orientation ${orientation}`).toBeLessThanOrEqual(2);
    }
  });

  it('a truncated JPEG: the full decode rejects with the damage message; the preview resolves to null', async () => {
    const jpg = await sharp(smooth(320, 240), { raw: { width: 320, height: 240, channels: 3 } }).jpeg().toBuffer();
    const f = file('cut-staged.jpg', jpg.subarray(0, Math.floor(jpg.length / 2)));
    const staged = await decodeImageStaged(f, { wantPreview: always });
    expect(await staged.preview).toBeNull();
    await expect(staged.decoded).rejects.toThrow(`${f}: the JPEG data is damaged or cut short`);
    // Asked for rows instead, the same: the preview reads the whole file, so the caller goes the whole way.
    const byRows = await decodeImageStaged(f, { wantPreview: always, rowsAfterPreview: true });
    expect(await byRows.preview).toBeNull();
    await expect(byRows.decoded).rejects.toThrow(`${f}: the JPEG data is damaged or cut short`);
  });

  it('rowsAfterPreview: rows(from, to) are the full decode’s rows code for code, in a photo-sized row window whose data cannot be read', async () => {
    const w = 320;
    const h = 240;
    const jpg = await sharp(smooth(w, h), { raw: { width: w, height: h, channels: 3 } }).jpeg({ quality: 90 }).withMetadata({ orientation: 1 }).toBuffer();
    const whole = (await decodeImage(jpg)).image.codes!;
    const staged = await decodeImageStaged(jpg, { wantPreview: always, rowsAfterPreview: true });
    expect(staged.rows).toBeTypeOf('function');
    expect((await staged.preview)!.scale).toBe(8);
    // Windows starting on and off the 8- and 16-row MCU boundaries, and reaching the last row (4:2:0 chroma upsampling
    // reads the neighbouring rows: the crop is taken after it, so the codes must not change).
    for (const [from, to] of [[0, 40], [13, 101], [16, 32], [97, 240], [238, 240]]) {
      const d = await staged.rows!(from, to);
      expect([d.widthPx, d.heightPx, d.image.width, d.image.height, d.bitDepth, d.format]).toEqual([w, h, w, h, 8, 'jpeg']);
      expect((d.image as { rowWindow?: unknown }).rowWindow).toEqual({ firstRowPx: from, rowCount: to - from });
      expect(Buffer.from(d.image.codes!).equals(Buffer.from(whole.subarray(from * w * 3, to * w * 3))), `rows ${from}–${to}`).toBe(true);
      expect(() => d.image.data).toThrow(/only rows .* were decoded/);
    }
    await expect(staged.rows!(-1, 20)).rejects.toThrow(/rows/);
    await expect(staged.rows!(10, 241)).rejects.toThrow(/rows/);
    // The whole photo is still there when asked for (decoded on first read).
    expect(Buffer.from((await staged.decoded).image.codes!).equals(Buffer.from(whole))).toBe(true);
  });

  it('narrowRowWindow(decoded, from, to): rows inside a decoded window are what rows(from, to) decodes, byte for byte, sharing its codes; rows outside it are refused', async () => {
    const w = 320;
    const h = 240;
    const jpg = await sharp(smooth(w, h), { raw: { width: w, height: h, channels: 3 } }).jpeg({ quality: 90 }).toBuffer();
    const staged = await decodeImageStaged(jpg, { wantPreview: always, rowsAfterPreview: true });
    const wide = await staged.rows!(24, 200);
    for (const [from, to] of [[24, 200], [30, 101], [198, 200]]) {
      const narrow = narrowRowWindow(wide, from, to);
      const direct = await staged.rows!(from, to);
      expect((narrow.image as { rowWindow?: unknown }).rowWindow).toEqual({ firstRowPx: from, rowCount: to - from });
      expect(Buffer.from(narrow.image.codes!).equals(Buffer.from(direct.image.codes!)), `rows ${from}–${to}`).toBe(true);
      expect(narrow.image.codes!.buffer).toBe(wide.image.codes!.buffer);
      expect([narrow.widthPx, narrow.heightPx, narrow.image.width, narrow.image.height]).toEqual([w, h, w, h]);
      expect(() => narrow.image.data).toThrow(/only rows .* were decoded/);
    }
    expect(() => narrowRowWindow(wide, 20, 100)).toThrow(/rows.*24–200.*20–100/);
    expect(() => narrowRowWindow(wide, 150, 201)).toThrow(/rows/);
    const whole = await decodeImage(jpg);
    expect(() => narrowRowWindow(whole, 10, 20)).toThrow(/rows/);
  });

  it('rowsAfterPreview offers no rows without a preview, nor for a photo stored turned (EXIF orientation 6), whose rows are not stored rows', async () => {
    const px = smooth(320, 240);
    const jpg = await sharp(px, { raw: { width: 320, height: 240, channels: 3 } }).jpeg().toBuffer();
    expect((await decodeImageStaged(jpg, { rowsAfterPreview: true })).rows).toBeUndefined();
    const png = await sharp(px, { raw: { width: 320, height: 240, channels: 3 } }).png().toBuffer();
    expect((await decodeImageStaged(png, { wantPreview: always, rowsAfterPreview: true })).rows).toBeUndefined();
    const turned = await sharp(px, { raw: { width: 320, height: 240, channels: 3 } }).jpeg().withMetadata({ orientation: 6 }).toBuffer();
    const staged = await decodeImageStaged(turned, { wantPreview: always, rowsAfterPreview: true });
    expect(staged.rows).toBeUndefined();
    expect((await staged.preview)!.image.width).toBe(30);
    expect((await staged.decoded).widthPx).toBe(240);
  });
});
