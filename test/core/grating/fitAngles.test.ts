import { describe, expect, it } from 'vitest';
import { deviationDeg, diffractionAngleDeg, fitAngles } from '../../../src/core/grating/index.js';

const LAMBDA_NM = 632.816;

describe('fitAngles({wavelengthNm, angles}) — goniometer readings', () => {
  it('reads the example "1:22.3,2:49.4" as about 600 lines/mm at normal incidence', () => {
    // 600 lines/mm: θ1 = asin(0.37969) = 22.31°, θ2 = asin(0.75938) = 49.41°.
    const r = fitAngles({ wavelengthNm: LAMBDA_NM, angles: [{ order: 1, angleDeg: 22.3 }, { order: 2, angleDeg: 49.4 }] });
    expect(Math.abs(r.linesPerMm - 600)).toBeLessThanOrEqual(0.5);
    expect(r.incidenceFitted).toBe(false);
    expect(r.warnings.join(' ')).toMatch(/normal incidence assumed/);
  });

  it('fits the incidence from orders on both sides and recovers the line density within 0.1 %', () => {
    for (const tilt of [-10, 3, 10]) {
      const angles = [-2, -1, 1, 2].map((order) => ({ order, angleDeg: deviationDeg({ linesPerMm: 600, wavelengthNm: LAMBDA_NM, order, incidenceDeg: tilt })! }));
      const r = fitAngles({ wavelengthNm: LAMBDA_NM, angles, angleUncertaintyDeg: 0.02 });
      expect(Math.abs(r.linesPerMm - 600) / 600).toBeLessThanOrEqual(0.001);
      expect(Math.abs(r.incidenceDeg - tilt)).toBeLessThanOrEqual(0.01);
    }
  });

  it('takes angles from the grating normal with a given incidence', () => {
    const angles = [1, 2, 3].map((order) => ({ order, angleDeg: diffractionAngleDeg({ linesPerMm: 300, wavelengthNm: 532, order, incidenceDeg: 15 })! }));
    const r = fitAngles({ wavelengthNm: 532, angles, reference: 'normal', incidenceDeg: 15 });
    expect(Math.abs(r.linesPerMm - 300)).toBeLessThanOrEqual(0.3);
  });

  it('propagates the angle uncertainty: 0.1° on orders ±1 of 600 lines/mm gives u(G) ≈ G·cot θ·σθ/√2', () => {
    const angles = [-1, 1].map((order) => ({ order, angleDeg: deviationDeg({ linesPerMm: 600, wavelengthNm: LAMBDA_NM, order })! }));
    const r = fitAngles({ wavelengthNm: LAMBDA_NM, angles, angleUncertaintyDeg: 0.1, incidenceDeg: 0 });
    const theta = (22.3128 * Math.PI) / 180;
    const want = (600 * (0.1 * Math.PI) / 180 / Math.tan(theta)) / Math.SQRT2;
    expect(Math.abs(r.linesPerMmUncertainty - want) / want).toBeLessThanOrEqual(0.01);
  });

  it('refuses angles no grating gives and an order that cannot exist', () => {
    expect(() => fitAngles({ wavelengthNm: LAMBDA_NM, angles: [{ order: 1, angleDeg: 30 }, { order: 2, angleDeg: 20 }] })).toThrow(/inconsistent with any grating/);
    expect(() => fitAngles({ wavelengthNm: LAMBDA_NM, angles: [{ order: 1, angleDeg: 22.3 }, { order: 2, angleDeg: 49.4 }, { order: 3, angleDeg: 80 }] })).toThrow(/order 3 cannot exist/);
    expect(() => fitAngles({ wavelengthNm: LAMBDA_NM, angles: [{ order: 0, angleDeg: 0 }] })).toThrow(/non-zero whole number/);
  });
});
