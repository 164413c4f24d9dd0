/**
 * The sensor's last step: adds the ambient light (a linear gradient times a radial vignetting fall-off), draws photon
 * and read noise, clips at full well and scales to linear light relative to the clipping level. Kept apart from the
 * geometry so that this per-pixel loop (~6 million samples for a 1080p frame) stays small and fast.
 */
import { NoiseGenerator } from './noise.js';
import type { Rgb } from './sensor.js';

export interface ExposeFrameOptions {
  widthPx: number;
  heightPx: number;
  ambient: { electrons: Rgb; gradient: { x: number; y: number }; vignetting: number };
  fullWellElectrons: number;
  readNoiseElectrons: number;
  noise: boolean;
  seed: number;
}

/** Relative ambient level at (x, y): (1 + gx·(x − cx)/W + gy·(y − cy)/H)₊ · (1 − k·r²/r²max). */
export function ambientFactor(o: ExposeFrameOptions, x: number, y: number): number {
  const cx = (o.widthPx - 1) / 2;
  const cy = (o.heightPx - 1) / 2;
  const { gradient, vignetting } = o.ambient;
  return (
    Math.max(0, 1 + (gradient.x * (x - cx)) / o.widthPx + (gradient.y * (y - cy)) / o.heightPx) *
    (1 - (vignetting * ((x - cx) ** 2 + (y - cy) ** 2)) / (cx * cx + cy * cy))
  );
}

/**
 * Turns expected source electrons (interleaved RGB, modified in place) into the recorded image: values relative to
 * full well in [0, 1]. Returns the per-pixel saturation flags (1 where a channel clipped).
 */
export function exposeFrame(electrons: Float32Array, o: ExposeFrameOptions): Uint8Array {
  const W = o.widthPx;
  const H = o.heightPx;
  const saturated = new Uint8Array(W * H);
  const noise = new NoiseGenerator(o.seed);
  const full = o.fullWellElectrons;
  const read = o.readNoiseElectrons;
  const noisy = o.noise;
  const { r: ambR, g: ambG, b: ambB } = o.ambient.electrons;
  const cx = (W - 1) / 2;
  const cy = (H - 1) / 2;
  const gradX = o.ambient.gradient.x / W;
  const gradY = o.ambient.gradient.y / H;
  const vig = o.ambient.vignetting / (cx * cx + cy * cy);
  const invFull = 1 / full;
  for (let y = 0; y < H; y++) {
    const rowLinear = 1 + gradY * (y - cy);
    const rowR2 = (y - cy) * (y - cy);
    let i = y * W;
    for (let x = 0; x < W; x++, i++) {
      const f = Math.max(0, rowLinear + gradX * (x - cx)) * (1 - vig * ((x - cx) * (x - cx) + rowR2));
      const a = 3 * i;
      let clipped = 0;
      for (let c = 0; c < 3; c++) {
        const m = electrons[a + c] + (c === 0 ? ambR : c === 1 ? ambG : ambB) * f;
        let v = m;
        if (noisy) {
          v = noise.poisson(m);
          if (read > 0) v += read * noise.normal();
        }
        if (v >= full) {
          v = full;
          clipped = 1;
        } else if (v < 0) v = 0;
        electrons[a + c] = v * invFull;
      }
      saturated[i] = clipped;
    }
  }
  return saturated;
}
