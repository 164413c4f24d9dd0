import { existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROOT, runCli } from '../helpers/runCli.js';

const DEMO = path.join(ROOT, 'data/demo');
const tmp = mkdtempSync(path.join(os.tmpdir(), 'glowprint-cli-report-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

/** Saves what a command printed with --json, as a user would (`… --json > file`). */
function save(name: string, args: string[]): string {
  const r = runCli([...args, '--json']);
  expect(r.status, r.stderr).toBe(0);
  const file = path.join(tmp, name);
  writeFileSync(file, r.stdout);
  return file;
}

let polarization: string;
let grating: string;
let modes: string;
beforeAll(() => {
  polarization = save('laser-a.json', ['polarization', '--table', path.join(DEMO, 'polarization/laser-a-power-meter.csv')]);
  grating = save('slide-c.json', ['grating', '--table', path.join(DEMO, 'grating/slide-c-screen.csv'), '--wavelength', '632.816', '--distance', '850', '--distance-uncertainty', '2', '--nominal', '600']);
  modes = save('warmup-1.json', ['modes', path.join(DEMO, 'modes/warmup-1.csv'), '--fsr', '10GHz']);
});

describe('glowprint report', () => {
  it('--help explains the inputs and shows an example', () => {
    const r = runCli(['report', '--help']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/<results\.\.\.>/);
    expect(r.stdout).toMatch(/--out <folder>/);
    expect(r.stdout).toMatch(/watch log/);
  });

  it('writes one self-contained index.html from several results and prints a line per result', () => {
    const out = path.join(tmp, 'audit');
    const r = runCli(['report', polarization, grating, modes, '--out', out, '--title', 'Drawer audit']);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/^Report written: .*index\.html \(3 results; summary table in .*summary\.csv\)/);
    expect(r.stdout).toMatch(/laser-a-power-meter\.csv: linearly polarized/);
    const html = readFileSync(path.join(out, 'index.html'), 'utf8');
    expect(html).toMatch(/<title>Drawer audit<\/title>/);
    expect((html.match(/<section id=/g) ?? []).length).toBe(3);
    expect(html).toMatch(/Summary \(3 results/);
    expect(html).not.toMatch(/<script/i);
    // Written atomically: no temporary file left beside them.
    expect(readdirSync(out).sort()).toEqual(['index.html', 'summary.csv']);
    // The summary table as CSV, read back with csv-parse (a general-purpose RFC 4180 reader).
    const rows = parse(readFileSync(path.join(out, 'summary.csv'), 'utf8'), { columns: true }) as Array<Record<string, string>>;
    expect(rows.map((r) => r.measurement)).toEqual(['Polarization', 'Grating line density', 'Laser modes']);
    expect(rows[0].key_figure).toMatch(/^DoLP \d\.\d+ ± \d\.\d+, /);
  });

  it('reads a batch file {"results": [...]} and a watch log (JSON Lines, a torn last line skipped)', () => {
    const batch = path.join(tmp, 'batch.json');
    writeFileSync(batch, JSON.stringify({ results: [JSON.parse(readFileSync(grating, 'utf8')), { file: 'slide-x.csv', error: 'slide-x.csv: line 3: expected a number' }] }));
    const log = path.join(tmp, 'watch.jsonl');
    writeFileSync(log, `${JSON.stringify(JSON.parse(readFileSync(polarization, 'utf8')))}\n${JSON.stringify(JSON.parse(readFileSync(modes, 'utf8')))}\n{"command": "ide`);
    const r = runCli(['report', batch, log, '--out', path.join(tmp, 'mixed'), '--json']);
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.report_file).toBe(path.join(tmp, 'mixed', 'index.html'));
    expect(out.results.map((s: { kind: string }) => s.kind)).toEqual(['grating', 'failed', 'polarization', 'modes']);
    expect(out.results[1]).toMatchObject({ item: 'slide-x.csv', result: 'failed' });
    expect(Array.isArray(out.warnings)).toBe(true);
  });

  describe('bad input: exit 1, one line naming the file', () => {
    const fail = (args: string[], pattern: RegExp): void => {
      const r = runCli(['report', ...args, '--out', path.join(tmp, 'bad')]);
      expect(r.status).toBe(1);
      expect(r.stdout).toBe('');
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
      expect(r.stderr).toMatch(pattern);
      expect(existsSync(path.join(tmp, 'bad', 'index.html'))).toBe(false);
    };

    it('a missing file', () => fail([path.join(tmp, 'nope.json')], /nope\.json: no such file/));

    it('a file that is not JSON', () => {
      const f = path.join(tmp, 'notes.txt');
      writeFileSync(f, 'tube A looked pink\n');
      fail([f], /notes\.txt: not valid JSON/);
    });

    it('JSON that no command printed', () => {
      const f = path.join(tmp, 'other.json');
      writeFileSync(f, '{"name": "tube A", "colour": "pink"}');
      fail([grating, f], /other\.json: not a glowprint result: expected the JSON of glowprint spectrum, calibrate, identify, polarization, grating or modes; found keys name, colour/);
    });

    it('a result with a damaged key, named with its place in a batch', () => {
      const f = path.join(tmp, 'damaged.json');
      const g = JSON.parse(readFileSync(grating, 'utf8'));
      writeFileSync(f, JSON.stringify({ results: [g, { ...g, lines_per_mm: 'about 600' }] }));
      fail([f], /damaged\.json \(results\[1\]\): lines_per_mm: expected a number, got "about 600"/);
    });

    it('an empty file', () => {
      const f = path.join(tmp, 'empty.json');
      writeFileSync(f, '');
      fail([f], /empty\.json: empty file/);
    });
  });

  it('never writes over an input', () => {
    const folder = path.join(tmp, 'inplace');
    mkdirSync(folder, { recursive: true });
    const input = path.join(folder, 'index.html');
    writeFileSync(input, readFileSync(grating));
    const r = runCli(['report', input, '--out', folder]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/refusing to write over an input file/);
    expect(readFileSync(input, 'utf8')).toBe(readFileSync(grating, 'utf8'));
  });
});
