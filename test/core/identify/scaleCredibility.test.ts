import { describe, expect, it } from 'vitest';
import type { IdentifiedPeak } from '../../../src/core/identify/identifySpecies.js';
import { brightCoverage, brightestExplained, fluxConsistency, SCALE_CREDIBILITY_DEFAULTS } from '../../../src/core/identify/scaleCredibility.js';
import { createRandom } from '../../../src/core/random.js';
import type { SpectralLine } from '../../../src/core/types.js';

/** A peak as the identification leaves it: only the fields the checks read. */
function peak(area: number, line: IdentifiedPeak['line'], extra: Partial<IdentifiedPeak> = {}): IdentifiedPeak {
  return { positionPx: 0, area, snr: 100, saturated: false, blended: false, line, ...extra } as IdentifiedPeak;
}

// Made-up lines of a made-up element (the checks read intensities only).
const LINES: SpectralLine[] = [
  { wavelengthNm: 450, intensity: 500, element: 'Q', spectrum: 'Q I' },
  { wavelengthNm: 500, intensity: 300, element: 'Q', spectrum: 'Q I' },
  { wavelengthNm: 550, intensity: 200, element: 'Q', spectrum: 'Q I' },
  { wavelengthNm: 600, intensity: 100, element: 'Q', spectrum: 'Q I' },
  { wavelengthNm: 650, intensity: 60, element: 'Q', spectrum: 'Q I' },
  { wavelengthNm: 680, intensity: 30, element: 'Q', spectrum: 'Q I' },
];
const lineOf = (l: SpectralLine) => ({ element: l.element, spectrum: l.spectrum, wavelengthNm: l.wavelengthNm });

describe('brightCoverage(identification, minSnr, options)', () => {
  it('is the beta-binomial Bayes factor B(u+1, B−u+β)/B(1, β) ÷ B(u+1, B−u+1) of the unexplained bright peaks', () => {
    const b = SCALE_CREDIBILITY_DEFAULTS.unexplainedBeta;
    // Every one of 7 bright peaks explained: B(1, 7+β)/B(1, β) ÷ B(1, 8) = (β/(7+β))·8 (B(1, n) = 1/n; Beta function).
    const all = brightCoverage({ peaks: Array.from({ length: 7 }, () => peak(10, lineOf(LINES[0]))) }, 5);
    expect(all.bright).toBe(7);
    expect(all.unexplained).toBe(0);
    expect(Math.abs(all.nats - Math.log((b / (7 + b)) * 8))).toBeLessThanOrEqual(1e-9);
    // None of 3 explained: B(4, β)/B(1, β) ÷ B(4, 1) = 3!·(β−1)!/(β+3)! · β · 4, by factorials.
    const none = brightCoverage({ peaks: Array.from({ length: 3 }, () => peak(10, null)) }, 5);
    const fact = (n: number): number => (n <= 1 ? 1 : n * fact(n - 1));
    const want = Math.log(((fact(3) * fact(b - 1)) / fact(b + 3)) * b * 4);
    expect(Math.abs(none.nats - want)).toBeLessThanOrEqual(1e-9);
    expect(none.nats).toBeLessThan(-1);
  });

  it('counts only line-like peaks with at least brightShare of the brightest one', () => {
    const peaks = [peak(100, lineOf(LINES[0])), peak(4, null), peak(50, null, { snr: 3 }), peak(6, lineOf(LINES[1]))];
    const c = brightCoverage({ peaks }, 5);
    expect(c.bright).toBe(2);
    expect(c.unexplained).toBe(0);
  });

  it('falls as the unexplained share of the bright peaks grows (20 bright peaks)', () => {
    const at = (u: number) => brightCoverage({ peaks: Array.from({ length: 20 }, (_, i) => peak(10, i < u ? null : lineOf(LINES[0]))) }, 5).nats;
    let previous = Infinity;
    for (let u = 0; u <= 20; u += 2) {
      expect(at(u)).toBeLessThan(previous);
      previous = at(u);
    }
    expect(at(0)).toBeGreaterThan(0);
    expect(at(15)).toBeLessThan(-2);
  });
});

describe('brightestExplained(identification, minSnr, count)', () => {
  it('counts the explained among the four brightest line-like peaks, peaks that are not there as explained', () => {
    const q = lineOf(LINES[0]);
    const peaks = [peak(100, q), peak(90, null), peak(50, q, { snr: 2 }), peak(40, null), peak(30, q), peak(20, null)];
    // Line-like by area: 100 (explained), 90, 40 (not), 30 (explained); the SNR-2 peak is left out.
    expect(brightestExplained({ peaks }, 5)).toBe(2);
    expect(brightestExplained({ peaks: [peak(10, q), peak(5, null)] }, 5)).toBe(3);
    expect(brightestExplained({ peaks: [peak(10, q), peak(5, q), peak(4, q), peak(3, q), peak(2, null)] }, 5)).toBe(4);
  });
});

describe('fluxConsistency(identification, lines, elements, minSnr, options)', () => {
  /** The species' six lines at their tabulated intensities × a factor of up to 3 either way, among 12 other peaks. */
  function tube(seed: number, swapStrongest: boolean): IdentifiedPeak[] {
    const rng = createRandom(seed);
    const peaks = LINES.map((l) => peak(l.intensity * Math.exp((2 * rng.uniform() - 1) * Math.log(3)), lineOf(l)));
    if (swapStrongest) {
      // The strongest line on a peak 200× fainter than the next (a scale that put it on a faint stray).
      peaks[0] = peak(peaks[1].area / 200, lineOf(LINES[0]));
    }
    for (let k = 0; k < 12; k++) peaks.push(peak(500 * Math.exp(-7 * rng.uniform()), null));
    return peaks;
  }

  it('is positive for lines about as bright as tabulated (×3 scatter) in most seeds, negative with the strongest on a faint peak', () => {
    let consistent = 0;
    let swapped = 0;
    const seeds = 40;
    for (let seed = 1; seed <= seeds; seed++) {
      const ok = fluxConsistency({ peaks: tube(seed, false) }, LINES, ['Q'], 5);
      expect(ok.lines).toBe(6);
      if (ok.nats > 0) consistent++;
      if (fluxConsistency({ peaks: tube(seed, true) }, LINES, ['Q'], 5).nats < ok.nats) swapped++;
    }
    expect(consistent / seeds).toBeGreaterThanOrEqual(0.85);
    expect(swapped).toBe(seeds);
  });

  it('is negative when one line is a thousand times above the level its four other lines set (a sodium D line taken for one)', () => {
    // Four lines at their tabulated intensities × 1e-4 (faint peaks), the fifth at its own × 1: beyond the outlier tail.
    const peaks = LINES.slice(0, 5).map((l, k) => peak(l.intensity * (k === 2 ? 1 : 1e-4), lineOf(l)));
    peaks.push(peak(0.02, null), peak(0.01, null));
    expect(fluxConsistency({ peaks }, LINES, ['Q'], 5).nats).toBeLessThan(-1);
  });

  it('leaves out clipped peaks, other orders and other elements, and needs minFluxLines lines of one spectrum', () => {
    const peaks = [
      peak(500, lineOf(LINES[0]), { saturated: true }),
      peak(300, { ...lineOf(LINES[1]), order: 2 }),
      peak(200, lineOf(LINES[2])),
      peak(100, lineOf(LINES[3])),
      peak(50, { element: 'Z', spectrum: 'Z I', wavelengthNm: 650 }),
    ];
    expect(fluxConsistency({ peaks }, LINES, ['Q'], 5)).toEqual({ nats: 0, lines: 0 });
    peaks.push(peak(60, lineOf(LINES[4])));
    expect(fluxConsistency({ peaks }, LINES, ['Q'], 5).lines).toBe(3);
  });
});
