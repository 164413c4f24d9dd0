import { convert } from 'jcampconverter';
import { describe, expect, it } from 'vitest';
import { spectrumToJcampDx } from '../../../src/core/export/jcampDx.js';

// Read back with jcampconverter (cheminfo), an independent general-purpose JCAMP-DX parser from the npm registry.
describe('spectrumToJcampDx(x, y, options)', () => {
  it('round-trips an evenly sampled emission spectrum through an independent parser', () => {
    const x = Array.from({ length: 301 }, (_, i) => 400 + i * 1);
    const y = x.map((w) => 1000 * Math.exp(-0.5 * ((w - 546.07) / 1.2) ** 2) + 20);
    const text = spectrumToJcampDx(x, y, { title: 'Hg test', date: new Date('2026-12-01T10:00:00Z') });
    expect(text).toMatch(/^##TITLE=Hg test\n##JCAMP-DX=4.24\n/);
    for (const line of text.split('\n')) expect(line.length).toBeLessThanOrEqual(80);
    const parsed = convert(text, { keepRecordsRegExp: /.*/ });
    const data = parsed.flatten[0].spectra[0].data;
    expect(data.x.length).toBe(301);
    for (let i = 0; i < 301; i += 17) {
      expect(Math.abs(data.x[i] - x[i])).toBeLessThanOrEqual(1e-6);
      expect(Math.abs(data.y[i] - y[i])).toBeLessThanOrEqual(1e-3 * 1020);
    }
  });

  it('resamples an uneven wavelength grid onto an even one and keeps the line where it was', () => {
    // A camera's non-linear dispersion: λ = 380 + 0.35 p + 2e-5 p².
    const p = Array.from({ length: 1200 }, (_, i) => i);
    const x = p.map((v) => 380 + 0.35 * v + 2e-5 * v * v);
    const y = x.map((w) => Math.exp(-0.5 * ((w - 611.6) / 0.8) ** 2));
    const parsed = convert(spectrumToJcampDx(x, y, { title: 'uneven' }));
    const data = parsed.flatten[0].spectra[0].data;
    let best = 0;
    for (let i = 1; i < data.y.length; i++) if (data.y[i] > data.y[best]) best = i;
    const step = data.x[1] - data.x[0];
    expect(Math.abs(data.x[best] - 611.6)).toBeLessThanOrEqual(step);
    expect(Math.abs(data.x[data.x.length - 1] - x[x.length - 1])).toBeLessThanOrEqual(1e-6);
  });

  it('rejects mismatched lengths and non-finite values', () => {
    expect(() => spectrumToJcampDx([1, 2], [1], { title: 't' })).toThrow(/one y per x/);
    expect(() => spectrumToJcampDx([1, 2, 3], [1, NaN, 2], { title: 't' })).toThrow(/point 2/);
  });
});
