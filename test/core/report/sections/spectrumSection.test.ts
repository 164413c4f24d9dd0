import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { plotSticks } from '../../../../src/core/report/sections/plotSticks.js';
import { spectrumSection } from '../../../../src/core/report/sections/spectrumSection.js';
import { createSvgDocument } from '../../../../src/io/svgDocument.js';
import { cliJson, DEMO, figure, parseSvg } from './results.js';

const document = createSvgDocument();
let tube: Record<string, any>;
beforeAll(() => {
  tube = cliJson(['spectrum', path.join(DEMO, 'tube-a.jpg')]);
});

/** x of each rotated label (its translate), in px. */
function labelXs(svg: string): number[] {
  return [...parseSvg(svg).querySelectorAll('text.stick-label')].map((t) => Number(/translate\(([-\d.]+)/.exec(t.getAttribute('transform') ?? '')![1]));
}

describe('spectrumSection(json, {document})', () => {
  it('counts the peaks and clipped ones, and says when no calibration was applied', () => {
    const { section, summary } = spectrumSection(tube, { document });
    const clipped = tube.peaks.filter((p: { saturated: boolean }) => p.saturated).length;
    expect(section.verdict).toBe(`${tube.peaks.length} peaks found${clipped ? `, ${clipped} clipped` : ''} (positions in pixels along the band: no wavelength calibration applied)`);
    expect(summary.item).toBe('tube-a.jpg');
    expect(figure(section.figures, /^Camera/)).toMatch(/ISO 64/);
    expect(section.tables![0].rows.length).toBe(tube.peaks.length);
  });

  it('plots one stick per peak on a log axis when the heights span more than 100×, clipped ones dashed', () => {
    const { section } = spectrumSection(tube, { document });
    const svg = parseSvg(section.svgs![0]);
    const sticks = [...svg.querySelectorAll('line.stick')];
    expect(sticks.length).toBe(tube.peaks.length);
    expect(sticks.filter((s) => s.getAttribute('stroke-dasharray')).length).toBe(tube.peaks.filter((p: { saturated: boolean }) => p.saturated).length);
    const heights = tube.peaks.map((p: { height: number }) => p.height);
    expect(Math.max(...heights) / Math.min(...heights)).toBeGreaterThan(100);
    expect(section.svgs![0]).toMatch(/log scale/);
  });

  it('uses wavelengths once the peaks carry them', () => {
    const calibrated = structuredClone(tube);
    calibrated.peaks.forEach((p: Record<string, number>) => {
      p.wavelength_nm = 380 + 0.3 * p.position_px;
      p.wavelength_uncertainty_nm = 0.05;
    });
    const { section } = spectrumSection(calibrated, { document });
    expect(section.verdict).toMatch(/nm$/);
    expect(section.svgs![0]).toMatch(/wavelength \(nm\)/);
    expect(section.tables![0].columns).toContain('wavelength (nm)');
  });
});

describe('plotSticks(options)', () => {
  it('labels the tallest maxLabels sticks, never two labels closer than 12 px (1.2 em at 10 px)', () => {
    const sticks = Array.from({ length: 60 }, (_, i) => ({ x: 400 + i * 2, height: 1 + ((i * 37) % 11), label: `line ${i}` }));
    const svg = plotSticks({ document, sticks, xLabel: 'x', yLabel: 'y', maxLabels: 40 });
    const xs = labelXs(svg).sort((a, b) => a - b);
    expect(xs.length).toBe(40);
    for (let i = 1; i < xs.length; i++) expect(xs[i] - xs[i - 1]).toBeGreaterThanOrEqual(12 - 0.1);
    const shortest = Math.min(...sticks.filter((s) => svg.includes(`>${s.label}<`)).map((s) => s.height));
    expect(sticks.filter((s) => s.height > shortest && !svg.includes(`>${s.label}<`))).toEqual([]);
  });

  it('spreads the labels of two sticks at one place either side, each tied to its stick by a leader', () => {
    const svg = plotSticks({ document, sticks: [{ x: 1, height: 1, label: 'low' }, { x: 1.001, height: 5, label: 'high' }], xLabel: 'x', yLabel: 'y', xDomain: [0, 2] });
    expect(svg).toMatch(/>high</);
    expect(svg).toMatch(/>low</);
    const xs = labelXs(svg);
    expect(Math.abs(xs[1] - xs[0])).toBeGreaterThanOrEqual(12 - 0.1);
    expect(parseSvg(svg).querySelectorAll('path.label-leader').length).toBe(2);
  });

  it('keeps the tallest when more sticks carry labels than the width holds', () => {
    // 200 px wide: 118 px inside the margins hold 9 labels at 12 px.
    const sticks = Array.from({ length: 30 }, (_, i) => ({ x: i, height: i + 1, label: `s${i}` }));
    const svg = plotSticks({ document, sticks, xLabel: 'x', yLabel: 'y', widthPx: 200 });
    const shown = sticks.filter((s) => svg.includes(`>${s.label}<`)).map((s) => s.x);
    expect(shown).toEqual([21, 22, 23, 24, 25, 26, 27, 28, 29]);
  });
});
