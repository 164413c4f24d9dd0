import { describe, expect, it } from 'vitest';
import { textWidthPx } from '../../src/core/plot/labelLayout.js';
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

describe('plotSpectrum: peak labels where peaks crowd', () => {
  // Twelve lines within 40 samples (a crowd no two labels fit in side by side), a tall one among them, and a bright
  // line at the right edge under a legend: every label must stay readable, inside the plot and clear of the traces.
  const centres = Array.from({ length: 12 }, (_, k) => 100 + 3.3 * k);
  const lines: Array<[number, number]> = [...centres.map((c, k): [number, number] => [c, k === 5 ? 1 : 0.15 + 0.02 * k]), [596, 0.9]];
  const n = 600;
  const positionPx = Float64Array.from({ length: n }, (_, i) => i);
  const intensity = new Float64Array(n);
  for (const [c, a] of lines) for (let i = 0; i < n; i++) intensity[i] += a * Math.exp(-0.5 * ((i - c) / 0.8) ** 2);
  const spectrum: Spectrum = { positionPx, intensity, wavelengthNm: positionPx.map((p) => 400 + 0.5 * p) };
  const peaks = lines.map(([c, a]) => peak(c, a, { wavelengthNm: 400 + 0.5 * c }));
  const legend = [{ text: 'Ne  score 1.00, 100 % of the flux', colour: '#000' }, { text: '? 2 peaks no species explains', colour: '#777' }];
  const chart = plotSpectrum(spectrum, peaks, { document: createSvgDocument(), maxLabels: 40, legend, labelOf: (p) => ({ text: `Ne I ${p.wavelengthNm!.toFixed(1)}` }) });
  const svg = chart.svg.node()!;
  const fontPx = 9;
  const labels = [...svg.querySelectorAll('text.peak-label')].map((t) => {
    const m = /translate\(([-\d.]+),([-\d.]+)\) rotate\(-90\)/.exec(t.getAttribute('transform')!)!;
    const x = Number(m[1]);
    const y = Number(m[2]);
    // Upright text reading upwards: the glyphs lie across [x − ascent, x + descent]; its length as labelLayout.ts
    // estimates it (rounded up from DejaVu Sans' advances).
    return { text: t.textContent!, x0: x - 0.8 * fontPx, x1: x + 0.22 * fontPx, y0: y - textWidthPx(t.textContent!, fontPx), y1: y };
  });

  it('labels every peak', () => {
    expect(labels.length).toBe(13);
  });

  it('no two labels overlap, and each lies inside the plot area', () => {
    for (let i = 0; i < labels.length; i++) {
      const a = labels[i];
      expect(a.x0).toBeGreaterThanOrEqual(0);
      expect(a.x1).toBeLessThanOrEqual(chart.innerWidthPx);
      expect(a.y0).toBeGreaterThanOrEqual(0);
      for (let j = i + 1; j < labels.length; j++) {
        const b = labels[j];
        expect(a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1, `${a.text} on ${b.text}`).toBe(false);
      }
    }
  });

  it('no label crosses a trace (each starts above the highest sample beneath it) or the legend', () => {
    for (const l of labels) {
      for (let i = 0; i < n; i++) {
        const sx = chart.x(spectrum.wavelengthNm![i]);
        if (sx < l.x0 || sx > l.x1) continue;
        expect(chart.y(intensity[i]), `${l.text} at sample ${i}`).toBeGreaterThan(l.y1);
      }
    }
    const legendTexts = [...svg.querySelectorAll('g.legend text')];
    expect(legendTexts.map((t) => t.textContent)).toEqual(legend.map((l) => l.text));
    // The legend: right-aligned 8 px in from the corner, 10 px text on 12 px lines from a first baseline 8 px down.
    const legendX0 = chart.innerWidthPx - 8 - textWidthPx(legend[0].text, 10);
    const edge = labels.find((l) => l.text === 'Ne I 698.0')!;
    expect(edge.x1).toBeGreaterThan(legendX0);
    expect(edge.y0).toBeGreaterThan(8 + 12 * (legend.length - 1) + 0.22 * 10);
  });

  it('ties a label that moved to its peak with a leader', () => {
    const leaders = [...svg.querySelectorAll('path.label-leader')];
    expect(leaders.length).toBeGreaterThanOrEqual(11);
    for (const d of leaders.map((p) => p.getAttribute('d')!)) {
      const x0 = Number(/^M([-\d.]+),/.exec(d)![1]);
      expect(peaks.some((p) => Math.abs(chart.x(p.wavelengthNm!) - x0) < 0.06), d).toBe(true);
    }
  });
});
