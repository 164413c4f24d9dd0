import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/runCli.js';

/**
 * Input files that are not what a command needs — a folder given as the input, a dark frame that is not there, a
 * hand-edited instrument profile — each get one line on stderr naming the file (and the field), exit code 1, nothing
 * on stdout and nothing written. Paths are given relative to the project (runCli runs there), as a user types them.
 */
const dir = mkdtempSync(path.join(tmpdir(), 'glowprint-input-files-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (name: string): string => path.join(dir, name);

function expectOneLine(args: string[], line: string | RegExp): void {
  const r = runCli(args);
  expect(r.status, r.stderr).toBe(1);
  expect(r.stdout).toBe('');
  const lines = r.stderr.trim().split('\n');
  expect(lines, r.stderr).toHaveLength(1);
  if (typeof line === 'string') expect(lines[0]).toBe(line);
  else expect(lines[0]).toMatch(line);
}

describe('a folder given as the input file', () => {
  // Node's fs.readFile leaves the path out of its EISDIR error; the message used to read "glowprint: file: is a folder".
  const FOLDER = 'glowprint: data/demo: is a folder, not a file (give the files in it, not the folder)';
  it('is named by spectrum and identify (one input)', () => {
    expectOneLine(['spectrum', 'data/demo'], FOLDER);
    expectOneLine(['spectrum', 'data/demo', '--json'], FOLDER);
    expectOneLine(['identify', 'data/demo'], FOLDER);
  });
  it('is named by the other commands that read input files: calibrate, modes, report', () => {
    expectOneLine(['calibrate', 'data/demo', '--lamp', 'Hg'], FOLDER);
    expectOneLine(['modes', 'data/demo/modes', '--fsr', '10GHz'], 'glowprint: data/demo/modes: is a folder, not a file (give the files in it, not the folder)');
    expectOneLine(['report', 'data/demo', '--out', at('report')], FOLDER);
    expect(existsSync(at('report'))).toBe(false);
  });
  it('is named when it is the profile or the line list', () => {
    expectOneLine(['spectrum', 'data/demo/tube-a.jpg', '--calibration', 'data/demo'], /^glowprint: data\/demo: is a folder, not a profile file/);
    expectOneLine(['identify', 'data/demo/tube-a.jpg', '--line-list', 'data/demo'], 'glowprint: --line-list data/demo: is a folder, not a file');
    expectOneLine(['identify', 'data/demo/tube-a.jpg', '--line-list', at('none.csv')], `glowprint: --line-list ${at('none.csv')}: no such file`);
  });
});

describe('spectrum --dark: checked once, before any input is measured', () => {
  it('a missing dark frame fails a batch with one message naming it (was: every input failed with it)', () => {
    const dark = at('nodark.jpg');
    const summary = at('summary.csv');
    const report = at('dark-report');
    const csv = at('out/spectrum.csv');
    mkdirSync(path.dirname(csv), { recursive: true });
    expectOneLine(
      ['spectrum', 'data/demo/tube-a.jpg', 'data/demo/tube-c.jpg', '--dark', dark, '--summary', summary, '--report', report, '--csv', csv],
      `glowprint: --dark ${dark}: no such file`,
    );
    expectOneLine(['spectrum', 'data/demo/tube-a.jpg', 'data/demo/tube-c.jpg', '--dark', dark, '--json'], `glowprint: --dark ${dark}: no such file`);
    for (const out of [summary, report]) expect(existsSync(out), out).toBe(false);
    expect(readdirSync(path.dirname(csv))).toEqual([]);
    // One input: the same message.
    expectOneLine(['spectrum', 'data/demo/tube-a.jpg', '--dark', dark], `glowprint: --dark ${dark}: no such file`);
  });
  it('a folder, an empty file or a text file as the dark frame is named once', () => {
    const inputs = ['spectrum', 'data/demo/tube-a.jpg', 'data/demo/tube-c.jpg', '--dark'];
    expectOneLine([...inputs, 'data/demo'], 'glowprint: --dark data/demo: is a folder, not a file');
    writeFileSync(at('empty.jpg'), '');
    expectOneLine([...inputs, at('empty.jpg')], `glowprint: --dark ${at('empty.jpg')}: is empty; expected a photo (JPEG, PNG, TIFF or WebP) taken with the light blocked`);
    expectOneLine([...inputs, 'data/demo/truth.json'], 'glowprint: --dark data/demo/truth.json: contains text, not image data; expected a photo (JPEG, PNG, TIFF or WebP) taken with the light blocked');
  });
});

describe('spectrum --calibration with a hand-edited profile: the field of the kind the model declares', () => {
  const PROFILE = at('rig.json');
  let profile: { model: Record<string, unknown>; check_model: unknown };
  beforeAll(() => {
    const r = runCli(['calibrate', 'data/demo/cfl-calibration.jpg', '--lamp', 'fluorescent', '--out', PROFILE]);
    expect(r.status, r.stderr).toBe(0);
    profile = JSON.parse(readFileSync(PROFILE, 'utf8'));
    expect(profile.model.kind).toBe('grating');
  }, 120_000);

  function edited(name: string, edit: (p: typeof profile) => void): string {
    const copy = structuredClone(profile);
    edit(copy);
    writeFileSync(at(name), JSON.stringify(copy, null, 2));
    return at(name);
  }

  it('names a grating field that is not a number (was: missing field "degree"; … (and 11 more))', () => {
    const file = edited('abc.json', (p) => (p.model.groove_spacing_nm = 'abc'));
    expectOneLine(['spectrum', 'data/demo/tube-a.jpg', '--calibration', file], `glowprint: ${file}: not a usable instrument profile: model.groove_spacing_nm: expected a number, got "abc"`);
  });
  it('names a deleted grating field, and the kinds there are for an unknown kind', () => {
    const missing = edited('nofocal.json', (p) => delete p.model.focal_length_px);
    expectOneLine(
      ['spectrum', 'data/demo/tube-a.jpg', '--calibration', missing],
      `glowprint: ${missing}: not a usable instrument profile: model: missing field "focal_length_px" (a "grating" model needs it)`,
    );
    const prism = edited('prism.json', (p) => (p.model.kind = 'prism'));
    expectOneLine(
      ['identify', 'data/demo/tube-a.jpg', '--calibration', prism],
      `glowprint: ${prism}: not a usable instrument profile: model.kind: expected one of "polynomial", "grating", got "prism"`,
    );
  });
  it('names a check_model that is neither null nor a polynomial', () => {
    const file = edited('check.json', (p) => (p.check_model = 'none'));
    expectOneLine(['spectrum', 'data/demo/tube-a.jpg', '--calibration', file], `glowprint: ${file}: not a usable instrument profile: check_model: expected an object or null, got "none"`);
  });
});
