/**
 * Are the band's stated uncertainties honest? The slant of the line images and the axis angle that findBand reports
 * are compared with the truth of seeded renders (src/core/render) over slant, tilt, band height, blur, exposure (dim to
 * clipped), line content, continuum and JPEG quality, and of the bundled demo photos (data/demo/truth.json). The
 * normalised errors z = (found − true) / stated uncertainty should have an RMS near 1 and few beyond 3.
 *
 * Measured on 300 such photos at 960 × 540 px (heights 20–220 px; seeds not used to tune), before → after the change
 * in band/refine.ts: slant RMS z 28 → 1.2, beyond 3σ 49 % → 3 %; axis RMS z 2.9 → 1.3, beyond 3σ 27 % → 4 %; median
 * stated slant uncertainty 0.010° → 0.052° for a median error of 0.033°. The slant's error was mostly the axis error
 * passed on with the opposite sign (the slant is measured against the axis), which its uncertainty left out. On the
 * demo photos the slant was stated ± 0.001° where it was 0.06° off.
 */
import { promises as fs } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { createRandom } from '../../../src/core/random.js';
import { renderSpectroscopePhoto } from '../../../src/core/render/index.js';
import { findBand } from '../../../src/core/spectrum/findBand.js';
import { decodeImage } from '../../../src/io/image.js';
import { encodeRenderedPhoto } from '../../../src/io/writeRenderedPhoto.js';
import { ROOT } from '../../helpers/runCli.js';
import { angleErrorDeg } from './recovery.js';

interface Outcome {
  slantZ: number | null;
  angleZ: number;
}

function rms(values: number[]): number {
  return Math.sqrt(values.reduce((a, v) => a + v * v, 0) / values.length);
}

/** One seeded photo: a random line list (not a real spectrum), geometry, blur, exposure and encoding. */
async function renderedOutcome(seed: number): Promise<Outcome> {
  const r = createRandom(seed);
  const u = (a: number, b: number): number => a + (b - a) * r.uniform();
  const lines = Array.from({ length: Math.round(u(4, 20)) }, () => ({ wavelengthNm: u(405, 695), intensity: Math.exp(u(-1.5, 1.5)) }));
  const continua = r.uniform() < 0.3 ? [{ kind: 'blackbody' as const, temperatureK: 3000, intensity: u(5, 40) }] : [];
  const angleDeg = u(-12, 12) + (r.uniform() < 0.3 ? 180 : 0);
  const slantDeg = u(-6, 6);
  const heightPx = Math.round(Math.exp(u(Math.log(20), Math.log(160))));
  const sigmaPx = u(0.8, 3);
  const fractionOfFullWell = Math.exp(u(Math.log(0.15), Math.log(1.6)));
  const jpegQuality = r.uniform() < 0.6 ? Math.round(u(70, 95)) : 0;
  const photo = renderSpectroscopePhoto({
    widthPx: 640,
    heightPx: 360,
    source: { lines, continua },
    camera: { focal: { kind: '35mm', focalLength35mmMm: 26 }, cameraAngleDeg: 33 },
    band: { angleDeg, slantDeg, offsetPx: u(-20, 20), heightPx, rangeNm: [400, 700] },
    lineSpread: { sigmaPx },
    exposure: { kind: 'brightestPeak', fractionOfFullWell },
    seed: seed + 1,
  });
  const image = jpegQuality
    ? (await decodeImage(await encodeRenderedPhoto(photo.image, { format: { kind: 'jpeg', quality: jpegQuality } }))).image
    : photo.image;
  const found = findBand(image);
  const d = found.diagnostics;
  const slantU = d.slantUncertaintyDeg;
  return {
    slantZ: d.slantMeasured && slantU !== null && Number.isFinite(slantU) ? (found.band.slantDeg - photo.truth.band.slantDeg) / slantU : null,
    angleZ: angleErrorDeg(found.band.angleDeg, photo.truth.band.angleDeg) / d.angleUncertaintyDeg,
  };
}

describe('findBand: stated slant and axis uncertainties against the truth', () => {
  it('rendered photos (seeded): RMS of the normalised errors 0.5–2, at most 10 % beyond 3σ', async () => {
    const outcomes: Outcome[] = [];
    for (let k = 0; k < 32; k++) outcomes.push(await renderedOutcome(7000 + 31 * k));
    const slantZ = outcomes.flatMap((o) => (o.slantZ === null ? [] : [o.slantZ]));
    const angleZ = outcomes.map((o) => o.angleZ).filter(Number.isFinite);
    if (process.env.GLOWPRINT_REPORT) console.log(JSON.stringify({ slantZ, angleZ }));
    // Every photo has sharp lines: the slant is measured on nearly all.
    expect(slantZ.length).toBeGreaterThanOrEqual(29);
    expect(angleZ.length).toBe(outcomes.length);
    for (const z of [slantZ, angleZ]) {
      // Before: slant RMS z ≈ 12 with 40 % beyond 3σ; axis ≈ 2.7 with 25 % beyond 3σ.
      expect(rms(z)).toBeGreaterThanOrEqual(0.5);
      expect(rms(z)).toBeLessThanOrEqual(2);
      expect(z.filter((v) => Math.abs(v) > 3).length).toBeLessThanOrEqual(Math.floor(0.1 * z.length));
    }
  });

  it('demo photos: the truth within 3σ of the stated slant and axis', async () => {
    const demoDir = path.join(ROOT, 'data/demo');
    const truth = JSON.parse(await fs.readFile(path.join(demoDir, 'truth.json'), 'utf8')) as {
      photos: { file: string; band?: { angle_deg: number; slant_deg: number } }[];
    };
    const photos = truth.photos.filter((p) => p.band && p.file.endsWith('.jpg'));
    expect(photos.length).toBeGreaterThanOrEqual(6);
    for (const p of photos) {
      const { image } = await decodeImage(path.join(demoDir, p.file));
      const found = findBand(image, { source: p.file });
      const d = found.diagnostics;
      const slantZ = (found.band.slantDeg - p.band!.slant_deg) / d.slantUncertaintyDeg!;
      const angleZ = angleErrorDeg(found.band.angleDeg, p.band!.angle_deg) / d.angleUncertaintyDeg;
      if (process.env.GLOWPRINT_REPORT) console.log(p.file, slantZ.toFixed(2), angleZ.toFixed(2));
      // Before: slant z from −59 to 81 (0.06° off, stated ± 0.001°).
      expect(Math.abs(slantZ), p.file).toBeLessThanOrEqual(3);
      expect(Math.abs(angleZ), p.file).toBeLessThanOrEqual(3);
    }
  });
});
