import { describe, expect, it } from 'vitest';
import { dispersionPriorNmPerPx, DISPERSION_PRIOR_DEFAULTS } from '../../../src/core/identify/dispersionPrior.js';
import { renderSpectroscopePhoto } from '../../../src/core/render/index.js';
import { RIG } from './renderedTubes.js';

describe('dispersionPriorNmPerPx(input, options) → [min, max] nm/px', () => {
  it('holds the dispersion the renderer (grating equation + pinhole camera) gives for 300–1200 lines/mm and the focal length', () => {
    // The renderer's truth is computed from the grating equation (mλ = d(sin α + sin β)) and x = f tan φ, independently
    // of the prior's closed-form bounds.
    for (const linesPerMm of [300, 600, 1000, 1200]) {
      for (const focalLengthPx of [1324, 2800, 4000]) {
        const angle = (Math.asin((550e-6 * linesPerMm) / 1) * 180) / Math.PI;
        const photo = renderSpectroscopePhoto({
          ...RIG,
          widthPx: 400,
          heightPx: 120,
          band: { ...RIG.band!, heightPx: 40 },
          grating: { ...RIG.grating!, linesPerMm },
          camera: { focal: { kind: 'px', focalLengthPx }, cameraAngleDeg: angle },
          source: { lines: [{ wavelengthNm: 550, intensity: 1, species: 'test' }] },
          seed: 1,
        });
        const [lo, hi] = dispersionPriorNmPerPx({ focalLengthPx });
        const truth = Math.abs(photo.truth.dispersionNmPerPx);
        expect(truth, `${linesPerMm}/mm, f ${focalLengthPx} px`).toBeGreaterThanOrEqual(lo);
        // Beyond the project's limit (2 nm/px: 300 lines/mm on a short phone lens gives 2.5) the prior stops there.
        expect(Math.min(truth, DISPERSION_PRIOR_DEFAULTS.limitNmPerPx[1]), `${linesPerMm}/mm, f ${focalLengthPx} px`).toBeLessThanOrEqual(hi);
      }
    }
  });

  it('narrows with a known focal length: a 12-MP camera at 4000 px cannot give 2 nm/px (d/f · margin ≈ 1.1 nm/px)', () => {
    const [lo, hi] = dispersionPriorNmPerPx({ focalLengthPx: 4000 });
    // Coarsest grating on the axis: d / f = (1e6 / 300 nm) / 4000 px = 0.833 nm/px, times the margin.
    expect(Math.abs(hi - (1e6 / 300 / 4000) * DISPERSION_PRIOR_DEFAULTS.margin)).toBeLessThanOrEqual(1e-9);
    expect(lo).toBeGreaterThanOrEqual(DISPERSION_PRIOR_DEFAULTS.limitNmPerPx[0]);
  });

  it('uses EXIF 35-mm equivalents through the image diagonal, the usual equivalents without EXIF, the wide limit with no photo', () => {
    const image = { widthPx: 1920, heightPx: 1080 };
    // f = 26 mm · 2203 px / 43.27 mm = 1324 px (diagonal matching, as focalLengthPxFrom35mm).
    const exif = dispersionPriorNmPerPx({ image, focalLength35mmMm: 26 });
    const known = dispersionPriorNmPerPx({ focalLengthPx: (26 * Math.hypot(1920, 1080)) / 43.267 });
    expect(Math.abs(exif[0] - known[0])).toBeLessThanOrEqual(1e-3);
    expect(Math.abs(exif[1] - known[1])).toBeLessThanOrEqual(1e-3);
    const noExif = dispersionPriorNmPerPx({ image });
    expect(noExif[0]).toBeLessThanOrEqual(exif[0]);
    expect(noExif[1]).toBeGreaterThanOrEqual(exif[1]);
    expect(dispersionPriorNmPerPx({})).toEqual([0.05, 2]);
  });
});
