import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { angleFromFileName, parseAngleList, resolveAngles } from '../../../src/io/photoSeries.js';

const tmp = mkdtempSync(path.join(os.tmpdir(), 'glowprint-angles-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

describe('angleFromFileName(file)', () => {
  it('prefers a number marked as degrees, else takes the last number', () => {
    expect(angleFromFileName('spot_045deg.jpg')).toBe(45);
    expect(angleFromFileName('photos/laser-b 22.5°.png')).toBe(22.5);
    expect(angleFromFileName('run2_pol 90 deg.jpeg')).toBe(90);
    expect(angleFromFileName('hene_b_135.jpg')).toBe(135);
    expect(angleFromFileName('spot-30.jpg')).toBe(30);
    expect(angleFromFileName('spot_-30.jpg')).toBe(-30);
    expect(angleFromFileName('pol_22,5.jpg')).toBe(22.5);
    expect(angleFromFileName('no-angle-here.jpg')).toBeNull();
  });
});

describe('parseAngleList(text)', () => {
  it('reads lists and start:step:end ranges (end included)', () => {
    expect(parseAngleList('0,15, 30 45;60')).toEqual([0, 15, 30, 45, 60]);
    expect(parseAngleList('0:15:180')).toHaveLength(13);
    expect(parseAngleList('0:22.5:90')).toEqual([0, 22.5, 45, 67.5, 90]);
    expect(() => parseAngleList('0,ten,20')).toThrow(/--angles: expected angles in degrees, got "ten"/);
    expect(() => parseAngleList('0:0:180')).toThrow(/not a usable start:step:end range/);
  });
});

describe('resolveAngles(files, spec)', () => {
  const files = ['a.jpg', 'b.jpg', 'c.jpg', 'd.jpg'];
  it('takes --angles, --start/--step, or the file names, and refuses mismatched counts', async () => {
    expect((await resolveAngles(files, { angles: '0,45,90,135' })).anglesDeg).toEqual([0, 45, 90, 135]);
    expect((await resolveAngles(files, { startDeg: 10, stepDeg: 15 })).anglesDeg).toEqual([10, 25, 40, 55]);
    await expect(resolveAngles(files, { angles: '0,45,90' })).rejects.toThrow(/^--angles: 3 angles for 4 images; give one angle per image/);
    await expect(resolveAngles(files, { startDeg: 0 })).rejects.toThrow(/give both the first angle and the step/);
    await expect(resolveAngles(files, { angles: '0', startDeg: 0, stepDeg: 1 })).rejects.toThrow(/give only one of/);
    await expect(resolveAngles(['IMG_1234.JPG'], {})).rejects.toThrow(/IMG_1234\.JPG: no analyser angle in the file name \(1234 is not an angle/);
    const counters = await resolveAngles(['f1.jpg', 'f2.jpg', 'f3.jpg', 'f4.jpg'], {});
    expect(counters.warnings[0]).toMatch(/consecutive integers/);
  });
  it('uses a sidecar angles.csv beside the photos (file,angle_deg)', async () => {
    const names = ['x.jpg', 'y.jpg', 'z.jpg'].map((n) => path.join(tmp, n));
    writeFileSync(path.join(tmp, 'angles.csv'), 'file,angle_deg\nz.jpg,90\nx.jpg,0\ny.jpg,45\n');
    const r = await resolveAngles(names, {});
    expect(r.source).toBe('sidecar');
    expect(r.anglesDeg).toEqual([0, 45, 90]);
    writeFileSync(path.join(tmp, 'bad.csv'), 'file,angle_deg\nx.jpg,0\ny.jpg,north\n');
    await expect(resolveAngles(names, { anglesCsv: path.join(tmp, 'bad.csv') })).rejects.toThrow(/bad\.csv, line 3: expected a file name and an angle/);
    writeFileSync(path.join(tmp, 'short.csv'), 'file,angle_deg\nx.jpg,0\n');
    await expect(resolveAngles(names, { anglesCsv: path.join(tmp, 'short.csv') })).rejects.toThrow(/short\.csv: has no angle for y\.jpg/);
  });
});
