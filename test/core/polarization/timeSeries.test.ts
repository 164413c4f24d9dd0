import { describe, expect, it } from 'vitest';
import { analyseTimeSeries, seriesStatistics, type TimeSeries } from '../../../src/core/polarization/timeSeries.js';
import { createRandom } from '../../../src/core/random.js';

const N = 240;
const times = Array.from({ length: N }, (_, i) => i * 0.5);

function make(f: (t: number) => number, noise: number, seed: number): TimeSeries {
  const r = createRandom(seed);
  return { timeS: times, intensity: times.map((t) => f(t) * (1 + noise * r.normal())), source: 'burst.csv' };
}

/** Two orthogonally polarized modes trading power with period 37 s; analyser along mode 1 (invented scenario). */
const share = (t: number): number => 0.5 + 0.25 * Math.sin((2 * Math.PI * t) / 37);

describe('seriesStatistics(t, y)', () => {
  it('estimates white noise by successive differences and the slow part as the rest', () => {
    const white = make(() => 1, 0.01, 1);
    const s = seriesStatistics(Float64Array.from(white.timeS), Float64Array.from(white.intensity));
    // von Neumann: E[(x_{i+1} − x_i)²]/2 = σ² for white noise.
    expect(Math.abs(s.relativeWhiteNoise - 0.01)).toBeLessThanOrEqual(0.0015);
    expect(s.relativeSlowFluctuation).toBeLessThanOrEqual(0.004);
    // A slow sine of amplitude 0.2 has an rms of 0.2/√2 = 0.1414 (its trend-free standard deviation).
    const sine = make((t) => 1 + 0.2 * Math.sin((2 * Math.PI * t) / 30), 0, 1);
    const q = seriesStatistics(Float64Array.from(sine.timeS), Float64Array.from(sine.intensity));
    expect(Math.abs(q.relativeSlowFluctuation - 0.2 / Math.SQRT2)).toBeLessThanOrEqual(0.01);
    // The autocorrelation of a sine, cos(2πτ/T), falls below 1/e at τ = T·acos(1/e)/(2π) = 0.19004 × 30 s = 5.70 s
    // (sampled every 0.5 s, so the first lag below is within half a step).
    expect(Math.abs(q.correlationTimeS! - 5.70)).toBeLessThanOrEqual(0.6);
    // A linear warm-up trend is removed from the fluctuation and reported apart.
    const ramp = make((t) => 1 + 0.001 * t, 0, 1);
    const w = seriesStatistics(Float64Array.from(ramp.timeS), Float64Array.from(ramp.intensity));
    expect(w.relativeFluctuation).toBeLessThanOrEqual(1e-9);
    expect(Math.abs(w.relativeTrend - 0.1195 / 1.05975)).toBeLessThanOrEqual(1e-6);
  });
});

describe('analyseTimeSeries(series, options)', () => {
  it('calls a randomly polarized laser (mode competition) fluctuating, with a steady total as reference', () => {
    const analysed = make((t) => 0.05 + 0.9 * share(t), 0.003, 2);
    const total = make(() => 1, 0.003, 3);
    const a = analyseTimeSeries(analysed, { reference: total });
    expect(a.verdict).toBe('fluctuating');
    expect(a.fluctuationRatio!).toBeGreaterThan(10);
    expect(a.interpretation).toMatch(/^fluctuating polarization \(mode competition\)/);
    const sim = analyseTimeSeries(analysed, { reference: total, simultaneous: true });
    expect(sim.verdict).toBe('fluctuating');
    expect(sim.ratio!.relativeSlowFluctuation).toBeGreaterThan(0.1);
  });

  it('calls truly unpolarized light stable', () => {
    const a = analyseTimeSeries(make(() => 0.5, 0.004, 4), { reference: make(() => 1, 0.004, 5) });
    expect(a.verdict).toBe('stable');
    expect(a.warnings).toEqual([]);
  });

  it('does not blame the polarization when the total fluctuates alike (an unsteady source)', () => {
    const power = (t: number): number => 1 + 0.1 * Math.sin((2 * Math.PI * t) / 23);
    const analysed = make((t) => 0.5 * power(t), 0.003, 6);
    const total = make(power, 0.003, 6);
    const a = analyseTimeSeries(analysed, { reference: total });
    expect(a.verdict).toBe('stable');
    expect(a.warnings.some((w) => /source itself is unsteady/.test(w))).toBe(true);
    expect(analyseTimeSeries(analysed, { reference: total, simultaneous: true }).verdict).toBe('stable');
  });

  it('without a reference decides on the fluctuation alone and says what it cannot tell', () => {
    const a = analyseTimeSeries(make((t) => share(t), 0.003, 7));
    expect(a.verdict).toBe('fluctuating');
    expect(a.warnings[0]).toMatch(/no reference series/);
    expect(analyseTimeSeries(make(() => 1, 0.003, 8)).verdict).toBe('stable');
  });

  it('names the sample when times do not increase or intensities are bad', () => {
    const bad = make(() => 1, 0, 1);
    const t = Array.from(bad.timeS);
    t[5] = t[4];
    expect(() => analyseTimeSeries({ ...bad, timeS: t, labels: t.map((_, i) => `line ${i + 3}`) })).toThrow(/burst\.csv, line 8: time_s: expected a time later than the previous sample's 2 s/);
    const y = Array.from(bad.intensity);
    y[2] = -1;
    expect(() => analyseTimeSeries({ ...bad, intensity: y })).toThrow(/sample 3: intensity: expected a finite, non-negative intensity, got -1/);
    expect(() => analyseTimeSeries({ timeS: [0, 1, 2], intensity: [1, 1, 1], source: 'short.csv' })).toThrow(/short\.csv: expected at least 10 samples, got 3/);
  });
});
