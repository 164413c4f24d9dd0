import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import type { BatchItem } from '../../src/tasks/batch/pool.js';
import { batchSummaryCsv } from '../../src/tasks/batch/summary.js';

// The identify summary names the present species as the report's verdict does: most of the line flux first (the gas
// that fills the tube), then by score. An argon-mercury tube where both species score 1: mercury gives 54 % of the
// flux, argon 46 % (demo tube B's shares); a trace of neon scores lower.
const item = (species: Array<{ element: string; present: boolean; score: number; fluxFraction: number }>): BatchItem => ({
  index: 0,
  file: 'tube.jpg',
  status: 'ok',
  result: { json: { command: 'identify', species, peaks: [] }, text: '', warnings: [] },
});

describe('batchSummaryCsv("identify", items)', () => {
  it('lists the present species most flux first, then by score, and names the one with most flux as top_species', () => {
    const csv = batchSummaryCsv('identify', [
      item([
        { element: 'Ar', present: true, score: 1, fluxFraction: 0.46 },
        { element: 'Hg', present: true, score: 1, fluxFraction: 0.54 },
        { element: 'Ne', present: true, score: 0.7, fluxFraction: 0 },
        { element: 'Kr', present: false, score: 0.1, fluxFraction: 0 },
      ]),
    ]);
    const [row] = parse(csv, { columns: true }) as Array<Record<string, string>>;
    expect(row.species_present).toBe('Hg + Ar + Ne');
    expect(row.top_species).toBe('Hg');
    expect(Number(row.top_species_score)).toBe(1);
  });
});
