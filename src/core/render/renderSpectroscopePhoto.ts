/**
 * Synthesises the photo a camera takes of a light source through a transmission grating: every diffraction order's
 * line images (grating equation + pinhole camera), the zero-order image of the source, stray light, an ambient
 * gradient with vignetting, photon and read noise, full-well clipping. Output is linear light relative to the
 * clipping level, with the ground truth of every line.
 *
 * Geometry (pixel centres at integer coordinates, x right, y down): the dispersion axis runs through the principal
 * point P in direction e = (cos φ, sin φ), φ = band.angleDeg being the direction in which wavelength grows in order
 * +1. A ray of order m at angle θm lands at p = f·tan(θm − θc) along e. The source's image is a stripe of height
 * band.heightPx centred band.offsetPx along the normal n = (−sin φ, cos φ). Line images are straight and sheared by
 * the slant s: their direction is n turned by s towards e's rotation sense (from +x towards +y), so the pixel at
 * axis coordinate p and normal offset v (from the band's centre line) belongs to the line through the centre line at
 * u = p + v·tan s. The band of the truth is order +1 between band.rangeNm; positions run from its blue end.
 *
 * Speed: the 1-D spectra are built on a fine grid once; only the stripe around the band is rendered per pixel, the
 * rest of the frame gets the cheap ambient term and noise.
 */
import { assertFinite, invalid } from '../errors.js';
import type { BandGeometry, LinearImage, PointPx } from '../types.js';
import { dispersionAtPositionNmPerPx, focalLengthPxFrom35mm, positionAtWavelengthPx } from './gratingCamera.js';
import type { GratingCameraModel } from './gratingCamera.js';
import { kernelFwhmPx, lineSpreadKernel } from './lineSpread.js';
import type { SpreadKernel } from './lineSpread.js';
import { ambientFactor, exposeFrame } from './exposeFrame.js';
import { checkSourceSpectrum, continuumDensity, continuumMarkNm } from './scene.js';
import type { SourceSpectrum } from './scene.js';
import { createSensorResponse, DEFAULT_SENSOR_RESPONSE } from './sensor.js';
import type { Rgb, SensorResponseModel } from './sensor.js';

const DEG = Math.PI / 180;

export interface DiffractionOrder {
  order: number;
  /** Fraction of the incident photons diffracted into this order (wavelength-independent here). */
  efficiency: number;
}

export interface RenderOptions {
  /** @default 1920 */
  widthPx: number;
  /** @default 1080 */
  heightPx: number;
  /** What the camera looks at. @default no lines */
  source: SourceSpectrum;
  grating: {
    /** @default 1000 */
    linesPerMm: number;
    /** θi (deg). @default 0 */
    incidenceDeg: number;
    /** Orders drawn and their efficiencies. @default 0: 0.10, +1: 0.30, −1: 0.30, +2: 0.03 */
    orders: DiffractionOrder[];
  };
  camera: {
    /** The focal length, in pixels or as a 35-mm equivalent of this frame. @default 26 mm equivalent */
    focal: { kind: 'px'; focalLengthPx: number } | { kind: '35mm'; focalLength35mmMm: number };
    /** θc (deg) between optical axis and grating normal. @default 34 (order +1 of 560 nm on axis at 1000 l/mm) */
    cameraAngleDeg: number;
    /** Principal point (px). @default the image centre */
    principalPointPx?: PointPx;
  };
  band: {
    /** Direction (deg) in which wavelength grows in order +1, from +x towards +y. @default 0 */
    angleDeg: number;
    /** Slant of the line images relative to the band's normal (deg). @default 0 */
    slantDeg: number;
    /** Offset of the source image's centre from the principal point along the band's normal (px). @default 0 */
    offsetPx: number;
    /** Height of the source image across the dispersion (px). @default 160 */
    heightPx: number;
    /** Wavelengths (nm) of order +1 spanned by the truth band. @default [400, 700] */
    rangeNm: [number, number];
  };
  lineSpread: {
    /** Gaussian blur σ of the optics (px). @default 1.0 */
    sigmaPx: number;
    /** Width of the source image across its length (px): slit or capillary. @default 2.5 */
    slitWidthPx: number;
    /** Radius of the defocus disc (px). @default 0 */
    defocusRadiusPx: number;
  };
  sensor: {
    /** @default DEFAULT_SENSOR_RESPONSE (illustrative) */
    response: SensorResponseModel;
    /** Clipping level (e⁻). @default 10000 */
    fullWellElectrons: number;
    /** Read noise σ (e⁻). @default 3 */
    readNoiseElectrons: number;
    /** false renders the expected signal without photon or read noise. @default true */
    noise: boolean;
  };
  /** Photoelectrons per unit source intensity (at response 1, efficiency 1), or set by the brightest band pixel. */
  exposure:
    | { kind: 'electronsPerIntensity'; electronsPerIntensity: number }
    | { kind: 'brightestPeak'; fractionOfFullWell: number };
  ambient: {
    /** Ambient light at the image centre (e⁻ per pixel per channel). @default {r: 60, g: 60, b: 75} */
    electrons: Rgb;
    /** Relative change of the ambient level across the full width / height. @default {x: 0.3, y: -0.2} */
    gradient: { x: number; y: number };
    /** Fractional fall-off at the image corners (cos⁴-like, modelled as 1 − k·r²). @default 0.25 */
    vignetting: number;
  };
  strayLight: {
    /** Fraction of the light spread as a broad glow around each image. @default 0.02 */
    fraction: number;
    /** Width σ of that glow (px). @default 50 */
    sigmaPx: number;
  };
  /** Wavelengths (nm) over which continua are rendered. @default [350, 850] */
  spectralRangeNm: [number, number];
  /** Seed of the noise. @default 1 */
  seed: number;
}

export const RENDER_DEFAULTS: RenderOptions = {
  widthPx: 1920,
  heightPx: 1080,
  source: { lines: [], continua: [] },
  grating: {
    linesPerMm: 1000,
    incidenceDeg: 0,
    orders: [
      { order: 0, efficiency: 0.1 },
      { order: 1, efficiency: 0.3 },
      { order: -1, efficiency: 0.3 },
      { order: 2, efficiency: 0.03 },
    ],
  },
  camera: { focal: { kind: '35mm', focalLength35mmMm: 26 }, cameraAngleDeg: 34 },
  band: { angleDeg: 0, slantDeg: 0, offsetPx: 0, heightPx: 160, rangeNm: [400, 700] },
  lineSpread: { sigmaPx: 1.0, slitWidthPx: 2.5, defocusRadiusPx: 0 },
  sensor: { response: DEFAULT_SENSOR_RESPONSE, fullWellElectrons: 10000, readNoiseElectrons: 3, noise: true },
  exposure: { kind: 'brightestPeak', fractionOfFullWell: 0.85 },
  ambient: { electrons: { r: 60, g: 60, b: 75 }, gradient: { x: 0.3, y: -0.2 }, vignetting: 0.25 },
  strayLight: { fraction: 0.02, sigmaPx: 50 },
  spectralRangeNm: [350, 850],
  seed: 1,
};

/** Options as callers give them: any top-level group may be partial. */
export type RenderOptionsInput = {
  [K in keyof RenderOptions]?: RenderOptions[K] extends unknown[] | number | string | boolean
    ? RenderOptions[K]
    : K extends 'exposure' | 'source'
      ? RenderOptions[K]
      : Partial<RenderOptions[K]>;
};

export interface TruthLine {
  wavelengthNm: number;
  order: number;
  species?: string;
  /** Relative photon flux given in the source. */
  intensity: number;
  /** Along the band axis from the band's start (px); negative or beyond lengthPx for other orders. */
  positionPx: number;
  /** Where the line crosses the band's centre line (px). */
  imagePx: PointPx;
  /** Whether imagePx lies inside the frame. */
  inFrame: boolean;
  /** Expected photoelectrons of this line alone at its peak pixel, largest channel. */
  peakElectrons: number;
  peakElectronsRgb: Rgb;
  /** The expected signal (all light, no noise) at the line's centre reaches the clipping level in some channel. */
  saturated: boolean;
}

export interface TruthContinuumMark {
  kind: 'gaussianBand' | 'bandHead';
  label?: string;
  /** Band centre or head (nm). */
  wavelengthNm: number;
  order: number;
  positionPx: number;
}

export interface RenderTruth {
  band: BandGeometry;
  /** Every line of every drawn dispersed order (not the zero order: see zeroOrder) that exists; order +1 first, brightest first. */
  lines: TruthLine[];
  /** Centres / heads of band-like continua in order +1. */
  continuumMarks: TruthContinuumMark[];
  zeroOrder: { positionPx: number; imagePx: PointPx; inFrame: boolean; saturated: boolean } | null;
  /** dλ/dx at the band centre, order +1 (nm per px). */
  dispersionNmPerPx: number;
  /** The physical mapping with positions measured from the band's start: wavelengthAtPositionNm(model, x, 1). */
  model: GratingCameraModel;
  linesPerMm: number;
  focalLengthPx: number;
  /** FWHM of a line image along the band (px), from the line-spread kernel. */
  lineFwhmPx: number;
  electronsPerIntensity: number;
  fullWellElectrons: number;
  readNoiseElectrons: number;
  seed: number;
}

export interface RenderedPhoto {
  /** Linear light relative to the clipping level (1 = clipped), RGB, before any encoding. */
  image: LinearImage;
  truth: RenderTruth;
}

function resolveOptions(input: RenderOptionsInput): RenderOptions {
  const d = RENDER_DEFAULTS;
  const o: RenderOptions = {
    widthPx: input.widthPx ?? d.widthPx,
    heightPx: input.heightPx ?? d.heightPx,
    source: input.source ?? d.source,
    grating: { ...d.grating, ...input.grating },
    camera: { ...d.camera, ...input.camera },
    band: { ...d.band, ...input.band },
    lineSpread: { ...d.lineSpread, ...input.lineSpread },
    sensor: { ...d.sensor, ...input.sensor },
    exposure: input.exposure ?? d.exposure,
    ambient: { ...d.ambient, ...input.ambient },
    strayLight: { ...d.strayLight, ...input.strayLight },
    spectralRangeNm: input.spectralRangeNm ?? d.spectralRangeNm,
    seed: input.seed ?? d.seed,
  };
  assertFinite('widthPx', o.widthPx, 2, 20000);
  assertFinite('heightPx', o.heightPx, 2, 20000);
  if (!Number.isInteger(o.widthPx) || !Number.isInteger(o.heightPx)) {
    throw invalid('widthPx/heightPx', 'whole numbers of pixels', `${o.widthPx}×${o.heightPx}`);
  }
  checkSourceSpectrum(o.source);
  assertFinite('grating.linesPerMm', o.grating.linesPerMm, 1, 10000);
  assertFinite('grating.incidenceDeg', o.grating.incidenceDeg, -80, 80);
  if (!Array.isArray(o.grating.orders)) throw invalid('grating.orders', 'an array of {order, efficiency}', o.grating.orders);
  o.grating.orders.forEach((g, i) => {
    if (!Number.isInteger(g.order)) throw invalid(`grating.orders[${i}].order`, 'an integer', g.order);
    assertFinite(`grating.orders[${i}].efficiency`, g.efficiency, 0, 1);
  });
  assertFinite('camera.cameraAngleDeg', o.camera.cameraAngleDeg, -80, 80);
  assertFinite('band.angleDeg', o.band.angleDeg);
  assertFinite('band.slantDeg', o.band.slantDeg, -45, 45);
  assertFinite('band.offsetPx', o.band.offsetPx);
  assertFinite('band.heightPx', o.band.heightPx, 1);
  assertFinite('band.rangeNm[0]', o.band.rangeNm[0], 1);
  assertFinite('band.rangeNm[1]', o.band.rangeNm[1], o.band.rangeNm[0] + 1e-6);
  assertFinite('lineSpread.sigmaPx', o.lineSpread.sigmaPx, 0.3, 100);
  assertFinite('lineSpread.slitWidthPx', o.lineSpread.slitWidthPx, 0, 1000);
  assertFinite('lineSpread.defocusRadiusPx', o.lineSpread.defocusRadiusPx, 0, 200);
  assertFinite('sensor.fullWellElectrons', o.sensor.fullWellElectrons, 1);
  assertFinite('sensor.readNoiseElectrons', o.sensor.readNoiseElectrons, 0);
  if (o.exposure.kind === 'electronsPerIntensity') {
    assertFinite('exposure.electronsPerIntensity', o.exposure.electronsPerIntensity, 0);
  } else if (o.exposure.kind === 'brightestPeak') {
    assertFinite('exposure.fractionOfFullWell', o.exposure.fractionOfFullWell, Number.MIN_VALUE, 1000);
  } else {
    throw invalid('exposure.kind', "'electronsPerIntensity' or 'brightestPeak'", (o.exposure as { kind: unknown }).kind);
  }
  for (const c of ['r', 'g', 'b'] as const) assertFinite(`ambient.electrons.${c}`, o.ambient.electrons[c], 0);
  assertFinite('ambient.gradient.x', o.ambient.gradient.x, -1.9, 1.9);
  assertFinite('ambient.gradient.y', o.ambient.gradient.y, -1.9, 1.9);
  assertFinite('ambient.vignetting', o.ambient.vignetting, 0, 1);
  assertFinite('strayLight.fraction', o.strayLight.fraction, 0, 1);
  assertFinite('strayLight.sigmaPx', o.strayLight.sigmaPx, 1, 1000);
  assertFinite('spectralRangeNm[0]', o.spectralRangeNm[0], 1);
  assertFinite('spectralRangeNm[1]', o.spectralRangeNm[1], o.spectralRangeNm[0] + 1);
  assertFinite('seed', o.seed);
  return o;
}

/** Adds `amount` (per channel) at fractional grid index fi by linear splitting, which keeps the first moment. */
function deposit(grid: Float64Array, n: number, fi: number, r: number, g: number, b: number): void {
  const i0 = Math.floor(fi);
  if (i0 < 0 || i0 + 1 >= n) return;
  const t = fi - i0;
  const a = 3 * i0;
  grid[a] += r * (1 - t);
  grid[a + 1] += g * (1 - t);
  grid[a + 2] += b * (1 - t);
  grid[a + 3] += r * t;
  grid[a + 4] += g * t;
  grid[a + 5] += b * t;
}

/** Convolves an interleaved RGB grid with a centred kernel. */
function convolveRgb(grid: Float64Array, n: number, kernel: Float64Array): Float64Array {
  const half = (kernel.length - 1) / 2;
  const out = new Float64Array(grid.length);
  for (let i = 0; i < n; i++) {
    const r = grid[3 * i];
    const g = grid[3 * i + 1];
    const b = grid[3 * i + 2];
    if (r === 0 && g === 0 && b === 0) continue;
    const lo = Math.max(0, i - half);
    const hi = Math.min(n - 1, i + half);
    for (let j = lo; j <= hi; j++) {
      const w = kernel[j - i + half];
      out[3 * j] += r * w;
      out[3 * j + 1] += g * w;
      out[3 * j + 2] += b * w;
    }
  }
  return out;
}

function gaussianKernel(sigma: number, step: number): Float64Array {
  const half = Math.ceil((4 * sigma) / step);
  const k = new Float64Array(2 * half + 1);
  let sum = 0;
  for (let i = -half; i <= half; i++) sum += k[i + half] = Math.exp(-0.5 * ((i * step) / sigma) ** 2);
  for (let i = 0; i < k.length; i++) k[i] /= sum;
  return k;
}

/** Linear interpolation of channel c of an interleaved grid at fractional index fi (0 outside). */
function sample3(grid: Float64Array, n: number, fi: number, c: number): number {
  const i0 = Math.floor(fi);
  if (i0 < 0 || i0 + 1 >= n) return 0;
  const t = fi - i0;
  return grid[3 * i0 + c] * (1 - t) + grid[3 * i0 + 3 + c] * t;
}

/** Truth lists order +1 first, then +2, −1 and the rest. */
function orderRank(order: number): number {
  return order === 1 ? 0 : order === 2 ? 1 : order === -1 ? 2 : 3 + Math.abs(order);
}

function normalizeAngleDeg(a: number): number {
  let r = a % 360;
  if (r <= -180) r += 360;
  if (r > 180) r -= 360;
  return r;
}

/** What drawStripe needs: the frame, the band's axes, and the 1-D profiles to spread over the stripe. */
interface StripeInput {
  widthPx: number;
  heightPx: number;
  /** Principal point. */
  originX: number;
  originY: number;
  cosP: number;
  sinP: number;
  tanS: number;
  offsetPx: number;
  /** Half-height of the stripe drawn (px from the centre line). */
  vMax: number;
  /** Line images along u (interleaved RGB density per px, per unit exposure). */
  core: { grid: Float64Array; n: number; start: number; step: number };
  /** Profile across the band (density per px). */
  vProfile: { grid: Float64Array; start: number; step: number };
  /** Stray-light glow along p on a 1-px grid (cell i centred at start + i), spread as N(0, σ) across. */
  stray: { grid: Float64Array; n: number; start: number; sigmaPx: number } | null;
  /** Electrons per unit intensity. */
  scale: number;
}

/** Adds the band's expected electrons to `mean` over the stripe |v| ≤ vMax. */
function drawStripe(mean: Float32Array, s: StripeInput): void {
  const W = s.widthPx;
  const H = s.heightPx;
  const { cosP, sinP, tanS, offsetPx: q0, vMax, originX, originY, scale } = s;
  const core = s.core.grid;
  const nCore = s.core.n;
  const coreStart = s.core.start;
  const invCoreStep = 1 / s.core.step;
  const vGrid = s.vProfile.grid;
  const nV = vGrid.length;
  const vCoreMax = -s.vProfile.start;
  const invVStep = 1 / s.vProfile.step;
  const hasStray = s.stray !== null;
  const strayGrid = s.stray?.grid ?? new Float64Array(0);
  const strayN = s.stray?.n ?? 0;
  const strayStart = s.stray?.start ?? 0;
  // The glow's profile across the band, N(0, σ) tabulated every 1/4 px.
  const strayStep = 0.25;
  const strayProfile = new Float64Array(hasStray ? Math.ceil((2 * vMax) / strayStep) + 2 : 0);
  if (hasStray) {
    const sigma = s.stray!.sigmaPx;
    for (let i = 0; i < strayProfile.length; i++) {
      const v = i * strayStep - vMax;
      strayProfile[i] = (Math.exp((-0.5 * v * v) / (sigma * sigma)) / (sigma * Math.sqrt(2 * Math.PI))) * scale;
    }
  }
  const nStrayProfile = strayProfile.length;
  for (let y = 0; y < H; y++) {
    const dy = y - originY;
    // x range where |v| ≤ vMax, v = −dx·sinφ + dy·cosφ − q0.
    let xLo = 0;
    let xHi = W - 1;
    if (Math.abs(sinP) > 1e-12) {
      const a = (dy * cosP - q0 - vMax) / sinP;
      const b = (dy * cosP - q0 + vMax) / sinP;
      xLo = Math.max(0, Math.floor(Math.min(a, b) + originX));
      xHi = Math.min(W - 1, Math.ceil(Math.max(a, b) + originX));
    } else if (Math.abs(dy * cosP - q0) > vMax) {
      continue;
    }
    for (let x = xLo; x <= xHi; x++) {
      const dx = x - originX;
      const v = -dx * sinP + dy * cosP - q0;
      if (v > vMax || v < -vMax) continue;
      const p = dx * cosP + dy * sinP;
      const a = 3 * (y * W + x);
      if (v < vCoreMax && v > -vCoreMax) {
        const vf = (v + vCoreMax) * invVStep;
        const vi = Math.floor(vf);
        const vt = vf - vi;
        const vd = (vGrid[vi] * (1 - vt) + (vi + 1 < nV ? vGrid[vi + 1] : 0) * vt) * scale;
        if (vd > 0) {
          const f = (p + v * tanS - coreStart) * invCoreStep;
          const i0 = Math.floor(f);
          if (i0 >= 0 && i0 + 1 < nCore) {
            const t = f - i0;
            const u = 1 - t;
            const j = 3 * i0;
            mean[a] += (core[j] * u + core[j + 3] * t) * vd;
            mean[a + 1] += (core[j + 1] * u + core[j + 4] * t) * vd;
            mean[a + 2] += (core[j + 2] * u + core[j + 5] * t) * vd;
          }
        }
      }
      if (hasStray) {
        const f = p - strayStart;
        const i0 = Math.floor(f);
        if (i0 >= 0 && i0 + 1 < strayN) {
          const sf = (v + vMax) / strayStep;
          const si = Math.floor(sf);
          const st = sf - si;
          const sv = strayProfile[si] * (1 - st) + (si + 1 < nStrayProfile ? strayProfile[si + 1] : 0) * st;
          const t = f - i0;
          const u = 1 - t;
          const j = 3 * i0;
          mean[a] += (strayGrid[j] * u + strayGrid[j + 3] * t) * sv;
          mean[a + 1] += (strayGrid[j + 1] * u + strayGrid[j + 4] * t) * sv;
          mean[a + 2] += (strayGrid[j + 2] * u + strayGrid[j + 5] * t) * sv;
        }
      }
    }
  }
}

/** Continua times the sensor response, per channel, on a uniform wavelength grid (photons per cell). */
interface SampledContinuum {
  startNm: number;
  stepNm: number;
  /** Interleaved R, G, B per wavelength cell (relative photoelectrons in the cell). */
  rgb: Float64Array;
  count: number;
}

/**
 * Samples the continua once for all orders, with a step small enough that no order moves more than half a grid cell
 * per step (the smallest |dλ/dx| over the orders drawn, at the range's ends and centre).
 */
function sampleContinuum(
  source: SourceSpectrum,
  response: (l: number) => Rgb,
  [lo, hi]: [number, number],
  model: GratingCameraModel,
  orders: DiffractionOrder[],
  h: number,
): SampledContinuum | null {
  const densities = (source.continua ?? []).map(continuumDensity);
  if (densities.length === 0) return null;
  let stepNm = 0.25;
  for (const { order, efficiency } of orders) {
    if (order === 0 || efficiency === 0) continue;
    for (const l of [lo, (lo + hi) / 2, hi]) {
      const p = positionAtWavelengthPx(model, l, order);
      if (p === null) continue;
      stepNm = Math.min(stepNm, Math.max(1e-3, 0.5 * h * Math.abs(dispersionAtPositionNmPerPx(model, p, order))));
    }
  }
  const count = Math.ceil((hi - lo) / stepNm);
  stepNm = (hi - lo) / count;
  const rgb = new Float64Array(3 * count);
  for (let i = 0; i < count; i++) {
    const l = lo + (i + 0.5) * stepNm;
    let sum = 0;
    for (const d of densities) sum += d(l);
    if (sum === 0) continue;
    const r = response(l);
    rgb[3 * i] = sum * stepNm * r.r;
    rgb[3 * i + 1] = sum * stepNm * r.g;
    rgb[3 * i + 2] = sum * stepNm * r.b;
  }
  return { startNm: lo, stepNm, rgb, count };
}

/** Deposits a sampled continuum in one order: x = f·tan(θm − θc), sin θm = mλ/d − sin θi (inlined for speed). */
function depositContinuum(
  grid: Float64Array,
  n: number,
  gridStart: number,
  h: number,
  c: SampledContinuum,
  model: GratingCameraModel,
  order: number,
  efficiency: number,
): void {
  const d = 1e6 / model.linesPerMm;
  const sinI = Math.sin(model.incidenceDeg * DEG);
  const thetaC = model.cameraAngleDeg * DEG;
  const limit = 89 * DEG;
  for (let i = 0; i < c.count; i++) {
    const l = c.startNm + (i + 0.5) * c.stepNm;
    const s = (order * l) / d - sinI;
    if (Math.abs(s) > 1) continue;
    const off = Math.asin(s) - thetaC;
    if (Math.abs(off) >= limit) continue;
    const p = model.principalPositionPx + model.focalLengthPx * Math.tan(off);
    const a = 3 * i;
    deposit(grid, n, (p - gridStart) / h, c.rgb[a] * efficiency, c.rgb[a + 1] * efficiency, c.rgb[a + 2] * efficiency);
  }
}

/** Renders a grating-spectroscope photo and its ground truth. Deterministic for a given seed. */
export function renderSpectroscopePhoto(input: RenderOptionsInput = {}): RenderedPhoto {
  const o = resolveOptions(input);
  const W = o.widthPx;
  const H = o.heightPx;
  const pp = o.camera.principalPointPx ?? { x: (W - 1) / 2, y: (H - 1) / 2 };
  assertFinite('camera.principalPointPx.x', pp.x);
  assertFinite('camera.principalPointPx.y', pp.y);
  const focalLengthPx =
    o.camera.focal.kind === 'px'
      ? o.camera.focal.focalLengthPx
      : focalLengthPxFrom35mm({ focalLength35mmMm: o.camera.focal.focalLength35mmMm, widthPx: W, heightPx: H });
  assertFinite('camera.focal', focalLengthPx, 1);
  // Positions p along the axis, relative to the principal point's projection.
  const axisModel: GratingCameraModel = {
    linesPerMm: o.grating.linesPerMm,
    incidenceDeg: o.grating.incidenceDeg,
    cameraAngleDeg: o.camera.cameraAngleDeg,
    focalLengthPx,
    principalPositionPx: 0,
  };
  const [bandLoNm, bandHiNm] = o.band.rangeNm;
  const pLo = positionAtWavelengthPx(axisModel, bandLoNm, 1);
  const pHi = positionAtWavelengthPx(axisModel, bandHiNm, 1);
  if (pLo === null || pHi === null) {
    throw invalid('band.rangeNm', 'wavelengths that order +1 of this grating sends into the camera', o.band.rangeNm);
  }

  const phi = o.band.angleDeg * DEG;
  const cosP = Math.cos(phi);
  const sinP = Math.sin(phi);
  const tanS = Math.tan(o.band.slantDeg * DEG);
  const cosS = Math.cos(o.band.slantDeg * DEG);
  const q0 = o.band.offsetPx;
  const h = 0.125;

  // Spread along u (the centre-line coordinate): the line's own profile across its direction, stretched by 1/cos s,
  // then the pixel's footprint, the unit square projected on u = p + v·tan s (gradient g below).
  const gx = cosP - tanS * sinP;
  const gy = sinP + tanS * cosP;
  const { sigmaPx, slitWidthPx, defocusRadiusPx } = o.lineSpread;
  const kernelU: SpreadKernel = lineSpreadKernel({
    stepPx: h,
    sigmaPx: sigmaPx / cosS,
    widthPx: slitWidthPx / cosS,
    defocusRadiusPx: defocusRadiusPx / cosS,
    footprintPx: [Math.abs(gx), Math.abs(gy)],
  });
  const lineFwhmPx = kernelFwhmPx(kernelU);
  // Profile across the band (v): the source's height ⊗ blur ⊗ defocus ⊗ the pixel footprint along n.
  const kernelV = lineSpreadKernel({
    stepPx: h,
    sigmaPx,
    widthPx: o.band.heightPx,
    defocusRadiusPx,
    footprintPx: [Math.abs(sinP), Math.abs(cosP)],
  });
  const vDensity = new Float64Array(kernelV.weights.length);
  for (let i = 0; i < vDensity.length; i++) vDensity[i] = kernelV.weights[i] / h;
  const vStart = -kernelV.half * h;
  const vCoreMax = kernelV.half * h;
  const vPeak = vDensity[kernelV.half];

  const stray = o.strayLight.fraction;
  const straySigma = o.strayLight.sigmaPx;
  const vStrayMax = stray > 0 ? 3.5 * straySigma : 0;
  const vMax = Math.max(vCoreMax, vStrayMax);

  // Axis range that the frame can show, widened by the shear and the kernels.
  const corners = [
    [-0.5, -0.5],
    [W - 0.5, -0.5],
    [-0.5, H - 0.5],
    [W - 0.5, H - 0.5],
  ].map(([x, y]) => (x - pp.x) * cosP + (y - pp.y) * sinP);
  const margin = kernelU.half * h + Math.abs(tanS) * vMax + 4 * straySigma + 4;
  const gridStart = Math.min(...corners) - margin;
  const gridEnd = Math.max(...corners) + margin;
  const n = Math.ceil((gridEnd - gridStart) / h) + 2;
  const raw = new Float64Array(3 * n);
  const toIndex = (p: number): number => (p - gridStart) / h;

  const response = createSensorResponse(o.sensor.response);
  const continuum = sampleContinuum(o.source, response, o.spectralRangeNm, axisModel, o.grating.orders, h);

  interface PlacedLine {
    line: SourceSpectrum['lines'][number];
    order: number;
    p: number;
    amp: Rgb;
  }
  const placed: PlacedLine[] = [];
  let zeroP: number | null = null;
  for (const { order, efficiency } of o.grating.orders) {
    if (order === 0) {
      zeroP = positionAtWavelengthPx(axisModel, 550, 0);
      if (zeroP === null || efficiency === 0) continue;
    }
    for (const line of o.source.lines) {
      const p = positionAtWavelengthPx(axisModel, line.wavelengthNm, order);
      if (p === null) continue;
      const rgb = response(line.wavelengthNm);
      const k = line.intensity * efficiency;
      const amp = { r: k * rgb.r, g: k * rgb.g, b: k * rgb.b };
      placed.push({ line, order, p, amp });
      deposit(raw, n, toIndex(p), amp.r, amp.g, amp.b);
    }
    if (continuum && efficiency > 0) depositContinuum(raw, n, gridStart, h, continuum, axisModel, order, efficiency);
  }

  // Core profile (density per px along u, per unit exposure) and stray-light profile on a 1-px grid.
  const core = convolveRgb(raw, n, kernelU.weights);
  for (let i = 0; i < core.length; i++) core[i] *= (1 - stray) / h;
  let strayGrid: Float64Array = new Float64Array(0);
  let strayN = 0;
  const strayStart = gridStart;
  if (stray > 0) {
    strayN = Math.ceil(n * h) + 2;
    const coarse = new Float64Array(3 * strayN);
    for (let i = 0; i < n; i++) {
      const j = Math.floor(i * h);
      coarse[3 * j] += raw[3 * i];
      coarse[3 * j + 1] += raw[3 * i + 1];
      coarse[3 * j + 2] += raw[3 * i + 2];
    }
    strayGrid = convolveRgb(coarse, strayN, gaussianKernel(straySigma, 1));
    // Per px along the axis, times a normal density across it.
    for (let i = 0; i < strayGrid.length; i++) strayGrid[i] *= stray;
  }
  const strayV = (v: number): number => Math.exp(-0.5 * (v / straySigma) ** 2) / (straySigma * Math.sqrt(2 * Math.PI));
  // Coarse cell j holds raw cells [j/h, (j+1)/h): its centre is at gridStart + j + 0.5 − h/2.
  const strayIndex = (p: number): number => p - strayStart - 0.5 + h / 2;

  // Exposure.
  let electronsPerIntensity: number;
  if (o.exposure.kind === 'electronsPerIntensity') {
    electronsPerIntensity = o.exposure.electronsPerIntensity;
  } else {
    let peak = 0;
    const i0 = Math.max(0, Math.floor(toIndex(pLo)));
    const i1 = Math.min(n - 1, Math.ceil(toIndex(pHi)));
    for (let i = i0; i <= i1; i++) {
      for (let c = 0; c < 3; c++) peak = Math.max(peak, core[3 * i + c] * vPeak);
    }
    if (!(peak > 0)) throw invalid('exposure', 'a source with light in the band (brightestPeak needs one)', 'a dark band');
    electronsPerIntensity = (o.exposure.fractionOfFullWell * o.sensor.fullWellElectrons) / peak;
  }

  // Expected electrons from the source (the stripe around the band); the ambient term is added with the noise.
  const mean = new Float32Array(W * H * 3);
  const amb = o.ambient;
  const ambientAt = (x: number, y: number): number =>
    ambientFactor({ widthPx: W, heightPx: H, ambient: amb, fullWellElectrons: 1, readNoiseElectrons: 0, noise: false, seed: 0 }, x, y);
  const e = electronsPerIntensity;
  drawStripe(mean, {
    widthPx: W,
    heightPx: H,
    originX: pp.x,
    originY: pp.y,
    cosP,
    sinP,
    tanS,
    offsetPx: q0,
    vMax,
    core: { grid: core, n, start: gridStart, step: h },
    vProfile: { grid: vDensity, start: vStart, step: h },
    stray: stray > 0 ? { grid: strayGrid, n: strayN, start: strayStart + 0.5 - h / 2, sigmaPx: straySigma } : null,
    scale: e,
  });

  // Ground truth, from the expected signal.
  const fullWell = o.sensor.fullWellElectrons;
  const origin = { x: pp.x + q0 * -sinP, y: pp.y + q0 * cosP };
  const imageAt = (p: number): PointPx => ({ x: origin.x + p * cosP, y: origin.y + p * sinP });
  const inFrame = (pt: PointPx): boolean => pt.x >= -0.5 && pt.x <= W - 0.5 && pt.y >= -0.5 && pt.y <= H - 0.5;
  const expectedAt = (p: number, c: number): number => {
    const pt = imageAt(p);
    const ambient = [amb.electrons.r, amb.electrons.g, amb.electrons.b][c] * ambientAt(pt.x, pt.y);
    const strayPart = stray > 0 ? sample3(strayGrid, strayN, strayIndex(p), c) * strayV(0) * e : 0;
    return sample3(core, n, toIndex(p), c) * vPeak * e + strayPart + ambient;
  };
  const saturatedAt = (p: number): boolean => [0, 1, 2].some((c) => expectedAt(p, c) >= fullWell);
  const peakScale = (kernelU.weights[kernelU.half] / h) * vPeak * e * (1 - stray);
  const lines: TruthLine[] = placed
    .filter(({ order }) => order !== 0)
    .map(({ line, order, p, amp }) => {
      const pt = imageAt(p);
      const peakRgb = { r: amp.r * peakScale, g: amp.g * peakScale, b: amp.b * peakScale };
      return {
        wavelengthNm: line.wavelengthNm,
        order,
        ...(line.species !== undefined ? { species: line.species } : {}),
        intensity: line.intensity,
        positionPx: p - pLo,
        imagePx: pt,
        inFrame: inFrame(pt),
        peakElectrons: Math.max(peakRgb.r, peakRgb.g, peakRgb.b),
        peakElectronsRgb: peakRgb,
        saturated: inFrame(pt) && saturatedAt(p),
      };
    })
    .sort((a, b) => orderRank(a.order) - orderRank(b.order) || b.peakElectrons - a.peakElectrons);

  const continuumMarks: TruthContinuumMark[] = [];
  for (const c of o.source.continua ?? []) {
    const mark = continuumMarkNm(c);
    if (mark === null || (c.kind !== 'gaussianBand' && c.kind !== 'bandHead')) continue;
    const p = positionAtWavelengthPx(axisModel, mark, 1);
    if (p === null) continue;
    continuumMarks.push({ kind: c.kind, ...(c.label ? { label: c.label } : {}), wavelengthNm: mark, order: 1, positionPx: p - pLo });
  }

  const zeroOrderEfficiency = o.grating.orders.find((g) => g.order === 0)?.efficiency ?? 0;
  const zeroOrder =
    zeroP !== null && zeroOrderEfficiency > 0
      ? { positionPx: zeroP - pLo, imagePx: imageAt(zeroP), inFrame: inFrame(imageAt(zeroP)), saturated: inFrame(imageAt(zeroP)) && saturatedAt(zeroP) }
      : null;

  // Ambient light, noise and clipping (in place: expected electrons → relative linear light).
  const saturated = exposeFrame(mean, {
    widthPx: W,
    heightPx: H,
    ambient: amb,
    fullWellElectrons: fullWell,
    readNoiseElectrons: o.sensor.readNoiseElectrons,
    noise: o.sensor.noise,
    seed: o.seed,
  });
  const data = mean;
  const read = o.sensor.readNoiseElectrons;

  const pMid = (pLo + pHi) / 2;
  const center = imageAt(pMid);
  const truth: RenderTruth = {
    band: {
      angleDeg: normalizeAngleDeg(o.band.angleDeg),
      slantDeg: o.band.slantDeg,
      center,
      lengthPx: pHi - pLo,
      heightPx: o.band.heightPx,
    },
    lines,
    continuumMarks,
    zeroOrder,
    dispersionNmPerPx: dispersionAtPositionNmPerPx(axisModel, pMid, 1),
    model: { ...axisModel, principalPositionPx: -pLo },
    linesPerMm: o.grating.linesPerMm,
    focalLengthPx,
    lineFwhmPx,
    electronsPerIntensity,
    fullWellElectrons: fullWell,
    readNoiseElectrons: read,
    seed: o.seed,
  };
  return { image: { width: W, height: H, channels: 3, data, saturated }, truth };
}
