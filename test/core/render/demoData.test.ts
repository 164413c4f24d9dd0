import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { toSnakeCase } from '../../../src/core/json/toSnakeCase.js';
import { renderSpectroscopePhoto } from '../../../src/core/render/index.js';
import { DEMO_RIG, demoScenario, demoTruthEntry } from '../../../src/io/demoData.js';
import sharp from 'sharp';
import { decodeImage } from '../../../src/io/image.js';
import { encodeRenderedPhoto } from '../../../src/io/writeRenderedPhoto.js';
import { ROOT } from '../../helpers/runCli.js';

const DEMO = path.join(ROOT, 'data', 'demo');
const truth = JSON.parse(readFileSync(path.join(DEMO, 'truth.json'), 'utf8')) as {
  photos: { file: string; lines: { wavelength_nm: number; order: number; image_px: { x: number; y: number }; peak_electrons: number; saturated: boolean }[]; band: { angle_deg: number; height_px: number } }[];
};

/** Same rounding as the generator (10 significant digits). */
const round = (v: unknown): unknown => {
  if (typeof v === 'number') return Number.isInteger(v) ? v : Number(v.toPrecision(10));
  if (Array.isArray(v)) return v.map(round);
  if (v && typeof v === 'object') return Object.fromEntries(Object.entries(v).map(([k, x]) => [k, round(x)]));
  return v;
};

describe('data/demo (made by src/io/demoData.ts)', () => {
  const specs = demoScenario();

  it('holds one calibration photo and five tube photos, each with its truth', () => {
    expect(specs.filter((s) => s.role === 'calibration').length).toBe(1);
    expect(specs.filter((s) => s.role === 'tube').length).toBe(5);
    expect(truth.photos.map((p) => p.file)).toEqual(specs.map((s) => s.file));
  });

  it('truth.json is what the generator computes now (the files are not stale)', () => {
    // The truth does not depend on the noise, so a noiseless render reproduces it exactly.
    for (const spec of specs) {
      const photo = renderSpectroscopePhoto({ ...spec.render, sensor: { ...spec.render.sensor, noise: false } });
      const want = round(toSnakeCase(demoTruthEntry(spec, photo)));
      expect(
        truth.photos.find((p) => p.file === spec.file),
        `data/demo/${spec.file} is stale (line list, lamps or renderer changed): run npm run build && node dist/src/io/demoData.js`,
      ).toEqual(want);
    }
  });

  it('each JPEG is 1920 × 1080 with the EXIF facts of its truth entry and shows its lines where the truth says', async () => {
    for (const spec of specs) {
      const decoded = await decodeImage(path.join(DEMO, spec.file));
      expect([decoded.widthPx, decoded.heightPx]).toEqual([1920, 1080]);
      expect(decoded.exif.focalLength35mmMm).toBe(26);
      expect(decoded.exif.iso).toBe(spec.exif.isoSpeed);
      expect(Math.abs(decoded.exif.exposureTimeS! - spec.exif.exposureTimeS!)).toBeLessThanOrEqual(1e-9);
      const entry = truth.photos.find((p) => p.file === spec.file)!;
      const { image } = decoded;
      const at = (x: number, y: number): number => {
        const i = 3 * (Math.round(y) * image.width + Math.round(x));
        return image.data[i] + image.data[i + 1] + image.data[i + 2];
      };
      // The three brightest first-order lines: on their image point at least 3× brighter than the background just
      // outside the band (across it, beyond the source image's height).
      const a = (entry.band.angle_deg * Math.PI) / 180;
      const away = entry.band.height_px / 2 + 40;
      const top = entry.lines.filter((l) => l.order === 1).sort((p, q) => q.peak_electrons - p.peak_electrons).slice(0, 3);
      for (const l of top) {
        const on = at(l.image_px.x, l.image_px.y);
        const off = at(l.image_px.x - away * Math.sin(a), l.image_px.y + away * Math.cos(a));
        expect(on).toBeGreaterThan(3 * off);
      }
      // Lines the truth calls saturated reach (about) the top code in the photo.
      for (const l of entry.lines.filter((x) => x.saturated && x.order === 1)) {
        const i = Math.round(l.image_px.y) * image.width + Math.round(l.image_px.x);
        const near = [-1, 0, 1].some((dx) => {
          const j = 3 * (i + dx);
          return Math.max(image.data[j], image.data[j + 1], image.data[j + 2]) >= 0.9; // JPEG ringing may pull 255 down a little
        });
        expect(near).toBe(true);
      }
    }
  });

  it('the calibration photo is pixel for pixel what the generator renders now (±1 code after JPEG)', async () => {
    const spec = specs[0];
    const fresh = await encodeRenderedPhoto(renderSpectroscopePhoto(spec.render).image, {
      format: { kind: 'jpeg', quality: DEMO_RIG.jpegQuality },
      exif: spec.exif,
    });
    const [a, b] = await Promise.all([fresh, readFileSync(path.join(DEMO, spec.file))].map((buf) => sharp(buf).raw().toBuffer()));
    let worst = 0;
    for (let i = 0; i < a.length; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]));
    expect(worst, `data/demo/${spec.file} is stale: run npm run build && node dist/src/io/demoData.js`).toBeLessThanOrEqual(1);
  });
});
