import { describe, expect, it } from 'vitest';
import { InputError } from '../../../src/core/errors.js';
import { createRandom } from '../../../src/core/random.js';
import { fitScreen, screenPositionMm } from '../../../src/core/grating/index.js';

// HeNe in standard air, 632.816 nm (CHECK_VALUES.md, from CIPM 2007 via the IAU air formula, C).
const LAMBDA_NM = 632.816;
const LAMBDA_MM = LAMBDA_NM * 1e-6;

function spots(linesPerMm: number, incidenceDeg: number, distanceMm: number, orders: number[]) {
  return orders.map((order) => ({ order, positionMm: screenPositionMm(order, linesPerMm, incidenceDeg, distanceMm, LAMBDA_MM) }));
}

describe('fitScreen({wavelengthNm, distanceMm, positions}) on exact synthetic spots', () => {
  it('recovers 300, 600 and 1000 lines/mm within 0.1 % (orders that reach a 1 m screen)', () => {
    for (const [g, orders] of [
      [300, [-3, -2, -1, 1, 2, 3]],
      [600, [-2, -1, 1, 2]],
      [1000, [-1, 1]],
    ] as Array<[number, number[]]>) {
      const r = fitScreen({ wavelengthNm: LAMBDA_NM, distanceMm: 1000, positions: spots(g, 0, 1000, orders), positionUncertaintyMm: 1, distanceUncertaintyMm: 2, wavelengthUncertaintyNm: 0 });
      expect(Math.abs(r.linesPerMm - g) / g).toBeLessThanOrEqual(0.001);
      expect(Math.abs(r.incidenceDeg)).toBeLessThanOrEqual(1e-4);
      expect(r.incidenceFitted).toBe(true);
      expect(Math.abs(r.periodUm - 1000 / g)).toBeLessThanOrEqual(1e-3 * (1000 / g));
    }
  });

  it('recovers a tilt of up to 10° and the line density with it', () => {
    for (const tilt of [-10, -4, 2.5, 10]) {
      const r = fitScreen({ wavelengthNm: LAMBDA_NM, distanceMm: 800, positions: spots(600, tilt, 800, [-2, -1, 1, 2]), positionUncertaintyMm: 0.5 });
      expect(Math.abs(r.linesPerMm - 600) / 600).toBeLessThanOrEqual(0.001);
      expect(Math.abs(r.incidenceDeg - tilt)).toBeLessThanOrEqual(0.01);
      if (Math.abs(tilt) >= 2) expect(r.warnings.join(' ')).toMatch(/tilted by/);
    }
  });

  it('fits the ruler origin when an order-0 reading is given (positions as ruler readings)', () => {
    const origin = 512.5;
    const positions = spots(600, 3, 1000, [-2, -1, 1, 2]).map((p) => ({ ...p, positionMm: p.positionMm + origin }));
    const r = fitScreen({ wavelengthNm: LAMBDA_NM, distanceMm: 1000, positions: [{ order: 0, positionMm: origin }, ...positions], positionUncertaintyMm: 0.5 });
    expect(Math.abs(r.linesPerMm - 600)).toBeLessThanOrEqual(0.6);
    expect(Math.abs((r.zeroPositionMm ?? NaN) - origin)).toBeLessThanOrEqual(1e-3);
    expect(Math.abs(r.incidenceDeg - 3)).toBeLessThanOrEqual(0.01);
  });

  it('mirrors a scale that puts the positive orders on the negative side, and says so', () => {
    const positions = spots(600, 4, 1000, [-2, -1, 1, 2]).map((p) => ({ ...p, positionMm: -p.positionMm }));
    const r = fitScreen({ wavelengthNm: LAMBDA_NM, distanceMm: 1000, positions });
    expect(Math.abs(r.linesPerMm - 600)).toBeLessThanOrEqual(0.6);
    expect(Math.abs(r.incidenceDeg + 4)).toBeLessThanOrEqual(0.01);
    expect((r.residuals[0] as { measuredMm: number }).measuredMm).toBe(positions[0].positionMm);
    expect(r.warnings.join(' ')).toMatch(/mirrored/);
  });

  it('uses separations between symmetric spots, assuming normal incidence and quoting what a 5° tilt would change', () => {
    const p = spots(600, 0, 1000, [-2, -1, 1, 2]);
    const sep = [1, 2].map((m) => ({ order: m, separationMm: p.find((s) => s.order === m)!.positionMm - p.find((s) => s.order === -m)!.positionMm }));
    const r = fitScreen({ wavelengthNm: LAMBDA_NM, distanceMm: 1000, separations: sep, positionUncertaintyMm: 1 });
    expect(Math.abs(r.linesPerMm - 600) / 600).toBeLessThanOrEqual(0.001);
    expect(r.incidenceFitted).toBe(false);
    expect(r.warnings.join(' ')).toMatch(/tilt cannot be told from separations.*5° tilt would change the result by/);
  });
});

describe('fitScreen(...) uncertainty on noisy spots', () => {
  it('covers the truth: |error| ≤ u in about 68 % and ≤ 2u in about 95 % of 400 seeded trials', () => {
    const rng = createRandom(6);
    const trueD = 1000;
    const sigmaX = 1;
    const sigmaD = 2;
    const sigmaL = 0.5;
    let within1 = 0;
    let within2 = 0;
    const n = 400;
    for (let t = 0; t < n; t++) {
      const g = 400 + 200 * rng.uniform();
      const tilt = -8 + 16 * rng.uniform();
      const lambdaTrue = LAMBDA_NM + sigmaL * rng.normal();
      const positions = [-2, -1, 1, 2].map((order) => ({
        order,
        positionMm: screenPositionMm(order, g, tilt, trueD, lambdaTrue * 1e-6) + sigmaX * rng.normal(),
      }));
      const r = fitScreen({
        wavelengthNm: LAMBDA_NM,
        wavelengthUncertaintyNm: sigmaL,
        distanceMm: trueD + sigmaD * rng.normal(),
        distanceUncertaintyMm: sigmaD,
        positions,
        positionUncertaintyMm: sigmaX,
      });
      const z = Math.abs(r.linesPerMm - g) / r.linesPerMmUncertainty;
      if (z <= 1) within1++;
      if (z <= 2) within2++;
    }
    // Binomial spread of a fraction over 400 trials is ≈ 2.3 %: allow ±7 % around 68.3 % and ≥ 90 % for 95.4 %.
    expect(Math.abs(within1 / n - 0.683)).toBeLessThanOrEqual(0.07);
    expect(within2 / n).toBeGreaterThanOrEqual(0.9);
  });

  it('reports a budget whose parts add in quadrature to the total', () => {
    const r = fitScreen({ wavelengthNm: 650, wavelengthUncertaintyNm: 5, distanceMm: 500, distanceUncertaintyMm: 3, positions: spots(1000, 1, 500, [-1, 1]) });
    const b = r.budget;
    expect(Math.abs(Math.hypot(b.fitLinesPerMm, b.distanceLinesPerMm, b.wavelengthLinesPerMm) - r.linesPerMmUncertainty)).toBeLessThanOrEqual(1e-9);
    // G ∝ 1/λ: the wavelength part is G·σλ/λ.
    expect(Math.abs(b.wavelengthLinesPerMm - (r.linesPerMm * 5) / 650)).toBeLessThanOrEqual(1e-9);
  });
});

describe('fitScreen(...) on bad input', () => {
  const base = { wavelengthNm: LAMBDA_NM, distanceMm: 1000, positionUncertaintyMm: 1 };
  it('refuses a zero distance', () => {
    expect(() => fitScreen({ ...base, distanceMm: 0, positions: spots(600, 0, 1000, [1, 2]) })).toThrow(/distance: expected the grating-to-screen distance/);
  });
  it('names an order that cannot exist at the line density the other spots imply', () => {
    // 600 lines/mm at 632.8 nm: sin β₃ = 3 × 0.37969 = 1.139.
    const p = [...spots(600, 0, 1000, [1, 2]), { order: 3, positionMm: 1500 }];
    expect(() => fitScreen({ ...base, positions: p })).toThrow(/order 3 cannot exist here.*sin β = 1\.1/);
  });
  it('refuses positions no grating can produce: higher order nearer, same-sign orders on both sides, a misfit', () => {
    expect(() => fitScreen({ ...base, positions: [{ order: 1, positionMm: 400 }, { order: 2, positionMm: 300 }] })).toThrow(/inconsistent with any grating.*not farther out/);
    expect(() => fitScreen({ ...base, positions: [{ order: 1, positionMm: 400 }, { order: 2, positionMm: -900 }] })).toThrow(InputError);
    // Orders 1 and 2 of different gratings (600 and 450 lines/mm): no single grating and tilt fits them.
    const bad = [...spots(600, 0, 1000, [-1, 1]), ...spots(450, 0, 1000, [-2, 2])];
    expect(() => fitScreen({ ...base, positions: bad })).toThrow(/inconsistent with any grating: the best fit/);
  });
  it('refuses a fractional order, an undeviated spot alone and no spots at all', () => {
    expect(() => fitScreen({ ...base, positions: [{ order: 1.5, positionMm: 400 }] })).toThrow(/whole number/);
    expect(() => fitScreen({ ...base, positions: [{ order: 0, positionMm: 10 }] })).toThrow(/only the undeviated spot/);
    expect(() => fitScreen({ ...base, positions: [] })).toThrow(/no spot positions/);
  });
});
