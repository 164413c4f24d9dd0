import { describe, expect, it } from 'vitest';
import {
  angularDispersionDegPerNm,
  deviationDeg,
  diffractionAngleDeg,
  littrowAngleDeg,
  orderLimits,
  sinDiffraction,
} from '../../../src/core/grating/index.js';

describe('sinDiffraction({linesPerMm, wavelengthNm, order, incidenceDeg}) — mλ = d(sin α + sin β)', () => {
  it('gives sin β = 1.18 for α = 30°, 2400 lines/mm, m = 1, 700 nm: no such order', () => {
    // CHECK_VALUES.md: a grating handbook's worked case (R).
    const s = sinDiffraction({ linesPerMm: 2400, wavelengthNm: 700, order: 1, incidenceDeg: 30 });
    expect(Math.abs(s - 1.18)).toBeLessThanOrEqual(1e-12);
    expect(diffractionAngleDeg({ linesPerMm: 2400, wavelengthNm: 700, order: 1, incidenceDeg: 30 })).toBeNull();
  });

  it('gives β = 36.8699° for 1200 lines/mm, 500 nm, α = 0', () => {
    // CHECK_VALUES.md: computed from the grating equation (C): asin(0.6) = 36.869897646°.
    const beta = diffractionAngleDeg({ linesPerMm: 1200, wavelengthNm: 500, order: 1 });
    expect(Math.abs((beta ?? NaN) - 36.8699)).toBeLessThanOrEqual(5e-5);
  });

  it('gives the Littrow angle 17.4576° for 1200 lines/mm, 500 nm, m = 1', () => {
    // CHECK_VALUES.md (C): asin(0.3) = 17.457603124°.
    const a = littrowAngleDeg({ linesPerMm: 1200, wavelengthNm: 500, order: 1 });
    expect(Math.abs((a ?? NaN) - 17.4576)).toBeLessThanOrEqual(5e-5);
    expect(littrowAngleDeg({ linesPerMm: 1200, wavelengthNm: 500, order: 4 })).toBeNull();
  });

  it('puts the zero order on the undeviated beam for any tilt (β0 = −α, θ0 = 0)', () => {
    for (const a of [-10, 0, 7.5, 25]) {
      expect(Math.abs(deviationDeg({ linesPerMm: 600, wavelengthNm: 632.8, order: 0, incidenceDeg: a }) ?? NaN)).toBeLessThanOrEqual(1e-12);
    }
  });
});

describe('orderLimits({linesPerMm, wavelengthNm, incidenceDeg})', () => {
  it('allows orders ±2 of a 600 lines/mm grating at 632.8 nm, square to the beam (3·0.3797 > 1)', () => {
    expect(orderLimits({ linesPerMm: 600, wavelengthNm: 632.8 })).toEqual({ maxOrder: 2, minOrder: -2 });
  });
  it('shifts the limits with the tilt: 600 lines/mm, 632.8 nm, α = 40° → orders 0 … +4 (the −1 order is gone)', () => {
    // sin 40° = 0.6428: m ≤ 1.6428/0.37968 = 4.33 and m ≥ −0.3572/0.37968 = −0.94 (sin β₋₁ = −1.0225).
    expect(orderLimits({ linesPerMm: 600, wavelengthNm: 632.8, incidenceDeg: 40 })).toEqual({ maxOrder: 4, minOrder: 0 });
  });
  it('excludes an order exactly at grazing incidence (1000 lines/mm, 500 nm: m = 2 has sin β = 1)', () => {
    expect(orderLimits({ linesPerMm: 1000, wavelengthNm: 500 }).maxOrder).toBe(1);
  });
});

describe('angularDispersionDegPerNm({...}) — dβ/dλ = m/(d cos β)', () => {
  it('grows with the order (common practice, no source: higher orders are more spread out)', () => {
    const d = [1, 2, 3, 4].map((m) => angularDispersionDegPerNm({ linesPerMm: 300, wavelengthNm: 632.8, order: m }) ?? NaN);
    for (let i = 1; i < d.length; i++) expect(d[i]).toBeGreaterThan(d[i - 1] * (i + 1) / i);
  });
  it('matches a finite difference of the grating equation', () => {
    const opts = { linesPerMm: 1200, wavelengthNm: 500, order: 1 };
    const h = 1e-4;
    const fd =
      ((diffractionAngleDeg({ ...opts, wavelengthNm: 500 + h }) ?? NaN) - (diffractionAngleDeg({ ...opts, wavelengthNm: 500 - h }) ?? NaN)) / (2 * h);
    expect(Math.abs((angularDispersionDegPerNm(opts) ?? NaN) - fd)).toBeLessThanOrEqual(1e-9);
  });
});
