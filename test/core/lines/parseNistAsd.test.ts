import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../../src/core/errors.js';
import { isNistAsdExport, parseLineFile, parseNistAsd, readIntensityCode, spectrumFromFileName } from '../../../src/core/lines/index.js';
import { SHARED } from '../../helpers/runCli.js';

const EXPORTS = path.join(SHARED, 'reference', 'nist-asd-exports');
const read = (f: string) => readFileSync(path.join(EXPORTS, f), 'utf8');

/**
 * A small export in the ASD's fixed-width text layout (the structure of the ASD "ASCII" output; the numbers are
 * made up for the parser test, not line data).
 */
function asciiExport(rows: string[], unit = 'Air  (nm)'): string {
  const rule = '-'.repeat(100);
  return [
    rule,
    '      Observed  |        Ritz    |  Rel. |    Aki    | Acc. |       Lower level       |',
    '     Wavelength |     Wavelength |  Int. |    s^-1   |      |-------------------------|',
    `      ${unit}  |      ${unit}  |  (?)  |           |      | Conf.      | Term | J   |`,
    rule,
    '                |                |       |           |      |            |      |     |',
    ...rows,
    '                |                |       |           |      |            |      |     |',
  ].join('\n');
}
const row = (obs: string, ritz: string, int: string) =>
  `${obs.padStart(15)} |${ritz.padStart(15)} |${int.padStart(6)} | 1.0e+07   |  B   | 2p5.3s     | 2[3/2]* | 2 |`;

describe('readIntensityCode(cell)', () => {
  it('strips the ASD character codes and parentheses (ASD line-list help, relative intensity)', () => {
    expect(readIntensityCode('1000h')).toEqual({ value: 1000, codes: 'h' });
    expect(readIntensityCode('50*')).toEqual({ value: 50, codes: '*' });
    expect(readIntensityCode('(200)')).toEqual({ value: 200, codes: '()' });
    expect(readIntensityCode('200bl')).toEqual({ value: 200, codes: 'bl' });
    expect(readIntensityCode('12d*')?.value).toBe(12);
    expect(readIntensityCode('2-')?.value).toBe(2);
    expect(readIntensityCode(' 9000 ')).toEqual({ value: 9000, codes: '' });
    expect(readIntensityCode('="300P"')?.value).toBe(300);
  });
  it('returns value null for codes alone or a blank, and null (garbage) for anything else', () => {
    expect(readIntensityCode('*')).toEqual({ value: null, codes: '*' });
    expect(readIntensityCode('')).toEqual({ value: null, codes: '' });
    expect(readIntensityCode('lots of light')).toBeNull();
    expect(readIntensityCode('12 34')).toBeNull();
  });
});

describe('parseNistAsd(text, source, options?) on ASD exports (../shared/reference/nist-asd-exports)', () => {
  it('reads the fixed-width export nist_HgI.txt: Hg I 546.074 / 435.833 / 404.656 nm present within 0.002 nm (common practice, no source)', () => {
    const r = parseNistAsd(read('nist_HgI.txt'), 'nist_HgI.txt');
    expect(r.format).toBe('nist-asd-ascii');
    for (const wl of [546.074, 435.833, 404.656]) {
      expect(r.lines.some((l) => l.spectrum === 'Hg I' && Math.abs(l.wavelengthNm - wl) <= 0.002), String(wl)).toBe(true);
    }
  });

  it('keeps one line per data row with a wavelength and a numeric intensity (counted independently)', () => {
    for (const f of ['nist_HgI.txt', 'HgI_air.ascii', 'nist_NeI.txt', 'ArI_air.ascii', 'KrI_air.ascii', 'nist_HgII.txt', 'CdI_air.ascii']) {
      const text = read(f);
      let expected = 0;
      for (const line of text.split('\n')) {
        const cells = line.split('|');
        if (cells.length < 4 || line.startsWith('#')) continue;
        const wl = (cells[0].trim() || cells[1].trim()).replace(/[+*?]$/, '');
        if (!/^\d+(\.\d+)?$/.test(wl)) continue;
        if (/\d/.test(cells[2])) expected++;
      }
      const r = parseNistAsd(text, f);
      expect(r.lines.length, f).toBe(expected);
      expect(r.lines.every((l) => l.wavelengthNm > 200 && l.wavelengthNm < 1200), f).toBe(true);
    }
  });

  it('reads the spectrum from the file name (nist_HgII.txt → Hg II, KrI_air.ascii → Kr I)', () => {
    expect(parseNistAsd(read('nist_HgII.txt'), 'exports/nist_HgII.txt').lines[0].spectrum).toBe('Hg II');
    expect(parseNistAsd(read('KrI_air.ascii'), 'KrI_air.ascii').lines[0].spectrum).toBe('Kr I');
    expect(spectrumFromFileName('Ne_I.csv')?.spectrum).toBe('Ne I');
    expect(spectrumFromFileName('lines.txt')).toBeNull();
  });

  it('is found by parseLineFile and isNistAsdExport', () => {
    expect(isNistAsdExport(read('nist_HI.txt'))).toBe(true);
    expect(isNistAsdExport('wavelength_nm,intensity,spectrum\n500,1,Ne I\n')).toBe(false);
    expect(parseLineFile(read('nist_HI.txt'), 'nist_HI.txt').format).toBe('nist-asd-ascii');
  });
});

describe('parseNistAsd: choices and codes (structure of the ASD outputs, made-up numbers)', () => {
  const text = asciiExport([
    row('500.1000', '500.1002', '1000h'),
    row('', '510.2000+', '50*'),
    row('520.3000', '520.3001', '(200)'),
    row('530.4000', '530.4003', '*'),
    row('540.5000', '540.5000', '200bl'),
  ]);

  it("prefers observed, falls back to Ritz, and strips the codes (default 'prefer-observed')", () => {
    const r = parseNistAsd(text, 'x.txt', { spectrum: 'Ne I' });
    expect(r.lines.map((l) => l.wavelengthNm)).toEqual([500.1, 510.2, 520.3, 540.5]);
    expect(r.lines.map((l) => l.intensity)).toEqual([1000, 50, 200, 200]);
    expect(r.lines[3].blend).toBe(true);
    expect(r.warnings.join(' ')).toMatch(/1 rows without a numeric intensity skipped/);
  });
  it("takes only the observed or only the Ritz column when asked", () => {
    const obs = parseNistAsd(text, 'x.txt', { spectrum: 'Ne I', wavelength: 'observed' });
    expect(obs.lines.map((l) => l.wavelengthNm)).toEqual([500.1, 520.3, 540.5]);
    expect(obs.warnings.join(' ')).toMatch(/1 rows without an observed wavelength/);
    const ritz = parseNistAsd(text, 'x.txt', { spectrum: 'Ne I', wavelength: 'ritz' });
    expect(ritz.lines.map((l) => l.wavelengthNm)).toEqual([500.1002, 510.2, 520.3001, 540.5]);
  });
  it("keeps rows without intensity at 0 with missingIntensity: 'zero'", () => {
    const r = parseNistAsd(text, 'x.txt', { spectrum: 'Ne I', missingIntensity: 'zero' });
    expect(r.lines.find((l) => l.wavelengthNm === 530.4)?.intensity).toBe(0);
  });
  it('converts Å to nm and vacuum to standard air (IAU formula), with a warning', () => {
    const r = parseNistAsd(asciiExport([row('5001.000', '5001.000', '10')], 'Vac  (Å)'), 'x.txt', { spectrum: 'Ne I' });
    expect(Math.abs(r.lines[0].wavelengthNm - 500.1 / 1.000278)).toBeLessThanOrEqual(0.001);
    expect(r.warnings.join(' ')).toMatch(/vacuum/);
  });
  it('names the file and line of a garbage row (InputError), or skips it with a warning', () => {
    const bad = asciiExport([row('500.1000', '500.1002', '10'), row('5OO.2', '500.2', '10'), row('500.3', '500.3', 'bright!')]);
    expect(() => parseNistAsd(bad, 'my-lines.txt', { spectrum: 'Ne I' })).toThrow(InputError);
    expect(() => parseNistAsd(bad, 'my-lines.txt', { spectrum: 'Ne I' })).toThrow(/my-lines\.txt: line 8: expected a wavelength in column "Observed Wavelength Air \(nm\)", got "5OO\.2"/);
    const r = parseNistAsd(bad, 'my-lines.txt', { spectrum: 'Ne I', onBadRow: 'skip' });
    expect(r.lines).toHaveLength(1);
    expect(r.warnings.filter((w) => /row skipped/.test(w))).toHaveLength(2);
    expect(r.warnings[1]).toMatch(/line 9: expected a relative intensity/);
  });
  it('reads a Spectrum column (several spectra in one export)', () => {
    const rule = '-'.repeat(80);
    const multi = [
      rule,
      ' Spectrum |      Observed  |        Ritz    |  Rel. |',
      '          |     Wavelength |     Wavelength |  Int. |',
      '          |      Air (nm)  |      Air (nm)  |  (?)  |',
      rule,
      '    Ne I  |      585.2488  |      585.2488  | 20000 |',
      '    Ar II |      487.9864  |      487.9864  |  800  |',
    ].join('\n');
    const r = parseNistAsd(multi, 'both.txt');
    expect(r.lines.map((l) => l.spectrum)).toEqual(['Ar II', 'Ne I']);
  });
  it('reads an export trimmed of its rules, and rejects a stray text line in the table', () => {
    const trimmed = [
      '      Observed  |        Ritz    |  Rel. |',
      '     Wavelength |     Wavelength |  Int. |',
      '      Air (nm)  |      Air (nm)  |       |',
      '      585.2488  |      585.2488  | 20000 |',
      '      640.2248  |      640.2248  | 20000 |',
    ].join('\n');
    expect(parseNistAsd(trimmed, 'NeI.txt').lines.map((l) => l.wavelengthNm)).toEqual([585.2488, 640.2248]);
    expect(() => parseNistAsd(trimmed + '\nsee page 2', 'NeI.txt')).toThrow(/NeI\.txt: line 6: expected a row of '\|'-separated cells, got "see page 2"/);
  });
  it('asks for the spectrum when neither the table nor the file name gives it', () => {
    expect(() => parseNistAsd(text, 'lines.txt')).toThrow(/names no spectrum/);
  });
  it('refuses text that is not an ASD export', () => {
    expect(() => parseNistAsd('hello\nworld\n', 'notes.txt')).toThrow(/not a NIST ASD line export/);
  });
});

describe('parseNistAsd: CSV and tab-delimited outputs', () => {
  // Column names and the ="…" cell wrapping as the ASD writes its CSV/tab outputs; made-up numbers.
  const header = ['element', 'sp_num', 'obs_wl_air(nm)', 'unc_obs_wl', 'ritz_wl_air(nm)', 'unc_ritz_wl', 'intens', 'Aki(s^-1)', 'Acc'];
  const rows = [
    ['Ne', '1', '="585.24879"', '="0.00002"', '="585.24878"', '="0.00001"', '="20000"', '="6.82e+07"', '="AA"'],
    ['Ne', '1', '=""', '=""', '="590.1000"', '="0.001"', '="500h"', '=""', '=""'],
    ['Ar', '2', '="487.98634"', '=""', '="487.98640"', '=""', '="(800)"', '=""', '=""'],
  ];
  it('reads the CSV output with element and sp_num columns', () => {
    const csv = [header, ...rows].map((r) => r.join(',')).join('\n');
    const r = parseNistAsd(csv, 'asd.csv');
    expect(r.format).toBe('nist-asd-csv');
    expect(r.lines.map((l) => [l.spectrum, l.wavelengthNm, l.intensity])).toEqual([
      ['Ar II', 487.98634, 800],
      ['Ne I', 585.24879, 20000],
      ['Ne I', 590.1, 500],
    ]);
  });
  it('reads the tab-delimited output the same way', () => {
    const tab = [header, ...rows].map((r) => r.join('\t')).join('\n');
    const r = parseNistAsd(tab, 'asd.tsv');
    expect(r.format).toBe('nist-asd-tab');
    expect(r.lines).toHaveLength(3);
  });
  it('names the line of a garbage CSV row', () => {
    const csv = [header, rows[0], ['Ne', '1', '="abc"', '', '', '', '="10"', '', '']].map((r) => r.join(',')).join('\n');
    expect(() => parseNistAsd(csv, 'asd.csv')).toThrow(/asd\.csv: line 3: expected a wavelength in column "obs_wl_air\(nm\)", got "abc"/);
  });
});
