import { promises as fs } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import sharp from 'sharp';
import { toRad } from '../core/polarization/angles.js';
import { renderSpotSeries, type SpotSeriesScene } from '../core/polarization/renderSpotSeries.js';
import { createRandom } from '../core/random.js';
import { writeFileAtomic } from './writeAtomic.js';

/**
 * The polarization demo: a made-up bench (invented data, for the demo only) with one analyser and three lasers.
 *
 * Analyser "A" is a sheet polarizer on a graduated rotation mount whose 0° mark sits 3.5° off its transmission axis
 * (true = scale + 3.5°) and whose extinction ratio is 300:1. Angles in the files are scale readings; 0° is horizontal.
 * - Floor glare (a lamp's reflection off a glossy floor near Brewster's angle): partially polarized, horizontal.
 * - Laser A, polarized HeNe, vertical: a power-meter table.
 * - Laser B, randomly polarized HeNe: a rotation table that looks nearly unpolarized, and a two-minute burst at a fixed
 *   analyser angle with a total-power reference: its two orthogonal mode polarizations trade power.
 * - Laser C, polarized HeNe tilted in its mount: a photo series of its spot on a white card (JPEG, sRGB), and an
 *   over-exposed series of the same spot whose bright frames clip.
 */
export const POLARIZATION_DEMO = {
  seed: 20240611,
  analyser: { offsetDeg: 3.5, extinctionRatio: 300 },
  floorGlare: { dolp: 0.62, azimuthTrueDeg: 0, anglesDeg: range(0, 15, 180), noiseRelative: 0.006 },
  laserA: { dolp: 0.998, azimuthTrueDeg: 90, anglesDeg: range(0, 10, 180), powerMw: 1.52, noiseRelative: 0.004, floorMw: 0.0015 },
  laserB: {
    rotation: { anglesDeg: range(0, 15, 180), powerMw: 0.81, secondsPerReading: 8 },
    /** Axes of the two orthogonal mode polarizations (true), and the fixed analyser of the burst (scale). */
    modeAxisTrueDeg: 20,
    burst: { durationS: 120, rateHz: 2, analyserScaleDeg: 16.5 },
    /** Power share of mode 1 swings as 0.5 + swing · sin(2π t / period). */
    swing: 0.28,
    periodS: 37,
    totalNoiseRelative: 0.003,
  },
  laserC: {
    dolp: 0.995,
    azimuthTrueDeg: 30,
    anglesDeg: range(0, 15, 180),
    peakLinear: 0.45,
    overexposedPeakLinear: 2.4,
    overexposedAnglesDeg: range(0, 15, 180),
    exposureTimeS: 1 / 250,
    iso: 100,
  },
} as const;

/** Writes every demo input into `dir` (normally data/demo/polarization). Deterministic for a given seed. */
export async function writePolarizationDemo(dir: string, seed: number = POLARIZATION_DEMO.seed): Promise<string[]> {
  const d = POLARIZATION_DEMO;
  const written: string[] = [];
  const put = async (name: string, data: string | Uint8Array): Promise<void> => {
    const file = path.join(dir, name);
    await writeFileAtomic(file, data);
    written.push(file);
  };
  const rnd = createRandom(seed);
  const k = (d.analyser.extinctionRatio - 1) / (d.analyser.extinctionRatio + 1);
  // Transmission behind analyser A at a scale reading θ for light of DoLP p at true azimuth ψ (normalised to S0 = 1).
  const through = (scaleDeg: number, p: number, psiTrueDeg: number): number =>
    0.5 * (1 + k * p * Math.cos(2 * toRad(scaleDeg + d.analyser.offsetDeg - psiTrueDeg)));

  // Floor glare: relative readings of a small photometer pointed at the reflection.
  let csv = '# Floor glare near Brewster\'s angle through analyser A (scale angles); relative photometer readings\nangle_deg,intensity\n';
  for (const a of d.floorGlare.anglesDeg) {
    const v = 100 * through(a, d.floorGlare.dolp, d.floorGlare.azimuthTrueDeg) * (1 + d.floorGlare.noiseRelative * rnd.normal());
    csv += `${a},${v.toFixed(3)}\n`;
  }
  await put('floor-glare.csv', csv);

  // Laser A: power meter, 10° steps with the last reading back at 180° (= 0°) to check drift.
  csv = '# Laser A (polarized HeNe) through analyser A; power meter readings\nangle_deg,power_mw,uncertainty_mw\n';
  for (const a of d.laserA.anglesDeg) {
    const mean = 2 * d.laserA.powerMw * through(a, d.laserA.dolp, d.laserA.azimuthTrueDeg);
    const sigma = Math.hypot(d.laserA.noiseRelative * mean, d.laserA.floorMw);
    csv += `${a},${(mean + sigma * rnd.normal()).toFixed(4)},${sigma.toFixed(4)}\n`;
  }
  await put('laser-a-power-meter.csv', csv);

  // Laser B: two orthogonally polarized modes whose shares swing slowly (mode competition during warm-up).
  const b = d.laserB;
  const share = (t: number): number => 0.5 + b.swing * Math.sin((2 * Math.PI * t) / b.periodS) + 0.04 * Math.sin((2 * Math.PI * t) / 11.3);
  const laserB = (t: number, scaleDeg: number): number => {
    const s = share(t);
    return s * through(scaleDeg, 1, b.modeAxisTrueDeg) * 2 + (1 - s) * through(scaleDeg, 1, b.modeAxisTrueDeg + 90) * 2;
  };
  csv = '# Laser B (randomly polarized HeNe) through analyser A; one power-meter reading every ~8 s\nangle_deg,power_mw\n';
  b.rotation.anglesDeg.forEach((a, i) => {
    const t = 5 + i * b.rotation.secondsPerReading;
    const v = 0.5 * b.rotation.powerMw * laserB(t, a) * (1 + b.totalNoiseRelative * rnd.normal());
    csv += `${a},${v.toFixed(4)}\n`;
  });
  await put('laser-b-rotation.csv', csv);
  const n = b.burst.durationS * b.burst.rateHz;
  let burst = `# Laser B through analyser A fixed at ${b.burst.analyserScaleDeg}° (scale); photodiode, ${b.burst.rateHz} Hz\ntime_s,intensity\n`;
  let total = '# Laser B total power (analyser removed), recorded at the same times by a second photodiode behind a beam splitter\ntime_s,intensity\n';
  for (let i = 0; i < n; i++) {
    const t = i / b.burst.rateHz;
    const drift = 1 + 0.01 * (t / b.burst.durationS); // warm-up: the total creeps up by 1 %
    burst += `${t.toFixed(2)},${(0.5 * drift * laserB(t + 200, b.burst.analyserScaleDeg) * (1 + b.totalNoiseRelative * rnd.normal())).toFixed(5)}\n`;
    total += `${t.toFixed(2)},${(drift * (1 + b.totalNoiseRelative * rnd.normal())).toFixed(5)}\n`;
  }
  await put('laser-b-burst.csv', burst);
  await put('laser-b-burst-total.csv', total);

  // Laser C: photos of the spot on a card. The renderer takes the azimuth on the analyser's scale.
  const c = d.laserC;
  const scene: SpotSeriesScene = {
    anglesDeg: c.anglesDeg,
    dolp: c.dolp,
    azimuthDeg: c.azimuthTrueDeg - d.analyser.offsetDeg,
    extinctionRatio: d.analyser.extinctionRatio,
    peakLinear: c.peakLinear,
    seed: seed + 1,
  };
  for (const [folder, sc] of [
    ['laser-c-photos', scene],
    ['laser-c-overexposed', { ...scene, anglesDeg: c.overexposedAnglesDeg, peakLinear: c.overexposedPeakLinear, seed: seed + 2 }],
  ] as const) {
    for (const frame of renderSpotSeries(sc)) {
      const jpeg = await encodeFrame(frame.rgb, frame.widthPx, frame.heightPx, c.exposureTimeS, c.iso);
      await put(path.join(folder, `laser-c_${String(frame.angleDeg).padStart(3, '0')}deg.jpg`), jpeg);
    }
  }

  const truth = {
    note: 'Ground truth of the invented polarization demo (glowprint). Angles on the analyser scale unless marked true.',
    seed,
    analyser: { offset_deg: d.analyser.offsetDeg, extinction_ratio: d.analyser.extinctionRatio },
    floor_glare: { dolp: d.floorGlare.dolp, azimuth_true_deg: 0, azimuth_scale_deg: wrap(-d.analyser.offsetDeg) },
    laser_a: {
      dolp: d.laserA.dolp,
      dolp_measured_ideal: d.laserA.dolp * k,
      azimuth_true_deg: d.laserA.azimuthTrueDeg,
      azimuth_scale_deg: wrap(d.laserA.azimuthTrueDeg - d.analyser.offsetDeg),
    },
    laser_b: { kind: 'randomly polarized, two orthogonal modes', mode_axis_true_deg: b.modeAxisTrueDeg, share_swing: b.swing, period_s: b.periodS },
    laser_c: {
      dolp: c.dolp,
      dolp_measured_ideal: c.dolp * k,
      azimuth_true_deg: c.azimuthTrueDeg,
      azimuth_scale_deg: wrap(c.azimuthTrueDeg - d.analyser.offsetDeg),
      overexposed_peak_linear: c.overexposedPeakLinear,
    },
  };
  await put('truth.json', JSON.stringify(truth, null, 2) + '\n');
  return written;
}

/** A JPEG as a phone writes it: sRGB, 8-bit, with the exposure in EXIF. */
export async function encodeFrame(rgb: Uint8Array, width: number, height: number, exposureTimeS: number, iso: number): Promise<Buffer> {
  return sharp(Buffer.from(rgb.buffer, rgb.byteOffset, rgb.byteLength), { raw: { width, height, channels: 3 } })
    .jpeg({ quality: 92, chromaSubsampling: '4:4:4' })
    .withExif({ IFD0: { Make: 'glowprint', Model: 'demo renderer' }, IFD2: { ExposureTime: exposureFraction(exposureTimeS), ISOSpeedRatings: String(iso) } })
    .toBuffer();
}

function exposureFraction(t: number): string {
  return t < 1 ? `1/${Math.round(1 / t)}` : String(t);
}

function range(start: number, step: number, end: number): number[] {
  const out: number[] = [];
  for (let a = start; a <= end + 1e-9; a += step) out.push(a);
  return out;
}

function wrap(a: number): number {
  return ((a % 180) + 180) % 180;
}

// `node dist/src/io/demoPolarization.js [dir]` regenerates the demo (default: data/demo/polarization under the package).
if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const { dataPath } = await import('./projectRoot.js');
  const dir = process.argv[2] ?? dataPath('demo', 'polarization');
  const files = await writePolarizationDemo(dir);
  process.stdout.write(`wrote ${files.length} files to ${dir}\n`);
}
