import { InputError, assertFinite } from '../errors.js';
import { DEG } from './gratingEquation.js';
import { fitGratingModel, median, type ModelFit, type ModelObservation } from './fitModel.js';
import type { GratingMeasurement, PositionResidual } from './types.js';

/**
 * Screen method: a laser beam through the grating, a flat screen square to the incident beam at distance D, and the
 * spots of some orders measured along the screen.
 *
 * Geometry. The beam travels along +z and hits the grating at the origin; the screen is the plane z = D (D measured
 * along the incident beam from the grating to the screen). The grating may be tilted by α about the axis parallel
 * to its lines (a turn on its mount). Order m leaves at the deviation θ_m = α + β_m from the incident beam, with
 * sin β_m = mλG − sin α (see gratingEquation.ts), and meets the screen at
 *
 *     x_m = D tan θ_m = D tan(α + asin(mλG − sin α))
 *
 * from the undeviated spot (x_0 = 0: the zero order is undeviated whatever the tilt). A tilt makes the ±m spots
 * unequal: to first order x_{+m} − |x_{−m}| ∝ α, which is what lets α be fitted when orders on both sides are
 * measured. The separation of a symmetric pair, S_m = x_{+m} − x_{−m}, depends on α only to second order, so
 * separations alone cannot reveal a tilt (the result then assumes the given incidence, 0 by default, and says what
 * 5° would change).
 *
 * Neglected: the lateral shift of the beam in a tilted substrate (≈ t·sin α·(1 − cos α/√(n² − sin²α)), a fraction of
 * a millimetre for a 1–2 mm plate, the same for all orders to first order), a tip of the grating about the horizontal
 * axis (conical diffraction: spots on a slight curve; positions are measured along the line of spots), and a screen
 * not square to the beam.
 *
 * Positions are measured from the undeviated spot. If an order-0 reading is included, all positions are taken as
 * ruler readings with an arbitrary origin and that origin is fitted too.
 */

export interface ScreenPosition {
  order: number;
  positionMm: number;
  /** This spot's standard uncertainty; `positionUncertaintyMm` when absent. */
  uncertaintyMm?: number;
}

export interface ScreenSeparation {
  /** m > 0: the distance between the +m and −m spots. */
  order: number;
  separationMm: number;
  uncertaintyMm?: number;
}

export interface FitScreenOptions {
  /** Laser wavelength in air (nm); the angles are in air. */
  wavelengthNm: number;
  /** @default 0 (exact, fine for a HeNe; a diode laser is typically known to a few nm) */
  wavelengthUncertaintyNm?: number;
  /** Grating to screen along the incident beam (mm). */
  distanceMm: number;
  /** @default 0.2 % of the distance (a tape over a metre), stated in the warnings when assumed */
  distanceUncertaintyMm?: number;
  positions?: readonly ScreenPosition[];
  separations?: readonly ScreenSeparation[];
  /** Standard uncertainty of each spot position (mm). @default 1 (spot centre read against a mm ruler) */
  positionUncertaintyMm?: number;
  /** Fix the incidence (deg). When absent it is fitted if orders on both sides were measured, else taken as 0. */
  incidenceDeg?: number;
}

export const FIT_SCREEN_DEFAULTS = {
  wavelengthUncertaintyNm: 0,
  /** Relative to the distance. */
  distanceUncertaintyFraction: 0.002,
  positionUncertaintyMm: 1,
} as const;

/** A fit that leaves residuals this many times the stated uncertainty, and a few percent of a position, fits no grating. */
const INCONSISTENT_BIRGE = 10;
const INCONSISTENT_RELATIVE = 0.02;
/** The tilt quoted when the data cannot reveal it. */
const TILT_PROBE_DEG = 5;

export function fitScreen(options: FitScreenOptions): GratingMeasurement {
  const { wavelengthNm, distanceMm } = options;
  assertFinite('wavelengthNm', wavelengthNm);
  if (!(wavelengthNm > 0)) throw new InputError(`wavelength: expected a positive wavelength in nm, got ${wavelengthNm}`, 'wavelengthNm');
  assertFinite('distanceMm', distanceMm);
  if (!(distanceMm > 0)) {
    throw new InputError(`distance: expected the grating-to-screen distance (a positive length), got ${distanceMm} mm`, 'distanceMm');
  }
  const warnings: string[] = [];
  const assumed: string[] = [];
  const positionSigma = options.positionUncertaintyMm ?? FIT_SCREEN_DEFAULTS.positionUncertaintyMm;
  assertFinite('positionUncertaintyMm', positionSigma);
  if (!(positionSigma > 0)) throw new InputError(`position uncertainty: expected a positive length, got ${positionSigma} mm`, 'positionUncertaintyMm');
  const wavelengthSigma = options.wavelengthUncertaintyNm ?? FIT_SCREEN_DEFAULTS.wavelengthUncertaintyNm;
  assertFinite('wavelengthUncertaintyNm', wavelengthSigma, 0);
  const distanceSigma = options.distanceUncertaintyMm ?? FIT_SCREEN_DEFAULTS.distanceUncertaintyFraction * distanceMm;
  assertFinite('distanceUncertaintyMm', distanceSigma, 0);
  if (options.distanceUncertaintyMm === undefined) assumed.push(`distance ±${fmt(distanceSigma)} mm (0.2 %)`);
  if (options.wavelengthUncertaintyNm === undefined) assumed.push('wavelength exact');

  let positions = (options.positions ?? []).map((p, i) => {
    checkOrder(p.order, `positions[${i}]`);
    assertFinite(`position of order ${p.order}`, p.positionMm);
    const sigma = p.uncertaintyMm ?? positionSigma;
    if (!(sigma > 0)) throw new InputError(`uncertainty of order ${p.order}: expected a positive length, got ${sigma} mm`);
    return { order: p.order, value: p.positionMm, sigma };
  });
  const separations = (options.separations ?? []).map((s, i) => {
    checkOrder(s.order, `separations[${i}]`);
    if (!(s.order > 0)) throw new InputError(`separation of order ${s.order}: a separation is between the +m and −m spots; give m > 0`);
    assertFinite(`separation of order ${s.order}`, s.separationMm);
    if (!(s.separationMm > 0)) throw new InputError(`separation of order ${s.order}: expected a positive length, got ${s.separationMm} mm`);
    return { order: s.order, value: s.separationMm, sigma: s.uncertaintyMm ?? positionSigma };
  });
  if (positions.length + separations.length === 0) throw new InputError('no spot positions or separations given');
  const usesDefaultSigma = [...(options.positions ?? []), ...(options.separations ?? [])].some((p) => p.uncertaintyMm === undefined);
  if (options.positionUncertaintyMm === undefined && usesDefaultSigma) assumed.unshift(`positions ±${fmt(positionSigma)} mm`);

  // Ruler readings: with an order-0 reading the origin is fitted; the checks below use the mean zero reading.
  const zeros = positions.filter((p) => p.order === 0);
  const rulerMode = zeros.length > 0;
  const zeroRef = rulerMode ? zeros.reduce((s, p) => s + p.value, 0) / zeros.length : 0;
  const nonZero = positions.filter((p) => p.order !== 0);
  if (rulerMode && nonZero.length === 0 && separations.length === 0) throw new InputError('positions: only the undeviated spot (order 0) was given; give at least one diffracted order');

  // Sign convention: positive orders on the positive side. Mirror the data when the user's axis runs the other way.
  const signs = nonZero.map((p) => Math.sign(p.order * (p.value - zeroRef)));
  const atZero = nonZero.find((p) => p.value === zeroRef);
  if (atZero) throw new InputError(`position of order ${atZero.order}: a diffracted spot cannot coincide with the undeviated spot`);
  if (signs.some((s) => s > 0) && signs.some((s) => s < 0)) {
    const pos = nonZero.filter((p, i) => signs[i] > 0)[0];
    const neg = nonZero.filter((p, i) => signs[i] < 0)[0];
    throw new InputError(
      `positions inconsistent with any grating: order ${pos.order} at ${fmt(pos.value)} mm and order ${neg.order} at ${fmt(neg.value)} mm put orders of the same sign on opposite sides of the undeviated spot`,
    );
  }
  const mirrored = signs.length > 0 && signs.every((s) => s < 0);
  const unmirror = (v: number): number => (mirrored ? 2 * zeroRef - v : v);
  if (mirrored) {
    positions = positions.map((p) => ({ ...p, value: 2 * zeroRef - p.value }));
    warnings.push('the positive orders were on the negative side of the scale: the axis was mirrored (the tilt is reported on your scale)');
  }
  checkMonotonic(positions.filter((p) => p.order !== 0).map((p) => ({ order: p.order, distance: Math.abs(p.value - zeroRef) })), 'position');
  checkMonotonic(separations.map((s) => ({ order: s.order, distance: s.value })), 'separation');

  const hasBothSides = nonZero.some((p) => p.order > 0) && nonZero.some((p) => p.order < 0);
  const fitIncidence = options.incidenceDeg === undefined && hasBothSides;
  const incidenceDeg = options.incidenceDeg ?? 0;
  assertFinite('incidenceDeg', incidenceDeg, -80, 80);
  const fitOffset = rulerMode;
  const nParams = 1 + (fitIncidence ? 1 : 0) + (fitOffset ? 1 : 0);
  const nObs = positions.length + separations.length;
  if (nObs < nParams) {
    throw new InputError(
      `too few measurements: ${nObs} for ${nParams} unknowns (line density${fitIncidence ? ', tilt' : ''}${fitOffset ? ', ruler origin' : ''}); add another order`,
    );
  }

  // Starting line density: each spot alone at normal incidence, median over spots.
  const lambdaMm = wavelengthNm * 1e-6;
  const single = [
    ...nonZero.map((p) => Math.sin(Math.atan(Math.abs(p.value - zeroRef) / distanceMm)) / (Math.abs(p.order) * lambdaMm)),
    ...separations.map((s) => Math.sin(Math.atan(s.value / (2 * distanceMm))) / (s.order * lambdaMm)),
  ];
  const gStart = median(single);
  for (const order of new Set([...nonZero.map((p) => p.order), ...separations.flatMap((s) => [s.order, -s.order])])) {
    const s = order * lambdaMm * gStart - Math.sin(incidenceDeg * DEG);
    if (Math.abs(s) >= 1) {
      throw new InputError(
        `order ${order} cannot exist here: at the ≈${fmt(gStart)} lines/mm the other spots imply, sin β = ${s.toFixed(3)} (|sin β| must stay below 1 at ${fmt(wavelengthNm)} nm)`,
      );
    }
  }

  const solve = (d: number, fixedIncidence: number | null): ModelFit | null =>
    fitGratingModel({
      observations: buildObservations(positions, separations, d, lambdaMm),
      fitIncidence: fixedIncidence === null && fitIncidence,
      incidenceDeg: fixedIncidence ?? incidenceDeg,
      fitOffset,
      offsetStart: zeroRef,
      linesPerMmStart: gStart,
    });
  const fit = solve(distanceMm, null);
  if (!fit) throw new InputError('positions inconsistent with any grating: no line density and tilt place all the given orders on the screen');
  const residuals: PositionResidual[] = [...positions.map((p) => ({ ...p, kind: 'position' as const })), ...separations.map((s) => ({ ...s, kind: 'separation' as const }))].map(
    (o, i) => {
      const back = o.kind === 'position' ? unmirror : (v: number) => v;
      return {
        order: o.order,
        kind: o.kind,
        measuredMm: back(o.value),
        fittedMm: back(fit.fitted[i]),
        residualMm: back(o.value) - back(fit.fitted[i]),
        uncertaintyMm: o.sigma,
      };
    },
  );
  const birgeRatio = fit.dof > 0 ? Math.sqrt(fit.chi2 / fit.dof) : null;
  const worstRelative = Math.max(...residuals.filter((r) => r.order !== 0).map((r) => Math.abs(r.residualMm) / Math.abs(r.measuredMm - (r.kind === 'position' ? zeroRef : 0))));
  if (birgeRatio !== null && birgeRatio > INCONSISTENT_BIRGE && worstRelative > INCONSISTENT_RELATIVE) {
    const worst = residuals.reduce((a, b) => (Math.abs(b.residualMm) > Math.abs(a.residualMm) ? b : a));
    throw new InputError(
      `positions inconsistent with any grating: the best fit (${fmt(fit.linesPerMm)} lines/mm) still misses order ${worst.order} by ${fmt(worst.residualMm)} mm, ` +
        `${fmt(Math.abs(worst.residualMm) / worst.uncertaintyMm)}× its uncertainty; check the distance, the orders and the positions`,
    );
  }
  const scale = birgeRatio !== null && birgeRatio > 1 ? birgeRatio : 1;
  if (birgeRatio !== null && birgeRatio > 2) {
    warnings.push(`the spots scatter ${fmt(birgeRatio)}× more than their stated uncertainty: the fit uncertainty was scaled up by that factor`);
  }
  if (fit.dof === 0) warnings.push('no redundant measurement: the fit cannot check the spots against each other (measure more orders)');

  const fitSigma = Math.sqrt(Math.max(0, fit.covariance[0][0])) * scale;
  // ∂G/∂D by refitting at D ± h; G ∝ 1/λ exactly (positions depend on λG only), so ∂G/∂λ = −G/λ.
  const h = 1e-4 * distanceMm;
  const up = solve(distanceMm + h, fit.incidenceIndex >= 0 ? null : incidenceDeg);
  const down = solve(distanceMm - h, fit.incidenceIndex >= 0 ? null : incidenceDeg);
  const dGdD = up && down ? (up.linesPerMm - down.linesPerMm) / (2 * h) : 0;
  const budget = {
    fitLinesPerMm: fitSigma,
    distanceLinesPerMm: Math.abs(dGdD) * distanceSigma,
    wavelengthLinesPerMm: (fit.linesPerMm * wavelengthSigma) / wavelengthNm,
  };
  const total = Math.hypot(budget.fitLinesPerMm, budget.distanceLinesPerMm, budget.wavelengthLinesPerMm);

  const incidenceSigma = fit.incidenceIndex >= 0 ? Math.sqrt(Math.max(0, fit.covariance[fit.incidenceIndex][fit.incidenceIndex])) * scale : null;
  if (incidenceSigma !== null && Math.abs(fit.incidenceDeg) > Math.max(2 * incidenceSigma, 0.5)) {
    warnings.push(
      `the grating was tilted by ${(mirrored ? -fit.incidenceDeg : fit.incidenceDeg).toFixed(2)} ± ${incidenceSigma.toFixed(2)}° from square to the beam (the ±m spots are unequal); the fit accounts for it`,
    );
  }
  if (!fitIncidence && options.incidenceDeg === undefined) {
    const probe = solve(distanceMm, TILT_PROBE_DEG);
    const change = probe ? (100 * (probe.linesPerMm - fit.linesPerMm)) / fit.linesPerMm : NaN;
    warnings.push(
      `the tilt cannot be told from ${separations.length > 0 && nonZero.length === 0 ? 'separations' : 'orders on one side only'}: normal incidence assumed` +
        (Number.isFinite(change) ? ` (a ${TILT_PROBE_DEG}° tilt would change the result by ${change.toFixed(2)} %)` : ''),
    );
  }
  if (assumed.length > 0) warnings.push(`uncertainties not given, assumed: ${assumed.join(', ')}`);

  return {
    method: 'screen',
    linesPerMm: fit.linesPerMm,
    linesPerMmUncertainty: total,
    periodUm: 1000 / fit.linesPerMm,
    periodUncertaintyUm: (1000 * total) / (fit.linesPerMm * fit.linesPerMm),
    wavelengthNm,
    incidenceDeg: mirrored ? -fit.incidenceDeg : fit.incidenceDeg,
    incidenceUncertaintyDeg: incidenceSigma,
    incidenceFitted: fit.incidenceIndex >= 0,
    ...(fitOffset ? { zeroPositionMm: unmirror(fit.offset) } : {}),
    budget,
    residuals,
    chi2: fit.chi2,
    dof: fit.dof,
    birgeRatio,
    warnings,
  };
}

/** x_m = offset + D tan(α + asin(mλG − sin α)); NaN when the order cannot exist or misses the screen. */
export function screenPositionMm(order: number, linesPerMm: number, incidenceDeg: number, distanceMm: number, wavelengthMm: number): number {
  const a = incidenceDeg * DEG;
  const s = order * wavelengthMm * linesPerMm - Math.sin(a);
  if (!(Math.abs(s) < 1)) return NaN;
  const theta = a + Math.asin(s);
  if (!(Math.abs(theta) < Math.PI / 2)) return NaN;
  return distanceMm * Math.tan(theta);
}

function buildObservations(
  positions: ReadonlyArray<{ order: number; value: number; sigma: number }>,
  separations: ReadonlyArray<{ order: number; value: number; sigma: number }>,
  distanceMm: number,
  lambdaMm: number,
): ModelObservation[] {
  return [
    ...positions.map((p) => ({
      order: p.order,
      measured: p.value,
      sigma: p.sigma,
      predict: (g: number, a: number, off: number) => off + screenPositionMm(p.order, g, a, distanceMm, lambdaMm),
    })),
    ...separations.map((s) => ({
      order: s.order,
      measured: s.value,
      sigma: s.sigma,
      predict: (g: number, a: number) => screenPositionMm(s.order, g, a, distanceMm, lambdaMm) - screenPositionMm(-s.order, g, a, distanceMm, lambdaMm),
    })),
  ];
}

function checkOrder(order: number, where: string): void {
  if (!Number.isInteger(order)) throw new InputError(`${where}: a diffraction order is a whole number, got ${order}`);
}

/** On each side, a higher order lies farther out: x_m grows with |m| for any tilt below the grazing limit. */
function checkMonotonic(items: Array<{ order: number; distance: number }>, what: string): void {
  for (const side of [1, -1]) {
    const s = items.filter((i) => Math.sign(i.order) === side).sort((a, b) => Math.abs(a.order) - Math.abs(b.order));
    for (let i = 1; i < s.length; i++) {
      if (Math.abs(s[i].order) === Math.abs(s[i - 1].order)) continue;
      if (!(s[i].distance > s[i - 1].distance)) {
        throw new InputError(
          `positions inconsistent with any grating: order ${s[i].order} (${what} ${fmt(s[i].distance)} mm) is not farther out than order ${s[i - 1].order} (${fmt(s[i - 1].distance)} mm); higher orders always lie farther from the undeviated spot`,
        );
      }
    }
  }
}

function fmt(v: number): string {
  return Math.abs(v) >= 100 ? v.toFixed(1) : Math.abs(v) >= 1 ? v.toFixed(2) : v.toPrecision(2);
}
