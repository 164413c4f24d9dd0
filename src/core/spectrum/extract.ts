/**
 * Band → 1-D spectrum by optimal extraction (Horne, K. 1986, "An optimal extraction algorithm for CCD spectroscopy",
 * PASP 98, 609–617), per RGB channel and for their mean.
 *
 * Steps (Horne's Table 1, adapted to a resampled photo):
 *  1. sample the band with bilinear interpolation on its own grid (sampleBand), object rows plus off-band rows on
 *     both sides;
 *  2. background S per column from the off-band rows (extraction/background.ts), subtracted: D' = D − S;
 *  3. standard (box) spectrum f = Σ_q D';
 *  4. spatial profile P from D'/f smoothed along the dispersion (extraction/profile.ts), P ≥ 0, Σ_q P = 1;
 *  5. variance V = V0 + max(0, S + f P)/Q, V0 and Q measured from the residuals (extraction/noiseModel.ts);
 *  6. outliers: the worst pixel of a column is masked while (D' − f P) / √(V + (τ f P)²) > σ_clip, one at a time
 *     (Horne masks |…|; cosmic rays and hot pixels are positive, and the profile term τ keeps a line whose image
 *     shifts slightly across the band from being clipped, so only positive deviations are rejected);
 *  7. optimal spectrum f = Σ M P D'/V / Σ M P²/V, var f = 1/Σ M P²/V (× the correction for the correlation that
 *     bilinear resampling puts between neighbouring rows, measured in the off-band rows);
 *  steps 5–7 are iterated until no pixel is newly masked.
 * The profile and the mask come from the channel mean and are shared by the channels (the geometry is the same);
 * each channel has its own background and noise model. Clipped pixels are kept in the sums (the flux is then a lower
 * bound) and flag the sample as saturated; they are never masked as outliers nor used to measure the noise.
 */
import { assertFinite, invalid } from '../errors.js';
import type { BandGeometry, LinearImage, Spectrum } from '../types.js';
import { type ColumnBackground, columnBackground, meanBackground, type OffBandNoise, offBandNoise } from './extraction/background.js';
import {
  boxVariance,
  channelFluxes,
  channelVariances,
  finalPass,
  type ObjectLayout,
  optimalPass,
  type VarianceTerms,
} from './extraction/horne.js';
import { fitNoiseModel, type NoiseModel, ResidualSample } from './extraction/noiseModel.js';
import { spatialProfile } from './extraction/profile.js';
import { checkBand, type SampledBand, sampleBand } from './sampleBand.js';
import { Scratch } from './scratch.js';

/**
 * The residual sample of the noise-model fit, one for every extraction (extractSpectrum is synchronous; the sample is
 * reset before each use). One long-lived instance also keeps its hidden class alive: V8 holds the maps an object
 * reaches by adding properties only weakly, so with a new sample per photo the full GC after each photo took the map
 * and with it the optimized code of the fit (deopt reason "weak objects"), compiled again on every photo.
 */
const RESIDUAL_SAMPLE = new ResidualSample(8000);

export interface ExtractSpectrumOptions {
  /** Spacing of the spectrum's samples along the band (px). @default 1 */
  stepPx?: number;
  /**
   * Rows beyond ±heightPx/2 still taken as object (the profile gives them their due weight); 'auto' = 3 + 0.15 ×
   * heightPx, enough for the blurred edges of a slit image and for the part of a Gaussian band's wings (±1.5 σ) that
   * carries nearly all of its signal-to-noise.
   * @default 'auto'
   */
  objectMarginPx?: number | 'auto';
  /** 'both-sides': off-band rows on both sides, straight line across; 'none': no background subtraction. @default 'both-sides' */
  background?: 'both-sides' | 'none';
  /** Gap between the object rows and the background rows (px). @default 3 */
  backgroundGapPx?: number;
  /** Height of each side's background strip (px); 'auto' = 0.3 × heightPx within 8…40 px. @default 'auto' */
  backgroundWidthPx?: number | 'auto';
  /** Running-mean length of the background along the band (px). @default 15 */
  backgroundSmoothPx?: number;
  /** Window along the band over which the spatial profile is estimated (px). @default 61 */
  profileWindowPx?: number;
  /** Rejection threshold σ_clip for outlying pixels; Infinity turns rejection off. @default 5 */
  clipSigma?: number;
  /** τ: fractional profile error allowed before a pixel counts as an outlier. @default 0.1 */
  profileTolerance?: number;
  /** At most this many pixels are masked per column. @default 3 */
  maxRejectionsPerColumn?: number;
  /** Iterations of steps 5–7. @default 3 */
  iterations?: number;
  /** Read noise σ in image units (linear, 1 = clipped), or 'auto' to measure it. @default 'auto' */
  readNoise?: number | 'auto';
  /** Gain Q in photo-electrons per image unit, or 'auto' to measure it (Infinity: no shot noise). @default 'auto' */
  gain?: number | 'auto';
  /** See SampleBandOptions.saturationLevel. @default 0.999 */
  saturationLevel?: number;
  /** A previous sampling buffer to reuse (live frames). */
  reuse?: SampledBand;
}

export const EXTRACT_SPECTRUM_DEFAULTS = {
  stepPx: 1,
  objectMarginPx: 'auto',
  background: 'both-sides',
  backgroundGapPx: 3,
  backgroundWidthPx: 'auto',
  backgroundSmoothPx: 15,
  profileWindowPx: 61,
  clipSigma: 5,
  profileTolerance: 0.1,
  maxRejectionsPerColumn: 3,
  iterations: 3,
  readNoise: 'auto',
  gain: 'auto',
  saturationLevel: 0.999,
} as const satisfies Omit<Required<ExtractSpectrumOptions>, 'reuse'>;

/**
 * A lighter setting for live frames: one pass (no outlier rejection: a video frame has no cosmic rays worth the time,
 * and the noise model is fitted on the box spectrum). Combine with `objectMarginPx` from findBand and a reused
 * sampling buffer (sampleBand `out` + extractSampledBand).
 */
export const EXTRACT_LIVE_OPTIONS = { iterations: 1, maxRejectionsPerColumn: 0 } as const satisfies ExtractSpectrumOptions;

export interface PlaneNoise {
  /** Read noise σ (image units) of one resampled pixel. */
  readNoise: number;
  /** Gain Q (photo-electrons per image unit); null when no shot noise was measurable. */
  gain: number | null;
}

export interface ExtractionDiagnostics {
  /** Object rows: offsets within ±objectHalfWidthPx. */
  objectHalfWidthPx: number;
  /** Background rows: |offset| from backgroundFromPx to backgroundToPx, on each side that lies in the image. */
  backgroundFromPx: number;
  backgroundToPx: number;
  backgroundSides: { negative: boolean; positive: boolean };
  /** Noise model of the channel mean and, for colour input, of R, G, B. */
  noise: { combined: PlaneNoise; r?: PlaneNoise; g?: PlaneNoise; b?: PlaneNoise };
  /** Correlation of the noise of neighbouring rows (bilinear resampling, demosaicing, JPEG), measured off-band. */
  rowCorrelation: number;
  /** Var(Σ k rows) / (k σ²), the factor that correlation between rows puts on the variance of a sum across the band. */
  rowSumFactor: number;
  /** Correlation of the noise of neighbouring samples along the band, measured off-band (for peak uncertainties). */
  columnCorrelation: number;
  rejectedPixels: number;
  saturatedSamples: number;
  /** Grid points that fell outside the image. */
  outsideSamples: number;
  iterations: number;
  /** The band's mean spatial profile (Σ = 1) at the object rows' offsets. */
  profile: { offsetPx: Float64Array; weight: Float64Array };
}

export interface ExtractedSpectrum {
  /**
   * The optimally extracted spectrum: `intensity` is the flux of the channel mean (R+G+B)/3 summed across the band
   * (image units × px), `variance` its variance (Infinity where the band left the image), `channels` the same for R, G,
   * B, `saturated` 1 where a contributing pixel was clipped.
   */
  spectrum: Spectrum & { variance: Float64Array; saturated: Uint8Array };
  /** The plain box sum over the object rows (background subtracted), Horne's "standard spectrum", for comparison. */
  box: { intensity: Float64Array; variance: Float64Array };
  channelVariance?: { r: Float64Array; g: Float64Array; b: Float64Array };
  diagnostics: ExtractionDiagnostics;
  warnings: string[];
}

interface Resolved {
  stepPx: number;
  objectHalfWidthPx: number;
  background: boolean;
  backgroundFromPx: number;
  backgroundToPx: number;
  backgroundSmoothPx: number;
  profileWindowPx: number;
  clipSigma: number;
  profileTolerance: number;
  maxRejectionsPerColumn: number;
  iterations: number;
  readNoise: number | null;
  gain: number | null;
  saturationLevel: number;
}

function resolveOptions(band: BandGeometry, options: ExtractSpectrumOptions): Resolved {
  const d = EXTRACT_SPECTRUM_DEFAULTS;
  const num = (name: keyof ExtractSpectrumOptions, value: unknown, min: number, max = Infinity): number => {
    assertFinite(name, value, min, max);
    return value;
  };
  const stepPx = num('stepPx', options.stepPx ?? d.stepPx, 0.05, 100);
  const margin = options.objectMarginPx ?? d.objectMarginPx;
  const marginPx = margin === 'auto' ? 3 + 0.15 * band.heightPx : num('objectMarginPx', margin, 0);
  const bg = options.background ?? d.background;
  if (bg !== 'both-sides' && bg !== 'none') throw invalid('background', "'both-sides' or 'none'", bg);
  const gap = num('backgroundGapPx', options.backgroundGapPx ?? d.backgroundGapPx, 0);
  const width = options.backgroundWidthPx ?? d.backgroundWidthPx;
  const widthPx = width === 'auto' ? Math.min(40, Math.max(8, 0.3 * band.heightPx)) : num('backgroundWidthPx', width, 1);
  const clipSigma = options.clipSigma ?? d.clipSigma;
  if (typeof clipSigma !== 'number' || !(clipSigma > 0)) throw invalid('clipSigma', 'a number > 0 (Infinity: off)', clipSigma);
  const rn = options.readNoise ?? d.readNoise;
  const gain = options.gain ?? d.gain;
  if (gain !== 'auto' && (typeof gain !== 'number' || !(gain > 0))) throw invalid('gain', "a number > 0 or 'auto'", gain);
  const objectHalfWidthPx = band.heightPx / 2 + marginPx;
  return {
    stepPx,
    objectHalfWidthPx,
    background: bg === 'both-sides',
    backgroundFromPx: objectHalfWidthPx + gap,
    backgroundToPx: objectHalfWidthPx + gap + widthPx,
    backgroundSmoothPx: num('backgroundSmoothPx', options.backgroundSmoothPx ?? d.backgroundSmoothPx, 1),
    profileWindowPx: num('profileWindowPx', options.profileWindowPx ?? d.profileWindowPx, 1),
    clipSigma,
    profileTolerance: num('profileTolerance', options.profileTolerance ?? d.profileTolerance, 0),
    maxRejectionsPerColumn: Math.floor(num('maxRejectionsPerColumn', options.maxRejectionsPerColumn ?? d.maxRejectionsPerColumn, 0)),
    iterations: Math.floor(num('iterations', options.iterations ?? d.iterations, 1, 50)),
    readNoise: rn === 'auto' ? null : num('readNoise', rn, 0),
    gain: gain === 'auto' ? null : gain,
    saturationLevel: num('saturationLevel', options.saturationLevel ?? d.saturationLevel, 0),
  };
}

/**
 * Working arrays kept from photo to photo (scratch.ts): the samples of extractSpectrum and the per-sample arrays of
 * extractFromSamples. Extraction runs to the end without awaiting anything, and what it returns is freshly allocated.
 */
const EXTRACT_SCRATCH = new Scratch();

/** How far extractSpectrum samples across the band for these options: ±halfWidthPx (px). */
export function extractionHalfWidthPx(band: BandGeometry, options: ExtractSpectrumOptions = {}): number {
  const o = resolveOptions(band, options);
  return o.background ? o.backgroundToPx : o.objectHalfWidthPx;
}

/** Optimal extraction of `band` from `image`; see the file comment and ExtractSpectrumOptions. */
export function extractSpectrum(image: LinearImage, band: BandGeometry, options: ExtractSpectrumOptions = {}): ExtractedSpectrum {
  checkBand(band);
  const o = resolveOptions(band, options);
  const sampled = sampleBand(image, band, {
    stepPx: o.stepPx,
    halfWidthPx: o.background ? o.backgroundToPx : o.objectHalfWidthPx,
    saturationLevel: o.saturationLevel,
    out: options.reuse,
    scratch: options.reuse ? undefined : EXTRACT_SCRATCH,
  });
  return extractFromSamples(sampled, o);
}

/**
 * Optimal extraction from a band sampled already (sampleBand with `halfWidthPx` ≥ extractionHalfWidthPx and the same
 * `stepPx`): the live path samples once per frame and may reuse the buffer.
 */
export function extractSampledBand(sampled: SampledBand, band: BandGeometry, options: ExtractSpectrumOptions = {}): ExtractedSpectrum {
  checkBand(band);
  return extractFromSamples(sampled, resolveOptions(band, options));
}

function extractFromSamples(s: SampledBand, o: Resolved): ExtractedSpectrum {
  const warnings: string[] = [];
  const N = s.columns;
  const R = s.rows;
  const q = s.offsetPx;
  // Rows: object |q| ≤ objectHalfWidth; background |q| within [from, to] on each side.
  let jo0 = -1;
  let jo1 = -1;
  const low: [number, number] = [R, -1];
  const high: [number, number] = [R, -1];
  for (let j = 0; j < R; j++) {
    const a = Math.abs(q[j]);
    if (a <= o.objectHalfWidthPx + 1e-9) {
      if (jo0 < 0) jo0 = j;
      jo1 = j;
    }
    if (o.background && a >= o.backgroundFromPx - 1e-9 && a <= o.backgroundToPx + 1e-9) {
      const side = q[j] < 0 ? low : high;
      side[0] = Math.min(side[0], j);
      side[1] = Math.max(side[1], j);
    }
  }
  if (jo0 < 0) throw invalid('band.heightPx', 'a band at least one sampled row high', o.objectHalfWidthPx * 2);
  const M = jo1 - jo0 + 1;
  const colour = s.planes.length === 3;
  const layout: ObjectLayout = { columns: N, rows: M, sampledRows: R, firstRow: jo0, offsetPx: q.slice(jo0, jo1 + 1) };
  const qObj = layout.offsetPx;

  // 2. Background per channel (or flat zero), and the channel mean's.
  const smooth = Math.max(1, Math.round(o.backgroundSmoothPx / o.stepPx)) | 1;
  const bgs: ColumnBackground[] = s.planes.map((plane) =>
    o.background
      ? columnBackground(plane, s.valid, N, R, q, low, high, smooth)
      : { base: new Float64Array(N), slope: new Float64Array(N), negative: false, positive: false },
  );
  const bg = colour ? meanBackground(bgs) : bgs[0];
  const sides = { negative: bg.negative, positive: bg.positive };
  if (!o.background) warnings.push('background not subtracted (background: none)');
  else if (!sides.negative && !sides.positive) warnings.push('no off-band rows inside the image: background not subtracted');
  else if (!sides.negative || !sides.positive) warnings.push('off-band rows on one side only: background taken as flat across the band');
  // The channel mean of every sample (one pass; the noise statistics and the object rows read it).
  const combined = colour ? channelMean(s.planes) : s.planes[0];
  const noiseOff = offBandNoise(combined, bg, s.valid, N, R, q, low, high);
  const rowCorrelation = clampCorrelation(noiseOff.rowCorrelation);
  const columnCorrelation = clampCorrelation(noiseOff.columnCorrelation);
  // The background's own noise: each side's level is a mean over its rows and a running mean over `smooth` columns.
  const lowShare = new Float64Array(jo1 - jo0 + 1);
  {
    const qLo = low[1] >= low[0] ? 0.5 * (q[low[0]] + q[low[1]]) : 0;
    const qHi = high[1] >= high[0] ? 0.5 * (q[high[0]] + q[high[1]]) : 0;
    for (let j = 0; j < lowShare.length; j++) {
      lowShare[j] = sides.negative && sides.positive ? (qHi - q[jo0 + j]) / (qHi - qLo) : sides.negative ? 1 : 0;
    }
  }
  const termsFor = (n: OffBandNoise): VarianceTerms => {
    // Var of a side's level: Var(row sum)/rows², averaged over `smooth` columns whose sums correlate by ρ_B.
    const perColumns = (1 + 2 * Math.max(0, n.sumColumnCorrelation)) / Math.min(smooth, N);
    const side = (rows: number): number => (n.variance > 0 && rows > 0 ? (n.sumFactor * n.variance * perColumns) / rows : 0);
    return {
      sumFactor: n.sumFactor,
      background: {
        lowVariance: sides.negative ? side(low[1] - low[0] + 1) : 0,
        highVariance: sides.positive ? side(high[1] - high[0] + 1) : 0,
        lowShare,
      },
    };
  };
  const combTerms = termsFor(noiseOff);

  // 3. D' of the channel mean, the box spectrum, and the mask (1 = inside the image), in one pass.
  const { data, mask, box } = objectRows(combined, s.valid, bg, layout);

  // 4. Spatial profile (outlying samples clamped at 5 σ of the off-band noise).
  const sampleSigma = noiseOff.variance > 0 ? Math.sqrt(noiseOff.variance) : Math.sqrt(columnScatter(data, mask, M, N));
  const { profile, global } = spatialProfile({
    data,
    valid: mask,
    rows: M,
    columns: N,
    flux: box,
    windowSamples: Math.max(1, Math.round(o.profileWindowPx / o.stepPx)) | 1,
    sampleSigma,
    scratch: EXTRACT_SCRATCH,
  });

  // 5. Noise models: V0 from the off-band rows (or the caller's numbers), the shot term fitted after a first pass.
  // For the channel mean of three channels the caller's per-channel numbers scale by 1/3 (independent channels).
  const fixedRead = o.readNoise !== null ? o.readNoise * o.readNoise : undefined;
  const fixedShot = o.gain !== null ? (Number.isFinite(o.gain) ? 1 / o.gain : 0) : undefined;
  const auto = fixedRead === undefined || fixedShot === undefined;
  const startModel = (offBandVariance: number, scale: number): NoiseModel => ({
    readVariance:
      fixedRead !== undefined
        ? Math.max(1e-30, fixedRead * scale)
        : Math.max(1e-30, offBandVariance > 0 ? offBandVariance : columnScatter(data, mask, M, N)),
    shotPerUnit: fixedShot !== undefined ? fixedShot * scale : 0,
  });
  const combScale = colour ? 1 / 3 : 1;
  let noise = startModel(noiseOff.variance, combScale);
  const fitted = (plane: Float32Array, b: ColumnBackground, flux: Float64Array, start: NoiseModel, scale: number): NoiseModel => {
    if (!auto) return start;
    collectResiduals(RESIDUAL_SAMPLE, plane, b, flux, profile, mask, s, layout, low, high);
    return fitNoiseModel(RESIDUAL_SAMPLE, start, {
      readVariance: fixedRead !== undefined ? fixedRead * scale : undefined,
      shotPerUnit: fixedShot !== undefined ? fixedShot * scale : undefined,
    });
  };

  // 6–7. Iterate on the channel mean with rejection; the last pass gives the weights, the variance and the flags.
  const flux = new Float64Array(N);
  const prior = box.slice();
  let rejected = 0;
  let iterations = 1;
  for (let it = 0; it < o.iterations - 1; it++) {
    iterations++;
    const newly = optimalPass(data, bg, profile, mask, s.saturated, layout, prior, noise, flux, o.clipSigma, o.profileTolerance, o.maxRejectionsPerColumn);
    rejected += newly;
    if (it === 0) noise = fitted(combined, bg, flux, noise, combScale);
    prior.set(flux);
    if (newly === 0 && it > 0) break;
  }
  if (iterations === 1) noise = fitted(combined, bg, prior, noise, combScale); // a single pass: fit on the box spectrum
  const variance = new Float64Array(N);
  const weights = EXTRACT_SCRATCH.take('extract.weights', Float32Array, N * M, false); // finalPass writes every one
  const saturated = new Uint8Array(N);
  finalPass(data, bg, profile, mask, s.saturated, layout, prior, noise, combTerms, { flux, variance, weights, saturated });

  // Channels: the channel mean's weights (optimal when a channel's variance is proportional to the mean's, as for a
  // line of one colour; unbiased always, since Σ w P = 1), each channel's own background and noise model.
  let channels: { r: Float64Array; g: Float64Array; b: Float64Array } | undefined;
  let channelVar: { r: Float64Array; g: Float64Array; b: Float64Array } | undefined;
  const channelNoise: NoiseModel[] = [];
  if (colour) {
    const fluxes = [new Float64Array(N), new Float64Array(N), new Float64Array(N)];
    const variances = [new Float64Array(N), new Float64Array(N), new Float64Array(N)];
    channelFluxes(s.planes, bgs, weights, layout, fluxes);
    const channelTerms: VarianceTerms[] = [];
    for (let c = 0; c < 3; c++) {
      const off = offBandNoise(s.planes[c], bgs[c], s.valid, N, R, q, low, high, 6000);
      channelTerms.push(termsFor(off));
      channelNoise.push(fitted(s.planes[c], bgs[c], fluxes[c], startModel(off.variance, 1), 1));
    }
    channelVariances(bgs, profile, weights, mask, layout, channelNoise, fluxes, channelTerms, variances);
    channels = { r: fluxes[0], g: fluxes[1], b: fluxes[2] };
    channelVar = { r: variances[0], g: variances[1], b: variances[2] };
  }

  let saturatedSamples = 0;
  let outsideColumns = 0;
  for (let i = 0; i < N; i++) {
    saturatedSamples += saturated[i];
    if (variance[i] === Infinity) outsideColumns++;
  }
  if (outsideColumns > 0) warnings.push(`${outsideColumns} of ${N} samples lie outside the image (intensity 0, variance Infinity)`);
  if (saturatedSamples > 0) warnings.push(`${saturatedSamples} samples include clipped pixels (flagged saturated; their intensity is a lower bound)`);

  const noiseOf = (m: NoiseModel): PlaneNoise => ({
    readNoise: Math.sqrt(m.readVariance),
    gain: m.shotPerUnit > 0 ? 1 / m.shotPerUnit : null,
  });
  const spectrum: ExtractedSpectrum['spectrum'] = { positionPx: s.positionPx.slice(), intensity: flux, variance, saturated };
  if (channels) spectrum.channels = channels;
  const result: ExtractedSpectrum = {
    spectrum,
    box: { intensity: box, variance: boxVariance(box, bg, s.valid, layout, noise, combTerms) },
    diagnostics: {
      objectHalfWidthPx: o.objectHalfWidthPx,
      backgroundFromPx: o.backgroundFromPx,
      backgroundToPx: o.backgroundToPx,
      backgroundSides: sides,
      noise: colour
        ? { combined: noiseOf(noise), r: noiseOf(channelNoise[0]), g: noiseOf(channelNoise[1]), b: noiseOf(channelNoise[2]) }
        : { combined: noiseOf(noise) },
      rowCorrelation,
      rowSumFactor: noiseOff.sumFactor,
      columnCorrelation,
      rejectedPixels: rejected,
      saturatedSamples,
      outsideSamples: s.outsideCount,
      iterations,
      profile: { offsetPx: qObj.slice(), weight: global },
    },
    warnings,
  };
  if (channelVar) result.channelVariance = channelVar;
  return result;
}

// The loops below are functions of their own, not blocks of extractFromSamples: a function that runs once per photo
// is compiled by the JIT while its first loop runs (on-stack replacement) and thrown away on reaching code not run
// yet; one loop per function makes each compile small and keeps it.

/** (R + G + B)/3 of every sample. */
function channelMean(planes: Float32Array[]): Float32Array {
  const [p0, p1, p2] = planes;
  const n = p0.length;
  const out = EXTRACT_SCRATCH.take('extract.channelMean', Float32Array, n, false);
  for (let k = 0; k < n; k++) out[k] = (p0[k] + p1[k] + p2[k]) * (1 / 3);
  return out;
}

/** D' = D − S of the object rows, the mask (1 = inside the image) and the box spectrum Σ D', in one pass. */
function objectRows(
  combined: Float32Array,
  valid: Uint8Array,
  bg: ColumnBackground,
  layout: ObjectLayout,
): { data: Float32Array; mask: Uint8Array; box: Float64Array } {
  const { columns: N, rows: M, sampledRows: R, firstRow: jo0, offsetPx: qObj } = layout;
  const data = EXTRACT_SCRATCH.take('extract.data', Float32Array, N * M);
  const mask = EXTRACT_SCRATCH.take('extract.mask', Uint8Array, N * M);
  const box = new Float64Array(N);
  const { base, slope } = bg;
  for (let i = 0; i < N; i++) {
    const b0 = base[i];
    const s0 = slope[i];
    let f = 0;
    for (let j = 0, k = i * M, ks = i * R + jo0; j < M; j++, k++, ks++) {
      if (!valid[ks]) continue;
      mask[k] = 1;
      const d = combined[ks] - (b0 + qObj[j] * s0);
      data[k] = d;
      f += d;
    }
    box[i] = f;
  }
  return { data, mask, box };
}

function clampCorrelation(r: number): number {
  return Math.min(0.9, Math.max(-0.45, r));
}

/** Noise variance of the object rows from their column-to-column scatter, when there are no off-band rows. */
function columnScatter(data: Float32Array, valid: Uint8Array, M: number, N: number): number {
  let s = 0;
  let n = 0;
  for (let i = 1; i < N; i++) {
    for (let j = 0, k = i * M; j < M; j++, k++) {
      if (!valid[k] || !valid[k - M]) continue;
      const d = data[k] - data[k - M];
      s += d * d;
      n++;
    }
  }
  // Differences of neighbours double the variance (and carry line structure: an overestimate, the safe side).
  return n > 0 ? s / n / 2 : 1e-30;
}

/**
 * Pairs (model level, residual) for the noise fit, from a subsample of columns: the object rows after the fit
 * (residual scaled by √(M/(M−1)) for the one parameter fitted per column; clipped and masked samples left out) and
 * the off-band rows, of one plane (a channel or the channel mean).
 */
function collectResiduals(
  sample: ResidualSample,
  plane: Float32Array,
  bg: ColumnBackground,
  flux: Float64Array,
  profile: Float32Array,
  mask: Uint8Array,
  s: SampledBand,
  layout: ObjectLayout,
  low: [number, number],
  high: [number, number],
): void {
  sample.reset();
  const { columns: N, rows: M, sampledRows: R, firstRow, offsetPx: qObj } = layout;
  const perColumn = M + Math.max(0, low[1] - low[0] + 1) + Math.max(0, high[1] - high[0] + 1);
  const stride = Math.max(1, Math.ceil((N * perColumn) / sample.level.length));
  const dof = M > 1 ? Math.sqrt(M / (M - 1)) : 1;
  for (let i = 0; i < N; i += stride) {
    const b0 = bg.base[i];
    const s0 = bg.slope[i];
    const f = flux[i];
    for (let j = 0, k = i * M, ks = i * R + firstRow; j < M; j++, k++, ks++) {
      if (!mask[k] || s.saturated[ks]) continue;
      const level = b0 + qObj[j] * s0;
      const model = f * profile[k];
      sample.add(level + model, (plane[ks] - level - model) * dof);
    }
    for (const [from, to] of [low, high]) {
      for (let j = from, ks = i * R + from; j <= to; j++, ks++) {
        if (!s.valid[ks] || s.saturated[ks]) continue;
        const level = b0 + s.offsetPx[j] * s0;
        sample.add(level, plane[ks] - level);
      }
    }
  }
}
