import { assertFinite, invalid } from '../errors.js';
import { withDefaults } from './options.js';

export type PolarizationVerdict = 'polarized' | 'partially_polarized' | 'unpolarized' | 'inconclusive';

export interface VerdictOptions {
  /**
   * DoLP from which light counts as polarized. A laser sold as linearly polarized is specified at 100:1 or better
   * (DoLP ≥ 0.98); 0.9 leaves room for an uncorrected sheet polarizer and stray light on the card (common practice,
   * no source). @default 0.9
   */
  polarizedMinDolp?: number;
  /** DoLP up to which light counts as unpolarized (common practice, no source). @default 0.05 */
  unpolarizedMaxDolp?: number;
  /** Half-width of the interval DoLP ± k·σ that is compared with the thresholds. @default 2 */
  coverageFactor?: number;
}

/** The verdict thresholds: one constant, shown in the CLI's help and settable there. */
export const VERDICT_DEFAULTS = {
  polarizedMinDolp: 0.9,
  unpolarizedMaxDolp: 0.05,
  coverageFactor: 2,
} as const;

export interface Verdict {
  verdict: PolarizationVerdict;
  /** DoLP − k·σ and DoLP + k·σ, the interval the verdict rests on. */
  dolpLower: number;
  dolpUpper: number;
  thresholds: { polarizedMinDolp: number; unpolarizedMaxDolp: number; coverageFactor: number };
  /** One sentence saying why. */
  reason: string;
}

/**
 * The class the interval DoLP ± k·σ is consistent with: polarized when it reaches the polarized threshold but stays
 * above the unpolarized one, unpolarized when it reaches the unpolarized threshold but stays below the polarized one,
 * partially polarized when it lies between them, and inconclusive when it reaches both (the measurement cannot tell).
 */
export function polarizationVerdict(dolp: number, dolpUncertainty: number, options: VerdictOptions = {}): Verdict {
  const o = withDefaults(VERDICT_DEFAULTS, options) as Required<VerdictOptions>;
  assertFinite('polarizedMinDolp', o.polarizedMinDolp, 0, 1);
  assertFinite('unpolarizedMaxDolp', o.unpolarizedMaxDolp, 0, 1);
  assertFinite('coverageFactor', o.coverageFactor, 0);
  if (!(o.unpolarizedMaxDolp < o.polarizedMinDolp)) {
    throw invalid('unpolarizedMaxDolp', `a value below polarizedMinDolp (${o.polarizedMinDolp})`, o.unpolarizedMaxDolp);
  }
  assertFinite('dolp', dolp);
  const sigma = Number.isFinite(dolpUncertainty) ? dolpUncertainty : Infinity;
  const lower = dolp - o.coverageFactor * sigma;
  const upper = dolp + o.coverageFactor * sigma;
  const reachesPolarized = upper >= o.polarizedMinDolp;
  const reachesUnpolarized = lower <= o.unpolarizedMaxDolp;
  const thresholds = { polarizedMinDolp: o.polarizedMinDolp, unpolarizedMaxDolp: o.unpolarizedMaxDolp, coverageFactor: o.coverageFactor };
  const band = `DoLP ${fmt(dolp)} ± ${o.coverageFactor}×${fmt(sigma)}`;
  let verdict: PolarizationVerdict;
  let reason: string;
  if (reachesPolarized && reachesUnpolarized) {
    verdict = 'inconclusive';
    reason = `${band} spans both thresholds (${o.unpolarizedMaxDolp} and ${o.polarizedMinDolp}): the measurement is too uncertain to tell`;
  } else if (reachesPolarized) {
    verdict = 'polarized';
    reason = `${band} reaches the polarized threshold ${o.polarizedMinDolp}`;
  } else if (reachesUnpolarized) {
    verdict = 'unpolarized';
    reason = `${band} is consistent with at most ${o.unpolarizedMaxDolp}`;
  } else {
    verdict = 'partially_polarized';
    reason = `${band} lies between ${o.unpolarizedMaxDolp} and ${o.polarizedMinDolp}`;
  }
  return { verdict, dolpLower: lower, dolpUpper: upper, thresholds, reason };
}

function fmt(v: number): string {
  return Number.isFinite(v) ? (Math.abs(v) >= 0.01 ? v.toFixed(3) : v.toPrecision(2)) : '∞';
}
