import { assertFinite, invalid } from '../errors.js';

/**
 * Refractive index of air and air ↔ vacuum wavelength conversion.
 *
 * - Ciddor, P. E., "Refractive index of air: new equations for the visible and near infrared", Appl. Opt. 35, 1566
 *   (1996), in the step-by-step form published by NIST (Stone & Zimmerman, Engineering Metrology Toolbox, App. A-III),
 *   with the IAPWS saturation vapour pressure over water and the Marti & Mauersberger formula over ice.
 * - Updated Edlén equation: Birch & Downs, Metrologia 30, 155 (1993) and 31, 315 (1994), with the NIST water term
 *   (App. A-IV of the same toolbox).
 * - IAU standard vacuum → air (Morton 2000, ApJS 130, 403, eq. 3, after Birch & Downs 1994) for standard air
 *   (15 °C, 101 325 Pa, dry, 450 ppm CO₂).
 *
 * All three formulas take the VACUUM wavelength; air → vacuum is therefore solved by fixed-point iteration
 * λvac ← λair · n(λvac), which converges to machine precision in a few steps since dn/dλ is tiny.
 */

export type AirFormula = 'ciddor' | 'edlen' | 'iau';

export interface AirConditions {
  /** Which formula. @default 'ciddor' */
  formula?: AirFormula;
  /** Air temperature (°C). @default 15 (standard air) */
  temperatureC?: number;
  /** Total pressure (Pa). @default 101325 */
  pressurePa?: number;
  /** Relative humidity (%). @default 0 (dry) */
  humidityPercent?: number;
  /** CO₂ mole fraction (ppm, µmol/mol); Ciddor only (Edlén and IAU assume 450 ppm). @default 450 */
  co2Ppm?: number;
}

/**
 * Standard air: 15 °C, 101 325 Pa, dry, 450 ppm CO₂ — the medium in which NIST ASD and the line list give
 * air wavelengths for 200–2000 nm. These are the defaults of every function here.
 */
export const STANDARD_AIR: Readonly<Required<AirConditions>> = Object.freeze({
  formula: 'ciddor',
  temperatureC: 15,
  pressurePa: 101_325,
  humidityPercent: 0,
  co2Ppm: 450,
});

export interface AirState {
  /** Vacuum wavelength (nm). */
  wavelengthNm: number;
  temperatureC: number;
  pressurePa: number;
  humidityPercent: number;
  co2Ppm: number;
}

/** The range over which the formulas are published as valid (nm, vacuum); outside it we refuse. */
export const AIR_FORMULA_RANGE_NM: Readonly<Record<AirFormula, readonly [number, number]>> = Object.freeze({
  ciddor: [300, 1700] as const,
  edlen: [300, 1700] as const,
  iau: [200, 100_000] as const,
});

function checkState(state: Partial<AirState>, formula: AirFormula): AirState {
  const s = { ...STANDARD_AIR, ...state } as AirState;
  const [lo, hi] = AIR_FORMULA_RANGE_NM[formula];
  assertFinite('wavelengthNm', s.wavelengthNm, lo, hi);
  assertFinite('temperatureC', s.temperatureC, -40, 100);
  assertFinite('pressurePa', s.pressurePa, 10_000, 140_000);
  assertFinite('humidityPercent', s.humidityPercent, 0, 100);
  assertFinite('co2Ppm', s.co2Ppm, 0, 2000);
  return s;
}

/**
 * Saturation vapour pressure (Pa) at temperature T: over water (IAPWS-IF97 equation, as in the NIST toolbox) at or
 * above 0 °C, over ice (Marti & Mauersberger 1993, IAPWS 1995 sublimation formula) below.
 */
export function saturationVapourPressurePa(temperatureC: number): number {
  assertFinite('temperatureC', temperatureC, -100, 370);
  const T = temperatureC + 273.15;
  if (temperatureC >= 0) {
    const K1 = 1.16705214528e3;
    const K2 = -7.24213167032e5;
    const K3 = -1.70738469401e1;
    const K4 = 1.20208247025e4;
    const K5 = -3.23255503223e6;
    const K6 = 1.49151086135e1;
    const K7 = -4.82326573616e3;
    const K8 = 4.05113405421e5;
    const K9 = -2.38555575678e-1;
    const K10 = 6.50175348448e2;
    const omega = T + K9 / (T - K10);
    const A = omega * omega + K1 * omega + K2;
    const B = K3 * omega * omega + K4 * omega + K5;
    const C = K6 * omega * omega + K7 * omega + K8;
    const X = -B + Math.sqrt(B * B - 4 * A * C);
    return 1e6 * Math.pow((2 * C) / X, 4);
  }
  const A1 = -13.928169;
  const A2 = 34.7078238;
  const theta = T / 273.16;
  const Y = A1 * (1 - Math.pow(theta, -1.5)) + A2 * (1 - Math.pow(theta, -1.25));
  return 611.657 * Math.exp(Y);
}

/** Compressibility of moist air, CIPM-81/91 (Davis 1992) as used by Ciddor; p in Pa, T in K, t in °C, xw mole fraction. */
function compressibility(p: number, T: number, xw: number): number {
  const t = T - 273.15;
  const a0 = 1.58123e-6;
  const a1 = -2.9331e-8;
  const a2 = 1.1043e-10;
  const b0 = 5.707e-6;
  const b1 = -2.051e-8;
  const c0 = 1.9898e-4;
  const c1 = -2.376e-6;
  const d = 1.83e-11;
  const e = -0.765e-8;
  const pt = p / T;
  return 1 - pt * (a0 + a1 * t + a2 * t * t + (b0 + b1 * t) * xw + (c0 + c1 * t) * xw * xw) + pt * pt * (d + e * xw * xw);
}

/**
 * Phase refractive index of moist air by Ciddor (1996), following the NIST step-by-step procedure.
 * Check value (NIST): 633.0 nm, 20 °C, 101 325 Pa, 50 % RH, 450 ppm → 1.000271373.
 */
export function refractiveIndexCiddor(state: Partial<AirState> & { wavelengthNm: number }): number {
  const s = checkState(state, 'ciddor');
  const sigma2 = Math.pow(1000 / s.wavelengthNm, 2); // (1/λ[µm])²
  const T = s.temperatureC + 273.15;
  const p = s.pressurePa;
  // Dispersion of standard dry air (15 °C, 101 325 Pa, 400 ppm) and of pure water vapour (20 °C, 1333 Pa).
  const k0 = 238.0185;
  const k1 = 5_792_105;
  const k2 = 57.362;
  const k3 = 167_917;
  const nas1 = (k1 / (k0 - sigma2) + k3 / (k2 - sigma2)) * 1e-8;
  const naxs1 = nas1 * (1 + 0.534e-6 * (s.co2Ppm - 450));
  const w0 = 295.235;
  const w1 = 2.6422;
  const w2 = -0.03238;
  const w3 = 0.004028;
  const nws1 = 1.022 * (w0 + w1 * sigma2 + w2 * sigma2 * sigma2 + w3 * sigma2 * sigma2 * sigma2) * 1e-8;
  // Water-vapour mole fraction with the enhancement factor f = α + βp + γt².
  const f = 1.00062 + 3.14e-8 * p + 5.6e-7 * s.temperatureC * s.temperatureC;
  const xw = (f * (s.humidityPercent / 100) * saturationVapourPressurePa(s.temperatureC)) / p;
  const R = 8.31451;
  const Ma = 1e-3 * (28.9635 + 12.011e-6 * (s.co2Ppm - 400));
  const Mw = 0.018015;
  const Za = compressibility(101_325, 288.15, 0);
  const Zw = compressibility(1333, 293.15, 1);
  const rhoAxs = (101_325 * Ma) / (Za * R * 288.15);
  const rhoWs = (1333 * Mw) / (Zw * R * 293.15);
  const Z = compressibility(p, T, xw);
  const rhoA = (p * Ma * (1 - xw)) / (Z * R * T);
  const rhoW = (p * Mw * xw) / (Z * R * T);
  return 1 + (rhoA / rhoAxs) * naxs1 + (rhoW / rhoWs) * nws1;
}

/**
 * Refractive index of moist air by the updated Edlén equation (Birch & Downs 1993, 1994) with the NIST water term:
 * (n−1)s·10⁸ = 8342.54 + 2406147/(130 − σ²) + 15998/(38.9 − σ²);
 * (n−1)tp = p(n−1)s/96095.43 · [1 + 10⁻⁸(0.601 − 0.00972 t)p]/(1 + 0.0036610 t);
 * n = n_tp − pv(0.037345 − 0.000401 σ²)·10⁻⁸, pv the partial pressure of water vapour (Pa). CO₂ is fixed at 450 ppm.
 */
export function refractiveIndexEdlen(state: Partial<AirState> & { wavelengthNm: number }): number {
  const s = checkState(state, 'edlen');
  const sigma2 = Math.pow(1000 / s.wavelengthNm, 2);
  const t = s.temperatureC;
  const p = s.pressurePa;
  const ns1 = (8342.54 + 2_406_147 / (130 - sigma2) + 15_998 / (38.9 - sigma2)) * 1e-8;
  const ntp1 = ((p * ns1) / 96_095.43) * ((1 + 1e-8 * (0.601 - 0.00972 * t) * p) / (1 + 0.003661 * t));
  const pv = (s.humidityPercent / 100) * saturationVapourPressurePa(t);
  return 1 + ntp1 - pv * (0.037345 - 0.000401 * sigma2) * 1e-8;
}

/**
 * IAU standard vacuum → air index for standard air (Morton 2000, eq. 3):
 * n = 1 + 8.34254e-5 + 2.406147e-2/(130 − s²) + 1.5998e-4/(38.9 − s²), s = 10⁴/λvac[Å] (µm⁻¹).
 */
export function refractiveIndexIau(wavelengthNm: number): number {
  assertFinite('wavelengthNm', wavelengthNm, AIR_FORMULA_RANGE_NM.iau[0], AIR_FORMULA_RANGE_NM.iau[1]);
  const s2 = Math.pow(1000 / wavelengthNm, 2);
  return 1 + 8.34254e-5 + 2.406147e-2 / (130 - s2) + 1.5998e-4 / (38.9 - s2);
}

/** Index of air at the given vacuum wavelength under `conditions` (defaults: STANDARD_AIR, Ciddor). */
export function refractiveIndexOfAir(wavelengthVacuumNm: number, conditions: AirConditions = {}): number {
  const formula = conditions.formula ?? STANDARD_AIR.formula;
  const state = { ...conditions, wavelengthNm: wavelengthVacuumNm };
  delete (state as AirConditions).formula;
  switch (formula) {
    case 'ciddor':
      return refractiveIndexCiddor(state);
    case 'edlen':
      return refractiveIndexEdlen(state);
    case 'iau':
      if (
        (conditions.temperatureC !== undefined && conditions.temperatureC !== STANDARD_AIR.temperatureC) ||
        (conditions.pressurePa !== undefined && conditions.pressurePa !== STANDARD_AIR.pressurePa) ||
        (conditions.humidityPercent !== undefined && conditions.humidityPercent !== 0) ||
        (conditions.co2Ppm !== undefined && conditions.co2Ppm !== STANDARD_AIR.co2Ppm)
      ) {
        throw invalid('formula', "'ciddor' or 'edlen' for non-standard air (the IAU formula is for standard air only)", formula);
      }
      return refractiveIndexIau(wavelengthVacuumNm);
    default:
      throw invalid('formula', "one of 'ciddor', 'edlen', 'iau'", formula);
  }
}

/** Air wavelength (nm) of light of vacuum wavelength `wavelengthVacuumNm`: λair = λvac / n(λvac). */
export function vacuumToAirNm(wavelengthVacuumNm: number, conditions: AirConditions = {}): number {
  return wavelengthVacuumNm / refractiveIndexOfAir(wavelengthVacuumNm, conditions);
}

/** Vacuum wavelength (nm) of light of air wavelength `wavelengthAirNm`, by fixed-point iteration on λvac = λair · n(λvac). */
export function airToVacuumNm(wavelengthAirNm: number, conditions: AirConditions = {}): number {
  assertFinite('wavelengthAirNm', wavelengthAirNm, 0);
  let vac = wavelengthAirNm * 1.00028;
  for (let i = 0; i < 20; i++) {
    const next = wavelengthAirNm * refractiveIndexOfAir(vac, conditions);
    if (Math.abs(next - vac) <= 1e-13 * vac) return next;
    vac = next;
  }
  return vac;
}
