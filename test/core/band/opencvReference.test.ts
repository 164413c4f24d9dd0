/**
 * The band search's image geometry checked against OpenCV (opencv-wasm 4.3, the OpenCV project's own WebAssembly
 * build of its C++ library: a general-purpose reference implementation, BSD-3-Clause):
 *
 * - connected components (8-connected) of a thresholded image, their areas and bounding boxes, against
 *   cv.connectedComponentsWithStats; their weighted centroids and central second moments against cv.moments;
 * - bilinear sampling of a rotated, slanted band (sampleBand, every kernel: linear grey, 8-bit codes grey and RGB)
 *   against cv.warpAffine with INTER_LINEAR | WARP_INVERSE_MAP, the affine map written here from the geometry
 *   convention of the issue and of band/frame.ts's doc comment (not from bandFrame).
 *
 * glowprint does not use OpenCV at run time (DEVELOPERS.md says why); here it is an independent implementation of
 * the same operations.
 */
import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { createRandom } from '../../../src/core/random.js';
import { labelComponents, setPixelsOf } from '../../../src/core/spectrum/band/components.js';
import { sampleBand } from '../../../src/core/spectrum/sampleBand.js';
import { srgbDecode, srgbEncode } from '../../../src/core/units/srgb.js';
import type { BandGeometry, LinearImage } from '../../../src/core/types.js';
import { linearImageFromCodes } from '../../../src/io/image.js';

// opencv-wasm is a CommonJS module whose WebAssembly is compiled synchronously on require (~0.2 s).
const { cv } = createRequire(import.meta.url)('opencv-wasm') as { cv: any };

/** A smooth seeded test image: Gaussian spots of σ 2.5–7 px on a gentle gradient, values in [0, ~1]. */
function smoothImage(width: number, height: number, channels: 1 | 3, seed: number): Float32Array {
  const rng = createRandom(seed);
  const spots = Array.from({ length: 40 }, () => ({
    x: width * rng.uniform(),
    y: height * rng.uniform(),
    s: 2.5 + 4.5 * rng.uniform(),
    a: [0.2 + 0.6 * rng.uniform(), 0.2 + 0.6 * rng.uniform(), 0.2 + 0.6 * rng.uniform()],
  }));
  const out = new Float32Array(width * height * channels);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      for (let c = 0; c < channels; c++) {
        let v = 0.05 + (0.1 * x) / width + (0.05 * y) / height;
        for (const p of spots) v += p.a[c] * Math.exp(-((x - p.x) ** 2 + (y - p.y) ** 2) / (2 * p.s * p.s));
        out[(y * width + x) * channels + c] = Math.min(1, v);
      }
    }
  }
  return out;
}

/** OpenCV Mat of 32-bit floats, interleaved channels, from our row-major data. */
function floatMat(data: Float32Array, width: number, height: number, channels: 1 | 3): any {
  const m = new cv.Mat(height, width, channels === 1 ? cv.CV_32FC1 : cv.CV_32FC3);
  m.data32F.set(data);
  return m;
}

/**
 * The band's samples by cv.warpAffine: sample (column i, row j) of sampleBand lies at X = S + p_i·u + q_j·v with
 * p_i = i·step, q_j = (j − half)·rowStep, u = (cos a, sin a) along the band, n = (−sin a, cos a) across it,
 * v = n − tan(slant)·u along a line image and S = centre − (length/2)·u (the geometry convention).
 * `shiftPx` moves the map along x: a deliberately wrong map, to show the comparison can fail.
 */
function warpSamples(src: any, band: BandGeometry, columns: number, rows: number, stepPx: number, rowStepPx: number, shiftPx = 0): Float32Array {
  const a = (band.angleDeg * Math.PI) / 180;
  const [ux, uy] = [Math.cos(a), Math.sin(a)];
  const t = Math.tan((band.slantDeg * Math.PI) / 180);
  const [vx, vy] = [-uy - t * ux, ux - t * uy];
  const sx = band.center.x - (band.lengthPx / 2) * ux + shiftPx;
  const sy = band.center.y - (band.lengthPx / 2) * uy;
  const half = (rows - 1) / 2;
  const M = cv.matFromArray(2, 3, cv.CV_64FC1, [
    stepPx * ux, rowStepPx * vx, sx - half * rowStepPx * vx,
    stepPx * uy, rowStepPx * vy, sy - half * rowStepPx * vy,
  ]);
  const dst = new cv.Mat();
  cv.warpAffine(src, dst, M, new cv.Size(columns, rows), cv.INTER_LINEAR | cv.WARP_INVERSE_MAP, cv.BORDER_CONSTANT, new cv.Scalar());
  const out = Float32Array.from(dst.data32F);
  M.delete();
  dst.delete();
  return out;
}

/** Largest and median |ours − OpenCV| over the samples inside the image, plane c of a column-major SampledBand. */
function compareSamples(ours: ReturnType<typeof sampleBand>, cvData: Float32Array, c: number, channels: number): { max: number; median: number; n: number } {
  const { columns, rows, planes, valid } = ours;
  const diffs: number[] = [];
  for (let i = 0; i < columns; i++) {
    for (let j = 0; j < rows; j++) {
      if (!valid[i * rows + j]) continue;
      diffs.push(Math.abs(planes[c][i * rows + j] - cvData[(j * columns + i) * channels + c]));
    }
  }
  diffs.sort((x, y) => x - y);
  return { max: diffs[diffs.length - 1], median: diffs[diffs.length >> 1], n: diffs.length };
}

describe('connected components against cv.connectedComponentsWithStats and cv.moments', () => {
  it('labels the same 8-connected components, with the same areas, boxes, centroids and second moments', () => {
    const [W, H] = [240, 160];
    const data = smoothImage(W, H, 1, 11);
    const rng = createRandom(12);
    // A noisy threshold gives ragged components, touching diagonally in places: a fair test of 8-connectivity.
    const mask = new Uint8Array(W * H);
    const weight = new Float32Array(W * H);
    for (let k = 0; k < W * H; k++) {
      const v = data[k] + 0.04 * (rng.uniform() - 0.5);
      if (v > 0.3) {
        mask[k] = 1;
        weight[k] = v;
      }
    }
    const { components, labels } = labelComponents(mask, W, H, weight, [weight], new Float32Array(W * H), setPixelsOf(mask));

    const cvMask = cv.matFromArray(H, W, cv.CV_8UC1, Array.from(mask));
    const cvLabels = new cv.Mat();
    const stats = new cv.Mat();
    const centroids = new cv.Mat();
    const n = cv.connectedComponentsWithStats(cvMask, cvLabels, stats, centroids, 8, cv.CV_32S);
    const cvLab = Int32Array.from(cvLabels.data32S);
    const st = Int32Array.from(stats.data32S); // per label: left, top, width, height, area
    expect(components.length).toBeGreaterThan(10);
    expect(n - 1).toBe(components.length); // label 0 is the background

    // Our component c ↔ OpenCV's label: one to one, pixel for pixel.
    const toCv = new Map<number, number>();
    for (let k = 0; k < W * H; k++) {
      if (!mask[k]) {
        expect(labels[k]).toBe(-1);
        continue;
      }
      const mine = labels[k];
      if (!toCv.has(mine)) toCv.set(mine, cvLab[k]);
      expect(cvLab[k]).toBe(toCv.get(mine));
    }
    expect(new Set(toCv.values()).size).toBe(components.length);

    components.forEach((comp, c) => {
      const l = toCv.get(c)!;
      const [left, top, w, h, area] = st.subarray(5 * l, 5 * l + 5);
      expect(comp.area).toBe(area);
      expect([comp.minX, comp.minY, comp.maxX - comp.minX + 1, comp.maxY - comp.minY + 1]).toEqual([left, top, w, h]);
      // Weighted moments of this component alone: its weights, 0 elsewhere (cv.moments of a CV_64F raster).
      const only = new Float64Array(W * H);
      for (let k = 0; k < W * H; k++) if (cvLab[k] === l) only[k] = weight[k];
      const m = cv.matFromArray(H, W, cv.CV_64FC1, Array.from(only));
      const mo = cv.moments(m, false);
      m.delete();
      expect(comp.weight).toBeCloseTo(mo.m00, 3);
      expect(comp.cx).toBeCloseTo(mo.m10 / mo.m00, 6);
      expect(comp.cy).toBeCloseTo(mo.m01 / mo.m00, 6);
      // Ours add 1/12 px² on the diagonal for each pixel's own extent (components.ts).
      expect(comp.sxx - 1 / 12).toBeCloseTo(mo.mu20 / mo.m00, 5);
      expect(comp.sxy).toBeCloseTo(mo.mu11 / mo.m00, 5);
      expect(comp.syy - 1 / 12).toBeCloseTo(mo.mu02 / mo.m00, 5);
    });
    for (const m of [cvMask, cvLabels, stats, centroids]) m.delete();
  });
});

describe('bilinear band sampling against cv.warpAffine (INTER_LINEAR)', () => {
  // OpenCV quantises the sub-pixel position to 1/32 px (INTER_BITS = 5), so it differs from exact bilinear
  // interpolation by up to |∇I|·(1/64)·√2 ≈ 0.005 on these images (|∇I| ≤ ~0.2 per px); a sampling off by half a
  // pixel or a sign of the slant differs by ~0.1.
  const W = 320;
  const H = 200;
  const bands: BandGeometry[] = [
    { center: { x: 160.3, y: 101.7 }, angleDeg: 12.5, slantDeg: 4, lengthPx: 220, heightPx: 40 },
    { center: { x: 158.9, y: 96.2 }, angleDeg: -171.2, slantDeg: -3, lengthPx: 200, heightPx: 60 },
  ];
  const step = 0.8;
  const rowStep = 0.7;

  it('samples linear grey pixels as OpenCV does, in both directions and slants', () => {
    const data = smoothImage(W, H, 1, 21);
    const image: LinearImage = { width: W, height: H, channels: 1, data };
    const src = floatMat(data, W, H, 1);
    for (const band of bands) {
      const ours = sampleBand(image, band, { stepPx: step, rowStepPx: rowStep });
      const theirs = warpSamples(src, band, ours.columns, ours.rows, step, rowStep);
      const d = compareSamples(ours, theirs, 0, 1);
      expect(d.n).toBe(ours.columns * ours.rows); // the whole band lies inside
      expect(d.max).toBeLessThan(0.006);
      expect(d.median).toBeLessThan(0.0015);
      // The comparison can fail: the same map half a pixel off.
      expect(compareSamples(ours, warpSamples(src, band, ours.columns, ours.rows, step, rowStep, 0.5), 0, 1).max).toBeGreaterThan(0.03);
    }
    src.delete();
  });

  it('samples 8-bit sRGB codes (grey and RGB, the photo path) as OpenCV samples their linear values', () => {
    for (const channels of [1, 3] as const) {
      const linear = smoothImage(W, H, channels, 31 + channels);
      // Encode to 8-bit sRGB codes as a camera would; the reference is the decoded (linear) values of those codes.
      const table = Float32Array.from({ length: 256 }, (_, c) => srgbDecode(c / 255));
      const codes = Uint8Array.from(linear, (v) => Math.round(255 * srgbEncode(v)));
      const image = linearImageFromCodes({ width: W, height: H, channels, codes, codeToLinear: table });
      const src = floatMat(Float32Array.from(codes, (c) => table[c]), W, H, channels);
      for (const band of bands) {
        const ours = sampleBand(image, band, { stepPx: step, rowStepPx: rowStep });
        const theirs = warpSamples(src, band, ours.columns, ours.rows, step, rowStep);
        for (let c = 0; c < channels; c++) {
          const d = compareSamples(ours, theirs, c, channels);
          expect(d.max, `channels ${channels}, plane ${c}, angle ${band.angleDeg}°`).toBeLessThan(0.006);
          expect(d.median).toBeLessThan(0.0015);
        }
      }
      src.delete();
    }
  });
});
