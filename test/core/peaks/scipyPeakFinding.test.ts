import { describe, expect, it } from 'vitest';
import { InputError } from '../../../src/core/errors.js';
import {
  findPeakIndices,
  localMaxima,
  peakProminences,
  peakWidths,
  selectByDistance,
} from '../../../src/core/spectrum/peaks/index.js';

// Every vector in this file is read from scipy's own tests, scipy/signal/tests/test_peak_finding.py (R); the test
// class and method are named beside each check. Values are compared exactly where scipy uses assert_equal and to
// 1e-12 where it uses assert_allclose.
const TOL = 1e-12;
const arr = (a: ArrayLike<number>): number[] => Array.from(a);

describe('localMaxima(x)', () => {
  it('finds flat tops and reports their middle rounded down, with edges (TestLocalMaxima1d.test_flat_maxima)', () => {
    const x = [-1.3, 0, 1, 0, 2, 2, 0, 3, 3, 3, 2.99, 4, 4, 4, 4, -10, -5, -5, -5, -5, -5, -10];
    const m = localMaxima(x);
    expect(arr(m.midpoints)).toEqual([2, 4, 8, 12, 18]);
    expect(arr(m.leftEdges)).toEqual([2, 4, 7, 11, 16]);
    expect(arr(m.rightEdges)).toEqual([2, 5, 9, 14, 20]);
  });

  it('never reports the first or last sample (TestLocalMaxima1d.test_signal_edges)', () => {
    for (const x of [[1, 0, 2], [3, 3, 0, 4, 4], [5, 5, 5, 0, 6, 6, 6]]) expect(localMaxima(x).midpoints.length).toBe(0);
  });

  it('finds every third sample raised on a line and nothing on the line itself (test_simple, test_linear, test_empty)', () => {
    const x = Array.from({ length: 50 }, (_, i) => -10 + (20 * i) / 49 + (i >= 2 && (i - 2) % 3 === 0 ? 1 : 0));
    expect(arr(localMaxima(x).midpoints)).toEqual(Array.from({ length: 16 }, (_, k) => 2 + 3 * k));
    expect(localMaxima(Array.from({ length: 50 }, (_, i) => i)).midpoints.length).toBe(0);
    expect(localMaxima([]).midpoints.length).toBe(0);
  });
});

describe('peakProminences(x, peaks, {wlen})', () => {
  it('measures against the higher of the two bases on a rising baseline (TestPeakProminences.test_basic)', () => {
    const x = [-1, 1.2, 1.2, 1, 3.2, 1.3, 2.88, 2.1];
    const out = peakProminences(x, [1, 2, 4, 6]);
    const lb = [0, 0, 0, 5];
    const rb = [3, 3, 5, 7];
    expect(arr(out.leftBases)).toEqual(lb);
    expect(arr(out.rightBases)).toEqual(rb);
    const want = [1, 2, 4, 6].map((p, i) => x[p] - Math.max(x[lb[i]], x[rb[i]]));
    expect(arr(out.prominences)).toEqual(want);
  });

  it('gives equal peaks the same or their own bases (TestPeakProminences.test_edge_cases)', () => {
    let out = peakProminences([0, 2, 1, 2, 1, 2, 0], [1, 3, 5]);
    expect(arr(out.prominences)).toEqual([2, 2, 2]);
    expect(arr(out.leftBases)).toEqual([0, 0, 0]);
    expect(arr(out.rightBases)).toEqual([6, 6, 6]);
    out = peakProminences([0, 1, 0, 1, 0, 1, 0], [1, 3, 5]);
    expect(arr(out.prominences)).toEqual([1, 1, 1]);
    expect(arr(out.leftBases)).toEqual([0, 2, 4]);
    expect(arr(out.rightBases)).toEqual([2, 4, 6]);
  });

  it('handles a plateau and a lower neighbour (TestPeakProminences.test_non_contiguous)', () => {
    const out = peakProminences([-9, 9, 9, 0, 3, 1], [1, 2, 4]);
    expect(arr(out.prominences)).toEqual([9, 9, 2]);
    expect(arr(out.leftBases)).toEqual([0, 0, 3]);
    expect(arr(out.rightBases)).toEqual([3, 3, 5]);
  });

  it('rounds wlen up and searches ±⌈wlen⌉/2 samples (TestPeakProminences.test_wlen)', () => {
    const x = [0, 1, 2, 3, 1, 0, -1];
    const full = peakProminences(x, [3]);
    expect([full.prominences[0], full.leftBases[0], full.rightBases[0]]).toEqual([3, 0, 6]);
    for (const [wlen, i] of [[8, 0], [7, 0], [6, 0], [5, 1], [3.2, 1], [3, 2], [1.1, 2]]) {
      const out = peakProminences(x, [3], { wlen });
      expect([out.prominences[0], out.leftBases[0], out.rightBases[0]]).toEqual([3 - i, i, 6 - i]);
    }
  });

  it('rejects peak indices outside the signal and wlen ≤ 1 (TestPeakProminences.test_exceptions)', () => {
    for (const p of [-100, -1, 3, 1000]) expect(() => peakProminences([1, 0, 2], [p])).toThrow(InputError);
    expect(() => peakProminences([], [0])).toThrow(/peaks/);
    expect(() => peakProminences([0, 1, 1, 0], [1.1])).toThrow(/indices/);
    expect(() => peakProminences(Array.from({ length: 10 }, (_, i) => i), [3, 5], { wlen: 1 })).toThrow(/wlen/);
  });

  it('gives prominence 0 at the ends and inside a window narrower than a plateau (TestPeakProminences.test_warnings)', () => {
    for (const p of [0, 1, 2]) expect(peakProminences([1, 0, 2], [p]).prominences[0]).toBe(0);
    expect(peakProminences([0, 1, 1, 1, 0], [2], { wlen: 2 }).prominences[0]).toBe(0);
  });
});

describe('peakWidths(x, peaks, {relHeight})', () => {
  it('interpolates the crossings at each relative height (TestPeakWidths.test_basic)', () => {
    const x = [1, 0, 1, 2, 1, 0, -1];
    const cases: Array<[number, number, number, number]> = [
      [0, 0, 3, 3],
      [0.25, 1, 2.5, 3.5],
      [0.5, 2, 2, 4],
      [0.75, 3, 1.5, 4.5],
      [1, 4, 1, 5],
      [2, 5, 1, 6],
      [3, 5, 1, 6],
    ];
    for (const [relHeight, width, left, right] of cases) {
      const w = peakWidths(x, [3], { relHeight });
      expect(Math.abs(w.widths[0] - width)).toBeLessThanOrEqual(TOL);
      expect(Math.abs(w.widthHeights[0] - (2 - relHeight * 2))).toBeLessThanOrEqual(TOL);
      expect(Math.abs(w.leftIps[0] - left)).toBeLessThanOrEqual(TOL);
      expect(Math.abs(w.rightIps[0] - right)).toBeLessThanOrEqual(TOL);
    }
  });

  it('reads [0, 100, 50] at half prominence as 0.75 wide at 75, from 0.75 to 1.5 (TestPeakWidths.test_non_contiguous)', () => {
    const w = peakWidths([0, 100, 50], [1]);
    expect([w.widths[0], w.widthHeights[0], w.leftIps[0], w.rightIps[0]]).toEqual([0.75, 75, 0.75, 1.5]);
  });

  it('counts a sample equal to the evaluation height as the crossing (TestPeakWidths.test_intersection_rules)', () => {
    const x = [0, 1, 2, 1, 3, 3, 3, 1, 2, 1, 0];
    let w = peakWidths(x, [5], { relHeight: 0 });
    expect([w.widths[0], w.widthHeights[0], w.leftIps[0], w.rightIps[0]]).toEqual([0, 3, 5, 5]);
    w = peakWidths(x, [5], { relHeight: 2 / 3 });
    expect(Math.abs(w.widths[0] - 4)).toBeLessThanOrEqual(TOL);
    expect(Math.abs(w.widthHeights[0] - 1)).toBeLessThanOrEqual(TOL);
    expect(Math.abs(w.leftIps[0] - 3)).toBeLessThanOrEqual(TOL);
    expect(Math.abs(w.rightIps[0] - 7)).toBeLessThanOrEqual(TOL);
  });

  it('rejects a negative relHeight and prominence data that does not fit the peaks (TestPeakWidths.test_exceptions, test_mismatching_prominence_data)', () => {
    expect(() => peakWidths([0, 1, 0, 1, 0], [1, 3], { relHeight: -1 })).toThrow(/relHeight/);
    const bad = (p: number[], l: number[], r: number[]) => ({
      prominences: Float64Array.from(p),
      leftBases: Int32Array.from(l),
      rightBases: Int32Array.from(r),
    });
    for (const data of [bad([1], [-1], [2]), bad([1], [0], [3]), bad([1], [2], [0]), bad([1, 1], [0, 0], [2, 2])]) {
      expect(() => peakWidths([0, 1, 0], [1], { prominenceData: data })).toThrow(InputError);
    }
  });
});

describe('findPeakIndices(x, options)', () => {
  it('finds nothing on a constant signal (TestFindPeaks.test_constant)', () => {
    const out = findPeakIndices(new Float64Array(10).fill(1), { height: [null, null], prominence: [null, null], width: [null, null] });
    expect(out.peaks.length).toBe(0);
    expect(out.properties.prominences!.length).toBe(0);
  });

  it('filters by plateau size (TestFindPeaks.test_plateau_size)', () => {
    const sizes = [1, 2, 3, 4, 8, 20, 111];
    const x: number[] = [0];
    for (const s of sizes) x.push(...new Array<number>(s).fill(s), 0);
    const out = findPeakIndices(x, { plateauSize: [null, null] });
    expect(arr(out.peaks)).toEqual([1, 3, 7, 11, 18, 33, 100]);
    expect(arr(out.properties.plateauSizes!)).toEqual(sizes);
    expect(arr(out.properties.leftEdges!)).toEqual(arr(out.peaks).map((p, i) => p - Math.floor((sizes[i] - 1) / 2)));
    expect(arr(out.properties.rightEdges!)).toEqual(arr(out.peaks).map((p, i) => p + Math.floor(sizes[i] / 2)));
    expect(arr(findPeakIndices(x, { plateauSize: 4 }).peaks)).toEqual([11, 18, 33, 100]);
    expect(arr(findPeakIndices(x, { plateauSize: [null, 3.5] }).peaks)).toEqual([1, 3, 7]);
    expect(arr(findPeakIndices(x, { plateauSize: [5, 50] }).peaks)).toEqual([18, 33]);
  });

  it('filters by height (TestFindPeaks.test_height_condition)', () => {
    const x = [0, 1 / 3, 0, 2.5, 0, 4, 0];
    const out = findPeakIndices(x, { height: [null, null] });
    expect(arr(out.peaks)).toEqual([1, 3, 5]);
    expect(arr(out.properties.peakHeights!)).toEqual([1 / 3, 2.5, 4]);
    expect(arr(findPeakIndices(x, { height: 0.5 }).peaks)).toEqual([3, 5]);
    expect(arr(findPeakIndices(x, { height: [null, 3] }).peaks)).toEqual([1, 3]);
    expect(arr(findPeakIndices(x, { height: [2, 3] }).peaks)).toEqual([3]);
  });

  it('find_peaks([0,2,1,4,-1], threshold=1) → [1, 3] (TestFindPeaks.test_threshold_condition)', () => {
    const x = [0, 2, 1, 4, -1];
    const out = findPeakIndices(x, { threshold: 1 });
    expect(arr(out.peaks)).toEqual([1, 3]);
    expect(arr(out.properties.leftThresholds!)).toEqual([2, 3]);
    expect(arr(out.properties.rightThresholds!)).toEqual([1, 5]);
    expect(arr(findPeakIndices(x, { threshold: 2 }).peaks)).toEqual([3]);
    expect(arr(findPeakIndices(x, { threshold: 3.5 }).peaks)).toEqual([]);
    expect(arr(findPeakIndices(x, { threshold: [null, 5] }).peaks)).toEqual([1, 3]);
    expect(arr(findPeakIndices(x, { threshold: [null, 4] }).peaks)).toEqual([1]);
    expect(arr(findPeakIndices(x, { threshold: [2, 4] }).peaks)).toEqual([]);
  });

  it('distance=10 on [-2,1,-1,0,-3] keeps [1]; spacing 3 keeps all, 3.0001 every second (TestFindPeaks.test_distance_condition)', () => {
    const all = Array.from({ length: 7 }, (_, k) => 1 + 3 * k);
    const x = new Float64Array(21);
    all.forEach((p, k) => (x[p] += 1 + k / 6)); // np.linspace(1, 2, 7)
    expect(arr(findPeakIndices(x, { distance: 3 }).peaks)).toEqual(all);
    const subset = arr(findPeakIndices(x, { distance: 3.0001 }).peaks);
    expect(subset.every((p) => all.includes(p))).toBe(true);
    for (let i = 1; i < subset.length; i++) expect(subset[i] - subset[i - 1]).toBe(6);
    expect(arr(findPeakIndices([-2, 1, -1, 0, -3], { distance: 10 }).peaks)).toEqual([1]);
  });

  it('filters by prominence with the bases scipy reports (TestFindPeaks.test_prominence_condition)', () => {
    const x = Array.from({ length: 100 }, (_, i) => (10 * i) / 99);
    const truePeaks = Array.from({ length: 49 }, (_, k) => 1 + 2 * k);
    truePeaks.forEach((p, k) => (x[p] += 1 + (9 * k) / 48)); // np.linspace(1, 10, 49)
    const proms = truePeaks.map((p) => x[p] - x[p + 1]);
    const keep = truePeaks.filter((_, k) => proms[k] >= 3 && proms[k] <= 9);
    const out = findPeakIndices(x, { prominence: [3, 9] });
    expect(arr(out.peaks)).toEqual(keep);
    expect(arr(out.properties.prominences!)).toEqual(truePeaks.map((_, k) => proms[k]).filter((v) => v >= 3 && v <= 9));
    expect(arr(out.properties.leftBases!).every((b) => b === 0)).toBe(true);
    expect(arr(out.properties.rightBases!)).toEqual(keep.map((p) => p + 1));
  });

  it('[1,0,1,2,1,0,-1,4,0] with width=(None,2), rel_height=0.75 → peak 7, width 1.35, edges 6.4 / 7.75 (TestFindPeaks.test_width_condition)', () => {
    const out = findPeakIndices([1, 0, 1, 2, 1, 0, -1, 4, 0], { width: [null, 2], relHeight: 0.75 });
    expect(arr(out.peaks)).toEqual([7]);
    expect(Math.abs(out.properties.widths![0] - 1.35)).toBeLessThanOrEqual(TOL);
    expect(Math.abs(out.properties.widthHeights![0] - 1)).toBeLessThanOrEqual(TOL);
    expect(Math.abs(out.properties.leftIps![0] - 6.4)).toBeLessThanOrEqual(TOL);
    expect(Math.abs(out.properties.rightIps![0] - 7.75)).toBeLessThanOrEqual(TOL);
  });

  it('returns every requested property aligned with the peaks (TestFindPeaks.test_properties)', () => {
    const out = findPeakIndices([0, 1, 0, 2, 1.5, 0, 3, 0, 5, 9], {
      height: [null, null],
      threshold: [null, null],
      prominence: [null, null],
      width: [null, null],
    });
    const props = out.properties as Record<string, ArrayLike<number>>;
    const keys = ['peakHeights', 'leftThresholds', 'rightThresholds', 'prominences', 'leftBases', 'rightBases', 'widths', 'widthHeights', 'leftIps', 'rightIps'];
    expect(Object.keys(props).sort()).toEqual([...keys].sort());
    for (const k of keys) expect(props[k].length).toBe(out.peaks.length);
  });

  it('rejects a distance below 1 (TestFindPeaks.test_raises)', () => {
    expect(() => findPeakIndices(Array.from({ length: 10 }, (_, i) => i), { distance: -1 })).toThrow(/distance/);
  });

  it('keeps a peak inside a window narrower than its plateau with zero prominence and width (TestFindPeaks.test_wlen_smaller_plateau)', () => {
    const out = findPeakIndices([0, 1, 1, 1, 0], { prominence: [null, null], width: [null, null], wlen: 2 });
    expect(arr(out.peaks)).toEqual([2]);
    const p = out.properties;
    expect([p.prominences![0], p.widths![0], p.widthHeights![0]]).toEqual([0, 0, 1]);
    expect([p.leftBases![0], p.rightBases![0], p.leftIps![0], p.rightIps![0]]).toEqual([2, 2, 2, 2]);
  });
});

describe('selectByDistance(peaks, priority, distance)', () => {
  it('keeps the highest peak and clears its neighbourhood first', () => {
    expect(arr(selectByDistance([1, 3, 5, 9], [1, 3, 2, 0], 3))).toEqual([0, 1, 0, 1]);
  });
});
