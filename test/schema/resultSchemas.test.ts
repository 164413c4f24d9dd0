import { mkdtempSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROOT, runCli } from '../helpers/runCli.js';

/**
 * The published JSON Schemas of each command's --json (data/schema/results/), checked against what the commands
 * really print on the demo data, and shown to reject an output missing any key its issue requires. Validation by ajv
 * (a general-purpose JSON Schema validator, draft 2020-12).
 */
const SCHEMAS = path.join(ROOT, 'data/schema/results');
const DEMO = path.join(ROOT, 'data/demo');
const ajv = new Ajv2020({ allErrors: true, strict: true });
const validators = new Map(
  readdirSync(SCHEMAS)
    .filter((f) => f.endsWith('.schema.json'))
    .map((f) => [f.replace('.schema.json', ''), ajv.compile(JSON.parse(readFileSync(path.join(SCHEMAS, f), 'utf8')))]),
);
const tmp = mkdtempSync(path.join(os.tmpdir(), 'glowprint-schema-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

function run(args: string[]): Record<string, unknown> {
  const r = runCli([...args, '--json']);
  expect(r.status, r.stderr).toBe(0);
  return JSON.parse(r.stdout);
}

function errorsOf(schema: string, json: unknown): string {
  const validate = validators.get(schema)!;
  return validate(json) ? '' : ajv.errorsText(validate.errors);
}

/** A copy of `json` without the key at `keyPath` ("band.center.x", "peaks.0.snr"). */
function without(json: unknown, keyPath: string): unknown {
  const copy = structuredClone(json) as Record<string, unknown>;
  const parts = keyPath.split('.');
  let node: Record<string, unknown> = copy;
  for (const p of parts.slice(0, -1)) node = node[p] as Record<string, unknown>;
  expect(node, `${keyPath} exists in the output`).toHaveProperty(parts[parts.length - 1]);
  delete node[parts[parts.length - 1]];
  return copy;
}

/** Every required key of the issue: the output without it must fail validation. */
function expectRequired(schema: string, json: unknown, keys: string[]): void {
  for (const key of keys) expect(errorsOf(schema, without(json, key)), `${schema} without ${key}`).not.toBe('');
}

describe('data/schema/results/*.schema.json', () => {
  it('compile under ajv strict mode as draft 2020-12, one per command', () => {
    expect([...validators.keys()].sort()).toEqual(['calibrate', 'grating', 'identify', 'modes', 'polarization', 'spectrum']);
    for (const f of readdirSync(SCHEMAS)) {
      expect(JSON.parse(readFileSync(path.join(SCHEMAS, f), 'utf8')).$schema).toBe('https://json-schema.org/draft/2020-12/schema');
    }
  });

  describe('spectrum', () => {
    let out: Record<string, unknown>;
    beforeAll(() => {
      out = run(['spectrum', path.join(DEMO, 'tube-a.jpg')]);
    });
    it('accepts glowprint spectrum --json on a demo photo', () => {
      expect(errorsOf('spectrum', out)).toBe('');
    });
    it('rejects it without any key of issue 2 (band geometry, peak fields, warnings)', () => {
      expectRequired('spectrum', out, [
        'band',
        'band.angle_deg',
        'band.slant_deg',
        'band.center',
        'band.center.x',
        'band.length_px',
        'band.height_px',
        'peaks',
        'peaks.0.position_px',
        'peaks.0.position_uncertainty_px',
        'peaks.0.fwhm_px',
        'peaks.0.height',
        'peaks.0.snr',
        'peaks.0.saturated',
        'peaks.0.blended',
        'warnings',
      ]);
    });
    it('rejects a band angle outside (−180, 180] and a wavelength without its uncertainty', () => {
      const turned = structuredClone(out) as { band: { angle_deg: number } };
      turned.band.angle_deg = -180;
      expect(errorsOf('spectrum', turned)).not.toBe('');
      const calibrated = structuredClone(out) as { peaks: Array<Record<string, number>> };
      calibrated.peaks[0].wavelength_nm = 540.1;
      expect(errorsOf('spectrum', calibrated)).not.toBe('');
      calibrated.peaks[0].wavelength_uncertainty_nm = 0.05;
      expect(errorsOf('spectrum', calibrated)).toBe('');
    });
  });

  describe('polarization', () => {
    const table = (name: string): string => path.join(DEMO, 'polarization', name);
    it('accepts every form of glowprint polarization --json on the demo bench', () => {
      const forms = [
        ['--table', table('laser-a-power-meter.csv')],
        ['--table', table('laser-b-rotation.csv'), '--time-series', table('laser-b-burst.csv'), '--reference', table('laser-b-burst-total.csv')],
        ['--time-series', table('laser-b-burst.csv')],
        ['--table', table('floor-glare.csv'), '--calibrate-analyser', '--reference-azimuth', '0', '--out', path.join(tmp, 'analyser.json')],
        readdirSync(table('laser-c-overexposed')).filter((f) => f.endsWith('.jpg')).map((f) => path.join(table('laser-c-overexposed'), f)),
      ];
      for (const args of forms) expect(errorsOf('polarization', run(['polarization', ...args])), args.join(' ')).toBe('');
    });
    it('rejects a measurement without any key of issue 5, and an analyser calibration without its offset', () => {
      const out = run(['polarization', '--table', table('laser-a-power-meter.csv')]);
      expectRequired('polarization', out, ['dolp', 'dolp_uncertainty', 'azimuth_deg', 'azimuth_uncertainty_deg', 'i_max', 'i_min', 'verdict', 'stokes', 'stokes.s0', 'stokes.s1', 'stokes.s2', 'warnings']);
      const bad = structuredClone(out) as Record<string, unknown>;
      bad.verdict = 'mostly polarized';
      expect(errorsOf('polarization', bad)).not.toBe('');
      const cal = run(['polarization', '--table', table('floor-glare.csv'), '--calibrate-analyser', '--reference-azimuth', '0', '--out', path.join(tmp, 'analyser-2.json')]);
      expectRequired('polarization', cal, ['offset_deg', 'offset_uncertainty_deg', 'reference', 'profile_file', 'warnings']);
    });
  });

  describe('grating', () => {
    const screen = ['grating', '--table', path.join(DEMO, 'grating/slide-c-screen.csv'), '--wavelength', '632.816', '--distance', '850', '--distance-uncertainty', '2', '--nominal', '600'];
    it('accepts glowprint grating --json for the screen and the angle method', () => {
      expect(errorsOf('grating', run(screen))).toBe('');
      expect(errorsOf('grating', run(['grating', '--table', path.join(DEMO, 'grating/slide-d-goniometer.csv'), '--wavelength', '632.816', '--nominal', '300', '--tolerance', '1%']))).toBe('');
      // Without --nominal the verdict is null, which the contract allows.
      expect(errorsOf('grating', run(screen.slice(0, -2)))).toBe('');
    });
    it('rejects it without any key of issue 6', () => {
      const out = run(screen);
      expectRequired('grating', out, ['lines_per_mm', 'lines_per_mm_uncertainty', 'period_um', 'incidence_deg', 'residuals', 'residuals.0.order', 'residuals.0.measured_mm', 'verdict', 'warnings']);
    });
  });

  describe('modes', () => {
    it('accepts glowprint modes --json for one trace and for the warm-up series, and rejects it without any key of issue 7', () => {
      const one = run(['modes', path.join(DEMO, 'modes/warmup-1.csv'), '--fsr', '10GHz']);
      expect(errorsOf('modes', one)).toBe('');
      const files = readdirSync(path.join(DEMO, 'modes')).filter((f) => f.endsWith('.csv')).sort().map((f) => path.join(DEMO, 'modes', f));
      expect(errorsOf('modes', run(['modes', ...files, '--mirror-spacing', '7.5mm', '--confocal']))).toBe('');
      expectRequired('modes', one, [
        'fsr_period_s',
        'mode_spacing_hz',
        'mode_spacing_uncertainty_hz',
        'cavity_length_m',
        'mode_count',
        'modes',
        'modes.0.offset_hz',
        'modes.0.relative_power',
        'gain_fwhm_hz',
        'finesse',
        'warnings',
      ]);
    });
  });

  describe('calibrate', () => {
    let out: Record<string, unknown>;
    beforeAll(() => {
      out = run(['calibrate', path.join(DEMO, 'cfl-calibration.jpg'), '--lamp', 'fluorescent', '--out', path.join(tmp, 'rig.json')]);
    });
    it('accepts glowprint calibrate --json on the demo lamp photo (grating model: lines_per_mm present)', () => {
      expect(errorsOf('calibrate', out)).toBe('');
      expect((out.model as { kind: string }).kind).toBe('grating');
    });
    it('rejects it without any key of issue 3', () => {
      expectRequired('calibrate', out, ['rms_nm', 'dispersion_nm_per_px', 'range_nm', 'model', 'model.kind', 'lines', 'lines.0.position_px', 'lines.0.wavelength_nm', 'lines.0.residual_nm', 'lines.0.used', 'lines_per_mm', 'warnings']);
    });
  });

  describe('identify', () => {
    it('accepts glowprint identify --json with a profile and self-calibrated, single and batch, and rejects it without any key of issue 4', () => {
      const profile = path.join(tmp, 'rig-id.json');
      run(['calibrate', path.join(DEMO, 'cfl-calibration.jpg'), '--lamp', 'fluorescent', '--out', profile]);
      const withProfile = run(['identify', path.join(DEMO, 'tube-e.jpg'), '--calibration', profile]);
      expect(errorsOf('identify', withProfile)).toBe('');
      expect((withProfile.calibration as { from: string }).from).toBe('profile');
      const batch = run(['identify', path.join(DEMO, 'tube-b.jpg'), path.join(DEMO, 'tube-d.jpg')]) as { results: unknown[] };
      expect(batch.results).toHaveLength(2);
      for (const r of batch.results) expect(errorsOf('identify', r)).toBe('');
      const self = batch.results[0] as { calibration: { from: string } };
      expect(self.calibration.from).toBe('self');
      expectRequired('identify', withProfile, [
        'species',
        'species.0.element',
        'species.0.score',
        'species.0.present',
        'species.0.lines_matched',
        'species.0.flux_fraction',
        'peaks',
        'peaks.0.position_px',
        'peaks.0.wavelength_nm',
        'peaks.0.wavelength_uncertainty_nm',
        'peaks.0.line',
        'calibration',
        'calibration.from',
        'calibration.rms_nm',
        'warnings',
      ]);
    });
  });

  it('reject a result whose "command" names another command', () => {
    const out = run(['grating', '--wavelength', '632.816', '--distance', '1000', '--positions', '-1:-410.2,1:410.4']);
    expect(errorsOf('grating', { ...out, command: 'grating' })).toBe('');
    expect(errorsOf('grating', { ...out, command: 'modes' })).not.toBe('');
  });
});
