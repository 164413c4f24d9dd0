import { describe, expect, it } from 'vitest';
import { derivedFigures, gratingVerdict, parseOrderList, parseTolerance } from '../../../src/core/grating/index.js';

describe('gratingVerdict({linesPerMm, linesPerMmUncertainty, nominalLinesPerMm, tolerance})', () => {
  const tol = parseTolerance('2%');
  it('says within when the value ± 2u lies inside the band (600 ± 2 % = 588–612)', () => {
    const v = gratingVerdict({ linesPerMm: 601, linesPerMmUncertainty: 2, nominalLinesPerMm: 600, tolerance: tol });
    expect(v.verdict).toBe('within');
    expect([v.lowerLimitLinesPerMm, v.upperLimitLinesPerMm]).toEqual([588, 612]);
  });
  it('says outside when the whole interval misses the band, cannot tell when it straddles a limit', () => {
    expect(gratingVerdict({ linesPerMm: 570, linesPerMmUncertainty: 2, nominalLinesPerMm: 600, tolerance: tol }).verdict).toBe('outside');
    expect(gratingVerdict({ linesPerMm: 610, linesPerMmUncertainty: 2, nominalLinesPerMm: 600, tolerance: tol }).verdict).toBe('cannot_tell');
    expect(gratingVerdict({ linesPerMm: 600, linesPerMmUncertainty: 8, nominalLinesPerMm: 600, tolerance: tol }).verdict).toBe('cannot_tell');
  });
  it('reads absolute tolerances and refuses nonsense', () => {
    expect(parseTolerance('12')).toEqual({ kind: 'absolute', linesPerMm: 12 });
    expect(parseTolerance('5 lines/mm')).toEqual({ kind: 'absolute', linesPerMm: 5 });
    expect(() => parseTolerance('two percent')).toThrow(/--tolerance: expected a tolerance such as 2%/);
    expect(() => parseTolerance('0%')).toThrow(/between 0 and 100/);
  });
});

describe('derivedFigures({linesPerMm, wavelengthNm, illuminatedWidthMm, distanceMm})', () => {
  it('gives the period, the orders that exist and R = mN (1000 lines/mm, 1 mm beam: N = 1000, R₁ = 1000)', () => {
    const d = derivedFigures({ linesPerMm: 1000, linesPerMmUncertainty: 5, wavelengthNm: 632.8, illuminatedWidthMm: 1 });
    expect(d.periodUm).toBe(1);
    expect(Math.abs((d.periodUncertaintyUm ?? NaN) - 0.005)).toBeLessThanOrEqual(1e-12);
    expect([d.minOrder, d.maxOrder]).toEqual([-1, 1]);
    expect(d.orders.map((o) => o.resolvingPower)).toEqual([1000, 1000]);
    expect(Math.abs((d.orders[1].resolvableNm ?? NaN) - 0.6328)).toBeLessThanOrEqual(1e-12);
  });
  it('has dispersion growing with the order, on the screen too (fact of the trade, no source)', () => {
    const d = derivedFigures({ linesPerMm: 300, wavelengthNm: 632.8, distanceMm: 1000 });
    const pos = d.orders.filter((o) => o.order > 0);
    expect(pos.length).toBe(5);
    for (let i = 1; i < pos.length; i++) {
      expect(pos[i].angularDispersionDegPerNm).toBeGreaterThan(pos[i - 1].angularDispersionDegPerNm);
      expect(pos[i].linearDispersionMmPerNm ?? NaN).toBeGreaterThan(pos[i - 1].linearDispersionMmPerNm ?? NaN);
    }
  });
});

describe('parseOrderList(text, {name, unit})', () => {
  it('reads orders, values with or without units, and ± uncertainties', () => {
    const got = parseOrderList('-2:-812.4, -1:-391.8 ; 1:39.19cm±0.05cm, +2:812.6+-1', { name: '--positions', unit: 'mm' });
    const want = [
      { order: -2, value: -812.4, uncertainty: undefined },
      { order: -1, value: -391.8, uncertainty: undefined },
      { order: 1, value: 391.9, uncertainty: 0.5 },
      { order: 2, value: 812.6, uncertainty: 1 },
    ];
    expect(got.map((g) => g.order)).toEqual(want.map((w) => w.order));
    got.forEach((g, i) => {
      expect(Math.abs(g.value - want[i].value)).toBeLessThanOrEqual(1e-9);
      if (want[i].uncertainty === undefined) expect(g.uncertainty).toBeUndefined();
      else expect(Math.abs((g.uncertainty ?? NaN) - want[i].uncertainty!)).toBeLessThanOrEqual(1e-12);
    });
  });
  it('names the bad item', () => {
    expect(() => parseOrderList('1:391.9,2-812', { name: '--positions', unit: 'mm' })).toThrow(/--positions: expected order:value.*"2-812"/);
    expect(() => parseOrderList('1:39s', { name: '--positions', unit: 'mm' })).toThrow(/--positions \(order 1\): expected a length/);
    expect(() => parseOrderList('', { name: '--positions', unit: 'mm' })).toThrow(/expected items like/);
  });
});
