import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { parseAnalyserProfile, readAnalyserProfile, writeAnalyserProfile } from '../../../src/io/analyserProfile.js';

const tmp = mkdtempSync(path.join(os.tmpdir(), 'glowprint-analyser-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

describe('analyser profile file', () => {
  it('round-trips through writeAnalyserProfile / readAnalyserProfile', async () => {
    const file = path.join(tmp, 'a.json');
    const profile = { name: 'sheet polarizer A', offsetDeg: 3.5, offsetUncertaintyDeg: 0.2, extinctionRatio: 300, calibration: { referenceAzimuthDeg: 0, inputs: ['glare.csv'] } };
    await writeAnalyserProfile(file, profile);
    const json = JSON.parse(readFileSync(file, 'utf8'));
    expect(json).toMatchObject({ format: 'glowprint-analyser-profile', version: 1, offset_deg: 3.5, extinction_ratio: 300 });
    expect(await readAnalyserProfile(file)).toEqual(profile);
  });
  it('names the problem: unknown field, missing offset, out-of-range or mistyped value, not JSON', async () => {
    const base = { format: 'glowprint-analyser-profile', version: 1, offset_deg: 1, offset_uncertainty_deg: 0.1 };
    expect(() => parseAnalyserProfile({ ...base, extinction: 100 }, 'p.json')).toThrow(/^p\.json: not a usable analyser profile: unknown field "extinction"$/);
    const { offset_deg: _drop, ...missing } = base;
    expect(() => parseAnalyserProfile(missing, 'p.json')).toThrow(/: missing field "offset_deg"$/);
    expect(() => parseAnalyserProfile({ ...base, offset_deg: 120 }, 'p.json')).toThrow(/: offset_deg: expected a number ≤ 90, got 120$/);
    expect(() => parseAnalyserProfile({ ...base, offset_deg: 'abc' }, 'p.json')).toThrow(/: offset_deg: expected a number, got "abc"$/);
    expect(() => parseAnalyserProfile({ ...base, calibration: { inputs: [1] } }, 'p.json')).toThrow(/: calibration\.inputs\[0\]: expected a string, got 1$/);
    expect(() => parseAnalyserProfile({ ...base, extinction_ratio: 1 }, 'p.json')).toThrow(/: extinction_ratio: expected a number > 1, got 1$/);
    const bad = path.join(tmp, 'bad.json');
    writeFileSync(bad, '{ offset_deg: 1 ');
    await expect(readAnalyserProfile(bad)).rejects.toThrow(/bad\.json: not valid JSON/);
  });
  it('refuses to write over an input', async () => {
    const file = path.join(tmp, 'in.csv');
    writeFileSync(file, 'angle_deg,intensity\n');
    await expect(writeAnalyserProfile(file, { offsetDeg: 0, offsetUncertaintyDeg: 0 }, [file])).rejects.toThrow(/refusing to write over an input file/);
    expect(readFileSync(file, 'utf8')).toBe('angle_deg,intensity\n');
  });
});
