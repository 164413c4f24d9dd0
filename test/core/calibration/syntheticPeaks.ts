/**
 * Seeded synthetic peak tables for calibration tests: a lamp's lines seen through a random grating + pinhole camera
 * (the physical model of gratingModel.ts), with the peak colours of the renderer's illustrative sensor response,
 * lines lost below a detection threshold or at random, extra peaks (stray light, second order), position noise, and
 * either dispersion direction. The truth comes back with the peaks.
 */
import type { GratingModel } from '../../../src/core/calibration/gratingModel.js';
import { gratingWavelengthNm } from '../../../src/core/calibration/gratingModel.js';
import { createRandom, type Random } from '../../../src/core/random.js';
import { createSensorResponse } from '../../../src/core/render/sensor.js';
import type { Peak, SpectralLine } from '../../../src/core/types.js';

export interface SyntheticOptions {
  /** Dispersion at the centre of the visible lines, |dλ/dx| (nm/px), drawn log-uniformly from this interval. */
  dispersionNmPerPx: [number, number];
  /** Line density (lines/mm) drawn uniformly from this interval. */
  linesPerMm: [number, number];
  /** Position noise σ (px) drawn uniformly from this interval. */
  noisePx: [number, number];
  /** Extra (unrelated) peaks as a fraction of the true ones, drawn uniformly. */
  extraFraction: [number, number];
  /** Fraction of detectable lines lost at random. */
  dropFraction: number;
  /** Detection threshold on relative brightness (intensity × sensor response), drawn log-uniformly. */
  threshold: [number, number];
  /** Sensor width (px). */
  widthPx: number;
  /** Wavelength at the sensor centre drawn from this interval (nm); coverage follows from the dispersion. */
  centreNm: [number, number];
  /** Include peak colours. */
  colour: boolean;
  /** Line FWHM (px) drawn uniformly from this interval. */
  fwhmPx: [number, number];
  /**
   * A camera drawn instead of a dispersion: one of these sensors (its width replaces `widthPx`) and a 35-mm-equivalent
   * focal length drawn log-uniformly, f = f35 · diagonal / 43.27 mm; the dispersion then follows from the grating
   * (d cos β / f). Null: the dispersion is drawn from `dispersionNmPerPx` and f follows from it.
   */
  camera: { sensors: ReadonlyArray<{ widthPx: number; heightPx: number }>; focal35mmMm: [number, number] } | null;
  /**
   * Order-2 images: each line also appears where the order-1 scale reads 2λ, at this fraction of its order-1
   * brightness (drawn uniformly per case; a transmission grating sends ~3–30 % of order 1's flux into order 2, common
   * practice, no source), if above the detection threshold and not on an order-1 peak. They are drawn after
   * everything else, so a case's order-1 peaks and extras are the same with and without them. null: none.
   */
  secondOrder: [number, number] | null;
}

export const SYNTHETIC_DEFAULTS: SyntheticOptions = {
  dispersionNmPerPx: [0.05, 2],
  linesPerMm: [300, 1200],
  noisePx: [0.03, 0.3],
  extraFraction: [0, 0.4],
  dropFraction: 0.15,
  threshold: [0.01, 0.08],
  widthPx: 1920,
  centreNm: [450, 650],
  colour: true,
  fwhmPx: [2, 6],
  camera: null,
  secondOrder: null,
};

export interface SyntheticCase {
  peaks: Peak[];
  /** For each peak: the true air wavelength, or null for an extra peak. */
  truthNm: (number | null)[];
  truth: GratingModel;
  /** Noise σ used (px). */
  noisePx: number;
  /** The sensor (px): `widthPx` × a 16:9 height unless a camera was drawn. */
  sensor: { widthPx: number; heightPx: number };
  /** |dλ/dx| at the sensor centre (nm/px). */
  centreDispersionNmPerPx: number;
}

const sensor = createSensorResponse();

function uniform(rng: Random, [lo, hi]: [number, number]): number {
  return lo + (hi - lo) * rng.uniform();
}

/** Position (px) of wavelength λ under the model, by bisection over a wide window; null when outside. */
function positionOf(model: GratingModel, lambda: number, lo: number, hi: number): number | null {
  let a = lo;
  let b = hi;
  let fa = gratingWavelengthNm(model, a) - lambda;
  const fb = gratingWavelengthNm(model, b) - lambda;
  if (!Number.isFinite(fa) || !Number.isFinite(fb) || Math.sign(fa) === Math.sign(fb)) return null;
  for (let k = 0; k < 70; k++) {
    const m = (a + b) / 2;
    const fm = gratingWavelengthNm(model, m) - lambda;
    if (Math.sign(fm) === Math.sign(fa)) {
      a = m;
      fa = fm;
    } else b = m;
  }
  return (a + b) / 2;
}

export function syntheticCase(seed: number, lines: readonly SpectralLine[], options: Partial<SyntheticOptions> = {}): SyntheticCase {
  const base = { ...SYNTHETIC_DEFAULTS, ...options };
  const rng = createRandom(seed);
  const lpm = uniform(rng, base.linesPerMm);
  const d = 1e6 / lpm;
  const [dlo, dhi] = base.dispersionNmPerPx;
  const logUniform = ([lo, hi]: [number, number]) => Math.exp(Math.log(lo) + (Math.log(hi) - Math.log(lo)) * rng.uniform());
  const drawnDisp = logUniform([dlo, dhi]);
  const centre = uniform(rng, base.centreNm);
  const sinB = centre / d;
  const cosB = Math.sqrt(1 - sinB * sinB);
  let sensorSize = { widthPx: base.widthPx, heightPx: Math.round((base.widthPx * 9) / 16) };
  let f = (d * cosB) / drawnDisp; // dλ/dx at the axis = d cos β / f
  if (base.camera) {
    sensorSize = base.camera.sensors[Math.floor(rng.uniform() * base.camera.sensors.length)];
    f = (logUniform(base.camera.focal35mmMm) * Math.hypot(sensorSize.widthPx, sensorSize.heightPx)) / Math.hypot(36, 24);
  }
  const disp = (d * cosB) / f;
  const o = { ...base, widthPx: sensorSize.widthPx };
  const direction: 1 | -1 = rng.uniform() < 0.5 ? 1 : -1;
  const x0 = o.widthPx / 2 + (rng.uniform() - 0.5) * 0.02 * o.widthPx;
  const truth: GratingModel = {
    kind: 'grating',
    order: 1,
    incidenceAngleDeg: 0,
    direction,
    grooveSpacingNm: d,
    cameraAngleDeg: (Math.asin(sinB) * 180) / Math.PI,
    axisPositionPx: x0,
    focalLengthPx: f,
    covariance: [],
    free: [true, true, true, true],
  };
  const noisePx = uniform(rng, o.noisePx);
  const threshold = Math.exp(Math.log(o.threshold[0]) + (Math.log(o.threshold[1]) - Math.log(o.threshold[0])) * rng.uniform());
  // Brightness per line: relative intensity within its spectrum × total sensor response.
  const maxBy = new Map<string, number>();
  for (const l of lines) maxBy.set(l.spectrum, Math.max(maxBy.get(l.spectrum) ?? 0, l.intensity));
  const peaks: Peak[] = [];
  const truthNm: (number | null)[] = [];
  let maxResp = 0;
  for (let l = 350; l < 1000; l += 1) {
    const s = sensor(l);
    maxResp = Math.max(maxResp, s.r + s.g + s.b);
  }
  const fwhmPx = uniform(rng, o.fwhmPx);
  const seen: Array<{ x: number; brightness: number; lambda: number; rgb: { r: number; g: number; b: number } }> = [];
  for (const line of lines) {
    const s = sensor(line.wavelengthNm);
    const brightness = (line.intensity / (maxBy.get(line.spectrum) || 1)) * ((s.r + s.g + s.b) / maxResp);
    if (brightness < threshold) continue;
    if (rng.uniform() < o.dropFraction) continue;
    const x = positionOf(truth, line.wavelengthNm, -20 * o.widthPx, 21 * o.widthPx);
    if (x === null || x < 5 || x > o.widthPx - 5) continue;
    const sum = s.r + s.g + s.b;
    seen.push({ x, brightness, lambda: line.wavelengthNm, rgb: { r: s.r / sum, g: s.g / sum, b: s.b / sum } });
  }
  seen.sort((a, b) => a.x - b.x);
  // Lines closer than 1.2 FWHM are one blended peak at their brightness-weighted centre; its truth is the dominant
  // line when that carries ≥ 80 % of the light, else none.
  for (let i = 0; i < seen.length; ) {
    let j = i + 1;
    while (j < seen.length && seen[j].x - seen[j - 1].x < 1.2 * fwhmPx) j++;
    const group = seen.slice(i, j);
    const total = group.reduce((a, g) => a + g.brightness, 0);
    const x = group.reduce((a, g) => a + g.x * g.brightness, 0) / total;
    const top = group.reduce((a, g) => (g.brightness > a.brightness ? g : a));
    const rgb = {
      r: group.reduce((a, g) => a + g.rgb.r * g.brightness, 0) / total,
      g: group.reduce((a, g) => a + g.rgb.g * g.brightness, 0) / total,
      b: group.reduce((a, g) => a + g.rgb.b * g.brightness, 0) / total,
    };
    const peak = makePeak(rng, x + noisePx * rng.normal(), noisePx, total, o.colour ? rgb : undefined);
    peak.fwhmPx = fwhmPx;
    peak.blended = group.length > 1;
    peaks.push(peak);
    truthNm.push(top.brightness >= 0.8 * total ? top.lambda : null);
    i = j;
  }
  const nExtra = Math.round(uniform(rng, o.extraFraction) * peaks.length);
  for (let k = 0; k < nExtra; k++) {
    const x = 5 + rng.uniform() * (o.widthPx - 10);
    const r = rng.uniform();
    const g = rng.uniform();
    const b = rng.uniform();
    peaks.push(makePeak(rng, x, noisePx, threshold * (1 + 5 * rng.uniform()), o.colour ? { r: r / (r + g + b), g: g / (r + g + b), b: b / (r + g + b) } : undefined));
    truthNm.push(null);
  }
  if (o.secondOrder) {
    const efficiency = uniform(rng, o.secondOrder);
    const firstOrderXs = peaks.map((p) => p.positionPx);
    for (const line of lines) {
      const s = sensor(line.wavelengthNm);
      const brightness = efficiency * (line.intensity / (maxBy.get(line.spectrum) || 1)) * ((s.r + s.g + s.b) / maxResp);
      if (brightness < threshold) continue;
      // m λ = d (sin θi + sin β): order 2 of λ lies where order 1 of 2λ would.
      const x = positionOf(truth, 2 * line.wavelengthNm, -20 * o.widthPx, 21 * o.widthPx);
      if (x === null || x < 5 || x > o.widthPx - 5) continue;
      if (firstOrderXs.some((x1) => Math.abs(x1 - x) < 1.2 * fwhmPx)) continue;
      const sum = s.r + s.g + s.b;
      const peak = makePeak(rng, x + noisePx * rng.normal(), noisePx, brightness, o.colour ? { r: s.r / sum, g: s.g / sum, b: s.b / sum } : undefined);
      peak.fwhmPx = fwhmPx;
      peaks.push(peak);
      truthNm.push(null);
    }
  }
  const order = peaks.map((_, i) => i).sort((a, b) => peaks[a].positionPx - peaks[b].positionPx);
  return {
    peaks: order.map((i) => peaks[i]),
    truthNm: order.map((i) => truthNm[i]),
    truth,
    noisePx,
    sensor: sensorSize,
    centreDispersionNmPerPx: disp,
  };
}

function makePeak(rng: Random, x: number, sigma: number, height: number, rgb?: { r: number; g: number; b: number }): Peak {
  return {
    positionPx: x,
    positionUncertaintyPx: sigma * (0.7 + 0.6 * rng.uniform()),
    fwhmPx: 3,
    height,
    area: height * 3.2,
    prominence: height,
    snr: 100 * height,
    saturated: false,
    blended: false,
    rgb,
  };
}
