import { readdirSync } from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { formatWithUncertainty } from '../../../../src/core/report/html.js';
import { gainEnvelope, modesSection } from '../../../../src/core/report/sections/modesSection.js';
import { createSvgDocument } from '../../../../src/io/svgDocument.js';
import { cliJson, DEMO, figure, parseSvg, plainText } from './results.js';

const document = createSvgDocument();
let series: Record<string, any>;
let single: Record<string, any>;
beforeAll(() => {
  const files = readdirSync(path.join(DEMO, 'modes')).filter((f) => f.endsWith('.csv')).sort().map((f) => path.join(DEMO, 'modes', f));
  series = cliJson(['modes', ...files, '--mirror-spacing', '7.5mm', '--confocal']);
  single = cliJson(['modes', files[0], '--fsr', '10GHz']);
});

describe('gainEnvelope(modes, gain)', () => {
  it('recovers a Gaussian comb exactly: its peak at the gain centre and its FWHM as given', () => {
    // Seeded truth: powers on a Gaussian of FWHM 1.5 GHz centred 40 MHz from the strongest mode, 250 MHz spacing.
    const fwhm = 1.5e9;
    const center = 40e6;
    const sigma = fwhm / (2 * Math.sqrt(2 * Math.LN2));
    const modes = [-3, -2, -1, 0, 1, 2, 3].map((k) => {
      const offsetHz = 250e6 * k;
      return { offsetHz, relativePower: 0.8 * Math.exp(-0.5 * ((offsetHz - center) / sigma) ** 2), offsetFromGainCenterHz: offsetHz - center };
    });
    const env = gainEnvelope(modes, { gainFwhmHz: fwhm })!;
    for (const m of modes) expect(Math.abs(env(m.offsetHz) - m.relativePower)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(env(center) - 0.8)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(env(center + fwhm / 2) - 0.4)).toBeLessThanOrEqual(1e-12);
  });

  it('is null without a gain fit', () => {
    expect(gainEnvelope([{ offsetHz: 0, relativePower: 1 }], { gainFwhmHz: undefined })).toBeNull();
  });
});

describe('modesSection(json, {document})', () => {
  it('states mode count, spacing and cavity length with their uncertainties', () => {
    const { section, summary } = modesSection(series, { document });
    const spacing = formatWithUncertainty(series.mode_spacing_hz / 1e6, series.mode_spacing_uncertainty_hz / 1e6, 'MHz');
    const cavity = formatWithUncertainty(series.cavity_length_m * 100, series.cavity_length_uncertainty_m * 100, 'cm');
    expect(plainText(section.verdict)).toBe(`${series.mode_count} lasing modes, spacing ${spacing} → cavity length ${cavity}`);
    expect(figure(section.figures, /^Mode spacing/)).toBe(spacing);
    expect(figure(section.figures, /^Drift/)).toMatch(/MHz\/s over 40 s$/);
    expect(summary.item).toBe('warmup-1.csv … warmup-5.csv (5 traces)');
  });

  it('draws one stick per mode, the envelope through them, and the drift line with the reported slope', () => {
    const { section } = modesSection(series, { document });
    expect(section.svgs).toHaveLength(2);
    const comb = parseSvg(section.svgs![0]);
    expect(comb.querySelectorAll('line.stick').length).toBe(series.modes.length);
    expect(comb.querySelector('path.curve')).not.toBeNull();
    const drift = parseSvg(section.svgs![1]);
    expect(drift.querySelectorAll('g.points circle').length).toBe(series.drift.points.length);
    expect(section.tables!.find((t) => t.caption === 'Traces')!.rows.length).toBe(5);
  });

  it('has no drift plot for one trace', () => {
    const { section } = modesSection(single, { document });
    expect(section.svgs).toHaveLength(1);
    expect(section.figures!.some(([k]) => /^Drift/.test(k))).toBe(false);
  });

  it('bad input: modes that are not objects name the key', () => {
    expect(() => modesSection({ ...single, modes: [3] }, { document })).toThrow(/modes\[0\]: expected a JSON object, got 3/);
  });
});
