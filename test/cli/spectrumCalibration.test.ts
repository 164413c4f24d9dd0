import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { airToVacuumNm } from '../../src/core/units/airVacuum.js';
import { nistReferenceLines } from '../helpers/nistReference.js';
import { ROOT, runCli } from '../helpers/runCli.js';

/**
 * `glowprint spectrum --calibration profile.json`: a profile made by `glowprint calibrate` from the demo's
 * fluorescent-lamp photo, re-applied to the demo's neon tube photographed with the same rig. The wavelengths are
 * checked against NIST ASD (the outside reference in ../shared/reference), not against the demo's own truth.
 */
const DEMO = path.join(ROOT, 'data/demo');
const dir = mkdtempSync(path.join(tmpdir(), 'glowprint-spectrum-cal-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (name: string): string => path.join(dir, name);
const PROFILE = at('rig.json');

interface CalPeak {
  position_px: number;
  wavelength_nm: number | null;
  wavelength_uncertainty_nm: number | null;
  fwhm_nm: number | null;
  saturated: boolean;
  blended: boolean;
  extrapolated: boolean;
}
interface CalResult {
  command: string;
  peaks: CalPeak[];
  calibration: { profile: string; lamp: string; model: string; medium: string; rms_nm: number; range_nm: [number, number]; extrapolated_peaks: number };
  warnings: string[];
}

function spectrumJson(args: string[]): CalResult {
  const r = runCli(['spectrum', ...args, '--json']);
  expect(r.status, r.stderr).toBe(0);
  return JSON.parse(r.stdout) as CalResult;
}

let air: CalResult;
beforeAll(() => {
  const r = runCli(['calibrate', path.join(DEMO, 'cfl-calibration.jpg'), '--lamp', 'fluorescent', '--out', PROFILE, '--json']);
  expect(r.status, r.stderr).toBe(0);
  air = spectrumJson([path.join(DEMO, 'tube-a.jpg'), '--calibration', PROFILE]);
}, 120_000);

/** Ne I lines of NIST ASD relative intensity ≥ 500 (the outside reference). */
function strongNeonLinesNm(): number[] {
  return nistReferenceLines()
    .filter((l) => l.spectrum === 'Ne I' && l.intensity >= 500)
    .map((l) => l.wavelengthNm);
}

describe('glowprint spectrum <photo> --calibration profile.json', () => {
  it('gives every peak wavelength_nm and wavelength_uncertainty_nm, and says which profile and medium', () => {
    expect(air.command).toBe('spectrum');
    expect(air.peaks.length).toBeGreaterThanOrEqual(15);
    for (const p of air.peaks) {
      expect(typeof p.wavelength_nm).toBe('number');
      expect(p.wavelength_uncertainty_nm === null || p.wavelength_uncertainty_nm > 0).toBe(true);
    }
    expect(air.calibration).toMatchObject({ profile: PROFILE, lamp: 'fluorescent', medium: 'air' });
    // Wavelength grows along this rig's band (the demo's dispersion direction), so peak order is wavelength order.
    const wl = air.peaks.map((p) => p.wavelength_nm!);
    for (let i = 1; i < wl.length; i++) expect(wl[i]).toBeGreaterThan(wl[i - 1]);
  });

  it('measures single Ne I lines (NIST ASD) within 0.25 nm and 3σ each, RMS ≤ 0.15 nm (the calibration issue\'s target)', () => {
    // Single lines: peaks the peak finder did not flag (blended, clipped, extrapolated) and no wider than 1.15× the
    // median line width (a wider peak holds two unresolved lines at this rig's ~0.6 nm/px), each paired with the
    // nearest strong Ne I line within 0.5 nm.
    const reference = strongNeonLinesNm();
    const widths = air.peaks.map((p) => p.fwhm_nm!).sort((a, b) => a - b);
    const medianWidth = widths[Math.floor(widths.length / 2)];
    const single = air.peaks.filter((p) => !p.blended && !p.saturated && !p.extrapolated && p.fwhm_nm! <= 1.15 * medianWidth);
    const errors: number[] = [];
    for (const peak of single) {
      const nearest = reference.reduce((a, l) => (Math.abs(l - peak.wavelength_nm!) < Math.abs(a - peak.wavelength_nm!) ? l : a), Infinity);
      const err = peak.wavelength_nm! - nearest;
      if (Math.abs(err) > 0.5) continue; // a weak line, not in the strong set
      expect(Math.abs(err), `peak at ${peak.wavelength_nm} vs Ne I ${nearest}`).toBeLessThanOrEqual(Math.min(0.25, 3 * peak.wavelength_uncertainty_nm!));
      errors.push(err);
    }
    expect(errors.length).toBeGreaterThanOrEqual(8);
    const rms = Math.sqrt(errors.reduce((a, e) => a + e * e, 0) / errors.length);
    expect(rms).toBeLessThanOrEqual(0.15);
  });

  it('flags peaks beyond the profile\'s calibrated range as extrapolated, with a warning and a larger uncertainty', () => {
    const [lo, hi] = air.calibration.range_nm;
    const beyond = air.peaks.filter((p) => p.wavelength_nm! < lo || p.wavelength_nm! > hi);
    expect(beyond.length).toBeGreaterThan(0);
    expect(beyond.every((p) => p.extrapolated)).toBe(true);
    expect(air.calibration.extrapolated_peaks).toBe(beyond.length);
    expect(air.warnings.join('\n')).toMatch(/beyond the calibrated range/);
    const inside = air.peaks.filter((p) => !p.extrapolated);
    const nearestInside = inside[inside.length - 1];
    expect(beyond[beyond.length - 1].wavelength_uncertainty_nm ?? Infinity).toBeGreaterThanOrEqual(nearestInside.wavelength_uncertainty_nm! * 0.9);
  });

  it('--vacuum converts by the air index: Ne 633.4 scaled as HeNe 632.816 (air) ↔ 632.9908 nm (vacuum, CIPM 2007)', () => {
    const vac = spectrumJson([path.join(DEMO, 'tube-a.jpg'), '--calibration', PROFILE, '--vacuum']);
    expect(vac.calibration.medium).toBe('vacuum');
    // The calibrated range is given in the peaks' medium too (vacuum is longer by n − 1 ≈ 2.8e-4).
    expect(vac.calibration.range_nm[0]).toBeCloseTo(airToVacuumNm(air.calibration.range_nm[0]), 6);
    expect(vac.calibration.range_nm[1]).toBeGreaterThan(air.calibration.range_nm[1] + 0.1);
    expect(vac.peaks.length).toBe(air.peaks.length);
    const nHeNe = 632.9908 / 632.816; // CIPM 2007 HeNe, vacuum and standard air (../shared/design/CHECK_VALUES.md)
    const k = air.peaks.findIndex((p) => Math.abs(p.wavelength_nm! - 633.4) < 0.5);
    expect(k).toBeGreaterThanOrEqual(0);
    const ratio = vac.peaks[k].wavelength_nm! / air.peaks[k].wavelength_nm!;
    // 632.816 nm is quoted to 1 pm (1.6e-6 relative); over 0.6 nm the index of air changes by ~1e-9.
    expect(Math.abs(ratio - nHeNe)).toBeLessThanOrEqual(1.6e-6);
    for (let i = 0; i < air.peaks.length; i++) {
      const r = vac.peaks[i].wavelength_nm! / air.peaks[i].wavelength_nm!;
      // Standard air, 450–720 nm: n − 1 between 2.75e-4 and 2.80e-4 (Ciddor 1996; from memory of its curve).
      expect(r - 1).toBeGreaterThanOrEqual(2.75e-4);
      expect(r - 1).toBeLessThanOrEqual(2.8e-4);
    }
  });

  it('validates against the published result schema (ajv, draft 2020-12)', () => {
    const schema = JSON.parse(readFileSync(path.join(ROOT, 'data/schema/results/spectrum.schema.json'), 'utf8'));
    const ajv = new Ajv2020({ allErrors: true, strict: true });
    const validate = ajv.compile(schema);
    expect(validate(air), ajv.errorsText(validate.errors)).toBe(true);
    const broken = structuredClone(air) as unknown as { calibration: Record<string, unknown> };
    delete broken.calibration.medium;
    expect(validate(broken)).toBe(false);
  });

  it('table, CSV and plot carry the wavelengths: a wavelength column, wavelength_nm in the CSV, the plot in nm', () => {
    const csv = at('tube-a.csv');
    const svg = at('tube-a.svg');
    const r = runCli(['spectrum', path.join(DEMO, 'tube-a.jpg'), '--calibration', PROFILE, '--csv', csv, '--svg', svg]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/wavelengths \(air\) from .*rig\.json: fluorescent lamp/);
    expect(r.stdout).toMatch(/wavelength \(nm\)/);
    expect(r.stdout).toMatch(/\d{3}\.\d{3} ± 0\.\d{3}/);
    const all = readFileSync(csv, 'utf8').trim().split('\n');
    // Comment lines first: the photo's geometry, and the medium of the wavelengths (standard air unless --vacuum).
    expect(all[0]).toMatch(/^# photo_geometry: /);
    expect(all[1]).toBe('# wavelength_nm: wavelengths in standard air (the NIST convention)');
    const rows = all.slice(2);
    expect(rows[0].split(',')).toContain('wavelength_nm');
    const col = rows[0].split(',').indexOf('wavelength_nm');
    const wl = rows.slice(1).map((row) => Number(row.split(',')[col]));
    expect(wl.every(Number.isFinite)).toBe(true);
    expect(Math.min(...wl)).toBeLessThan(480);
    expect(Math.max(...wl)).toBeGreaterThan(690);
    expect(readFileSync(svg, 'utf8')).toContain('wavelength (nm)');
    const vac = at('tube-a-vacuum.csv');
    expect(runCli(['spectrum', path.join(DEMO, 'tube-a.jpg'), '--calibration', PROFILE, '--vacuum', '--csv', vac]).status).toBe(0);
    expect(readFileSync(vac, 'utf8').split('\n')[1]).toBe('# wavelength_nm: vacuum wavelengths');
  });
});

describe('glowprint spectrum --calibration — bad input: exit 1, one line naming the problem', () => {
  const expectBad = (args: string[], pattern: RegExp): void => {
    const r = runCli(['spectrum', ...args]);
    expect(r.status).toBe(1);
    expect(r.stdout).toBe('');
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(pattern);
  };

  it('--vacuum without a profile', () => {
    expectBad([path.join(DEMO, 'tube-a.jpg'), '--vacuum'], /--vacuum needs --calibration/);
  });

  it('a profile that is not JSON, or not a profile', () => {
    const text = at('notes.json');
    writeFileSync(text, 'rig used on Tuesday\n');
    expectBad([path.join(DEMO, 'tube-a.jpg'), '--calibration', text], /notes\.json: not a valid JSON file/);
    const other = at('other.json');
    writeFileSync(other, JSON.stringify({ hello: 1 }));
    expectBad([path.join(DEMO, 'tube-a.jpg'), '--calibration', other], /other\.json/);
    expectBad([path.join(DEMO, 'tube-a.jpg'), '--calibration', at('missing.json')], /missing\.json: cannot read the profile \(no such file\)/);
  });

  it('a spectrum CSV that already has a wavelength axis', () => {
    const csv = at('wl.csv');
    const rows = ['wavelength_nm,intensity'];
    for (let i = 0; i < 400; i++) rows.push(`${(500 + i * 0.5).toFixed(2)},${(10 + 500 * Math.exp(-0.5 * ((i - 200) / 2) ** 2)).toFixed(3)}`);
    writeFileSync(csv, rows.join('\n') + '\n');
    expectBad([csv, '--calibration', PROFILE], /wl\.csv: this spectrum already has a wavelength axis/);
  });

  it('--csv naming the profile is refused and the profile left intact', () => {
    const before = readFileSync(PROFILE, 'utf8');
    expectBad([path.join(DEMO, 'tube-a.jpg'), '--calibration', PROFILE, '--csv', PROFILE], /refusing to write over an input file/);
    expect(readFileSync(PROFILE, 'utf8')).toBe(before);
  });
});
