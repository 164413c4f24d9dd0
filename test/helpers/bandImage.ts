/**
 * A small test-only synthesiser of band photos with a known truth (the project's physically based renderer lives in
 * src/core/render; this one is deliberately simple and fully controlled): a straight band at any angle and slant,
 * Gaussian line images at given positions, an optional continuum, an ambient gradient, a zero-order image, stray
 * glows, cosmic-ray hits, Poisson + read noise, clipping at 1, optional 8-bit sRGB quantisation (as codes + table).
 *
 * Geometry as in src/core/spectrum/band/frame.ts: X(p, q) = S + p·u + q·(n − tan(slant)·u), pixel centres at integer
 * coordinates; pixels are point-sampled at their centres, or averaged over `supersample`² sub-points.
 */
import { bandFrame } from '../../src/core/spectrum/band/frame.js';
import { createRandom } from '../../src/core/random.js';
import type { BandGeometry, LinearImage, PointPx } from '../../src/core/types.js';
import { srgbDecodeTable, srgbEncode } from '../../src/core/units/srgb.js';

export type Rgb = [number, number, number];

export interface SynthLine {
  /** Along the band from its start (px). */
  positionPx: number;
  /** Peak value on the centre line before noise (linear, 1 = clip), for the brightest channel weight 1. */
  amplitude: number;
  /** Channel weights; default from the line's place along the band (blue → green → red). */
  rgb?: Rgb;
  /** Gaussian σ along the band (px); default `lineSigmaPx`. */
  sigmaPx?: number;
}

export interface BandImageSpec {
  width: number;
  height: number;
  /** @default 3 */
  channels?: 1 | 3;
  band: BandGeometry;
  lines: SynthLine[];
  /** @default 1.5 */
  lineSigmaPx?: number;
  /** 'tophat': a source image of height heightPx with edges blurred by edgeSigmaPx; 'gaussian': FWHM = heightPx. */
  crossProfile?: 'tophat' | 'gaussian';
  /** @default 1.5 */
  edgeSigmaPx?: number;
  /** Continuum level on the centre line at position p (all channels times its colour). */
  continuum?: (positionPx: number) => number;
  /** Colour of the continuum; default from its place along the band (a rainbow). */
  continuumRgb?: Rgb;
  /** Ambient light a + bx·x + by·y, per channel. */
  ambient?: { level: number; perPxX?: number; perPxY?: number; rgb?: Rgb };
  /** A round zero-order spot (Gaussian) or a bar like the line images (sum of all the lines' colours). */
  zeroOrder?: { center: PointPx; sigmaPx: number; amplitude: number; rgb?: Rgb };
  /** Broad glows (Gaussian blobs). */
  glows?: { center: PointPx; sigmaPx: number; amplitude: number; rgb?: Rgb }[];
  /** Noise: gain in photo-electrons per unit (shot noise) and read noise σ (units). Omit for a noiseless image. */
  noise?: { gain: number; readNoise: number };
  /** Number of single-pixel cosmic-ray hits (value +0.5 in all channels) anywhere in the band's rectangle. */
  cosmics?: number;
  /** Sub-samples per pixel side. @default 1 */
  supersample?: number;
  /** Quantise to 8-bit sRGB and return codes + decode table (the decoder's memory-saving form). @default false */
  codes8?: boolean;
  seed?: number;
}

export interface BandImage {
  image: LinearImage;
  /** Image point of each line on the true centre line. */
  linePoints: PointPx[];
  /** Whether each line's expected peak (with everything under it) reaches the clip level. */
  lineSaturated: boolean[];
}

/** Rough camera colour of a place along the band: t = 0 blue … 1 red. */
export function colourAt(t: number): Rgb {
  const g = (c: number, w: number): number => Math.exp(-0.5 * ((t - c) / w) ** 2);
  const r = g(0.85, 0.2);
  const gg = g(0.5, 0.18);
  const b = g(0.12, 0.18);
  const m = Math.max(r, gg, b);
  return [r / m, gg / m, b / m];
}

export function renderBandImage(spec: BandImageSpec): BandImage {
  const W = spec.width;
  const H = spec.height;
  const C = spec.channels ?? 3;
  const band = spec.band;
  const f = bandFrame(band);
  const sigmaDefault = spec.lineSigmaPx ?? 1.5;
  const edge = spec.edgeSigmaPx ?? 1.5;
  const cross = spec.crossProfile ?? 'tophat';
  const ss = spec.supersample ?? 1;
  const rng = createRandom(spec.seed ?? 1);
  const L = band.lengthPx;
  const lines = spec.lines.map((l) => ({
    ...l,
    rgb: l.rgb ?? colourAt(Math.min(1, Math.max(0, l.positionPx / L))),
    sigmaPx: l.sigmaPx ?? sigmaDefault,
  }));

  // Spectral profile per channel on a fine grid along p.
  const h = 1 / 16;
  const pad = 12 * Math.max(sigmaDefault, ...lines.map((l) => l.sigmaPx)) + 50;
  const p0 = -pad - Math.abs(f.tanSlant) * (band.heightPx + 10 * edge);
  const n = Math.ceil((L + 2 * pad - 2 * p0) / h);
  const spectral = [new Float64Array(n), new Float64Array(n), new Float64Array(n)];
  for (const l of lines) {
    const lo = Math.max(0, Math.floor((l.positionPx - 8 * l.sigmaPx - p0) / h));
    const hi = Math.min(n - 1, Math.ceil((l.positionPx + 8 * l.sigmaPx - p0) / h));
    for (let i = lo; i <= hi; i++) {
      const p = p0 + i * h;
      const g = l.amplitude * Math.exp(-0.5 * ((p - l.positionPx) / l.sigmaPx) ** 2);
      for (let c = 0; c < 3; c++) spectral[c][i] += g * l.rgb[c];
    }
  }
  if (spec.continuum) {
    for (let i = 0; i < n; i++) {
      const p = p0 + i * h;
      const v = spec.continuum(p);
      if (!(v > 0)) continue;
      const rgb = spec.continuumRgb ?? colourAt(Math.min(1, Math.max(0, p / L)));
      for (let c = 0; c < 3; c++) spectral[c][i] += v * rgb[c];
    }
  }
  const crossAt = (q: number): number => {
    if (cross === 'gaussian') {
      const s = band.heightPx / (2 * Math.sqrt(2 * Math.LN2));
      return Math.exp(-0.5 * (q / s) ** 2);
    }
    const a = band.heightPx / 2;
    return 0.5 * (erf((q + a) / (Math.SQRT2 * edge)) - erf((q - a) / (Math.SQRT2 * edge)));
  };
  const qMax = cross === 'gaussian' ? 2 * band.heightPx : band.heightPx / 2 + 6 * edge;

  const mean = new Float64Array(W * H * 3);
  const amb = spec.ambient;
  const ambRgb = amb?.rgb ?? [1, 1, 1];
  const zo = spec.zeroOrder;
  const zoRgb: Rgb = zo?.rgb ?? sumColour(lines);
  const glows = spec.glows ?? [];
  const sub = 1 / ss;
  for (let y = 0; y < H; y++) {
    for (let x = 0; x < W; x++) {
      const a = 3 * (y * W + x);
      for (let sy = 0; sy < ss; sy++) {
        for (let sx = 0; sx < ss; sx++) {
          const X = x + (sx + 0.5) * sub - 0.5;
          const Y = y + (sy + 0.5) * sub - 0.5;
          const dx = X - f.startX;
          const dy = Y - f.startY;
          const q = dx * f.nx + dy * f.ny;
          if (Math.abs(q) <= qMax) {
            const p = dx * f.ux + dy * f.uy + q * f.tanSlant;
            const fi = (p - p0) / h;
            const i0 = Math.floor(fi);
            if (i0 >= 0 && i0 + 1 < n) {
              const t = fi - i0;
              const cq = crossAt(q);
              for (let c = 0; c < 3; c++) mean[a + c] += cq * (spectral[c][i0] * (1 - t) + spectral[c][i0 + 1] * t) * sub * sub;
            }
          }
        }
      }
      if (amb) {
        const v = amb.level + (amb.perPxX ?? 0) * x + (amb.perPxY ?? 0) * y;
        for (let c = 0; c < 3; c++) mean[a + c] += Math.max(0, v) * ambRgb[c];
      }
      if (zo) {
        const r2 = ((x - zo.center.x) ** 2 + (y - zo.center.y) ** 2) / (zo.sigmaPx * zo.sigmaPx);
        if (r2 < 50) for (let c = 0; c < 3; c++) mean[a + c] += zo.amplitude * Math.exp(-0.5 * r2) * zoRgb[c];
      }
      for (const gl of glows) {
        const r2 = ((x - gl.center.x) ** 2 + (y - gl.center.y) ** 2) / (gl.sigmaPx * gl.sigmaPx);
        const rgb = gl.rgb ?? [1, 1, 1];
        if (r2 < 50) for (let c = 0; c < 3; c++) mean[a + c] += gl.amplitude * Math.exp(-0.5 * r2) * rgb[c];
      }
    }
  }

  // Truth before noise: line points and whether their peak pixel clips.
  const linePoints = lines.map((l) => ({ x: f.startX + l.positionPx * f.ux, y: f.startY + l.positionPx * f.uy }));
  const lineSaturated = linePoints.map((pt) => {
    const xi = Math.round(pt.x);
    const yi = Math.round(pt.y);
    if (xi < 0 || yi < 0 || xi >= W || yi >= H) return false;
    const a = 3 * (yi * W + xi);
    return Math.max(mean[a], mean[a + 1], mean[a + 2]) >= 1;
  });

  // Noise, cosmics, clipping.
  const data = new Float32Array(W * H * C);
  const saturated = new Uint8Array(W * H);
  const noise = spec.noise;
  const hits = new Set<number>();
  for (let k = 0; k < (spec.cosmics ?? 0); k++) {
    const p = rng.uniform() * L;
    const q = (rng.uniform() - 0.5) * band.heightPx;
    const x = Math.round(f.startX + p * f.ux + q * f.vx);
    const y = Math.round(f.startY + p * f.uy + q * f.vy);
    if (x >= 0 && y >= 0 && x < W && y < H) hits.add(y * W + x);
  }
  for (let i = 0; i < W * H; i++) {
    let sat = 0;
    const vals = [mean[3 * i], mean[3 * i + 1], mean[3 * i + 2]];
    if (C === 1) {
      vals[0] = (vals[0] + vals[1] + vals[2]) / 3;
      vals.length = 1;
    }
    for (let c = 0; c < C; c++) {
      let v = vals[c];
      if (noise) {
        const e = Math.max(0, v) * noise.gain;
        const counts = e < 30 ? rng.poisson(e) : e + Math.sqrt(e) * rng.normal();
        v = counts / noise.gain + noise.readNoise * rng.normal();
      }
      if (hits.has(i)) v += 0.5;
      if (v >= 1) {
        v = 1;
        sat = 1;
      }
      data[i * C + c] = v;
    }
    saturated[i] = sat;
  }
  if (!spec.codes8) return { image: { width: W, height: H, channels: C, data, saturated }, linePoints, lineSaturated };

  const table = srgbDecodeTable(255);
  const codes = new Uint8Array(W * H * C);
  for (let k = 0; k < codes.length; k++) {
    const v = Math.min(1, Math.max(0, data[k]));
    codes[k] = Math.round(255 * srgbEncode(v));
  }
  // `data` is left out on purpose: a sampler that reads codes must not need it (a getter would hide that).
  const image = { width: W, height: H, channels: C, codes, codeToLinear: table } as unknown as LinearImage;
  Object.defineProperty(image, 'data', {
    get() {
      throw new Error('test image: data read although codes are present');
    },
  });
  Object.defineProperty(image, 'saturated', {
    get() {
      throw new Error('test image: saturated read although codes are present');
    },
  });
  return { image, linePoints, lineSaturated };
}

function sumColour(lines: { amplitude: number; rgb: Rgb }[]): Rgb {
  const s: Rgb = [0, 0, 0];
  for (const l of lines) for (let c = 0; c < 3; c++) s[c] += l.amplitude * l.rgb[c];
  const m = Math.max(...s, 1e-12);
  return [s[0] / m, s[1] / m, s[2] / m];
}

/** erf by Abramowitz & Stegun 7.1.26 (|error| ≤ 1.5e-7), enough for soft edges. */
function erf(x: number): number {
  const s = x < 0 ? -1 : 1;
  const a = Math.abs(x);
  const t = 1 / (1 + 0.3275911 * a);
  const y = 1 - ((((1.061405429 * t - 1.453152027) * t + 1.421413741) * t - 0.284496736) * t + 0.254829592) * t * Math.exp(-a * a);
  return s * y;
}
