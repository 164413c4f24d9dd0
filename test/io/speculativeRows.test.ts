/**
 * The guess of a large JPEG's band rows made on its preview before the coarse search has run
 * (guessBandRows, src/core/spectrum/band/rowWindow.ts): `glowprint spectrum` starts decoding those rows at once and keeps
 * them when they cover the rows the coarse band asks for (bandRows), so the guess must cover them on the photos the
 * band search is made for, without taking much of the photo more, and say nothing when nothing stands out.
 */
import { describe, expect, it } from 'vitest';
import { type Decimated, decimate } from '../../src/core/spectrum/band/decimate.js';
import { bandRows, guessBandRows } from '../../src/core/spectrum/band/rowWindow.js';
import { FIND_BAND_DEFAULTS, searchBandCoarse } from '../../src/core/spectrum/findBand.js';
import type { BandGeometry, LinearImage } from '../../src/core/types.js';
import { type BandImageSpec, renderBandImage } from '../helpers/bandImage.js';

const W = 2000;
const H = 1500;
/** Blocks of 4 px: a 500 × 375 coarse image, the size of a 4000 × 3000 JPEG's 1/8 preview. */
const FACTOR = 4;

interface Case {
  name: string;
  band: BandGeometry;
  extra?: Partial<BandImageSpec>;
}

const level = { level: 0.04, perPxX: 1.5e-5, perPxY: -2e-5 };
const cases: Case[] = [
  { name: 'level, 60 px', band: { angleDeg: 0, slantDeg: 0, center: { x: 1000, y: 750 }, lengthPx: 1500, heightPx: 60 } },
  { name: 'tilt +15°, 20 px', band: { angleDeg: 15, slantDeg: -3, center: { x: 1100, y: 700 }, lengthPx: 1300, heightPx: 20 } },
  { name: 'tilt −15°, 120 px, zero order', band: { angleDeg: -15, slantDeg: 4, center: { x: 1100, y: 800 }, lengthPx: 1200, heightPx: 120 } },
  { name: 'tilt +6°, 240 px, continuum', band: { angleDeg: 6, slantDeg: 1, center: { x: 950, y: 600 }, lengthPx: 1400, heightPx: 240 } },
  { name: 'tilt −3°, 80 px, off-axis glow', band: { angleDeg: -3, slantDeg: 0, center: { x: 1000, y: 1050 }, lengthPx: 1000, heightPx: 80 } },
];

function render(c: Case) {
  const lines = Array.from({ length: 9 }, (_, k) => ({ positionPx: 60 + (k * (c.band.lengthPx - 120)) / 8, amplitude: 0.15 + 0.1 * (k % 3) }));
  const a = (c.band.angleDeg * Math.PI) / 180;
  const start = { x: c.band.center.x - (c.band.lengthPx / 2) * Math.cos(a), y: c.band.center.y - (c.band.lengthPx / 2) * Math.sin(a) };
  const extra: Partial<BandImageSpec> =
    c.name.includes('zero order')
      ? { zeroOrder: { center: { x: start.x - 250 * Math.cos(a), y: start.y - 250 * Math.sin(a) }, sigmaPx: 6, amplitude: 0.9 } }
      : c.name.includes('continuum')
        ? { continuum: (p) => 0.05 + 0.1 * Math.sin((Math.PI * p) / c.band.lengthPx) }
        : c.name.includes('glow')
          ? { glows: [{ center: { x: 450, y: 350 }, sigmaPx: 120, amplitude: 0.1 }] }
          : {};
  return renderBandImage({
    width: W,
    height: H,
    band: c.band,
    lines,
    lineSigmaPx: 2,
    crossProfile: 'gaussian',
    ambient: level,
    noise: { gain: 3000, readNoise: 0.003 },
    seed: 3 + c.band.heightPx,
    ...extra,
  }).image;
}

/** The decimated planes as one interleaved RGB image, the form of a decoder's preview. */
function interleaved(dec: Decimated): LinearImage {
  const n = dec.width * dec.height;
  const data = new Float32Array(3 * n);
  for (let i = 0; i < n; i++) for (let c = 0; c < 3; c++) data[3 * i + c] = dec.planes[c][i];
  return { width: dec.width, height: dec.height, channels: 3, data };
}

describe('guessBandRows(image, factor, heightPx, options)', () => {
  for (const c of cases) {
    it(`covers the rows bandRows asks for after the coarse search, and at most ~1.7× as many (${c.name})`, () => {
      const dec = decimate(render(c), FACTOR, FIND_BAND_DEFAULTS.saturationLevel);
      const guess = guessBandRows(interleaved(dec), dec.factor, H);
      let exact: { fromPx: number; toPx: number } | undefined;
      searchBandCoarse(dec, W, H, { onComponents: (coarse) => void (exact = bandRows(coarse.band, coarse.memberEnds, H)) });
      expect(guess).not.toBeNull();
      expect(exact).toBeDefined();
      expect(guess!.fromPx).toBeLessThanOrEqual(exact!.fromPx);
      expect(guess!.toPx).toBeGreaterThanOrEqual(exact!.toPx);
      // Generous margins cost little (~0.012 ms a row kept, measured on a 12-MP JPEG), but not the whole photo.
      expect(guess!.toPx - guess!.fromPx).toBeLessThanOrEqual(1.7 * (exact!.toPx - exact!.fromPx) + 160);
      expect(guess!.toPx - guess!.fromPx).toBeLessThan(H);
    });
  }

  it('says nothing (null) for a photo of ambient light and noise only, or too small to cut into strips', () => {
    const blank = renderBandImage({
      width: W,
      height: H,
      band: cases[0].band,
      lines: [],
      ambient: level,
      noise: { gain: 3000, readNoise: 0.003 },
      seed: 5,
    }).image;
    const dec = decimate(blank, FACTOR, FIND_BAND_DEFAULTS.saturationLevel);
    expect(guessBandRows(interleaved(dec), dec.factor, H)).toBeNull();
    expect(guessBandRows({ width: 7, height: 5, channels: 1, data: new Float32Array(35) }, 8, 40)).toBeNull();
  });
});
