import { linearLeastSquares, type LinearFit } from '../fit/index.js';
import type { LabelledPeak } from './assignModes.js';

/**
 * Time → frequency for every sweep, from the repeats of the mode pattern.
 *
 * Mode k is transmitted whenever the interferometer's resonance reaches it in some order, so its peaks satisfy
 *
 *     ν_s(τ) = c_s + Σ_{p=1..P} a_{s,p} (τ/T_s)^p = f_k + j·FSR
 *
 * (τ time within sweep s, T_s its duration, j the repeat). With the FSR known this is linear in the unknowns (c_s,
 * a_{s,p} per sweep, mode frequencies f_k common to all sweeps, f of the reference mode fixed at 0) and is solved by
 * weighted least squares. The polynomial absorbs the piezo's non-linearity; its degree P is chosen by the Bayesian
 * information criterion among 1…3, and is at most the number of repeats in the sweep: the curvature terms are
 * constrained by how the repeat period changes along the sweep, which needs the pattern seen at several places. The comb form f_k = f_0 + kΔν (longitudinal modes are equally spaced) gives the mode
 * spacing directly with its uncertainty.
 */
export interface FrequencyScaleOptions {
  fsrHz: number;
  /** Highest polynomial degree tried. @default 3 */
  maxDegree?: number;
}

export const FREQUENCY_SCALE_DEFAULTS = { maxDegree: 3 } as const;

export interface SweepScale {
  segment: number;
  durationS: number;
  /** [c, a1, a2, …] in Hz, for u = τ/T. */
  coefficientsHz: number[];
  repeats: number;
}

export interface FrequencyScale {
  degree: number;
  sweeps: SweepScale[];
  /** Mode frequencies relative to the reference mode (Hz), by mode index, from the free fit. */
  modeOffsetsHz: Map<number, number>;
  modeOffsetUncertaintiesHz: Map<number, number>;
  referenceMode: number;
  /** From the comb fit. */
  modeSpacingHz: number;
  modeSpacingUncertaintyHz: number;
  /** Frequency residuals of the comb fit (Hz), per used peak. */
  residualsHz: number[];
  rmsHz: number;
  /** Peaks used (labelled, in sweeps with ≥ 2 repeats). */
  used: LabelledPeak[];
  /** χ²/dof of the free-mode fit against the comb fit's, to test even spacing. */
  combChi2PerDof: number;
  freeChi2PerDof: number;
}

/** ν at time τ in a sweep. */
export function sweepFrequencyHz(sweep: SweepScale, timeS: number): number {
  const u = timeS / sweep.durationS;
  let v = 0;
  for (let p = sweep.coefficientsHz.length - 1; p >= 0; p--) v = v * u + sweep.coefficientsHz[p];
  return v;
}

/** dν/dτ (Hz/s). */
export function sweepRateHzPerS(sweep: SweepScale, timeS: number): number {
  const u = timeS / sweep.durationS;
  let v = 0;
  for (let p = sweep.coefficientsHz.length - 1; p >= 1; p--) v = v * u + p * sweep.coefficientsHz[p];
  return v / sweep.durationS;
}

interface Design {
  rows: number[][];
  rhs: number[];
  weights: number[];
  columnsOfSweep: Map<number, number[]>;
  modeColumn: Map<number, number>;
  spacingColumn: number;
}

export function fitFrequencyScale(
  peaks: readonly LabelledPeak[],
  durations: readonly number[],
  options: FrequencyScaleOptions,
): FrequencyScale | null {
  const { fsrHz } = options;
  const maxDegree = options.maxDegree ?? FREQUENCY_SCALE_DEFAULTS.maxDegree;
  const repeats = new Map<number, Set<number>>();
  for (const p of peaks) if (p.mode !== null) (repeats.get(p.segment) ?? repeats.set(p.segment, new Set()).get(p.segment)!).add(p.repeat);
  const usable = new Set([...repeats].filter(([, r]) => r.size >= 2).map(([s]) => s));
  const used = peaks.filter((p) => p.mode !== null && usable.has(p.segment));
  if (used.length === 0) return null;
  const modes = [...new Set(used.map((p) => p.mode as number))].sort((a, b) => a - b);
  // Reference: the mode seen most often (ties: the strongest), so its fixed 0 is well placed.
  const count = new Map<number, number>();
  const power = new Map<number, number>();
  for (const p of used) {
    count.set(p.mode!, (count.get(p.mode!) ?? 0) + 1);
    power.set(p.mode!, (power.get(p.mode!) ?? 0) + p.height);
  }
  const referenceMode = modes.reduce((a, b) => ((count.get(b)! > count.get(a)! || (count.get(b) === count.get(a) && power.get(b)! > power.get(a)!)) ? b : a));
  const sweeps = [...usable].sort((a, b) => a - b);

  // Rough sweep rate per sweep for the weights: the FSR over the mean time between repeats of a mode.
  const rate = new Map<number, number>();
  for (const s of sweeps) {
    const bySeg = used.filter((p) => p.segment === s);
    const steps: number[] = [];
    for (const m of modes) {
      const list = bySeg.filter((p) => p.mode === m).sort((a, b) => a.repeat - b.repeat);
      for (let i = 1; i < list.length; i++) steps.push((list[i].timeS - list[i - 1].timeS) / (list[i].repeat - list[i - 1].repeat));
    }
    rate.set(s, steps.length ? fsrHz / (steps.reduce((a, b) => a + b, 0) / steps.length) : NaN);
  }

  const build = (degree: number, combWanted: boolean): Design => {
    const comb = combWanted && modes.length > 1;
    const columnsOfSweep = new Map<number, number[]>();
    let col = 0;
    for (const s of sweeps) {
      const d = Math.min(degree, repeats.get(s)!.size);
      columnsOfSweep.set(s, Array.from({ length: d + 1 }, () => col++));
    }
    const modeColumn = new Map<number, number>();
    let spacingColumn = -1;
    if (comb) spacingColumn = col++;
    else for (const m of modes) if (m !== referenceMode) modeColumn.set(m, col++);
    const rows: number[][] = [];
    const rhs: number[] = [];
    const weights: number[] = [];
    for (const p of used) {
      const row = new Array<number>(col).fill(0);
      const cols = columnsOfSweep.get(p.segment)!;
      const u = p.timeS / durations[p.segment];
      let up = 1;
      for (const c of cols) {
        row[c] = up;
        up *= u;
      }
      if (comb) row[spacingColumn] = -(p.mode! - referenceMode);
      else if (p.mode !== referenceMode) row[modeColumn.get(p.mode!)!] = -1;
      rows.push(row);
      rhs.push(p.repeat * fsrHz);
      const sigmaHz = Math.max(p.timeUncertaintyS, 1e-12) * (rate.get(p.segment) ?? 1);
      weights.push(1 / (sigmaHz * sigmaHz));
    }
    return { rows, rhs, weights, columnsOfSweep, modeColumn, spacingColumn };
  };
  const solveWith = (design: Design): LinearFit | null => {
    const k = design.rows[0]?.length ?? 0;
    return linearLeastSquares(design.rows, design.rhs, { weights: design.weights, scaleByResiduals: design.rows.length - k >= 3 });
  };

  // Degree by BIC on the comb fit: n ln(χ²/n) + k ln n.
  const maxRepeats = Math.max(...sweeps.map((s) => repeats.get(s)!.size));
  let best: { degree: number; fit: LinearFit; design: Design; bic: number } | null = null;
  for (let degree = 1; degree <= Math.min(maxDegree, maxRepeats); degree++) {
    const design = build(degree, true);
    const fit = solveWith(design);
    if (!fit) continue;
    const n = design.rows.length;
    const k = design.rows[0].length;
    if (n <= k) continue;
    const bic = n * Math.log(Math.max(fit.chi2, 1e-300) / n) + k * Math.log(n);
    if (!best || bic < best.bic - 2) best = { degree, fit, design, bic };
  }
  if (!best) return null;
  const { degree, fit: combFit, design: combDesign } = best;
  const freeDesign = build(degree, false);
  const freeFit = solveWith(freeDesign);

  const sweepScales: SweepScale[] = sweeps.map((s) => ({
    segment: s,
    durationS: durations[s],
    coefficientsHz: combDesign.columnsOfSweep.get(s)!.map((c) => combFit.params[c]),
    repeats: repeats.get(s)!.size,
  }));
  const modeOffsetsHz = new Map<number, number>();
  const modeOffsetUncertaintiesHz = new Map<number, number>();
  for (const m of modes) {
    if (m === referenceMode) {
      modeOffsetsHz.set(m, 0);
      modeOffsetUncertaintiesHz.set(m, 0);
    } else if (freeFit) {
      const c = freeDesign.modeColumn.get(m)!;
      modeOffsetsHz.set(m, freeFit.params[c]);
      modeOffsetUncertaintiesHz.set(m, freeFit.uncertainties[c]);
    } else if (combDesign.spacingColumn >= 0) {
      const c = combDesign.spacingColumn;
      modeOffsetsHz.set(m, (m - referenceMode) * combFit.params[c]);
      modeOffsetUncertaintiesHz.set(m, Math.abs(m - referenceMode) * combFit.uncertainties[c]);
    }
  }
  const spacing = combDesign.spacingColumn >= 0 ? combFit.params[combDesign.spacingColumn] : NaN;
  const spacingSigma = combDesign.spacingColumn >= 0 ? combFit.uncertainties[combDesign.spacingColumn] : NaN;
  return {
    degree,
    sweeps: sweepScales,
    modeOffsetsHz,
    modeOffsetUncertaintiesHz,
    referenceMode,
    modeSpacingHz: modes.length > 1 ? spacing : NaN,
    modeSpacingUncertaintyHz: modes.length > 1 ? spacingSigma : NaN,
    residualsHz: combFit.residuals,
    rmsHz: combFit.rms,
    used,
    combChi2PerDof: combFit.dof > 0 ? combFit.chi2 / combFit.dof : NaN,
    freeChi2PerDof: freeFit && freeFit.dof > 0 ? freeFit.chi2 / freeFit.dof : NaN,
  };
}
