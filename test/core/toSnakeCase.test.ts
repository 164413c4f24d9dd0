import { describe, expect, it } from 'vitest';
import { snakeKey, toSnakeCase } from '../../src/core/json/toSnakeCase.js';

describe('snakeKey(key) and toSnakeCase(value)', () => {
  it('keeps the unit suffix of each key', () => {
    expect(snakeKey('positionUncertaintyPx')).toBe('position_uncertainty_px');
    expect(snakeKey('wavelengthNm')).toBe('wavelength_nm');
    expect(snakeKey('modeSpacingHz')).toBe('mode_spacing_hz');
    expect(snakeKey('iMax')).toBe('i_max');
    expect(snakeKey('s0')).toBe('s0');
    expect(snakeKey('lines_per_mm')).toBe('lines_per_mm');
  });
  it('converts nested objects, arrays and typed arrays, and writes non-finite numbers as null', () => {
    expect(toSnakeCase({ bandGeometry: { angleDeg: 1.5, center: { x: 1, y: 2 } }, peaks: [{ fwhmPx: NaN }], y: new Float64Array([1, Infinity]), skip: undefined })).toEqual({
      band_geometry: { angle_deg: 1.5, center: { x: 1, y: 2 } },
      peaks: [{ fwhm_px: null }],
      y: [1, null],
    });
  });
});
