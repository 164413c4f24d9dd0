import { describe, expect, it } from 'vitest';
import {
  fitGrating,
  gratingDispersionNmPerPx,
  gratingGradient,
  gratingLinesPerMm,
  gratingWavelengthNm,
  type GratingModel,
} from '../../../src/core/calibration/gratingModel.js';
import { informationCriterion } from '../../../src/core/calibration/informationCriterion.js';
import { positionAtPx } from '../../../src/core/calibration/model.js';
import {
  fitPolynomial,
  polynomialDispersionNmPerPx,
  polynomialGradient,
  polynomialWavelengthNm,
  type PolynomialModel,
} from '../../../src/core/calibration/polynomialModel.js';
import { createRandom } from '../../../src/core/random.js';
import { focalLengthPxFrom35mm } from '../../../src/core/render/gratingCamera.js';



function grating(overrides: Partial<GratingModel> = {}): GratingModel {
  return {
    kind: 'grating',
    order: 1,
    incidenceAngleDeg: 0,
    direction: 1,
    grooveSpacingNm: 1000,
    cameraAngleDeg: 33.5,
    axisPositionPx: 960,
    focalLengthPx: 1323.78,
    covariance: Array.from({ length: 4 }, () => [0, 0, 0, 0]),
    free: [true, true, true, true],
    ...overrides,
  };
}

describe('polynomialWavelengthNm(model, x) on the centred, scaled abscissa', () => {
  const model: PolynomialModel = {
    kind: 'polynomial',
    degree: 2,
    centerPx: 1000,
    scalePx: 500,
    coefficientsNm: [550, 150, -5],
    covariance: [[0, 0, 0], [0, 0, 0], [0, 0, 0]],
  };
  it('evaluates Σ c_j t^j with t = (x − centre)/scale (hand-computed)', () => {
    // x = 1250 → t = 0.5: 550 + 75 − 1.25 = 623.75
    expect(Math.abs(polynomialWavelengthNm(model, 1250) - 623.75)).toBeLessThanOrEqual(1e-12);
    // dλ/dx = (150 + 2·(−5)·0.5)/500 = 0.29
    expect(Math.abs(polynomialDispersionNmPerPx(model, 1250) - 0.29)).toBeLessThanOrEqual(1e-12);
    expect(polynomialGradient(model, 1250)).toEqual([1, 0.5, 0.25]);
  });
  it('finds the position of a wavelength back (positionAtPx)', () => {
    const x = positionAtPx(model, 623.75, 0, 2000)!;
    expect(Math.abs(x - 1250)).toBeLessThanOrEqual(1e-6);
    expect(positionAtPx(model, 2000, 0, 2000)).toBeNull();
  });
});

describe('gratingWavelengthNm(model, x): λ = (d/m)(sin θi + sin(θc + atan(s(x − x0)/f)))', () => {
  it('gives the grating-equation check value on the camera axis', () => {
    // CHECK_VALUES (grating equation, C): 1200 lines/mm, 500 nm, α = 0 → β = 36.8699°. With θc = β, the line falls
    // where the camera axis meets the band (x = x0).
    const m = grating({ grooveSpacingNm: 1e6 / 1200, cameraAngleDeg: 36.8699 });
    expect(Math.abs(gratingWavelengthNm(m, 960) - 500)).toBeLessThanOrEqual(1e-3);
  });
  it('agrees with the renderer\'s own implementation of the same mapping', async () => {
    const { wavelengthAtPositionNm } = await import('../../../src/core/render/gratingCamera.js');
    const m = grating();
    for (const x of [300, 400, 960, 1500, 1919]) {
      const other = wavelengthAtPositionNm(
        { linesPerMm: 1000, incidenceDeg: 0, cameraAngleDeg: 33.5, focalLengthPx: 1323.78, principalPositionPx: 960 },
        x,
        1,
      )!;
      expect(Math.abs(gratingWavelengthNm(m, x) - other)).toBeLessThanOrEqual(1e-9);
    }
  });
  it('has an analytic gradient and dispersion equal to central differences', () => {
    const m = grating({ direction: -1, incidenceAngleDeg: 5 });
    const x = 1300;
    const p = [m.grooveSpacingNm, m.cameraAngleDeg, m.axisPositionPx, m.focalLengthPx];
    const keys = ['grooveSpacingNm', 'cameraAngleDeg', 'axisPositionPx', 'focalLengthPx'] as const;
    const g = gratingGradient(m, x);
    keys.forEach((k, j) => {
      const h = 1e-5 * Math.max(1, Math.abs(p[j]));
      const num = (gratingWavelengthNm({ ...m, [k]: p[j] + h }, x) - gratingWavelengthNm({ ...m, [k]: p[j] - h }, x)) / (2 * h);
      expect(Math.abs(g[j] - num)).toBeLessThanOrEqual(1e-6 * Math.max(1, Math.abs(num)));
    });
    const dnum = (gratingWavelengthNm(m, x + 1e-3) - gratingWavelengthNm(m, x - 1e-3)) / 2e-3;
    expect(Math.abs(gratingDispersionNmPerPx(m, x) - dnum)).toBeLessThanOrEqual(1e-8);
  });
  it('reports lines/mm = 10⁶/d with σ = 10⁶σd/d²', () => {
    const m = grating({ grooveSpacingNm: 1250, covariance: [[25, 0, 0, 0], [0, 0, 0, 0], [0, 0, 0, 0], [0, 0, 0, 0]] });
    const g = gratingLinesPerMm(m);
    expect(Math.abs(g.linesPerMm - 800)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(g.uncertaintyLinesPerMm - 3.2)).toBeLessThanOrEqual(1e-12);
  });
});

/** Seeded positions of lines under a true grating model, with centroid noise. */
function syntheticLines(truth: GratingModel, wavelengths: number[], noisePx: number, seed: number) {
  const rng = createRandom(seed);
  return wavelengths.map((l) => {
    const x = positionAtPx(truth, l, -5000, 7000)!;
    return { xPx: x + noisePx * rng.normal(), wavelengthNm: l, weight: 1 / (noisePx * gratingDispersionNmPerPx(truth, x)) ** 2 };
  });
}

// Mercury and europium lines of a fluorescent lamp, 405–611 nm (air, NIST ASD for Hg I; Eu³⁺ from memory).
const CFL_NM = [404.656, 435.833, 487.7, 546.074, 576.96, 579.066, 587.6, 611.6];

describe('fitGrating(points, priors)', () => {
  // The rig of the issue: 1000 lines/mm, 1920×1080 phone photo, 26 mm equivalent (f from the diagonal convention).
  const f = focalLengthPxFrom35mm({ focalLength35mmMm: 26, widthPx: 1920, heightPx: 1080 });
  const truth = grating({ focalLengthPx: f, axisPositionPx: 972 });

  it('recovers the line density within 0.3 % from seeded positions when f is known (EXIF)', () => {
    for (let seed = 1; seed <= 20; seed++) {
      const pts = syntheticLines(truth, CFL_NM, 0.1, seed);
      const fit = fitGrating(pts, { focalLengthPx: { value: f, sigma: 0 }, axisPositionPx: { value: 960, sigma: 33 } })!;
      const { linesPerMm, uncertaintyLinesPerMm } = gratingLinesPerMm(fit.model);
      expect(Math.abs(linesPerMm - 1000) / 1000).toBeLessThanOrEqual(0.003);
      // and the stated uncertainty covers the error (4σ, seeded)
      expect(Math.abs(linesPerMm - 1000)).toBeLessThanOrEqual(4 * uncertaintyLinesPerMm);
    }
  });

  it('with f only known to 2 % (EXIF prior) the error stays within 3σ and σ reflects the prior', () => {
    let within = 0;
    for (let seed = 1; seed <= 40; seed++) {
      const pts = syntheticLines(truth, CFL_NM, 0.1, 100 + seed);
      const fPrior = f * (1 + 0.02 * createRandom(seed).normal());
      const fit = fitGrating(pts, { focalLengthPx: { value: fPrior, sigma: 0.02 * f }, axisPositionPx: { value: 960, sigma: 33 } })!;
      const { linesPerMm, uncertaintyLinesPerMm } = gratingLinesPerMm(fit.model);
      if (Math.abs(linesPerMm - 1000) <= 3 * uncertaintyLinesPerMm) within++;
      // d trades against f (∂ln d/∂ln f ≈ cos²β ≈ 0.7): a 2 % prior on f leaves σ of order 1 %.
      expect(uncertaintyLinesPerMm).toBeGreaterThan(3);
    }
    expect(within).toBeGreaterThanOrEqual(38);
  });

  it('fits either dispersion direction', () => {
    const mirrored = grating({ focalLengthPx: f, direction: -1, axisPositionPx: 960 });
    const pts = syntheticLines(mirrored, CFL_NM, 0.05, 7);
    const fit = fitGrating(pts, { focalLengthPx: { value: f, sigma: 0 } })!;
    expect(fit.model.direction).toBe(-1);
    expect(Math.abs(gratingLinesPerMm(fit.model).linesPerMm - 1000)).toBeLessThanOrEqual(3);
  });

  it('counts priors out of the effective parameters (trace of the hat matrix)', () => {
    const pts = syntheticLines(truth, CFL_NM, 0.1, 3);
    const tied = fitGrating(pts, { focalLengthPx: { value: f, sigma: 1e-6 * f }, axisPositionPx: { value: 972, sigma: 1e-3 } })!;
    const freeFit = fitGrating(pts, { focalLengthPx: { value: f, sigma: 10 * f }, axisPositionPx: { value: 972, sigma: 1e5 } })!;
    expect(Math.abs(tied.effectiveParameters - 2)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(freeFit.effectiveParameters - 4)).toBeLessThanOrEqual(0.05);
  });

  it('returns null for a single line', () => {
    expect(fitGrating([{ xPx: 100, wavelengthNm: 546.074, weight: 1 }])).toBeNull();
  });
});

describe('fitPolynomial(points, degree)', () => {
  it('recovers a seeded quadratic within its stated uncertainty, on pixel-scale positions', () => {
    const rng = createRandom(11);
    const truth = (x: number) => 380 + 0.31 * x - 2.1e-5 * x * x;
    const pts = Array.from({ length: 12 }, (_, i) => {
      const x = 100 + i * 150;
      return { xPx: x, wavelengthNm: truth(x) + 0.02 * rng.normal(), weight: 1 / 0.02 ** 2 };
    });
    const fit = fitPolynomial(pts, 2)!;
    for (const x of [100, 900, 1750]) {
      const sigma = Math.sqrt(
        polynomialGradient(fit.model, x).reduce(
          (a, gi, i) => a + polynomialGradient(fit.model, x).reduce((b, gj, j) => b + gi * fit.model.covariance[i][j] * gj, 0),
          0,
        ),
      );
      expect(Math.abs(polynomialWavelengthNm(fit.model, x) - truth(x))).toBeLessThanOrEqual(4 * sigma);
    }
  });
});

describe('informationCriterion(kind, χ², n, k)', () => {
  it('is AICc = n ln(χ²/n) + 2K + 2K(K+1)/(n−K−1), K = k + 1 (Hurvich & Tsai 1989), hand-computed', () => {
    // n = 10, χ² = 5, k = 2 → K = 3: 10 ln 0.5 + 6 + 24/6 = −6.931472 + 10 = 3.068528
    expect(Math.abs(informationCriterion('aicc', 5, 10, 2) - 3.0685281944)).toBeLessThanOrEqual(1e-9);
    // BIC = n ln(χ²/n) + K ln n (Schwarz 1978): −6.931472 + 3·2.302585 = −0.023717
    expect(Math.abs(informationCriterion('bic', 5, 10, 2) - -0.0237165266)).toBeLessThanOrEqual(1e-9);
    expect(informationCriterion('aicc', 1, 4, 2)).toBe(Infinity);
  });
  it('is undefined (Infinity) when there are too few points for the correction', () => {
    expect(informationCriterion('aicc', 1, 3, 1)).toBe(Infinity);
  });
});


