/**
 * Working arrays kept from photo to photo (src/core/spectrum/scratch.ts): the band search and extraction take their
 * per-sample arrays from them, so a photo analysed after another must give exactly what it gives on its own.
 */
import { describe, expect, it } from 'vitest';
import { extractSpectrum } from '../../../src/core/spectrum/extract.js';
import { findBand } from '../../../src/core/spectrum/findBand.js';
import { MAX_KEPT_BYTES, Scratch, takeOrNew } from '../../../src/core/spectrum/scratch.js';
import type { BandGeometry, LinearImage } from '../../../src/core/types.js';
import { renderBandImage } from '../../helpers/bandImage.js';

describe('Scratch.take(slot, type, length)', () => {
  it('gives a zero-filled view of the length asked, of the same memory while it fits', () => {
    const s = new Scratch();
    const a = s.take('a', Float32Array, 100);
    expect(a).toBeInstanceOf(Float32Array);
    expect(a.length).toBe(100);
    a.fill(7);
    const b = s.take('a', Float32Array, 80);
    expect(b.buffer).toBe(a.buffer);
    expect(b.length).toBe(80);
    expect(b.every((v) => v === 0)).toBe(true);
    // Longer than the buffer: a new one, still zero.
    const c = s.take('a', Float32Array, 1000);
    expect(c.buffer).not.toBe(a.buffer);
    expect(c.length).toBe(1000);
    expect(c.every((v) => v === 0)).toBe(true);
    // Slots are separate; another type in a slot gets its own buffer.
    expect(s.take('b', Float32Array, 10).buffer).not.toBe(c.buffer);
    const d = s.take('a', Float64Array, 10);
    expect(d).toBeInstanceOf(Float64Array);
    expect(takeOrNew(undefined, 'a', Uint8Array, 5)).toEqual(new Uint8Array(5));
  });

  it('keeps no buffer larger than MAX_KEPT_BYTES: such an array is new every time', () => {
    const s = new Scratch();
    const n = MAX_KEPT_BYTES / 4 + 1;
    const a = s.take('big', Float32Array, n);
    expect(a.length).toBe(n);
    expect(s.take('big', Float32Array, n).buffer).not.toBe(a.buffer);
    // A smaller one in the same slot is kept again.
    const b = s.take('big', Float32Array, 1000);
    expect(s.take('big', Float32Array, 1000).buffer).toBe(b.buffer);
  });
});

function photo(seed: number, channels: 1 | 3, heightPx: number, angleDeg: number, codes8: boolean): { image: LinearImage; truth: BandGeometry } {
  const truth: BandGeometry = { angleDeg, slantDeg: 2, center: { x: 640.3, y: 359.6 }, lengthPx: 800, heightPx };
  const lines = Array.from({ length: 10 }, (_, k) => ({ positionPx: 50 + k * 75.1, amplitude: 0.05 + 0.05 * (k % 3) }));
  const { image } = renderBandImage({
    width: 1280,
    height: 720,
    channels,
    band: truth,
    lines,
    lineSigmaPx: 1.6,
    codes8,
    ambient: { level: 0.03, perPxX: 2e-5, perPxY: -1e-5 },
    noise: { gain: 4000, readNoise: 0.002 },
    seed,
  });
  return { image, truth };
}

/** Everything a photo's analysis gives, as text: band geometry, warnings, spectrum and channels to the last bit. */
function analysis(image: LinearImage): string {
  const found = findBand(image);
  const e = extractSpectrum(image, found.band, found.extraction);
  return JSON.stringify({ band: found.band, warnings: found.warnings, d: found.diagnostics, e: { ...e, spectrum: e.spectrum } }, (_, v) =>
    ArrayBuffer.isView(v) ? Array.from(v as Float64Array) : v,
  );
}

describe('findBand and extractSpectrum, one photo after another', () => {
  it('give each photo exactly its own results, whatever was analysed before (the working arrays hold nothing over)', () => {
    // Different sizes of every working array: a tall colour band, a short grey one, a colour band from 8-bit codes.
    const a = photo(31, 3, 160, 7, false).image;
    const b = photo(32, 1, 30, -12, false).image;
    const c = photo(33, 3, 60, 2, true).image;
    const first = [analysis(a), analysis(b), analysis(c)];
    const again = [analysis(c), analysis(a), analysis(b)];
    expect(again[1]).toBe(first[0]);
    expect(again[2]).toBe(first[1]);
    expect(again[0]).toBe(first[2]);
    expect(first[0]).not.toBe(first[2]);
  });
});
