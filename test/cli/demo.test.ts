import { convert } from 'jcampconverter';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { ROOT, runCli, type CliResult } from '../helpers/runCli.js';

// The bundled scenario end to end, checked against the ground truth its generators wrote (data/demo/truth.json,
// data/demo/polarization/truth.json, the grating and mode files' headers). Invented data: demo only.
const out = mkdtempSync(path.join(tmpdir(), 'gp-demo-'));
let run: CliResult;
const result = (name: string): Record<string, any> => JSON.parse(readFileSync(path.join(out, 'results', `${name}.json`), 'utf8'));
const present = (name: string): string[] => result(name).species.filter((s: any) => s.present).map((s: any) => s.element).sort();

beforeAll(() => {
  run = runCli(['demo', '--out', out]);
}, 300_000);

describe('glowprint demo', () => {
  it('exits 0, prints the summary and names the report', () => {
    expect(run.status, run.stderr).toBe(0);
    expect(run.stdout).toMatch(/^item +measurement +result +key figure/);
    expect(run.stdout).toMatch(/Report: .*index\.html/);
  });

  it('calibrates the rig on the fluorescent bulb and recovers the 1000 lines/mm grating (truth.json rig)', () => {
    const cal = result('calibration');
    expect(cal.rms_nm).toBeLessThanOrEqual(0.15);
    expect(Math.abs(cal.lines_per_mm - 1000)).toBeLessThanOrEqual(3 * cal.lines_per_mm_uncertainty);
  });

  it('names the gases of the tubes as the truth has them', () => {
    expect(present('tube-a')).toEqual(['Ne']);
    expect(present('tube-b')).toEqual(['Ar', 'Hg']);
    expect(present('tube-c')).toEqual(['He']);
    expect(present('tube-e')).toEqual(['Hg', 'Ne']);
    // The leaky "hydrogen" tube: hydrogen is there, and so is the air that leaked in (O, N atoms and N2 bands,
    // which carry most of the light); the truth's contents leave nothing unexplained.
    expect(present('tube-d')).toEqual(['H', 'N', 'N2', 'O']);
    expect(result('tube-d').unexplained.length).toBeLessThanOrEqual(1);
  });

  it('measures the analyser offset, the lasers, the gratings and the modes within their uncertainties of the truth', () => {
    const truth = JSON.parse(readFileSync(path.join(ROOT, 'data/demo/polarization/truth.json'), 'utf8'));
    const analyser = result('analyser-a');
    expect(Math.abs(analyser.offset_deg - truth.analyser.offset_deg)).toBeLessThanOrEqual(3 * analyser.offset_uncertainty_deg);
    const a = result('laser-a');
    expect(a.verdict).toBe('polarized');
    expect(Math.abs(a.azimuth_deg - truth.laser_a.azimuth_true_deg)).toBeLessThanOrEqual(1);
    expect(result('laser-b').interpretation).toMatch(/random/i);
    const c = result('grating-c');
    expect(Math.abs(c.lines_per_mm - 579)).toBeLessThanOrEqual(3 * c.lines_per_mm_uncertainty);
    expect(c.verdict).toBe('outside');
    expect(result('grating-d').verdict).toBe('within');
    const m = result('modes-warmup');
    expect(Math.abs(m.mode_spacing_hz - 249.827e6)).toBeLessThanOrEqual(3 * m.mode_spacing_uncertainty_hz);
    expect(m.mode_count).toBe(7);
  });

  it('writes a self-contained report with every section and the cautions, and a summary CSV', () => {
    const html = readFileSync(path.join(out, 'index.html'), 'utf8');
    for (const id of ['calibration', 'tube-a', 'tube-e', 'analyser-a', 'laser-c-overexposed', 'grating-d', 'modes-warmup']) {
      expect(html).toContain(`id="${id}"`);
    }
    expect(html).toMatch(/IEC 60825-1/);
    expect(html).toMatch(/kilovolts/);
    expect(html).not.toMatch(/<script|https?:\/\/(?!www\.w3\.org\/)/); // no scripts, no requests (SVG namespaces only)
    const csv = readFileSync(path.join(out, 'summary.csv'), 'utf8').trim().split('\n');
    expect(csv[0]).toBe('item,measurement,result,key_figure,warnings');
    expect(csv.length).toBe(1 + 14);
  });

  it('exports calibrated spectra as CSV and JCAMP-DX that an independent parser reads (jcampconverter)', () => {
    const jdx = convert(readFileSync(path.join(out, 'spectra', 'tube-a.jdx'), 'utf8'));
    const data = jdx.flatten[0].spectra[0].data;
    let best = 0;
    for (let i = 1; i < data.y.length; i++) if (data.y[i] > data.y[best]) best = i;
    // The brightest neon lines in a camera's view are red: Ne I 585.2–703.2 nm (NIST ASD).
    expect(data.x[best]).toBeGreaterThan(580);
    expect(data.x[best]).toBeLessThan(705);
    const rows = readFileSync(path.join(out, 'spectra', 'tube-a.csv'), 'utf8').trim().split('\n');
    expect(rows[0]).toBe('wavelength_nm,intensity,uncertainty');
    expect(rows.length).toBeGreaterThan(300);
  });
});
