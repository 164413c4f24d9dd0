import { describe, expect, it } from 'vitest';
import { identifySpecies } from '../../../src/core/identify/identifySpecies.js';
import { plotIdentification, plotIdentificationSvg } from '../../../src/core/identify/plotIdentification.js';
import type { Spectrum } from '../../../src/core/types.js';
import { createSvgDocument } from '../../../src/io/svgDocument.js';
import { loadLineList } from '../../../src/io/lineList.js';
import { peakAt } from './syntheticPeaks.js';

describe('plotIdentificationSvg(spectrum, peaks, species, {document})', () => {
  // A neon-like spectrum (Ne I 585.249, 640.225, 614.306, 703.241 nm; NIST ASD) with one unexplained line at 520 nm.
  const lines = [585.249, 640.225, 614.306, 703.241, 659.895, 667.828, 692.947, 588.19, 609.616, 626.65];
  const n = 600;
  const wavelengthNm = Float64Array.from({ length: n }, (_, i) => 480 + (250 * i) / (n - 1));
  const intensity = new Float64Array(n);
  for (let i = 0; i < n; i++) for (const [k, w] of [...lines, 520].entries()) intensity[i] += (k === lines.length ? 0.3 : 1 / (1 + k * 0.2)) * Math.exp(-0.5 * ((wavelengthNm[i] - w) / 0.8) ** 2);
  const spectrum: Spectrum = { positionPx: Float64Array.from({ length: n }, (_, i) => i), intensity };
  const peaks = [...lines, 520].map((w, k) => ({ ...peakAt(w, k === lines.length ? 0.3 : 1 / (1 + k * 0.2)), positionPx: ((w - 480) * (n - 1)) / 250 }));
  const id = identifySpecies(peaks, { lines: loadLineList(), rangeNm: [480, 730] });

  it('labels the identified lines by spectrum and wavelength, marks the unexplained peak "?", and lists the species', () => {
    const svg = plotIdentificationSvg(spectrum, id.peaks, id.species, { document: createSvgDocument(), wavelengthNm, title: 'Tube A' });
    expect(svg).toContain('<svg');
    expect(svg).toContain('Ne I 640.2');
    expect(svg).toContain('Ne I 585.2');
    expect(svg).toMatch(/class="line-label unexplained"[^>]*>\? 520\.0</);
    expect(svg).toMatch(/Ne {2}score 1\.00, \d+ % of the flux/);
    expect(svg).toContain('wavelength (nm)');
  });

  it('labels every peak, upright and inside the plot, its species legend at the top right', () => {
    const chart = plotIdentification(spectrum, id.peaks, id.species, { document: createSvgDocument(), wavelengthNm });
    const labels = [...chart.svg.node()!.querySelectorAll('text.line-label')];
    expect(labels.length).toBe(id.peaks.length);
    for (const t of labels) {
      const m = /^translate\(([-\d.]+),([-\d.]+)\) rotate\(-90\)$/.exec(t.getAttribute('transform')!)!;
      expect(Number(m[1])).toBeGreaterThan(0);
      expect(Number(m[1])).toBeLessThan(chart.innerWidthPx);
    }
    expect(chart.svg.node()!.querySelector('g.legend text')!.textContent).toMatch(/^Ne {2}score/);
  });

  it('falls back to positions when no wavelength scale is given', () => {
    const svg = plotIdentificationSvg(spectrum, id.peaks, id.species, { document: createSvgDocument() });
    expect(svg).toContain('position along the band (px)');
  });
});
