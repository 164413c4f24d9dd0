import { describe, expect, it } from 'vitest';
import { lineDensityFromProfile, type GratingModelLike } from '../../../src/core/grating/index.js';

describe('lineDensityFromProfile(profile) — photo method', () => {
  it('turns a fitted groove spacing into lines/mm with its uncertainty (G = 10⁶/d, u(G) = 10⁶ u(d)/d²)', () => {
    const model: GratingModelLike & Record<string, unknown> = {
      kind: 'grating',
      order: 1,
      incidenceAngleDeg: 0,
      direction: 1,
      grooveSpacingNm: 1000,
      cameraAngleDeg: 30,
      axisPositionPx: 800,
      focalLengthPx: 3000,
      covariance: [
        [4, 0, 0, 0],
        [0, 0.01, 0, 0],
        [0, 0, 1, 0],
        [0, 0, 0, 0],
      ],
      free: [true, true, true, false],
    };
    const r = lineDensityFromProfile(model);
    expect(r.linesPerMm).toBe(1000);
    expect(Math.abs(r.linesPerMmUncertainty - 2)).toBeLessThanOrEqual(1e-12);
    expect(r.method).toBe('profile');
    expect(r.warnings.join(' ')).toMatch(/focal length was fixed/);
  });
  it('reads snake_case fields of a saved profile and refuses a profile without a line density', () => {
    expect(lineDensityFromProfile({ lines_per_mm: 600, lines_per_mm_uncertainty: 3 }).linesPerMmUncertainty).toBe(3);
    expect(() => lineDensityFromProfile({}, 'lamp.json')).toThrow(/lamp\.json: no line density in this profile/);
    const saved = lineDensityFromProfile({ lines_per_mm: 998.7, lines_per_mm_uncertainty: 4.1, focal_length_source: 'exif', model: { kind: 'grating', free: [true, true, true, false] } });
    expect(saved.linesPerMm).toBe(998.7);
    expect(saved.warnings.join(' ')).toMatch(/focal length was fixed/);
  });
});
