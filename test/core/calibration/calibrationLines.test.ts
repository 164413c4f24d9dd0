import { describe, expect, it } from 'vitest';
import { calibrationLampLines } from '../../../src/core/calibration/calibrationLines.js';
import { lampLines } from '../../../src/core/lines/index.js';
import { loadLampCatalog } from '../../../src/io/lineList.js';
import { calibrationLines } from '../../../src/tasks/calibrate.js';

const catalog = loadLampCatalog();

describe('calibrationLampLines(spec, catalog, resolutionNm?)', () => {
  for (const spec of ['Ne', 'Ne+Hg', 'fluorescent', 'Ar,Kr']) {
    it(`gives ${spec} the same lines as glowprint calibrate (every listed line), more than the lamp's strong set`, () => {
      const mine = calibrationLampLines(spec, catalog).lines;
      expect(mine).toEqual(calibrationLines(spec).lines);
      const strong = lampLines(spec, { catalog }).lines;
      expect(mine.length).toBeGreaterThan(strong.length);
      for (const l of strong) expect(mine.some((m) => m.wavelengthNm === l.wavelengthNm && m.spectrum === l.spectrum)).toBe(true);
    });
  }

  it('re-judges blends at a given resolution as the CLI does', () => {
    expect(calibrationLampLines('Ne', catalog, 2).lines).toEqual(calibrationLines('Ne', 2).lines);
  });
});
