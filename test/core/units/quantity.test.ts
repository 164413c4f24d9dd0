import { describe, expect, it } from 'vitest';
import { parseQuantity, parseUnit, unitInHeader } from '../../../src/core/units/quantity.js';

const rel = (got: number, want: number): number => Math.abs(got - want) / Math.abs(want);

describe('parseQuantity(text, {name, unit})', () => {
  it('reads SI prefixes and units into the unit asked for (BIPM SI Brochure, 9th ed., Table 7)', () => {
    const cases: Array<[string, string, number]> = [
      ['10GHz', 'Hz', 1e10],
      ['250 MHz', 'Hz', 2.5e8],
      ['1.5 kHz', 'Hz', 1500],
      ['3 KHz', 'Hz', 3000],
      ['2ghz', 'Hz', 2e9],
      ['7.5mm', 'm', 0.0075],
      ['7.5mm', 'mm', 7.5],
      ['1 m', 'mm', 1000],
      ['632.8nm', 'nm', 632.8],
      ['0.6328 µm', 'nm', 632.8],
      ['0.6328um', 'nm', 632.8],
      ['0.6328 μm', 'nm', 632.8],
      ['6328 Å', 'nm', 632.8],
      ['1.2e-3 s', 's', 1.2e-3],
      ['-3 µs', 's', -3e-6],
      ['20 ms', 's', 0.02],
      ['2 min', 's', 120],
      ['.5 sec', 's', 0.5],
      ['22.3°', 'deg', 22.3],
      ['22.3 deg', 'deg', 22.3],
      [`${Math.PI / 4} rad`, 'deg', 45],
      ['250 mV', 'V', 0.25],
      ['1e3', 'mm', 1000],
    ];
    for (const [text, unit, want] of cases) expect(rel(parseQuantity(text, { name: 'x', unit }), want)).toBeLessThanOrEqual(1e-12);
  });

  it('reads a bare number in bareUnit when given', () => {
    expect(parseQuantity('1000', { name: '--distance', unit: 'm', bareUnit: 'mm' })).toBe(1);
  });

  it('tells apart mHz and MHz, and refuses the ambiguous all-lower-case mhz', () => {
    expect(parseQuantity('5 mHz', { name: 'f', unit: 'Hz' })).toBe(0.005);
    expect(parseQuantity('5 MHZ', { name: 'f', unit: 'Hz' })).toBe(5e6);
    expect(() => parseQuantity('300mhz', { name: '--fsr', unit: 'Hz' })).toThrow(/--fsr: .*ambiguous unit; write MHz/);
  });

  it('refuses the wrong kind of unit, unknown units, junk, non-finite and (when asked) non-positive values', () => {
    expect(() => parseQuantity('10 GHz', { name: '--mirror-spacing', unit: 'm' })).toThrow(/--mirror-spacing: expected a length such as 7.5mm, not a frequency, got "10 GHz"/);
    expect(() => parseQuantity('10 furlongs', { name: 'd', unit: 'm' })).toThrow(/unknown unit "furlongs"/);
    expect(() => parseQuantity('ten', { name: 'd', unit: 'm' })).toThrow(/d: expected a length/);
    expect(() => parseQuantity('1,5 mm', { name: 'd', unit: 'mm' })).toThrow(/d: expected a length/);
    expect(() => parseQuantity('1e400 m', { name: 'd', unit: 'm' })).toThrow(/finite/);
    expect(() => parseQuantity('0 mm', { name: '--distance', unit: 'mm', positive: true })).toThrow(/--distance: expected a positive length/);
    expect(() => parseQuantity('-1 s', { name: 'dt', unit: 's', nonNegative: true })).toThrow(/≥ 0/);
  });
});

describe('parseUnit(text) and unitInHeader(header)', () => {
  it('knows instrument spellings', () => {
    expect(parseUnit('Second')).toMatchObject({ dimension: 'time', factor: 1 });
    expect(parseUnit('Volt')).toMatchObject({ dimension: 'voltage', factor: 1 });
    expect(parseUnit('mVolt')).toMatchObject({ dimension: 'voltage', factor: 1e-3 });
    expect(parseUnit('us')).toMatchObject({ dimension: 'time', factor: 1e-6, symbol: 'µs' });
    expect(parseUnit('CH1')).toBeNull();
  });
  it('finds units in column headers', () => {
    expect(unitInHeader('Time (s)')).toMatchObject({ name: 'Time', unit: { factor: 1, dimension: 'time' } });
    expect(unitInHeader('CH1[mV]')).toMatchObject({ name: 'CH1', unit: { factor: 1e-3, dimension: 'voltage' } });
    expect(unitInHeader('t/ms')).toMatchObject({ name: 't', unit: { factor: 1e-3, dimension: 'time' } });
    expect(unitInHeader('TIME_us')).toMatchObject({ name: 'TIME', unit: { factor: 1e-6 } });
    expect(unitInHeader('CH2')).toEqual({ name: 'CH2', unit: null });
    expect(unitInHeader('Ramp (V)').name).toBe('Ramp');
  });
});
