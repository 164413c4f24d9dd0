import { describe, expect, it } from 'vitest';
import {
  linearCodeTable,
  SRGB_DECODE_LUT_8,
  SRGB_DECODE_THRESHOLD,
  SRGB_ENCODE_THRESHOLD,
  srgbDecode,
  srgbDecodeTable,
  srgbEncode,
} from '../../src/core/units/srgb.js';

// Check values: IEC 61966-2-1:1999 transfer function, values as listed in ../shared/design/CHECK_VALUES.md
// (encode(0.18) read from a colour-science library's test; the decode values computed from the standard's formula).
describe('srgbEncode(linear) / srgbDecode(encoded) — IEC 61966-2-1', () => {
  it('srgbEncode(0.18) = 0.461356129500442 (IEC 61966-2-1, CHECK_VALUES.md)', () => {
    expect(Math.abs(srgbEncode(0.18) - 0.461356129500442)).toBeLessThanOrEqual(1e-14);
  });
  it('srgbDecode(0.5) = 0.214041140 (IEC 61966-2-1 formula, CHECK_VALUES.md)', () => {
    expect(Math.abs(srgbDecode(0.5) - 0.21404114)).toBeLessThanOrEqual(5e-10);
  });
  it('srgbDecode(128/255) = 0.215860500 (IEC 61966-2-1 formula, CHECK_VALUES.md)', () => {
    expect(Math.abs(srgbDecode(128 / 255) - 0.2158605)).toBeLessThanOrEqual(5e-10);
  });
  it('uses the linear segment below the thresholds: decode(0.04) = 0.04/12.92, encode(0.003) = 12.92·0.003', () => {
    expect(srgbDecode(0.04)).toBe(0.04 / 12.92);
    expect(srgbEncode(0.003)).toBe(12.92 * 0.003);
  });
  it('is continuous at the thresholds 0.04045 / 0.0031308 (jump < 1e-7; the standard rounds its constants)', () => {
    const below = srgbDecode(SRGB_DECODE_THRESHOLD);
    const above = Math.pow((SRGB_DECODE_THRESHOLD + 0.055) / 1.055, 2.4);
    expect(Math.abs(below - above)).toBeLessThanOrEqual(1e-7);
    const eBelow = srgbEncode(SRGB_ENCODE_THRESHOLD);
    const eAbove = 1.055 * Math.pow(SRGB_ENCODE_THRESHOLD, 1 / 2.4) - 0.055;
    expect(Math.abs(eBelow - eAbove)).toBeLessThanOrEqual(1e-7);
  });
  it('maps 0 → 0 and 1 → 1, and encode inverts decode to 1e-12 over [−1, 1]', () => {
    expect(srgbDecode(0)).toBe(0);
    expect(Math.abs(srgbDecode(1) - 1)).toBeLessThanOrEqual(1e-15);
    expect(Math.abs(srgbEncode(1) - 1)).toBeLessThanOrEqual(1e-15);
    for (let v = -1; v <= 1; v += 1 / 97) {
      expect(Math.abs(srgbEncode(srgbDecode(v)) - v)).toBeLessThanOrEqual(1e-12);
    }
  });
  it('is odd: srgbDecode(−v) = −srgbDecode(v) (noise below black after a dark subtraction keeps its sign)', () => {
    expect(srgbDecode(-0.5)).toBe(-srgbDecode(0.5));
    expect(srgbEncode(-0.2)).toBe(-srgbEncode(0.2));
  });
});

describe('SRGB_DECODE_LUT_8 / srgbDecodeTable(maxCode) / linearCodeTable(maxCode)', () => {
  it('has 256 entries; LUT[128] = 0.215860500 within float32 precision (IEC 61966-2-1, CHECK_VALUES.md)', () => {
    expect(SRGB_DECODE_LUT_8.length).toBe(256);
    expect(Math.abs(SRGB_DECODE_LUT_8[128] - 0.2158605)).toBeLessThanOrEqual(2e-8);
    expect(SRGB_DECODE_LUT_8[0]).toBe(0);
    expect(SRGB_DECODE_LUT_8[255]).toBe(1);
  });
  it('matches srgbDecode(c/255) for every code to float32 rounding and increases strictly', () => {
    for (let c = 0; c < 256; c++) {
      expect(Math.abs(SRGB_DECODE_LUT_8[c] - srgbDecode(c / 255))).toBeLessThanOrEqual(6e-8 * Math.max(1e-3, srgbDecode(c / 255)) + 1e-12);
      if (c > 0) expect(SRGB_DECODE_LUT_8[c]).toBeGreaterThan(SRGB_DECODE_LUT_8[c - 1]);
    }
  });
  it('builds a 65536-entry 16-bit table whose entry 32768 is decode(32768/65535)', () => {
    const t = srgbDecodeTable(65535);
    expect(t.length).toBe(65536);
    expect(Math.abs(t[32768] - srgbDecode(32768 / 65535))).toBeLessThanOrEqual(1e-7);
  });
  it('linearCodeTable(65535)[65535] = 1 and [1] = 1/65535', () => {
    const t = linearCodeTable(65535);
    expect(t[65535]).toBe(1);
    expect(Math.abs(t[1] - 1 / 65535)).toBeLessThanOrEqual(1e-12);
  });
  it('rejects maxCode 0, 70000 and 2.5 naming the parameter', () => {
    expect(() => srgbDecodeTable(0)).toThrow(/maxCode: expected an integer between 1 and 65535, got 0/);
    expect(() => srgbDecodeTable(70000)).toThrow(/maxCode/);
    expect(() => linearCodeTable(2.5)).toThrow(/maxCode/);
  });
});
