import { describe, expect, it } from 'vitest';
import { InputError } from '../../../src/core/errors.js';
import {
  dispersionAtPositionNmPerPx,
  positionAtWavelengthPx,
  renderSpectroscopePhoto,
  wavelengthAtPositionNm,
} from '../../../src/core/render/index.js';
import type { RenderedPhoto, RenderOptionsInput, TruthLine } from '../../../src/core/render/index.js';

const DEG = Math.PI / 180;

/** A small, clean frame: one order, no ambient light, no stray light, no noise. */
function clean(over: RenderOptionsInput = {}): RenderOptionsInput {
  return {
    widthPx: 900,
    heightPx: 520,
    camera: { focal: { kind: 'px', focalLengthPx: 1000 }, cameraAngleDeg: 34 },
    grating: { orders: [{ order: 1, efficiency: 1 }] },
    ambient: { electrons: { r: 0, g: 0, b: 0 }, gradient: { x: 0, y: 0 }, vignetting: 0 },
    strayLight: { fraction: 0 },
    sensor: { noise: false },
    exposure: { kind: 'brightestPeak', fractionOfFullWell: 0.5 },
    ...over,
  };
}

const evenLines = (nms: number[]) => ({ lines: nms.map((wavelengthNm) => ({ wavelengthNm, intensity: 1 })) });

interface Blob {
  /** Intensity-weighted centroid in image coordinates. */
  x: number;
  y: number;
  /** Centroid along the band from its start (px), from the truth band frame. */
  positionPx: number;
  /** Weighted covariance of pixel positions. */
  cxx: number;
  cxy: number;
  cyy: number;
  maxElectrons: number;
}

/** Sums the pixels of one line image: those within `halfWidthPx` of its centre line across the whole band height. */
function measureLine(photo: RenderedPhoto, line: TruthLine, halfWidthPx = 7): Blob {
  const { image, truth } = photo;
  const { band } = truth;
  const e = { x: Math.cos(band.angleDeg * DEG), y: Math.sin(band.angleDeg * DEG) };
  const n = { x: -e.y, y: e.x };
  const tanS = Math.tan(band.slantDeg * DEG);
  const uLine = line.positionPx - band.lengthPx / 2;
  let w = 0;
  let sx = 0;
  let sy = 0;
  let su = 0;
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  let max = 0;
  const vReach = band.heightPx / 2 + 12;
  for (let y = 0; y < image.height; y++) {
    for (let x = 0; x < image.width; x++) {
      const dx = x - band.center.x;
      const dy = y - band.center.y;
      const v = dx * n.x + dy * n.y;
      if (Math.abs(v) > vReach) continue;
      const uc = dx * e.x + dy * e.y + v * tanS;
      if (Math.abs(uc - uLine) > halfWidthPx) continue;
      const i = 3 * (y * image.width + x);
      const value = image.data[i] + image.data[i + 1] + image.data[i + 2];
      max = Math.max(max, image.data[i], image.data[i + 1], image.data[i + 2]);
      w += value;
      sx += value * x;
      sy += value * y;
      su += value * uc;
      sxx += value * x * x;
      sxy += value * x * y;
      syy += value * y * y;
    }
  }
  const mx = sx / w;
  const my = sy / w;
  return {
    x: mx,
    y: my,
    positionPx: su / w + band.lengthPx / 2,
    cxx: sxx / w - mx * mx,
    cxy: sxy / w - mx * my,
    cyy: syy / w - my * my,
    maxElectrons: max * truth.fullWellElectrons,
  };
}

describe('renderSpectroscopePhoto(options): geometry', () => {
  const probes = [420, 470, 520, 570, 620, 670];
  const cases: { angleDeg: number; slantDeg: number; defocusRadiusPx?: number; slitWidthPx?: number }[] = [
    { angleDeg: 0, slantDeg: 0 },
    { angleDeg: 15, slantDeg: 4 },
    { angleDeg: -15, slantDeg: -4 },
    { angleDeg: 180, slantDeg: 0, defocusRadiusPx: 2 },
    { angleDeg: 165, slantDeg: -3, slitWidthPx: 0 },
    { angleDeg: -165, slantDeg: 5, slitWidthPx: 5 },
  ];

  for (const c of cases) {
    it(`puts line centroids at the truth positions within 0.05 px (angle ${c.angleDeg}°, slant ${c.slantDeg}°)`, () => {
      const photo = renderSpectroscopePhoto(
        clean({
          source: evenLines(probes),
          band: { angleDeg: c.angleDeg, slantDeg: c.slantDeg, heightPx: 120, offsetPx: 20 },
          lineSpread: { sigmaPx: 0.9, slitWidthPx: c.slitWidthPx ?? 2.5, defocusRadiusPx: c.defocusRadiusPx ?? 0 },
        }),
      );
      const inFrame = photo.truth.lines.filter((l) => l.order === 1);
      expect(inFrame.length).toBe(probes.length);
      for (const line of inFrame) {
        const blob = measureLine(photo, line);
        expect(Math.abs(blob.positionPx - line.positionPx)).toBeLessThanOrEqual(0.05);
        expect(Math.hypot(blob.x - line.imagePx.x, blob.y - line.imagePx.y)).toBeLessThanOrEqual(0.05);
      }
    });
  }

  for (const angleDeg of [15, -15, 165, -165]) {
    it(`states the band it drew: start, end, angle ${angleDeg}°, height and slant measured in image space`, () => {
      const slantDeg = angleDeg > 0 ? 3 : -3;
      const photo = renderSpectroscopePhoto(
        clean({
          source: evenLines([400, 700]),
          band: { angleDeg, slantDeg, heightPx: 150, offsetPx: -15, rangeNm: [400, 700] },
          lineSpread: { sigmaPx: 1, slitWidthPx: 2, defocusRadiusPx: 0 },
        }),
      );
      const { band } = photo.truth;
      const [blue, red] = [400, 700].map((l) => measureLine(photo, photo.truth.lines.find((t) => t.wavelengthNm === l)!));
      // Wavelength grows along angleDeg: from the 400-nm image to the 700-nm image.
      const measuredAngle = Math.atan2(red.y - blue.y, red.x - blue.x) / DEG;
      expect(Math.abs(measuredAngle - band.angleDeg)).toBeLessThanOrEqual(0.02);
      expect(Math.abs(band.angleDeg - angleDeg)).toBeLessThanOrEqual(1e-12);
      expect(Math.hypot((blue.x + red.x) / 2 - band.center.x, (blue.y + red.y) / 2 - band.center.y)).toBeLessThanOrEqual(0.05);
      expect(Math.abs(Math.hypot(red.x - blue.x, red.y - blue.y) - band.lengthPx)).toBeLessThanOrEqual(0.05);
      // The line image's long axis (principal axis of its pixel covariance) lies at angle + 90° + slant.
      for (const blob of [blue, red]) {
        const axis = (0.5 * Math.atan2(2 * blob.cxy, blob.cxx - blob.cyy)) / DEG;
        let diff = axis - (band.angleDeg + 90 + band.slantDeg);
        diff = ((((diff + 90) % 180) + 180) % 180) - 90;
        expect(Math.abs(diff)).toBeLessThanOrEqual(0.05);
        // Its length: variance along the line = H²/12 (+ σ² and the footprint, ~1 px²), i.e. H within 0.5 px.
        const major = (blob.cxx + blob.cyy) / 2 + Math.sqrt(((blob.cxx - blob.cyy) / 2) ** 2 + blob.cxy ** 2);
        const alongLine = major * Math.cos(band.slantDeg * DEG) ** 2; // projected back on the band's normal
        expect(Math.abs(Math.sqrt(12 * (alongLine - 1)) - band.heightPx)).toBeLessThanOrEqual(0.5);
      }
    });
  }

  it('reports the physical mapping of the positions: λ(x) of truth.model gives back every line, dλ/dx the dispersion', () => {
    const photo = renderSpectroscopePhoto(clean({ source: evenLines([410, 450, 600, 690]) }));
    for (const line of photo.truth.lines) {
      expect(Math.abs(wavelengthAtPositionNm(photo.truth.model, line.positionPx, 1)! - line.wavelengthNm)).toBeLessThanOrEqual(1e-9);
    }
    const mid = photo.truth.band.lengthPx / 2;
    expect(Math.abs(dispersionAtPositionNmPerPx(photo.truth.model, mid, 1) - photo.truth.dispersionNmPerPx)).toBeLessThanOrEqual(1e-12);
    // 1000 lines/mm seen at f = 1000 px: about 0.8 nm/px at mid-band.
    expect(photo.truth.dispersionNmPerPx).toBeGreaterThan(0.6);
    expect(photo.truth.dispersionNmPerPx).toBeLessThan(1);
    // The band starts at 400 nm: position 0.
    expect(Math.abs(positionAtWavelengthPx(photo.truth.model, 400, 1)!)).toBeLessThanOrEqual(1e-9);
  });

  it('draws the zero order where the truth says, as a white image, and second-order lines at their positions', () => {
    const photo = renderSpectroscopePhoto(
      clean({
        widthPx: 1400,
        source: evenLines([436, 546]),
        camera: { focal: { kind: 'px', focalLengthPx: 900 }, cameraAngleDeg: 34 },
        grating: { orders: [{ order: 0, efficiency: 0.1 }, { order: 1, efficiency: 0.3 }, { order: 2, efficiency: 0.05 }] },
        exposure: { kind: 'electronsPerIntensity', electronsPerIntensity: 2e5 },
        sensor: { noise: false, fullWellElectrons: 1e9 },
      }),
    );
    const zero = photo.truth.zeroOrder!;
    expect(zero.inFrame).toBe(true);
    const z = measureLine(photo, { positionPx: zero.positionPx } as TruthLine);
    expect(Math.hypot(z.x - zero.imagePx.x, z.y - zero.imagePx.y)).toBeLessThanOrEqual(0.05);
    const second = photo.truth.lines.find((l) => l.order === 2 && l.wavelengthNm === 436)!;
    expect(second.inFrame).toBe(true);
    expect(Math.abs(measureLine(photo, second).positionPx - second.positionPx)).toBeLessThanOrEqual(0.05);
  });
});

describe('renderSpectroscopePhoto(options): sensor', () => {
  it('has photon statistics: variance ≈ mean in electrons, plus the read noise squared', () => {
    for (const [ambient, read] of [[400, 0], [3, 0], [150, 6]]) {
      const photo = renderSpectroscopePhoto({
        widthPx: 300,
        heightPx: 300,
        source: { lines: [] },
        grating: { orders: [] },
        ambient: { electrons: { r: ambient, g: ambient, b: ambient }, gradient: { x: 0, y: 0 }, vignetting: 0 },
        strayLight: { fraction: 0 },
        exposure: { kind: 'electronsPerIntensity', electronsPerIntensity: 1 },
        sensor: { readNoiseElectrons: read, fullWellElectrons: 10000 },
        seed: 3,
      });
      const fw = photo.truth.fullWellElectrons;
      const nPx = 300 * 300;
      for (let c = 0; c < 3; c++) {
        let s = 0;
        let s2 = 0;
        for (let i = 0; i < nPx; i++) {
          const v = photo.image.data[3 * i + c] * fw;
          s += v;
          s2 += v * v;
        }
        const mean = s / nPx;
        const variance = s2 / nPx - mean * mean;
        const want = ambient + read * read;
        // Standard errors √(σ²/n) and ≈ σ²·√(2/n); 5 σ. (Clipping at 0 is negligible for these means.)
        expect(Math.abs(mean - ambient)).toBeLessThanOrEqual(5 * Math.sqrt(want / nPx) + 0.02);
        expect(Math.abs(variance - want)).toBeLessThanOrEqual(5 * want * Math.sqrt(2 / nPx) + 0.02);
      }
      if (read === 0) {
        // Without read noise every value is a whole number of photoelectrons.
        for (let i = 0; i < 1000; i++) {
          const e = photo.image.data[i] * fw;
          expect(Math.abs(e - Math.round(e))).toBeLessThanOrEqual(1e-3);
        }
      }
    }
  });

  it('clips at full well and marks the clipped line saturated in the truth, the faint one not', () => {
    const photo = renderSpectroscopePhoto(
      clean({
        source: { lines: [{ wavelengthNm: 546, intensity: 10 }, { wavelengthNm: 610, intensity: 1 }] },
        exposure: { kind: 'brightestPeak', fractionOfFullWell: 3 },
        sensor: { noise: true, readNoiseElectrons: 3, fullWellElectrons: 8000 },
        ambient: { electrons: { r: 40, g: 40, b: 40 }, gradient: { x: 0.2, y: 0 }, vignetting: 0.2 },
      }),
    );
    const bright = photo.truth.lines.find((l) => l.wavelengthNm === 546)!;
    const faint = photo.truth.lines.find((l) => l.wavelengthNm === 610)!;
    expect(bright.saturated).toBe(true);
    expect(faint.saturated).toBe(false);
    const { image } = photo;
    const at = (p: { x: number; y: number }) => Math.round(p.y) * image.width + Math.round(p.x);
    const i = at(bright.imagePx);
    expect(image.saturated![i]).toBe(1);
    expect(Math.max(image.data[3 * i], image.data[3 * i + 1], image.data[3 * i + 2])).toBe(1);
    const blob = measureLine(photo, faint, 4);
    expect(blob.maxElectrons).toBeLessThan(photo.truth.fullWellElectrons);
  });

  it('states each line’s peak electrons: the brightest pixel of a noiseless render is within 10 % below it', () => {
    const photo = renderSpectroscopePhoto(clean({ source: evenLines([480, 560, 640]) }));
    for (const line of photo.truth.lines) {
      const blob = measureLine(photo, line, 3);
      expect(blob.maxElectrons).toBeLessThanOrEqual(line.peakElectrons * (1 + 1e-6));
      expect(blob.maxElectrons).toBeGreaterThanOrEqual(line.peakElectrons * 0.9);
    }
  });

  it('is fixed by its seed', () => {
    const o: RenderOptionsInput = { widthPx: 320, heightPx: 200, source: evenLines([500, 600]), camera: { focal: { kind: 'px', focalLengthPx: 400 }, cameraAngleDeg: 34 } };
    const a = renderSpectroscopePhoto({ ...o, seed: 9 }).image.data;
    const b = renderSpectroscopePhoto({ ...o, seed: 9 }).image.data;
    const c = renderSpectroscopePhoto({ ...o, seed: 10 }).image.data;
    expect(Buffer.from(a.buffer).equals(Buffer.from(b.buffer))).toBe(true);
    expect(Buffer.from(a.buffer).equals(Buffer.from(c.buffer))).toBe(false);
  });
});

describe('renderSpectroscopePhoto(options): bad options', () => {
  it('names the option: a band range the grating cannot send into the camera, a blur too small to sample', () => {
    expect(() => renderSpectroscopePhoto({ grating: { linesPerMm: 2400 }, band: { rangeNm: [400, 700] } })).toThrow(
      /band\.rangeNm/,
    );
    expect(() => renderSpectroscopePhoto({ lineSpread: { sigmaPx: 0.1 } })).toThrow(InputError);
    expect(() => renderSpectroscopePhoto({ lineSpread: { sigmaPx: 0.1 } })).toThrow(/lineSpread\.sigmaPx/);
    expect(() => renderSpectroscopePhoto({ source: { lines: [{ wavelengthNm: -5, intensity: 1 }] } })).toThrow(
      /source\.lines\[0\]\.wavelengthNm/,
    );
  });
});
