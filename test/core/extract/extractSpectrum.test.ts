import { describe, expect, it } from 'vitest';
import { InputError } from '../../../src/core/errors.js';
import { EXTRACT_LIVE_OPTIONS, extractSampledBand, extractSpectrum, extractionHalfWidthPx } from '../../../src/core/spectrum/extract.js';
import { sampleBand } from '../../../src/core/spectrum/sampleBand.js';
import type { BandGeometry, LinearImage } from '../../../src/core/types.js';
import { srgbDecodeTable } from '../../../src/core/units/srgb.js';
import { colourAt, renderBandImage } from '../../helpers/bandImage.js';
import { gaussianCentre, median } from './lineCentres.js';

const band = (over: Partial<BandGeometry> = {}): BandGeometry => ({
  angleDeg: 8.4,
  slantDeg: 3,
  center: { x: 300.4, y: 200.3 },
  lengthPx: 440,
  heightPx: 40,
  ...over,
});

/** Per-column variance across seeds, averaged over columns [from, to). */
function scatterAcrossSeeds(runs: Float64Array[], from: number, to: number): number {
  let total = 0;
  for (let i = from; i < to; i++) {
    let m = 0;
    for (const r of runs) m += r[i];
    m /= runs.length;
    let v = 0;
    for (const r of runs) v += (r[i] - m) ** 2;
    total += v / (runs.length - 1);
  }
  return total / (to - from);
}

function meanOf(v: Float64Array, from: number, to: number): number {
  let s = 0;
  for (let i = from; i < to; i++) s += v[i];
  return s / (to - from);
}

describe('extractSpectrum(image, band, options)', () => {
  it('recovers the flux of a noiseless line: Σ f = A·σ√(2π)·H (Gaussian integral), gradient removed', () => {
    // Gaussian integral ∫ A exp(−x²/2σ²) dx = A σ √(2π) (textbook); a top-hat of height H with erf edges integrates to
    // H across the band. The channel mean of the line's colour weights scales A.
    const b = band();
    const line = { positionPx: 220, amplitude: 0.4, rgb: [0.9, 0.6, 0.3] as [number, number, number] };
    const sigma = 2;
    const { image } = renderBandImage({
      width: 600,
      height: 400,
      band: b,
      lines: [line],
      lineSigmaPx: sigma,
      ambient: { level: 0.05, perPxX: 4e-5, perPxY: -3e-5 },
      supersample: 1,
    });
    const x = extractSpectrum(image, b);
    const s = x.spectrum;
    const expected = ((0.9 + 0.6 + 0.3) / 3) * line.amplitude * sigma * Math.sqrt(2 * Math.PI) * b.heightPx;
    let sum = 0;
    for (let i = 200; i <= 240; i++) sum += s.intensity[i];
    expect(Math.abs(sum / expected - 1)).toBeLessThanOrEqual(0.01);
    // Off the line the background (a linear gradient) is gone to 1e-4 of the line's peak column.
    const peakColumn = s.intensity[220];
    expect(Math.abs(meanOf(s.intensity, 20, 150)) / peakColumn).toBeLessThanOrEqual(1e-4);
    // The red channel carries 0.9/0.6 of the green one's flux.
    const r = s.channels!.r;
    const g = s.channels!.g;
    let sr = 0;
    let sg = 0;
    for (let i = 200; i <= 240; i++) {
      sr += r[i];
      sg += g[i];
    }
    expect(Math.abs(sr / sg - 1.5)).toBeLessThanOrEqual(0.005);
    expect(x.diagnostics.backgroundSides).toEqual({ negative: true, positive: true });
  });

  it('puts lines of a tilted, slanted band at their true positions (median error ≤ 0.02 px)', () => {
    const b = band({ angleDeg: -13.7, slantDeg: -4.2, heightPx: 60 });
    const lines = Array.from({ length: 9 }, (_, k) => ({ positionPx: 30 + k * 47.1, amplitude: 0.1 + 0.05 * (k % 3) }));
    const { image } = renderBandImage({
      width: 600,
      height: 420,
      band: b,
      lines,
      lineSigmaPx: 1.7,
      ambient: { level: 0.04 },
      noise: { gain: 3000, readNoise: 0.003 },
      seed: 4,
    });
    const s = extractSpectrum(image, b).spectrum;
    const errors = lines.map((l) => gaussianCentre(s.positionPx, s.intensity, l.positionPx, 1.7) - l.positionPx);
    expect(median(errors.map(Math.abs))).toBeLessThanOrEqual(0.02);
    expect(Math.max(...errors.map(Math.abs))).toBeLessThanOrEqual(0.06);
  });

  it('beats the box sum on a noisy Gaussian-profile band by the ratio Horne (1986) predicts, with honest variances', () => {
    // Horne 1986 (PASP 98, 609): var f_opt = 1/Σ P²/V. For a constant V the box sum over M rows has variance M V, so
    // var_box / var_opt = M Σ P² with P the profile normalised over the M rows. Read-noise-dominated case.
    const b = band({ angleDeg: 12.3, slantDeg: 2, heightPx: 30 });
    const margin = 30;
    const opts = { objectMarginPx: margin };
    const runs: Float64Array[] = [];
    const boxes: Float64Array[] = [];
    let predicted = 0;
    let predictedBox = 0;
    let rows: Float64Array | null = null;
    const seeds = 12;
    for (let seed = 1; seed <= seeds; seed++) {
      const { image } = renderBandImage({
        width: 600,
        height: 400,
        band: b,
        lines: [],
        crossProfile: 'gaussian',
        continuum: () => 0.05,
        continuumRgb: [1, 1, 1],
        ambient: { level: 0.03, perPxY: 1e-4 },
        noise: { gain: 1e7, readNoise: 0.01 },
        seed,
      });
      const x = extractSpectrum(image, b, opts);
      runs.push(x.spectrum.intensity);
      boxes.push(x.box.intensity);
      predicted += meanOf(x.spectrum.variance, 50, 390);
      predictedBox += meanOf(x.box.variance, 50, 390);
      rows = x.diagnostics.profile.offsetPx;
    }
    const opt = scatterAcrossSeeds(runs, 50, 390);
    const box = scatterAcrossSeeds(boxes, 50, 390);
    // Theory: Gaussian profile with FWHM = heightPx over the object rows.
    const sd = b.heightPx / (2 * Math.sqrt(2 * Math.LN2));
    const p = Array.from(rows!, (q) => Math.exp(-0.5 * (q / sd) ** 2));
    const sp = p.reduce((a, v) => a + v, 0);
    const ratioTheory = p.length * p.reduce((a, v) => a + (v / sp) ** 2, 0);
    expect(box / opt).toBeGreaterThanOrEqual(1.5);
    expect(Math.abs(box / opt / ratioTheory - 1)).toBeLessThanOrEqual(0.2);
    // The reported variances agree with the scatter across seeds (12 seeds: ±10 % from sampling alone).
    expect(Math.abs(predicted / seeds / opt - 1)).toBeLessThanOrEqual(0.25);
    expect(Math.abs(predictedBox / seeds / box - 1)).toBeLessThanOrEqual(0.25);
  });

  it('masks cosmic-ray hits: the optimal spectrum stays within 6σ of the clean one while the box sum shows them', () => {
    const b = band({ angleDeg: 4, heightPx: 50 });
    const spec = {
      width: 600,
      height: 400,
      band: b,
      lines: [{ positionPx: 200, amplitude: 0.2 }],
      ambient: { level: 0.05 },
      noise: { gain: 5000, readNoise: 0.002 },
      seed: 9,
    };
    const clean = extractSpectrum(renderBandImage(spec).image, b);
    const hit = extractSpectrum(renderBandImage({ ...spec, cosmics: 25 }).image, b);
    let worstOpt = 0;
    let worstBox = 0;
    for (let i = 0; i < clean.spectrum.intensity.length; i++) {
      const sd = Math.sqrt(clean.spectrum.variance[i]);
      worstOpt = Math.max(worstOpt, Math.abs(hit.spectrum.intensity[i] - clean.spectrum.intensity[i]) / sd);
      worstBox = Math.max(worstBox, Math.abs(hit.box.intensity[i] - clean.box.intensity[i]) / sd);
    }
    expect(hit.diagnostics.rejectedPixels).toBeGreaterThanOrEqual(15);
    expect(worstBox).toBeGreaterThan(20);
    expect(worstOpt).toBeLessThanOrEqual(6);
  });

  it('flags the samples of clipped lines as saturated and no others', () => {
    const b = band({ angleDeg: -6, heightPx: 40 });
    const lines = [
      { positionPx: 80, amplitude: 0.3 },
      { positionPx: 180, amplitude: 2.5 },
      { positionPx: 280, amplitude: 0.5 },
      { positionPx: 360, amplitude: 4 },
    ];
    const { image, lineSaturated } = renderBandImage({ width: 600, height: 400, band: b, lines, ambient: { level: 0.03 }, noise: { gain: 3000, readNoise: 0.002 }, seed: 2 });
    expect(lineSaturated).toEqual([false, true, false, true]);
    const s = extractSpectrum(image, b).spectrum;
    const near = (p: number): boolean => lines.some((l, k) => lineSaturated[k] && Math.abs(p - l.positionPx) <= 8);
    for (let i = 0; i < s.positionPx.length; i++) {
      if (s.saturated[i]) expect(near(s.positionPx[i])).toBe(true);
    }
    for (const k of [1, 3]) expect(s.saturated[lines[k].positionPx]).toBe(1);
    for (const k of [0, 2]) expect(s.saturated[lines[k].positionPx]).toBe(0);
  });

  it('reads 8-bit codes through their table without touching data, and agrees with the Float32 path', () => {
    const b = band({ angleDeg: 21, slantDeg: -2 });
    const spec = { width: 600, height: 420, band: b, lines: [{ positionPx: 150, amplitude: 0.5 }, { positionPx: 300, amplitude: 1.5 }], ambient: { level: 0.02 }, noise: { gain: 4000, readNoise: 0.002 }, seed: 3 };
    const coded = renderBandImage({ ...spec, codes8: true }).image; // its data/saturated getters throw
    const a = extractSpectrum(coded, b);
    // The same pixels as Float32 with clip flags.
    const table = srgbDecodeTable(255);
    const codes = coded.codes!;
    const data = new Float32Array(codes.length);
    const saturated = new Uint8Array(codes.length / 3);
    for (let k = 0; k < codes.length; k++) {
      data[k] = table[codes[k]];
      if (codes[k] === 255) saturated[Math.floor(k / 3)] = 1;
    }
    const plain: LinearImage = { width: coded.width, height: coded.height, channels: 3, data, saturated };
    const c = extractSpectrum(plain, b);
    for (let i = 0; i < a.spectrum.intensity.length; i++) {
      expect(Math.abs(a.spectrum.intensity[i] - c.spectrum.intensity[i])).toBeLessThanOrEqual(1e-9 + 1e-6 * Math.abs(c.spectrum.intensity[i]));
      expect(a.spectrum.saturated[i]).toBe(c.spectrum.saturated[i]);
    }
    expect(a.spectrum.saturated[300]).toBe(1);
  });

  it('extractSampledBand on a reused buffer gives the same spectrum (the live path)', () => {
    const b = band();
    const { image } = renderBandImage({ width: 600, height: 400, band: b, lines: [{ positionPx: 100, amplitude: 0.3 }], ambient: { level: 0.03 }, noise: { gain: 3000, readNoise: 0.002 }, seed: 5 });
    const first = extractSpectrum(image, b);
    const buffer = sampleBand(image, b, { halfWidthPx: extractionHalfWidthPx(b) });
    const again = sampleBand(image, b, { halfWidthPx: extractionHalfWidthPx(b), out: buffer });
    expect(again).toBe(buffer);
    const live = extractSampledBand(again, b);
    expect(Array.from(live.spectrum.intensity)).toEqual(Array.from(first.spectrum.intensity));
    // The one-pass live setting agrees with the full extraction to within the noise where there is no outlier.
    const quick = extractSampledBand(again, b, EXTRACT_LIVE_OPTIONS);
    for (let i = 0; i < first.spectrum.intensity.length; i++) {
      const sd = Math.sqrt(first.spectrum.variance[i]);
      expect(Math.abs(quick.spectrum.intensity[i] - first.spectrum.intensity[i])).toBeLessThanOrEqual(0.5 * sd);
    }
  });

  it('warns and reports infinite variance where the band leaves the image', () => {
    const b = band({ center: { x: 560, y: 200 }, angleDeg: 0 });
    const { image } = renderBandImage({ width: 600, height: 400, band: b, lines: [], ambient: { level: 0.03 }, noise: { gain: 3000, readNoise: 0.002 }, seed: 6 });
    const x = extractSpectrum(image, b);
    const outside = Array.from(x.spectrum.variance).filter((v) => v === Infinity).length;
    // Start at x = 340; the image ends at x = 599: positions 260 … 440 are outside.
    expect(Math.abs(outside - 180)).toBeLessThanOrEqual(1);
    expect(x.warnings.some((w) => w.includes('outside the image'))).toBe(true);
  });

  it('rejects a bad band geometry with a message naming the field', () => {
    const { image } = renderBandImage({ width: 64, height: 64, band: band({ center: { x: 32, y: 32 }, lengthPx: 40, heightPx: 10 }), lines: [] });
    expect(() => extractSpectrum(image, band({ angleDeg: Number.NaN }))).toThrow(InputError);
    expect(() => extractSpectrum(image, band({ angleDeg: Number.NaN }))).toThrow(/band\.angleDeg: expected a finite number, got NaN/);
    expect(() => extractSpectrum(image, band({ heightPx: 0 }))).toThrow(/band\.heightPx/);
    expect(() => extractSpectrum(image, band(), { gain: -1 })).toThrow(/gain/);
  });

  it('colourAt (the test synthesiser) puts blue before red', () => {
    expect(colourAt(0)[2]).toBeGreaterThan(colourAt(0)[0]);
    expect(colourAt(1)[0]).toBeGreaterThan(colourAt(1)[2]);
  });
});
