import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { DEMO_MODES_SCENARIO, demoTraceCsv, demoTraceName, demoTraceOptions } from '../../src/io/demoModes.js';
import { synthTrace } from '../../src/core/modes/index.js';
import { ROOT, runCli } from '../helpers/runCli.js';

const demo = Array.from({ length: DEMO_MODES_SCENARIO.traces }, (_, i) => `data/demo/modes/${demoTraceName(i)}`);
const tmp = (): string => mkdtempSync(path.join(tmpdir(), 'glowprint-modes-'));

function writeTrace(dir: string, name: string, options: Parameters<typeof synthTrace>[0], keepRamp = true): string {
  const t = synthTrace(options);
  const lines = [keepRamp ? 'Time (s),CH1 (V),CH2 (V)' : 'Time (s),CH1 (V)'];
  for (let i = 0; i < t.timeS.length; i++) lines.push(keepRamp ? `${t.timeS[i]},${t.signalV[i]},${t.rampV[i]}` : `${t.timeS[i]},${t.signalV[i]}`);
  const file = path.join(dir, name);
  writeFileSync(file, lines.join('\n') + '\n');
  return file;
}

describe('glowprint modes', () => {
  it('--help carries the laser cautions', () => {
    const r = runCli(['modes', '--help']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/--mirror-spacing/);
    expect(r.stdout).toMatch(/IEC 60825-1/);
  });

  it('keeps the committed demo traces identical to their generator (src/io/demoModes.ts)', () => {
    demo.forEach((file, i) => expect(readFileSync(path.join(ROOT, file), 'utf8')).toBe(demoTraceCsv(i)));
  });

  it('analyses the demo warm-up: 60 cm cavity, spacing within 0.2 %, the last trace\'s mode count, 6 MHz/s drift, SVG', () => {
    const dir = tmp();
    const svg = path.join(dir, 'modes.svg');
    const r = runCli(['modes', ...demo, '--mirror-spacing', '7.5mm', '--confocal', '--envelope', 'above-threshold', '--json', '--svg', svg]);
    expect(r.status).toBe(0);
    const j = JSON.parse(r.stdout);
    for (const key of ['fsr_period_s', 'mode_spacing_hz', 'mode_spacing_uncertainty_hz', 'cavity_length_m', 'mode_count', 'modes', 'gain_fwhm_hz', 'finesse', 'warnings']) {
      expect(j).toHaveProperty(key);
    }
    expect(Math.abs(j.mode_spacing_hz - DEMO_MODES_SCENARIO.modeSpacingHz) / DEMO_MODES_SCENARIO.modeSpacingHz).toBeLessThanOrEqual(0.002);
    expect(Math.abs(j.cavity_length_m - 0.6)).toBeLessThanOrEqual(0.002);
    expect(j.mode_count).toBe(synthTrace(demoTraceOptions(DEMO_MODES_SCENARIO.traces - 1)).truth.modeCount);
    expect(j.modes[0]).toHaveProperty('offset_hz');
    expect(j.modes[0]).toHaveProperty('relative_power');
    expect(Math.abs(j.gain_fwhm_hz - 1.5e9) / 1.5e9).toBeLessThanOrEqual(0.1);
    expect(Math.abs(j.finesse - 200) / 200).toBeLessThanOrEqual(0.1);
    expect(Math.abs(j.drift.drift_hz_per_s - DEMO_MODES_SCENARIO.driftHzPerS)).toBeLessThanOrEqual(3 * j.drift.drift_uncertainty_hz_per_s);
    expect(j.traces).toHaveLength(5);
    expect(readFileSync(svg, 'utf8')).toMatch(/^<\?xml[\s\S]*<svg[\s\S]*mode drift/);
  });

  it('prints a readable summary for one trace with --fsr', () => {
    const r = runCli(['modes', demo[0], '--fsr', '9.9931 GHz']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/Mode spacing +249\.\d+ ± /);
    expect(r.stdout).toMatch(/Cavity length +600\.\d+ ± /);
  });

  it("names each trace of a series in its table even when the paths are long (the file name's end is kept)", () => {
    const r = runCli(['modes', ...demo.map((f) => path.join(ROOT, f)), '--fsr', '9.9931 GHz']);
    expect(r.status).toBe(0);
    for (let i = 0; i < demo.length; i++) expect(r.stdout).toMatch(new RegExp(`^  \\S*${demoTraceName(i).replace('.', '\\.')} +\\d+ `, 'm'));
  });

  it('refuses bad input with one clear line and exit 1', () => {
    const dir = tmp();
    const one = path.join(dir, 'one.csv');
    writeFileSync(one, 'CH1\n' + Array.from({ length: 100 }, (_, i) => String(i % 7)).join('\n') + '\n');
    const text = path.join(dir, 'text.csv');
    const lines = readFileSync(path.join(ROOT, demo[0]), 'utf8').split('\n');
    lines[40] = '0.175,0.0123,overload';
    writeFileSync(text, lines.join('\n'));
    const dark = writeTrace(dir, 'dark.csv', { seed: 1, peakVolts: 0 });
    const short = writeTrace(dir, 'short.csv', { seed: 1, sweepHz: 8e9 });
    const cases: Array<[string, RegExp]> = [
      [one, /one\.csv: one column of numbers/],
      [text, /text\.csv, line 41, column 3 \(CH2 ramp \(V\)\): expected a number, got "overload"/],
      [dark, /dark\.csv: no transmission peaks above the noise/],
      [short, /short\.csv: the scan covers less than one free spectral range/],
    ];
    for (const [file, message] of cases) {
      const r = runCli(['modes', file, '--fsr', '10GHz']);
      expect(r.status).toBe(1);
      expect(r.stderr).toMatch(message);
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
      expect(r.stdout).toBe('');
    }
  });

  it('refuses to write the SVG over an input, and exits 2 on a missing or half-given FSR', () => {
    const dir = tmp();
    const copy = path.join(dir, 'trace.csv');
    writeFileSync(copy, readFileSync(path.join(ROOT, demo[0])));
    const r = runCli(['modes', copy, '--fsr', '10GHz', '--svg', copy]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/refusing to write over an input file/);
    expect(readFileSync(copy, 'utf8')).toBe(readFileSync(path.join(ROOT, demo[0]), 'utf8'));
    expect(runCli(['modes', demo[0]]).status).toBe(2);
    expect(runCli(['modes', demo[0], '--mirror-spacing', '7.5mm']).status).toBe(2);
    expect(existsSync(path.join(dir, 'modes.svg'))).toBe(false);
  });
});
