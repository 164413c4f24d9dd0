/**
 * Photon and read noise for the renderer, exact and fast enough for ~6 million draws per 1080p frame.
 *
 * Poisson counts:
 * - mean < 10: Poisson additivity, X = X₁ + X₂ with X₁ ~ Poisson(j/32) by inversion of a precomputed CDF table and
 *   X₂ ~ Poisson(δ), δ < 1/32, by inversion reusing the position of the first uniform inside its CDF step (which is
 *   uniform and independent of X₁);
 * - mean ≥ 10: the transformed rejection with squeeze of W. Hörmann, "The transformed rejection method for
 *   generating Poisson random variables", Insurance: Mathematics and Economics 12 (1993) 39–45 (algorithm PTRS).
 * Normal deviates (read noise): the ziggurat of G. Marsaglia and W. W. Tsang, "The Ziggurat Method for Generating
 * Random Variables", J. Statistical Software 5(8) (2000), 128 layers, with the layer index and the value taken from
 * separate bits of each 32-bit draw (the fix of J. A. Doornik, "An Improved Ziggurat Method to Generate Normal Random
 * Samples", 2005).
 *
 * The uniform generator is mulberry32, the algorithm of core/random's createRandom, held in a field (faster than a
 * closure in these loops) and seeded from createRandom(seed), so a render is fixed by its seed.
 */
import { createRandom } from '../random.js';

const HALF_LOG_2PI = 0.5 * Math.log(2 * Math.PI);

/** ln Γ(x) for x ≥ 1: shift to x ≥ 8, then Stirling's series (Abramowitz & Stegun 6.1.41), error < 1e-11. */
export function logGamma(x: number): number {
  let shift = 0;
  while (x < 8) {
    shift += Math.log(x);
    x += 1;
  }
  const inv = 1 / x;
  const inv2 = inv * inv;
  const series = inv * (1 / 12 - inv2 * (1 / 360 - inv2 * (1 / 1260 - inv2 * (1 / 1680))));
  return (x - 0.5) * Math.log(x) - x + HALF_LOG_2PI + series - shift;
}

/** ln k! for k < 1024 by summing logs (the PTRS acceptance test needs it for every rejection-branch draw). */
const LOG_FACTORIAL = (() => {
  const t = new Float64Array(1024);
  for (let k = 2; k < t.length; k++) t[k] = t[k - 1] + Math.log(k);
  return t;
})();
const logFactorial = (k: number): number => (k < LOG_FACTORIAL.length ? LOG_FACTORIAL[k] : logGamma(k + 1));

/** Poisson CDF tables for means j/Q, j = 0 … 10Q − 1, K entries each (the last forced to 1). */
const Q = 32;
const K = 48;
let poissonCdf: Float64Array | undefined;
function cdfTables(): Float64Array {
  if (poissonCdf) return poissonCdf;
  const t = new Float64Array(10 * Q * K);
  for (let j = 0; j < 10 * Q; j++) {
    const m = j / Q;
    let p = Math.exp(-m);
    let c = p;
    for (let k = 0; k < K; k++) {
      t[j * K + k] = Math.min(c, 1);
      p *= m / (k + 1);
      c += p;
    }
    t[j * K + K - 1] = 1;
  }
  return (poissonCdf = t);
}

/** Ziggurat tables (Marsaglia & Tsang 2000, 128 layers, r = 3.442619855899), for 24-bit signed values. */
const ZIG_R = 3.442619855899;
const ZIG_SCALE = 2 ** 24;
let zig: { kn: Int32Array; wn: Float64Array; fn: Float64Array } | undefined;
function zigTables(): { kn: Int32Array; wn: Float64Array; fn: Float64Array } {
  if (zig) return zig;
  const kn = new Int32Array(128);
  const wn = new Float64Array(128);
  const fn = new Float64Array(128);
  const vn = 9.91256303526217e-3;
  let dn = ZIG_R;
  let tn = dn;
  const q = vn / Math.exp(-0.5 * dn * dn);
  kn[0] = Math.floor((dn / q) * ZIG_SCALE);
  kn[1] = 0;
  wn[0] = q / ZIG_SCALE;
  wn[127] = dn / ZIG_SCALE;
  fn[0] = 1;
  fn[127] = Math.exp(-0.5 * dn * dn);
  for (let i = 126; i >= 1; i--) {
    dn = Math.sqrt(-2 * Math.log(vn / dn + Math.exp(-0.5 * dn * dn)));
    kn[i + 1] = Math.floor((dn / tn) * ZIG_SCALE);
    tn = dn;
    fn[i] = Math.exp(-0.5 * dn * dn);
    wn[i] = dn / ZIG_SCALE;
  }
  return (zig = { kn, wn, fn });
}

export class NoiseGenerator {
  private state: number;
  private readonly cdf = cdfTables();
  private readonly zig = zigTables();

  constructor(seed: number) {
    this.state = Math.floor(createRandom(seed).uniform() * 4294967296) >>> 0;
  }

  /** 32 random bits as an unsigned integer (mulberry32). */
  private bits(): number {
    this.state = (this.state + 0x6d2b79f5) >>> 0;
    let t = this.state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return (t ^ (t >>> 14)) >>> 0;
  }

  /** Uniform in [0, 1) (mulberry32, written out again: this is the hottest call of a render). */
  uniform(): number {
    this.state = (this.state + 0x6d2b79f5) >>> 0;
    let t = this.state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  }

  /** Standard normal deviate (ziggurat). */
  normal(): number {
    const { kn, wn, fn } = this.zig;
    for (;;) {
      const b = this.bits();
      const iz = b & 127;
      const hz = (b | 0) >> 7; // signed 25-bit value from the other bits
      if (Math.abs(hz) < kn[iz]) return hz * wn[iz];
      const x = hz * wn[iz];
      if (iz === 0) {
        // Tail beyond r (Marsaglia 1964).
        let tx: number;
        let ty: number;
        do {
          tx = -Math.log(1 - this.uniform()) / ZIG_R;
          ty = -Math.log(1 - this.uniform());
        } while (ty + ty < tx * tx);
        return hz > 0 ? ZIG_R + tx : -ZIG_R - tx;
      }
      if (fn[iz] + this.uniform() * (fn[iz - 1] - fn[iz]) < Math.exp(-0.5 * x * x)) return x;
    }
  }

  /** A Poisson-distributed count with the given mean (0 for a mean ≤ 0). */
  poisson(mean: number): number {
    if (!(mean > 0)) return 0;
    if (mean < 10) {
      const j = Math.floor(mean * Q);
      const d = mean - j / Q;
      const t = this.cdf;
      const base = j * K;
      const u = this.uniform();
      let k = 0;
      while (u >= t[base + k]) k++;
      if (d <= 0) return k;
      // X₂ ~ Poisson(d) from the (uniform, independent) position of u inside its step.
      const lo = k === 0 ? 0 : t[base + k - 1];
      const w = (u - lo) / (t[base + k] - lo);
      // e^{−d} by its Taylor series to d⁴ (d < 1/32: error < d⁵/120 < 3e-10).
      let p = 1 - d * (1 - (d / 2) * (1 - (d / 3) * (1 - d / 4)));
      if (w < p) return k;
      let c = p;
      let k2 = 0;
      while (w >= c && k2 < 20) {
        k2++;
        p *= d / k2;
        c += p;
      }
      return k + k2;
    }
    return this.poissonLarge(mean);
  }

  /** PTRS (Hörmann 1993) for mean ≥ 10, constants as published. */
  private poissonLarge(mean: number): number {
    const slam = Math.sqrt(mean);
    const b = 0.931 + 2.53 * slam;
    const a = -0.059 + 0.02483 * b;
    const vr = 0.9277 - 3.6224 / (b - 2);
    for (;;) {
      const u = this.uniform() - 0.5;
      const v = this.uniform();
      const us = 0.5 - Math.abs(u);
      const k = Math.floor(((2 * a) / us + b) * u + mean + 0.43);
      if (us >= 0.07 && v <= vr) return k;
      if (k < 0 || (us < 0.013 && v > us)) continue;
      const invAlpha = 1.1239 + 1.1328 / (b - 3.4);
      if (Math.log(v) + Math.log(invAlpha) - Math.log(a / (us * us) + b) <= -mean + k * Math.log(mean) - logFactorial(k)) {
        return k;
      }
    }
  }
}
