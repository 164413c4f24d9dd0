import { assertFinite } from '../errors.js';
import { createRandom } from '../random.js';
import { FWHM_PER_SIGMA } from '../spectrum/peaks/index.js';

/**
 * Renders an oscilloscope trace of a laser on a scanning Fabry-Perot interferometer, for the demo and for recovery
 * tests (never for anything a user measures).
 *
 * A sawtooth (rise, then a fast flyback) drives the piezo; the interferometer's resonance sweeps
 * ν_FP(u) = sweep · (u + a₂u² + a₃u³)/(1 + a₂ + a₃) over the rise (u = 0…1 the fraction of the rise: a₂, a₃ model
 * the piezo's non-linearity) and back linearly during the flyback. The photodiode sees the Airy transmission of each
 * longitudinal mode k at ν_k = ν_c + offset + kΔν:
 *
 *     T(δ) = 1 / (1 + (2F/π)² sin²(π δ / FSR))      (Airy function with coefficient of finesse (2F/π)²)
 *
 * with mode powers under a Gaussian gain curve of FWHM w centred at ν_c: P_k ∝ max(0, g(ν_k) − t)/(1 − t),
 * g = exp(−4 ln2 (ν − ν_c)²/w²), t the threshold fraction (0: the powers follow the Gaussian itself). The comb moves
 * across the gain curve at `driftHzPerS` (cavity warming). Channels: signal (V), ramp (V), trigger (TTL-like gate,
 * high during the rise).
 */
export interface SynthTraceOptions {
  seed: number;
  /** @default 4e-6 */
  sampleIntervalS?: number;
  /** @default 10000 */
  samples?: number;
  /** Absolute time of the first sample (s), for warm-up series. @default 0 */
  startTimeS?: number;
  /** @default 0.02 */
  rampPeriodS?: number;
  /** Fraction of the period spent rising. @default 0.9 */
  riseFraction?: number;
  /** Time of the first ramp start relative to the first sample (s). @default -0.002 */
  rampPhaseS?: number;
  /** @default [0, 10] */
  rampVoltsRange?: [number, number];
  /** Frequency the interferometer sweeps over one rise (Hz). @default 33e9 */
  sweepHz?: number;
  /** [a₂, a₃] piezo non-linearity. @default [0.12, -0.04] */
  nonlinearity?: [number, number];
  /** Random offset of the sweep's start from ramp to ramp, σ (Hz). @default 20e6 */
  startJitterHz?: number;
  /** Free spectral range (Hz). @default 10e9 (7.5 mm confocal) */
  fsrHz?: number;
  /** @default 200 */
  finesse?: number;
  /** Longitudinal mode spacing c/2L (Hz). @default 249.827e6 (60 cm) */
  modeSpacingHz?: number;
  /** Gain FWHM (Hz). @default 1.5e9 */
  gainFwhmHz?: number;
  /** Where the gain centre lies on the interferometer's scale (Hz, modulo FSR). @default 4.1e9 */
  gainCenterHz?: number;
  /** Offset of the mode comb from the gain centre at absolute time 0 (Hz); it moves by driftHzPerS from there. @default 110e6 (no mode near the 5 % count threshold) */
  combOffsetHz?: number;
  /** @default 0 */
  driftHzPerS?: number;
  /** @default 0 */
  thresholdFraction?: number;
  /** Modes below this relative power do not lase. @default 0.01 */
  minRelativePower?: number;
  /** Photodiode voltage at the top of the strongest mode's transmission peak. @default 0.8 */
  peakVolts?: number;
  /** @default 0.004 */
  noiseVolts?: number;
  /** @default 0.01 */
  offsetVolts?: number;
}

export const SYNTH_TRACE_DEFAULTS = {
  sampleIntervalS: 4e-6,
  samples: 10000,
  startTimeS: 0,
  rampPeriodS: 0.02,
  riseFraction: 0.9,
  rampPhaseS: -0.002,
  rampVoltsRange: [0, 10] as [number, number],
  sweepHz: 33e9,
  nonlinearity: [0.12, -0.04] as [number, number],
  startJitterHz: 20e6,
  fsrHz: 10e9,
  finesse: 200,
  modeSpacingHz: 249.827e6,
  gainFwhmHz: 1.5e9,
  gainCenterHz: 4.1e9,
  combOffsetHz: 110e6,
  driftHzPerS: 0,
  thresholdFraction: 0,
  minRelativePower: 0.01,
  peakVolts: 0.8,
  noiseVolts: 0.004,
  offsetVolts: 0.01,
};

export interface SynthTrace {
  timeS: Float64Array;
  signalV: Float64Array;
  rampV: Float64Array;
  triggerV: Float64Array;
  truth: {
    fsrHz: number;
    modeSpacingHz: number;
    finesse: number;
    gainFwhmHz: number;
    /** Lasing modes at the trace's start, offsets from the gain centre, powers relative to the strongest. */
    modes: Array<{ offsetFromGainHz: number; relativePower: number }>;
    /** Modes at ≥ 5 % of the strongest. */
    modeCount: number;
    /** Comb position at the trace start, (offset of any mode from the gain centre) mod spacing, in [0, Δν). */
    combPositionHz: number;
  };
}

export function synthTrace(options: SynthTraceOptions): SynthTrace {
  const o = { ...SYNTH_TRACE_DEFAULTS, ...Object.fromEntries(Object.entries(options).filter(([, v]) => v !== undefined)) } as typeof SYNTH_TRACE_DEFAULTS & { seed: number };
  for (const k of ['sampleIntervalS', 'samples', 'rampPeriodS', 'sweepHz', 'fsrHz', 'finesse', 'modeSpacingHz', 'gainFwhmHz'] as const) assertFinite(k, o[k], Number.MIN_VALUE);
  const rng = createRandom(o.seed);
  const n = Math.round(o.samples);
  const timeS = new Float64Array(n);
  const signalV = new Float64Array(n);
  const rampV = new Float64Array(n);
  const triggerV = new Float64Array(n);
  const [a2, a3] = o.nonlinearity;
  const rise = o.rampPeriodS * o.riseFraction;
  const fall = o.rampPeriodS - rise;
  const coefficient = (2 * o.finesse / Math.PI) ** 2;
  const sigmaGain = o.gainFwhmHz / FWHM_PER_SIGMA;
  // Modes around the gain centre at the start; the comb drifts as a whole.
  const reach = 4 * o.gainFwhmHz;
  const kMax = Math.ceil(reach / o.modeSpacingHz);
  const modeAt = (k: number, tAbs: number): { offset: number; power: number } => {
    const offset = o.combOffsetHz + o.driftHzPerS * tAbs + k * o.modeSpacingHz;
    const g = Math.exp(-0.5 * (offset / sigmaGain) ** 2);
    const p = Math.max(0, g - o.thresholdFraction) / (1 - o.thresholdFraction);
    return { offset, power: p };
  };
  const startModes = [];
  for (let k = -kMax; k <= kMax; k++) startModes.push(modeAt(k, o.startTimeS));
  const maxStart = Math.max(...startModes.map((m) => m.power));
  const jitters = new Map<number, number>();
  const jitterOf = (ramp: number): number => {
    if (!jitters.has(ramp)) jitters.set(ramp, o.startJitterHz * rng.normal());
    return jitters.get(ramp)!;
  };
  for (let i = 0; i < n; i++) {
    const t = i * o.sampleIntervalS;
    const tAbs = o.startTimeS + t;
    timeS[i] = t;
    const since = t - o.rampPhaseS;
    const ramp = Math.floor(since / o.rampPeriodS);
    const phase = since - ramp * o.rampPeriodS;
    let nuFp: number;
    if (phase < rise) {
      const u = phase / rise;
      nuFp = (o.sweepHz * (u + a2 * u * u + a3 * u * u * u)) / (1 + a2 + a3);
      rampV[i] = o.rampVoltsRange[0] + (o.rampVoltsRange[1] - o.rampVoltsRange[0]) * u;
      triggerV[i] = 3.3;
    } else {
      const u = (phase - rise) / fall;
      nuFp = o.sweepHz * (1 - u);
      rampV[i] = o.rampVoltsRange[1] - (o.rampVoltsRange[1] - o.rampVoltsRange[0]) * u;
      triggerV[i] = 0;
    }
    nuFp += jitterOf(ramp);
    let s = 0;
    const drift = o.driftHzPerS * tAbs;
    for (let k = -kMax; k <= kMax; k++) {
      const offset = o.combOffsetHz + drift + k * o.modeSpacingHz;
      const g = Math.exp(-0.5 * (offset / sigmaGain) ** 2);
      const p = Math.max(0, g - o.thresholdFraction) / (1 - o.thresholdFraction) / maxStart;
      if (p < o.minRelativePower) continue;
      const nuMode = o.gainCenterHz + offset;
      const x = Math.sin((Math.PI * (nuFp - nuMode)) / o.fsrHz);
      s += p / (1 + coefficient * x * x);
    }
    signalV[i] = o.offsetVolts + o.peakVolts * s + o.noiseVolts * rng.normal();
    rampV[i] += 0.002 * rng.normal();
    triggerV[i] += 0.01 * rng.normal();
  }
  const lasing = startModes
    .map((m) => ({ offsetFromGainHz: m.offset, relativePower: m.power / maxStart }))
    .filter((m) => m.relativePower >= o.minRelativePower);
  const startOffset = o.combOffsetHz + o.driftHzPerS * o.startTimeS;
  const combPositionHz = ((startOffset % o.modeSpacingHz) + o.modeSpacingHz) % o.modeSpacingHz;
  return {
    timeS,
    signalV,
    rampV,
    triggerV,
    truth: {
      fsrHz: o.fsrHz,
      modeSpacingHz: o.modeSpacingHz,
      finesse: o.finesse,
      gainFwhmHz: o.gainFwhmHz,
      modes: lasing,
      modeCount: lasing.filter((m) => m.relativePower >= 0.05).length,
      combPositionHz,
    },
  };
}
