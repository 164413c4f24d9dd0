import { describe, expect, it } from 'vitest';
import { InputError } from '../../../src/core/errors.js';
import { parseLineTable, parseSpectrumName, selectLines } from '../../../src/core/lines/index.js';

describe('parseSpectrumName(text)', () => {
  it("reads 'Ne I', 'Ar II', 'NeI', 'HgII', 'hg 2', 'He' and keeps 'Ni' as nickel", () => {
    expect(parseSpectrumName('Ne I')).toEqual({ element: 'Ne', ionStage: 1, spectrum: 'Ne I' });
    expect(parseSpectrumName('Ar II').spectrum).toBe('Ar II');
    expect(parseSpectrumName('NeI').spectrum).toBe('Ne I');
    expect(parseSpectrumName('HgII').spectrum).toBe('Hg II');
    expect(parseSpectrumName('hg 2').spectrum).toBe('Hg II');
    expect(parseSpectrumName('He').spectrum).toBe('He I');
    expect(parseSpectrumName('Ni').spectrum).toBe('Ni I');
    expect(parseSpectrumName('NI').spectrum).toBe('N I');
  });
  it('refuses non-elements with a message naming the input', () => {
    expect(() => parseSpectrumName('Qx I')).toThrow(/spectrum: expected a spectrum such as 'Ne I' or 'Ar II', got "Qx I"/);
  });
});

describe('parseLineTable(text, {source, spectrum?, onBadRow?})', () => {
  it('reads the project format with flags, source and note columns', () => {
    const text = [
      '# comment',
      'wavelength_nm\tintensity\tspectrum\tflags\tsource\tnote',
      '585.249\t20000\tNe I\tPS\tNIST ASD\tyellow',
      '594.483\t5000\tNe I\t\tNIST ASD\t',
      '391.44\t100\tN2+ 1st negative\tM\tfrom memory\tband (0,0)',
    ].join('\n');
    const { lines, format } = parseLineTable(text, { source: 'Ne.tsv' });
    expect(format).toBe('line-table');
    expect(lines[0]).toMatchObject({ wavelengthNm: 585.249, intensity: 20000, element: 'Ne', ionStage: 1, persistent: true, strong: true, note: 'yellow', kind: 'atomic' });
    expect(lines[1]).toMatchObject({ persistent: false, strong: false, source: 'NIST ASD' });
    expect(lines[2]).toMatchObject({ kind: 'band-head', element: 'N2', spectrum: 'N2+ 1st negative' });
  });
  it('reads a plain CSV wavelength_nm,intensity,spectrum (comma or semicolon)', () => {
    const r = parseLineTable('wavelength_nm,intensity,spectrum\n640.225,20000,Ne I\n404.656,1800,Hg I\n', { source: 'mine.csv' });
    expect(r.lines.map((l) => l.spectrum)).toEqual(['Ne I', 'Hg I']);
    expect(parseLineTable('wavelength_nm;intensity;spectrum\n640.225;20000;Ne I\n', { source: 'x.csv' }).lines).toHaveLength(1);
  });
  it('reads element + ion columns, Å headers, and a header-less table with a given spectrum', () => {
    const r = parseLineTable('element\tion\twavelength_air_nm\trel_intensity\nAr\tII\t487.986\t800\n', { source: 'x.tsv' });
    expect(r.lines[0]).toMatchObject({ spectrum: 'Ar II', wavelengthNm: 487.986 });
    const a = parseLineTable('wavelength (Å),intensity\n5852.49,100\n', { source: 'x.csv', spectrum: 'Ne I' });
    expect(Math.abs(a.lines[0].wavelengthNm - 585.249)).toBeLessThanOrEqual(1e-9);
    const b = parseLineTable('585.249, 100\n640.225, 200\n', { source: 'x.csv', spectrum: 'Ne I' });
    expect(b.lines.map((l) => l.wavelengthNm)).toEqual([585.249, 640.225]);
  });
  it('converts a vacuum column to standard air with a warning', () => {
    const r = parseLineTable('wavelength_vac_nm,intensity,spectrum\n632.9908,1,Ne I\n', { source: 'v.csv' });
    expect(Math.abs(r.lines[0].wavelengthNm - 632.816)).toBeLessThanOrEqual(0.0005);
    expect(r.warnings[0]).toMatch(/vacuum/);
  });
  it('names the file and line of a garbage row, or skips it with a warning', () => {
    const text = 'wavelength_nm,intensity,spectrum\n640.225,20000,Ne I\n# note\nsix hundred,1,Ne I\n650.653,lots,Ne I\n';
    expect(() => parseLineTable(text, { source: 'bad.csv' })).toThrow(InputError);
    expect(() => parseLineTable(text, { source: 'bad.csv' })).toThrow(/^bad\.csv: line 4: expected a wavelength in nm, got "six hundred"$/);
    const r = parseLineTable(text, { source: 'bad.csv', onBadRow: 'skip' });
    expect(r.lines).toHaveLength(1);
    expect(r.warnings).toEqual([
      'bad.csv: line 4: expected a wavelength in nm, got "six hundred" (row skipped)',
      'bad.csv: line 5: expected a relative intensity (a number ≥ 0), got "lots" (row skipped)',
    ]);
  });
  it('asks for a spectrum when the table has none, and for a wavelength column', () => {
    expect(() => parseLineTable('wavelength_nm,intensity\n500,1\n', { source: 'x.csv' })).toThrow(/no spectrum column/);
    expect(() => parseLineTable('a,b,c\n1,2,Ne I\n', { source: 'x.csv' })).toThrow(/expected a header with a wavelength column/);
    expect(() => parseLineTable('# only comments\n', { source: 'x.csv' })).toThrow(/x\.csv: no line rows/);
  });
});

describe('selectLines(lines, {elements, spectra, rangeNm, strongOnly, minRelativeIntensity})', () => {
  const { lines } = parseLineTable(
    'wavelength_nm,intensity,spectrum,flags\n404.656,1800,Hg I,PS\n407.784,150,Hg I,\n585.249,20000,Ne I,PS\n487.986,800,Ar II,S\n',
    { source: 'x.csv' },
  );
  it('filters by element, spectrum, range and flags, sorted by wavelength', () => {
    expect(selectLines(lines, { elements: ['hg'] }).map((l) => l.wavelengthNm)).toEqual([404.656, 407.784]);
    expect(selectLines(lines, { spectra: ['Ar II'] })).toHaveLength(1);
    expect(selectLines(lines, { rangeNm: [400, 500] }).map((l) => l.wavelengthNm)).toEqual([404.656, 407.784, 487.986]);
    expect(selectLines(lines, { strongOnly: true })).toHaveLength(3);
    expect(selectLines(lines, { minRelativeIntensity: 0.5 }).map((l) => l.wavelengthNm)).toEqual([404.656, 487.986, 585.249]);
  });
  it('refuses an unknown element', () => {
    expect(() => selectLines(lines, { elements: ['Xy'] })).toThrow(/elements: expected element symbols/);
  });
});
