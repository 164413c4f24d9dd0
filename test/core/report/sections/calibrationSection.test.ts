import { readFileSync } from 'node:fs';
import path from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { describe, expect, it } from 'vitest';
import { calibrationSection } from '../../../../src/core/report/sections/calibrationSection.js';
import { createSvgDocument } from '../../../../src/io/svgDocument.js';
import { ROOT } from '../../../helpers/runCli.js';
import { figure, parseSvg, plainText } from './results.js';

const document = createSvgDocument();
const validate = new Ajv2020({ allErrors: true }).compile(JSON.parse(readFileSync(path.join(ROOT, 'data/schema/results/calibrate.schema.json'), 'utf8')));

/**
 * A calibration in the shape issue 3 requires (checked against calibrate.schema.json): a fluorescent lamp fitted with
 * the grating model. Hg I air wavelengths from memory of the NIST ASD; positions and residuals invented.
 */
function fluorescent(): Record<string, any> {
  const lines = [
    [56.2, 404.656, 0.04, true, 'Hg I'],
    [104.1, 435.833, -0.03, true, 'Hg I'],
    [280.3, 546.074, 0.02, true, 'Hg I'],
    [330.0, 576.96, 0.61, false, 'Hg I'],
    [333.4, 579.066, -0.05, true, 'Hg I'],
  ].map(([position_px, wavelength_nm, residual_nm, used, label]) => ({ position_px, position_uncertainty_px: 0.05, wavelength_nm, residual_nm, used, label, ...(used ? {} : { excluded: 'outlier' }) }));
  return {
    input: { file: 'photos/cfl.jpg' },
    lamp: 'fluorescent',
    rms_nm: 0.04,
    rms_px: 0.07,
    dispersion_nm_per_px: 0.626,
    range_nm: [404.656, 579.066],
    model: { kind: 'grating' },
    lines_per_mm: 999.2,
    lines_per_mm_uncertainty: 1.3,
    lines,
    warnings: [],
  };
}

describe('calibrationSection(json, {document})', () => {
  it('states the model, RMS, range and lines used, and the grating line density of the physical model', () => {
    const json = fluorescent();
    expect(validate(json)).toBe(true);
    const { section, summary } = calibrationSection(json, { document });
    expect(plainText(section.verdict)).toBe('Wavelength scale: grating + camera (physical model), RMS 0.04 nm over 404.7–579.1 nm (4 of 5 lines)');
    expect(figure(section.figures, /^Grating line density/)).toBe('999.2 ± 1.3 lines/mm');
    expect(summary).toMatchObject({ item: 'cfl.jpg', measurement: 'Wavelength calibration' });
    // Without the scale-uncertainty keys (results of earlier versions) their figures are left out.
    expect(section.figures!.some(([k]) => /^Uncertainty of the scale|^Each line predicted/.test(k))).toBe(false);
  });

  it('states the uncertainty of the scale inside the range and the leave-one-out prediction RMS', () => {
    const json = { ...fluorescent(), scale_uncertainty_nm: [0.0213, 0.0724], prediction_rms_nm: 0.2 };
    expect(validate(json)).toBe(true);
    const { section } = calibrationSection(json, { document });
    expect(figure(section.figures, /^Uncertainty of the scale inside the range/)).toBe('0.021 nm to 0.072 nm');
    expect(figure(section.figures, /^Each line predicted by the fit of the others/)).toBe('0.2 nm');
    const none = calibrationSection({ ...fluorescent(), scale_uncertainty_nm: [0.02, 0.07], prediction_rms_nm: null }, { document });
    expect(none.section.figures!.some(([k]) => /^Each line predicted/.test(k))).toBe(false);
  });

  it('plots every line’s residual with ±RMS levels, scaled to the lines used: the far outlier pinned to the edge with its value', () => {
    const json = fluorescent();
    const { section } = calibrationSection(json, { document });
    const svg = parseSvg(section.svgs![0]);
    expect(svg.querySelectorAll('g.points circle').length).toBe(4);
    const pinned = svg.querySelectorAll('path.offscale');
    expect(pinned.length).toBe(1);
    expect(pinned[0].getAttribute('stroke')).not.toBe(svg.querySelector('g.points circle')!.getAttribute('stroke'));
    expect([...svg.querySelectorAll('g.points text')].map((t) => t.textContent)).toContain('0.61');
    expect(svg.querySelectorAll('line.level').length).toBe(3);
    // A moderate outlier stays on the scale, crossed.
    json.lines[3].residual_nm = 0.06;
    const near = parseSvg(calibrationSection(json, { document }).section.svgs![0]);
    expect(near.querySelectorAll('path.excluded').length).toBe(1);
    expect(near.querySelectorAll('path.offscale').length).toBe(0);
    const note = section.tables![0].rows[3][5];
    expect(plainText(String(note))).toBe('outlier (rejected by the robust fit)');
  });

  it('the schema asks for lines_per_mm when the model is the grating one', () => {
    const json = fluorescent();
    delete json.lines_per_mm;
    expect(validate(json)).toBe(false);
    expect(validate({ ...json, model: { kind: 'polynomial', degree: 3 } })).toBe(true);
    expect(calibrationSection({ ...json, model: { kind: 'polynomial', degree: 3 } }, { document }).section.verdict).toMatch(/^Wavelength scale: polynomial of degree 3,/);
  });

  it('bad input: a range that is not two numbers names the key', () => {
    expect(() => calibrationSection({ ...fluorescent(), range_nm: [400, 'x'] }, { document })).toThrow(/range_nm\[1\]: expected a number/);
  });
});
