import { existsSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { ROOT, runCli } from '../helpers/runCli.js';

/** The demo's ground truth (invented data, data/demo/polarization/truth.json). */
const DEMO = path.join(ROOT, 'data/demo/polarization');
const truth = JSON.parse(readFileSync(path.join(DEMO, 'truth.json'), 'utf8'));
const tmp = mkdtempSync(path.join(os.tmpdir(), 'glowprint-cli-pol-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

const demo = (name: string): string => path.join(DEMO, name);
const photos = (folder: string): string[] =>
  readdirSync(demo(folder))
    .filter((f) => f.endsWith('.jpg'))
    .sort()
    .map((f) => path.join(DEMO, folder, f));
const json = (args: string[]): Record<string, any> => {
  const r = runCli(['polarization', ...args, '--json']);
  expect(r.stderr).toBe('');
  expect(r.status).toBe(0);
  return JSON.parse(r.stdout);
};
const axisError = (a: number, b: number): number => Math.abs(((a - b + 270) % 180) - 90);

describe('glowprint polarization', () => {
  it('--help shows usage, the verdict thresholds and the laser cautions', () => {
    const r = runCli(['polarization', '--help']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/--table <file>/);
    expect(r.stdout).toMatch(/--calibrate-analyser/);
    expect(r.stdout).toMatch(/0\.05 \(unpolarized\) and 0\.9 \(polarized\)/);
    expect(r.stdout).toMatch(/specular/);
    expect(r.stdout).toMatch(/class\s+3B/);
    expect(r.stdout).toMatch(/IEC 60825-1/);
    expect(r.stdout).toMatch(/ANSI Z136\.1/);
  });

  it('reads a power-meter table and prints the JSON contract', () => {
    const out = json(['--table', demo('laser-a-power-meter.csv')]);
    for (const key of ['dolp', 'dolp_uncertainty', 'azimuth_deg', 'azimuth_uncertainty_deg', 'i_max', 'i_min', 'verdict', 'warnings', 'stokes', 'points']) {
      expect(out).toHaveProperty(key);
    }
    expect(out.verdict).toBe('polarized');
    expect(Math.abs(out.dolp - truth.laser_a.dolp_measured_ideal)).toBeLessThanOrEqual(Math.max(0.002, 3 * out.dolp_uncertainty));
    expect(axisError(out.azimuth_deg, truth.laser_a.azimuth_scale_deg)).toBeLessThanOrEqual(0.3);
    expect(Object.keys(out.stokes)).toEqual(expect.arrayContaining(['s0', 's1', 's2']));
    expect(out.points).toHaveLength(19);
    expect(out.points[0]).toMatchObject({ angle_deg: 0, line: 3, excluded: false });
    expect(typeof out.points[0].residual).toBe('number');
    expect(out.fit.drift.revisited_angles_deg).toEqual([0]);
  });

  it('calibrates the analyser on floor glare, then corrects the azimuth and the DoLP of a later series', () => {
    const profile = path.join(tmp, 'analyser-a.json');
    const cal = json(['--table', demo('floor-glare.csv'), '--calibrate-analyser', '--reference-azimuth', '0', '--out', profile]);
    expect(Math.abs(cal.offset_deg - truth.analyser.offset_deg)).toBeLessThanOrEqual(Math.max(0.3, 3 * cal.offset_uncertainty_deg));
    expect(JSON.parse(readFileSync(profile, 'utf8')).format).toBe('glowprint-analyser-profile');
    const out = json(['--table', demo('laser-a-power-meter.csv'), '--analyser', profile, '--extinction-ratio', '300']);
    expect(axisError(out.azimuth_deg, truth.laser_a.azimuth_true_deg)).toBeLessThanOrEqual(0.5);
    expect(Math.abs(out.dolp - truth.laser_a.dolp)).toBeLessThanOrEqual(0.003);
    expect(out.corrections).toMatchObject({ extinction_ratio: 300 });
    expect(out.stokes.frame).toBe('true');
    // The same analyser on the photo series of laser C.
    const c = json([...photos('laser-c-photos'), '--analyser', profile, '--extinction-ratio', '300']);
    expect(Math.abs(c.dolp - truth.laser_c.dolp)).toBeLessThanOrEqual(0.02);
    expect(axisError(c.azimuth_deg, truth.laser_c.azimuth_true_deg)).toBeLessThanOrEqual(0.5);
    expect(c.input.angle_source).toBe('file-names');
    expect(path.basename(c.points[2].file)).toBe('laser-c_030deg.jpg');
    expect(c.photometry.frames.every((f: { saturated: boolean }) => !f.saturated)).toBe(true);
  });

  it('flags and leaves out the clipped frames of an over-exposed photo series', () => {
    const out = json(photos('laser-c-overexposed'));
    const excluded = out.points.filter((p: { excluded: boolean }) => p.excluded);
    expect(excluded.length).toBeGreaterThanOrEqual(4);
    expect(excluded.every((p: { exclusion_reason: string }) => p.exclusion_reason === 'saturated')).toBe(true);
    expect(out.warnings.some((w: string) => /clipped \(saturated\) spot/.test(w))).toBe(true);
    expect(Math.abs(out.dolp - truth.laser_c.dolp_measured_ideal)).toBeLessThanOrEqual(0.02);
    const kept = json([...photos('laser-c-overexposed'), '--keep-saturated']);
    expect(kept.dolp).toBeLessThan(out.dolp - 0.03);
  });

  it('tells a randomly polarized laser from an unpolarized one with a fixed-analyser burst', () => {
    const out = json([
      '--table',
      demo('laser-b-rotation.csv'),
      '--time-series',
      demo('laser-b-burst.csv'),
      '--reference',
      demo('laser-b-burst-total.csv'),
      '--simultaneous',
    ]);
    expect(out.time_series.verdict).toBe('fluctuating');
    expect(out.time_series.analysed.relative_slow_fluctuation).toBeGreaterThan(0.1);
    expect(out.time_series.reference.relative_slow_fluctuation).toBeLessThan(0.01);
    expect(out.interpretation).toMatch(/^randomly polarized/);
    // With the burst, the rotation's drift is worded as the laser's own fluctuation (re-measuring will not remove it);
    // without it, as a change of the set-up to correct or re-measure.
    const drift = (ws: string[]) => ws.filter((w) => /^the intensity changed by/.test(w));
    expect(drift(out.warnings)).toHaveLength(1);
    expect(drift(out.warnings)[0]).toMatch(/the source's polarization fluctuates \(the fixed-analyser burst shows it\).*re-measuring will not remove it$/);
    const rotationOnly = json(['--table', demo('laser-b-rotation.csv')]);
    expect(drift(rotationOnly.warnings)).toHaveLength(1);
    expect(drift(rotationOnly.warnings)[0]).toMatch(/changed during the run; use the drift correction or re-measure$/);
    const only = json(['--time-series', demo('laser-b-burst.csv')]);
    expect(only.dolp).toBeNull();
    expect(only.time_series.verdict).toBe('fluctuating');
    expect(only.warnings.some((w: string) => /no reference series/.test(w))).toBe(true);
  });

  it('fits a rotating quarter-wave-plate table to S0…S3 (--qwp)', () => {
    // Right-handed elliptical light S = (1, 0.2, 0.3, 0.6) behind a QWP at θ and a horizontal analyser:
    // I = ½[S0 + S1 cos² 2θ + S2 sin 2θ cos 2θ − S3 sin 2θ] (Goldstein, ch. 5; from memory).
    const rows = Array.from({ length: 16 }, (_, i) => {
      const t = (i * 11.25 * Math.PI) / 180;
      const c = Math.cos(2 * t);
      const s = Math.sin(2 * t);
      return `${i * 11.25},${(0.5 * (1 + 0.2 * c * c + 0.3 * s * c - 0.6 * s)).toFixed(6)}`;
    });
    const file = path.join(tmp, 'qwp.csv');
    writeFileSync(file, 'angle_deg,intensity\n' + rows.join('\n') + '\n');
    const out = json(['--table', file, '--qwp']);
    expect(out.method).toBe('rotating-quarter-wave-plate');
    expect(Math.abs(out.stokes.s3 - 0.6)).toBeLessThanOrEqual(1e-4);
    expect(Math.abs(out.stokes.dop - Math.hypot(0.2, 0.3, 0.6))).toBeLessThanOrEqual(1e-4);
    expect(Math.abs(out.dolp - Math.hypot(0.2, 0.3))).toBeLessThanOrEqual(1e-4);
  });

  it('writes the plots with --svg, atomically, and never over an input', () => {
    const svg = path.join(tmp, 'laser-b.svg');
    const r = runCli(['polarization', '--table', demo('laser-b-rotation.csv'), '--time-series', demo('laser-b-burst.csv'), '--svg', svg]);
    expect(r.status).toBe(0);
    const text = readFileSync(svg, 'utf8');
    expect(text.startsWith('<?xml')).toBe(true);
    expect(text).toMatch(/Polar view/);
    expect(text).toMatch(/Fixed-analyser time series/);
    const copy = path.join(tmp, 'copy.csv');
    writeFileSync(copy, readFileSync(demo('floor-glare.csv')));
    const bad = runCli(['polarization', '--table', copy, '--svg', copy]);
    expect(bad.status).toBe(1);
    expect(bad.stderr).toMatch(/refusing to write over an input file/);
    expect(readFileSync(copy, 'utf8')).toBe(readFileSync(demo('floor-glare.csv'), 'utf8'));
  });

  describe('bad input: exit 1, one line naming the problem', () => {
    const fail = (args: string[], pattern: RegExp): void => {
      const r = runCli(['polarization', ...args]);
      expect(r.status).toBe(1);
      expect(r.stdout).toBe('');
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
      expect(r.stderr).toMatch(pattern);
    };
    const table = (name: string, text: string): string => {
      const f = path.join(tmp, name);
      writeFileSync(f, text);
      return f;
    };
    it('two angles', () => fail(['--table', table('two.csv', 'angle_deg,intensity\n0,1\n90,0.2\n')], /two\.csv: need at least 3 distinct analyser angles \(mod 180°\).*got 2/));
    it('duplicate angles only', () => fail(['--table', table('dup.csv', 'angle_deg,intensity\n0,1\n0,1.01\n180,0.99\n')], /dup\.csv: need at least 3 distinct.*got 1/));
    it('a negative intensity', () => fail(['--table', table('neg.csv', 'angle_deg,intensity\n0,1\n45,-0.5\n90,0.2\n')], /neg\.csv, line 3: intensity: expected a non-negative intensity/));
    it('a NaN intensity', () => {
      fail(['--table', table('nan.csv', 'angle_deg,intensity\n0,1\n30,0.8\n45,NaN\n90,0.2\n')], /nan\.csv, line 4, column 2 \(intensity\): expected a number, got "NaN"/);
      // Near the top of the table, where the reader would take it for a metadata line.
      fail(['--table', table('nan2.csv', 'angle_deg,intensity\n0,NaN\n30,0.8\n45,0.5\n90,0.2\n')], /nan2\.csv, line 2, column 2: expected a number, got "NaN"/);
    });
    it('angles and images that do not match in number', () =>
      fail([...photos('laser-c-photos').slice(0, 4), '--angles', '0,15,30'], /--angles: 3 angles for 4 images/));
    it('a missing file', () => fail(['--table', path.join(tmp, 'nope.csv')], /nope\.csv: no such file/));
    it('a bad analyser profile', () => fail(['--table', demo('floor-glare.csv'), '--analyser', table('p.json', '{"format":"glowprint-analyser-profile","version":1}')], /p\.json: not a usable analyser profile: missing fields "offset_deg", "offset_uncertainty_deg"/));
    it('an extinction ratio of 1', () => fail(['--table', demo('floor-glare.csv'), '--extinction-ratio', '1'], /--extinction-ratio: expected k1\/k2 greater than 1/));
  });

  it('exits 2 on usage errors', () => {
    expect(runCli(['polarization']).status).toBe(2);
    expect(runCli(['polarization', '--table', demo('floor-glare.csv'), photos('laser-c-photos')[0]]).status).toBe(2);
    expect(runCli(['polarization', '--table', demo('floor-glare.csv'), '--calibrate-analyser']).status).toBe(2);
    expect(existsSync(path.join(tmp, 'never.json'))).toBe(false);
  });
});
