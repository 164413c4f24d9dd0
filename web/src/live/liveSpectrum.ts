/**
 * The live path: one camera frame → a preview spectrum and its peak markers, fast enough for every frame (the budget
 * is 4 ms for a 1280×720 frame; `npm run bench` measures it in Chromium).
 *
 * It is the core's band sampler (sampleBand, bilinear, following the slanted line images) on a sparse grid of rows,
 * then Horne's "standard spectrum" — the box sum of the object rows less a background taken from off-band strips on
 * both sides — per colour channel, then the core's scipy-style peak search (findPeakIndices) with the DER_SNR noise
 * (robustNoise) and a three-point Gaussian centre. What it leaves out, for speed, is what the capture path
 * (analysis/pipeline.ts: extractSpectrum's optimal weights, noise model and outlier rejection, findPeaks' Gaussian
 * fits and uncertainties) adds: the preview is for aiming, focusing and exposing; numbers come from a capture.
 */
import { findPeakIndices, gaussianOffset, parabolicOffset, robustNoise } from '../../../src/core/spectrum/peaks/index.js';
import { type SampledBand, sampleBand } from '../../../src/core/spectrum/sampleBand.js';
import type { BandGeometry, LinearImage } from '../../../src/core/types.js';

export interface LiveSpectrumOptions {
  /** Rows sampled across the object part of the band; the row step is heightPx / this. @default 14 */
  objectRows?: number;
  /** Gap between object rows and background strips (px). @default 3 */
  backgroundGapPx?: number;
  /** Width of each background strip (px); 'auto' = 0.3 × heightPx within 8…40 px (as the capture path). @default 'auto' */
  backgroundWidthPx?: number | 'auto';
  /** Peak threshold in noise σ (prominence and height). @default 6 */
  thresholdSigma?: number;
  /** At most this many peak markers (the most prominent). @default 40 */
  maxPeaks?: number;
}

export const LIVE_SPECTRUM_DEFAULTS = {
  objectRows: 14,
  backgroundGapPx: 3,
  backgroundWidthPx: 'auto',
  thresholdSigma: 6,
  maxPeaks: 40,
} as const satisfies Required<LiveSpectrumOptions>;

export interface LivePeak {
  /** Centre along the band (px), three-point Gaussian estimate. */
  positionPx: number;
  /** Height above the background (same units as the intensity). */
  height: number;
  prominence: number;
  saturated: boolean;
}

export interface LiveSpectrum {
  positionPx: Float64Array;
  /** Channel mean (R+G+B)/3, summed across the band (linear units × px). */
  intensity: Float64Array;
  channels: { r: Float64Array; g: Float64Array; b: Float64Array } | null;
  /** 1 where a contributing pixel is clipped. */
  saturated: Uint8Array;
  /** Per-sample noise σ of `intensity` (DER_SNR). */
  noise: number;
  peaks: LivePeak[];
  /** Largest linear pixel value inside the object rows (1 = clipped): the exposure meter. */
  peakLevel: number;
  saturatedSamples: number;
}

/** Buffers kept between frames so that the live loop allocates nothing once the band stops changing. */
export interface LiveWorkspace {
  sampled?: SampledBand;
  out?: LiveSpectrum;
}

/** Object half-width as the capture path takes it ('auto' margin 3 + 0.15 × heightPx beyond ±heightPx/2). */
export function objectHalfWidthPx(band: BandGeometry): number {
  return band.heightPx / 2 + 3 + 0.15 * band.heightPx;
}

/** How far the live path reads across the band (px either side of the centre line). */
export function liveHalfWidthPx(band: BandGeometry, options: LiveSpectrumOptions = {}): number {
  const gap = options.backgroundGapPx ?? LIVE_SPECTRUM_DEFAULTS.backgroundGapPx;
  return objectHalfWidthPx(band) + gap + backgroundWidth(band, options);
}

function backgroundWidth(band: BandGeometry, options: LiveSpectrumOptions): number {
  const w = options.backgroundWidthPx ?? LIVE_SPECTRUM_DEFAULTS.backgroundWidthPx;
  return w === 'auto' ? Math.min(40, Math.max(8, 0.3 * band.heightPx)) : w;
}

/** One frame → preview spectrum with peak markers. `image` may be a crop around the band. */
export function liveSpectrum(image: LinearImage, band: BandGeometry, options: LiveSpectrumOptions = {}, ws: LiveWorkspace = {}): LiveSpectrum {
  return finishLiveSpectrum(extractLiveSpectrum(image, band, options, ws), options);
}

/**
 * The box spectrum of one frame, without noise or peaks yet. It is linear in the pixel values (bilinear samples,
 * sums, strip means), so the mean of several frames' box spectra is the box spectrum of their mean frame: frame
 * averaging can average these (live/spectrumAverager.ts) instead of whole frames.
 */
export function extractLiveSpectrum(image: LinearImage, band: BandGeometry, options: LiveSpectrumOptions = {}, ws: LiveWorkspace = {}): LiveSpectrum {
  const d = LIVE_SPECTRUM_DEFAULTS;
  const objectRows = options.objectRows ?? d.objectRows;
  const gap = options.backgroundGapPx ?? d.backgroundGapPx;
  const objHalf = objectHalfWidthPx(band);
  const bgFrom = objHalf + gap;
  const bgTo = bgFrom + backgroundWidth(band, options);
  const rowStepPx = Math.max(1, (2 * objHalf) / objectRows);
  const s = sampleBand(image, band, { rowStepPx, halfWidthPx: bgTo, out: ws.sampled });
  ws.sampled = s;
  const N = s.columns;
  const R = s.rows;
  const q = s.offsetPx;
  // Row classes: 1 object, 2 background below (q < 0), 3 background above.
  let j0 = R;
  let j1 = -1;
  const lowRows: number[] = [];
  const highRows: number[] = [];
  for (let j = 0; j < R; j++) {
    const a = Math.abs(q[j]);
    if (a <= objHalf + 1e-9) {
      j0 = Math.min(j0, j);
      j1 = Math.max(j1, j);
    } else if (a >= bgFrom - 1e-9 && a <= bgTo + 1e-9) (q[j] < 0 ? lowRows : highRows).push(j);
  }
  const out = reuseOutput(ws, N, s.planes.length === 3);
  out.positionPx.set(s.positionPx);
  const planes = s.planes;
  const valid = s.valid;
  const sat = s.saturated;
  const nObj = j1 - j0 + 1;
  let peakLevel = 0;
  let saturatedSamples = 0;
  const channelOut = out.channels ? [out.channels.r, out.channels.g, out.channels.b] : [out.intensity];
  for (let i = 0; i < N; i++) {
    const base = i * R;
    let clipped = 0;
    for (let c = 0; c < planes.length; c++) {
      const p = planes[c];
      // Background at the centre line: the mean of the two strips' means (rows are symmetric about 0, so a straight
      // line across the band has the same sum over the object rows as this level times their number).
      const lo = stripMean(p, valid, base, lowRows);
      const hi = stripMean(p, valid, base, highRows);
      const bg = Number.isNaN(lo) ? (Number.isNaN(hi) ? 0 : hi) : Number.isNaN(hi) ? lo : 0.5 * (lo + hi);
      let sum = 0;
      let n = 0;
      for (let j = j0, kk = base + j0; j <= j1; j++, kk++) {
        if (!valid[kk]) continue;
        const v = p[kk];
        if (v > peakLevel) peakLevel = v;
        sum += v - bg;
        n++;
        clipped |= sat[kk];
      }
      // Scale to a full-resolution box sum: rows are rowStepPx apart; missing rows (outside the image) are filled
      // by the mean of the others.
      channelOut[c][i] = n > 0 ? (sum / n) * nObj * rowStepPx : 0;
    }
    out.saturated[i] = clipped;
    saturatedSamples += clipped;
  }
  if (out.channels) {
    const { r, g, b } = out.channels;
    const y = out.intensity;
    for (let i = 0; i < N; i++) y[i] = (r[i] + g[i] + b[i]) / 3;
  }
  out.noise = 0;
  out.peaks = [];
  out.peakLevel = peakLevel;
  out.saturatedSamples = saturatedSamples;
  return out;
}

/** Noise (DER_SNR) and peak markers of a box spectrum (one frame's or a mean of several). */
export function finishLiveSpectrum(s: LiveSpectrum, options: LiveSpectrumOptions = {}): LiveSpectrum {
  s.noise = robustNoise(s.intensity);
  s.peaks = livePeaks(s, options.thresholdSigma ?? LIVE_SPECTRUM_DEFAULTS.thresholdSigma, options.maxPeaks ?? LIVE_SPECTRUM_DEFAULTS.maxPeaks);
  return s;
}

function stripMean(p: Float32Array, valid: Uint8Array, base: number, rows: number[]): number {
  let sum = 0;
  let n = 0;
  for (const j of rows) {
    const kk = base + j;
    if (valid[kk]) {
      sum += p[kk];
      n++;
    }
  }
  return n > 0 ? sum / n : NaN;
}

function reuseOutput(ws: LiveWorkspace, n: number, colour: boolean): LiveSpectrum {
  const prev = ws.out;
  if (prev && prev.intensity.length === n && (prev.channels !== null) === colour) return prev;
  const out: LiveSpectrum = {
    positionPx: new Float64Array(n),
    intensity: new Float64Array(n),
    channels: colour ? { r: new Float64Array(n), g: new Float64Array(n), b: new Float64Array(n) } : null,
    saturated: new Uint8Array(n),
    noise: 0,
    peaks: [],
    peakLevel: 0,
    saturatedSamples: 0,
  };
  ws.out = out;
  return out;
}

function livePeaks(s: LiveSpectrum, k: number, maxPeaks: number): LivePeak[] {
  const y = s.intensity;
  const sigma = s.noise;
  if (!(sigma > 0)) return [];
  const found = findPeakIndices(y, { height: k * sigma, prominence: k * sigma, distance: 2 });
  const idx = found.peaks;
  const prom = found.properties.prominences!;
  let order = Array.from(idx.keys());
  if (order.length > maxPeaks) order = order.sort((a, b) => prom[b] - prom[a]).slice(0, maxPeaks).sort((a, b) => idx[a] - idx[b]);
  const step = s.positionPx.length > 1 ? s.positionPx[1] - s.positionPx[0] : 1;
  return order.map((m) => {
    const i = idx[m];
    let delta = 0;
    if (i > 0 && i < y.length - 1) {
      delta = gaussianOffset(y[i - 1], y[i], y[i + 1]);
      if (!Number.isFinite(delta)) delta = parabolicOffset(y[i - 1], y[i], y[i + 1]);
      if (!Number.isFinite(delta) || Math.abs(delta) > 1) delta = 0;
    }
    return { positionPx: s.positionPx[i] + delta * step, height: y[i], prominence: prom[m], saturated: s.saturated[i] === 1 };
  });
}
