import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { nistReferenceLines } from '../helpers/nistReference.js';
import { ROOT, runCli } from '../helpers/runCli.js';

// `glowprint spectrum` over several photos: the demo tubes through the demo rig's profile (made by glowprint calibrate
// from the fluorescent-lamp photo), a text file named .jpg among them; the brightest lines checked against NIST ASD.
const dir = mkdtempSync(path.join(tmpdir(), 'glowprint-batch-spectrum-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (name: string): string => path.join(dir, name);
const demo = (name: string): string => path.join(ROOT, 'data/demo', name);

interface BatchJson {
  command: string;
  results: Array<{ command: string; input?: { file: string }; file?: string; error?: string; peaks?: Array<{ wavelength_nm: number | null; height: number }> }>;
  warnings: string[];
}

let inputs: string[];
const runs: Record<number, ReturnType<typeof runCli>> = {};

beforeAll(() => {
  const cal = runCli(['calibrate', demo('cfl-calibration.jpg'), '--lamp', 'fluorescent', '--out', at('rig.json')]);
  expect(cal.status, cal.stderr).toBe(0);
  writeFileSync(at('broken.jpg'), 'not a photo');
  inputs = [demo('tube-a.jpg'), at('broken.jpg'), demo('tube-c.jpg')];
  for (const workers of [1, 2]) {
    runs[workers] = runCli(['spectrum', ...inputs, '--calibration', at('rig.json'), '--json', '--workers', String(workers), '--summary', at(`summary-${workers}.csv`), '--csv', at(`w${workers}/spectrum.csv`)]);
  }
}, 300_000);

describe('glowprint spectrum <photos...> (batch)', () => {
  it('gives the same JSON, summary and per-input CSV files with 1 worker and 2 worker threads', () => {
    expect(runs[2].stdout).toBe(runs[1].stdout);
    expect(readFileSync(at('summary-2.csv'), 'utf8')).toBe(readFileSync(at('summary-1.csv'), 'utf8'));
    for (const name of ['spectrum-tube-a.csv', 'spectrum-tube-c.csv']) {
      expect(readFileSync(at(`w2/${name}`), 'utf8')).toBe(readFileSync(at(`w1/${name}`), 'utf8'));
    }
    expect(existsSync(at('w1/spectrum-broken.csv'))).toBe(false);
  });

  it('one result per input in order, the text file named with its error, exit 1', () => {
    const r = runs[2];
    expect(r.status).toBe(1);
    const json = JSON.parse(r.stdout) as BatchJson;
    expect(json.command).toBe('spectrum');
    expect(json.results).toHaveLength(3);
    expect(path.basename(json.results[0].input!.file)).toBe('tube-a.jpg');
    // The entry names the file; its error says why, without naming it again.
    expect(json.results[1].file).toBe(at('broken.jpg'));
    expect(json.results[1].error).toMatch(/^contains text, not image data/);
    expect(path.basename(json.results[2].input!.file)).toBe('tube-c.jpg');
    expect(json.warnings.filter((w) => w.includes('broken.jpg'))).toEqual([`${at('broken.jpg')}: ${json.results[1].error}`]);
    // On stderr too (with --json), once, worded as for the file alone, and not as a warning.
    expect(r.stderr.split('\n').filter((l) => l.includes('broken.jpg'))).toEqual([`glowprint: ${at('broken.jpg')}: ${json.results[1].error}`]);
  });

  it('text mode: a missing file is named once on stdout and once on stderr, as an error (the line it gets alone), exit 1', () => {
    const missing = at('nope.jpg');
    const alone = runCli(['spectrum', missing]);
    expect(alone.status).toBe(1);
    expect(alone.stderr).toBe(`glowprint: ${missing}: no such file\n`);
    const r = runCli(['spectrum', demo('tube-a.jpg'), missing, '--workers', '1']);
    expect(r.status).toBe(1);
    const mentions = (text: string): string[] => text.split('\n').filter((l) => l.includes('nope.jpg'));
    expect(mentions(r.stdout)).toEqual([`${missing}: not measured: no such file`]);
    expect(mentions(r.stderr)).toEqual([alone.stderr.trimEnd()]);
    expect(r.stderr).not.toMatch(/warning: .*nope\.jpg/);
    expect(r.stderr).toMatch(/glowprint: 1 of 2 files measured, 1 failed\n/);
  });

  it('summary CSV: the brightest peak of each tube sits on a strong NIST ASD line of its gas (within 0.5 nm)', () => {
    const rows = parse(readFileSync(at('summary-1.csv'), 'utf8'), { columns: true }) as Array<Record<string, string>>;
    expect(rows.map((x) => x.status)).toEqual(['ok', 'failed', 'ok']);
    expect(rows[1].file).toBe(at('broken.jpg'));
    expect(rows[1].error).toMatch(/^contains text, not image data/);
    const nist = nistReferenceLines();
    for (const [row, spectrum] of [[rows[0], 'Ne I'], [rows[2], 'He I']] as const) {
      const wl = Number(row.brightest_peak_wavelength_nm);
      const strong = nist.filter((l) => l.spectrum === spectrum && l.intensity >= 200);
      const nearest = Math.min(...strong.map((l) => Math.abs(l.wavelengthNm - wl)));
      expect(nearest, `${row.file}: ${wl} nm`).toBeLessThanOrEqual(0.5);
      expect(Number(row.peaks)).toBeGreaterThan(3);
      expect(Number(row.calibration_rms_nm)).toBeGreaterThan(0);
    }
  });

  it('one input stays the single-result command (its error is the command\'s: one line, exit 1)', () => {
    const one = runCli(['spectrum', at('broken.jpg'), '--json']);
    expect(one.status).toBe(1);
    expect(one.stderr.trim().split('\n')).toHaveLength(1);
    expect(one.stdout).toBe('');
  });
});
