import { describe, expect, it } from 'vitest';
import { calibrateFromPeaks, EXIF_FOCAL_LENGTH_RELATIVE_SIGMA, gratingPriors } from '../../../src/core/calibration/calibrate.js';
import { lampLines } from '../../../src/core/lines/index.js';
import type { BandGeometry } from '../../../src/core/types.js';
import { loadLampCatalog } from '../../../src/io/lineList.js';
import { syntheticCase } from './syntheticPeaks.js';

const catalog = loadLampCatalog();
const BAND: BandGeometry = { angleDeg: 0, slantDeg: 0, center: { x: 1000, y: 500 }, lengthPx: 600, heightPx: 100 };

describe('gratingPriors(input)', () => {
  it('takes f from EXIF on the diagonal convention, f_px = f35 · diagonal / 43.267 mm, ±2 %', () => {
    const p = gratingPriors({ image: { widthPx: 1920, heightPx: 1080 }, band: BAND, focalLength35mmMm: 26 });
    // 26 · √(1920² + 1080²) / √(36² + 24²) = 26 · 2202.907 / 43.2666 = 1323.78 px (hand-computed)
    expect(Math.abs(p.focalLengthPx!.value - 1323.78)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(p.focalLengthPx!.sigma - EXIF_FOCAL_LENGTH_RELATIVE_SIGMA * p.focalLengthPx!.value)).toBeLessThanOrEqual(1e-9);
    expect(p.focalLengthSource).toBe('exif');
  });
  it('puts x0 where the image centre projects onto the band (pixel centres at integers)', () => {
    const p = gratingPriors({ image: { widthPx: 1920, heightPx: 1080 }, band: BAND });
    // band start at x = 700; image centre x = 959.5 → x0 = 259.5
    expect(Math.abs(p.axisPositionPx!.value - 259.5)).toBeLessThanOrEqual(1e-9);
    expect(p.focalLengthPx).toBeNull();
    expect(p.focalLengthSource).toBe('fitted');
  });
  it('fixes f when it is given, and knows nothing for a spectrum file', () => {
    expect(gratingPriors({ image: null, band: null, focalLengthPx: 3000 })).toEqual({
      focalLengthPx: { value: 3000, sigma: 0 },
      axisPositionPx: null,
      focalLengthSource: 'given',
    });
    expect(() => gratingPriors({ image: null, band: null, focalLengthPx: -1 })).toThrow(/focal length/);
  });
});

describe('calibrateFromPeaks(peaks, lines, options)', () => {
  const ne = lampLines('Ne', { catalog }).lines;
  const c = (() => {
    for (let seed = 1; ; seed++) {
      const s = syntheticCase(seed * 17, ne, { dispersionNmPerPx: [0.3, 0.4], extraFraction: [0, 0.1] });
      if (s.peaks.filter((p, i) => s.truthNm[i] !== null && !p.blended).length >= 12) return s;
    }
  })();
  const trueIdx = c.peaks.map((_, i) => i).filter((i) => c.truthNm[i] !== null && !c.peaks[i].blended);

  it('calibrates from a lamp alone and labels the lines', () => {
    const r = calibrateFromPeaks(c.peaks, ne, { fit: { model: 'polynomial' } });
    expect(r.match?.accepted).toBe(true);
    expect(r.fit.lines.every((l) => /^Ne I \d+\.\d{3}$/.test(l.label ?? ''))).toBe(true);
    expect(r.fit.rmsPx).toBeLessThanOrEqual(3 * c.noisePx + 0.05);
  });

  it('a wrong lamp is an error; with two or more pairs it falls back to the pairs and says so', () => {
    const hg = lampLines('Hg', { catalog }).lines;
    expect(() => calibrateFromPeaks(c.peaks, hg)).toThrow(/do not match|no consistent assignment/);
    const pairs = [trueIdx[0], trueIdx[trueIdx.length - 1]].map((i) => ({ positionPx: c.peaks[i].positionPx, wavelengthNm: c.truthNm[i]! }));
    const r = calibrateFromPeaks(c.peaks, hg, { pairs, fit: { model: 'polynomial' } });
    expect(r.match).toBeNull();
    expect(r.fit.linesUsed).toBe(2);
    expect(r.warnings.join(' ')).toMatch(/match the peaks neither tied to the given pairs nor on their own .*calibrated from the pairs alone/);
  });

  it('a pair the lamp\'s own scale contradicts is an error naming the pair and what the lamp reads there', () => {
    // The right lamp, two pairs: one right, one given the wavelength of another Ne line 10+ nm away.
    const i = trueIdx[1];
    const j = trueIdx[trueIdx.length - 2];
    const wrongNm = ne.map((l) => l.wavelengthNm).find((w) => Math.abs(w - c.truthNm[j]!) > 10 && Math.abs(w - c.truthNm[j]!) < 40)!;
    const pairs = [
      { positionPx: c.peaks[i].positionPx, wavelengthNm: c.truthNm[i]! },
      { positionPx: c.peaks[j].positionPx, wavelengthNm: wrongNm },
    ];
    let message = '';
    try {
      calibrateFromPeaks(c.peaks, ne, { pairs, fit: { model: 'polynomial' } });
    } catch (e) {
      message = (e as Error).message;
    }
    expect(message).toContain(`--pairs ${c.peaks[j].positionPx}=${wrongNm} contradicts the lamp's lines`);
    // What the lamp's scale reads there is the pair's true wavelength (to the synthetic noise, well under 0.1 nm).
    const read = Number(/scale reads ([\d.]+) nm/.exec(message)?.[1]);
    expect(Math.abs(read - c.truthNm[j]!)).toBeLessThanOrEqual(0.1);
    expect(message).not.toContain(`${c.peaks[i].positionPx}=`);
    // Both pairs right: they agree with the lamp, and the lamp's lines are matched as usual.
    const good = calibrateFromPeaks(c.peaks, ne, { pairs: [pairs[0], { ...pairs[1], wavelengthNm: c.truthNm[j]! }], fit: { model: 'polynomial' } });
    expect(good.match?.accepted).toBe(true);
    expect(good.fit.linesUsed).toBeGreaterThan(5);
  });

  it('pairs alone snap to the nearest peak, and a pair far from any peak is used as given with a warning', () => {
    const i = trueIdx[2];
    const j = trueIdx[8];
    const r = calibrateFromPeaks(c.peaks, null, {
      pairs: [
        { positionPx: c.peaks[i].positionPx + 1.5, wavelengthNm: c.truthNm[i]! },
        { positionPx: c.peaks[j].positionPx, wavelengthNm: c.truthNm[j]! },
        { positionPx: -500, wavelengthNm: 400 },
      ],
      fit: { model: 'polynomial', degree: 1 },
    });
    expect(Math.abs(r.points[0].positionPx - c.peaks[i].positionPx)).toBeLessThanOrEqual(1e-9);
    expect(r.warnings.join(' ')).toMatch(/no peak within 3 px of the pair at -500 px/);
    expect(() => calibrateFromPeaks(c.peaks, null)).toThrow(/nothing to calibrate with/);
  });
});
