import { describe, expect, it } from 'vitest';
import { InputError } from '../../../src/core/errors.js';
import { extractSpectrum } from '../../../src/core/spectrum/extract.js';
import { findBand } from '../../../src/core/spectrum/findBand.js';
import type { BandGeometry, LinearImage } from '../../../src/core/types.js';
import { renderBandImage } from '../../helpers/bandImage.js';
import { median } from '../extract/lineCentres.js';
import { angleErrorDeg, linePositionErrors, offCentreLinePx } from './recovery.js';

interface Case {
  name: string;
  angle: number;
  slant: number;
  height: number;
  sigma: number;
  zeroOrder?: boolean;
  grey?: boolean;
  codes?: boolean;
}

// Tilts −15…15° in both directions of dispersion (angle + 180°), slants ±5°, heights 20–500 px, blur σ 1.2–4 px; each
// photo has an ambient gradient, a glow off the axis, cosmic-ray hits, shot and read noise.
const CASES: Case[] = [
  { name: 'tilt −15°, slant +5°, 20 px high, sharp', angle: -15, slant: 5, height: 20, sigma: 1.2 },
  { name: 'tilt +15°, slant −5°, 500 px high', angle: 15, slant: -5, height: 500, sigma: 2.5 },
  { name: 'tilt 3.3° reversed, blurred (σ 4 px)', angle: 183.3, slant: 0, height: 60, sigma: 4 },
  { name: 'tilt −7° reversed, slant 2.5°, 120 px high', angle: 173, slant: 2.5, height: 120, sigma: 1.6 },
  { name: 'level, with a zero-order spot on the axis', angle: 0, slant: -3, height: 40, sigma: 1.5, zeroOrder: true },
  { name: 'grey image, tilt 11°, 200 px high', angle: 11, slant: 4, height: 200, sigma: 2, grey: true },
  { name: '8-bit sRGB codes, tilt −12°', angle: -12, slant: -1.5, height: 80, sigma: 1.8, codes: true },
];

describe('findBand(image, options)', () => {
  let seed = 10;
  it.each(CASES)('$name: angle ≤ 0.1°, centre ≤ 1 px, height ≤ 5 %, line positions median ≤ 0.1 px', (c) => {
    const truth: BandGeometry = { angleDeg: c.angle, slantDeg: c.slant, center: { x: 640.3, y: 359.6 }, lengthPx: 800, heightPx: c.height };
    const lines = Array.from({ length: 12 }, (_, k) => ({ positionPx: 40 + k * 65.3 + 7 * Math.sin(k), amplitude: 0.06 + 0.06 * (k % 4) }));
    const a = (c.angle * Math.PI) / 180;
    const { image, linePoints } = renderBandImage({
      width: 1280,
      height: 720,
      channels: c.grey ? 1 : 3,
      band: truth,
      lines,
      lineSigmaPx: c.sigma,
      codes8: c.codes,
      ambient: { level: 0.03, perPxX: 2e-5, perPxY: -1e-5 },
      zeroOrder: c.zeroOrder ? { center: { x: 640 - 520 * Math.cos(a), y: 360 - 520 * Math.sin(a) }, sigmaPx: 6, amplitude: 2 } : undefined,
      glows: [{ center: { x: 1150, y: 90 }, sigmaPx: 50, amplitude: 0.04 }],
      noise: { gain: 4000, readNoise: 0.002 },
      cosmics: 30,
      seed: seed++,
    });
    const found = findBand(image);
    const b = found.band;
    expect(b.angleDeg > -90 && b.angleDeg <= 90).toBe(true);
    expect(Math.abs(angleErrorDeg(b.angleDeg, c.angle))).toBeLessThanOrEqual(0.1);
    expect(Math.abs(offCentreLinePx(truth, b.center))).toBeLessThanOrEqual(1);
    expect(Math.abs(b.heightPx - c.height)).toBeLessThanOrEqual(Math.max(2, 0.05 * c.height));
    // The slant within 1° (short bands measure it least well).
    expect(Math.abs(b.slantDeg - c.slant)).toBeLessThanOrEqual(1);
    // Every line lies inside the band, none is cut.
    expect(b.lengthPx).toBeGreaterThanOrEqual(730);
    const x = extractSpectrum(image, b, found.extraction);
    const errors = linePositionErrors(truth, b, x.spectrum, linePoints, c.sigma);
    expect(median(errors.map(Math.abs))).toBeLessThanOrEqual(0.1);
    expect(found.warnings.some((w) => w.startsWith('zero order'))).toBe(c.zeroOrder === true);
  });

  it('throws "no spectrum found in <source>" for an all-black image and for flat noise', () => {
    const black: LinearImage = { width: 320, height: 240, channels: 3, data: new Float32Array(320 * 240 * 3) };
    expect(() => findBand(black, { source: 'dark.jpg' })).toThrow(InputError);
    expect(() => findBand(black, { source: 'dark.jpg' })).toThrow(/^no spectrum found in dark\.jpg/);
    const { image } = renderBandImage({
      width: 320,
      height: 240,
      band: { angleDeg: 0, slantDeg: 0, center: { x: 160, y: 120 }, lengthPx: 100, heightPx: 20 },
      lines: [],
      ambient: { level: 0.1, perPxX: 1e-4 },
      noise: { gain: 2000, readNoise: 0.003 },
      seed: 1,
    });
    expect(() => findBand(image)).toThrow(/^no spectrum found in the image/);
  });

  it('finds a continuum strip (no lines) by its colour gradient and says the slant is unmeasurable', () => {
    const truth: BandGeometry = { angleDeg: -9.5, slantDeg: 0, center: { x: 480, y: 300 }, lengthPx: 600, heightPx: 70 };
    const { image } = renderBandImage({
      width: 960,
      height: 600,
      band: truth,
      lines: [],
      continuum: (p) => (p > 0 && p < 600 ? 0.3 * Math.sin((Math.PI * p) / 600) : 0),
      ambient: { level: 0.03 },
      noise: { gain: 4000, readNoise: 0.002 },
      seed: 3,
    });
    const found = findBand(image);
    expect(found.diagnostics.rule).toBe('strip with a colour gradient');
    expect(Math.abs(angleErrorDeg(found.band.angleDeg, truth.angleDeg))).toBeLessThanOrEqual(0.1);
    expect(Math.abs(offCentreLinePx(truth, found.band.center))).toBeLessThanOrEqual(1);
    expect(Math.abs(found.band.heightPx - 70)).toBeLessThanOrEqual(3.5);
    // This continuum has kinks (where the synthetic colour's largest channel changes) that fix the slant loosely.
    expect(Math.abs(found.band.slantDeg)).toBeLessThanOrEqual(1);
    // A featureless grey strip: the slant cannot be measured, and findBand says so.
    const grey = renderBandImage({
      width: 960,
      height: 600,
      channels: 1,
      band: truth,
      lines: [],
      continuum: (p) => (p > 0 && p < 600 ? 0.3 * Math.sin((Math.PI * p) / 600) : 0),
      continuumRgb: [1, 1, 1],
      ambient: { level: 0.03 },
      noise: { gain: 4000, readNoise: 0.002 },
      seed: 3,
    });
    const plain = findBand(grey.image);
    expect(Math.abs(angleErrorDeg(plain.band.angleDeg, truth.angleDeg))).toBeLessThanOrEqual(0.1);
    expect(plain.band.slantDeg).toBe(0);
    expect(plain.warnings.some((w) => w.startsWith('slant'))).toBe(true);
  });

  it('takes the axis across a lone line image (a laser), not along it', () => {
    const truth: BandGeometry = { angleDeg: 6, slantDeg: 0, center: { x: 480, y: 300 }, lengthPx: 400, heightPx: 120 };
    const { image } = renderBandImage({
      width: 960,
      height: 600,
      band: truth,
      lines: [{ positionPx: 200, amplitude: 0.6, rgb: [1, 0.05, 0.02] }],
      lineSigmaPx: 2,
      ambient: { level: 0.03 },
      noise: { gain: 4000, readNoise: 0.002 },
      seed: 4,
    });
    const found = findBand(image);
    expect(found.diagnostics.rule).toBe('single line image');
    // One line fixes the axis only as the normal of the line image (slant unknowable, 0° assumed).
    expect(Math.abs(angleErrorDeg(found.band.angleDeg, truth.angleDeg))).toBeLessThanOrEqual(0.5);
  });

  it('flags saturated lines in the spectrum extracted along the found band', () => {
    const truth: BandGeometry = { angleDeg: 4.5, slantDeg: 1, center: { x: 480, y: 300 }, lengthPx: 700, heightPx: 50 };
    const lines = [
      { positionPx: 60, amplitude: 0.2 },
      { positionPx: 200, amplitude: 3 },
      { positionPx: 330, amplitude: 0.3 },
      { positionPx: 470, amplitude: 5 },
      { positionPx: 610, amplitude: 0.25 },
    ];
    const { image, lineSaturated } = renderBandImage({
      width: 960,
      height: 600,
      band: truth,
      lines,
      ambient: { level: 0.03 },
      noise: { gain: 4000, readNoise: 0.002 },
      seed: 5,
    });
    const found = findBand(image);
    const x = extractSpectrum(image, found.band, found.extraction);
    const s = x.spectrum;
    const near = (k: number): boolean => {
      const start = found.band.center.x - (found.band.lengthPx / 2) * Math.cos((found.band.angleDeg * Math.PI) / 180);
      const guess = (truth.center.x - (truth.lengthPx / 2) * Math.cos((4.5 * Math.PI) / 180) + lines[k].positionPx * Math.cos((4.5 * Math.PI) / 180) - start) / Math.cos((found.band.angleDeg * Math.PI) / 180);
      let any = false;
      for (let i = 0; i < s.positionPx.length; i++) if (Math.abs(s.positionPx[i] - guess) <= 4 && s.saturated[i]) any = true;
      return any;
    };
    expect(lineSaturated).toEqual([false, true, false, true, false]);
    expect(lines.map((_, k) => near(k))).toEqual(lineSaturated);
  });
});
