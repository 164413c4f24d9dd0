/**
 * `window.__glowprintBench(options)`: the live path's cost per 1280×720 frame, measured in this page (bench/browser.ts
 * drives it in headless Chromium for `npm run bench`). A frame is rendered once by the project's renderer
 * (src/core/render, a neon tube through a 1000 lines/mm grating), its band found once, and then each timed frame does
 * exactly what the live loop does after reading the pixels: the band's crop RGBA → RGB codes, sampling, box
 * extraction with background, and the peak search. The floor, measured in the same run, is the browser reading the
 * same frame off a canvas (getImageData of 1280×720), which no live pipeline can avoid.
 */
import { findBand } from '../../src/core/spectrum/findBand.js';
import type { BandGeometry } from '../../src/core/types.js';
import { analyseImage } from './analysis/pipeline.js';
import { lampCatalog } from './data/catalog.js';
import { linearImageFromSrgb8, rgbaToRgb } from './decode/linearImage.js';
import { bandCrop, bandInCrop } from './live/bandGeometry.js';
import { FrameAverager } from './live/frameAverager.js';
import { extractLiveSpectrum, finishLiveSpectrum, liveHalfWidthPx, type LiveWorkspace } from './live/liveSpectrum.js';
import { SpectrumAverager } from './live/spectrumAverager.js';

export interface BenchOptions {
  /** Timed frames. @default 300 */
  frames?: number;
  widthPx?: number;
  heightPx?: number;
}

export interface BenchResult {
  frameWidthPx: number;
  frameHeightPx: number;
  frames: number;
  band: BandGeometry;
  peaks: number;
  /** Live path per frame (ms): median, 90th percentile, mean over blocks of 10 frames. */
  medianMs: number;
  p90Ms: number;
  meanMs: number;
  /** The same with an 8-frame running mean. */
  averagedMedianMs: number;
  /** getImageData of the whole frame (ms, median): the floor. */
  floorMedianMs: number;
  /** One findBand on the frame (ms). */
  findBandMs: number;
  /** One capture: optimal extraction + Gaussian peak fits (ms). */
  captureMs: number;
  captureSamples: number;
  targetMs: number;
}

function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : 0.5 * (s[s.length / 2 - 1] + s[s.length / 2]);
}

function quantile(v: number[], q: number): number {
  const s = [...v].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor(q * s.length))];
}

export async function runLiveBench(options: BenchOptions = {}): Promise<BenchResult> {
  const frames = options.frames ?? 300;
  const W = options.widthPx ?? 1280;
  const H = options.heightPx ?? 720;
  const { renderSpectroscopePhoto, encodeSrgb8 } = await import('../../src/core/render/index.js');
  const lines = lampCatalog()
    .lines.filter((l) => l.spectrum === 'Ne I' && l.wavelengthNm > 380 && l.wavelengthNm < 900)
    .map((l) => ({ wavelengthNm: l.wavelengthNm, intensity: l.intensity, species: l.spectrum }));
  const photo = renderSpectroscopePhoto({
    widthPx: W,
    heightPx: H,
    source: { lines },
    // A long focal length (a webcam zoomed in, or a phone at 2×): the band then spans most of the 1280-px width, the
    // worst case for the per-frame work.
    camera: { focal: { kind: 'px', focalLengthPx: 3000 }, cameraAngleDeg: 33.5 },
    band: { angleDeg: 1.8, slantDeg: 0.7, offsetPx: 0, heightPx: 90, rangeNm: [400, 700] },
    seed: 7,
  });
  const codes = encodeSrgb8(photo.image);
  const rgba = new Uint8ClampedArray(W * H * 4);
  for (let p = 0, i = 0, o = 0; p < W * H; p++) {
    rgba[o++] = codes[i++];
    rgba[o++] = codes[i++];
    rgba[o++] = codes[i++];
    rgba[o++] = 255;
  }
  const full = linearImageFromSrgb8(codes, W, H);
  let t = performance.now();
  const band = findBand(full).band;
  const findBandMs = performance.now() - t;

  // The floor: the browser hands a frame's pixels to script.
  const canvas = document.createElement('canvas');
  canvas.width = W;
  canvas.height = H;
  const ctx = canvas.getContext('2d', { willReadFrequently: true })!;
  ctx.putImageData(new ImageData(rgba, W, H), 0, 0);

  const crop = bandCrop(band, liveHalfWidthPx(band), W, H)!;
  const local = bandInCrop(band, crop);
  const ws: LiveWorkspace = {};
  let buf: Uint8Array | undefined;
  const frames8 = new FrameAverager();
  const spectra8 = new SpectrumAverager();
  frames8.setWindow(8);
  spectra8.setWindow(8);
  // Exactly the live loop's steps after getImageData (web/src/panels/cameraSource.ts onFrame).
  const oneFrame = (average: boolean): number => {
    buf = rgbaToRgb(rgba, W, H, crop, buf);
    const one = extractLiveSpectrum(linearImageFromSrgb8(buf, crop.width, crop.height), local, {}, ws);
    if (average) frames8.push(buf, crop.width, crop.height);
    return finishLiveSpectrum(average ? spectra8.push(one) : one).peaks.length;
  };
  for (let k = 0; k < 30; k++) {
    oneFrame(false);
    oneFrame(true);
    ctx.getImageData(0, 0, W, H);
  }
  const live: number[] = [];
  const averaged: number[] = [];
  const floor: number[] = [];
  let peaks = 0;
  // Blocks of frames, timed together: the page's clock is coarsened (to 0.1 ms without cross-origin isolation), too
  // coarse for one frame. Interleaved, so that other load on the machine falls on all three alike.
  const BLOCK = 10;
  for (let k = 0; k < Math.ceil(frames / BLOCK); k++) {
    t = performance.now();
    for (let j = 0; j < BLOCK; j++) ctx.getImageData(0, 0, W, H);
    floor.push((performance.now() - t) / BLOCK);
    t = performance.now();
    for (let j = 0; j < BLOCK; j++) peaks = oneFrame(false);
    live.push((performance.now() - t) / BLOCK);
    t = performance.now();
    for (let j = 0; j < BLOCK; j++) oneFrame(true);
    averaged.push((performance.now() - t) / BLOCK);
    if (k % 5 === 4) await new Promise((r) => setTimeout(r, 0));
  }
  t = performance.now();
  const capture = analyseImage(linearImageFromSrgb8(rgbaToRgb(rgba, W, H, crop), crop.width, crop.height), {
    sourceName: 'bench frame',
    kind: 'camera',
    band,
    origin: { x: crop.x, y: crop.y },
    frame: { widthPx: W, heightPx: H },
  });
  const captureMs = performance.now() - t;
  return {
    frameWidthPx: W,
    frameHeightPx: H,
    frames: live.length * BLOCK,
    band,
    peaks,
    medianMs: median(live),
    p90Ms: quantile(live, 0.9),
    meanMs: live.reduce((a, b) => a + b, 0) / live.length,
    averagedMedianMs: median(averaged),
    floorMedianMs: median(floor),
    findBandMs,
    captureMs,
    captureSamples: capture.spectrum.intensity.length,
    targetMs: 4,
  };
}

export function installBench(): void {
  (window as unknown as { __glowprintBench: typeof runLiveBench }).__glowprintBench = runLiveBench;
}
