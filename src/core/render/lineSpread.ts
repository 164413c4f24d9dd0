/**
 * One-dimensional spread functions on a fine grid: the image of a line source across its own direction is the
 * source's width (a box) ⊗ the optics' Gaussian blur ⊗ an optional defocus disc (through its 1-D marginal, a
 * semicircle) ⊗ the pixel's footprint (boxes). Every factor is a symmetric, normalised distribution, evaluated as
 * exact cell averages on a grid of step h, so the discrete kernel sums to 1 and keeps its centre exactly.
 */
import { assertFinite, invalid } from '../errors.js';

const SQRT_PI = Math.sqrt(Math.PI);
const INV_SQRT_2PI = 1 / Math.sqrt(2 * Math.PI);

/**
 * Error function, accurate to ~5e-14: Maclaurin series for |x| < 3, the continued fraction of erfc beyond
 * (Abramowitz & Stegun 7.1.5 and 7.1.14).
 */
export function erf(x: number): number {
  const ax = Math.abs(x);
  if (ax < 3) {
    let term = x;
    let sum = x;
    const x2 = x * x;
    for (let n = 1; n < 80; n++) {
      term *= -x2 / n;
      const add = term / (2 * n + 1);
      sum += add;
      if (Math.abs(add) < 1e-17 * Math.abs(sum)) break;
    }
    return (2 / SQRT_PI) * sum;
  }
  return x > 0 ? 1 - erfcLarge(ax) : erfcLarge(ax) - 1;
}

/** erfc(x) for x ≥ 3 by the continued fraction erfc x = e^{−x²}/√π · 1/(x + ½/(x + 1/(x + 3⁄2/(x + …)))). */
function erfcLarge(x: number): number {
  let k = x;
  for (let n = 60; n >= 1; n--) k = x + n / 2 / k;
  return Math.exp(-x * x) / (SQRT_PI * k);
}

/** Standard normal cumulative distribution Φ(z). */
export function normalCdf(z: number): number {
  return 0.5 * (1 + erf(z / Math.SQRT2));
}

/** CDF of box(width) ⊗ Gaussian(σ) at x. Uses ∫Φ(t/σ)dt = tΦ(t/σ) + σφ(t/σ). */
function boxGaussCdf(x: number, widthPx: number, sigmaPx: number): number {
  if (widthPx <= 1e-6 * sigmaPx) return normalCdf(x / sigmaPx);
  const g = (t: number): number => t * normalCdf(t / sigmaPx) + sigmaPx * INV_SQRT_2PI * Math.exp(-0.5 * (t / sigmaPx) ** 2);
  return (g(x + widthPx / 2) - g(x - widthPx / 2)) / widthPx;
}

/** Cell-averaged weights of a centred box of the given width on the grid (sum 1). */
function boxWeights(widthPx: number, stepPx: number): Float64Array {
  if (widthPx <= 1e-9) return Float64Array.of(1);
  const half = Math.ceil(widthPx / 2 / stepPx + 0.5);
  const w = new Float64Array(2 * half + 1);
  for (let i = -half; i <= half; i++) {
    const lo = Math.max(i * stepPx - stepPx / 2, -widthPx / 2);
    const hi = Math.min(i * stepPx + stepPx / 2, widthPx / 2);
    w[i + half] = hi > lo ? (hi - lo) / widthPx : 0;
  }
  return w;
}

/** Cell-averaged weights of the 1-D marginal of a uniform disc of radius r (a semicircle law). */
function discWeights(radiusPx: number, stepPx: number): Float64Array {
  if (radiusPx <= 1e-9) return Float64Array.of(1);
  const cdf = (x: number): number => {
    if (x <= -radiusPx) return 0;
    if (x >= radiusPx) return 1;
    const r2 = radiusPx * radiusPx;
    return 0.5 + (x * Math.sqrt(r2 - x * x) + r2 * Math.asin(x / radiusPx)) / (Math.PI * r2);
  };
  const half = Math.ceil(radiusPx / stepPx + 0.5);
  const w = new Float64Array(2 * half + 1);
  for (let i = -half; i <= half; i++) w[i + half] = cdf(i * stepPx + stepPx / 2) - cdf(i * stepPx - stepPx / 2);
  return w;
}

/** Full discrete convolution of two centred, odd-length weight arrays (the result is centred and odd-length). */
export function convolveWeights(a: Float64Array, b: Float64Array): Float64Array {
  const out = new Float64Array(a.length + b.length - 1);
  for (let i = 0; i < a.length; i++) {
    const ai = a[i];
    if (ai === 0) continue;
    for (let j = 0; j < b.length; j++) out[i + j] += ai * b[j];
  }
  return out;
}

export interface LineSpreadOptions {
  /** Grid step (px). @default 0.125 */
  stepPx: number;
  /** Gaussian blur of the optics (px, standard deviation). Below ~0.4 px a point-sampled image aliases. */
  sigmaPx: number;
  /** Width of the source image (px): the slit, or the glowing capillary seen end-on to the dispersion. @default 0 */
  widthPx: number;
  /** Defocus: radius of the uniform blur disc (px). @default 0 */
  defocusRadiusPx: number;
  /** Widths (px) of boxes modelling the pixel footprint projected on this direction. @default [] */
  footprintPx: number[];
}

export const LINE_SPREAD_DEFAULTS: LineSpreadOptions = {
  stepPx: 0.125,
  sigmaPx: 1,
  widthPx: 0,
  defocusRadiusPx: 0,
  footprintPx: [],
};

/** A centred spread function on a grid: weights[half] is at offset 0, weights sum to 1. */
export interface SpreadKernel {
  weights: Float64Array;
  half: number;
  stepPx: number;
}

/** Builds box(width) ⊗ Gaussian(σ) ⊗ disc(r) ⊗ footprint boxes as a centred kernel on a grid of step h. */
export function lineSpreadKernel(options: Partial<LineSpreadOptions> & { sigmaPx: number }): SpreadKernel {
  const o: LineSpreadOptions = { ...LINE_SPREAD_DEFAULTS, ...options };
  assertFinite('stepPx', o.stepPx, 1e-4, 1);
  assertFinite('sigmaPx', o.sigmaPx, Number.MIN_VALUE);
  assertFinite('widthPx', o.widthPx, 0);
  assertFinite('defocusRadiusPx', o.defocusRadiusPx, 0);
  if (!Array.isArray(o.footprintPx)) throw invalid('footprintPx', 'an array of widths', o.footprintPx);
  o.footprintPx.forEach((w, i) => assertFinite(`footprintPx[${i}]`, w, 0));
  const h = o.stepPx;
  const reach = o.widthPx / 2 + 7 * o.sigmaPx;
  const half = Math.ceil(reach / h + 1);
  let k: Float64Array = new Float64Array(2 * half + 1);
  for (let i = -half; i <= half; i++) {
    k[i + half] = boxGaussCdf(i * h + h / 2, o.widthPx, o.sigmaPx) - boxGaussCdf(i * h - h / 2, o.widthPx, o.sigmaPx);
  }
  k = convolveWeights(k, discWeights(o.defocusRadiusPx, h));
  for (const w of o.footprintPx) k = convolveWeights(k, boxWeights(w, h));
  let sum = 0;
  for (const v of k) sum += v;
  for (let i = 0; i < k.length; i++) k[i] /= sum;
  return { weights: k, half: (k.length - 1) / 2, stepPx: h };
}

/** Full width at half maximum (px) of a kernel, by linear interpolation between grid points. */
export function kernelFwhmPx(kernel: SpreadKernel): number {
  const w = kernel.weights;
  const peak = w[kernel.half];
  let i = kernel.half;
  while (i < w.length - 1 && w[i + 1] >= peak / 2) i++;
  if (i === w.length - 1) return 2 * kernel.half * kernel.stepPx;
  const frac = (w[i] - peak / 2) / (w[i] - w[i + 1]);
  return 2 * (i - kernel.half + frac) * kernel.stepPx;
}
