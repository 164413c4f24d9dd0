/**
 * Row windows (src/core/spectrum/band/rowWindow.ts): a photo of which only the band's rows were decoded must give the
 * whole photo's band and spectrum to the bit, or refuse (RowWindowMiss) so that the caller decodes the whole photo.
 */
import { describe, expect, it } from 'vitest';
import { decimate } from '../../../src/core/spectrum/band/decimate.js';
import { bandRows, RowWindowMiss } from '../../../src/core/spectrum/band/rowWindow.js';
import { extractSpectrum } from '../../../src/core/spectrum/extract.js';
import { FIND_BAND_DEFAULTS, findBand, searchBandCoarse } from '../../../src/core/spectrum/findBand.js';
import { sampleBand } from '../../../src/core/spectrum/sampleBand.js';
import type { BandGeometry, LinearImage } from '../../../src/core/types.js';
import { windowedImageFromCodes } from '../../../src/io/image.js';
import { renderBandImage } from '../../helpers/bandImage.js';

/** The same values to the bit (byte comparison: toEqual on 10⁵-sample arrays takes seconds). */
function sameBits(a: ArrayLike<number> & { buffer: ArrayBufferLike; byteOffset: number; byteLength: number }, b: typeof a): boolean {
  return Buffer.from(a.buffer, a.byteOffset, a.byteLength).equals(Buffer.from(b.buffer, b.byteOffset, b.byteLength));
}

/** Rows [from, to) of an image held as codes, as the decoder's row window of it. */
function windowOf(image: LinearImage, from: number, to: number): LinearImage {
  const { width, height, channels, codes, codeToLinear } = image;
  const row = width * channels;
  return windowedImageFromCodes({ width, height, channels, codes: codes!.slice(from * row, to * row), codeToLinear: codeToLinear! }, from, to - from);
}

const truth: BandGeometry = { angleDeg: -9, slantDeg: 3, center: { x: 700.4, y: 402.7 }, lengthPx: 900, heightPx: 70 };
const { image } = renderBandImage({
  width: 1400,
  height: 1000,
  channels: 3,
  band: truth,
  lines: Array.from({ length: 11 }, (_, k) => ({ positionPx: 50 + k * 78.1 + 5 * Math.sin(k), amplitude: 0.08 + 0.07 * (k % 3) })),
  lineSigmaPx: 1.6,
  codes8: true,
  ambient: { level: 0.03, perPxX: 2e-5, perPxY: -1e-5 },
  noise: { gain: 4000, readNoise: 0.002 },
  seed: 41,
});
const factor = Math.ceil(1400 / FIND_BAND_DEFAULTS.coarseMaxSidePx);
const coarse = searchBandCoarse(decimate(image, factor, FIND_BAND_DEFAULTS.saturationLevel), 1400, 1000);

describe('bandRows(band, memberEnds, heightPx, options)', () => {
  it('covers the band’s parallelogram by ±(2 H + 48 px) across and 48 px beyond its ends, inside the photo', () => {
    const band: BandGeometry = { angleDeg: 0, slantDeg: 0, center: { x: 500, y: 400 }, lengthPx: 600, heightPx: 50 };
    // Level band: rows 400 ± (2·50 + 48) = 252 … 548, one row and a bilinear neighbour more on each side.
    expect(bandRows(band, [], 1000)).toEqual({ fromPx: 251, toPx: 550 });
    expect(bandRows(band, [], 500)).toEqual({ fromPx: 251, toPx: 500 });
    // Tilted by 10°: the ends 348 px either side of the centre rise and fall by 348·sin 10° = 60.4 px more.
    const tilted = bandRows({ ...band, angleDeg: 10 }, [], 1000);
    const half = 348 * Math.sin((10 * Math.PI) / 180) + 148 * Math.cos((10 * Math.PI) / 180);
    expect(tilted).toEqual({ fromPx: Math.floor(400 - half) - 1, toPx: Math.ceil(400 + half) + 2 });
    // Members beyond the band's ends lengthen it.
    const longer = bandRows(band, [{ x: 1000, y: 400 }], 1000);
    expect(longer).toEqual({ fromPx: 251, toPx: 550 }); // level: the rows stay
    const reach = bandRows({ ...band, angleDeg: 10 }, [{ x: 500 + 500 * Math.cos(0.1745329), y: 400 + 500 * Math.sin(0.1745329) }], 1000);
    expect(reach.toPx).toBeGreaterThan(tilted.toPx + 20);
  });
});

describe('sampleBand / findBand / extractSpectrum on a row window', () => {
  const rows = bandRows(coarse.band, coarse.coarse.memberEnds, 1000);

  it('a window of the coarse band’s rows (bandRows) is a part of the photo, not all of it', () => {
    expect(rows.fromPx).toBeGreaterThan(0);
    expect(rows.toPx).toBeLessThan(1000);
  });

  it('sampleBand inside the window: the whole photo’s samples to the bit, RGB and combined', () => {
    const w = windowOf(image, rows.fromPx, rows.toPx);
    for (const options of [{}, { combine: true, flagSaturated: false, rowStepPx: 1.7 }]) {
      const a = sampleBand(w, truth, options);
      const b = sampleBand(image, truth, options);
      expect(a.planes.length).toBe(b.planes.length);
      a.planes.forEach((p, c) => expect(sameBits(p, b.planes[c]), `plane ${c}`).toBe(true));
      expect(sameBits(a.valid, b.valid)).toBe(true);
      expect(sameBits(a.saturated, b.saturated)).toBe(true);
      expect(a.outsideCount).toBe(b.outsideCount);
    }
  });

  it('findBand with the coarse search and extractSpectrum: the whole photo’s band and spectrum to the bit', () => {
    const w = windowOf(image, rows.fromPx, rows.toPx);
    const a = findBand(w, { coarse });
    const b = findBand(image, { coarse });
    expect(a.band).toEqual(b.band);
    expect(a.warnings).toEqual(b.warnings);
    const sa = extractSpectrum(w, a.band, a.extraction).spectrum;
    const sb = extractSpectrum(image, b.band, b.extraction).spectrum;
    expect(sameBits(sa.intensity, sb.intensity)).toBe(true);
    expect(sameBits(sa.variance, sb.variance)).toBe(true);
    expect(sameBits(sa.saturated, sb.saturated)).toBe(true);
  });

  it('throws RowWindowMiss, naming the row, when the band needs a row outside the window (and decimate always, for it reads every row)', () => {
    const tight = windowOf(image, 380, 420);
    expect(() => sampleBand(tight, truth)).toThrow(RowWindowMiss);
    expect(() => findBand(tight, { coarse })).toThrow(RowWindowMiss);
    expect(() => extractSpectrum(tight, truth)).toThrow(/row \d+ lies outside the decoded rows 380–419/);
    expect(() => decimate(windowOf(image, rows.fromPx, rows.toPx), factor, 0.999)).toThrow(RowWindowMiss);
    // A band wholly inside the window does not.
    const small: BandGeometry = { angleDeg: 0, slantDeg: 0, center: { x: 700, y: 400 }, lengthPx: 300, heightPx: 20 };
    expect(sampleBand(tight, small).outsideCount).toBe(0);
    expect(sameBits(sampleBand(tight, small).planes[1], sampleBand(image, small).planes[1])).toBe(true);
  });

  it('samples outside the photo stay outside (valid 0), as on the whole photo, when the window reaches the photo’s edge', () => {
    const edge: BandGeometry = { angleDeg: 0, slantDeg: 0, center: { x: 700, y: 985 }, lengthPx: 400, heightPx: 40 };
    const w = windowOf(image, 900, 1000);
    const a = sampleBand(w, edge);
    const b = sampleBand(image, edge);
    expect(a.outsideCount).toBeGreaterThan(0);
    expect(a.outsideCount).toBe(b.outsideCount);
    expect(sameBits(a.valid, b.valid)).toBe(true);
    a.planes.forEach((p, c) => expect(sameBits(p, b.planes[c]), `plane ${c}`).toBe(true));
  });
});
