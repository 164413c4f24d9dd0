/**
 * RGB spectral response of the simulated camera: three smooth curves (relative photoelectrons per photon) built
 * from a silicon-like quantum-efficiency hump, colour-filter terms and UV / IR cut-off edges.
 *
 * ILLUSTRATIVE ONLY: the shapes are of our own making, with the features real phone sensors share (R, G, B peaks
 * near 605, 535 and 465 nm, broad overlap, a little blue leak in R, a UV edge near 400 nm and an IR-cut edge near
 * 650–680 nm with a few-per-cent tail to ~730 nm). They describe no particular camera; do not use them to correct
 * a real camera's spectra.
 */
import { assertFinite, invalid } from '../errors.js';

/** A Gaussian bump or a smooth (logistic) rising edge, weighted. */
export type ResponseTerm =
  | { kind: 'gaussian'; centerNm: number; sigmaNm: number; weight: number }
  | { kind: 'rise'; edgeNm: number; widthNm: number; weight: number };

export interface SensorResponseModel {
  /** Colour-filter terms of each channel (summed). */
  filters: { r: ResponseTerm[]; g: ResponseTerm[]; b: ResponseTerm[] };
  /** Silicon quantum-efficiency hump (Gaussian in wavelength). */
  quantumEfficiency: { centerNm: number; sigmaNm: number };
  /** UV cut-off: logistic rise at edgeNm. */
  uvCut: { edgeNm: number; widthNm: number };
  /** IR-cut filter: logistic fall at edgeNm, plus a small `tail` transmission falling at tailEdgeNm. */
  irCut: { edgeNm: number; widthNm: number; tail: number; tailEdgeNm: number; tailWidthNm: number };
  /**
   * Channel gains: 'equalPhoton' scales R and B so that a spectrum flat in photons per nm gives equal R, G, B
   * (the simulated camera's white balance), G keeping its own scale; or explicit gains.
   */
  balance: 'equalPhoton' | { r: number; g: number; b: number };
}

export const DEFAULT_SENSOR_RESPONSE: SensorResponseModel = {
  filters: {
    r: [
      { kind: 'rise', edgeNm: 562, widthNm: 13, weight: 1 },
      { kind: 'gaussian', centerNm: 445, sigmaNm: 30, weight: 0.07 },
    ],
    g: [
      { kind: 'gaussian', centerNm: 535, sigmaNm: 38, weight: 1 },
      { kind: 'gaussian', centerNm: 475, sigmaNm: 20, weight: 0.05 },
    ],
    b: [
      { kind: 'gaussian', centerNm: 462, sigmaNm: 29, weight: 1 },
      { kind: 'gaussian', centerNm: 540, sigmaNm: 40, weight: 0.04 },
    ],
  },
  quantumEfficiency: { centerNm: 560, sigmaNm: 150 },
  uvCut: { edgeNm: 400, widthNm: 7 },
  irCut: { edgeNm: 652, widthNm: 10, tail: 0.03, tailEdgeNm: 725, tailWidthNm: 12 },
  balance: 'equalPhoton',
};

/** Relative response of each channel at one wavelength. */
export interface Rgb {
  r: number;
  g: number;
  b: number;
}

/** Evaluates a response model: λ (nm) → relative R, G, B response. */
export type SensorResponse = (wavelengthNm: number) => Rgb;

const logistic = (t: number): number => 1 / (1 + Math.exp(-t));

function term(t: ResponseTerm, l: number): number {
  if (t.kind === 'gaussian') return t.weight * Math.exp(-0.5 * ((l - t.centerNm) / t.sigmaNm) ** 2);
  return t.weight * logistic((l - t.edgeNm) / t.widthNm);
}

function checkTerms(name: string, terms: ResponseTerm[]): void {
  if (!Array.isArray(terms) || terms.length === 0) throw invalid(name, 'a non-empty list of response terms', terms);
  terms.forEach((t, i) => {
    assertFinite(`${name}[${i}].weight`, t.weight, 0);
    if (t.kind === 'gaussian') {
      assertFinite(`${name}[${i}].centerNm`, t.centerNm);
      assertFinite(`${name}[${i}].sigmaNm`, t.sigmaNm, Number.MIN_VALUE);
    } else if (t.kind === 'rise') {
      assertFinite(`${name}[${i}].edgeNm`, t.edgeNm);
      assertFinite(`${name}[${i}].widthNm`, t.widthNm, Number.MIN_VALUE);
    } else {
      throw invalid(`${name}[${i}].kind`, "'gaussian' or 'rise'", (t as { kind: unknown }).kind);
    }
  });
}

/** Builds the response function of a model (defaults: DEFAULT_SENSOR_RESPONSE). */
export function createSensorResponse(model: SensorResponseModel = DEFAULT_SENSOR_RESPONSE): SensorResponse {
  checkTerms('filters.r', model.filters.r);
  checkTerms('filters.g', model.filters.g);
  checkTerms('filters.b', model.filters.b);
  const { quantumEfficiency: qe, uvCut, irCut } = model;
  assertFinite('quantumEfficiency.sigmaNm', qe.sigmaNm, Number.MIN_VALUE);
  assertFinite('uvCut.widthNm', uvCut.widthNm, Number.MIN_VALUE);
  assertFinite('irCut.widthNm', irCut.widthNm, Number.MIN_VALUE);
  assertFinite('irCut.tail', irCut.tail, 0, 1);
  assertFinite('irCut.tailWidthNm', irCut.tailWidthNm, Number.MIN_VALUE);
  const common = (l: number): number =>
    Math.exp(-0.5 * ((l - qe.centerNm) / qe.sigmaNm) ** 2) *
    logistic((l - uvCut.edgeNm) / uvCut.widthNm) *
    ((1 - irCut.tail) * logistic((irCut.edgeNm - l) / irCut.widthNm) +
      irCut.tail * logistic((irCut.tailEdgeNm - l) / irCut.tailWidthNm));
  const raw = (l: number): Rgb => {
    const c = common(l);
    let r = 0;
    let g = 0;
    let b = 0;
    for (const t of model.filters.r) r += term(t, l);
    for (const t of model.filters.g) g += term(t, l);
    for (const t of model.filters.b) b += term(t, l);
    return { r: r * c, g: g * c, b: b * c };
  };
  let gains: Rgb;
  if (model.balance === 'equalPhoton') {
    const sum = { r: 0, g: 0, b: 0 };
    for (let l = 300; l <= 1100; l += 0.5) {
      const v = raw(l);
      sum.r += v.r;
      sum.g += v.g;
      sum.b += v.b;
    }
    gains = { r: sum.g / sum.r, g: 1, b: sum.g / sum.b };
  } else {
    assertFinite('balance.r', model.balance.r, 0);
    assertFinite('balance.g', model.balance.g, 0);
    assertFinite('balance.b', model.balance.b, 0);
    gains = model.balance;
  }
  return (wavelengthNm: number): Rgb => {
    const v = raw(wavelengthNm);
    return { r: v.r * gains.r, g: v.g * gains.g, b: v.b * gains.b };
  };
}
