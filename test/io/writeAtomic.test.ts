import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { writeFileAtomic } from '../../src/io/writeAtomic.js';

describe('writeFileAtomic(target, data, {inputs})', () => {
  it('replaces the target whole and leaves no temporary file', async () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'gp-atomic-'));
    const target = path.join(dir, 'out', 'result.json');
    await writeFileAtomic(target, 'one');
    await writeFileAtomic(target, 'two');
    expect(readFileSync(target, 'utf8')).toBe('two');
    expect(readdirSync(path.dirname(target))).toEqual(['result.json']);
  });
  it('refuses to write over an input file and leaves it untouched', async () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'gp-atomic-'));
    const input = path.join(dir, 'photo.csv');
    writeFileSync(input, 'precious');
    await expect(writeFileAtomic(path.join(dir, '.', 'photo.csv'), 'x', { inputs: [input] })).rejects.toThrow(/refusing to write over an input/);
    expect(readFileSync(input, 'utf8')).toBe('precious');
  });
});
