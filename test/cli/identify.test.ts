import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createRandom } from '../../src/core/random.js';
import { nistReferenceLines } from '../helpers/nistReference.js';
import { ROOT, runCli } from '../helpers/runCli.js';

// The demo photos (data/demo, rendered by the project's renderer; truth.json says what is in each tube) and fixtures
// made here: a wavelength CSV from NIST ASD neon lines (the outside reference), a flat noise spectrum, a bad line list.
const dir = mkdtempSync(path.join(tmpdir(), 'glowprint-identify-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (name: string): string => path.join(dir, name);
const demo = (name: string): string => path.join(ROOT, 'data/demo', name);

interface JsonSpecies {
  element: string;
  score: number;
  present: boolean;
  lines_matched: number;
  flux_fraction: number;
}
interface JsonPeak {
  position_px: number;
  wavelength_nm: number;
  wavelength_uncertainty_nm: number;
  line: { element: string; spectrum: string; wavelength_nm: number } | null;
}
interface JsonResult {
  command: string;
  species: JsonSpecies[];
  peaks: JsonPeak[];
  unexplained: JsonPeak[];
  calibration: { from: string; rms_nm: number | null } | null;
  emission_lines_found: boolean;
  laser?: unknown;
  warnings: string[];
}

const present = (r: JsonResult): string[] => r.species.filter((s) => s.present).map((s) => s.element).sort();

beforeAll(() => {
  // The stockroom's calibration: the fluorescent bulb photo → profile (glowprint calibrate, as in story 1).
  const cal = runCli(['calibrate', demo('cfl-calibration.jpg'), '--lamp', 'fluorescent', '--out', at('cfl.json')]);
  expect(cal.status, cal.stderr).toBe(0);
  // Ne I lines from NIST ASD as a wavelength-axis spectrum, 0.25 nm steps, σ = 0.6 nm lines, a little noise.
  const ne = nistReferenceLines()
    .filter((l) => l.spectrum === 'Ne I' && l.wavelengthNm > 420 && l.wavelengthNm < 700)
    .sort((a, b) => b.intensity - a.intensity)
    .slice(0, 25);
  const max = ne[0].intensity;
  const rng = createRandom(3);
  const rows = ['wavelength_nm,intensity'];
  for (let w = 420; w <= 700; w += 0.25) {
    let y = 5 + rng.normal() * 0.3;
    for (const l of ne) y += (1000 * l.intensity) / max * Math.exp(-0.5 * ((w - l.wavelengthNm) / 0.6) ** 2);
    rows.push(`${w.toFixed(2)},${y.toFixed(3)}`);
  }
  writeFileSync(at('neon-wavelength.csv'), rows.join('\n') + '\n');
  const flat = ['position_px,intensity', ...Array.from({ length: 800 }, (_, i) => `${i},${(20 + rng.normal()).toFixed(3)}`)];
  writeFileSync(at('noise.csv'), flat.join('\n') + '\n');
  writeFileSync(at('bad-lines.csv'), 'wavelength_nm,intensity,spectrum\n585.249,500,Ne I\nabc,200,Ne I\n');
  writeFileSync(at('broken.jpg'), 'not a photo');
}, 180_000);

describe('glowprint identify', () => {
  it('--json with --calibration: the stockroom tubes (truth.json: Ne; Ar with Hg; He; Ne with a trace of Hg)', () => {
    const want: Record<string, string[]> = { 'tube-a.jpg': ['Ne'], 'tube-b.jpg': ['Ar', 'Hg'], 'tube-c.jpg': ['He'], 'tube-e.jpg': ['Hg', 'Ne'] };
    for (const [file, species] of Object.entries(want)) {
      const r = runCli(['identify', demo(file), '--calibration', at('cfl.json'), '--json']);
      expect(r.status, r.stderr).toBe(0);
      const json = JSON.parse(r.stdout) as JsonResult;
      expect(json.command).toBe('identify');
      expect(present(json), file).toEqual(species);
      expect(json.calibration?.from).toBe('profile');
      expect(json.calibration!.rms_nm).toBeGreaterThan(0);
      // species sorted by score, present ones first; scores 0–1
      for (let k = 1; k < json.species.length; k++) {
        const a = json.species[k - 1];
        const b = json.species[k];
        expect(Number(a.present) > Number(b.present) || (a.present === b.present && a.score >= b.score)).toBe(true);
      }
      for (const s of json.species) expect(s.score >= 0 && s.score <= 1).toBe(true);
      const labelled = json.peaks.filter((p) => p.line);
      expect(labelled.length).toBeGreaterThanOrEqual(3);
      for (const p of labelled) {
        expect(Number.isFinite(p.position_px)).toBe(true);
        expect(p.wavelength_uncertainty_nm).toBeGreaterThan(0);
        // within 4 σ of its line (order 2: of twice its wavelength), plus a blend's half-width
        const order = (p.line as { order?: number }).order ?? 1;
        const sigma = Math.hypot(p.wavelength_uncertainty_nm, json.calibration!.rms_nm!);
        expect(Math.abs(p.wavelength_nm - order * p.line!.wavelength_nm)).toBeLessThanOrEqual(4 * order * sigma + 1.5);
      }
    }
  });

  it('finds the air in the leaky "hydrogen" tube (story 1): H with O, N and the N2 bands, red first-positive heads included', () => {
    const r = runCli(['identify', demo('tube-d.jpg'), '--calibration', at('cfl.json'), '--json']);
    expect(r.status, r.stderr).toBe(0);
    const json = JSON.parse(r.stdout) as JsonResult;
    expect(present(json)).toEqual(['H', 'N', 'N2', 'O']);
    // The red band heads the truth names (580–670 nm) are explained by N2, not left over.
    const red = json.peaks.filter((p) => p.wavelength_nm > 575 && p.wavelength_nm < 675 && p.line?.element === 'N2');
    expect(red.length).toBeGreaterThanOrEqual(3);
    expect(json.unexplained.length).toBeLessThanOrEqual(1);
    expect(json.species.find((s) => s.element === 'H')!.score).toBeGreaterThan(0.3);
  });

  it('calibrates a tube from its own lines without a profile, and says so', () => {
    const r = runCli(['identify', demo('tube-a.jpg'), '--json']);
    expect(r.status, r.stderr).toBe(0);
    const json = JSON.parse(r.stdout) as JsonResult;
    expect(json.calibration?.from).toBe('self');
    expect(present(json)).toEqual(['Ne']);
    expect(json.warnings.some((w) => /from the spectrum itself/.test(w))).toBe(true);
  });

  it('lists the unexplained peaks each to the decimals its uncertainty earns (never "± 0.0")', () => {
    // Tube B calibrating itself leaves a few weak peaks unexplained; the sharpest is known to a few hundredths of a nm.
    const r = runCli(['identify', demo('tube-b.jpg')]);
    expect(r.status, r.stderr).toBe(0);
    const lines = r.stdout.split('\n');
    const list = lines[lines.findIndex((l) => /unexplained .*brightest first:/.test(l)) + 1];
    const entries = list.trim().split(', ');
    expect(entries.length).toBeGreaterThanOrEqual(1);
    for (const e of entries) {
      const m = /^(\d+\.(\d+)) ± (\d+\.(\d+)) nm$/.exec(e)!;
      expect(m, e).not.toBeNull();
      expect(Number(m[3]), e).toBeGreaterThan(0); // the uncertainty shows, with the value to the same decimals
      expect(m[2].length).toBe(m[4].length);
    }
  });

  it('reads a wavelength CSV as calibrated by its writer (calibration.from "file")', () => {
    const r = runCli(['identify', at('neon-wavelength.csv'), '--json']);
    expect(r.status, r.stderr).toBe(0);
    const json = JSON.parse(r.stdout) as JsonResult;
    expect(json.calibration).toEqual({ from: 'file', rms_nm: null, covered_range_nm: [420, 700] });
    expect(json.species[0].element).toBe('Ne');
    expect(json.species[0].present).toBe(true);
  });

  it('says "no emission lines found" for a noise-only spectrum and names nothing', () => {
    const r = runCli(['identify', at('noise.csv'), '--json']);
    expect(r.status, r.stderr).toBe(0);
    const json = JSON.parse(r.stdout) as JsonResult;
    expect(json.emission_lines_found).toBe(false);
    expect(json.species.some((s) => s.present)).toBe(false);
    expect(json.warnings.join(' ')).toMatch(/no emission lines found/);
    const text = runCli(['identify', at('noise.csv')]);
    expect(text.stdout).toMatch(/no emission lines found/);
  });

  it('runs a batch: one result each, a bad file reported without stopping the rest (exit 1), --svg per input', () => {
    const r = runCli(['identify', demo('tube-a.jpg'), at('broken.jpg'), demo('tube-c.jpg'), '--calibration', at('cfl.json'), '--json', '--svg', at('plot.svg')]);
    expect(r.status).toBe(1);
    const json = JSON.parse(r.stdout) as { command: string; results: Array<JsonResult & { file: string; error?: string }>; warnings: string[] };
    expect(json.results.map((x) => path.basename(x.file))).toEqual(['tube-a.jpg', 'broken.jpg', 'tube-c.jpg']);
    expect(json.results[1].error).toMatch(/^contains text, not image data/);
    expect(present(json.results[0])).toEqual(['Ne']);
    expect(present(json.results[2])).toEqual(['He']);
    expect(json.warnings.some((w) => w.includes('broken.jpg'))).toBe(true);
    const svg = readFileSync(at('plot-tube-a.svg'), 'utf8');
    expect(svg).toContain('Ne I 640.2');
    expect(existsSync(at('plot-tube-c.svg'))).toBe(true);
    expect(existsSync(at('plot-broken.svg'))).toBe(false);
  });

  it('--elements limits the candidates', () => {
    const r = runCli(['identify', demo('tube-b.jpg'), '--calibration', at('cfl.json'), '--elements', 'Ar,Ne', '--json']);
    expect(r.status, r.stderr).toBe(0);
    const json = JSON.parse(r.stdout) as JsonResult;
    expect(json.species.every((s) => s.element === 'Ar' || s.element === 'Ne')).toBe(true);
    expect(present(json)).toEqual(['Ar']);
    // mercury's lines, not offered as a candidate, are left unexplained
    expect(json.unexplained.some((p) => Math.abs(p.wavelength_nm - 546.07) < 1)).toBe(true);
  });

  it('bad input: one clear line naming the file (and the row), exit 1', () => {
    const bad = runCli(['identify', demo('tube-a.jpg'), '--line-list', at('bad-lines.csv')]);
    expect(bad.status).toBe(1);
    expect(bad.stderr).toMatch(/bad-lines\.csv/);
    expect(bad.stderr).toMatch(/line 3|row 3/);
    expect(bad.stderr.trim().split('\n')).toHaveLength(1);
    const noProfile = runCli(['identify', demo('tube-a.jpg'), '--calibration', at('missing.json')]);
    expect(noProfile.status).toBe(1);
    expect(noProfile.stderr).toMatch(/missing\.json/);
    const broken = runCli(['identify', at('broken.jpg')]);
    expect(broken.status).toBe(1);
    expect(broken.stderr).toMatch(/broken\.jpg/);
    const elements = runCli(['identify', demo('tube-a.jpg'), '--elements', 'Xx']);
    expect(elements.status).toBe(1);
    expect(elements.stderr).toMatch(/elements/);
  });

  it('--help carries the high-voltage, UV and laser cautions', () => {
    const help = runCli(['identify', '--help']);
    expect(help.status).toBe(0);
    expect(help.stdout).toMatch(/kilovolts/);
    expect(help.stdout).toMatch(/UV/);
    expect(help.stdout).toMatch(/IEC 60825-1/);
  });
});
