import { describe, expect, it } from 'vitest';
import { createRandom } from '../../../src/core/random.js';
import { analyzeModeSeries, analyzeModes, synthTrace, type SynthTraceOptions } from '../../../src/core/modes/index.js';

function run(options: SynthTraceOptions, channels: 'ramp' | 'trigger' | 'signal' = 'ramp', fsrHz = options.fsrHz ?? 10e9) {
  const s = synthTrace(options);
  const trace = {
    source: 'synthetic',
    timeS: s.timeS,
    signal: s.signalV,
    ...(channels === 'ramp' ? { ramp: s.rampV } : channels === 'trigger' ? { trigger: s.triggerV } : {}),
  };
  return { truth: s.truth, result: analyzeModes(trace, { fsrHz }) };
}

describe('analyzeModes(trace, {fsrHz}) on synthetic Airy traces with piezo non-linearity and noise', () => {
  it('recovers spacing within 1 %, the exact mode count, gain FWHM within 10 % and finesse within 10 % over seeded scenarios', () => {
    const rng = createRandom(2024);
    let tested = 0;
    for (let seed = 0; tested < 8; seed++) {
      const o: SynthTraceOptions = {
        seed,
        nonlinearity: [0.05 + 0.15 * rng.uniform(), -0.06 * rng.uniform()],
        noiseVolts: 0.002 + 0.006 * rng.uniform(),
        combOffsetHz: 250e6 * rng.uniform(),
        modeSpacingHz: 200e6 + 250e6 * rng.uniform(),
        gainFwhmHz: 1.2e9 + 0.6e9 * rng.uniform(),
        sweepHz: 30e9 + 10e9 * rng.uniform(),
        finesse: 150 + 150 * rng.uniform(),
      };
      const s = synthTrace(o);
      // Count exactly only where no mode sits within 15 % of the 5 % threshold (noise decides those).
      if (s.truth.modes.some((m) => Math.abs(m.relativePower - 0.05) < 0.15 * 0.05)) continue;
      tested++;
      const r = analyzeModes({ source: `seed ${seed}`, timeS: s.timeS, signal: s.signalV, ramp: s.rampV }, { fsrHz: 10e9 });
      expect(Math.abs(r.modeSpacingHz! - o.modeSpacingHz!) / o.modeSpacingHz!).toBeLessThanOrEqual(0.01);
      expect(Math.abs(r.modeSpacingHz! - o.modeSpacingHz!)).toBeLessThanOrEqual(4 * r.modeSpacingUncertaintyHz!);
      expect(r.modeCount).toBe(s.truth.modeCount);
      expect(Math.abs(r.gainFwhmHz! - o.gainFwhmHz!) / o.gainFwhmHz!).toBeLessThanOrEqual(0.1);
      expect(Math.abs(r.finesse! - o.finesse!) / o.finesse!).toBeLessThanOrEqual(0.1);
      expect(Math.abs(r.cavityLengthM! - 299_792_458 / (2 * o.modeSpacingHz!)) / r.cavityLengthM!).toBeLessThanOrEqual(0.01);
    }
  });

  it('reads a HeNe-like laser: ~60 cm cavity → ~250 MHz spacing, ~1.5 GHz Doppler gain → about six modes (common practice, no source)', () => {
    // 60 cm, Doppler FWHM 1.5 GHz (CHECK_VALUES.md: ≈ 1.5 GHz, common practice), losses at half the gain peak.
    const { truth, result } = run({ seed: 11, modeSpacingHz: 299_792_458 / 1.2, gainFwhmHz: 1.5e9, thresholdFraction: 0.5, combOffsetHz: 100e6 });
    expect(Math.abs(result.modeSpacingHz! - 250e6)).toBeLessThanOrEqual(2.5e6);
    expect(Math.abs(result.cavityLengthM! - 0.6)).toBeLessThanOrEqual(0.01);
    expect(result.modeCount).toBe(truth.modeCount);
    expect(result.modeCount).toBeGreaterThanOrEqual(5);
    expect(result.modeCount).toBeLessThanOrEqual(7);
    // The above-threshold model gives back the gain curve's own width; the plain envelope is narrower.
    const s = synthTrace({ seed: 11, modeSpacingHz: 299_792_458 / 1.2, gainFwhmHz: 1.5e9, thresholdFraction: 0.5, combOffsetHz: 100e6 });
    const above = analyzeModes({ source: 'hene', timeS: s.timeS, signal: s.signalV, ramp: s.rampV }, { fsrHz: 10e9, gainModel: 'above-threshold' });
    expect(Math.abs(above.gainFwhmHz! - 1.5e9) / 1.5e9).toBeLessThanOrEqual(0.1);
    expect(result.gainFwhmHz!).toBeLessThan(1.2e9);
  });

  it('finds the mode group repeated every FSR of a 10 GHz interferometer (common practice, no source): repeat period = rise × FSR / sweep', () => {
    // Linear sweep of 33 GHz over an 18 ms rise: the pattern repeats every 18 ms × 10/33 = 5.4545 ms.
    const { result } = run({ seed: 5, nonlinearity: [0, 0], sweepHz: 33e9 });
    expect(Math.abs(result.fsrPeriodS - 0.018 * (10 / 33)) / result.fsrPeriodS).toBeLessThanOrEqual(0.005);
    expect(Math.abs(result.scanRangeHz - 33e9 * 0.94) / 33e9).toBeLessThanOrEqual(0.02);
    expect(Math.min(...result.modes.filter((m) => m.lasing).map((m) => m.appearances))).toBeGreaterThanOrEqual(3);
  });

  it('gives the same answer with the sweeps found from the trigger, from the signal\'s flybacks, or from a triangle ramp', () => {
    const base: SynthTraceOptions = { seed: 21, thresholdFraction: 0.4 };
    const ref = run(base).result;
    for (const variant of ['trigger', 'signal'] as const) {
      const r = run(base, variant).result;
      expect(Math.abs(r.modeSpacingHz! - ref.modeSpacingHz!) / ref.modeSpacingHz!).toBeLessThanOrEqual(0.002);
      expect(r.modeCount).toBe(ref.modeCount);
      expect(r.segmentation.source).toBe(variant);
    }
    const tri = run({ ...base, riseFraction: 0.5 }).result;
    expect(tri.warnings.join(' ')).toMatch(/triangle ramp/);
    expect(Math.abs(tri.modeSpacingHz! - 249.827e6) / 249.827e6).toBeLessThanOrEqual(0.002);
  });

  it('warns when the spacing is near or above FSR/2, when modes are not cleanly resolved, when the pattern repeats only twice', () => {
    const ambiguous = run({ seed: 4, modeSpacingHz: 4.3e9, gainFwhmHz: 6e9, thresholdFraction: 0.5, combOffsetHz: -2e9 }).result;
    expect(ambiguous.warnings.join(' ')).toMatch(/near or above FSR\/2.*ambiguous/);
    const soft = run({ seed: 4, finesse: 70 }).result;
    expect(soft.warnings.join(' ')).toMatch(/not cleanly resolved|not fully resolved/);
    const twice = run({ seed: 4, sweepHz: 16e9 }).result;
    expect(twice.warnings.join(' ')).toMatch(/repeats only twice/);
  });

  it('refuses a trace with no peaks, a scan shorter than one FSR and modes the interferometer cannot resolve', () => {
    expect(() => run({ seed: 1, peakVolts: 0 })).toThrow(/no transmission peaks above the noise/);
    expect(() => run({ seed: 1, sweepHz: 8e9 })).toThrow(/scan covers less than one free spectral range/);
    expect(() => run({ seed: 1, finesse: 40 })).toThrow(/does not resolve the modes/);
  });
});

describe('analyzeModeSeries(traces, {fsrHz}) over a warm-up', () => {
  it('tracks the comb modulo the spacing and recovers a 6 MHz/s drift within 3σ', () => {
    const traces = Array.from({ length: 6 }, (_, i) => {
      const s = synthTrace({ seed: 100 + i, startTimeS: 12 * i, driftHzPerS: 6e6, startJitterHz: 3e6, rampPhaseS: -0.0004 * i, samples: 12000 });
      return { source: `warm-${i}`, timeS: s.timeS, signal: s.signalV, ramp: s.rampV, captureTimeS: 12 * i };
    });
    const series = analyzeModeSeries(traces, { fsrHz: 10e9 });
    expect(series.drift).not.toBeNull();
    const d = series.drift!;
    expect(Math.abs(d.driftHzPerS - 6e6)).toBeLessThanOrEqual(3 * d.driftUncertaintyHzPerS);
    expect(d.driftUncertaintyHzPerS).toBeLessThan(0.5e6);
    // 6 MHz/s for 60 s is 360 MHz: more than one spacing, recovered by unwrapping.
    expect(d.points[5].unwrappedHz - d.points[0].unwrappedHz).toBeGreaterThan(300e6);
  });
});
