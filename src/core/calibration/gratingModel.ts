import { levenbergMarquardt } from '../fit/index.js';
import type { WeightedPoint } from './polynomialModel.js';

const DEG = Math.PI / 180;

/**
 * Physical dispersion of a transmission grating in front of a pinhole camera:
 *
 *   λ(x) = (d/m) · (sin θi + sin(θc + atan(s·(x − x0)/f)))
 *
 * d groove spacing (nm), m diffraction order, θi angle of incidence on the grating, θc angle of the camera axis from
 * the grating normal, x0 where the camera axis meets the band (px along the band), f focal length (px), s = ±1 the
 * direction in which the diffraction angle grows along the band. This is the grating equation mλ = d(sin α + sin β)
 * (e.g. Palmer & Loewen, *Diffraction Grating Handbook*) with β = θc + atan(s(x − x0)/f) from pinhole projection.
 *
 * Degeneracies, and what is fixed: θi enters only through d·sin θi, a constant that trades against d and θc, so it
 * is fixed (0 by default: the lamp seen straight through the grating). θc and x0 are degenerate to first order
 * (moving x0 by δ is undone by θc + δ/f, leaving a term of order u²·δ/f): x0 is tied to the principal point (the
 * image centre projected on the band) by a prior when the image is known, and f to the EXIF focal length when known;
 * a free parameter without such a prior is determined by the curvature of the line positions alone.
 */
export interface GratingModel {
  kind: 'grating';
  /** Diffraction order m (≥ 1), fixed. */
  order: number;
  /** θi, fixed. */
  incidenceAngleDeg: number;
  /** s: +1 when the diffraction angle grows with x. */
  direction: 1 | -1;
  grooveSpacingNm: number;
  cameraAngleDeg: number;
  axisPositionPx: number;
  focalLengthPx: number;
  /** Covariance of [grooveSpacingNm, cameraAngleDeg, axisPositionPx, focalLengthPx]; rows of fixed parameters are 0. */
  covariance: number[][];
  /** Which of the four were fitted. */
  free: [boolean, boolean, boolean, boolean];
}

export const GRATING_PARAMETERS = ['grooveSpacingNm', 'cameraAngleDeg', 'axisPositionPx', 'focalLengthPx'] as const;

/** Lines per millimetre 10⁶/d (d in nm) and its standard uncertainty. */
export function gratingLinesPerMm(model: GratingModel): { linesPerMm: number; uncertaintyLinesPerMm: number } {
  const d = model.grooveSpacingNm;
  const sd = Math.sqrt(Math.max(0, model.covariance[0][0]));
  return { linesPerMm: 1e6 / d, uncertaintyLinesPerMm: (1e6 * sd) / (d * d) };
}

function angle(model: Pick<GratingModel, 'direction' | 'cameraAngleDeg' | 'axisPositionPx' | 'focalLengthPx'>, xPx: number) {
  const u = (model.direction * (xPx - model.axisPositionPx)) / model.focalLengthPx;
  return { u, phi: model.cameraAngleDeg * DEG + Math.atan(u) };
}

export function gratingWavelengthNm(model: GratingModel, xPx: number): number {
  const { phi } = angle(model, xPx);
  return (model.grooveSpacingNm / model.order) * (Math.sin(model.incidenceAngleDeg * DEG) + Math.sin(phi));
}

/** dλ/dx (nm/px). */
export function gratingDispersionNmPerPx(model: GratingModel, xPx: number): number {
  const { u, phi } = angle(model, xPx);
  return ((model.grooveSpacingNm / model.order) * Math.cos(phi) * model.direction) / (model.focalLengthPx * (1 + u * u));
}

/** ∂λ/∂[d, θc (deg), x0, f]. */
export function gratingGradient(model: GratingModel, xPx: number): number[] {
  const { u, phi } = angle(model, xPx);
  const a = model.grooveSpacingNm / model.order;
  const c = a * Math.cos(phi);
  const q = 1 / (1 + u * u);
  return [
    (Math.sin(model.incidenceAngleDeg * DEG) + Math.sin(phi)) / model.order,
    c * DEG,
    (-c * model.direction * q) / model.focalLengthPx,
    (-c * u * q) / model.focalLengthPx,
  ];
}

/** A Gaussian prior on a parameter (value ± sigma), or a fixed value (sigma 0). */
export interface ParameterPrior {
  value: number;
  sigma: number;
}

export interface GratingFitOptions {
  /** @default 1 */
  order: number;
  /** @default 0 */
  incidenceAngleDeg: number;
  /** Focal length (px): fixed (sigma 0), a prior, or null to fit it from the curvature alone. */
  focalLengthPx: ParameterPrior | null;
  /** Axis position x0 (px along the band): fixed, a prior, or null to fit it freely. */
  axisPositionPx: ParameterPrior | null;
}

export const GRATING_FIT_DEFAULTS: GratingFitOptions = {
  order: 1,
  incidenceAngleDeg: 0,
  focalLengthPx: null,
  axisPositionPx: null,
};

export interface GratingFit {
  model: GratingModel;
  /** Σ w r² over the lines alone (priors excluded). */
  chi2: number;
  /** Lines plus priors minus free parameters. */
  dof: number;
  /** Free parameters. */
  parameterCount: number;
  /**
   * Effective number of parameters the lines determine: the trace of the hat matrix over the lines,
   * Σ w_i g_iᵀ (JᵀWJ + priors)⁻¹ g_i (Hastie & Tibshirani's effective degrees of freedom). Priors that pin a
   * parameter take it out of the count; used by the information criterion.
   */
  effectiveParameters: number;
  converged: boolean;
}

/**
 * Fits d, θc, x0 and f (each free, tied by a prior, or fixed) by Levenberg–Marquardt, priors entering as
 * pseudo-observations. Started from the local wavelength and dispersion of a straight-line fit, over a few focal
 * lengths when f has no prior; the best χ² wins. Covariance: (JᵀWJ)⁻¹ scaled by the Birge ratio when it exceeds 1,
 * as for the polynomial. Returns null when the lines cannot determine the model (fewer lines than free parameters
 * without priors, a singular covariance, or no physical solution).
 */
export function fitGrating(points: readonly WeightedPoint[], options: Partial<GratingFitOptions> = {}): GratingFit | null {
  const o: GratingFitOptions = { ...GRATING_FIT_DEFAULTS, ...options };
  const n = points.length;
  if (n < 2) return null;
  const sinI = Math.sin(o.incidenceAngleDeg * DEG);
  // Straight-line start: wavelength and dispersion at the centre of the lines.
  let sw = 0, sx = 0, sy = 0, sxx = 0, sxy = 0;
  for (const p of points) {
    sw += p.weight;
    sx += p.weight * p.xPx;
    sy += p.weight * p.wavelengthNm;
  }
  const xc = sx / sw;
  const yc = sy / sw;
  for (const p of points) {
    sxx += p.weight * (p.xPx - xc) ** 2;
    sxy += p.weight * (p.xPx - xc) * (p.wavelengthNm - yc);
  }
  if (!(sxx > 0)) return null;
  const slope = sxy / sxx;
  if (!(Math.abs(slope) > 0)) return null;
  const direction: 1 | -1 = slope > 0 ? 1 : -1;
  let lo = Infinity, hi = -Infinity;
  for (const p of points) {
    lo = Math.min(lo, p.xPx);
    hi = Math.max(hi, p.xPx);
  }
  const span = Math.max(hi - lo, 1);

  const fixedF = o.focalLengthPx && o.focalLengthPx.sigma === 0;
  const fixedX0 = o.axisPositionPx && o.axisPositionPx.sigma === 0;
  const free: [boolean, boolean, boolean, boolean] = [true, true, !fixedX0, !fixedF];
  const freeIdx = free.flatMap((f, j) => (f ? [j] : []));
  const priors: Array<{ index: number; prior: ParameterPrior }> = [];
  if (o.axisPositionPx && !fixedX0) priors.push({ index: 2, prior: o.axisPositionPx });
  if (o.focalLengthPx && !fixedF) priors.push({ index: 3, prior: o.focalLengthPx });
  if (n + priors.length < freeIdx.length) return null;

  const fStarts = o.focalLengthPx ? [o.focalLengthPx.value] : [0.4, 0.8, 1.5, 3, 6].map((k) => k * span);
  const x0Start = o.axisPositionPx ? o.axisPositionPx.value : xc;

  // The best start by the full objective (lines + priors).
  let best: (GratingFit & { fullChi2: number }) | null = null;
  for (const f0 of fStarts) {
    const uc = (direction * (xc - x0Start)) / f0;
    const k = Math.abs(slope) * f0 * (1 + uc * uc); // (d/m)·cos φc
    // (d/m)² cos²φ + ((d/m) sin φ)² with (d/m) sin φ = λc − (d/m) sin θi: a quadratic in a = d/m.
    const A = 1 - sinI * sinI;
    const B = 2 * yc * sinI;
    const C = -(k * k + yc * yc);
    const a = (-B + Math.sqrt(B * B - 4 * A * C)) / (2 * A);
    if (!(a > 0)) continue;
    const phic = Math.atan2(yc / a - sinI, k / a);
    const full0 = [a * o.order, (phic - Math.atan(uc)) / DEG, x0Start, f0];
    const expand = (p: readonly number[]): number[] => {
      const full = full0.slice();
      freeIdx.forEach((j, i) => (full[j] = p[i]));
      return full;
    };
    const asModel = (full: readonly number[]): GratingModel => ({
      kind: 'grating',
      order: o.order,
      incidenceAngleDeg: o.incidenceAngleDeg,
      direction,
      grooveSpacingNm: full[0],
      cameraAngleDeg: full[1],
      axisPositionPx: full[2],
      focalLengthPx: full[3],
      covariance: [],
      free,
    });
    // Pseudo-observations: index i < n is line i; index n + j is the prior on parameter priors[j].
    const xs = Array.from({ length: n + priors.length }, (_, i) => i);
    const ys = [...points.map((p) => p.wavelengthNm), ...priors.map((p) => p.prior.value)];
    const ws = [...points.map((p) => p.weight), ...priors.map((p) => 1 / p.prior.sigma ** 2)];
    const model = (i: number, p: readonly number[]): number => {
      const full = expand(p);
      if (i >= n) return full[priors[i - n].index];
      return gratingWavelengthNm(asModel(full), points[i].xPx);
    };
    const jacobian = (i: number, p: readonly number[]): number[] => {
      const full = expand(p);
      if (i >= n) return freeIdx.map((j) => (j === priors[i - n].index ? 1 : 0));
      const g = gratingGradient(asModel(full), points[i].xPx);
      return freeIdx.map((j) => g[j]);
    };
    const minF = Math.max(span * 0.05, 1);
    const fit = levenbergMarquardt(model, xs, ys, freeIdx.map((j) => full0[j]), {
      weights: ws,
      jacobian,
      scaleByResiduals: false,
      maxIterations: 300,
      min: freeIdx.map((j) => (j === 0 ? 1 : j === 1 ? -89 : j === 3 ? minF : -Infinity)),
      max: freeIdx.map((j) => (j === 1 ? 89 : Infinity)),
    });
    if (!fit.covariance.every((row) => row.every(Number.isFinite))) continue;
    let chi2 = 0;
    for (let i = 0; i < n; i++) chi2 += ws[i] * fit.residuals[i] ** 2;
    if (!Number.isFinite(chi2)) continue;
    const full = expand(fit.params);
    const dof = n + priors.length - freeIdx.length;
    const birge = dof > 0 ? Math.max(1, fit.chi2 / dof) : 1;
    const covariance = Array.from({ length: 4 }, () => new Array<number>(4).fill(0));
    freeIdx.forEach((ja, a2) => freeIdx.forEach((jb, b2) => (covariance[ja][jb] = fit.covariance[a2][b2] * birge)));
    let effective = 0;
    for (let i = 0; i < n; i++) {
      const g = jacobian(i, fit.params);
      let q = 0;
      for (let a2 = 0; a2 < g.length; a2++) for (let b2 = 0; b2 < g.length; b2++) q += g[a2] * fit.covariance[a2][b2] * g[b2];
      effective += ws[i] * q;
    }
    const candidate: GratingFit & { fullChi2: number } = {
      model: { ...asModel(full), covariance },
      chi2,
      dof,
      parameterCount: freeIdx.length,
      effectiveParameters: effective,
      converged: fit.converged,
      fullChi2: fit.chi2,
    };
    if (!best || candidate.fullChi2 < best.fullChi2) best = candidate;
  }
  if (!best) return null;
  return {
    model: best.model,
    chi2: best.chi2,
    dof: best.dof,
    parameterCount: best.parameterCount,
    effectiveParameters: best.effectiveParameters,
    converged: best.converged,
  };
}
