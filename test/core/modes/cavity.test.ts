import { describe, expect, it } from 'vitest';
import { cavityLengthFromSpacing, fsrFromMirrorSpacing, modeSpacingFromLength } from '../../../src/core/modes/index.js';

describe('modeSpacingFromLength({cavityLengthM}) — Δν = c/2L', () => {
  it('gives ≈ 0.5 GHz for a 30 cm cavity (Arieli, The Laser Adventure, Example 4.2; 499.654 MHz exact with c = 299 792 458 m/s)', () => {
    const v = modeSpacingFromLength({ cavityLengthM: 0.3 });
    expect(Math.abs(v - 499.654e6)).toBeLessThanOrEqual(1e3);
    expect(Math.abs(v - 0.5e9) / 0.5e9).toBeLessThanOrEqual(0.001);
  });
  it('gives about 250 MHz for a cavity about 60 cm long (common practice, no source) and inverts exactly', () => {
    const v = modeSpacingFromLength({ cavityLengthM: 0.6 });
    expect(Math.abs(v - 250e6)).toBeLessThanOrEqual(1e6);
    expect(Math.abs(cavityLengthFromSpacing({ modeSpacingHz: v }) - 0.6)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(cavityLengthFromSpacing({ modeSpacingHz: v, refractiveIndex: 1.5 }) - 0.4)).toBeLessThanOrEqual(1e-12);
  });
});

describe('fsrFromMirrorSpacing({mirrorSpacingM, kind}) — c/4d confocal, c/2d planar (textbook definitions, CHECK_VALUES.md)', () => {
  it('gives 9.993 GHz for a 7.5 mm confocal and 19.986 GHz for a 7.5 mm planar interferometer', () => {
    expect(Math.abs(fsrFromMirrorSpacing({ mirrorSpacingM: 0.0075, kind: 'confocal' }) - 299_792_458 / 0.03)).toBeLessThanOrEqual(1e-3);
    expect(Math.abs(fsrFromMirrorSpacing({ mirrorSpacingM: 0.0075, kind: 'planar' }) - 299_792_458 / 0.015)).toBeLessThanOrEqual(1e-3);
  });
  it('refuses a zero spacing', () => {
    expect(() => fsrFromMirrorSpacing({ mirrorSpacingM: 0, kind: 'confocal' })).toThrow(/mirror spacing: expected a positive length/);
  });
});
