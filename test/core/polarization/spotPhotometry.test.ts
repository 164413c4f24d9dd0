import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { afterAll, describe, expect, it } from 'vitest';
import { fitMalus } from '../../../src/core/polarization/malusFit.js';
import { renderSpotSeries, type SpotSeriesScene } from '../../../src/core/polarization/renderSpotSeries.js';
import { measureSpotSeries, spotSeriesToPoints } from '../../../src/core/polarization/spotPhotometry.js';
import type { LinearImage } from '../../../src/core/types.js';
import { encodeFrame } from '../../../src/io/demoPolarization.js';
import { decodeImage } from '../../../src/io/image.js';
import { loadPhotoSeries } from '../../../src/io/photoSeries.js';

const ANGLES = Array.from({ length: 13 }, (_, i) => i * 15);
const tmp = mkdtempSync(path.join(os.tmpdir(), 'glowprint-spot-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

/** Renders a scene, writes it as PNG (lossless 8-bit sRGB) or JPEG (q 92 with EXIF) and decodes it with io/image. */
async function shoot(scene: SpotSeriesScene, format: 'png' | 'jpeg', exposures?: number[]): Promise<LinearImage[]> {
  const frames = renderSpotSeries(scene);
  const out: LinearImage[] = [];
  for (const [i, f] of frames.entries()) {
    const buf =
      format === 'png'
        ? await sharp(Buffer.from(f.rgb), { raw: { width: f.widthPx, height: f.heightPx, channels: 3 } }).png().toBuffer()
        : await encodeFrame(f.rgb, f.widthPx, f.heightPx, exposures?.[i] ?? 1 / 250, 100);
    out.push((await decodeImage(buf)).image);
  }
  return out;
}

describe('measureSpotSeries(images, options) on rendered sRGB photos', () => {
  it('recovers DoLP within 0.02 and the azimuth within 0.5° (PNG and JPEG, DoLP 0.995 and 0.5, several seeds)', async () => {
    // Truth: the renderer's scene (invented). The extinction-ratio-free analyser keeps the truth simple.
    for (const format of ['png', 'jpeg'] as const) {
      for (const [dolp, seed] of [
        [0.995, 1],
        [0.995, 2],
        [0.5, 3],
      ] as const) {
        const az = 17 + 50 * seed;
        const images = await shoot({ anglesDeg: ANGLES, dolp, azimuthDeg: az, seed }, format);
        const ph = measureSpotSeries(images);
        expect(ph.warnings).toEqual([]);
        const fit = fitMalus(spotSeriesToPoints(ph, ANGLES).points);
        expect(Math.abs(fit.dolp - dolp)).toBeLessThanOrEqual(format === 'png' ? 0.006 : 0.02);
        expect(Math.abs(((fit.azimuthDeg - az + 270) % 180) - 90)).toBeLessThanOrEqual(0.5);
      }
    }
  });

  it('finds the spot and sizes the aperture from its radial profile (to 1 % of the peak, × 1.25)', async () => {
    const images = await shoot({ anglesDeg: [0, 60, 120], center: { x: 90.3, y: 150.8 }, seed: 9 }, 'png');
    const ph = measureSpotSeries(images);
    expect(Math.hypot(ph.center.x - 90.3, ph.center.y - 150.8)).toBeLessThanOrEqual(0.5);
    // The renderer's profile exp(−r²/2σ²) + 0.02 exp(−r²/2(3σ)²), σ = 6 px, falls to 1 % of its peak (1.02) at
    // r = 22.4 px (solved from the formula); the aperture is that edge × 1.25 ≈ 28 px, give or take the speckle.
    expect(Math.abs(ph.apertureRadiusPx - 22.4 * 1.25)).toBeLessThanOrEqual(3);
    expect(ph.placement).toBe('search');
  });

  it('flags a saturated series, leaves the clipped frames out, and shows what keeping them would do', async () => {
    const images = await shoot({ anglesDeg: ANGLES, dolp: 0.995, azimuthDeg: 40, peakLinear: 2.4, seed: 5 }, 'jpeg');
    const ph = measureSpotSeries(images, { labels: ANGLES.map((a) => `f${a}.jpg`) });
    const clipped = ph.frames.filter((f) => f.saturated);
    expect(clipped.length).toBeGreaterThanOrEqual(4);
    expect(clipped.every((f) => f.peakValue === 1)).toBe(true);
    const excluded = spotSeriesToPoints(ph, ANGLES);
    expect(excluded.warnings[0]).toMatch(/frames have a clipped \(saturated\) spot: f\d+\.jpg.*left out of the fit/);
    const good = fitMalus(excluded.points);
    expect(Math.abs(good.dolp - 0.995)).toBeLessThanOrEqual(0.02);
    const kept = spotSeriesToPoints(ph, ANGLES, { keepSaturated: true });
    expect(kept.warnings[0]).toMatch(/KEPT in the fit/);
    // The classic mistake: the clipped curve is flattened and the light reads as less polarized.
    expect(fitMalus(kept.points).dolp).toBeLessThan(good.dolp - 0.03);
  });

  it('normalises by EXIF exposure time when it varies (auto exposure)', async () => {
    // Auto exposure dims the bright frames: exposure ∝ 1/(0.3 + transmission), which flattens the raw curve.
    const dolp = 0.7;
    const az = 100;
    const transmission = ANGLES.map((a) => (1 + dolp * Math.cos(2 * (a - az) * (Math.PI / 180))) / (1 + dolp));
    const rel = transmission.map((t) => 1.3 / (0.3 + t));
    const exposures = rel.map((r) => r / 250);
    const scene = { anglesDeg: ANGLES, dolp, azimuthDeg: az, seed: 6, relativeExposure: rel, peakLinear: 0.2 };
    const images = await shoot(scene, 'jpeg', exposures);
    const ph = measureSpotSeries(images, { exposures: exposures.map((t) => ({ exposureTimeS: t, iso: 100 })) });
    expect(ph.exposureNormalised).toBe(true);
    expect(ph.warnings.some((w) => /exposure varies between frames/.test(w))).toBe(true);
    ph.frames.forEach((f, i) => expect(Math.abs(f.relativeExposure - rel[i] / rel[0])).toBeLessThanOrEqual(1e-12));
    const fit = fitMalus(spotSeriesToPoints(ph, ANGLES).points);
    expect(Math.abs(fit.dolp - dolp)).toBeLessThanOrEqual(0.02);
    // Unnormalised, the light reads as much less polarized.
    const raw = measureSpotSeries(images);
    expect(fitMalus(spotSeriesToPoints(raw, ANGLES).points).dolp).toBeLessThan(dolp - 0.2);
    // A frame without EXIF exposure among varying ones is named, and nothing is normalised.
    const partial = measureSpotSeries(images, {
      exposures: exposures.map((t, i) => (i === 3 ? {} : { exposureTimeS: t })),
      labels: ANGLES.map((a) => `p${a}.jpg`),
    });
    expect(partial.exposureNormalised).toBe(false);
    expect(partial.warnings.some((w) => /missing for p45\.jpg/.test(w))).toBe(true);
  });

  it('takes a user ROI and refuses series that do not fit together', async () => {
    const images = await shoot({ anglesDeg: [0, 45, 90, 135], seed: 8 }, 'png');
    const ph = measureSpotSeries(images, { roi: { x: 170, y: 113, radiusPx: 25 } });
    expect(ph.placement).toBe('roi');
    expect(ph.apertureRadiusPx).toBe(25);
    expect(() => spotSeriesToPoints(ph, [0, 45, 90])).toThrow(/3 angles for 4 images; give one angle per image/);
    const small = (await shoot({ anglesDeg: [0], widthPx: 200, heightPx: 150, seed: 8 }, 'png'))[0];
    expect(() => measureSpotSeries([...images, small], { labels: ['a', 'b', 'c', 'd', 'e'] })).toThrow(/^e: is 200×150 px but a is 320×240 px/);
    const dark: LinearImage = { width: 64, height: 64, channels: 1, data: new Float32Array(64 * 64).fill(0.01) };
    expect(() => measureSpotSeries([dark, dark, dark])).toThrow(/no spot found/);
  });

  it('reads angles from file names when a series is loaded from disk', async () => {
    const frames = renderSpotSeries({ anglesDeg: [0, 30, 60, 90, 120, 150], seed: 10 });
    const files: string[] = [];
    for (const f of frames) {
      const file = path.join(tmp, `bench_${f.angleDeg}deg.jpg`);
      writeFileSync(file, await encodeFrame(f.rgb, f.widthPx, f.heightPx, 1 / 125, 200));
      files.push(file);
    }
    const series = await loadPhotoSeries(files, {});
    expect(series.angleSource).toBe('file-names');
    expect(series.anglesDeg).toEqual([0, 30, 60, 90, 120, 150]);
    expect(series.exposures[0]).toEqual({ exposureTimeS: 1 / 125, iso: 200, fNumber: undefined });
  });
});
