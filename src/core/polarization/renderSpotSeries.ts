import { assertFinite, invalid } from '../errors.js';
import { createRandom } from '../random.js';
import { srgbDecode } from '../units/srgb.js';
import { toRad } from './angles.js';
import { withDefaults } from './options.js';

/**
 * Renders the photos a phone would take of a laser spot on a white card behind a rotating analyser: a Gaussian spot
 * with a faint scattering halo and a static speckle texture, ambient light on the card with a gentle gradient,
 * shot and read noise, clipping at the sensor's maximum, sRGB encoding and 8-bit quantisation. For the demo data and
 * the recovery tests only (seeded); nothing a user measures comes from here.
 */
export interface SpotSeriesScene {
  /** Analyser angles, one frame each (deg). */
  anglesDeg: readonly number[];
  /** True degree of linear polarization of the beam. @default 0.998 */
  dolp?: number;
  /** True azimuth of the beam's polarization on the analyser's scale (deg). @default 30 */
  azimuthDeg?: number;
  /** Extinction ratio of the analyser (k1/k2); Infinity for an ideal one. @default Infinity */
  extinctionRatio?: number;
  /** @default 320 */
  widthPx?: number;
  /** @default 240 */
  heightPx?: number;
  /** Spot centre (px). @default the frame centre, offset a little */
  center?: { x: number; y: number };
  /** Gaussian σ of the spot (px). @default 6 */
  spotSigmaPx?: number;
  /**
   * Linear value of the red channel at the spot's centre at maximum transmission (before noise). Above ~1 the bright
   * frames clip (the speckle peaks reach ~1.7× the mean). @default 0.45
   */
  peakLinear?: number;
  /** Ambient light on the card (linear, per channel, before the gradient). @default 0.02 */
  ambientLinear?: number;
  /** Full-well-like scale for shot noise: variance = value / shotScale. @default 4000 */
  shotScale?: number;
  /** Read noise (linear σ per channel). @default 0.0015 */
  readNoise?: number;
  /** Relative frame-to-frame fluctuation of the laser power (σ). @default 0.002 */
  powerJitter?: number;
  /** Exposure of each frame relative to the first (auto exposure); the spot and ambient scale with it. @default all 1 */
  relativeExposure?: readonly number[];
  seed?: number;
}

export const SPOT_SERIES_DEFAULTS = {
  dolp: 0.998,
  azimuthDeg: 30,
  extinctionRatio: Infinity,
  widthPx: 320,
  heightPx: 240,
  spotSigmaPx: 6,
  peakLinear: 0.45,
  ambientLinear: 0.02,
  shotScale: 4000,
  readNoise: 0.0015,
  powerJitter: 0.002,
  seed: 1,
} as const;

/** Colour of a red HeNe spot as a phone's sensor sees it (crosstalk into green and blue), relative to red. */
const SPOT_RGB = [1, 0.1, 0.07] as const;
/** Tint of the card under warm room light. */
const AMBIENT_RGB = [1, 0.92, 0.8] as const;

export interface RenderedFrame {
  angleDeg: number;
  widthPx: number;
  heightPx: number;
  /** 8-bit sRGB, RGB interleaved. */
  rgb: Uint8Array;
  /** The spot's true relative power in this frame (transmission × jitter × exposure), for checks. */
  relativeSignal: number;
}

export function renderSpotSeries(scene: SpotSeriesScene): RenderedFrame[] {
  const s = withDefaults(SPOT_SERIES_DEFAULTS, scene) as Required<Omit<SpotSeriesScene, 'center' | 'relativeExposure'>> &
    SpotSeriesScene;
  assertFinite('dolp', s.dolp, 0, 1);
  assertFinite('peakLinear', s.peakLinear, 0);
  if (!(s.extinctionRatio > 1)) throw invalid('extinctionRatio', 'a number greater than 1', s.extinctionRatio);
  if (s.relativeExposure && s.relativeExposure.length !== s.anglesDeg.length) {
    throw invalid('relativeExposure', `one value per angle (${s.anglesDeg.length})`, s.relativeExposure);
  }
  const w = s.widthPx;
  const h = s.heightPx;
  const cx = s.center?.x ?? w * 0.53;
  const cy = s.center?.y ?? h * 0.47;
  const rnd = createRandom(s.seed);
  // Static speckle: exponential intensities smoothed over ~2 px (a fully developed pattern seen by a small pupil).
  const raw = new Float32Array(w * h);
  for (let i = 0; i < raw.length; i++) raw[i] = -Math.log(1 - rnd.uniform());
  const speckle = new Float32Array(w * h);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      let acc = 0;
      let cnt = 0;
      for (let dy = -2; dy <= 2; dy++) {
        for (let dx = -2; dx <= 2; dx++) {
          const xx = x + dx;
          const yy = y + dy;
          if (xx < 0 || yy < 0 || xx >= w || yy >= h) continue;
          acc += raw[yy * w + xx];
          cnt++;
        }
      }
      speckle[y * w + x] = acc / cnt;
    }
  }
  // Spot profile: Gaussian core plus a 2 % halo three times wider (light diffusing in the card).
  const profile = new Float32Array(w * h);
  const sig2 = 2 * s.spotSigmaPx ** 2;
  const halo2 = 2 * (3 * s.spotSigmaPx) ** 2;
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const r2 = (x - cx) ** 2 + (y - cy) ** 2;
      profile[y * w + x] = (Math.exp(-r2 / sig2) + 0.02 * Math.exp(-r2 / halo2)) * speckle[y * w + x];
    }
  }
  const k = Number.isFinite(s.extinctionRatio) ? (s.extinctionRatio - 1) / (s.extinctionRatio + 1) : 1;
  return s.anglesDeg.map((angleDeg, f) => {
    const exposure = s.relativeExposure?.[f] ?? 1;
    // Malus's law for partially polarized light behind an analyser of finite extinction (normalised to 1 at maximum).
    const transmission = (1 + k * s.dolp * Math.cos(2 * toRad(angleDeg - s.azimuthDeg))) / (1 + k * s.dolp);
    const jitter = 1 + s.powerJitter * rnd.normal();
    const signal = transmission * jitter * exposure;
    const rgb = new Uint8Array(w * h * 3);
    for (let y = 0; y < h; y++) {
      const gradient = 1 + 0.25 * (y / h - 0.5);
      for (let x = 0; x < w; x++) {
        const i = y * w + x;
        for (let c = 0; c < 3; c++) {
          const mean = s.peakLinear * signal * SPOT_RGB[c] * profile[i] + s.ambientLinear * exposure * gradient * AMBIENT_RGB[c];
          const value = mean + Math.sqrt(Math.max(mean, 0) / s.shotScale) * rnd.normal() + s.readNoise * rnd.normal();
          rgb[i * 3 + c] = encode8(value);
        }
      }
    }
    return { angleDeg, widthPx: w, heightPx: h, rgb, relativeSignal: signal };
  });
}

/**
 * Linear light → 8-bit sRGB code, round(255 · encode(L)) clipped to 0…255, by binary search over the exact decision
 * levels decode((c − ½)/255) (the same result as the formula, without a power per sample).
 */
function encode8(linear: number): number {
  if (!(linear > LEVELS[1])) return 0;
  if (linear >= LEVELS[255]) return 255;
  let lo = 1;
  let hi = 255;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (linear >= LEVELS[mid]) lo = mid;
    else hi = mid;
  }
  return lo;
}

/** LEVELS[c] = the linear value from which the code is c: decode((c − ½)/255). */
const LEVELS: Float64Array = (() => {
  const t = new Float64Array(256);
  for (let c = 1; c < 256; c++) t[c] = srgbDecode((c - 0.5) / 255);
  return t;
})();
