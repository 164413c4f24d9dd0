/**
 * Frame averaging for dim tubes, on the live spectra: the running mean of the last N frames' box spectra. Since the
 * live extraction is linear in the pixel values (see extractLiveSpectrum), this equals the live spectrum of the mean
 * of the N frames (linear light), at the cost of a few thousand additions per frame instead of a pass over every
 * pixel of the crop. Noise falls as 1/√N. A sample counts as clipped when it was in any frame of the window, the
 * exposure meter shows the brightest pixel of the window.
 */
import type { LiveSpectrum } from './liveSpectrum.js';

interface Slot {
  intensity: Float64Array;
  channels: [Float64Array, Float64Array, Float64Array] | null;
  saturated: Uint8Array;
  peakLevel: number;
}

export class SpectrumAverager {
  private slots: Slot[] = [];
  private next = 0;
  private window = 1;
  private sum: Float64Array[] = [];
  private clipCount = new Uint16Array(0);
  private out: LiveSpectrum | null = null;
  private key = '';

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
    return this.slots.length;
  }

  reset(): void {
    this.slots = [];
    this.next = 0;
    this.key = '';
  }

  /** Adds one frame's box spectrum (copied) and returns the mean of the window (noise and peaks still to be found). */
  push(s: LiveSpectrum): LiveSpectrum {
    const n = s.intensity.length;
    const colour = s.channels !== null;
    const key = `${n}|${colour}|${s.positionPx[0]}|${s.positionPx[n - 1]}`;
    if (key !== this.key) {
      this.reset();
      this.key = key;
      this.sum = Array.from({ length: colour ? 4 : 1 }, () => new Float64Array(n));
      this.clipCount = new Uint16Array(n);
      this.out = {
        positionPx: s.positionPx.slice(),
        intensity: new Float64Array(n),
        channels: colour ? { r: new Float64Array(n), g: new Float64Array(n), b: new Float64Array(n) } : null,
        saturated: new Uint8Array(n),
        noise: 0,
        peaks: [],
        peakLevel: 0,
        saturatedSamples: 0,
      };
    }
    const src = [s.intensity, ...(s.channels ? [s.channels.r, s.channels.g, s.channels.b] : [])];
    let slot: Slot;
    if (this.slots.length === this.window) {
      slot = this.slots[this.next];
      const old = [slot.intensity, ...(slot.channels ?? [])];
      for (let c = 0; c < old.length; c++) {
        const sum = this.sum[c];
        const o = old[c];
        for (let i = 0; i < n; i++) sum[i] -= o[i];
      }
      for (let i = 0; i < n; i++) this.clipCount[i] -= slot.saturated[i];
    } else {
      slot = { intensity: new Float64Array(n), channels: colour ? [new Float64Array(n), new Float64Array(n), new Float64Array(n)] : null, saturated: new Uint8Array(n), peakLevel: 0 };
      this.slots.push(slot);
    }
    this.next = (this.next + 1) % this.window;
    const dst = [slot.intensity, ...(slot.channels ?? [])];
    for (let c = 0; c < src.length; c++) {
      dst[c].set(src[c]);
      const sum = this.sum[c];
      const v = src[c];
      for (let i = 0; i < n; i++) sum[i] += v[i];
    }
    slot.saturated.set(s.saturated);
    slot.peakLevel = s.peakLevel;
    for (let i = 0; i < n; i++) this.clipCount[i] += s.saturated[i];
    const out = this.out!;
    const inv = 1 / this.slots.length;
    const means = [out.intensity, ...(out.channels ? [out.channels.r, out.channels.g, out.channels.b] : [])];
    for (let c = 0; c < means.length; c++) {
      const m = means[c];
      const sum = this.sum[c];
      for (let i = 0; i < n; i++) m[i] = sum[i] * inv;
    }
    let clipped = 0;
    for (let i = 0; i < n; i++) {
      out.saturated[i] = this.clipCount[i] > 0 ? 1 : 0;
      clipped += out.saturated[i];
    }
    out.saturatedSamples = clipped;
    out.peakLevel = Math.max(...this.slots.map((x) => x.peakLevel));
    return out;
  }
}
