import { describe, expect, it } from 'vitest';
import { plotSpectrum, plotSpectrumSvg } from '../../src/core/spectrum/plotSpectrum.js';
import type { Peak, Spectrum } from '../../src/core/types.js';
import { createSvgDocument } from '../../src/io/svgDocument.js';

function gaussianSpectrum(n: number, lines: Array<[number, number]>): Spectrum {
  const positionPx = Float64Array.from({ length: n }, (_, i) => i);
  const intensity = new Float64Array(n);
  for (const [c, a] of lines) for (let i = 0; i < n; i++) intensity[i] += a * Math.exp(-0.5 * ((i - c) / 2) ** 2);
  const saturated = new Uint8Array(n);
  saturated[150] = saturated[151] = saturated[152] = 1;
  return { positionPx, intensity, saturated, channels: { r: intensity.map((v) => v * 0.5), g: intensity.map((v) => v * 0.3), b: intensity.map((v) => v * 0.2) } };
}

function peak(positionPx: number, height: number, extra: Partial<Peak> = {}): Peak {
  return { positionPx, positionUncertaintyPx: 0.05, fwhmPx: 4.7, height, area: height * 5, prominence: height, snr: 100, saturated: false, blended: false, ...extra };
}

describe('plotSpectrum(spectrum, peaks, options)', () => {
  const spectrum = gaussianSpectrum(300, [
    [50, 0.4],
    [151, 1],
    [200, 0.2],
    [206, 0.15],
  ]);
  const peaks = [peak(50, 0.4), peak(151, 1, { saturated: true }), peak(200, 0.2, { blended: true }), peak(206, 0.15, { blended: true })];

  it('draws the combined trace, three channel traces, one marker per peak at x(positionPx), and shades clipped samples', () => {
    const chart = plotSpectrum(spectrum, peaks, { document: createSvgDocument() });
    const svg = chart.svg.node()!;
    expect(svg.querySelectorAll('path.intensity').length).toBe(1);
    expect(svg.querySelectorAll('path.channel-r, path.channel-g, path.channel-b').length).toBe(3);
    const markers = [...svg.querySelectorAll('path.peak-marker')];
    expect(markers.length).toBe(4);
    const mx = Number(/^M([-\d.]+),/.exec(markers[0].getAttribute('d')!)![1]);
    expect(Math.abs(mx - chart.x(50))).toBeLessThanOrEqual(1e-9);
    expect(markers[2].getAttribute('fill')).toBe('none'); // blended: hollow
    expect(svg.querySelectorAll('g.saturated rect').length).toBe(1); // samples 150–152 merged into one run
    expect(svg.querySelector('text.peak-label')!.textContent).toBe('50.0');
  });

  it('labels only the maxLabels highest peaks and marks a clipped one in its label', () => {
    const chart = plotSpectrum(spectrum, peaks, { document: createSvgDocument(), maxLabels: 2 });
    const labels = [...chart.svg.node()!.querySelectorAll('text.peak-label')].map((t) => t.textContent);
    expect(labels).toEqual(['50.0', '151.0 (clipped)']);
  });

  it('uses a wavelength axis when the spectrum is calibrated', () => {
    const wl = { ...spectrum, wavelengthNm: spectrum.positionPx.map((p) => 400 + p) };
    const text = plotSpectrumSvg(wl, [peak(50, 0.4, { wavelengthNm: 450 })], { document: createSvgDocument(), title: 'calibrated' });
    expect(text.startsWith('<?xml')).toBe(true);
    expect(text).toContain('wavelength (nm)');
    expect(text).toContain('>450.0<');
  });

  it('rejects a spectrum whose positionPx and intensity differ in length', () => {
    const bad = { positionPx: new Float64Array(3), intensity: new Float64Array(4) };
    expect(() => plotSpectrum(bad, [], { document: createSvgDocument() })).toThrow(/spectrum: expected at least 2 samples with matching positionPx and intensity/);
  });
});
