import { assertFinite, invalid } from '../../errors.js';
import type { Peak, Spectrum } from '../../types.js';
import { estimateBaseline } from './estimateBaseline.js';
import { findPeakIndices } from './findPeakIndices.js';
import { fitGaussians, type GaussianComponent } from './fitGaussians.js';
import { quantileInPlace } from './orderStatistics.js';
import { peakWidths } from './peakWidths.js';
import { robustNoise } from './robustNoise.js';
import { stepAtSample, valueAtSample } from './samplePosition.js';
import { gaussianOffset, parabolicOffset } from './threePointEstimators.js';

/** FWHM = 2√(2 ln 2) σ for a Gaussian. */
export const FWHM_PER_SIGMA = 2 * Math.sqrt(2 * Math.LN2);

export interface FindPeaksOptions {
  /**
   * Detection threshold k in units of the noise σ: a peak needs a prominence ≥ k·σ and a height above the baseline
   * ≥ k·σ, both on the baseline-subtracted spectrum. With 5, white Gaussian noise alone exceeds it in about 3 samples
   * in 10⁷ (one-sided normal tail), so a 4000-sample spectrum of pure noise gives a false peak about once in 1000.
   * @default 5
   */
  thresholdSigma?: number;
  /** Per-sample noise σ of the intensity; measured with robustNoise (outside the found lines) when absent. */
  noise?: number;
  /**
   * Baseline window in samples; 'auto' takes 20 × the median width of the strong lines (at least 51, at most a
   * quarter of the spectrum; 101 when no strong line stands out); 'none' uses a zero baseline. @default 'auto'
   */
  baselineWindowSamples?: number | 'auto' | 'none';
  /** Half-width of each line's fit window, in units of its estimated FWHM (at least 3 samples). @default 1.5 */
  fitWindowFwhm?: number;
  /** Minimum spacing of two peaks in samples (scipy's `distance`; the lower one goes). @default 1 */
  minSeparationSamples?: number;
  /**
   * `blended` when the next peak's centre lies within this many FWHM (the larger of the two): closer than one FWHM two
   * equal Gaussians barely show a dip between them (none below 2σ = 0.85 FWHM), so neither centre stands on its own
   * data. @default 1
   */
  blendSeparationFwhm?: number;
  /**
   * `blended` also when two neighbouring lines were fitted together and the correlation of their fitted centres
   * exceeds this in magnitude: the joint fit cannot tell their centres apart well. With |ρ| = 0.8 each centre's
   * variance is 1/(1 − ρ²) ≈ 2.8× what it would be with the other centre known. For two equal Gaussians (white noise,
   * window ±1.5 FWHM, measured with fitGaussians) ρ is 0.99 at 0.6 FWHM apart, 0.94 at 1.0, 0.76 at 1.2, 0.31 at 1.5
   * and 0.04 at 2 FWHM, whatever their height ratio; so 0.8 flags pairs closer than about 1.15 FWHM. A close neighbour
   * that the fit separates is no blend: its centre uncertainty already carries the correlation. @default 0.8
   */
  blendCentreCorrelation?: number;
  /**
   * `blended` also when a line's FWHM exceeds this multiple of the median FWHM of the nearest clean, strong lines
   * (up to 7; SNR ≥ 10, not blended or saturated) by more than twice its uncertainty: an unresolved pair looks like
   * one broad line (two equal lines 0.6 FWHM apart fit as one 1.29× as wide), which is how "a second component is
   * needed" shows without fitting one — a two-component fit would also take every non-Gaussian instrument profile
   * at high SNR for a blend. Needs at least 3 clean lines in the spectrum. @default 1.25
   */
  blendWidthRatio?: number;
  /**
   * A line fitted narrower than this multiple of the local instrument line width (the median σ of the nearest clean,
   * strong lines with no saturated sample; up to 7, at least 3 in the spectrum), lying within half the FWHM of a
   * neighbour fitted broader than that width, is merged into the neighbour as one blended line. Light through the
   * optics cannot be narrower than the line-spread function: such a line is a bump on the flat top of an unresolved
   * pair, not a line of its own (see mergeSlivers). 0.6 leaves room for the width's drift along a band with focus
   * and its scatter at low SNR (common practice, no source); 0 turns the merge off. @default 0.6
   */
  minWidthRatio?: number;
  /** Lower bound on the reported position uncertainty, px (pixel-phase and line-shape errors of a Gaussian model). @default 0.01 */
  minPositionUncertaintyPx?: number;
  /**
   * Systematic centre error of the Gaussian model, as a fraction of the line's FWHM, added in quadrature to the fit's
   * standard error: σ² = σ_fit² + (k·FWHM)². The fit's covariance (Birge-scaled, see fitGaussians) measures only the
   * noise and the misfit it can see; a symmetric model fitted to a sampled line whose shape is not exactly Gaussian
   * (slit ⊗ blur ⊗ defocus, sampled along a slanted band, JPEG blocks, an imperfect baseline under it) also shifts the
   * centre along ∂g/∂μ, which leaves no residual — so no χ² test can see it, and it is carried as a type-B term
   * (GUM, JCGM 100:2008 §4.3: an uncertainty component evaluated from other information than the data's scatter).
   * Its size was measured on rendered JPEG photos (test/core/peaks/renderedCoverage.test.ts): with k = 0 the 79
   * isolated strong lines there had 63 % of |z| ≤ 1 and 85 % ≤ 2 (errors of 0.02–0.05 px at SNR > 300, where the
   * fit claimed 0.01 px); k = 0.005 (0.025 px at 5 px FWHM) brings them to 80 % and 94 % (the errors have a longer
   * tail than a normal, so no single k gives both 68 % and 95 %; the σ-windows of calibration and identification
   * need the tail). Below SNR ≈ 50 it adds a few per cent to the noise term, and the white-noise coverage of the
   * seeded tests stays as it was. @default 0.005
   */
  centreSystematicFwhm?: number;
  /** Most lines fitted together in one window; longer chains of overlapping lines are split. @default 6 */
  maxGroupSize?: number;
  /**
   * Leave out one-sample spikes (hot pixels, cosmic rays): a peak whose two neighbours are both below 15 % of its
   * height (a Gaussian that narrow has FWHM < 1.2 samples), at least 20σ high so the test is sure, in a spectrum
   * whose fitted lines are typically ≥ 2 samples wide (so light through the optics cannot be that narrow). They are
   * listed in `spikesPx` and a warning. @default true
   */
  rejectSpikes?: boolean;
}

export const FIND_PEAKS_DEFAULTS = {
  thresholdSigma: 5,
  baselineWindowSamples: 'auto',
  fitWindowFwhm: 1.5,
  minSeparationSamples: 1,
  blendSeparationFwhm: 1,
  blendCentreCorrelation: 0.8,
  blendWidthRatio: 1.25,
  minWidthRatio: 0.6,
  minPositionUncertaintyPx: 0.01,
  centreSystematicFwhm: 0.005,
  maxGroupSize: 6,
  rejectSpikes: true,
} as const satisfies Omit<Required<FindPeaksOptions>, 'noise'>;

/** How one peak's numbers were obtained. */
export interface PeakFitReport {
  /** The sample at the top of the peak (middle of a flat top, rounded down). */
  sampleIndex: number;
  /** Fitted centre in fractional samples. */
  centerSample: number;
  /** 'gaussian': least-squares fit; 'three-point': the fit failed its checks, the three-point estimate is reported. */
  method: 'gaussian' | 'three-point';
  /** χ²/dof of the fit window (weights 1/σ²); ≈ 1 for a clean Gaussian line. */
  reducedChi2: number;
  /** Number of lines fitted together with this one (1 = alone). */
  groupSize: number;
  /** Samples left out of the fit because they were saturated. */
  excludedSamples: number;
}

export interface PeakSearch {
  /** The peak table, ascending in position. */
  peaks: Peak[];
  /** Aligned with `peaks`. */
  fits: PeakFitReport[];
  /** Per-sample noise σ used for the threshold and the SNR. */
  noise: number;
  /** The baseline subtracted before detection and fitting (zeros for 'none'). */
  baseline: Float64Array;
  baselineWindowSamples: number | 'none';
  /** The prominence and height threshold k·σ. */
  threshold: number;
  /** Positions (px) of one-sample spikes left out of the table (see rejectSpikes). */
  spikesPx: number[];
  warnings: string[];
}

interface Candidate {
  index: number;
  prominence: number;
  center0: number;
  sigma0: number;
  amplitude0: number;
  lo: number;
  hi: number;
  fit: GaussianComponent;
  centerSd: number;
  sigmaSd: number;
  method: 'gaussian' | 'three-point';
  reducedChi2: number;
  groupSize: number;
  excluded: number;
  /** Correlation of this line's fitted centre with the next line's, when the two were fitted jointly (else NaN). */
  nextCentreCorrelation: number;
}

/** The peak table of a spectrum; see findPeaksDetailed. */
export function findPeaks(spectrum: Spectrum, options: FindPeaksOptions = {}): Peak[] {
  return findPeaksDetailed(spectrum, options).peaks;
}

/**
 * Finds the emission lines of a 1-D spectrum and measures them:
 *  1. noise σ by robustNoise; baseline by estimateBaseline; everything below works on intensity − baseline;
 *  2. detection as scipy.signal.find_peaks with height ≥ k·σ and prominence ≥ k·σ (k = thresholdSigma); the noise is
 *     then re-measured with the found lines left out and detection repeated once;
 *  3. each line's centre, σ and amplitude by a least-squares Gaussian fit (+ constant offset) over ±fitWindowFwhm·FWHM,
 *     started from the three-point Gaussian estimate and the scipy width at half prominence; lines whose windows
 *     overlap are fitted together, and the wings of lines outside a window are subtracted first; saturated samples
 *     are left out of the fit, so a clipped line's centre and height come from its unclipped flanks;
 *  4. the centre uncertainty is the fit's standard error (weights 1/σ², or 1/variance when the spectrum has it,
 *     inflated by χ²/dof when that exceeds 1: the Birge ratio, Birge 1932, Phys. Rev. 40, 207; from memory) with the
 *     model's systematic term centreSystematicFwhm·FWHM added in quadrature, floored at minPositionUncertaintyPx.
 * Positions, FWHM and area are converted from samples to px through `spectrum.positionPx`. `saturated` is set when a
 * sample of the line's window is flagged in `spectrum.saturated` or, without flags, when ≥ 3 consecutive samples there
 * sit exactly at the spectrum's maximum, ≥ 20σ above the baseline (a clipped flat top). FWHM is that of the sampled
 * profile: for camera pixels that integrate a Gaussian of σ it reads √(σ² + 1/12 px²) (the pixel's own variance). `blended`: see blendSeparationFwhm, blendCentreCorrelation and
 * blendWidthRatio.
 * `rgb` is the share of each channel (baseline-subtracted) in the line's core, centre ± FWHM/2.
 */
export function findPeaksDetailed(spectrum: Spectrum, options: FindPeaksOptions = {}): PeakSearch {
  const o = resolveOptions(options);
  const y = spectrum.intensity;
  const n = y.length;
  if (spectrum.positionPx.length !== n) {
    throw invalid('spectrum.positionPx', `${n} values, one per intensity sample`, spectrum.positionPx.length);
  }
  const warnings: string[] = [];
  const emptyResult = (noise: number, baseline: Float64Array): PeakSearch => ({
    peaks: [],
    fits: [],
    noise,
    baseline,
    baselineWindowSamples: 'none',
    threshold: o.thresholdSigma * noise,
    spikesPx: [],
    warnings,
  });
  if (n < 5) {
    warnings.push(`the spectrum has ${n} samples; at least 5 are needed to find peaks`);
    return emptyResult(NaN, new Float64Array(n));
  }
  let maxAbs = 0;
  for (let i = 0; i < n; i++) if (Number.isFinite(y[i])) maxAbs = Math.max(maxAbs, Math.abs(y[i]));
  const noiseFloor = Math.max(1e-12 * maxAbs, Number.MIN_VALUE);
  let noise = options.noise ?? robustNoise(y);
  if (!(noise >= noiseFloor)) {
    if (options.noise === undefined) warnings.push('the spectrum shows no measurable noise; the threshold rests on a numerical floor');
    noise = noiseFloor;
  }

  const windowSamples = resolveBaselineWindow(y, noise, o.baselineWindowSamples);
  const baseline = windowSamples === 'none' ? new Float64Array(n) : estimateBaseline(y, { windowSamples, noise });
  const r = new Float64Array(n);
  for (let i = 0; i < n; i++) r[i] = y[i] - baseline[i];
  let candidates = detect(r, noise, o);
  if (options.noise === undefined && candidates.length > 0) {
    // Re-measure the noise outside the lines (their flanks widen the MAD of the differences) and detect again.
    const exclude = new Uint8Array(n);
    for (const c of candidates) {
      const h = 2 * FWHM_PER_SIGMA * c.sigma0 + 1;
      for (let i = Math.max(0, Math.floor(c.center0 - h)); i <= Math.min(n - 1, Math.ceil(c.center0 + h)); i++) exclude[i] = 1;
    }
    let kept = 0;
    for (let i = 0; i < n; i++) kept += exclude[i] ? 0 : 1;
    if (kept >= Math.max(20, 0.2 * n)) {
      const refined = robustNoise(y, { exclude });
      if (refined >= noiseFloor && Math.abs(refined - noise) > 0.02 * noise) {
        // The baseline's clip level moves with the noise, but by a few per cent of σ: it is kept.
        noise = refined;
        candidates = detect(r, noise, o);
      }
    }
  }
  const threshold = o.thresholdSigma * noise;
  if (candidates.length === 0) return { ...emptyResult(noise, baseline), baselineWindowSamples: windowSamples, threshold };

  const saturated = saturationMask(spectrum, r, noise);
  fitAll(r, candidates, spectrum, saturated, noise, o);
  const spikesPx: number[] = [];
  if (o.rejectSpikes) {
    const spikes = findSpikes(r, candidates, noise);
    if (spikes.size > 0) {
      for (const c of candidates) if (spikes.has(c)) spikesPx.push(valueAtSample(spectrum.positionPx, c.index));
      candidates = candidates.filter((c) => !spikes.has(c));
      warnings.push(
        `${spikesPx.length} one-sample spike(s) left out as hot pixels or cosmic rays, at ${spikesPx.map((v) => v.toFixed(1)).join(', ')} px`,
      );
    }
  }
  candidates = mergeSlivers(r, candidates, spectrum, saturated, noise, o);

  const peaks: Peak[] = [];
  const fits: PeakFitReport[] = [];
  const pos = spectrum.positionPx;
  for (const c of candidates) {
    const s = c.fit.center;
    const step = Math.abs(stepAtSample(pos, s));
    const fwhmSamples = FWHM_PER_SIGMA * c.fit.sigma;
    let sat = false;
    if (saturated) for (let i = c.lo; i <= c.hi && !sat; i++) sat = saturated[i] === 1;
    peaks.push({
      positionPx: valueAtSample(pos, s),
      positionUncertaintyPx: Math.max(
        c.method === 'gaussian' ? Math.hypot(c.centerSd * step, o.centreSystematicFwhm * fwhmSamples * step) : c.centerSd * step,
        o.minPositionUncertaintyPx,
      ),
      fwhmPx: fwhmSamples * step,
      height: c.fit.amplitude,
      area: c.fit.amplitude * c.fit.sigma * Math.sqrt(2 * Math.PI) * step,
      prominence: c.prominence,
      snr: c.fit.amplitude / noise,
      saturated: sat,
      blended: false,
    });
    fits.push({
      sampleIndex: c.index,
      centerSample: s,
      method: c.method,
      reducedChi2: c.reducedChi2,
      groupSize: c.groupSize,
      excludedSamples: c.excluded,
    });
  }
  markBlends(peaks, candidates, noise, o);
  if (spectrum.channels) addColours(peaks, candidates, spectrum.channels, windowSamples);
  const fallbacks = fits.filter((f) => f.method === 'three-point').length;
  if (fallbacks > 0) warnings.push(`${fallbacks} peak(s) could not be fitted; their three-point estimates are reported`);
  return { peaks, fits, noise, baseline, baselineWindowSamples: windowSamples, threshold, spikesPx, warnings };
}

type ResolvedOptions = typeof FIND_PEAKS_DEFAULTS & { baselineWindowSamples: number | 'auto' | 'none'; rejectSpikes: boolean } & Record<
  'thresholdSigma' | 'fitWindowFwhm' | 'minSeparationSamples' | 'blendSeparationFwhm' | 'blendCentreCorrelation' | 'blendWidthRatio' | 'minWidthRatio' | 'minPositionUncertaintyPx' | 'centreSystematicFwhm' | 'maxGroupSize',
  number
>;

function resolveOptions(options: FindPeaksOptions): ResolvedOptions {
  const o = { ...FIND_PEAKS_DEFAULTS } as ResolvedOptions;
  for (const [key, value] of Object.entries(options)) if (value !== undefined) (o as Record<string, unknown>)[key] = value;
  assertFinite('thresholdSigma', o.thresholdSigma, 0);
  if (options.noise !== undefined) assertFinite('noise', options.noise, 0);
  const w = o.baselineWindowSamples;
  if (w !== 'auto' && w !== 'none') assertFinite('baselineWindowSamples', w, 3);
  assertFinite('fitWindowFwhm', o.fitWindowFwhm, 0.5);
  assertFinite('minSeparationSamples', o.minSeparationSamples, 1);
  assertFinite('blendSeparationFwhm', o.blendSeparationFwhm, 0);
  assertFinite('blendCentreCorrelation', o.blendCentreCorrelation, 0, 1);
  assertFinite('blendWidthRatio', o.blendWidthRatio, 1);
  assertFinite('minWidthRatio', o.minWidthRatio, 0, 1);
  assertFinite('minPositionUncertaintyPx', o.minPositionUncertaintyPx, 0);
  assertFinite('centreSystematicFwhm', o.centreSystematicFwhm, 0);
  assertFinite('maxGroupSize', o.maxGroupSize, 1);
  return o;
}

/**
 * 20 × the median width at half prominence of the strongest narrow lines of the raw spectrum, within [51, n/4]
 * (at least 51). Prominence is taken within ±n/40 samples (at least ±25), so that a broad continuum hump is not
 * mistaken for a line.
 */
function resolveBaselineWindow(y: ArrayLike<number>, noise: number, setting: number | 'auto' | 'none'): number | 'none' {
  if (setting === 'none') return 'none';
  if (setting !== 'auto') return Math.min(setting, Math.max(3, y.length));
  const n = y.length;
  const fallback = Math.min(101, n);
  const found = findPeakIndices(y, { prominence: 10 * noise, wlen: Math.max(51, Math.ceil(n / 20)) });
  if (found.peaks.length === 0) return fallback;
  const proms = found.properties.prominences!;
  const order = Array.from(found.peaks.keys()).sort((a, b) => proms[b] - proms[a]);
  const top = order.slice(0, 20).sort((a, b) => a - b);
  const widths = peakWidths(y, top.map((i) => found.peaks[i]), {
    prominenceData: {
      prominences: Float64Array.from(top, (i) => proms[i]),
      leftBases: Int32Array.from(top, (i) => found.properties.leftBases![i]),
      rightBases: Int32Array.from(top, (i) => found.properties.rightBases![i]),
    },
  }).widths;
  const median = quantileInPlace(Float64Array.from(widths), 0.5);
  if (!(median > 0)) return fallback;
  return Math.min(n, Math.max(51, Math.min(Math.round(20 * median), Math.floor(n / 4))));
}

function detect(r: Float64Array, noise: number, o: ResolvedOptions): Candidate[] {
  const threshold = o.thresholdSigma * noise;
  const found = findPeakIndices(r, {
    plateauSize: [null, null],
    height: threshold,
    distance: o.minSeparationSamples > 1 ? o.minSeparationSamples : undefined,
    prominence: threshold,
  });
  const { peaks, properties } = found;
  const widths = peakWidths(r, peaks, {
    prominenceData: { prominences: properties.prominences!, leftBases: properties.leftBases!, rightBases: properties.rightBases! },
  }).widths;
  const n = r.length;
  const out: Candidate[] = [];
  for (let j = 0; j < peaks.length; j++) {
    const p = peaks[j];
    const left = properties.leftEdges![j];
    const right = properties.rightEdges![j];
    let center0 = p;
    if (right > left) center0 = (left + right) / 2;
    else {
      let d = gaussianOffset(r[p - 1], r[p], r[p + 1]);
      if (!(Math.abs(d) < 1)) d = parabolicOffset(r[p - 1], r[p], r[p + 1]);
      if (Math.abs(d) < 1) center0 = p + d;
    }
    const sigma0 = Math.max(widths[j] / FWHM_PER_SIGMA, 0.4);
    const half = Math.max(o.fitWindowFwhm * FWHM_PER_SIGMA * sigma0, 3);
    out.push({
      index: p,
      prominence: properties.prominences![j],
      center0,
      sigma0,
      amplitude0: r[p],
      lo: Math.max(0, Math.floor(center0 - half)),
      hi: Math.min(n - 1, Math.ceil(center0 + half)),
      fit: { amplitude: r[p], center: center0, sigma: sigma0 },
      centerSd: NaN,
      sigmaSd: NaN,
      method: 'three-point',
      reducedChi2: NaN,
      groupSize: 1,
      excluded: 0,
      nextCentreCorrelation: NaN,
    });
  }
  return out;
}

/**
 * Per-sample saturation: the spectrum's own flags, or — without flags — runs of ≥ 3 samples exactly at the maximum
 * that stand ≥ 20σ above the baseline (a clipped flat top; the height condition keeps low integer counts that
 * happen to repeat at the top from counting). Null when nothing is saturated.
 */
function saturationMask(spectrum: Spectrum, r: Float64Array, noise: number): Uint8Array | null {
  const n = spectrum.intensity.length;
  if (spectrum.saturated) {
    if (spectrum.saturated.length !== n) {
      throw invalid('spectrum.saturated', `${n} flags, one per intensity sample`, spectrum.saturated.length);
    }
    return spectrum.saturated.some((v) => v !== 0) ? Uint8Array.from(spectrum.saturated, (v) => (v ? 1 : 0)) : null;
  }
  const y = spectrum.intensity;
  let top = -Infinity;
  for (let i = 0; i < n; i++) if (y[i] > top) top = y[i];
  if (!(top > 0)) return null;
  let mask: Uint8Array | null = null;
  for (let i = 0; i < n; ) {
    if (y[i] !== top) {
      i++;
      continue;
    }
    let j = i;
    while (j < n && y[j] === top) j++;
    if (j - i >= 3 && r[i] >= 20 * noise) {
      mask ??= new Uint8Array(n);
      mask.fill(1, i, j);
    }
    i = j;
  }
  return mask;
}

/**
 * Groups lines with overlapping windows (chains cut into pieces of at most maxGroupSize) and fits each group; with
 * `only` (per candidate), just the groups that hold a selected candidate.
 */
function fitAll(
  r: Float64Array,
  cands: Candidate[],
  spectrum: Spectrum,
  saturated: Uint8Array | null,
  noise: number,
  o: ResolvedOptions,
  only: readonly boolean[] | null = null,
): void {
  const groups: number[][] = [];
  let current: number[] = [];
  for (let j = 0; j < cands.length; j++) {
    if (current.length > 0 && (cands[j].lo > cands[current[current.length - 1]].hi || current.length >= o.maxGroupSize)) {
      groups.push(current);
      current = [];
    }
    current.push(j);
  }
  if (current.length > 0) groups.push(current);
  const variance = spectrum.variance;
  const baseWeight = 1 / (noise * noise);
  // Scratch buffers sized for the widest group window.
  let widest = 0;
  for (const g of groups) widest = Math.max(widest, cands[g[g.length - 1]].hi - cands[g[0]].lo + 1);
  const xs = new Float64Array(widest);
  const ys = new Float64Array(widest);
  const ws = new Float64Array(widest);
  for (let gi = 0; gi < groups.length; gi++) {
    const g = groups[gi];
    if (only && !g.some((j) => only[j])) continue;
    const lo = cands[g[0]].lo;
    const hi = cands[g[g.length - 1]].hi;
    // Neighbours outside the group whose wings may reach the window (current estimates: fitted on the left).
    const others: GaussianComponent[] = [];
    for (let j = Math.max(0, g[0] - 3); j <= Math.min(cands.length - 1, g[g.length - 1] + 3); j++) {
      if (j < g[0] || j > g[g.length - 1]) others.push(cands[j].fit);
    }
    let m = 0;
    let excluded = 0;
    for (let i = lo; i <= hi; i++) {
      if (saturated && saturated[i]) {
        excluded++;
        continue;
      }
      if (!Number.isFinite(r[i])) continue;
      let v = r[i];
      for (const c of others) {
        const t = (i - c.center) / c.sigma;
        if (t * t < 50) v -= c.amplitude * Math.exp(-0.5 * t * t);
      }
      let w = baseWeight;
      if (variance && variance[i] > 0 && Number.isFinite(variance[i])) w = 1 / variance[i];
      xs[m] = i;
      ys[m] = v;
      ws[m] = w;
      m++;
    }
    for (const j of g) {
      cands[j].groupSize = g.length;
      cands[j].excluded = excluded;
    }
    const nParams = 1 + 3 * g.length;
    if (m < nParams + 2) {
      for (const j of g) fallBack(cands[j], noise);
      continue;
    }
    const fit = fitGaussians(
      xs.subarray(0, m),
      ys.subarray(0, m),
      g.map((j) => ({ amplitude: cands[j].amplitude0, center: cands[j].center0, sigma: cands[j].sigma0 })),
      {
        weights: ws.subarray(0, m),
        centerBounds: g.map((j) => [cands[j].lo, cands[j].hi] as const),
        sigmaBounds: [0.3, Math.max(hi - lo, 1)],
      },
    );
    g.forEach((j, k) => {
      const c = cands[j];
      const f = fit.components[k];
      const u = fit.uncertainties[k];
      const moved = Math.abs(f.center - c.center0);
      const ok =
        Number.isFinite(f.center) &&
        Number.isFinite(u.center) &&
        u.center > 0 &&
        f.amplitude > 0 &&
        moved <= Math.max(1, 0.5 * FWHM_PER_SIGMA * c.sigma0) &&
        f.sigma < 0.99 * Math.max(hi - lo, 1);
      if (!ok) {
        fallBack(c, noise);
        return;
      }
      c.fit = f;
      c.centerSd = u.center;
      c.sigmaSd = u.sigma;
      c.method = 'gaussian';
      c.reducedChi2 = fit.reducedChi2;
      if (k + 1 < g.length) {
        const a = 2 + 3 * k; // covariance index of centre k: [offset, a₁, c₁, σ₁, a₂, c₂, …]
        const b = a + 3;
        const cv = fit.covariance;
        c.nextCentreCorrelation = cv[a][b] / Math.sqrt(cv[a][a] * cv[b][b]);
      }
    });
  }
}

/**
 * The three-point estimate, with a deliberately wide uncertainty: the larger of twice the Cramér–Rao bound for a
 * Gaussian's centre in white noise, σ_μ = √(2σ/√π) · noise / amplitude (σ in samples; from the Fisher information
 * Σ(∂g/∂μ)² ≈ a²√π / (2σ)), and a tenth of the FWHM — a fit fails mostly beside a stronger line, whose wing shifts
 * the three-point estimate by up to a few tenths of the FWHM.
 */
function fallBack(c: Candidate, noise: number): void {
  c.fit = { amplitude: c.amplitude0, center: c.center0, sigma: c.sigma0 };
  const cramerRao = Math.sqrt((2 * c.sigma0) / Math.sqrt(Math.PI)) * (noise / Math.max(c.amplitude0, noise));
  c.centerSd = Math.max(2 * cramerRao, 0.1 * FWHM_PER_SIGMA * c.sigma0);
  c.sigmaSd = NaN;
  c.method = 'three-point';
  c.reducedChi2 = NaN;
  c.nextCentreCorrelation = NaN;
}

/** The candidates that are one-sample spikes (see FindPeaksOptions.rejectSpikes). */
function findSpikes(r: Float64Array, cands: Candidate[], noise: number): Set<Candidate> {
  const spikes = new Set<Candidate>();
  const widths = cands.filter((c) => c.method === 'gaussian' && c.fit.amplitude >= 10 * noise).map((c) => FWHM_PER_SIGMA * c.fit.sigma);
  if (widths.length < 3 || quantileInPlace(Float64Array.from(widths), 0.5) < 2) return spikes;
  const n = r.length;
  for (const c of cands) {
    const p = c.index;
    if (p < 1 || p > n - 2) continue;
    const top = r[p];
    if (top >= 20 * noise && r[p - 1] < 0.15 * top && r[p + 1] < 0.15 * top) spikes.add(c);
  }
  return spikes;
}

/**
 * Merges into their neighbour the lines that came out narrower than minWidthRatio × the local instrument width (see
 * FindPeaksOptions.minWidthRatio) while lying within half the FWHM of a neighbour that was fitted as one line broader
 * than the reference. Such a line is a small bump on the flat top of an unresolved pair: its width at half
 * prominence, which set its fit's start, window and allowed movement, is a sliver of a line's, so its fit failed or
 * collapsed beside the broad one. It is dropped and the neighbour's group refitted without it: one blended line (the
 * width test flags it) whose centre is the pair's intensity-weighted centre. Two components are not fitted instead:
 * under the weights 1/variance of a bright camera line the χ² is ruled by the line shape's departure from a
 * Gaussian, and a pair that close then splits into a broad line and a sliver again, not into the two lines (seen on
 * the demo's neon tube). A too-narrow line farther out — a line on the flank of a broad band, say — is left as it
 * is: refitted from the reference width (tried), the demo's Hα beside a nitrogen band traded height with the band
 * and moved 0.5 nm off the line, where its three-point estimate is within 0.2 nm. The reference is a
 * median over up to 7 strong lines with no saturated sample, so a degenerate line among them does not move it.
 * Returns the candidates kept.
 */
function mergeSlivers(
  r: Float64Array,
  cands: Candidate[],
  spectrum: Spectrum,
  saturated: Uint8Array | null,
  noise: number,
  o: ResolvedOptions,
): Candidate[] {
  if (!(o.minWidthRatio > 0)) return cands;
  const clean: number[] = [];
  cands.forEach((c, j) => {
    if (c.method === 'gaussian' && c.excluded === 0 && c.fit.amplitude >= 10 * noise) clean.push(j);
  });
  if (clean.length < 3) return cands;
  const sigma = cands.map((c) => c.fit.sigma);
  const dropped = new Set<Candidate>();
  const refit = new Set<Candidate>();
  cands.forEach((c, j) => {
    if (!(c.fit.sigma < o.minWidthRatio * localReference(cands, clean, sigma, j))) return;
    const k = nearestNeighbour(cands, j);
    if (k < 0) return;
    const nb = cands[k];
    const onTop = Math.abs(nb.fit.center - c.fit.center) < 0.5 * FWHM_PER_SIGMA * nb.fit.sigma;
    if (onTop && nb.method === 'gaussian' && !dropped.has(nb) && nb.fit.sigma > localReference(cands, clean, sigma, k)) {
      dropped.add(c);
      refit.add(nb);
    }
  });
  if (refit.size === 0) return cands;
  const kept = cands.filter((c) => !dropped.has(c));
  fitAll(r, kept, spectrum, saturated, noise, o, kept.map((c) => refit.has(c)));
  return kept;
}

/** The candidate next to j (j − 1 or j + 1) nearest in fitted centre, or −1. */
function nearestNeighbour(cands: Candidate[], j: number): number {
  const at = cands[j].fit.center;
  const dl = j > 0 ? Math.abs(at - cands[j - 1].fit.center) : Infinity;
  const dr = j + 1 < cands.length ? Math.abs(cands[j + 1].fit.center - at) : Infinity;
  if (dl === Infinity && dr === Infinity) return -1;
  return dl <= dr ? j - 1 : j + 1;
}

/**
 * The median of `values` over the clean lines nearest to line j in fitted centre (up to BLEND_REFERENCE_LINES, j
 * itself left out); `clean` holds candidate indices in ascending order. NaN when there is none.
 */
function localReference(cands: Candidate[], clean: number[], values: ArrayLike<number>, j: number): number {
  let split = 0; // first clean line at or after j
  while (split < clean.length && clean[split] < j) split++;
  let left = split - 1;
  let right = split < clean.length && clean[split] === j ? split + 1 : split;
  const centre = cands[j].fit.center;
  let m = 0;
  while (m < BLEND_REFERENCE_LINES && (left >= 0 || right < clean.length)) {
    const dl = left >= 0 ? centre - cands[clean[left]].fit.center : Infinity;
    const dr = right < clean.length ? cands[clean[right]].fit.center - centre : Infinity;
    REFERENCE_SCRATCH[m++] = values[clean[dl <= dr ? left-- : right++]];
  }
  return m === 0 ? NaN : quantileInPlace(REFERENCE_SCRATCH, 0.5, 0, m - 1);
}

function markBlends(peaks: Peak[], cands: Candidate[], noise: number, o: ResolvedOptions): void {
  const fwhm = cands.map((c) => FWHM_PER_SIGMA * c.fit.sigma);
  for (let j = 0; j + 1 < cands.length; j++) {
    const gap = cands[j + 1].fit.center - cands[j].fit.center;
    const rho = cands[j].nextCentreCorrelation;
    const joint = cands[j].method === 'gaussian' && cands[j + 1].method === 'gaussian' && Number.isFinite(rho);
    if (gap < o.blendSeparationFwhm * Math.max(fwhm[j], fwhm[j + 1]) || (joint && Math.abs(rho) > o.blendCentreCorrelation)) {
      peaks[j].blended = true;
      peaks[j + 1].blended = true;
    }
  }
  // Width test against the nearest clean, strong lines (the instrument's line width drifts along a spectrum with
  // focus, so a local reference is fairer than the global one).
  const clean: number[] = [];
  cands.forEach((c, j) => {
    if (!peaks[j].blended && !peaks[j].saturated && c.method === 'gaussian' && c.fit.amplitude >= 10 * noise) clean.push(j);
  });
  if (clean.length < 3) return;
  cands.forEach((c, j) => {
    if (c.method !== 'gaussian' || peaks[j].saturated) return;
    const reference = localReference(cands, clean, fwhm, j);
    if (!(reference > 0)) return;
    const excess = fwhm[j] - o.blendWidthRatio * reference;
    if (excess > 0 && excess > 2 * FWHM_PER_SIGMA * c.sigmaSd) peaks[j].blended = true;
  });
}

/** How many neighbouring clean lines set the reference width of the blend test. */
const BLEND_REFERENCE_LINES = 7;
const REFERENCE_SCRATCH = new Float64Array(BLEND_REFERENCE_LINES);

function addColours(
  peaks: Peak[],
  cands: Candidate[],
  channels: NonNullable<Spectrum['channels']>,
  windowSamples: number | 'none',
): void {
  const list = [channels.r, channels.g, channels.b];
  const n = channels.r.length;
  const baselines = list.map((ch) => {
    const noise = robustNoise(ch);
    return noise > 0 && windowSamples !== 'none' ? estimateBaseline(ch, { noise, windowSamples }) : new Float64Array(n);
  });
  cands.forEach((c, j) => {
    const half = Math.max(0.5, 0.5 * FWHM_PER_SIGMA * c.fit.sigma);
    const lo = Math.max(0, Math.ceil(c.fit.center - half));
    const hi = Math.min(n - 1, Math.floor(c.fit.center + half));
    const sums = [0, 0, 0];
    const raw = [0, 0, 0];
    for (let i = lo; i <= hi; i++) {
      for (let k = 0; k < 3; k++) {
        sums[k] += list[k][i] - baselines[k][i];
        raw[k] += list[k][i];
      }
    }
    let use = sums.map((v) => Math.max(0, v));
    let total = use[0] + use[1] + use[2];
    if (!(total > 0)) {
      use = raw.map((v) => Math.max(0, v));
      total = use[0] + use[1] + use[2];
    }
    if (total > 0) peaks[j].rgb = { r: use[0] / total, g: use[1] / total, b: use[2] / total };
  });
}
