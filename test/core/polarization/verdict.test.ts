import { describe, expect, it } from 'vitest';
import { VERDICT_DEFAULTS, polarizationVerdict } from '../../../src/core/polarization/verdict.js';

describe('polarizationVerdict(dolp, sigma, options)', () => {
  it('uses the documented defaults: 0.9, 0.05 and k = 2', () => {
    expect(VERDICT_DEFAULTS).toEqual({ polarizedMinDolp: 0.9, unpolarizedMaxDolp: 0.05, coverageFactor: 2 });
  });
  it('classifies by the interval DoLP ± kσ', () => {
    expect(polarizationVerdict(0.99, 0.005).verdict).toBe('polarized');
    expect(polarizationVerdict(0.86, 0.025).verdict).toBe('polarized'); // upper 0.91 reaches 0.9
    expect(polarizationVerdict(0.4, 0.02).verdict).toBe('partially_polarized');
    expect(polarizationVerdict(0.03, 0.01).verdict).toBe('unpolarized');
    expect(polarizationVerdict(0.08, 0.02).verdict).toBe('unpolarized'); // lower 0.04 reaches 0.05
    expect(polarizationVerdict(0.5, 0.3).verdict).toBe('inconclusive');
    expect(polarizationVerdict(0.5, NaN).verdict).toBe('inconclusive');
    const v = polarizationVerdict(0.4, 0.02);
    expect(Math.abs(v.dolpLower - 0.36)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(v.dolpUpper - 0.44)).toBeLessThanOrEqual(1e-12);
  });
  it('takes other thresholds', () => {
    expect(polarizationVerdict(0.95, 0.005, { polarizedMinDolp: 0.98 }).verdict).toBe('partially_polarized');
    expect(polarizationVerdict(0.08, 0.02, { coverageFactor: 1 }).verdict).toBe('partially_polarized');
    expect(() => polarizationVerdict(0.5, 0.01, { unpolarizedMaxDolp: 0.95 })).toThrow(/expected a value below polarizedMinDolp/);
  });
});
