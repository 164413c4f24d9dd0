import { mkdtempSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../../src/core/errors.js';
import { lampLines, parseLampDefinitions, parseLaserDefinitions } from '../../../src/core/lines/index.js';
import { lampLinesFor, loadLampCatalog, loadLineList } from '../../../src/io/lineList.js';

const near = <T extends { wavelengthNm: number }>(lines: T[], wl: number, tol = 0.0005): T | undefined => lines.find((l) => Math.abs(l.wavelengthNm - wl) <= tol);

describe('lampLines(spec, {catalog, files?, rangeNm?, resolutionNm?, blendRatio?})', () => {
  const catalog = loadLampCatalog();

  it('Hg: the persistent mercury lines 404.656, 435.833, 546.074, 576.960, 579.066 nm (common practice, no source)', () => {
    const r = lampLines('Hg', { catalog });
    for (const wl of [404.656, 435.833, 546.074, 576.96, 579.066]) expect(near(r.lines, wl), String(wl)).toBeDefined();
    expect(r.lines.every((l) => l.spectrum === 'Hg I' && l.strong && l.lamp === 'Hg')).toBe(true);
    expect(r.lines.every((l) => l.wavelengthNm >= 350 && l.wavelengthNm <= 1000)).toBe(true);
    expect(r.description).toMatch(/^Hg: low-pressure mercury lamp/);
    expect(Math.max(...r.lines.map((l) => l.relativeIntensity))).toBe(1);
  });

  it('each named lamp gives at least 5 reference lines', () => {
    for (const name of ['Hg', 'Ne', 'He', 'Ar', 'Kr', 'Xe', 'H', 'fluorescent']) {
      expect(lampLines(name, { catalog }).lines.length, name).toBeGreaterThanOrEqual(5);
    }
    expect(lampLines('Na', { catalog }).lines.map((l) => l.wavelengthNm)).toContain(588.995);
  });

  it('Ne,Hg is the union of both, intensities relative within each spectrum', () => {
    const both = lampLines('Ne,Hg', { catalog });
    const ne = lampLines('Ne', { catalog });
    const hg = lampLines('Hg', { catalog });
    expect(both.lines).toHaveLength(ne.lines.length + hg.lines.length);
    expect(both.lamps).toEqual(['Ne', 'Hg']);
    for (const spectrum of ['Ne I', 'Hg I']) {
      expect(Math.max(...both.lines.filter((l) => l.spectrum === spectrum).map((l) => l.relativeIntensity))).toBe(1);
    }
    expect(near(both.lines, 435.833)?.relativeIntensity).toBe(1);
    expect(lampLines('ne + HG', { catalog }).lines).toHaveLength(both.lines.length);
  });

  it('marks blends at the resolution: Hg 576.960/579.066 are 2.1 nm apart (resolved at 1 nm, blended at 3 nm)', () => {
    const at1 = lampLines('Hg', { catalog, resolutionNm: 1 });
    expect(near(at1.lines, 576.96)?.blended).toBe(false);
    const at3 = lampLines('Hg', { catalog, resolutionNm: 3 });
    expect(near(at3.lines, 576.96)?.blended).toBe(true);
    expect(near(at3.lines, 576.96)?.blendedWith).toContain(579.066);
    expect(at3.warnings.join(' ')).toMatch(/blended at 3 nm/);
  });

  it('fluorescent: Hg lines plus phosphor peaks; Hg 546.074 blended with Tb³⁺ 545.4; Eu³⁺ 611.6 present (from memory)', () => {
    const r = lampLines('fluorescent', { catalog });
    const hg546 = near(r.lines, 546.074)!;
    expect(hg546.blended).toBe(true);
    expect(hg546.blendedWith).toContain(545.4);
    expect(near(r.lines, 611.6)?.kind).toBe('phosphor');
    expect(near(r.lines, 450)?.widthNm).toBe(50);
    // A narrow line on the broad Eu²⁺ band keeps its position: not blended by it.
    expect(near(r.lines, 435.833)?.blendedWith).not.toContain(450);
    expect(lampLines('CFL', { catalog }).lamps).toEqual(['fluorescent']);
  });

  it('laser:632.816 is one line at that air wavelength; laser:HeNe by name', () => {
    const r = lampLines('laser:632.816', { catalog });
    expect(r.lines).toHaveLength(1);
    expect(r.lines[0]).toMatchObject({ wavelengthNm: 632.816, kind: 'laser', element: 'laser' });
    expect(lampLines('laser:HeNe', { catalog }).lines[0].wavelengthNm).toBe(632.816);
    expect(lampLines('Ne,laser:HeNe-543', { catalog }).lamps).toEqual(['Ne', 'laser:HeNe-543']);
    expect(() => lampLines('laser:12', { catalog })).toThrow(/between 200 and 2000/);
  });

  it('any element of the line list works as a lamp (Cd)', () => {
    const r = lampLines('Cd', { catalog });
    expect(near(r.lines, 643.847)).toBeDefined();
  });

  it('unknown names are an InputError listing the known ones', () => {
    expect(() => lampLines('Qq', { catalog })).toThrow(InputError);
    expect(() => lampLines('Qq', { catalog })).toThrow(/lamp: unknown lamp "Qq"; known: Ar, fluorescent, H, He, Hg, Kr, Na, Ne, Xe; laser:/);
    expect(() => lampLines('laser:ruby', { catalog })).toThrow(/unknown laser "ruby"/);
    expect(() => lampLines('', { catalog })).toThrow(/lamp: expected a lamp name/);
    expect(() => lampLines('Ne,,Hg', { catalog })).toThrow(/single commas/);
  });

  it('keeps the range and warns about a lamp with no lines in it', () => {
    const r = lampLines('Ne,Hg', { catalog, rangeNm: [600, 700] });
    expect(r.lines.every((l) => l.wavelengthNm >= 600 && l.wavelengthNm <= 700)).toBe(true);
    expect(r.warnings.join(' ')).toMatch(/lamp Hg has no listed lines in 600–700 nm/);
    expect(() => lampLines('Hg', { catalog, rangeNm: [900, 950] })).toThrow(/no reference lines/);
  });

  it('uses user file lines passed in options.files', () => {
    const file = loadLineList({ elements: ['Ne'], strongOnly: true }).slice(0, 3);
    const r = lampLines('mine.csv', { catalog, files: { 'mine.csv': file } });
    expect(r.lines).toHaveLength(3);
    expect(r.lamps).toEqual(['mine.csv']);
  });
});

describe('lampLinesFor(spec) (io: the project catalog and user files)', () => {
  it('reads a user file named in the spec', () => {
    const dir = mkdtempSync(path.join(os.tmpdir(), 'glowprint-lamp-'));
    const file = path.join(dir, 'my-lamp.csv');
    writeFileSync(file, 'wavelength_nm,intensity,spectrum\n501.568,100,He I\n587.562,500,He I\n');
    const r = lampLinesFor(`Hg,${file}`);
    expect(r.lamps).toEqual(['Hg', file]);
    expect(near(r.lines, 587.562)?.lamp).toBe(file);
  });
  it('names a missing file', () => {
    expect(() => lampLinesFor('Hg,./no-such-lines.csv')).toThrow(/no-such-lines\.csv: cannot read the line-list file \(ENOENT\)/);
  });
});

describe('parseLampDefinitions / parseLaserDefinitions', () => {
  it('names the entry of a bad definition', () => {
    expect(() => parseLampDefinitions({ lamps: [{ name: 'X', description: 'd', spectra: ['Qq I'] }] }, 'lamps.json')).toThrow(
      /lamps\.json: lamps\[0\]\.spectra/,
    );
    expect(() =>
      parseLaserDefinitions({ lasers: [{ name: 'L', description: 'd', wavelength_nm: 'red', tolerance_nm: 1, kind: 'gas', source: 's' }] }, 'lasers.json'),
    ).toThrow(/lasers\.json: lasers\[0\]\.wavelength_nm: expected a finite number, got "red"/);
  });
});
