import { assertFinite } from '../errors.js';
import { DEG, angularDispersionDegPerNm, diffractionAngleDeg, orderLimits } from './gratingEquation.js';

/**
 * Figures people ask of a grating once its line density is known: period, which orders exist, how much each spreads
 * the spectrum, and how finely it can split two lines.
 *
 * - Angular dispersion dβ/dλ = m/(d cos β): it grows with the order, both through m and through 1/cos β.
 * - On a flat screen at distance D square to the beam, x = D tan θ, so dx/dλ = D sec²θ · dβ/dλ.
 * - Resolving power R = λ/δλ = mN with N = G·W the number of illuminated lines (Rayleigh criterion).
 */
export interface DerivedOptions {
  linesPerMm: number;
  linesPerMmUncertainty?: number;
  wavelengthNm: number;
  /** @default 0 */
  incidenceDeg?: number;
  /** Illuminated width of the grating across its lines (mm), e.g. the beam diameter: gives the resolving power. */
  illuminatedWidthMm?: number;
  /** Grating to screen (mm): gives the linear dispersion on the screen. */
  distanceMm?: number;
  /** List orders up to this |m|. @default 10 */
  maxListedOrder?: number;
}

export const DERIVED_DEFAULTS = { incidenceDeg: 0, maxListedOrder: 10 } as const;

export interface OrderFigures {
  order: number;
  diffractionAngleDeg: number;
  /** From the undeviated beam, θ = α + β. */
  deviationDeg: number;
  angularDispersionDegPerNm: number;
  linearDispersionMmPerNm?: number;
  resolvingPower?: number;
  /** λ/R: the closest pair of lines this order separates (nm). */
  resolvableNm?: number;
}

export interface DerivedFigures {
  periodUm: number;
  periodUncertaintyUm?: number;
  /** Highest positive and lowest negative order that exist at this wavelength and incidence. */
  maxOrder: number;
  minOrder: number;
  illuminatedLines?: number;
  orders: OrderFigures[];
}

export function derivedFigures(options: DerivedOptions): DerivedFigures {
  const { linesPerMm, wavelengthNm } = options;
  const incidenceDeg = options.incidenceDeg ?? DERIVED_DEFAULTS.incidenceDeg;
  const maxListed = options.maxListedOrder ?? DERIVED_DEFAULTS.maxListedOrder;
  assertFinite('linesPerMm', linesPerMm, Number.MIN_VALUE);
  assertFinite('wavelengthNm', wavelengthNm, Number.MIN_VALUE);
  if (options.illuminatedWidthMm !== undefined) assertFinite('illuminatedWidthMm', options.illuminatedWidthMm, Number.MIN_VALUE);
  if (options.distanceMm !== undefined) assertFinite('distanceMm', options.distanceMm, Number.MIN_VALUE);
  const { maxOrder, minOrder } = orderLimits({ linesPerMm, wavelengthNm, incidenceDeg });
  const lines = options.illuminatedWidthMm === undefined ? undefined : linesPerMm * options.illuminatedWidthMm;
  const orders: OrderFigures[] = [];
  for (let m = Math.max(minOrder, -maxListed); m <= Math.min(maxOrder, maxListed); m++) {
    if (m === 0) continue;
    const beta = diffractionAngleDeg({ linesPerMm, wavelengthNm, order: m, incidenceDeg });
    const disp = angularDispersionDegPerNm({ linesPerMm, wavelengthNm, order: m, incidenceDeg });
    if (beta === null || disp === null) continue;
    const theta = beta + incidenceDeg;
    const figures: OrderFigures = { order: m, diffractionAngleDeg: beta, deviationDeg: theta, angularDispersionDegPerNm: disp };
    if (options.distanceMm !== undefined && Math.abs(theta) < 90) {
      figures.linearDispersionMmPerNm = (options.distanceMm * disp * DEG) / Math.cos(theta * DEG) ** 2;
    }
    if (lines !== undefined) {
      figures.resolvingPower = Math.abs(m) * lines;
      figures.resolvableNm = wavelengthNm / figures.resolvingPower;
    }
    orders.push(figures);
  }
  const out: DerivedFigures = { periodUm: 1000 / linesPerMm, maxOrder, minOrder, orders };
  if (options.linesPerMmUncertainty !== undefined) out.periodUncertaintyUm = (1000 * options.linesPerMmUncertainty) / linesPerMm ** 2;
  if (lines !== undefined) out.illuminatedLines = lines;
  return out;
}
