import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/core/errors.js';
import {
  airToVacuumNm,
  refractiveIndexCiddor,
  refractiveIndexEdlen,
  refractiveIndexIau,
  refractiveIndexOfAir,
  saturationVapourPressurePa,
  STANDARD_AIR,
  vacuumToAirNm,
} from '../../src/core/units/airVacuum.js';

const LAB = { temperatureC: 20, pressurePa: 101_325, humidityPercent: 50, co2Ppm: 450 };
const within = (got: number, want: number, tol: number) => expect(Math.abs(got - want)).toBeLessThanOrEqual(tol);

describe('refractiveIndexCiddor({wavelengthNm, temperatureC, pressurePa, humidityPercent, co2Ppm})', () => {
  // Ciddor, Appl. Opt. 35, 1566 (1996); values from the NIST Engineering Metrology Toolbox calculator
  // (Stone & Zimmerman), CHECK_VALUES.md (R). The calculator prints 9–10 decimals: tolerance one unit in the last.
  it('633.0 nm, 20 °C, 101 325 Pa, 50 % RH, 450 ppm → 1.000271373 (NIST)', () => {
    within(refractiveIndexCiddor({ wavelengthNm: 633, ...LAB }), 1.000271373, 1e-9);
  });
  it('500 nm, same air → 1.000273781 (NIST)', () => {
    within(refractiveIndexCiddor({ wavelengthNm: 500, ...LAB }), 1.000273781, 1e-9);
  });
  it('633 nm, −20 °C (over ice) → 1.00031489 (NIST)', () => {
    within(refractiveIndexCiddor({ wavelengthNm: 633, ...LAB, temperatureC: -20 }), 1.00031489, 1e-8);
  });
  it('633 nm, 40.123 °C → 1.000253031 (NIST)', () => {
    within(refractiveIndexCiddor({ wavelengthNm: 633, ...LAB, temperatureC: 40.123 }), 1.000253031, 1e-9);
  });
  it('633 nm → λair 632.828268 nm under the same air (CHECK_VALUES.md, computed from the NIST value)', () => {
    within(vacuumToAirNm(633, { formula: 'ciddor', ...LAB }), 632.828268, 1e-6);
  });
  it('more CO₂ raises the index: +0.534e-6 × (n−1) per ppm (Ciddor eq. for n_axs)', () => {
    const a = refractiveIndexCiddor({ wavelengthNm: 633, ...LAB, co2Ppm: 450 }) - 1;
    const b = refractiveIndexCiddor({ wavelengthNm: 633, ...LAB, co2Ppm: 1450 }) - 1;
    within(b / a - 1, 0.534e-3, 0.05e-3);
  });
  it('refuses values outside the published range', () => {
    expect(() => refractiveIndexCiddor({ wavelengthNm: 100 })).toThrow(InputError);
    expect(() => refractiveIndexCiddor({ wavelengthNm: 633, humidityPercent: 120 })).toThrow(/humidityPercent/);
    expect(() => refractiveIndexCiddor({ wavelengthNm: NaN })).toThrow(/wavelengthNm: expected a finite number, got NaN/);
  });
});

describe('refractiveIndexEdlen(...) (Birch & Downs 1993/94, NIST water term)', () => {
  it('633 nm, 20 °C, 101 325 Pa, 50 % RH → 1.0002713745 (CHECK_VALUES.md, computed)', () => {
    // We get 1.00027137389: 6e-10 below the stated value, far inside the equation's own uncertainty (~1e-8).
    within(refractiveIndexEdlen({ wavelengthNm: 633, ...LAB }), 1.0002713745, 1e-9);
  });
  it('agrees with Ciddor within 2e-8 over 400–900 nm in lab air (Ciddor 1996, §5)', () => {
    for (let wl = 400; wl <= 900; wl += 50) {
      within(refractiveIndexEdlen({ wavelengthNm: wl, ...LAB }), refractiveIndexCiddor({ wavelengthNm: wl, ...LAB }), 2e-8);
    }
  });
});

describe('IAU standard vacuum → air (Morton 2000, ApJS 130, 403)', () => {
  it('50000 Å vacuum → 49986.36934549974 Å air (CHECK_VALUES.md: a general-purpose library test value)', () => {
    within(vacuumToAirNm(5000, { formula: 'iau' }) * 10, 49986.36934549974, 1e-8);
  });
  it('matches Ciddor in standard air within 5e-9 in index over 350–1000 nm (independent fits; ≤ 0.005 pm at 1000 nm)', () => {
    for (let wl = 350; wl <= 1000; wl += 50) within(refractiveIndexIau(wl), refractiveIndexCiddor({ wavelengthNm: wl }), 5e-9);
  });
  it('refuses non-standard conditions', () => {
    expect(() => refractiveIndexOfAir(633, { formula: 'iau', temperatureC: 20 })).toThrow(/standard air/);
  });
});

describe('vacuumToAirNm(λvac, conditions?) / airToVacuumNm(λair, conditions?)', () => {
  it('HeNe 632.9908 nm vacuum (CIPM 2007) → 632.816 nm in standard air (15 °C, dry) (CHECK_VALUES.md)', () => {
    within(vacuumToAirNm(632.9908), 632.816, 0.0005);
    within(vacuumToAirNm(632.9908, { formula: 'iau' }), 632.816, 0.0005);
    within(vacuumToAirNm(632.9908, { formula: 'edlen' }), 632.816, 0.0005);
  });
  it('HeNe → 632.819 nm at 20 °C, 50 % RH (CHECK_VALUES.md)', () => {
    within(vacuumToAirNm(632.9908, { ...LAB }), 632.819, 0.0005);
  });
  it('defaults to standard air by Ciddor', () => {
    expect(STANDARD_AIR).toEqual({ formula: 'ciddor', temperatureC: 15, pressurePa: 101_325, humidityPercent: 0, co2Ppm: 450 });
    expect(vacuumToAirNm(500)).toBe(vacuumToAirNm(500, { ...STANDARD_AIR }));
  });
  it('inverts to 1e-12 nm for every formula and lab air (round trip 350–1000 nm)', () => {
    for (const conditions of [{}, { formula: 'iau' as const }, { formula: 'edlen' as const, ...LAB }, LAB]) {
      for (let wl = 350; wl <= 1000; wl += 25) {
        within(airToVacuumNm(vacuumToAirNm(wl, conditions), conditions), wl, 1e-12);
      }
    }
  });
  it('sodium D2 588.995 nm air ↔ 589.158 nm vacuum (common practice, no source)', () => {
    within(airToVacuumNm(588.995), 589.158, 0.001);
  });
});

describe('saturationVapourPressurePa(temperatureC)', () => {
  it('20 °C → 2339.2 Pa; 0.01 °C → 611.66 Pa (IAPWS triple point); −20 °C over ice → 103.3 Pa (IAPWS 1995)', () => {
    within(saturationVapourPressurePa(20), 2339.2, 0.2);
    within(saturationVapourPressurePa(0.01), 611.66, 0.1);
    within(saturationVapourPressurePa(-20), 103.26, 0.1);
  });
});
