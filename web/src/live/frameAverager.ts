/**
 * The frames behind an averaged live spectrum, kept so that a capture measures the same mean: the last N crops' 8-bit
 * codes (a copy per frame, the cheap part), and their mean in linear light computed only when asked (capture, the
 * background identification). Averaging happens after the sRGB decode — a mean of gamma-encoded codes would bias every
 * line — and a pixel counts as clipped in the mean when it was clipped in any frame.
 */
import type { LinearImage } from '../../../src/core/types.js';
import { SRGB_DECODE_LUT_8 } from '../../../src/core/units/srgb.js';

export class FrameAverager {
  private frames: Uint8Array[] = [];
  private next = 0;
  private width = 0;
  private height = 0;
  private window = 1;

  setWindow(frames: number): void {
    const n = Math.max(1, Math.min(64, Math.round(frames)));
    if (n !== this.window) {
      this.window = n;
      this.reset();
    }
  }

  get frameWindow(): number {
    return this.window;
  }

  get filled(): number {
    return this.frames.length;
  }

  reset(): void {
    this.frames = [];
    this.next = 0;
  }

  /** Keeps a copy of this frame's RGB codes (width × height × 3). */
  push(codes: Uint8Array, width: number, height: number): void {
    if (width !== this.width || height !== this.height) {
      this.reset();
      this.width = width;
      this.height = height;
    }
    if (this.frames.length < this.window) this.frames.push(codes.slice());
    else this.frames[this.next].set(codes);
    this.next = (this.next + 1) % this.window;
  }

  /** The mean of the kept frames in linear light, with clip flags; null before the first frame. */
  mean(): LinearImage | null {
    const k = this.frames.length;
    if (k === 0) return null;
    const n = this.width * this.height * 3;
    const table = SRGB_DECODE_LUT_8;
    const data = new Float32Array(n);
    const saturated = new Uint8Array(this.width * this.height);
    for (const f of this.frames) {
      for (let i = 0; i < n; i++) data[i] += table[f[i]];
      for (let p = 0, i = 0; p < saturated.length; p++, i += 3) {
        if (f[i] === 255 || f[i + 1] === 255 || f[i + 2] === 255) saturated[p] = 1;
      }
    }
    const inv = 1 / k;
    for (let i = 0; i < n; i++) data[i] *= inv;
    return { width: this.width, height: this.height, channels: 3, data, saturated };
  }
}
