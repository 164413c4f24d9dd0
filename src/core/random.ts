/**
 * Seeded pseudo-random numbers for renderers and recovery tests (never for anything a user measures).
 * mulberry32 (a public-domain 32-bit generator by Tommy Ettinger) with Box–Muller normals and a
 * Knuth / normal-approximation Poisson sampler.
 */
export interface Random {
  /** Uniform in [0, 1). */
  uniform(): number;
  /** Standard normal N(0, 1). */
  normal(): number;
  /** Poisson-distributed count with the given mean (normal approximation above a mean of 50). */
  poisson(mean: number): number;
}

export function createRandom(seed: number): Random {
  let state = seed >>> 0;
  let spare: number | null = null;
  const uniform = (): number => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  const normal = (): number => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    let u = 0;
    while (u === 0) u = uniform();
    const v = uniform();
    const r = Math.sqrt(-2 * Math.log(u));
    spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
  const poisson = (mean: number): number => {
    if (!(mean > 0)) return 0;
    if (mean > 50) return Math.max(0, Math.round(mean + Math.sqrt(mean) * normal()));
    const limit = Math.exp(-mean);
    let k = 0;
    let p = uniform();
    while (p > limit) {
      k++;
      p *= uniform();
    }
    return k;
  };
  return { uniform, normal, poisson };
}
