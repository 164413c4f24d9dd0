/**
 * The coarse band search on a decoder's 1/8-scale preview (io decodeImageStaged + decimatePreview + searchBandCoarse),
 * which `glowprint spectrum` runs on large JPEGs before it decodes only the band's rows: the band it leads to must be
 * the one the search on the photo itself finds, and as right against the renderer's truth.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { renderSpectroscopePhoto } from '../../../src/core/render/index.js';
import { decimatePreview } from '../../../src/core/spectrum/band/decimate.js';
import { BAND_ROWS_DEFAULTS } from '../../../src/core/spectrum/band/rowWindow.js';
import { bandPointPx } from '../../../src/core/spectrum/band/frame.js';
import { extractSpectrum } from '../../../src/core/spectrum/extract.js';
import { FIND_BAND_DEFAULTS, findBand, previewSuitsSearch, searchBandCoarse } from '../../../src/core/spectrum/findBand.js';
import { findPeaks } from '../../../src/core/spectrum/peaks/index.js';
import type { BandGeometry, LinearImage, PointPx } from '../../../src/core/types.js';
import { decodeImageStaged } from '../../../src/io/image.js';
import { encodeRenderedPhoto } from '../../../src/io/writeRenderedPhoto.js';
import { analyseSpectrumInput } from '../../../src/tasks/spectrum.js';
import { median } from '../extract/lineCentres.js';
import { angleErrorDeg, offCentreLinePx } from './recovery.js';

describe('previewSuitsSearch(widthPx, heightPx, scale)', () => {
  it('takes a 1/8 preview where its coarse blocks are at most 4/3 of findBand’s own (3201–5120 px, 7681–8533 px long sides)', () => {
    // findBand's own block: ⌈long side / 640⌉ px; the preview's: 8·⌈⌈long side / 8⌉ / 640⌉ px.
    expect(previewSuitsSearch(1920, 1080, 8)).toBe(false); // 3 px vs 8
    expect(previewSuitsSearch(3200, 2400, 8)).toBe(false); // 5 vs 8
    expect(previewSuitsSearch(3264, 2448, 8)).toBe(true); // 6 vs 8
    expect(previewSuitsSearch(3024, 4032, 8)).toBe(true); // 7 vs 8 (portrait)
    expect(previewSuitsSearch(5120, 3840, 8)).toBe(true); // 8 vs 8
    expect(previewSuitsSearch(6000, 4000, 8)).toBe(false); // 10 vs 16
    expect(previewSuitsSearch(8000, 6000, 8)).toBe(true); // 13 vs 16
  });
});

describe('findBand(image, { coarse: searchBandCoarse(decimatePreview(preview)) })', () => {
  it('rejects a coarse image or a coarse search of another size, naming both', () => {
    const preview: LinearImage = { width: 50, height: 40, channels: 1, data: new Float32Array(2000) };
    expect(() => decimatePreview(preview, 8, 4000, 3000, 640, 0.999)).toThrow(/preview.*500 × 375 px.*50 × 40/);
    const dec = decimatePreview(preview, 8, 400, 320, 640, 0.999);
    expect(() => searchBandCoarse({ ...dec, width: 49 }, 400, 320)).toThrow(/coarse image.*50 × 40.*49 × 40/);
  });

  it('averages a preview longer than coarseMaxSidePx further: an 8000 × 6000 photo’s 1000 × 750 preview becomes blocks of 16 px', () => {
    const w = 1000;
    const h = 750;
    const data = new Float32Array(w * h * 3);
    for (let k = 0; k < data.length; k++) data[k] = ((k * 7919) % 1000) / 1000;
    const saturated = new Uint8Array(w * h);
    saturated[0] = 1; // preview pixel (0, 0) clipped: a quarter of coarse block (0, 0)
    const dec = decimatePreview({ width: w, height: h, channels: 3, data, saturated }, 8, 8000, 6000, 640, 0.999);
    expect([dec.width, dec.height, dec.factor]).toEqual([500, 375, 16]);
    // Block (X, Y) is the mean of preview pixels (2X…2X+1, 2Y…2Y+1), channel by channel.
    for (const [X, Y, c] of [[0, 0, 0], [123, 45, 1], [499, 374, 2]]) {
      let sum = 0;
      for (let y = 2 * Y; y < 2 * Y + 2; y++) for (let x = 2 * X; x < 2 * X + 2; x++) sum += data[(y * w + x) * 3 + c];
      expect(Math.abs(dec.planes[c][Y * 500 + X] - sum / 4)).toBeLessThanOrEqual(1e-6);
    }
    expect(dec.clipped[0]).toBe(0.25);
    expect(dec.clipped[1]).toBe(0);
  });

  it(
    'on a rendered 4000 × 3000 JPEG (tilt −15°, slant +5°, 120 px): the same band as the search on the photo itself, within the rendered-photo tolerances of the truth, and what analyseSpectrumInput reports for the file',
    async () => {
      const source = {
        lines: Array.from({ length: 14 }, (_, k) => ({ wavelengthNm: 405 + 21.5 * k + 3 * Math.sin(k), intensity: k % 5 === 2 ? 6 : 1 + (k % 3) })),
      };
      const photo = renderSpectroscopePhoto({
        widthPx: 4000,
        heightPx: 3000,
        source,
        camera: { focal: { kind: '35mm', focalLength35mmMm: 26 }, cameraAngleDeg: 33 },
        band: { angleDeg: -15, slantDeg: 5, offsetPx: 0, heightPx: 120, rangeNm: [400, 700] },
        lineSpread: { sigmaPx: 2 },
        exposure: { kind: 'brightestPeak', fractionOfFullWell: 1.6 },
        seed: 11,
      });
      const jpeg = await encodeRenderedPhoto(photo.image, { format: { kind: 'jpeg', quality: 88 } });
      const staged = await decodeImageStaged(jpeg, { wantPreview: (w, h, scale) => previewSuitsSearch(w, h, scale) });
      const preview = (await staged.preview)!;
      expect(preview).not.toBeNull();
      const image = (await staged.decoded).image;
      const d = FIND_BAND_DEFAULTS;
      const dec = decimatePreview(preview.image, preview.scale, image.width, image.height, d.coarseMaxSidePx, d.saturationLevel);
      expect([dec.width, dec.height, dec.factor]).toEqual([500, 375, 8]);
      const viaPreview = findBand(image, { coarse: searchBandCoarse(dec, image.width, image.height) });
      const direct = findBand(image);
      const a = viaPreview.band;
      const b = direct.band;
      // Agreement of the two searches (measured: 0.0008°, 0.04 px, 0.1 px, 2.8 px of 2345 on this photo).
      expect(Math.abs(angleErrorDeg(a.angleDeg, b.angleDeg))).toBeLessThanOrEqual(0.02);
      expect(Math.abs(offCentreLinePx(b, a.center))).toBeLessThanOrEqual(0.3);
      expect(Math.abs(a.heightPx - b.heightPx)).toBeLessThanOrEqual(1);
      expect(Math.abs(a.slantDeg - b.slantDeg)).toBeLessThanOrEqual(0.05);
      expect(Math.abs(a.lengthPx - b.lengthPx)).toBeLessThanOrEqual(0.01 * b.lengthPx);
      expect(viaPreview.diagnostics.zeroOrder !== null).toBe(direct.diagnostics.zeroOrder !== null);
      // Against the truth, the tolerances of test/core/band/renderedPhotos.test.ts.
      const truth = photo.truth;
      expect(Math.abs(angleErrorDeg(a.angleDeg, truth.band.angleDeg))).toBeLessThanOrEqual(0.1);
      expect(Math.abs(offCentreLinePx(truth.band, a.center))).toBeLessThanOrEqual(1);
      expect(Math.abs(a.heightPx - truth.band.heightPx)).toBeLessThanOrEqual(Math.max(2, 0.03 * truth.band.heightPx));
      const errors = lineErrors(image, a, viaPreview.extraction, truth.band, truth.lines);
      expect(errors.length).toBeGreaterThanOrEqual(5);
      expect(median(errors)).toBeLessThanOrEqual(0.1);
      // The spectrum task takes this path for the file (its stage 'coarse' runs on the preview, then only the band's
      // rows are decoded) and gives this band and this spectrum, to the bit.
      const dir = mkdtempSync(path.join(tmpdir(), 'glowprint-preview-'));
      try {
        const file = path.join(dir, 'large.jpg');
        writeFileSync(file, jpeg);
        const stages: string[] = [];
        const run = await analyseSpectrumInput(file, { onStage: (stage) => void stages.push(stage) });
        expect(stages).toEqual(['preview', 'coarse', 'rows', 'band', 'extract', 'peaks']);
        const t = run.analysis.band!;
        expect([t.angleDeg, t.slantDeg, t.center.x, t.center.y, t.lengthPx, t.heightPx]).toEqual([a.angleDeg, a.slantDeg, a.center.x, a.center.y, a.lengthPx, a.heightPx]);
        expect(Array.from(run.spectrum.intensity)).toEqual(Array.from(extractSpectrum(image, a, viaPreview.extraction).spectrum.intensity));
        // A manual band needs no search: no preview, the whole photo.
        stages.length = 0;
        await analyseSpectrumInput(file, { band: a, onStage: (stage) => void stages.push(stage) });
        expect(stages).toEqual(['decode', 'band', 'extract', 'peaks']);
        // Rows too few for the band (bandRows with no margins: the centre line's rows alone): the samplers miss, the
        // task decodes the whole photo and finds the same band, the same spectrum.
        const margins = BAND_ROWS_DEFAULTS as { heightMultiple: number; extraPx: number };
        const saved = { ...margins };
        Object.assign(margins, { heightMultiple: 0, extraPx: 0 });
        try {
          stages.length = 0;
          const again = await analyseSpectrumInput(file, { onStage: (stage) => void stages.push(stage) });
          expect(stages).toEqual(['preview', 'coarse', 'rows', 'rows-missed', 'decode', 'band', 'extract', 'peaks']);
          expect(again.analysis).toEqual(run.analysis);
          expect(Array.from(again.spectrum.intensity)).toEqual(Array.from(run.spectrum.intensity));
        } finally {
          Object.assign(margins, saved);
        }
      } finally {
        rmSync(dir, { recursive: true, force: true });
      }
    },
    120_000,
  );
});

/** |position error| (px along the true axis) of the unclipped in-frame lines found with SNR > 50. */
function lineErrors(
  image: LinearImage,
  band: BandGeometry,
  extraction: { objectMarginPx: number },
  truthBand: BandGeometry,
  lines: Array<{ imagePx: PointPx; inFrame: boolean; saturated: boolean }>,
): number[] {
  const peaks = findPeaks(extractSpectrum(image, band, extraction).spectrum);
  const t = (truthBand.angleDeg * Math.PI) / 180;
  const along = (p: PointPx, q: PointPx): number => (p.x - q.x) * Math.cos(t) + (p.y - q.y) * Math.sin(t);
  const out: number[] = [];
  for (const l of lines) {
    if (!l.inFrame || l.saturated) continue;
    let best: { d: number; snr: number } | null = null;
    for (const pk of peaks) {
      const d = along(bandPointPx(band, pk.positionPx), l.imagePx);
      if (Math.abs(d) <= 2 && (!best || Math.abs(d) < Math.abs(best.d))) best = { d, snr: pk.snr };
    }
    if (best && best.snr > 50) out.push(Math.abs(best.d));
  }
  return out;
}
