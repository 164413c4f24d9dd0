import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { formatWithUncertainty } from '../../../../src/core/report/html.js';
import { gratingSection } from '../../../../src/core/report/sections/gratingSection.js';
import { createSvgDocument } from '../../../../src/io/svgDocument.js';
import { cliJson, DEMO, figure, parseSvg, plainText } from './results.js';

const document = createSvgDocument();
let screen: Record<string, any>;
let angles: Record<string, any>;
beforeAll(() => {
  screen = cliJson(['grating', '--table', path.join(DEMO, 'grating/slide-c-screen.csv'), '--wavelength', '632.816', '--distance', '850', '--distance-uncertainty', '2', '--nominal', '600']);
  angles = cliJson(['grating', '--table', path.join(DEMO, 'grating/slide-d-goniometer.csv'), '--wavelength', '632.816', '--angle-uncertainty', '0.017', '--nominal', '300', '--tolerance', '1%']);
});

describe('gratingSection(json, {document, source})', () => {
  it('gives the verdict against the nominal with the measured line density ± u', () => {
    const { section, summary } = gratingSection(screen, { document, source: 'out/slide-c.json' });
    const density = formatWithUncertainty(screen.lines_per_mm, screen.lines_per_mm_uncertainty, 'lines/mm');
    const word = { within: 'Matches its label', outside: 'Does not match its label', cannot_tell: 'Cannot tell' }[screen.verdict as string]!;
    expect(plainText(section.verdict)).toMatch(new RegExp(`^${word}.*\\(600 lines/mm\\): measured ${density.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}$`));
    // The item is the measured input the JSON names (as for spectra), not the results file it was saved in.
    expect(summary.item).toBe('slide-c-screen.csv');
    const { summary: unnamed } = gratingSection({ ...screen, input: { file: null, kind: 'command-line' } }, { document, source: 'out/slide-c.json' });
    expect(unnamed.item).toBe('slide-c.json');
    expect(plainText(summary.keyFigure)).toBe(density);
    expect(figure(section.figures, /^Verdict/)).toBe(screen.verdict_detail.explanation);
    expect(figure(section.figures, /^Tilt/)).toMatch(/\(fitted\)$/);
    expect(section.warnings).toEqual(screen.warnings);
  });

  it('tabulates each order with residual / uncertainty and plots them on whole-number orders', () => {
    const { section } = gratingSection(screen, { document });
    const orders = section.tables!.find((t) => t.caption === 'Measured orders')!;
    expect(orders.rows.length).toBe(screen.residuals.length);
    screen.residuals.forEach((q: Record<string, number>, i: number) => {
      const shown = Number(plainText(String(orders.rows[i][5])));
      expect(Math.abs(shown - q.residual_mm / q.uncertainty_mm)).toBeLessThanOrEqual(5e-3 * Math.max(1, Math.abs(shown)));
    });
    const svg = parseSvg(section.svgs![0]);
    const ticks = [...svg.querySelectorAll('g.axis-x .tick text')].map((t) => t.textContent);
    expect(ticks.every((t) => /^−?\d+$/.test(t ?? ''))).toBe(true);
    expect(svg.querySelectorAll('g.points circle').length).toBe(screen.residuals.length);
  });

  it('shows angles in degrees for the goniometer method and lists the derived orders', () => {
    const { section } = gratingSection(angles, { document });
    expect(section.subtitle).toMatch(/diffraction angles/);
    const orders = section.tables!.find((t) => t.caption === 'Measured orders')!;
    expect(orders.rows.every((r) => /°$/.test(plainText(String(r[2]))))).toBe(true);
    const derived = section.tables!.find((t) => /^Derived figures/.test(t.caption ?? ''))!;
    expect(derived.rows.length).toBe(angles.derived.orders.length);
  });

  it('says "measured" when no nominal was given', () => {
    const bare = { ...screen, verdict: null, verdict_detail: null };
    const { section, summary } = gratingSection(bare, { document });
    expect(summary.result).toBe('measured');
    expect(plainText(section.verdict)).toBe(formatWithUncertainty(screen.lines_per_mm, screen.lines_per_mm_uncertainty, 'lines/mm'));
  });

  it('bad input: a residual without its measured value names the key', () => {
    const bad = structuredClone(screen);
    delete bad.residuals[1].measured_mm;
    expect(() => gratingSection(bad, { document })).toThrow(/residuals\[1\]\.measured_mm: expected a number, got nothing/);
  });
});
