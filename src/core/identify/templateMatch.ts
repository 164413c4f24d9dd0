import type { SpeciesTemplate } from './speciesTemplates.js';

/** How each peak's wavelength fits one species' template. */
export interface TemplateMatch {
  /**
   * Likelihood ratio of the peak's wavelength under "a line of this species" against "anywhere in the range":
   * W · Σ_f w_f Σ_c v_c 𝒩(λ; λ_c, σ_c), W the width of the range, w_f the feature's prior weight, c its components
   * (a blend: unresolved or resolved) with weights v_c. 0 beyond `matchSigma`.
   */
  ratio: Float64Array;
  /** The feature contributing most (−1 when none is within `matchSigma`). */
  feature: Int32Array;
  /** |λ − λ_c| / σ_c for the nearest component of that feature. */
  z: Float64Array;
}

const INV_SQRT_2PI = 1 / Math.sqrt(2 * Math.PI);

/**
 * Peak wavelengths λ_i with standard uncertainties σ_i (measurement and calibration combined) against a template; a
 * feature's own spread adds in quadrature.
 */
export function matchTemplate(
  template: SpeciesTemplate,
  wavelengthNm: Float64Array,
  sigmaNm: Float64Array,
  widthNm: number,
  matchSigma: number,
): TemplateMatch {
  const n = wavelengthNm.length;
  const ratio = new Float64Array(n);
  const feature = new Int32Array(n).fill(-1);
  const z = new Float64Array(n).fill(Infinity);
  const f = template.features;
  let maxSpread = 0;
  for (const x of f) maxSpread = Math.max(maxSpread, x.spreadSigmaNm);
  for (let i = 0; i < n; i++) {
    const reach = matchSigma * Math.sqrt(sigmaNm[i] ** 2 + maxSpread ** 2);
    // Features are sorted: binary search for the first within reach.
    let lo = 0;
    let hi = f.length;
    const start = wavelengthNm[i] - reach;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (f[mid].wavelengthNm < start) lo = mid + 1;
      else hi = mid;
    }
    let density = 0;
    let best = 0;
    for (let k = lo; k < f.length && f[k].wavelengthNm <= wavelengthNm[i] + reach; k++) {
      let d = 0;
      let zBest = Infinity;
      for (const c of f[k].components) {
        const s = Math.sqrt(sigmaNm[i] ** 2 + c.sigmaNm ** 2);
        const zc = Math.abs(wavelengthNm[i] - c.wavelengthNm) / s;
        if (zc > matchSigma) continue;
        d += (c.weight * INV_SQRT_2PI * Math.exp(-0.5 * zc * zc)) / s;
        zBest = Math.min(zBest, zc);
      }
      d *= template.weights[k];
      density += d;
      if (d > best) {
        best = d;
        feature[i] = k;
        z[i] = zBest;
      }
    }
    ratio[i] = density * widthNm;
  }
  return { ratio, feature, z };
}

export interface MixtureFit {
  /** ln of the likelihood ratio of the mixture against "every peak at a random wavelength". */
  logLikelihoodRatio: number;
  /** fractions[g][c]: share of component c among the peaks of flux class g (the last component: unexplained). */
  fractions: number[][];
  /** responsibilities[c][i]: probability that peak i comes from component c (the last component: unexplained). */
  responsibilities: Float64Array[];
}

/**
 * Peaks as a mixture of species and "unexplained" (uniform in wavelength): ln L = Σ_i ln(π_0 + Σ_s π_s q_is), with q_is
 * the likelihood ratios of `matchTemplate`; the shares π are fitted by expectation–maximisation (Dempster, Laird &
 * Rubin 1977), which converges monotonically for a mixture with fixed components. The shares may differ between
 * flux classes (`classes[i]` ∈ 0…classCount−1): a curated line list holds a species' strong lines, so its bright
 * peaks are nearly all listed lines while faint ones are often unlisted weaker lines — one share for all would let a
 * few faint strays dilute a species' brightest line.
 */
export function fitMixture(
  ratios: readonly Float64Array[],
  n: number,
  options: { iterations?: number; tolerance?: number; classes?: Int32Array; classCount?: number } = {},
): MixtureFit {
  const k = ratios.length;
  const iterations = options.iterations ?? 300;
  const tolerance = options.tolerance ?? 1e-9;
  const classes = options.classes ?? new Int32Array(n);
  const groups = options.classCount ?? 1;
  const pi = Array.from({ length: groups }, () => {
    const row = new Array<number>(k + 1);
    for (let c = 0; c < k; c++) row[c] = 0.5 / k;
    row[k] = k === 0 ? 1 : 0.5;
    return row;
  });
  const resp = Array.from({ length: k + 1 }, () => new Float64Array(n));
  const counts = new Array<number>(groups).fill(0);
  for (let i = 0; i < n; i++) counts[classes[i]]++;
  let previous = -Infinity;
  let logL = 0;
  for (let it = 0; it < iterations; it++) {
    logL = 0;
    const sums = Array.from({ length: groups }, () => new Array<number>(k + 1).fill(0));
    for (let i = 0; i < n; i++) {
      const g = classes[i];
      const row = pi[g];
      let total = row[k];
      for (let c = 0; c < k; c++) total += row[c] * ratios[c][i];
      logL += Math.log(total);
      for (let c = 0; c < k; c++) {
        const r = (row[c] * ratios[c][i]) / total;
        resp[c][i] = r;
        sums[g][c] += r;
      }
      resp[k][i] = row[k] / total;
      sums[g][k] += resp[k][i];
    }
    if (n === 0 || k === 0 || logL - previous < tolerance) break;
    previous = logL;
    for (let g = 0; g < groups; g++) {
      if (counts[g] === 0) continue;
      for (let c = 0; c <= k; c++) pi[g][c] = sums[g][c] / counts[g];
    }
  }
  return { logLikelihoodRatio: n === 0 ? 0 : logL, fractions: pi, responsibilities: resp };
}
