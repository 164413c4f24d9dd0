import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../../src/core/errors.js';
import { createRandom } from '../../src/core/random.js';
import { findPeaks, peaksToWavelength } from '../../src/core/spectrum/peaks/index.js';
import { parseSpectrumCsv } from '../../src/core/spectrum/spectrumCsv.js';
import { readSpectrumCsv } from '../../src/io/readSpectrumCsv.js';

const opts = { source: 'tube.csv' };
const arr = (a: ArrayLike<number> | undefined) => (a ? Array.from(a) : a);
const rowsOf = (xs: number[], ys: number[], sep = ',') => xs.map((x, i) => `${x}${sep}${ys[i]}`).join('\n');
const xs5 = [0, 1, 2, 3, 4];
const ys5 = [10, 12, 30, 12, 10];

/** Which message a parse throws (an InputError is required). */
function failure(text: string): string {
  try {
    parseSpectrumCsv(text, opts);
  } catch (e) {
    expect(e).toBeInstanceOf(InputError);
    return (e as Error).message;
  }
  throw new Error('expected an InputError');
}

describe('parseSpectrumCsv(text, {source})', () => {
  it('reads pixel,intensity with comments into positionPx and intensity', () => {
    const t = parseSpectrumCsv(`# exported from the bench camera\npixel,intensity\n${rowsOf([100, 101, 102, 103, 104], ys5)}\n`, opts);
    expect(t.axis).toBe('pixel');
    expect(arr(t.spectrum.positionPx)).toEqual([100, 101, 102, 103, 104]);
    expect(arr(t.spectrum.intensity)).toEqual(ys5);
    expect(t.spectrum.wavelengthNm).toBeUndefined();
    expect(t.columns).toEqual({ pixel: 'pixel', wavelength: null, intensity: 'intensity', uncertainty: null });
    expect(t.metadata).toEqual(['# exported from the bench camera']);
  });

  it('reads wavelength headers in their usual spellings into wavelengthNm, with the sample index as position', () => {
    for (const header of ['wavelength_nm,intensity', 'Wavelength (nm),Counts', 'lambda_nm;counts', '"Wavelength [nm]"\t"Intensity (a.u.)"', 'nm,signal']) {
      const sep = header.includes(';') ? ';' : header.includes('\t') ? '\t' : ',';
      const t = parseSpectrumCsv(`${header}\n${rowsOf([500, 500.5, 501, 501.5, 502], ys5, sep)}`, opts);
      expect(t.axis).toBe('wavelength');
      expect(arr(t.spectrum.wavelengthNm)).toEqual([500, 500.5, 501, 501.5, 502]);
      expect(arr(t.spectrum.positionPx)).toEqual(xs5);
      expect(arr(t.spectrum.intensity)).toEqual(ys5);
    }
  });

  it('converts Å and µm wavelength columns to nm', () => {
    const a = parseSpectrumCsv(`wavelength (Å),intensity\n${rowsOf([5000, 5001, 5002, 5003, 5004], ys5)}`, opts);
    expect(arr(a.spectrum.wavelengthNm)).toEqual([500, 500.1, 500.2, 500.3, 500.4].map((v, i) => (5000 + i) * 0.1));
    const u = parseSpectrumCsv(`wavelength_um,intensity\n${rowsOf([0.5, 0.501, 0.502, 0.503, 0.504], ys5)}`, opts);
    expect(Math.abs(u.spectrum.wavelengthNm![1] - 501)).toBeLessThanOrEqual(1e-9);
    expect(u.warnings).toEqual([]);
  });

  it('reads a file without header as position, intensity[, uncertainty], and a single column as intensities', () => {
    const two = parseSpectrumCsv(rowsOf(xs5, ys5, ' '), opts);
    expect(two.axis).toBe('pixel');
    expect(arr(two.spectrum.positionPx)).toEqual(xs5);
    expect(two.columns.intensity).toBeNull();
    const three = parseSpectrumCsv(xs5.map((x, i) => `${x},${ys5[i]},0.5`).join('\n'), opts);
    expect(arr(three.spectrum.variance)).toEqual([0.25, 0.25, 0.25, 0.25, 0.25]);
    const one = parseSpectrumCsv(ys5.join('\n'), opts);
    expect(arr(one.spectrum.positionPx)).toEqual(xs5);
    expect(arr(one.spectrum.intensity)).toEqual(ys5);
  });

  it('reads an uncertainty column by name as variance, and a pixel column beside a wavelength column', () => {
    const t = parseSpectrumCsv(
      ['pixel,wavelength_nm,counts,sigma', ...xs5.map((x, i) => `${200 + x},${600 + 0.3 * x},${ys5[i]},${1 + x}`)].join('\n'),
      opts,
    );
    expect(t.axis).toBe('pixel');
    expect(arr(t.spectrum.positionPx)).toEqual([200, 201, 202, 203, 204]);
    expect(t.spectrum.wavelengthNm!.length).toBe(5);
    expect(arr(t.spectrum.variance)).toEqual([1, 4, 9, 16, 25]);
    expect(t.columns).toEqual({ pixel: 'pixel', wavelength: 'wavelength_nm', intensity: 'counts', uncertainty: 'sigma' });
  });

  it('reverses a file in descending order and says so', () => {
    const t = parseSpectrumCsv(`wavelength_nm,intensity\n${rowsOf([704, 703, 702, 701, 700], ys5.map((v, i) => v + i))}`, opts);
    expect(t.reversed).toBe(true);
    expect(arr(t.spectrum.wavelengthNm)).toEqual([700, 701, 702, 703, 704]);
    expect(arr(t.spectrum.intensity)).toEqual([14, 15, 32, 13, 10]);
  });

  it('warns when a headerless first column looks like wavelengths, and when wavelengths are not plausibly nm', () => {
    expect(parseSpectrumCsv(rowsOf([500.1, 500.3, 500.5, 500.7, 500.9], ys5), opts).warnings[0]).toMatch(/looks like wavelengths/);
    expect(parseSpectrumCsv(`wavelength,intensity\n${rowsOf([5000.5, 5001, 5002, 5003, 5004], ys5)}`, opts).warnings[0]).toMatch(/name the unit/);
  });

  it('rejects short, unordered, repeated, non-finite and badly uncertain input with the file and line named', () => {
    expect(failure('pixel,intensity\n0,1\n1,2\n2,3\n')).toBe('tube.csv: 3 data rows; a spectrum needs at least 5');
    expect(failure(`pixel,intensity\n${rowsOf([0, 1, 2, 1.5, 4], ys5)}`)).toMatch(/^tube\.csv, line 5: pixel goes back to 1\.5 after 2 on line 4/);
    expect(failure(`pixel,intensity\n${rowsOf([0, 1, 2, 2, 4], ys5)}`)).toMatch(/^tube\.csv, line 5: pixel repeats 2 after 2 on line 4/);
    expect(failure(`pixel,intensity\n0,1\n1,2\n2,inf\n3,1\n4,1`)).toMatch(/^tube\.csv, line 4, column 2 \(intensity\): expected a finite number, got Infinity/);
    expect(failure(`pixel,intensity\n0,1\n1,2\n2,NaN\n3,1\n4,1`)).toMatch(/^tube\.csv, line 4, column 2 \(intensity\): expected a number, got "NaN"/);
    expect(failure(`pixel,intensity,uncertainty\n0,1,1\n1,2,1\n2,3,-0.5\n3,1,1\n4,1,1`)).toMatch(
      /^tube\.csv, line 4, column 3 \(uncertainty\): expected a positive uncertainty, got -0\.5/,
    );
    expect(failure('1,2,3,4\n5,6,7,8\n')).toMatch(/4 columns and no header/);
    expect(failure('pixel,wavelength_nm,intensity\n0,500,1\n1,501,1\n2,500.5,1\n3,502,1\n4,503,1')).toMatch(/line 4: wavelength_nm 500\.5 breaks the order/);
  });

  it('feeds findPeaks and peaksToWavelength end to end on a seeded wavelength CSV', () => {
    const rng = createRandom(8);
    const linesNm = [585.249, 614.306, 630.479];
    const rows = ['Wavelength (nm),Counts'];
    for (let i = 0; i < 800; i++) {
      const wl = 560 + 0.1 * i;
      const v = 100 + linesNm.reduce((s, c) => s + 2000 * Math.exp(-0.5 * ((wl - c) / 0.25) ** 2), 0);
      rows.push(`${wl.toFixed(2)},${rng.poisson(v)}`);
    }
    const t = parseSpectrumCsv(rows.join('\n'), opts);
    const peaks = peaksToWavelength(findPeaks(t.spectrum), t.spectrum);
    expect(peaks.length).toBe(3);
    peaks.forEach((p, k) => expect(Math.abs(p.wavelengthNm - linesNm[k])).toBeLessThanOrEqual(Math.max(3 * p.wavelengthUncertaintyNm, 0.01)));
  });
});

describe('readSpectrumCsv(file)', () => {
  const dir = mkdtempSync(path.join(os.tmpdir(), 'glowprint-csv-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('reads a file and names it in messages', async () => {
    const file = path.join(dir, 'lamp.csv');
    writeFileSync(file, `pixel,intensity\n${rowsOf(xs5, ys5)}\n`);
    const t = await readSpectrumCsv(file);
    expect(arr(t.spectrum.intensity)).toEqual(ys5);
    const short = path.join(dir, 'short.csv');
    writeFileSync(short, 'pixel,intensity\n0,1\n1,2\n');
    await expect(readSpectrumCsv(short)).rejects.toThrow(`${short}: 2 data rows`);
  });

  it('reports a missing file as an InputError', async () => {
    const missing = path.join(dir, 'nope.csv');
    await expect(readSpectrumCsv(missing)).rejects.toBeInstanceOf(InputError);
    await expect(readSpectrumCsv(missing)).rejects.toThrow(`${missing}: no such file`);
  });
});
