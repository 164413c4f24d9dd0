import { InputError, assertFinite } from '../errors.js';

/**
 * Is the grating what its label says? A decision rule in the manner of ISO 14253-1 (conformity with specifications,
 * from memory): the measured value with its expanded uncertainty U = k·u must lie wholly inside the tolerance band to
 * be "within", wholly outside it to be "outside"; when the interval straddles a limit the measurement cannot tell.
 */

export type Tolerance = { kind: 'relative'; fraction: number } | { kind: 'absolute'; linesPerMm: number };

export interface VerdictOptions {
  linesPerMm: number;
  linesPerMmUncertainty: number;
  nominalLinesPerMm: number;
  tolerance: Tolerance;
  /** Coverage factor k of the expanded uncertainty. @default 2 (≈ 95 % for a normal distribution) */
  coverageFactor?: number;
}

export const VERDICT_DEFAULTS = { coverageFactor: 2 } as const;

export interface GratingVerdict {
  verdict: 'within' | 'outside' | 'cannot_tell';
  nominalLinesPerMm: number;
  lowerLimitLinesPerMm: number;
  upperLimitLinesPerMm: number;
  /** (measured − nominal)/nominal, %. */
  deviationPercent: number;
  expandedUncertaintyLinesPerMm: number;
  coverageFactor: number;
  /** One sentence for people. */
  explanation: string;
}

export function gratingVerdict(options: VerdictOptions): GratingVerdict {
  const { linesPerMm, linesPerMmUncertainty, nominalLinesPerMm, tolerance } = options;
  const k = options.coverageFactor ?? VERDICT_DEFAULTS.coverageFactor;
  assertFinite('linesPerMm', linesPerMm);
  assertFinite('linesPerMmUncertainty', linesPerMmUncertainty, 0);
  assertFinite('nominal', nominalLinesPerMm);
  if (!(nominalLinesPerMm > 0)) throw new InputError(`nominal: expected a positive line density (lines/mm), got ${nominalLinesPerMm}`, 'nominal');
  assertFinite('coverageFactor', k, 0);
  const half = tolerance.kind === 'relative' ? tolerance.fraction * nominalLinesPerMm : tolerance.linesPerMm;
  if (!(half > 0)) throw new InputError('tolerance: expected a positive tolerance such as 2% or 12 (lines/mm)', 'tolerance');
  const lower = nominalLinesPerMm - half;
  const upper = nominalLinesPerMm + half;
  const u = k * linesPerMmUncertainty;
  const verdict: GratingVerdict['verdict'] =
    linesPerMm - u >= lower && linesPerMm + u <= upper ? 'within' : linesPerMm + u < lower || linesPerMm - u > upper ? 'outside' : 'cannot_tell';
  const band = `${fmt(lower)}–${fmt(upper)} lines/mm`;
  const measured = `${fmt(linesPerMm)} ± ${fmt(u)} (k = ${k})`;
  const explanation =
    verdict === 'within'
      ? `within: ${measured} lies inside ${band}`
      : verdict === 'outside'
        ? `outside: ${measured} lies wholly outside ${band}`
        : `cannot tell: ${measured} straddles a limit of ${band}; measure more precisely (a longer distance, higher orders) to decide`;
  return {
    verdict,
    nominalLinesPerMm,
    lowerLimitLinesPerMm: lower,
    upperLimitLinesPerMm: upper,
    deviationPercent: (100 * (linesPerMm - nominalLinesPerMm)) / nominalLinesPerMm,
    expandedUncertaintyLinesPerMm: u,
    coverageFactor: k,
    explanation,
  };
}

/** Reads a tolerance as typed: `2%` (of the nominal) or `12` (lines/mm). */
export function parseTolerance(text: string, name = '--tolerance'): Tolerance {
  const t = String(text).trim();
  const pct = /^([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*%$/.exec(t);
  if (pct) {
    const v = Number(pct[1]);
    if (!(v > 0 && v < 100)) throw new InputError(`${name}: expected a percentage between 0 and 100, got ${JSON.stringify(text)}`, name);
    return { kind: 'relative', fraction: v / 100 };
  }
  const abs = /^((?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*(?:lines?\/mm|l\/mm|\/mm)?$/.exec(t);
  if (abs) {
    const v = Number(abs[1]);
    if (!(v > 0)) throw new InputError(`${name}: expected a positive tolerance, got ${JSON.stringify(text)}`, name);
    return { kind: 'absolute', linesPerMm: v };
  }
  throw new InputError(`${name}: expected a tolerance such as 2% or 12 (lines/mm), got ${JSON.stringify(text)}`, name);
}

function fmt(v: number): string {
  return Math.abs(v) >= 100 ? v.toFixed(1) : v.toFixed(2);
}
