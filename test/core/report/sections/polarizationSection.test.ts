import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { InputError } from '../../../../src/core/errors.js';
import { malusIntensity } from '../../../../src/core/polarization/malusFit.js';
import { formatWithUncertainty } from '../../../../src/core/report/html.js';
import { malusFitFromJson, polarizationSection } from '../../../../src/core/report/sections/polarizationSection.js';
import { createSvgDocument } from '../../../../src/io/svgDocument.js';
import { cliJson, DEMO, figure, parseSvg, plainText } from './results.js';

const document = createSvgDocument();
const table = (name: string): string => path.join(DEMO, 'polarization', name);
const tmp = mkdtempSync(path.join(os.tmpdir(), 'glowprint-sec-pol-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

let laserA: Record<string, any>;
let laserB: Record<string, any>;
let overexposed: Record<string, any>;
let analyser: Record<string, any>;
beforeAll(() => {
  laserA = cliJson(['polarization', '--table', table('laser-a-power-meter.csv')]);
  laserB = cliJson(['polarization', '--table', table('laser-b-rotation.csv'), '--time-series', table('laser-b-burst.csv'), '--reference', table('laser-b-burst-total.csv')]);
  const photos = readdirSync(table('laser-c-overexposed')).filter((f) => f.endsWith('.jpg')).sort();
  overexposed = cliJson(['polarization', ...photos.map((f) => path.join(table('laser-c-overexposed'), f))]);
  analyser = cliJson(['polarization', '--table', table('floor-glare.csv'), '--calibrate-analyser', '--reference-azimuth', '0', '--out', path.join(tmp, 'analyser.json')]);
});

describe('malusFitFromJson(json)', () => {
  it('rebuilds I(θ) = a + b cos 2θ + c sin 2θ that reproduces Collett’s four-angle values for 60 % polarized light at 30°', () => {
    // 60 % linearly polarized light, azimuth 30°, S0 = 1: I0, I45, I90, I135 = 0.65, 0.759808, 0.35, 0.240192 (values
    // computed from Collett, Field Guide to Polarization, Malus's law for partially polarized light; issue 5).
    const json = { method: 'rotating-analyser', i_max: 0.8, i_min: 0.2, azimuth_scale_deg: 30, dolp: 0.6, points: [0, 45, 90, 135].map((a) => ({ angle_deg: a, intensity: 0.5 })) };
    const fit = malusFitFromJson(json)!;
    const want = [0.65, 0.759808, 0.35, 0.240192];
    [0, 45, 90, 135].forEach((a, i) => expect(Math.abs(malusIntensity(fit, a) - want[i])).toBeLessThanOrEqual(1e-6));
    expect(Math.abs(fit.dolp - 0.6)).toBeLessThanOrEqual(1e-12);
  });

  it('reproduces the fitted value the command printed at every reading (laser A, power-meter table)', () => {
    const fit = malusFitFromJson(laserA)!;
    for (const p of laserA.points) expect(Math.abs(malusIntensity(fit, p.angle_deg) - p.model)).toBeLessThanOrEqual(1e-9 * laserA.i_max);
  });

  it('fits a, b, c to the fitted values of an analyser calibration (no I_max in its JSON), azimuth as measured', () => {
    const fit = malusFitFromJson(analyser)!;
    for (const p of analyser.points) expect(Math.abs(malusIntensity(fit, p.angle_deg) - p.model)).toBeLessThanOrEqual(1e-9 * fit.iMax);
    const d = Math.abs(((fit.azimuthDeg - analyser.reference.measured_azimuth_deg + 270) % 180) - 90);
    expect(d).toBeLessThanOrEqual(1e-6);
  });

  it('returns null for the rotating-plate method, which has no Malus curve', () => {
    expect(malusFitFromJson({ method: 'rotating-quarter-wave-plate', points: [{ angle_deg: 0, intensity: 1 }] })).toBeNull();
  });
});

describe('polarizationSection(json, {document})', () => {
  it('states the verdict with DoLP and axis to the digits their uncertainties earn, and plots every reading', () => {
    const { section, summary, kind } = polarizationSection(laserA, { document });
    expect(kind).toBe('polarization');
    const dolp = formatWithUncertainty(laserA.dolp, laserA.dolp_uncertainty);
    expect(plainText(section.verdict)).toBe(
      `Linearly polarized — DoLP ${dolp}, axis at ${formatWithUncertainty(laserA.azimuth_deg, laserA.azimuth_uncertainty_deg).replace(' ± ', '° ± ')}° on the analyser scale`,
    );
    expect(figure(section.figures, /^Degree of linear polarization/)).toBe(dolp);
    expect(summary).toMatchObject({ item: 'laser-a-power-meter.csv', result: 'linearly polarized', warnings: 0 });
    const svg = parseSvg(section.svgs![0]);
    // The Cartesian panel comes first; the polar panel draws each reading twice (θ and θ + 180°).
    expect(svg.querySelector('g.points')!.querySelectorAll('circle').length).toBe(laserA.points.length);
    expect(section.svgs![0]).toMatch(/Polar view/);
    const rows = section.tables!.find((t) => /^Readings/.test(t.caption ?? ''))!.rows;
    expect(rows.length).toBe(laserA.points.length);
  });

  it('reads a randomly polarized laser from the time series, with both series in a table', () => {
    const { section, summary } = polarizationSection(laserB, { document });
    expect(section.verdict).toMatch(/^Randomly polarized/);
    expect(summary.result).toBe('randomly polarized');
    const ts = section.tables!.find((t) => t.caption === 'Fixed-analyser time series')!;
    expect(ts.rows.map((r) => r[0])).toEqual(['through the analyser', 'total (reference)']);
    expect(section.warnings).toEqual(laserB.warnings);
  });

  it('names the clipped frames it left out and marks them in the plot', () => {
    const { section, summary } = polarizationSection(overexposed, { document });
    const excluded = overexposed.points.filter((p: { excluded: boolean }) => p.excluded).length;
    expect(excluded).toBeGreaterThan(0);
    expect(parseSvg(section.svgs![0]).querySelectorAll('g.excluded path').length).toBe(excluded);
    const notes = section.tables!.find((t) => /^Readings/.test(t.caption ?? ''))!.rows.map((r) => r[5]);
    expect(notes.filter((n) => n === 'left out (saturated)').length).toBe(excluded);
    expect(summary.item).toBe('laser-c-overexposed/ (13 photos)');
    expect(section.warnings!.some((w) => /clipped \(saturated\) spot/.test(w))).toBe(true);
  });

  it('turns an analyser calibration into the offset with its uncertainty', () => {
    const { section, summary } = polarizationSection(analyser, { document });
    const sign = analyser.offset_deg >= 0 ? '+' : '';
    expect(plainText(section.verdict)).toContain(`Analyser offset ${sign}${formatWithUncertainty(analyser.offset_deg, analyser.offset_uncertainty_deg).replace(' ± ', '° ± ')}°`);
    expect(summary.measurement).toBe('Analyser calibration');
  });

  it('bad input: a wrong type names the key', () => {
    expect(() => polarizationSection({ ...laserA, dolp_uncertainty: 'small' }, { document })).toThrow(InputError);
    expect(() => polarizationSection({ ...laserA, dolp_uncertainty: 'small' }, { document })).toThrow(/dolp_uncertainty: expected a number, got "small"/);
    expect(() => polarizationSection({ ...laserA, points: [{ angle_deg: 0 }] }, { document })).toThrow(/points\[0\]\.intensity: expected a number/);
  });
});
