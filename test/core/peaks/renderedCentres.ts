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

/** One seeded instrument: grating and focal length drawn until the centre dispersion lies in 0.3–1 nm/px. */
export function renderedInstrument(k: number): { render: RenderOptionsInput; quality: number; dispersionNmPerPx: number } {
  const rng = createRandom(4200 + 53 * k);
  const [widthPx, heightPx] = SENSORS[k % SENSORS.length];
  const diag = Math.hypot(widthPx, heightPx);
  for (;;) {
    const linesPerMm = 300 + 900 * rng.uniform();
    const focal35mmMm = 22 + 18 * rng.uniform();
    const f = (focal35mmMm * diag) / Math.hypot(36, 24);
    const axisNm = 500 + 100 * rng.uniform();
    const sinC = (axisNm * linesPerMm) / 1e6;
    const dispersionNmPerPx = ((1e6 / linesPerMm) * Math.sqrt(1 - sinC * sinC)) / f;
    if (dispersionNmPerPx < 0.3 || dispersionNmPerPx > 1) continue;
    const reversed = rng.uniform() < 0.5;
    return {
      dispersionNmPerPx,
      quality: 85 + Math.round(10 * rng.uniform()),
      render: {
        widthPx,
        heightPx,
        grating: { linesPerMm, incidenceDeg: 0, orders: [{ order: 0, efficiency: 0.1 }, { order: 1, efficiency: 0.3 }] },
        camera: { focal: { kind: '35mm', focalLength35mmMm: focal35mmMm }, cameraAngleDeg: (Math.asin(sinC) * 180) / Math.PI },
        band: {
          angleDeg: 6 * (rng.uniform() - 0.5) + (reversed ? 180 : 0),
          slantDeg: 3 * (rng.uniform() - 0.5),
          offsetPx: 0.1 * heightPx * (rng.uniform() - 0.5),
          heightPx: Math.round(heightPx * (0.08 + 0.08 * rng.uniform())),
          rangeNm: [400, 700],
        },
        lineSpread: { sigmaPx: 0.8 + 1.2 * rng.uniform(), slitWidthPx: 2 + 2 * rng.uniform(), defocusRadiusPx: 2 * rng.uniform() },
        sensor: { fullWellElectrons: 6000 + 14000 * rng.uniform(), readNoiseElectrons: 2 + 4 * rng.uniform() },
        exposure: { kind: 'brightestPeak', fractionOfFullWell: 0.5 + 0.4 * rng.uniform() },
        ambient: { electrons: { r: 20 + 60 * rng.uniform(), g: 20 + 60 * rng.uniform(), b: 25 + 60 * rng.uniform() }, gradient: { x: 0.3, y: -0.2 }, vignetting: 0.25 },
        strayLight: { fraction: 0.01 + 0.03 * rng.uniform(), sigmaPx: 30 + 40 * rng.uniform() },
        spectralRangeNm: [380, 720],
        seed: 700 + k,
      },
    };
  }
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
