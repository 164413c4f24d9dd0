/**
 * Test helper: rendered grating photos (the project renderer, src/core/render) of discharge tubes, encoded as JPEG by
 * sharp and taken through the real pipeline (decode → findBand → extractSpectrum → findPeaks, analyseSpectrumInput),
 * with each isolated, strong, unsaturated peak paired with the renderer's truth: where the line crosses the found
 * band's centre line. Instruments 0.3–1 nm/px, 720p and 1080p, JPEG quality 85–95, photon and read noise.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { createRandom } from '../../../src/core/random.js';
import { renderSpectroscopePhoto, type RenderOptionsInput } from '../../../src/core/render/index.js';
import { imageToBandPx } from '../../../src/core/spectrum/band/frame.js';
import type { Peak } from '../../../src/core/types.js';
import { encodeRenderedPhoto } from '../../../src/io/writeRenderedPhoto.js';
import { analyseSpectrumInput } from '../../../src/tasks/spectrum.js';
import { tubeSource } from '../identify/renderedTubes.js';

const RECIPES: Array<Array<[string, number]>> = [[['Ne', 1]], [['Ar', 1]], [['Ne', 1], ['Hg', 0.7]], [['Kr', 1]], [['Xe', 1]]];
const SENSORS: Array<[number, number]> = [
  [1280, 720],
  [1920, 1080],
];

/**
 * One seeded instrument: the camera's focal length f (22–40 mm equivalent), the wavelength on the optical axis λc
 * and the dispersion D (0.3–1 nm/px) drawn, the grating solved for them. At the axis the first order leaves at θ with
 * sin θ = λc/d and D = d cos θ / f (d the groove spacing, nm), so (D f)² = d² − λc², d = √((D f)² + λc²).
 */
export function renderedInstrument(k: number): { render: RenderOptionsInput; quality: number; dispersionNmPerPx: number } {
  const rng = createRandom(4200 + 53 * k);
  const draw = (lo: number, hi: number): number => lo + (hi - lo) * rng.uniform();
  const [widthPx, heightPx] = SENSORS[k % SENSORS.length];
  const focal35mmMm = draw(22, 40);
  const focalPx = (focal35mmMm * Math.hypot(widthPx, heightPx)) / Math.hypot(36, 24);
  const axisNm = draw(500, 600);
  // At least 800 nm grooves (≤ 1250 lines/mm), so that order +1 still exists at 700 nm (sin θ ≤ 0.875).
  const dispersionNmPerPx = draw(Math.max(0.3, Math.sqrt(800 ** 2 - axisNm ** 2) / focalPx), 1);
  const grooveNm = Math.hypot(dispersionNmPerPx * focalPx, axisNm);
  const cameraAngleDeg = (Math.asin(axisNm / grooveNm) * 180) / Math.PI;
  const reversed = rng.uniform() < 0.5;
  const quality = Math.round(draw(85, 95));
  const band = { angleDeg: draw(-3, 3) + (reversed ? 180 : 0), slantDeg: draw(-1.5, 1.5), offsetPx: draw(-0.05, 0.05) * heightPx };
  const render: RenderOptionsInput = {
    widthPx,
    heightPx,
    grating: { linesPerMm: 1e6 / grooveNm, incidenceDeg: 0, orders: [{ order: 0, efficiency: 0.1 }, { order: 1, efficiency: 0.3 }] },
    camera: { focal: { kind: '35mm', focalLength35mmMm: focal35mmMm }, cameraAngleDeg },
    band: { ...band, heightPx: Math.round(draw(0.08, 0.16) * heightPx), rangeNm: [400, 700] },
    lineSpread: { sigmaPx: draw(0.8, 2), slitWidthPx: draw(2, 4), defocusRadiusPx: draw(0, 2) },
    sensor: { fullWellElectrons: draw(6000, 20000), readNoiseElectrons: draw(2, 6) },
    exposure: { kind: 'brightestPeak', fractionOfFullWell: draw(0.5, 0.9) },
    ambient: { electrons: { r: draw(20, 80), g: draw(20, 80), b: draw(25, 85) }, gradient: { x: 0.3, y: -0.2 }, vignetting: 0.25 },
    strayLight: { fraction: draw(0.01, 0.04), sigmaPx: draw(30, 70) },
    spectralRangeNm: [380, 720],
    seed: 700 + k,
  };
  return { render, quality, dispersionNmPerPx };
}

/** One measured peak paired with its true position (px along the found band). */
export interface PairedPeak {
  photo: number;
  peak: Peak;
  truePx: number;
  /** measured − true (px). */
  errorPx: number;
  /** Distance to the nearest other detected peak, in this peak's FWHM. */
  peakGapFwhm: number;
  /** Distance to the nearest other true line in frame (any order, however faint), in this peak's FWHM. */
  truthGapFwhm: number;
}

/**
 * The unsaturated peaks of SNR ≥ minSnr of `photos` seeded photos, each paired with the nearest true first-order line
 * when that lies within one FWHM (and no other true line is nearer than it); with the distances to neighbours, for
 * the caller to pick isolated or close peaks.
 */
export async function pairedRenderedPeaks(photos: number, minSnr = 30): Promise<PairedPeak[]> {
  const dir = mkdtempSync(path.join(tmpdir(), 'glowprint-peak-centres-'));
  const out: PairedPeak[] = [];
  try {
    for (let k = 0; k < photos; k++) {
      const inst = renderedInstrument(k);
      const photo = renderSpectroscopePhoto({ ...inst.render, source: { lines: tubeSource(RECIPES[k % RECIPES.length], 31 + k) } });
      const jpeg = await encodeRenderedPhoto(photo.image, { format: { kind: 'jpeg', quality: inst.quality } });
      const file = path.join(dir, `photo-${k}.jpg`);
      writeFileSync(file, jpeg);
      const { analysis } = await analyseSpectrumInput(file);
      const band = analysis.band;
      if (!band) continue;
      const truth = photo.truth.lines.filter((l) => l.inFrame).map((l) => ({ order: l.order, px: imageToBandPx(band, l.imagePx).positionPx }));
      const peaks = analysis.peaks;
      peaks.forEach((p, j) => {
        if (p.saturated || p.snr < minSnr) return;
        const byDistance = truth.map((t) => ({ t, d: Math.abs(t.px - p.positionPx) })).sort((a, b) => a.d - b.d);
        const nearest = byDistance[0];
        if (!nearest || nearest.t.order !== 1 || nearest.d > p.fwhmPx) return;
        let peakGap = Infinity;
        peaks.forEach((q, i) => {
          if (i !== j) peakGap = Math.min(peakGap, Math.abs(q.positionPx - p.positionPx));
        });
        out.push({
          photo: k,
          peak: p,
          truePx: nearest.t.px,
          errorPx: p.positionPx - nearest.t.px,
          peakGapFwhm: peakGap / p.fwhmPx,
          truthGapFwhm: (byDistance[1]?.d ?? Infinity) / p.fwhmPx,
        });
      });
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return out;
}
