import { describe, expect, it } from 'vitest';
import {
  diffractionAngleDeg,
  dispersionAtPositionNmPerPx,
  focalLengthPxFrom35mm,
  positionAtWavelengthPx,
  wavelengthAtAngleNm,
  wavelengthAtPositionNm,
} from '../../../src/core/render/index.js';
import type { GratingCameraModel } from '../../../src/core/render/index.js';

describe('diffractionAngleDeg(grating, wavelengthNm, order)', () => {
  it('gives β = 36.8699° for 1200 lines/mm, 500 nm, α = 0, order 1', () => {
    // CHECK_VALUES.md, grating equation mλ = d(sin α + sin β): β = asin(0.6) = 36.8699° (C).
    const beta = diffractionAngleDeg({ linesPerMm: 1200, incidenceDeg: 0 }, 500, 1)!;
    expect(Math.abs(beta - 36.8699)).toBeLessThanOrEqual(5e-5);
  });

  it('sends order 1 back along the incident ray at the Littrow angle 17.4576° (1200 lines/mm, 500 nm)', () => {
    // CHECK_VALUES.md: Littrow angle asin(mλ/2d) = 17.4576° (C); in this sign convention β = α at Littrow.
    const beta = diffractionAngleDeg({ linesPerMm: 1200, incidenceDeg: 17.4576 }, 500, 1)!;
    expect(Math.abs(beta - 17.4576)).toBeLessThanOrEqual(1e-4);
  });

  it('returns null where sin β = 1.18: α = 30°, 2400 lines/mm, order 1, 700 nm', () => {
    // CHECK_VALUES.md: "that order does not exist" (R, a grating handbook's worked case; from memory the handbook is
    // C. Palmer, Diffraction Grating Handbook, ch. 2).
    expect(diffractionAngleDeg({ linesPerMm: 2400, incidenceDeg: 30 }, 700, 1)).toBeNull();
    // The same grating still diffracts 500 nm: sin β = 1.2 − 0.5 = 0.7.
    const beta = diffractionAngleDeg({ linesPerMm: 2400, incidenceDeg: 30 }, 500, 1)!;
    expect(Math.abs(beta - (Math.asin(0.7) * 180) / Math.PI)).toBeLessThanOrEqual(1e-9);
  });

  it('puts the zero order at −α whatever the wavelength', () => {
    for (const l of [400, 550, 700]) {
      expect(Math.abs(diffractionAngleDeg({ linesPerMm: 1000, incidenceDeg: 7 }, l, 0)! + 7)).toBeLessThanOrEqual(1e-12);
    }
  });

  it('inverts with wavelengthAtAngleNm for orders ±1, 2', () => {
    const g = { linesPerMm: 1000, incidenceDeg: 4 };
    for (const m of [1, -1, 2]) {
      for (const l of [380, 450, 520]) {
        const beta = diffractionAngleDeg(g, l, m)!;
        expect(Math.abs(wavelengthAtAngleNm(g, beta, m) - l)).toBeLessThanOrEqual(1e-9);
      }
    }
  });

  it('rejects a non-integer order and a zero line density with a message naming the input', () => {
    expect(() => diffractionAngleDeg({ linesPerMm: 1000, incidenceDeg: 0 }, 500, 1.5)).toThrow(/order/);
    expect(() => diffractionAngleDeg({ linesPerMm: 0, incidenceDeg: 0 }, 500, 1)).toThrow(/linesPerMm/);
  });
});

describe('positionAtWavelengthPx(model, λ, m) and wavelengthAtPositionNm(model, x, m)', () => {
  const model: GratingCameraModel = {
    linesPerMm: 1000,
    incidenceDeg: 0,
    cameraAngleDeg: 30,
    focalLengthPx: 1000,
    principalPositionPx: 250,
  };

  it('puts 500 nm at 1000 lines/mm (β = 30° exactly) on the optical axis of a camera at θc = 30°', () => {
    expect(Math.abs(positionAtWavelengthPx(model, 500, 1)! - 250)).toBeLessThanOrEqual(1e-9);
  });

  it('follows x = x0 + f·tan(θm − θc): 500 nm seen by a camera on the grating normal lands f·tan 30° off axis', () => {
    const x = positionAtWavelengthPx({ ...model, cameraAngleDeg: 0, principalPositionPx: 0 }, 500, 1)!;
    expect(Math.abs(x - 1000 * Math.tan(Math.PI / 6))).toBeLessThanOrEqual(1e-9);
  });

  it('is inverted exactly by λ(x) = (d/m)(sin θi + sin(θc + atan((x − x0)/f))) for orders 1, −1, 2', () => {
    for (const m of [1, -1, 2]) {
      const mm = m === -1 ? { ...model, cameraAngleDeg: -30 } : m === 2 ? { ...model, cameraAngleDeg: 60 } : model;
      for (const l of [400, 450, 480]) {
        const x = positionAtWavelengthPx(mm, l, m)!;
        expect(Math.abs(wavelengthAtPositionNm(mm, x, m)! - l)).toBeLessThanOrEqual(1e-9);
      }
    }
  });

  it('gives the local dispersion dλ/dx, checked by a central difference', () => {
    for (const x of [-300, 0, 250, 700]) {
      const fd = (wavelengthAtPositionNm(model, x + 1e-3, 1)! - wavelengthAtPositionNm(model, x - 1e-3, 1)!) / 2e-3;
      expect(Math.abs(dispersionAtPositionNmPerPx(model, x, 1) - fd)).toBeLessThanOrEqual(1e-8);
    }
  });

  it('returns null for an order that leaves the grating behind the camera or does not exist', () => {
    // β = −30° is 60° off axis: still in front of the camera, at x0 + f·tan(−60°).
    expect(Math.abs(positionAtWavelengthPx(model, 500, -1)! - (250 - 1000 * Math.sqrt(3)))).toBeLessThanOrEqual(1e-9);
    expect(positionAtWavelengthPx({ ...model, cameraAngleDeg: 60 }, 700, -1)).toBeNull(); // 104° off axis
    expect(positionAtWavelengthPx(model, 1200, 1)).toBeNull(); // sin β = 1.2
  });
});

describe('focalLengthPxFrom35mm({focalLength35mmMm, widthPx, heightPx})', () => {
  it('maps the 36 × 24 mm frame onto an image of the same shape: 26 mm on 3600 × 2400 px → 2600 px', () => {
    // Diagonal matching (common practice, no source) reduces to width matching for a 3:2 image.
    const f = focalLengthPxFrom35mm({ focalLength35mmMm: 26, widthPx: 3600, heightPx: 2400 });
    expect(Math.abs(f - 2600)).toBeLessThanOrEqual(1e-9);
  });
});
