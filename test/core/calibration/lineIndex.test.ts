import { describe, expect, it } from 'vitest';
import { LineIndex, lowerBound, nearest } from '../../../src/core/calibration/match/context.js';
import { createRandom } from '../../../src/core/random.js';

describe('LineIndex(lw): constant-time lookups in a sorted wavelength list', () => {
  it('gives the binary search’s lowerBound and nearest for every query, ties and edges included', () => {
    const rng = createRandom(11);
    for (const n of [1, 2, 5, 60, 400]) {
      // Clustered lines with exact duplicates, as a merged lamp list has.
      const values = Array.from({ length: n }, () => 350 + (rng.uniform() < 0.3 ? Math.round(rng.uniform() * 20) : rng.uniform() * 700));
      values.push(...values.slice(0, Math.floor(n / 10)));
      const lw = Float64Array.from(values.sort((a, b) => a - b));
      const index = new LineIndex(lw);
      const queries = [-Infinity, 0, lw[0], lw[lw.length - 1], 1e6, Infinity, ...Array.from(lw), ...Array.from({ length: 500 }, () => 300 + 800 * rng.uniform())];
      // Midpoints between neighbours: ties go to the shorter wavelength.
      for (let i = 1; i < lw.length; i++) queries.push((lw[i - 1] + lw[i]) / 2);
      for (const v of queries) {
        expect(index.lowerBound(v), `lowerBound ${v} of ${n}`).toBe(lowerBound(lw, v));
        expect(index.nearest(v), `nearest ${v} of ${n}`).toBe(nearest(lw, v));
      }
    }
    expect(new LineIndex(new Float64Array(0)).nearest(500)).toBe(-1);
  });
});
