/**
 * The page's live path, in Node (no browser needed): the preview extraction against the renderer's ground truth and
 * against the core's capture path, frame averaging against averaging the frames themselves, the pixel conversion and
 * the band edits the overlay makes.
 */
import { describe, expect, it } from 'vitest';
import { renderSpectroscopePhoto, encodeSrgb8 } from '../../src/core/render/index.js';
import { bandPointPx } from '../../src/core/spectrum/band/frame.js';
import { extractSpectrum } from '../../src/core/spectrum/extract.js';
import { findPeaks } from '../../src/core/spectrum/peaks/index.js';
import type { BandGeometry } from '../../src/core/types.js';
import { SRGB_DECODE_LUT_8 } from '../../src/core/units/srgb.js';
import { loadAllListedLines } from '../../src/io/lineList.js';
import { linearImageFromSrgb8, rgbaToRgb } from '../../web/src/decode/linearImage.js';
import { bandCrop, bandInCrop, dragBandEdge, dragBandEnd } from '../../web/src/live/bandGeometry.js';
import { FrameAverager } from '../../web/src/live/frameAverager.js';
import { extractLiveSpectrum, finishLiveSpectrum, liveHalfWidthPx, liveSpectrum } from '../../web/src/live/liveSpectrum.js';
import { SpectrumAverager } from '../../web/src/live/spectrumAverager.js';

const W = 960;
const H = 360;

/** A neon tube through the demo rig's grating, rendered by the project's renderer with its ground truth. */
function neonFrame(seed: number) {
  const lines = loadAllListedLines()
    .filter((l) => l.spectrum === 'Ne I' && l.wavelengthNm > 380 && l.wavelengthNm < 900)
    .map((l) => ({ wavelengthNm: l.wavelengthNm, intensity: l.intensity, species: l.spectrum }));
  return renderSpectroscopePhoto({
    widthPx: W,
    heightPx: H,
    source: { lines },
    camera: { focal: { kind: 'px', focalLengthPx: 2000 }, cameraAngleDeg: 33.5 },
    band: { angleDeg: 1.5, slantDeg: 0.5, offsetPx: 0, heightPx: 70, rangeNm: [400, 700] },
    exposure: { kind: 'brightestPeak', fractionOfFullWell: 0.8 },
    seed,
  });
}

function rgba(codes: Uint8Array): Uint8ClampedArray {
  const out = new Uint8ClampedArray((codes.length / 3) * 4);
  for (let p = 0, i = 0, o = 0; i < codes.length; p++) {
    out[o++] = codes[i++];
    out[o++] = codes[i++];
    out[o++] = codes[i++];
    out[o++] = 255;
  }
  return out;
}

describe('liveSpectrum(image, band): the preview of one frame', () => {
  const photo = neonFrame(11);
  const band = photo.truth.band;
  const codes = encodeSrgb8(photo.image);
  const image = linearImageFromSrgb8(codes, W, H);
  const live = liveSpectrum(image, band);

  it('marks the rendered lines where the renderer put them (within 0.5 px of the truth, one marker each)', () => {
    const truth = photo.truth.lines.filter((l) => l.order === 1 && l.inFrame && l.positionPx > 5 && l.positionPx < band.lengthPx - 5);
    // Isolated, clearly visible lines: no other rendered line within 4 px, peak signal ≥ 400 e⁻.
    const clear = truth.filter((l) => l.peakElectrons >= 400 && !truth.some((m) => m !== l && Math.abs(m.positionPx - l.positionPx) < 4 && m.peakElectrons > 0.1 * l.peakElectrons));
    expect(clear.length).toBeGreaterThanOrEqual(8);
    for (const l of clear) {
      const d = Math.min(...live.peaks.map((p) => Math.abs(p.positionPx - l.positionPx)));
      expect(d).toBeLessThanOrEqual(0.5);
    }
    // No marker far from every rendered line (order +1 or a neighbouring order's).
    const all = photo.truth.lines.map((l) => l.positionPx);
    for (const p of live.peaks) expect(Math.min(...all.map((x) => Math.abs(x - p.positionPx)))).toBeLessThanOrEqual(3);
  });

  it('matches the capture path: the line fluxes follow the optimal extraction within 10 %', () => {
    const full = extractSpectrum(image, band).spectrum;
    const peaks = findPeaks(full).filter((p) => p.snr > 50 && !p.blended && !p.saturated);
    expect(peaks.length).toBeGreaterThanOrEqual(5);
    for (const p of peaks) {
      const i = Math.round(p.positionPx);
      const sum = (y: Float64Array): number => y[i - 1] + y[i] + y[i + 1];
      expect(Math.abs(sum(live.intensity) / sum(full.intensity) - 1)).toBeLessThanOrEqual(0.1);
    }
  });

  it('reads the same on the crop around the band as on the whole frame', () => {
    const crop = bandCrop(band, liveHalfWidthPx(band), W, H)!;
    const cropped = liveSpectrum(linearImageFromSrgb8(rgbaToRgb(rgba(codes), W, H, crop), crop.width, crop.height), bandInCrop(band, crop));
    expect(cropped.intensity.length).toBe(live.intensity.length);
    for (let i = 0; i < live.intensity.length; i++) expect(Math.abs(cropped.intensity[i] - live.intensity[i])).toBeLessThanOrEqual(1e-9 * (1 + Math.abs(live.intensity[i])));
  });
});

describe('SpectrumAverager: averaging box spectra equals the box spectrum of the averaged frames', () => {
  it('mean of 4 noisy frames, both ways, within float rounding; noise falls about as 1/√4', () => {
    const frames = [21, 22, 23, 24].map((s) => encodeSrgb8(neonFrame(s).image));
    const band: BandGeometry = neonFrame(21).truth.band;
    const spectra = new SpectrumAverager();
    spectra.setWindow(4);
    const pixels = new FrameAverager();
    pixels.setWindow(4);
    let mean = null;
    const single = finishLiveSpectrum(extractLiveSpectrum(linearImageFromSrgb8(frames[0], W, H), band));
    const singleNoise = single.noise;
    for (const f of frames) {
      mean = spectra.push(extractLiveSpectrum(linearImageFromSrgb8(f, W, H), band));
      pixels.push(f, W, H);
    }
    const viaSpectra = finishLiveSpectrum(mean!);
    const viaPixels = liveSpectrum(pixels.mean()!, band);
    const scale = Math.max(...viaPixels.intensity);
    for (let i = 0; i < viaPixels.intensity.length; i++) expect(Math.abs(viaSpectra.intensity[i] - viaPixels.intensity[i])).toBeLessThanOrEqual(1e-5 * scale);
    // The DER_SNR noise of the mean is near σ/2 (√4 frames); 0.35–0.75 allows for the estimator's own scatter.
    expect(viaSpectra.noise / singleNoise).toBeGreaterThanOrEqual(0.35);
    expect(viaSpectra.noise / singleNoise).toBeLessThanOrEqual(0.75);
  });

  it('the pixel mean is in linear light (a mean of sRGB codes would bias it)', () => {
    const a = new Uint8Array([0, 0, 0, 255, 255, 255]);
    const b = new Uint8Array([255, 255, 255, 255, 255, 255]);
    const avg = new FrameAverager();
    avg.setWindow(2);
    avg.push(a, 2, 1);
    avg.push(b, 2, 1);
    const m = avg.mean()!;
    // (0 + 1)/2 = 0.5 in linear light; the code mean 127.5 would decode to about 0.21 (IEC 61966-2-1).
    expect(m.data[0]).toBe(0.5);
    expect(m.data[3]).toBe(1);
    expect(Array.from(m.saturated!)).toEqual([1, 1]);
    expect(SRGB_DECODE_LUT_8[128]).toBeLessThan(0.22);
  });
});

describe('band edits of the overlay', () => {
  const band: BandGeometry = { angleDeg: 10, slantDeg: 2, center: { x: 400, y: 300 }, lengthPx: 500, heightPx: 60 };

  it('dragBandEnd(band, "end", p) keeps the start fixed and puts the end on p', () => {
    const start = bandPointPx(band, 0, 0);
    const moved = dragBandEnd(band, 'end', { x: 800, y: 420 });
    const s = bandPointPx(moved, 0, 0);
    const e = bandPointPx(moved, moved.lengthPx, 0);
    expect(Math.hypot(s.x - start.x, s.y - start.y)).toBeLessThanOrEqual(1e-9);
    expect(Math.hypot(e.x - 800, e.y - 420)).toBeLessThanOrEqual(1e-9);
    expect(moved.slantDeg).toBe(2);
  });

  it('dragBandEdge(band, p) makes the height twice the distance of p from the centre line', () => {
    const p = bandPointPx(band, 100, 45);
    expect(Math.abs(dragBandEdge(band, p).heightPx - 90)).toBeLessThanOrEqual(1e-9);
  });

  it('rgbaToRgb(rgba, w, h, rect) copies the rectangle, channel order kept, alpha dropped', () => {
    const src = new Uint8ClampedArray(4 * 4 * 3);
    for (let i = 0; i < src.length; i++) src[i] = i % 251;
    const out = rgbaToRgb(src, 4, 3, { x: 1, y: 1, width: 2, height: 2 });
    const expected: number[] = [];
    for (const [x, y] of [
      [1, 1],
      [2, 1],
      [1, 2],
      [2, 2],
    ]) {
      const i = (y * 4 + x) * 4;
      expected.push(src[i], src[i + 1], src[i + 2]);
    }
    expect(Array.from(out)).toEqual(expected);
    expect(() => rgbaToRgb(src, 4, 3, { x: 3, y: 0, width: 2, height: 1 })).toThrow(/rect: expected a rectangle inside 4×3/);
  });
});
