import { readFileSync } from 'node:fs';
import path from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { describe, expect, it } from 'vitest';
import { identificationSection } from '../../../../src/core/report/sections/identificationSection.js';
import { createSvgDocument } from '../../../../src/io/svgDocument.js';
import { ROOT } from '../../../helpers/runCli.js';
import { figure, parseSvg, plainText } from './results.js';

const document = createSvgDocument();
const validate = new Ajv2020({ allErrors: true }).compile(JSON.parse(readFileSync(path.join(ROOT, 'data/schema/results/identify.schema.json'), 'utf8')));

/**
 * An identification in the shape issue 4 requires (checked against identify.schema.json): a neon tube with a trace of
 * mercury and one line nothing explains. Air wavelengths of Ne I and Hg I from memory of the NIST ASD; heights invented.
 */
function neonWithMercury(): Record<string, any> {
  const line = (element: string, wavelengthNm: number) => ({ element, spectrum: `${element} I`, wavelength_nm: wavelengthNm });
  const peak = (wavelengthNm: number, height: number, l: ReturnType<typeof line> | null, extra: Record<string, unknown> = {}) => ({
    position_px: (wavelengthNm - 380) / 0.3,
    position_uncertainty_px: 0.02,
    wavelength_nm: wavelengthNm + 0.03,
    wavelength_uncertainty_nm: 0.06,
    height,
    saturated: false,
    blended: false,
    line: l,
    ...extra,
  });
  return {
    input: { file: 'photos/tube-e.jpg', kind: 'photo' },
    species: [
      { element: 'Ne', score: 0.999, present: true, lines_matched: 6, flux_fraction: 0.9, molecular: false },
      { element: 'Hg', score: 0.93, present: true, lines_matched: 2, flux_fraction: 0.07, molecular: false },
      { element: 'Ar', score: 0.04, present: false, lines_matched: 0, flux_fraction: 0, missing_lines_nm: [763.511, 811.531] },
    ],
    peaks: [
      peak(435.833, 3, line('Hg', 435.833)),
      peak(546.074, 9, line('Hg', 546.074)),
      peak(585.249, 120, line('Ne', 585.249), { saturated: true }),
      peak(603.0, 0.2, null),
      peak(614.306, 40, line('Ne', 614.306)),
      peak(640.225, 110, line('Ne', 640.225)),
      peak(650.653, 25, line('Ne', 650.653)),
      peak(692.947, 12, line('Ne', 692.947)),
      peak(703.241, 30, line('Ne', 703.241)),
      // Hg I 435.833 nm again in the second order, at 871.666 nm on the first-order scale.
      peak(871.666, 0.5, { ...line('Hg', 435.833), order: 2 } as ReturnType<typeof line>),
    ],
    unexplained_flux_fraction: 0.03,
    calibration: { from: 'profile', rms_nm: 0.08, file: 'rig.json' },
    warnings: ['1 peak is clipped'],
  };
}

describe('identificationSection(json, {document})', () => {
  it('names the gas and what else is present, most flux first, with their scores', () => {
    const json = neonWithMercury();
    expect(validate(json)).toBe(true);
    const { section, summary } = identificationSection(json, { document });
    expect(section.verdict).toBe('Neon (score 1.00), with mercury (score 0.93)');
    expect(summary).toMatchObject({ item: 'tube-e.jpg', result: 'Ne + Hg', warnings: 1 });
    expect(figure(section.figures, /^Wavelength scale/)).toBe('rig.json, RMS 0.08 nm');
    expect(figure(section.figures, /^Next candidates/)).toBe('argon (score 0.04)');
  });

  it('lists the unexplained lines and labels each stick with its line, unexplained ones with "?"', () => {
    const json = neonWithMercury();
    const { section } = identificationSection(json, { document });
    const unexplained = section.tables!.find((t) => /^Unexplained lines \(1\)/.test(t.caption ?? ''))!;
    expect(plainText(String(unexplained.rows[0][0]))).toBe('603.030 ± 0.060');
    const svg = parseSvg(section.svgs![0]);
    expect(svg.querySelectorAll('line.stick').length).toBe(json.peaks.length);
    const labels = [...svg.querySelectorAll('text.stick-label')].map((t) => t.textContent);
    expect(labels).toContain('Ne I 640.2');
    expect(labels).toContain('? 603.0');
    expect(labels).toContain('Hg I 435.8 (order 2)');
    const peaks = section.tables!.find((t) => /^Peaks/.test(t.caption ?? ''))!;
    const second = peaks.rows.find((r) => r[1] === 'Hg I, order 2')!;
    expect(second[2]).toBe('435.833 × 2');
    expect(plainText(String(second[3]))).toBe('0.030');
    expect(section.svgs![0]).toMatch(/log scale/);
    const species = section.tables!.find((t) => /^Species/.test(t.caption ?? ''))!;
    expect(species.rows[2][5]).toBe('763.5, 811.5');
  });

  it("notes the lines a peak's line is unresolved from (they pull its centre off the tabulated value)", () => {
    // Ne I 640.225 with 638.299 nm unresolved beside it (NIST ASD, from memory), read at their blend's 639.44 nm.
    const json = neonWithMercury();
    const ne640 = json.peaks.find((p: Record<string, any>) => p.line?.wavelength_nm === 640.225);
    ne640.wavelength_nm = 639.44;
    ne640.line.blended_with_nm = [638.299];
    expect(validate(json)).toBe(true);
    const peaks = identificationSection(json, { document }).section.tables!.find((t) => /^Peaks/.test(t.caption ?? ''))!;
    const row = peaks.rows.find((r) => r[2] === '640.225')!;
    expect(row[5]).toBe('unresolved from 638.299 nm');
    const clipped = peaks.rows.find((r) => r[2] === '585.249')!;
    expect(clipped[5]).toMatch(/^clipped/);
  });

  it('says when the scale came from the spectrum itself', () => {
    const json = { ...neonWithMercury(), calibration: { from: 'self', rms_nm: 0.3, lamp: 'Ne' } };
    expect(validate(json)).toBe(true);
    const { section, summary } = identificationSection(json, { document });
    expect(section.verdict).toMatch(/— wavelength scale from the spectrum’s own lines, so the confidence is lowered$/);
    expect(summary.keyFigure).toMatch(/self-calibrated$/);
  });

  it('reports a laser line with its likely kind', () => {
    const json = {
      ...neonWithMercury(),
      species: [],
      peaks: [{ position_px: 900, wavelength_nm: 632.84, wavelength_uncertainty_nm: 0.09, height: 1, line: null }],
      laser: { wavelength_nm: 632.84, wavelength_uncertainty_nm: 0.09, flux_fraction: 0.97, saturated: false, candidates: [{ name: 'HeNe', nominal_wavelength_nm: 632.816, deviation_sigma: 0.3 }] },
    };
    expect(validate(json)).toBe(true);
    const { section, summary } = identificationSection(json, { document });
    expect(plainText(section.verdict)).toBe('Laser line at 632.840 ± 0.090 nm — consistent with HeNe (632.816 nm)');
    expect(summary.result).toBe('laser: HeNe');
  });

  it('guesses nothing when no emission lines were found', () => {
    const json = { ...neonWithMercury(), species: [{ element: 'Ne', score: 0.01, present: false, lines_matched: 0, flux_fraction: 0 }], peaks: [], emission_lines_found: false };
    const { section, summary } = identificationSection(json, { document });
    expect(section.verdict).toBe('No emission lines found: nothing is identified');
    expect(summary.result).toBe('not identified');
    expect(section.svgs).toEqual([]);
  });

  it('says why nothing is identified when the spectrum found no wavelength scale (calibration null)', () => {
    const json = { file: 'tube-d.jpg', emission_lines_found: true, calibration: null, species: [], peaks: [], unexplained: [], unexplained_flux_fraction: 1, warnings: [] };
    expect(validate(json)).toBe(true);
    const { section, summary } = identificationSection(json, { document });
    expect(section.verdict).toMatch(/^Not identified: no wavelength scale/);
    expect(summary).toMatchObject({ result: 'not identified', keyFigure: 'no wavelength scale' });
    expect(section.tables).toEqual([]);
    expect(section.figures!.some(([k]) => k === 'Unexplained peaks')).toBe(false);
  });

  it('bad input: a species without a score names it', () => {
    const json = neonWithMercury();
    delete json.species[1].score;
    expect(() => identificationSection(json, { document })).toThrow(/species\[1\]\.score: expected a number, got nothing/);
  });
});
