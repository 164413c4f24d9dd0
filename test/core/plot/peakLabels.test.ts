import { describe, expect, it } from 'vitest';
import { arrangePeakLabels, placePeakLabels, spreadPositions } from '../../../src/core/plot/peakLabels.js';
import { createRandom } from '../../../src/core/random.js';

const cost = (p: readonly number[], d: readonly number[]) => p.reduce((s, v, i) => s + (v - d[i]) ** 2, 0);

describe('spreadPositions(desired, spacing, lo, hi)', () => {
  it('leaves positions that are far enough apart where they are', () => {
    expect(spreadPositions([10, 30, 50], 11, 0, 100)).toEqual([10, 30, 50]);
  });

  it('spreads two labels at one place symmetrically about it, and a crowd of three about its mean', () => {
    expect(spreadPositions([50, 50], 10, 0, 100)).toEqual([45, 55]);
    const p = spreadPositions([49, 50, 51], 10, 0, 100);
    expect(p.map((v) => Math.round(v * 1e9) / 1e9)).toEqual([40, 50, 60]);
  });

  it('keeps within the bounds: a crowd at the right edge is packed leftwards from it', () => {
    expect(spreadPositions([98, 99, 100], 10, 0, 100)).toEqual([80, 90, 100]);
    expect(spreadPositions([0, 0], 10, 5, 100)).toEqual([5, 15]);
  });

  it('is the least-squares placement: no feasible point of a fine grid does better (3 labels, 200 random cases)', () => {
    // Independent check by exhaustive search over a 0.1-px grid of the feasible set (the problem is convex).
    const rng = createRandom(5);
    for (let c = 0; c < 200; c++) {
      const d = [rng.uniform() * 20, rng.uniform() * 20, rng.uniform() * 20].sort((a, b) => a - b);
      const s = 3 + rng.uniform() * 4;
      const lo = 0;
      const hi = 20;
      const p = spreadPositions(d, s, lo, hi);
      for (let i = 1; i < 3; i++) expect(p[i] - p[i - 1]).toBeGreaterThanOrEqual(s - 1e-9);
      expect(p[0]).toBeGreaterThanOrEqual(lo - 1e-9);
      expect(p[2]).toBeLessThanOrEqual(hi + 1e-9);
      let best = Infinity;
      for (let a = lo; a <= hi; a += 0.1) {
        for (let b = a + s; b <= hi; b += 0.1) {
          for (let e = b + s; e <= hi; e += 0.1) best = Math.min(best, cost([a, b, e], d));
        }
      }
      expect(cost(p, d)).toBeLessThanOrEqual(best + 1e-9);
      // The grid comes within its own step of the optimum (each coordinate within 0.1 px): the search is no empty check.
      expect(best).toBeLessThanOrEqual(cost(p, d) + p.reduce((t, v, i) => t + 0.2 * Math.abs(v - d[i]) + 0.01, 0));
    }
  });

  it('rejects unsorted positions', () => {
    expect(() => spreadPositions([2, 1], 1, 0, 10)).toThrow(/sorted ascending/);
  });
});

describe('arrangePeakLabels + placePeakLabels', () => {
  const requests = [60, 62, 64, 66, 200].map((xPx, k) => ({ xPx, text: `Ne I 6${k}0.0`, fontPx: 9 }));
  const arrangement = arrangePeakLabels(requests, 300);
  const tops = [100, 40, 120, 110, 150];
  // A trace whose highest point over a span is its highest listed peak inside it (y downwards: the smallest y).
  const ceiling = (a: number, b: number) => Math.min(300, ...requests.map((r, i) => (r.xPx >= a && r.xPx <= b ? tops[i] : 300)));
  const placed = placePeakLabels(requests, arrangement, tops, ceiling);

  it('groups the four close peaks into one crowd and leaves the far one alone, on its peak without a leader', () => {
    expect(arrangement.crowds.map((c) => c.members.length)).toEqual([4, 1]);
    expect(placed[4].xPx).toBe(200);
    expect(placed[4].leader).toEqual([]);
    expect(placed[4].startYPx).toBeLessThan(150 - 10);
  });

  it('gives a crowd one baseline above its highest peak and marker, with leaders in the peaks order', () => {
    const crowd = [0, 1, 2, 3].map((i) => placed[i]);
    expect(new Set(crowd.map((p) => p.startYPx)).size).toBe(1);
    expect(crowd[0].startYPx).toBeLessThan(40 - 10);
    for (let k = 1; k < 4; k++) expect(crowd[k].xPx - crowd[k - 1].xPx).toBeGreaterThanOrEqual(1.2 * 9 - 1e-9);
    for (const [k, p] of crowd.entries()) {
      expect(p.leader[0][0]).toBe(requests[k].xPx); // from its own peak
      expect(p.leader.at(-1)![0]).toBe(p.xPx); // to its label
    }
  });
});
