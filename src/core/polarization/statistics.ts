/**
 * The few distribution tails the polarization tests need: χ² (goodness of fit) and F with two numerator degrees of
 * freedom (the test for adding a cos 4θ, sin 4θ pair to the Malus fit).
 */

/** ln Γ(x) for x > 0 (Lanczos approximation, g = 7, 9 coefficients; relative error below 1e-14). */
export function lnGamma(x: number): number {
  const c = [
    0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
    12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
  ];
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - lnGamma(1 - x);
  const z = x - 1;
  let s = c[0];
  for (let i = 1; i < 9; i++) s += c[i] / (z + i);
  const t = z + 7.5;
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(s);
}

/**
 * Regularized upper incomplete gamma Q(a, x) = Γ(a, x)/Γ(a): the power series below x = a + 1 and Lentz's continued
 * fraction above (the classic split, e.g. Press et al., Numerical Recipes, §6.2 — from memory).
 */
export function gammaQ(a: number, x: number): number {
  if (!(a > 0) || !(x >= 0)) return NaN;
  if (x === 0) return 1;
  const lnPre = a * Math.log(x) - x - lnGamma(a);
  if (x < a + 1) {
    let sum = 1 / a;
    let term = sum;
    for (let n = 1; n < 1000; n++) {
      term *= x / (a + n);
      sum += term;
      if (Math.abs(term) < Math.abs(sum) * 1e-16) break;
    }
    return Math.max(0, 1 - sum * Math.exp(lnPre));
  }
  const tiny = 1e-300;
  let b = x + 1 - a;
  let c = 1 / tiny;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < 1000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const delta = d * c;
    h *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  return Math.exp(lnPre) * h;
}

/** P(χ²_k > x): the probability of a χ² at least this large if the model and the uncertainties are right. */
export function chiSquareSurvival(x: number, dof: number): number {
  if (!(dof > 0)) return NaN;
  return gammaQ(dof / 2, Math.max(0, x) / 2);
}

/**
 * P(F > f) for the F distribution with (2, ν) degrees of freedom. With two numerator degrees of freedom the
 * regularized incomplete beta has the closed form I_x(1, ν/2) = 1 − (1 − x)^(ν/2), so P(F > f) = (1 + 2f/ν)^(−ν/2).
 */
export function fSurvival2(f: number, nu: number): number {
  if (!(nu > 0)) return NaN;
  if (!(f > 0)) return 1;
  return Math.pow(1 + (2 * f) / nu, -nu / 2);
}

/** The median (mean of the middle two for an even count); NaN for no values. */
export function median(values: ArrayLike<number>): number {
  const a = Float64Array.from(values).sort();
  const n = a.length;
  if (n === 0) return NaN;
  return n % 2 ? a[(n - 1) / 2] : 0.5 * (a[n / 2 - 1] + a[n / 2]);
}

/** Median absolute deviation scaled by 1.4826: a robust standard deviation for normal data. */
export function robustSigma(values: ArrayLike<number>): number {
  const m = median(values);
  const dev = Float64Array.from(values, (v) => Math.abs(v - m));
  return 1.4826 * median(dev);
}

/**
 * Mean and standard deviation after iteratively rejecting values more than `k` σ from the median (σ-clipping, the
 * usual sky estimator of aperture photometry). Unlike the median it does not snap to the quantisation levels of 8-bit
 * or compressed images, where the median of a smooth background can sit half a code step off its mean.
 */
export function clippedMeanSigma(values: ArrayLike<number>, k = 3, iterations = 5): { mean: number; sigma: number; count: number } {
  let kept = Array.from(values);
  if (kept.length === 0) return { mean: NaN, sigma: NaN, count: 0 };
  let centre = median(kept);
  let sigma = stdAbout(kept, mean(kept));
  for (let it = 0; it < iterations; it++) {
    const lo = centre - k * sigma;
    const hi = centre + k * sigma;
    const next = kept.filter((v) => v >= lo && v <= hi);
    if (next.length === kept.length || next.length < 3) break;
    kept = next;
    centre = mean(kept);
    sigma = stdAbout(kept, centre);
  }
  const m = mean(kept);
  return { mean: m, sigma: stdAbout(kept, m), count: kept.length };
}

function mean(values: number[]): number {
  let s = 0;
  for (const v of values) s += v;
  return s / values.length;
}

function stdAbout(values: number[], centre: number): number {
  if (values.length < 2) return 0;
  let s = 0;
  for (const v of values) s += (v - centre) ** 2;
  return Math.sqrt(s / (values.length - 1));
}
