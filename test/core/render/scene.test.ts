import { describe, expect, it } from 'vitest';
import { continuumDensity, createSensorResponse, SECOND_RADIATION_CONSTANT_NM_K } from '../../../src/core/render/index.js';

function integrate(f: (l: number) => number, lo: number, hi: number, step = 0.01): number {
  let s = 0;
  for (let l = lo + step / 2; l < hi; l += step) s += f(l) * step;
  return s;
}

describe('continuumDensity(component)', () => {
  it('peaks a photon-counting blackbody where Wien’s law for photons puts it: λ_max·T = c₂ / 3.920690', () => {
    // Photon spectral exitance per wavelength ∝ λ⁻⁴/(e^{c₂/λT} − 1); its maximum solves (x − 4)eˣ + 4 = 0,
    // x = c₂/λT = 3.920690395 (C, from Planck's law); c₂ = 1.438776877e-2 m·K (CODATA 2018).
    const t = 3000;
    const f = continuumDensity({ kind: 'blackbody', temperatureK: t, intensity: 1, normalizeRangeNm: [300, 3000] });
    let best = 0;
    let bestL = 0;
    for (let l = 1000; l <= 1500; l += 0.01) {
      const v = f(l);
      if (v > best) [best, bestL] = [v, l];
    }
    expect(Math.abs(bestL - SECOND_RADIATION_CONSTANT_NM_K / (3.920690395 * t))).toBeLessThanOrEqual(0.02);
    expect(Math.abs(integrate(f, 300, 3000, 0.05) - 1)).toBeLessThanOrEqual(1e-6);
  });

  it('integrates a Gaussian band and a band head to their intensity, the head degrading the stated way', () => {
    const band = continuumDensity({ kind: 'gaussianBand', centerNm: 450, fwhmNm: 50, intensity: 3 });
    expect(Math.abs(integrate(band, 200, 700) - 3)).toBeLessThanOrEqual(1e-6);
    expect(Math.abs(band(475) / band(450) - 0.5)).toBeLessThanOrEqual(1e-12); // half maximum at centre ± FWHM/2
    const head = continuumDensity({ kind: 'bandHead', headNm: 600, tailNm: 4, degradesTo: 'violet', intensity: 2 });
    expect(Math.abs(integrate(head, 500, 700, 0.001) - 2)).toBeLessThanOrEqual(1e-3);
    expect(head(600.5)).toBe(0);
    expect(head(590)).toBeGreaterThan(0);
  });

  it('names the bad field: a band head degrading nowhere', () => {
    expect(() =>
      continuumDensity({ kind: 'bandHead', headNm: 600, tailNm: 4, degradesTo: 'up' as 'red', intensity: 1 }),
    ).toThrow(/degradesTo/);
  });
});

describe('createSensorResponse(model)', () => {
  // The default curves are our own illustrative design (no camera's data): these checks pin the documented shape.
  const response = createSensorResponse();
  const peak = (c: 'r' | 'g' | 'b'): number => {
    let best = 0;
    let at = 0;
    for (let l = 380; l <= 750; l += 0.5) {
      const v = response(l)[c];
      if (v > best) [best, at] = [v, l];
    }
    return at;
  };

  it('peaks near 605, 535 and 465 nm and cuts off below ~400 nm and above ~680 nm with a small tail', () => {
    expect(Math.abs(peak('r') - 605)).toBeLessThanOrEqual(10);
    expect(Math.abs(peak('g') - 535)).toBeLessThanOrEqual(10);
    expect(Math.abs(peak('b') - 465)).toBeLessThanOrEqual(10);
    const max = Math.max(response(peak('r')).r, response(peak('g')).g, response(peak('b')).b);
    const sum = (l: number): number => response(l).r + response(l).g + response(l).b;
    expect(sum(380) / max).toBeLessThanOrEqual(0.02);
    expect(sum(700) / max).toBeGreaterThanOrEqual(0.005); // the IR-cut tail: 700 nm lines stay faintly visible
    expect(sum(700) / max).toBeLessThanOrEqual(0.05);
    expect(sum(780) / max).toBeLessThanOrEqual(0.002);
  });

  it('is balanced for a spectrum flat in photons: equal R, G, B integrals', () => {
    const total = { r: 0, g: 0, b: 0 };
    for (let l = 300; l <= 1100; l += 0.5) {
      const v = response(l);
      total.r += v.r;
      total.g += v.g;
      total.b += v.b;
    }
    expect(Math.abs(total.r / total.g - 1)).toBeLessThanOrEqual(1e-9);
    expect(Math.abs(total.b / total.g - 1)).toBeLessThanOrEqual(1e-9);
  });
});
