import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROOT, runCli } from '../helpers/runCli.js';

// A shelf audit as a batch: the demo tubes (data/demo, ground truth in truth.json) with a photo that is text and a
// file that is not there, identified with the demo rig's profile by one worker and by several.
const dir = mkdtempSync(path.join(tmpdir(), 'glowprint-batch-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (name: string): string => path.join(dir, name);
const demo = (name: string): string => path.join(ROOT, 'data/demo', name);

interface Truth {
  photos: Array<{ file: string; role: string; contents: string[] }>;
}
const truth = JSON.parse(readFileSync(demo('truth.json'), 'utf8')) as Truth;
/** The elements truth.json lists for a tube ("Ar II" → Ar). */
const truthElements = (file: string): string[] => [...new Set(truth.photos.find((p) => p.file === file)!.contents.map((c) => c.split(' ')[0]))].sort();

interface BatchJson {
  command: string;
  results: Array<{ command: string; file: string; error?: string; species?: Array<{ element: string; present: boolean }> }>;
  warnings: string[];
}

const TUBES = ['tube-a.jpg', 'tube-b.jpg', 'tube-c.jpg', 'tube-e.jpg'];
let inputs: string[];
const runs: Record<number, ReturnType<typeof runCli>> = {};

beforeAll(() => {
  const cal = runCli(['calibrate', demo('cfl-calibration.jpg'), '--lamp', 'fluorescent', '--out', at('rig.json')]);
  expect(cal.status, cal.stderr).toBe(0);
  writeFileSync(at('broken.jpg'), 'not a photo');
  inputs = [demo(TUBES[0]), at('broken.jpg'), demo(TUBES[1]), demo(TUBES[2]), at('missing.jpg'), demo(TUBES[3])];
  for (const workers of [1, 3]) {
    runs[workers] = runCli(['identify', ...inputs, '--calibration', at('rig.json'), '--json', '--workers', String(workers), '--summary', at(`summary-${workers}.csv`), '--report', at(`report-${workers}`)]);
  }
}, 300_000);

describe('glowprint identify <photos...> (batch)', () => {
  it('gives the same JSON, summary and report with 1 worker (in-process) and 3 worker threads', () => {
    expect(runs[3].stdout).toBe(runs[1].stdout);
    expect(readFileSync(at('summary-3.csv'), 'utf8')).toBe(readFileSync(at('summary-1.csv'), 'utf8'));
    // The report differs only in its generation time.
    const html = (w: number): string => readFileSync(at(`report-${w}/index.html`), 'utf8').replace(/\d{4}-\d\d-\d\dT[\d:.]+Z/g, 'T').replace(/\d{4}-\d\d-\d\d \d\d:\d\d(:\d\d)?( UTC)?/g, 'T');
    expect(html(3)).toBe(html(1));
  });

  it('reports each failing file by name with its error, goes on with the rest, and exits 1', () => {
    const r = runs[3];
    expect(r.status).toBe(1);
    const json = JSON.parse(r.stdout) as BatchJson;
    expect(json.results.map((x) => path.basename(x.file))).toEqual(inputs.map((f) => path.basename(f)));
    // Each entry names its file; its error says why, without naming the file again.
    expect(json.results[1].error).toMatch(/^contains text, not image data/);
    expect(json.results[4].error).toBe('no such file');
    expect(json.results[1].command).toBe('identify');
    expect(json.warnings.filter((w) => /broken\.jpg|missing\.jpg/.test(w))).toEqual([`${at('broken.jpg')}: ${json.results[1].error}`, `${at('missing.jpg')}: no such file`]);
    // On stderr, one line each as the file alone would get, not labelled as a warning.
    expect(r.stderr.split('\n').filter((l) => /broken\.jpg|missing\.jpg/.test(l))).toEqual([`glowprint: ${at('broken.jpg')}: ${json.results[1].error}`, `glowprint: ${at('missing.jpg')}: no such file`]);
    expect(r.stderr).toMatch(/4 of 6 files identified, 2 failed/);
    // Every tube identified as truth.json says (N2 bands and trace species aside, these four are clean).
    for (const [k, tube] of [[0, TUBES[0]], [2, TUBES[1]], [3, TUBES[2]], [5, TUBES[3]]] as const) {
      const got = json.results[k].species!.filter((s) => s.present).map((s) => s.element).sort();
      expect(got, tube).toEqual(truthElements(tube));
    }
  });

  it('writes the summary CSV: one row per input in order, status, species and figures with units, the error', () => {
    // Read back with csv-parse (an independent RFC 4180 parser).
    const rows = parse(readFileSync(at('summary-1.csv'), 'utf8'), { columns: true }) as Array<Record<string, string>>;
    expect(rows.map((r) => path.basename(r.file))).toEqual(inputs.map((f) => path.basename(f)));
    expect(rows.map((r) => r.status)).toEqual(['ok', 'failed', 'ok', 'ok', 'failed', 'ok']);
    expect(Object.keys(rows[0])).toEqual(expect.arrayContaining(['species_present', 'top_species', 'calibration_rms_nm', 'unexplained_flux_percent', 'laser_wavelength_nm', 'error']));
    expect(rows[0].species_present).toBe('Ne');
    expect(rows[2].species_present.split(' + ').sort()).toEqual(truthElements(TUBES[1]));
    expect(rows[0].calibration_from).toBe('profile');
    expect(Number(rows[0].calibration_rms_nm)).toBeGreaterThan(0);
    expect(Number(rows[0].calibration_rms_nm)).toBeLessThan(0.2);
    expect(rows[1].error).toMatch(/^contains text, not image data/);
    expect(rows[1].species_present).toBe('');
    expect(rows[4].file).toBe(at('missing.jpg'));
    expect(rows[4].error).toBe('no such file');
  });

  it('writes the report with a section per input, the failures named, and the cautions', () => {
    const html = readFileSync(at('report-1/index.html'), 'utf8');
    for (const f of inputs) expect(html).toContain(path.basename(f));
    expect(html).toMatch(/broken\.jpg — not measured/);
    // The failed section names the file in its heading and says why without naming it again.
    const failed = html.match(/<section id="missing-jpg">[\s\S]*?<\/section>/)![0];
    expect(failed).toContain('missing.jpg — not measured');
    expect(failed).toContain(`Input: ${at('missing.jpg')}`);
    expect(failed).toContain('<li>no such file</li>');
    expect(failed.match(/missing\.jpg/g)).toHaveLength(2);
    expect(html).toMatch(/<tr><td>missing\.jpg<\/td><td>Gas identification<\/td><td>failed<\/td><td>no such file<\/td>/);
    expect(html).toMatch(/kilovolt|high voltage/i);
    expect(existsSync(at('report-1/summary.csv'))).toBe(false); // --summary put it elsewhere
  });

  it('all inputs fine → exit 0; text mode prints each result; --report alone writes summary.csv beside index.html', () => {
    const r = runCli(['identify', demo(TUBES[0]), demo(TUBES[2]), '--calibration', at('rig.json'), '--report', at('report-ok')]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain('tube-a.jpg:');
    expect(r.stdout).toContain('tube-c.jpg:');
    expect(r.stderr).toMatch(/2 of 2 files identified/);
    const rows = parse(readFileSync(at('report-ok/summary.csv'), 'utf8'), { columns: true }) as Array<Record<string, string>>;
    expect(rows.map((x) => x.status)).toEqual(['ok', 'ok']);
  });

  it('refuses a bad --workers and a summary over an input before any work (one line, exit 1)', () => {
    for (const bad of ['0', '1.5', 'two']) {
      const r = runCli(['identify', demo(TUBES[0]), demo(TUBES[2]), '--workers', bad]);
      expect(r.status).toBe(1);
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
      expect(r.stderr).toMatch(/--workers: expected a whole number/);
    }
    const over = runCli(['identify', demo(TUBES[0]), at('rig.json'), '--calibration', at('rig.json'), '--summary', at('rig.json')]);
    expect(over.status).toBe(1);
    expect(over.stderr).toMatch(/rig\.json: refusing to write over an input file/);
    expect(JSON.parse(readFileSync(at('rig.json'), 'utf8')).format).toBeDefined();
  });

  it('--help says how batches run and what the exit code means', () => {
    const help = runCli(['identify', '--help']);
    expect(help.status).toBe(0);
    expect(help.stdout).toMatch(/--workers/);
    expect(help.stdout).toMatch(/--summary/);
    expect(help.stdout).toMatch(/1 when any failed/);
  });
});
