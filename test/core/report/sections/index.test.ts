import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { InputError } from '../../../../src/core/errors.js';
import { HIGH_VOLTAGE_CAUTION, LASER_CAUTION, UV_CAUTION } from '../../../../src/core/safety.js';
import { escapeHtml } from '../../../../src/core/report/html.js';
import { parse } from 'csv-parse/sync';
import { cautionsFor, reportFromResults, resultKind, sectionFromResult, summaryCsv, summaryTable, unpackResults } from '../../../../src/core/report/sections/index.js';
import { createSvgDocument } from '../../../../src/io/svgDocument.js';
import { cliJson, DEMO } from './results.js';

const document = createSvgDocument();
const tmp = mkdtempSync(path.join(os.tmpdir(), 'glowprint-sec-index-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

const outputs: Record<string, Record<string, any>> = {};
beforeAll(() => {
  // A small spectrum CSV: three Gaussian lines on a flat floor.
  const rows = Array.from({ length: 400 }, (_, i) => {
    const g = (c: number, a: number) => a * Math.exp(-0.5 * ((i - c) / 1.5) ** 2);
    return `${i},${(1 + g(80, 50) + g(200, 120) + g(310, 30)).toFixed(4)}`;
  });
  const csv = path.join(tmp, 'lines.csv');
  writeFileSync(csv, 'pixel,intensity\n' + rows.join('\n') + '\n');
  outputs.spectrum = cliJson(['spectrum', csv]);
  outputs.polarization = cliJson(['polarization', '--table', path.join(DEMO, 'polarization/laser-a-power-meter.csv')]);
  outputs.grating = cliJson(['grating', '--wavelength', '632.816', '--distance', '1000', '--positions', '-1:-410.2,1:410.4', '--nominal', '600']);
  outputs.modes = cliJson(['modes', path.join(DEMO, 'modes/warmup-1.csv'), '--fsr', '10GHz']);
});

describe('resultKind(json)', () => {
  it('recognises what each command printed by its shape', () => {
    for (const kind of ['spectrum', 'polarization', 'grating', 'modes'] as const) expect(resultKind(outputs[kind])).toBe(kind);
  });

  it('follows a top-level "command" key, and rejects an unknown one', () => {
    expect(resultKind({ ...outputs.grating, command: 'grating' })).toBe('grating');
    expect(resultKind({ command: 'identify', species: [], peaks: [], calibration: {} })).toBe('identification');
    expect(resultKind({ command: 'calibrate' })).toBe('calibration');
    expect(() => resultKind({ ...outputs.grating, command: 'sharpen' })).toThrow(/"command": "sharpen" is not a glowprint command with a report/);
  });

  it('bad input: anything else is named, with the keys it has', () => {
    expect(() => resultKind([1, 2])).toThrow(InputError);
    expect(() => resultKind([1, 2])).toThrow(/got an array/);
    expect(() => resultKind({ colour: 'red', size: 3 })).toThrow(/not a glowprint result: .*found keys colour, size/);
  });
});

describe('sectionFromResult(json, {document}) and unpackResults(json)', () => {
  it('turns a failed batch entry into a section that says so, naming the file once', () => {
    const r = sectionFromResult({ command: 'spectrum', file: 'photos/tube-f.jpg', error: 'no spectrum found' }, { document });
    expect(r.kind).toBe('failed');
    expect(r.summary).toMatchObject({ item: 'tube-f.jpg', measurement: 'Spectrum and peaks', result: 'failed', keyFigure: 'no spectrum found', warnings: 1 });
    expect(r.section).toMatchObject({ heading: 'tube-f.jpg — not measured', subtitle: 'Input: photos/tube-f.jpg', warnings: ['no spectrum found'] });
    // An entry whose error starts with the file's name (as earlier versions wrote it) does not show the name twice.
    const old = sectionFromResult({ file: 'photos/tube-f.jpg', error: 'photos/tube-f.jpg: no spectrum found' }, { document });
    expect(old.section.warnings).toEqual(['no spectrum found']);
    expect(old.summary.keyFigure).toBe('no spectrum found');
    expect(sectionFromResult({ file: 'runs/b.csv', error: 'runs/b.csv, line 3: expected a number' }, { document }).section.warnings).toEqual(['line 3: expected a number']);
    // An error about another file keeps that name; a bare file name is not repeated under the heading.
    const dark = sectionFromResult({ file: 'tube-g.jpg', error: 'dark.jpg: no such file' }, { document });
    expect(dark.section.warnings).toEqual(['dark.jpg: no such file']);
    expect(dark.section.subtitle).toBeUndefined();
  });

  it('unpacks a batch {"results": [...]} and leaves a single result alone', () => {
    expect(unpackResults({ results: [outputs.grating, outputs.modes] })).toEqual([outputs.grating, outputs.modes]);
    expect(unpackResults(outputs.grating)).toEqual([outputs.grating]);
  });
});

describe('reportFromResults(results, options)', () => {
  it('builds one report: a summary row and a uniquely named section per result, every plot inline, no scripts', () => {
    const results = [outputs.spectrum, outputs.polarization, outputs.grating, outputs.grating, outputs.modes];
    const { html, sections } = reportFromResults(results, { document, title: 'Audit', sources: ['a/lines.json', 'b.json', 'c/slide.json', 'd/slide.json', 'e.json'] });
    const ids = sections.map((s) => s.section.id);
    expect(new Set(ids).size).toBe(results.length);
    expect(ids).toContain('slide-json');
    expect(ids).toContain('slide-json-2');
    for (const id of ids) expect(html).toContain(`<section id="${id}">`);
    const svgCount = sections.reduce((n, s) => n + (s.section.svgs?.length ?? 0), 0);
    expect(svgCount).toBeGreaterThanOrEqual(results.length);
    expect((html.match(/<figure><svg/g) ?? []).length).toBe(svgCount);
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/(src|href)="https?:/);
    expect(html).toContain(escapeHtml(summaryTable(sections.map((s) => s.summary)).caption!));
  });

  it('writes the summary as CSV that a general-purpose reader (csv-parse) reads back exactly', () => {
    const rows = [
      { id: 'a', item: 'tube "B", worn label', measurement: 'Gas identification', result: 'Hg + Ar', keyFigure: 'score 1.00,\u00a02 unexplained lines', warnings: 3 },
      { id: 'b', item: 'slide C', measurement: 'Grating line density', result: 'not 600 l/mm', keyFigure: '578.92\u00a0±\u00a00.70 lines/mm', warnings: 0 },
    ];
    const back = parse(summaryCsv(rows), { columns: true }) as Array<Record<string, string>>;
    expect(back).toEqual([
      { item: 'tube "B", worn label', measurement: 'Gas identification', result: 'Hg + Ar', key_figure: 'score 1.00, 2 unexplained lines', warnings: '3' },
      { item: 'slide C', measurement: 'Grating line density', result: 'not 600 l/mm', key_figure: '578.92 ± 0.70 lines/mm', warnings: '0' },
    ]);
  });

  it('shows the cautions that apply: lasers for laser work, high voltage and UV for lamps', () => {
    expect(cautionsFor(['polarization', 'grating'])).toEqual([LASER_CAUTION]);
    expect(cautionsFor(['spectrum'])).toEqual([HIGH_VOLTAGE_CAUTION, UV_CAUTION]);
    expect(cautionsFor(['spectrum', 'modes'])).toEqual([HIGH_VOLTAGE_CAUTION, UV_CAUTION, LASER_CAUTION]);
    const { html } = reportFromResults([outputs.modes], { document, title: 'Modes' });
    expect(html).toContain(escapeHtml(LASER_CAUTION));
    expect(html).not.toContain(escapeHtml(UV_CAUTION));
  });

  it('bad input: names the source of the result at fault', () => {
    const bad = { ...outputs.modes, mode_count: 'seven' };
    expect(() => reportFromResults([outputs.grating, bad], { document, title: 'x', sources: ['g.json', 'runs/modes.json (line 4)'] })).toThrow(
      /^runs\/modes\.json \(line 4\): mode_count: expected a number, got "seven"$/,
    );
    expect(() => reportFromResults([{}], { document, title: 'x' })).toThrow(/^result 1: not a glowprint result/);
  });
});
