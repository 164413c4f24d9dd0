import { describe, expect, it } from 'vitest';
import { parseScopeCsv } from '../../src/io/scopeCsv.js';

/** A small synthetic capture: time, a peaky photodiode signal, a sawtooth ramp. */
function rows(n: number, format: (t: number, sig: number, ramp: number) => string): string[] {
  const out: string[] = [];
  for (let i = 0; i < n; i++) {
    const t = i * 2e-6;
    const phase = (i % 100) / 100;
    // Transmission peaks every 25 samples with Lorentzian flanks (FWHM 2 samples).
    const d = ((i + 12) % 25) - 12;
    const sig = 0.01 + 0.8 / (1 + d * d) + 0.001 * Math.sin(i);
    const ramp = phase < 0.9 ? 10 * (phase / 0.9) : 10 * (1 - (phase - 0.9) / 0.1);
    out.push(format(t, sig, ramp));
  }
  return out;
}

describe('parseScopeCsv(text, {source})', () => {
  it('reads units in the headers, the capture time, and tells the photodiode from the ramp', () => {
    const text = ['Capture,2026-03-02 14:03:10', 'Time (ms),CH1 (V),CH2 (V)', ...rows(400, (t, s, r) => `${t * 1e3},${s},${r}`)].join('\n');
    const p = parseScopeCsv(text, { source: 'a.csv' });
    expect(p.roles).toEqual({ time: 0, signal: 1, ramp: 2, trigger: null });
    expect(Math.abs(p.sampleIntervalS - 2e-6)).toBeLessThanOrEqual(1e-15);
    expect(Math.abs(p.trace.timeS[399] - 399 * 2e-6)).toBeLessThanOrEqual(1e-15);
    expect(p.trace.captureTimeS).toBe(Date.UTC(2026, 2, 2, 14, 3, 10) / 1000);
    expect(p.columns[1]).toMatchObject({ name: 'CH1', unit: { dimension: 'voltage' } });
  });

  it('reads names over a row of units, and channels in the other order', () => {
    const text = ['TIME,CH1,CH2', 'Second,Volt,Volt', ...rows(400, (t, s, r) => `${t},${r},${s}`)].join('\n');
    const p = parseScopeCsv(text, { source: 'b.csv' });
    expect(p.columns.map((c) => c.name)).toEqual(['TIME', 'CH1', 'CH2']);
    expect(p.roles).toMatchObject({ time: 0, signal: 2, ramp: 1 });
  });

  it('builds the time axis from a sample interval in the header lines when there is no time column', () => {
    const text = ['Sample Interval,2.000000E-06', 'CH1,CH2', ...rows(400, (_t, s, r) => `${s},${r}`)].join('\n');
    const p = parseScopeCsv(text, { source: 'c.csv' });
    expect(p.roles.time).toBeNull();
    expect(Math.abs(p.trace.timeS[10] - 2e-5)).toBeLessThanOrEqual(1e-15);
  });

  it('reads semicolon tables with decimal commas, and honours --signal / --ramp by name, number or none', () => {
    const text = ['t/us;PD;Sweep', ...rows(400, (t, s, r) => `${String(t * 1e6).replace('.', ',')};${String(s).replace('.', ',')};${String(r).replace('.', ',')}`)].join('\n');
    const p = parseScopeCsv(text, { source: 'd.csv', signal: 'pd', ramp: 'none' });
    expect(p.roles).toEqual({ time: 0, signal: 1, ramp: null, trigger: null });
    expect(Math.abs(p.trace.timeS[1] - 2e-6)).toBeLessThanOrEqual(1e-12);
    expect(parseScopeCsv(text, { source: 'd.csv', signal: '2', ramp: '3' }).roles).toMatchObject({ signal: 1, ramp: 2 });
  });

  it('refuses one column, a text cell (naming its line), an unknown channel and time running backwards', () => {
    expect(() => parseScopeCsv(['CH1', ...rows(100, (_t, s) => `${s}`)].join('\n'), { source: 'one.csv' })).toThrow(/one\.csv: one column of numbers; expected a time column and the photodiode signal/);
    const bad = ['Time (s),CH1 (V),CH2 (V)', ...rows(100, (t, s, r) => `${t},${s},${r}`)];
    bad[51] = '0.0001,0.01,clipped';
    expect(() => parseScopeCsv(bad.join('\n'), { source: 'text.csv' })).toThrow(/text\.csv, line 52, column 3 \(CH2 \(V\)\): expected a number, got "clipped"/);
    const ok = ['Time (s),CH1 (V),CH2 (V)', ...rows(100, (t, s, r) => `${t},${s},${r}`)].join('\n');
    expect(() => parseScopeCsv(ok, { source: 'e.csv', signal: 'CH7' })).toThrow(/--signal: no column "CH7" in e\.csv/);
    const back = ['Time (s),CH1 (V)', ...rows(100, (t, s) => `${t},${s}`)];
    back[40] = '1e-9,0.01';
    expect(() => parseScopeCsv(back.join('\n'), { source: 'f.csv' })).toThrow(/f\.csv, line 41: time does not increase/);
  });
});
