/**
 * Photon and read noise for the renderer. Photoelectron counts are Poisson, drawn exactly: by sequential inversion
 * for means below 10, and above by the transformed rejection with squeeze of W. Hörmann, "The transformed rejection
 * method for generating Poisson random variables", Insurance: Mathematics and Economics 12 (1993) 39–45 (algorithm
 * PTRS). Read noise is normal (Marsaglia's polar method).
 *
 * The generator is mulberry32, the algorithm of core/random's createRandom, kept here as a class with its state in a
 * field so that a full-frame render (~6 million draws) runs several times faster than through closures; its state
 * is seeded from createRandom(seed), so a render is fixed by its seed.
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

export class NoiseGenerator {
  private state: number;
  private spare = 0;
  private hasSpare = false;

  constructor(seed: number) {
    this.state = Math.floor(createRandom(seed).uniform() * 4294967296) >>> 0;
  }

  /** Uniform in [0, 1) (mulberry32). */
  uniform(): number {
    this.state = (this.state + 0x6d2b79f5) >>> 0;
    let t = this.state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  }

  /** Standard normal (Marsaglia polar method, the second value of each pair kept for the next call). */
  normal(): number {
    if (this.hasSpare) {
      this.hasSpare = false;
      return this.spare;
    }
    let u: number;
    let v: number;
    let s: number;
    do {
      u = 2 * this.uniform() - 1;
      v = 2 * this.uniform() - 1;
      s = u * u + v * v;
    } while (s >= 1 || s === 0);
    const k = Math.sqrt((-2 * Math.log(s)) / s);
    this.spare = v * k;
    this.hasSpare = true;
    return u * k;
  }

  /** A Poisson-distributed count with the given mean (0 for a mean ≤ 0). */
  poisson(mean: number): number {
    if (!(mean > 0)) return 0;
    if (mean < 10) {
      // Sequential inversion: smallest k with P(X ≤ k) > u.
      const u = this.uniform();
      let p = Math.exp(-mean);
      let cdf = p;
      let k = 0;
      while (u >= cdf && k < 200) {
        k++;
        p *= mean / k;
        cdf += p;
      }
      return k;
    }
    // PTRS (Hörmann 1993), constants as published.
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
      if (Math.log(v) + Math.log(invAlpha) - Math.log(a / (us * us) + b) <= -mean + k * Math.log(mean) - logGamma(k + 1)) {
        return k;
      }
    }
  }
}
