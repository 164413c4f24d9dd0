import { InputError, invalid } from '../errors.js';
import { fitGrating, gratingLinesPerMm, type GratingFitOptions } from './gratingModel.js';
import { dispersionAtNmPerPx, wavelengthAtNm, type DispersionModel } from './model.js';
import { fitPolynomial, type PolynomialModel, type WeightedPoint } from './polynomialModel.js';
import { informationCriterion, informationCriterionKnownSigma } from './informationCriterion.js';
import { modelSigmaNm, scaleSigmaRangeNm } from './uncertainty.js';

/** A line with a known wavelength at a measured position: from a manual pair or from automatic matching. */
export interface CalibrationPoint {
  positionPx: number;
  /** Centroid standard uncertainty (px). */
  positionUncertaintyPx: number;
  /** Air wavelength (nm). */
  wavelengthNm: number;
  /**
   * Standard uncertainty of the reference wavelength as the camera sees it (nm): 0 for an isolated atomic line (NIST
   * wavelengths are good to ~0.001 nm), more for a broad phosphor peak or a line blended with lamp neighbours.
   */
  referenceUncertaintyNm?: number;
  source: 'manual' | 'matched';
  /** What the line is, for the residual table ('Hg I 546.074'). */
  label?: string;
  saturated?: boolean;
  blended?: boolean;
  /** Index of the peak it came from, if any. */
  peakIndex?: number;
}

export type ModelChoice = 'polynomial' | 'grating' | 'auto';

export interface FitDispersionOptions {
  /** Which model: a polynomial, the physical grating model, or whichever the information criterion prefers. @default 'auto' */
  model: ModelChoice;
  /** Polynomial degree 1–4, or null to choose it by the information criterion. @default null */
  degree: number | null;
  /** Highest polynomial degree considered. @default 4 */
  maxDegree: number;
  /** Information criterion for the degree and the model. @default 'aicc' */
  criterion: 'aicc' | 'bic';
  /** A line is clipped when its leave-one-out residual exceeds this many standard deviations. @default 3 */
  clipSigma: number;
  /** Floor on each line's centroid uncertainty (px): pixel phase, line shape, JPEG. @default 0.05 */
  minPositionUncertaintyPx: number;
  /** Floor for peaks with saturated samples (px): their flat tops centre less well. @default 0.3 */
  saturatedPositionUncertaintyPx: number;
  /**
   * Leave peaks flagged blended out of the fit while 3 others remain. Off by default: the peak finder's joint fit of
   * overlapping lines gives usable centres with their uncertainties, known lamp blends carry a reference
   * uncertainty, and clipping removes the rest. @default false
   */
  excludeBlended: boolean;
  /**
   * Lines whose reference wavelength is known to worse than this (nm) — blends with lamp neighbours of comparable
   * strength — are left out of the fit while 3 others remain. @default 0.3
   */
  maxReferenceUncertaintyNm: number;
  /** The physical model's fixed and tied parameters (order, incidence, focal length and axis priors). */
  grating: Partial<GratingFitOptions>;
}

/** The grating model may clip at most this share of the lines (beyond it, lens distortion or the like is at work). */
const MAX_MODEL_CLIPPED = 0.15;
/**
 * Residuals this far beyond the centroid uncertainties (χ²/dof, i.e. 10× in RMS) say the scale's curve is not fitted,
 * not that the uncertainties are a little optimistic (real photos run at χ²/dof of a few; common practice, no source).
 */
const CURVED_SCALE_REDUCED_CHI2 = 100;

export const FIT_DISPERSION_DEFAULTS: FitDispersionOptions = {
  model: 'auto',
  degree: null,
  maxDegree: 4,
  criterion: 'aicc',
  clipSigma: 3,
  minPositionUncertaintyPx: 0.05,
  saturatedPositionUncertaintyPx: 0.3,
  excludeBlended: false,
  maxReferenceUncertaintyNm: 0.3,
  grating: {},
};

export interface FittedLine {
  positionPx: number;
  positionUncertaintyPx: number;
  wavelengthNm: number;
  /** λ of the chosen model at the position. */
  fittedNm: number;
  /** Reference − fitted (nm). */
  residualNm: number;
  /** The same in pixels (residual / local dispersion). */
  residualPx: number;
  used: boolean;
  /**
   * Why a line was left out: 'outlier' (sigma-clipped), 'blended' (a peak flagged blended, with excludeBlended), or
   * 'imprecise' (its reference wavelength is uncertain beyond maxReferenceUncertaintyNm: a lamp blend, a broad peak).
   */
  excluded?: 'outlier' | 'blended' | 'imprecise';
  source: 'manual' | 'matched';
  label?: string;
  saturated: boolean;
  peakIndex?: number;
}

/** One model considered, with its information criterion on the lines used. */
export interface ModelCandidate {
  kind: 'polynomial' | 'grating';
  degree?: number;
  /** Parameters the criterion counts (effective ones for the grating model with priors), plus one for the scale. */
  parameterCount: number;
  criterion: number;
  rmsNm: number;
  /** Lines the criterion was computed on. */
  lines: number;
  /** RMS of the leave-one-out prediction errors (nm), where computed (the polynomial against the grating model). */
  predictionRmsNm?: number;
  chosen: boolean;
}

export interface DispersionFit {
  model: DispersionModel;
  /** For a polynomial, the same lines fitted with one degree more (bounds extrapolation); null otherwise. */
  checkModel: PolynomialModel | null;
  /** Positions of the first and last line used (px). */
  rangePx: [number, number];
  /** Wavelengths there (nm), ascending. */
  rangeNm: [number, number];
  /** dλ/dx at the middle of the range (nm/px, signed). */
  dispersionNmPerPx: number;
  lines: FittedLine[];
  linesUsed: number;
  /** Unweighted RMS of the used lines' residuals (nm, px). */
  rmsNm: number;
  rmsPx: number;
  /** χ²/dof with the a-priori centroid uncertainties; the covariance is scaled by it when > 1. */
  birgeRatio: number;
  dof: number;
  criterion: 'aicc' | 'bic';
  candidates: ModelCandidate[];
  /**
   * RMS (nm) of the chosen model's leave-one-out prediction errors on the lines used: how well each line is predicted
   * by the fit of the others (PRESS, Allen 1974); null when the lines are too few to leave one out.
   */
  predictionRmsNm: number | null;
  /** Least and greatest standard uncertainty of the fitted scale inside rangePx, √(gᵀCg) (nm, ascending). */
  scaleUncertaintyNm: [number, number];
  /** Grating model only: line density 10⁶/d and its standard uncertainty. */
  linesPerMm?: number;
  linesPerMmUncertainty?: number;
  warnings: string[];
}

interface Working {
  point: CalibrationPoint;
  sigmaPx: number;
  used: boolean;
  excluded?: 'outlier' | 'blended' | 'imprecise';
}

function checkOptions(o: FitDispersionOptions): void {
  if (!['polynomial', 'grating', 'auto'].includes(o.model)) throw invalid('model', "'poly', 'grating' or 'auto'", o.model);
  if (o.degree !== null && !(Number.isInteger(o.degree) && o.degree >= 1 && o.degree <= 4)) {
    throw invalid('degree', 'an integer from 1 to 4', o.degree);
  }
  if (!(Number.isInteger(o.maxDegree) && o.maxDegree >= 1 && o.maxDegree <= 4)) throw invalid('maxDegree', 'an integer from 1 to 4', o.maxDegree);
  if (!(o.clipSigma > 0)) throw invalid('clipSigma', 'a positive number', o.clipSigma);
}

/**
 * Fits the dispersion λ(x) to calibration lines: weighted least squares with the centroid uncertainties, iterative
 * sigma clipping on leave-one-out residuals, the polynomial degree (and, with `model: 'auto'`, polynomial versus
 * grating model) chosen by AICc or BIC, and the covariance for the wavelength uncertainty at any position.
 * Throws InputError when the lines cannot determine a scale (fewer than two distinct positions, a degree the lines
 * cannot support, a grating model that cannot be fitted when it was asked for).
 */
export function fitDispersion(points: readonly CalibrationPoint[], options: Partial<FitDispersionOptions> = {}): DispersionFit {
  const o: FitDispersionOptions = { ...FIT_DISPERSION_DEFAULTS, ...options, grating: { ...options.grating } };
  checkOptions(o);
  const warnings: string[] = [];
  points.forEach((p, i) => {
    if (!Number.isFinite(p.positionPx)) throw invalid(`lines[${i}].positionPx`, 'a finite position (px)', p.positionPx);
    if (!(Number.isFinite(p.wavelengthNm) && p.wavelengthNm > 0)) throw invalid(`lines[${i}].wavelengthNm`, 'a positive wavelength (nm)', p.wavelengthNm);
  });
  const work: Working[] = points.map((point) => {
    let s = Number.isFinite(point.positionUncertaintyPx) && point.positionUncertaintyPx > 0 ? point.positionUncertaintyPx : 0.5;
    s = Math.max(s, o.minPositionUncertaintyPx);
    if (point.saturated) s = Math.max(s, o.saturatedPositionUncertaintyPx);
    return { point, sigmaPx: s, used: true };
  });
  work.sort((a, b) => a.point.positionPx - b.point.positionPx);
  // The same wavelength at two positions, or two wavelengths at one position: a contradiction in the pairs.
  for (let i = 1; i < work.length; i++) {
    const a = work[i - 1].point;
    const b = work[i].point;
    if (a.positionPx === b.positionPx && a.wavelengthNm !== b.wavelengthNm) {
      throw new InputError(`two wavelengths (${a.wavelengthNm} and ${b.wavelengthNm} nm) given for one position (${a.positionPx} px)`, 'pairs');
    }
  }
  const distinct = new Set(work.map((w) => w.point.positionPx)).size;
  if (distinct < 2) {
    throw new InputError(
      `${distinct === 1 ? 'only one line' : 'no lines'} to calibrate with: a wavelength scale needs at least two lines at different positions (three or more to check it)`,
      'lines',
    );
  }
  if (work.every((w) => w.point.saturated)) {
    warnings.push('every calibration line comes from a saturated peak: positions are less certain; reduce the exposure and calibrate again');
  }
  const vague = (w: Working) => (w.point.referenceUncertaintyNm ?? 0) > o.maxReferenceUncertaintyNm;
  const leaveOut = (w: Working) => vague(w) || (o.excludeBlended && w.point.blended === true);
  if (work.filter((w) => !leaveOut(w)).length >= 3) {
    for (const w of work) {
      if (leaveOut(w)) {
        w.used = false;
        w.excluded = vague(w) ? 'imprecise' : 'blended';
      }
    }
  }
  // The lines either model may use, before clipping: each model clips them in its own right.
  const eligible = work.filter((w) => w.used);

  // Weights 1/σλ² with σλ = σx·|dλ/dx| from a first straight line through the used lines.
  const rough = fitPolynomial(toPoints(eligible), 1);
  if (!rough) throw new InputError('the calibration lines do not determine a scale (coincident positions)', 'lines');
  const roughDispersion = (x: number) => Math.abs(dispersionAtNmPerPx(rough.model, x));
  if (!(roughDispersion(work[0].point.positionPx) > 0)) {
    throw new InputError('the calibration lines give no dispersion: every line has the same wavelength', 'lines');
  }
  const weightOf = (w: Working) =>
    1 / ((w.sigmaPx * roughDispersion(w.point.positionPx)) ** 2 + (w.point.referenceUncertaintyNm ?? 0) ** 2);

  const fitPoly = (set: Working[], degree: number) => fitPolynomial(toPoints(set, weightOf), degree);
  const chooseDegree = (set: Working[]): number => {
    if (o.degree !== null) return o.degree;
    let best = 1;
    let bestScore = Infinity;
    for (let d = 1; d <= o.maxDegree; d++) {
      if (new Set(set.map((w) => w.point.positionPx)).size < d + 1) break;
      const fit = fitPoly(set, d);
      if (!fit) break;
      const score = informationCriterion(o.criterion, fit.chi2, set.length, d + 1);
      if (score < bestScore - 1e-9) {
        bestScore = score;
        best = d;
      }
    }
    // Residuals of the chosen degree far beyond the centroid uncertainties: the curve of the scale (or a wrong line)
    // is not noise, and the criterion above, which estimates the residual variance from those residuals, cannot see it
    // with few lines (it needs n ≥ degree + 4 to weigh a degree at all). Then the criterion with the variances known
    // decides whether another degree is worth it (five lines of a fluorescent tube, 405–691 nm, through a wide-angle
    // lens: a straight line misses the end line by 19 nm, a parabola fits all five to 0.15 nm). A wrong line that a
    // higher degree bends towards is still clipped below, judged by the lines around it.
    for (let d = best; d < o.maxDegree; d++) {
      const lower = fitPoly(set, d);
      if (!lower || !(lower.dof > 0) || lower.chi2 / lower.dof <= CURVED_SCALE_REDUCED_CHI2) break;
      if (new Set(set.map((w) => w.point.positionPx)).size < d + 2) break;
      const higher = fitPoly(set, d + 1);
      if (!higher) break;
      const known = (f: { chi2: number }, k: number) => informationCriterionKnownSigma(o.criterion, f.chi2, set.length, k);
      if (!(known(higher, d + 2) < known(lower, d + 1) - 1e-9)) break;
      best = d + 1;
    }
    return best;
  };
  /**
   * The fewest lines a clipped line must leave: its leave-one-out residual needs a degree of freedom in the fit of the
   * others. A line beyond the others (at an end of the range) is judged by the polynomial's extrapolation, which a
   * degree the others alone could not be given (n ≥ degree + 3 under the criterion with known variances) does not
   * bound: a correct end line would be taken for an outlier against the scale's unfitted curve.
   */
  const linesToKeep = (degree: number, endLine: boolean) => {
    if (o.degree !== null || degree === 1 || !endLine) return Math.max(3, degree + 2);
    return degree + 3;
  };

  // Iterative clipping on leave-one-out (externally studentized) residuals: each line is predicted by the fit of the
  // others, its error divided by its own σ scaled by the Birge ratio of that fit plus the prediction's σ (Belsley, Kuh &
  // Welsch 1980, Regression Diagnostics, §2.1). The line furthest off is clipped when beyond clipSigma, and the degree
  // chosen again. Judging every line by the others, not by a fit that includes it, keeps a wrong line at the end of the
  // range that the polynomial bends towards from getting a correct neighbour clipped in its place when there are lines
  // enough; with a handful, a polynomial cannot tell a wrong end line from the scale's curve (the grating model can).
  for (;;) {
    const used = work.filter((w) => w.used);
    const degree = chooseDegree(used);
    if (used.length - 1 < Math.max(3, degree + 2)) break;
    let worst = -1;
    let worstZ = 0;
    for (let i = 0; i < used.length; i++) {
      const others = used.filter((_, j) => j !== i);
      const loo = fitPoly(others, degree);
      if (!loo) continue;
      const w = used[i];
      const birge = loo.dof > 0 ? Math.max(1, loo.chi2 / loo.dof) : 1;
      const sigma2 = birge / weightOf(w) + modelSigmaNm(loo.model, w.point.positionPx) ** 2;
      const z = Math.abs(w.point.wavelengthNm - wavelengthAtNm(loo.model, w.point.positionPx)) / Math.sqrt(sigma2);
      if (z > worstZ) {
        worstZ = z;
        worst = i;
      }
    }
    if (worst < 0 || worstZ <= o.clipSigma) break;
    if (used.length - 1 < linesToKeep(degree, worst === 0 || worst === used.length - 1)) break;
    used[worst].used = false;
    used[worst].excluded = 'outlier';
  }

  let used = work.filter((w) => w.used);
  let degree = chooseDegree(used);
  if (used.length < degree + 1 || new Set(used.map((w) => w.point.positionPx)).size < degree + 1) {
    throw new InputError(`degree ${degree} needs at least ${degree + 1} lines at different positions; ${used.length} are usable`, 'degree');
  }
  const polynomialOn = (set: Working[], d: number) => {
    const fit = fitPoly(set, d);
    if (!fit) throw new InputError('the calibration lines do not determine the polynomial (coincident positions)', 'lines');
    return fit;
  };
  const polyCandidates = (set: Working[]): ModelCandidate[] => {
    const out: ModelCandidate[] = [];
    for (let d = 1; d <= o.maxDegree; d++) {
      const f = fitPoly(set, d);
      if (!f) continue;
      out.push({
        kind: 'polynomial',
        degree: d,
        parameterCount: d + 1,
        criterion: informationCriterion(o.criterion, f.chi2, set.length, d + 1),
        rmsNm: rmsOf(f.model, set),
        lines: set.length,
        chosen: false,
      });
    }
    return out;
  };
  let poly = polynomialOn(used, degree);
  let candidates = polyCandidates(used);

  // The physical model on the lines before the polynomial's clipping. It is clipped in its own right, at most
  // MAX_MODEL_CLIPPED of the lines, and then compared with the polynomials refitted on the lines it kept. Clipping
  // depends on the model: a polynomial of higher degree can absorb a slightly shifted line that the physics cannot,
  // and a low-degree polynomial fitted to the others mispredicts a correct line at the end of the range, which the
  // physical model extrapolates to well (a fluorescent tube's 404.7 nm seen from lines at 567–691 nm).
  let chosen: DispersionModel = poly.model;
  let chosenDof = poly.dof;
  let chosenChi2 = poly.chi2;
  if (o.model !== 'polynomial') {
    const gratingOn = (set: Working[]) => fitGrating(toPoints(set, weightOf), o.grating);
    let gSet = eligible.slice();
    let g = gratingOn(gSet);
    if (!g) {
      const why = `the grating model cannot be fitted to ${gSet.length} lines` +
        (o.grating.focalLengthPx ? '' : ' with the focal length unknown (no EXIF focal length; give --focal-px)');
      if (o.model === 'grating') throw new InputError(why, 'model');
      warnings.push(`${why}; the polynomial is used`);
    } else {
      const gClipped: Working[] = [];
      const maxClipped = Math.max(1, Math.floor(MAX_MODEL_CLIPPED * eligible.length));
      while (gClipped.length < maxClipped && gSet.length > 4) {
        const model = g.model;
        let worst = -1;
        let worstZ = 0;
        gSet.forEach((w, i) => {
          const z = Math.abs(w.point.wavelengthNm - wavelengthAtNm(model, w.point.positionPx)) * Math.sqrt(weightOf(w));
          if (z > worstZ) {
            worstZ = z;
            worst = i;
          }
        });
        if (worst < 0) break;
        const w = gSet[worst];
        const rest = gSet.filter((_, i) => i !== worst);
        const loo = gratingOn(rest);
        if (!loo) break;
        const birge = loo.dof > 0 ? Math.max(1, loo.chi2 / loo.dof) : 1;
        const sigma2 = birge / weightOf(w) + modelSigmaNm(loo.model, w.point.positionPx) ** 2;
        const z = Math.abs(w.point.wavelengthNm - wavelengthAtNm(loo.model, w.point.positionPx)) / Math.sqrt(sigma2);
        if (z <= o.clipSigma) break;
        gClipped.push(w);
        gSet = rest;
        g = loo;
      }
      const gCriterion = informationCriterion(o.criterion, g.chi2, gSet.length, g.effectiveParameters);
      const sameSet = gSet.length === used.length && gSet.every((w) => w.used);
      const onSet = sameSet ? candidates : polyCandidates(gSet);
      const degreeOnSet = sameSet ? degree : chooseDegree(gSet);
      // Polynomial against physics by leave-one-out prediction (PRESS: Allen 1974; cross-validation: Stone 1974) on
      // the same lines: unlike an information criterion it sees how badly a flexible polynomial predicts the end
      // lines from the others — extrapolation, what the physical model does well. In 'auto' the grating model wins
      // unless the polynomial predicts clearly better (less than half its mean squared prediction error); it also
      // reports the line density.
      const pressPoly = press(gSet, (set) => fitPoly(set, degreeOnSet)?.model ?? null, weightOf);
      const pressGrating = press(gSet, (set) => gratingOn(set)?.model ?? null, weightOf);
      const polyRow = onSet.find((c) => c.degree === degreeOnSet);
      if (polyRow) polyRow.predictionRmsNm = pressPoly.rmsNm;
      const takeGrating = o.model === 'grating' || !(pressPoly.weighted < 0.5 * pressGrating.weighted);
      const gCandidate: ModelCandidate = {
        kind: 'grating',
        parameterCount: g.effectiveParameters,
        criterion: gCriterion,
        rmsNm: rmsOf(g.model, gSet),
        predictionRmsNm: pressGrating.rmsNm,
        lines: gSet.length,
        chosen: false,
      };
      if (takeGrating) {
        chosen = g.model;
        chosenDof = g.dof;
        chosenChi2 = g.chi2;
        // The grating model's own clipping decides: lines only the polynomial rejected are used again.
        const kept = new Set(gSet);
        for (const w of eligible) {
          w.used = kept.has(w);
          w.excluded = kept.has(w) ? undefined : 'outlier';
        }
        if (!sameSet) {
          used = gSet;
          degree = degreeOnSet;
          poly = polynomialOn(used, degree);
          candidates = onSet;
        }
        if (!g.converged) warnings.push('the grating model fit did not converge fully; its parameters may be off');
      }
      candidates = [...candidates, gCandidate];
    }
  }
  const checkFit = new Set(used.map((w) => w.point.positionPx)).size >= degree + 2 ? fitPoly(used, degree + 1) : null;
  const checkModel = checkFit ? checkFit.model : null;
  for (const c of candidates) {
    c.chosen = chosen.kind === 'grating' ? c.kind === 'grating' : c.kind === 'polynomial' && c.degree === degree;
  }

  const lines: FittedLine[] = work.map((w) => {
    const fitted = wavelengthAtNm(chosen, w.point.positionPx);
    const disp = dispersionAtNmPerPx(chosen, w.point.positionPx);
    const r = w.point.wavelengthNm - fitted;
    return {
      positionPx: w.point.positionPx,
      positionUncertaintyPx: w.sigmaPx,
      wavelengthNm: w.point.wavelengthNm,
      fittedNm: fitted,
      residualNm: r,
      residualPx: disp !== 0 ? r / disp : NaN,
      used: w.used,
      excluded: w.excluded,
      source: w.point.source,
      label: w.point.label,
      saturated: w.point.saturated ?? false,
      peakIndex: w.point.peakIndex,
    };
  });
  const usedLines = lines.filter((l) => l.used);
  const rmsNm = Math.sqrt(usedLines.reduce((a, l) => a + l.residualNm ** 2, 0) / usedLines.length);
  const rmsPx = Math.sqrt(usedLines.reduce((a, l) => a + l.residualPx ** 2, 0) / usedLines.length);
  const rangePx: [number, number] = [usedLines[0].positionPx, usedLines[usedLines.length - 1].positionPx];
  const l0 = wavelengthAtNm(chosen, rangePx[0]);
  const l1 = wavelengthAtNm(chosen, rangePx[1]);
  const birgeRatio = chosenDof > 0 ? chosenChi2 / chosenDof : NaN;

  const clipped = lines.filter((l) => l.excluded === 'outlier');
  if (clipped.length) {
    warnings.push(
      `${clipped.length} line(s) rejected as outliers (> ${o.clipSigma} σ): ` +
        clipped.map((l) => `${l.label ?? `${l.wavelengthNm} nm`} at ${l.positionPx.toFixed(1)} px (${l.residualNm.toFixed(3)} nm)`).join(', '),
    );
  }
  const blended = lines.filter((l) => l.excluded === 'blended');
  if (blended.length) warnings.push(`${blended.length} blended peak(s) left out of the fit`);
  const imprecise = lines.filter((l) => l.excluded === 'imprecise');
  if (imprecise.length) {
    warnings.push(
      `${imprecise.length} line(s) left out of the fit because their wavelength as the camera records it is uncertain by more than ` +
        `${o.maxReferenceUncertaintyNm} nm (blends with lamp neighbours, broad phosphor peaks): ` +
        imprecise.map((l) => `${l.label ?? `${l.wavelengthNm} nm`} at ${l.positionPx.toFixed(1)} px`).join(', '),
    );
  }
  if (usedLines.length === 2) {
    warnings.push(
      chosen.kind === 'grating'
        ? "only two lines: the scale is the grating model through them, its focal length and axis held by their priors, with nothing to check it; its uncertainty covers centroid noise and the priors' spread only"
        : 'only two lines: the scale is a straight line through them with nothing to check it; its uncertainty covers centroid noise only',
    );
  } else if (chosenDof <= 0) {
    warnings.push(`${usedLines.length} lines for ${usedLines.length - chosenDof} parameters: no residual check of the model`);
  }
  if (birgeRatio > 9) {
    warnings.push(
      `the residuals (RMS ${rmsPx.toFixed(2)} px) are ${Math.sqrt(birgeRatio).toFixed(1)}× larger than the centroid uncertainties explain: ` +
        'a blend, a misidentified line or lens distortion; uncertainties are scaled up accordingly',
    );
  }
  // The chosen model's leave-one-out prediction RMS (computed above when the two models were compared).
  const chosenRow = candidates.find((c) => c.chosen);
  let predictionRmsNm = chosenRow?.predictionRmsNm ?? null;
  if (predictionRmsNm === null && chosen.kind === 'polynomial' && used.length > degree + 1) {
    const p = press(used, (set) => fitPoly(set, degree)?.model ?? null, weightOf);
    if (Number.isFinite(p.rmsNm)) {
      predictionRmsNm = p.rmsNm;
      if (chosenRow) chosenRow.predictionRmsNm = p.rmsNm;
    }
  }
  if (predictionRmsNm !== null && !Number.isFinite(predictionRmsNm)) predictionRmsNm = null;
  const result: DispersionFit = {
    model: chosen,
    predictionRmsNm,
    scaleUncertaintyNm: scaleSigmaRangeNm(chosen, rangePx),
    checkModel: chosen.kind === 'polynomial' ? checkModel : null,
    rangePx,
    rangeNm: [Math.min(l0, l1), Math.max(l0, l1)],
    dispersionNmPerPx: dispersionAtNmPerPx(chosen, (rangePx[0] + rangePx[1]) / 2),
    lines,
    linesUsed: usedLines.length,
    rmsNm,
    rmsPx,
    birgeRatio,
    dof: chosenDof,
    criterion: o.criterion,
    candidates,
    warnings,
  };
  if (chosen.kind === 'grating') {
    const { linesPerMm, uncertaintyLinesPerMm } = gratingLinesPerMm(chosen);
    result.linesPerMm = linesPerMm;
    result.linesPerMmUncertainty = uncertaintyLinesPerMm;
  }
  return result;
}

function toPoints(set: Working[], weightOf?: (w: Working) => number): WeightedPoint[] {
  return set.map((w) => ({ xPx: w.point.positionPx, wavelengthNm: w.point.wavelengthNm, weight: weightOf ? weightOf(w) : 1 / w.sigmaPx ** 2 }));
}

/**
 * Leave-one-out prediction errors of a model family on a set: each line predicted by the model fitted to the others.
 * `weighted` is the mean of w·r², `rmsNm` the plain RMS; Infinity when some refit fails.
 */
function press(
  set: Working[],
  fit: (set: Working[]) => DispersionModel | null,
  weightOf: (w: Working) => number,
): { weighted: number; rmsNm: number } {
  let weighted = 0;
  let plain = 0;
  for (let i = 0; i < set.length; i++) {
    const model = fit(set.filter((_, j) => j !== i));
    if (!model) return { weighted: Infinity, rmsNm: Infinity };
    const r = set[i].point.wavelengthNm - wavelengthAtNm(model, set[i].point.positionPx);
    weighted += weightOf(set[i]) * r * r;
    plain += r * r;
  }
  return { weighted: weighted / set.length, rmsNm: Math.sqrt(plain / set.length) };
}

function rmsOf(model: DispersionModel, set: Working[]): number {
  return Math.sqrt(set.reduce((a, w) => a + (w.point.wavelengthNm - wavelengthAtNm(model, w.point.positionPx)) ** 2, 0) / set.length);
}
