import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { applyProfileToPeaks } from '../../src/core/calibration/profile.js';
import { imageToBandPx } from '../../src/core/spectrum/band/frame.js';
import { airToVacuumNm } from '../../src/core/units/airVacuum.js';
import { readProfile } from '../../src/io/profileFile.js';
import { analyseSpectrumInput } from '../../src/tasks/spectrum.js';
import { ROOT, runCli } from '../helpers/runCli.js';

const DEMO = path.join(ROOT, 'data/demo');
const CFL = path.join(DEMO, 'cfl-calibration.jpg');
const dir = mkdtempSync(path.join(os.tmpdir(), 'glowprint-calibrate-'));
const at = (name: string) => path.join(dir, name);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

interface TruthLine {
  wavelength_nm: number;
  order: number;
  saturated: boolean;
  peak_electrons: number;
}
const truth = JSON.parse(readFileSync(path.join(DEMO, 'truth.json'), 'utf8')) as {
  rig: { lines_per_mm: number };
  photos: Array<{ file: string; lines: TruthLine[] }>;
};

/** A spectrum CSV in pixels with Gaussian lines (σ = 1.3 px) at the given positions and heights. */
function csvSpectrum(lines: Array<[number, number]>): string {
  const rows = ['pixel,intensity'];
  for (let px = 0; px < 1200; px++) {
    let v = 2;
    for (const [x, h] of lines) v += h * Math.exp(-0.5 * ((px - x) / 1.3) ** 2);
    // deterministic ripple as noise
    v += 0.2 * Math.sin(px * 1.7) * Math.sin(px * 0.31);
    rows.push(`${px},${v.toFixed(4)}`);
  }
  return rows.join('\n') + '\n';
}

describe('glowprint calibrate <photo> --lamp fluorescent (the demo rig: 1000 lines/mm, 1920×1080 JPEG)', () => {
  const profileFile = at('rig.json');
  let out: Record<string, unknown>;
  beforeAll(() => {
    const r = runCli(['calibrate', CFL, '--lamp', 'fluorescent', '--json', '--out', profileFile]);
    expect(r.status).toBe(0);
    for (const line of r.stderr.trim().split('\n').filter(Boolean)) expect(line).toMatch(/^glowprint: warning: /);
    out = JSON.parse(r.stdout) as Record<string, unknown>;
  });

  it('prints one JSON object with the contract keys', () => {
    for (const key of ['rms_nm', 'rms_px', 'dispersion_nm_per_px', 'range_nm', 'model', 'lines', 'warnings', 'lines_per_mm']) {
      expect(out, key).toHaveProperty(key);
    }
    const lines = out.lines as Array<Record<string, unknown>>;
    expect(lines.length).toBeGreaterThanOrEqual(6);
    for (const l of lines) for (const key of ['position_px', 'wavelength_nm', 'residual_nm', 'used']) expect(l).toHaveProperty(key);
    // Order-2 images of matched lines are listed with their order, never used; the match counts as evidence those
    // inside the lamp's line range. The demo rig's grating draws order 2: Hg 404.656 nm (NIST ASD) is seen there,
    // where the order-1 scale reads 809.3 nm, beyond the fluorescent lamp's lines.
    for (const l of lines) expect([1, 2]).toContain(l.order);
    const second = lines.filter((l) => l.order === 2);
    for (const l of second) expect(l.used).toBe(false);
    expect((out.match as Record<string, unknown>).second_order as number).toBeLessThanOrEqual(second.length);
    // (Since the demo photos were re-rendered with Hg I 567.581 / 671.634 nm, the image of 404.656 nm at 728 px, 720 px
    // beyond the matched lines, falls outside the extrapolated scale's tolerance and is not listed; any listed image
    // must sit on its 2λ.)
    for (const l of second) expect(Math.abs(l.residual_nm as number)).toBeLessThanOrEqual(0.3);
    expect((out.model as Record<string, unknown>).kind).toBe('grating');
    const [lo, hi] = out.range_nm as number[];
    expect(lo).toBeLessThan(hi);
    expect(out.rms_nm as number).toBeLessThanOrEqual(0.1);
  });

  it('recovers the grating line density of the rendered photo within its uncertainty (about 1 %, the EXIF focal length prior)', () => {
    // Truth: the renderer's rig (data/demo/truth.json: 1000 lines/mm). The 0.3 % is checked on rendered photos
    // in test/core/calibration/models.test.ts; one demo photo, with f known to ±2 % from EXIF, gives d to about ±1 %
    // (measured: 1000.5 ± 11.3 before the demo was re-rendered, 993.7 ± 9.9 after).
    const lpm = out.lines_per_mm as number;
    const sigma = out.lines_per_mm_uncertainty as number;
    expect(sigma).toBeGreaterThan(0);
    expect(sigma / lpm).toBeLessThanOrEqual(0.015);
    expect(Math.abs(lpm - truth.rig.lines_per_mm)).toBeLessThanOrEqual(2 * sigma);
    expect((out.model as Record<string, unknown>).focal_length_source).toBe('exif');
  });

  it('keeps a correct line at the end of the range that a low-degree polynomial of the others mispredicts (--lamp Hg)', () => {
    // Mercury alone on the demo photo: Hg I 404.656 nm (NIST ASD) is the only usable line below 567 nm. A polynomial
    // fitted to 567–691 nm mispredicts it and once rejected it, shrinking the range to 567–691 nm; the grating model
    // extrapolates to it within a few hundredths of a nm (it is a true line of the renderer's scene, truth.json).
    const r = runCli(['calibrate', CFL, '--lamp', 'Hg', '--json']);
    expect(r.status).toBe(0);
    const hg = JSON.parse(r.stdout) as { range_nm: [number, number]; lines: Array<{ wavelength_nm: number; used: boolean; residual_nm: number }>; lines_per_mm: number; lines_per_mm_uncertainty: number };
    const violet = hg.lines.find((l) => Math.abs(l.wavelength_nm - 404.656) < 1e-3)!;
    expect(violet.used).toBe(true);
    expect(Math.abs(violet.residual_nm)).toBeLessThanOrEqual(0.05);
    expect(hg.range_nm[0]).toBeLessThanOrEqual(405);
    expect(Math.abs(hg.lines_per_mm - truth.rig.lines_per_mm)).toBeLessThanOrEqual(2 * hg.lines_per_mm_uncertainty);
  });

  it('--model poly with five Hg lines takes a parabola through all of them, not a straight line and a clipped end line', () => {
    // The same photo and lamp: the four lines at 567–691 nm with a straight line once rejected Hg I 404.656 (NIST ASD)
    // at -18.7 nm and reported 0.57 nm RMS over 567–691 nm.
    const r = runCli(['calibrate', CFL, '--lamp', 'Hg', '--model', 'poly', '--json']);
    expect(r.status).toBe(0);
    const j = JSON.parse(r.stdout) as {
      model: { kind: string; degree: number };
      range_nm: [number, number];
      rms_nm: number;
      lines: Array<{ wavelength_nm: number; used: boolean; residual_nm: number }>;
      scale_uncertainty_nm: [number, number];
      prediction_rms_nm: number | null;
    };
    expect(j.model).toMatchObject({ kind: 'polynomial', degree: 2 });
    // (The grating model's summary, for comparison: f says it was fitted, to the EXIF prior, with its uncertainty.)
    expect(runCli(['calibrate', CFL, '--lamp', 'Hg']).stdout).toMatch(/f = \d+ ± \d+ px \(fitted to the EXIF focal length\)/);
    const violet = j.lines.find((l) => Math.abs(l.wavelength_nm - 404.656) < 1e-3)!;
    expect(violet.used).toBe(true);
    expect(j.range_nm[0]).toBeLessThanOrEqual(405);
    expect(j.rms_nm).toBeLessThanOrEqual(0.3);
    // The scale's own uncertainty and how well each line is predicted by the others are stated beside the RMS.
    expect(j.scale_uncertainty_nm[0]).toBeGreaterThan(0);
    expect(j.scale_uncertainty_nm[1]).toBeGreaterThanOrEqual(j.scale_uncertainty_nm[0]);
    expect(j.prediction_rms_nm).toBeGreaterThan(j.rms_nm);
    const text = runCli(['calibrate', CFL, '--lamp', 'Hg', '--model', 'poly']).stdout;
    expect(text).toMatch(/scale uncertainty \(1σ\) [\d.]+–[\d.]+ nm inside the range; each line predicted by the fit of the others to [\d.]+ nm RMS/);
    // The zero-order agreement was judged with the matching's grating scale, not with this polynomial.
    expect(text).toMatch(/zero order: seen at [-\d.]+ px, where the matching's grating scale puts 0 nm/);
  });

  it('counts the zero order, seen where the renderer drew it, which the scale puts there too', async () => {
    // Truth: the renderer's zero order of the calibration photo (data/demo/truth.json), in the found band's frame.
    const photo = truth.photos.find((p) => p.file === 'cfl-calibration.jpg') as unknown as { zero_order: { image_px: { x: number; y: number } } };
    const band = (await readProfile(profileFile)).band!;
    const truthPx = imageToBandPx(band, photo.zero_order.image_px).positionPx;
    const z = (out.match as Record<string, unknown>).zero_order as Record<string, number | boolean>;
    expect(Math.abs((z.seen_px as number) - truthPx)).toBeLessThanOrEqual(2);
    expect(z.counted).toBe(true);
    expect(Math.abs((z.predicted_px as number) - (z.seen_px as number))).toBeLessThanOrEqual(z.agreement_half_width_px as number);
    expect(z.chance_of_agreement as number).toBeGreaterThan(0);
    expect(z.chance_of_agreement as number).toBeLessThan(0.1);
  });

  it('saves a profile that measures other lamps\' lines to ≤ 0.15 nm RMS (tubes A, C, E of the demo)', async () => {
    const profile = await readProfile(profileFile);
    for (const file of ['tube-a.jpg', 'tube-c.jpg', 'tube-e.jpg']) {
      const { analysis } = await analyseSpectrumInput(path.join(DEMO, file));
      const applied = applyProfileToPeaks(analysis.peaks, profile, {
        image: { widthPx: analysis.input.widthPx!, heightPx: analysis.input.heightPx! },
        band: analysis.band,
        source: file,
      });
      const lines = truth.photos.find((p) => p.file === file)!.lines.filter((l) => l.order === 1);
      const residuals: number[] = [];
      for (const p of applied.peaks) {
        if (p.blended || p.saturated) continue;
        const best = lines.reduce((a, l) => (Math.abs(l.wavelength_nm - p.wavelengthNm) < Math.abs(a.wavelength_nm - p.wavelengthNm) ? l : a));
        // isolated, well-exposed truth lines only (no other line within 3 nm carrying > 5 % of its light)
        if (Math.abs(best.wavelength_nm - p.wavelengthNm) > 1.5 || best.saturated || best.peak_electrons < 200) continue;
        if (lines.some((l) => l !== best && Math.abs(l.wavelength_nm - best.wavelength_nm) < 3 && l.peak_electrons > 0.05 * best.peak_electrons)) continue;
        residuals.push(p.wavelengthNm - best.wavelength_nm);
        expect(Math.abs(p.wavelengthNm - best.wavelength_nm)).toBeLessThanOrEqual(4 * p.wavelengthUncertaintyNm);
      }
      expect(residuals.length, file).toBeGreaterThanOrEqual(4);
      const rms = Math.sqrt(residuals.reduce((a, r) => a + r * r, 0) / residuals.length);
      expect(rms, file).toBeLessThanOrEqual(0.15);
    }
  });

  it('calibrates the spectrum CSV written from the photo as it does the photo (the CSV keeps the photo geometry)', () => {
    // Without the photo's focal length, image centre and zero order, the matching of the 1-D spectrum had once fallen
    // just short (false-match bound 6e-3 against 5e-3) and declined the right lamp.
    const csv = at('cfl-spectrum.csv');
    expect(runCli(['spectrum', CFL, '--csv', csv]).status).toBe(0);
    const r = runCli(['calibrate', csv, '--lamp', 'fluorescent', '--json']);
    expect(r.status, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout) as { lines_per_mm: number; lines_per_mm_uncertainty: number; rms_nm: number; model: { focal_length_source: string }; match: { zero_order: { counted: boolean } } };
    expect(j.model.focal_length_source).toBe('exif');
    expect(j.match.zero_order.counted).toBe(true);
    expect(Math.abs(j.lines_per_mm - (out.lines_per_mm as number))).toBeLessThanOrEqual(j.lines_per_mm_uncertainty);
    expect(Math.abs(j.lines_per_mm - truth.rig.lines_per_mm)).toBeLessThanOrEqual(2 * j.lines_per_mm_uncertainty);
    expect(j.rms_nm).toBeLessThanOrEqual(0.05);
  });

  it('reports vacuum wavelengths with --vacuum (standard-air conversion, Ciddor 1996)', () => {
    const r = runCli(['calibrate', CFL, '--lamp', 'fluorescent', '--json', '--vacuum']);
    expect(r.status).toBe(0);
    const vac = JSON.parse(r.stdout) as { medium: string; range_nm: number[]; lines: Array<{ wavelength_nm: number; label: string }> };
    expect(vac.medium).toBe('vacuum');
    // Hg I 576.960 nm in standard air is 577.120 nm in vacuum (n − 1 = 2.77e-4 there; Ciddor's formula as
    // implemented and checked against NIST's values in src/core/units/airVacuum.ts, C).
    const hg = vac.lines.find((l) => l.label === 'Hg I 576.960')!;
    expect(Math.abs(hg.wavelength_nm - airToVacuumNm(576.96))).toBeLessThanOrEqual(1e-6);
    expect(Math.abs(hg.wavelength_nm - 577.12)).toBeLessThanOrEqual(0.005);
  });
});

describe('glowprint calibrate: bad input gets one clear message, exit 1, nothing overwritten', () => {
  it('a wrong lamp is rejected with the reason, and an existing --out file stays as it was', () => {
    const keep = at('keep.json');
    writeFileSync(keep, '{"mine": true}\n');
    const r = runCli(['calibrate', CFL, '--lamp', 'Ne', '--out', keep]);
    expect(r.status).toBe(1);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/glowprint: the lamp's lines do not match the peaks.*chance.*check --lamp or give --pairs/);
    // The bound a scale must beat is stated beside the one found, so a near miss reads as one.
    expect(r.stderr).toMatch(/probability [\d.e-]+(?: \([^)]*\))?, and a scale is taken only below 5e-3; wrong lamp/);
    expect(readFileSync(keep, 'utf8')).toBe('{"mine": true}\n');
    // … and says where the five brightest peaks are, for --pairs: the photo's own, by the peak table's prominence.
    const listed = /the brightest peaks lie at ([^;]+) px; name two you know, e\.g\. --pairs ([\d.]+)=…,([\d.]+)=…/.exec(r.stderr);
    expect(listed, r.stderr).not.toBeNull();
    const shown = listed![1].split(', ').map((t) => Number.parseFloat(t));
    const peaks = JSON.parse(runCli(['spectrum', CFL, '--json']).stdout).peaks as Array<{ position_px: number; prominence: number }>;
    const brightest = [...peaks].sort((a, b) => b.prominence - a.prominence).slice(0, 5).map((p) => Number(p.position_px.toFixed(1)));
    expect(shown).toEqual([...brightest].sort((a, b) => a - b));
    expect(shown).toContain(Number.parseFloat(listed![2]));
    expect(shown).toContain(Number.parseFloat(listed![3]));
  });

  it('a pair that the lamp\'s own scale contradicts is an error naming it, and nothing is written', () => {
    // Where the Hg lines of the rendered CFL photo lie, from the lamp alone; then the 567.581 nm peak is given the
    // wavelength of its neighbour 576.960 nm (a misread line, common practice, no source: the mistake the check is for).
    const alone = JSON.parse(runCli(['calibrate', CFL, '--lamp', 'Hg', '--json']).stdout) as { lines: Array<{ position_px: number; wavelength_nm: number }> };
    const at567 = alone.lines.find((l) => Math.abs(l.wavelength_nm - 567.581) < 0.01)!.position_px.toFixed(2);
    const at671 = alone.lines.find((l) => Math.abs(l.wavelength_nm - 671.634) < 0.01)!.position_px.toFixed(2);
    const out = at('wrong-pair.json');
    const r = runCli(['calibrate', CFL, '--lamp', 'Hg', '--pairs', `${at567}=576.96,${at671}=671.634`, '--out', out]);
    expect(r.status).toBe(1);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toContain(`--pairs ${Number(at567)}=576.96 contradicts the lamp's lines`);
    expect(r.stderr).toMatch(/their scale reads 567\.5\d nm at [\d.]+ px \(Hg I 567\.581\), not 576\.96/);
    expect(existsSync(out)).toBe(false);
    // The same pairs with the right wavelength calibrate with the lamp's lines as usual.
    const ok = runCli(['calibrate', CFL, '--lamp', 'Hg', '--pairs', `${at567}=567.581,${at671}=671.634`, '--json']);
    expect(ok.status).toBe(0);
    expect((JSON.parse(ok.stdout) as { lines: unknown[] }).lines.length).toBeGreaterThan(4);
  });

  it('two swapped pairs are an error naming the one whose peak has the wrong colour, and nothing is written', () => {
    // Hg I 404.656 nm is violet-blue and 690.746 nm deep red (NIST ASD wavelengths; colours common practice, no
    // source); swapped, the blue peak is named 690.746 nm.
    const alone = JSON.parse(runCli(['calibrate', CFL, '--lamp', 'Hg', '--json']).stdout) as { lines: Array<{ position_px: number; wavelength_nm: number }> };
    const pos = (w: number) => alone.lines.find((l) => Math.abs(l.wavelength_nm - w) < 0.01)!.position_px.toFixed(2);
    const out = at('swapped.json');
    const r = runCli(['calibrate', CFL, '--pairs', `${pos(404.656)}=690.746,${pos(690.746)}=404.656`, '--out', out]);
    expect(r.status).toBe(1);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(new RegExp(`--pairs ${Number(pos(404.656))}=690.746: the peak at [\\d.]+ px is blue \\(R \\d+ %, G \\d+ %, B \\d+ % of its signal\\), which puts it below \\d+ nm, not 690.746 nm`));
    expect(existsSync(out)).toBe(false);
  });

  it('a wrong --direction is named as the mistake, not the lamp', () => {
    // The demo rig's wavelength grows along the band (as its calibration says); told the opposite, the matching finds nothing, but
    // the other direction matches: the message names --direction.
    const r = runCli(['calibrate', CFL, '--lamp', 'fluorescent', '--direction', 'decreasing']);
    expect(r.status).toBe(1);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/--direction decreasing: the lamp's lines match the peaks only with wavelength increasing along the band .*give --direction increasing/);
    expect(r.stderr).not.toMatch(/wrong lamp/);
  });

  it('a single laser line cannot calibrate alone', () => {
    const r = runCli(['calibrate', CFL, '--lamp', 'laser:632.816']);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/1 line\(s\).*give --pairs/);
  });

  it('refuses to write the profile over the input', () => {
    const csv = at('in.csv');
    writeFileSync(csv, csvSpectrum([[200, 50], [700, 40]]));
    const r = runCli(['calibrate', csv, '--pairs', '200=435.833,700=546.074', '--out', csv]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/refusing to write over an input file/);
    expect(readFileSync(csv, 'utf8')).toBe(csvSpectrum([[200, 50], [700, 40]]));
  });

  it('names a malformed pair, an unknown lamp, a missing lamp and a bad degree', () => {
    const csv = at('p.csv');
    writeFileSync(csv, csvSpectrum([[200, 50], [700, 40]]));
    expect(runCli(['calibrate', csv, '--pairs', '200=435.833,700:546']).stderr).toMatch(/--pairs: "700:546" is not position_px=wavelength_nm/);
    expect(runCli(['calibrate', csv, '--lamp', 'Unobtainium']).stderr).toMatch(/unknown lamp "Unobtainium"/);
    const none = runCli(['calibrate', csv]);
    expect(none.status).toBe(1);
    expect(none.stderr).toMatch(/give --lamp.*--pairs/);
    expect(runCli(['calibrate', csv, '--pairs', '200=435.833,700=546.074', '--degree', '7']).stderr).toMatch(/--degree: expected an integer from 1 to 4/);
  });

  it('a pair beyond the spectrum (a typo, an image coordinate) is an error that names it, and nothing is written', () => {
    const csv = at('typo.csv');
    writeFileSync(csv, csvSpectrum([[200, 50], [700, 40]]));
    const out = at('typo.json');
    const r = runCli(['calibrate', csv, '--pairs', '200=435.833,7000=546.074', '--out', out]);
    expect(r.status).toBe(1);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/--pairs: 7000=546\.074: position 7000 px lies beyond the spectrum of .*typo\.csv \(0–1199 px\)/);
    expect(existsSync(out)).toBe(false);
  });

  it('one line only is an error that says a scale needs two', () => {
    const csv = at('one.csv');
    writeFileSync(csv, csvSpectrum([[300, 50]]));
    const r = runCli(['calibrate', csv, '--pairs', '300=546.074']);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/only one line.*at least two lines/);
  });

  it('a spectrum that already has a wavelength axis is not calibrated again', () => {
    const csv = at('wl.csv');
    writeFileSync(csv, 'wavelength_nm,intensity\n' + Array.from({ length: 200 }, (_, i) => `${400 + i},${i === 100 ? 50 : 1}`).join('\n') + '\n');
    const r = runCli(['calibrate', csv, '--lamp', 'Hg']);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/already has a wavelength axis/);
  });

  it('usage mistakes exit 2', () => {
    expect(runCli(['calibrate', CFL, '--model', 'spline']).status).toBe(2);
  });
});

describe('glowprint calibrate <csv> --pairs (manual calibration of a spectrum file)', () => {
  it('fits the pairs, snapping them to the peaks, and writes a profile without image or band', () => {
    const csv = at('pairs.csv');
    // Hg lines placed at 0.25 nm/px from 400 nm: 404.656 → 18.6 px, 435.833 → 143.3, 546.074 → 584.3, 576.96 → 707.8
    writeFileSync(csv, csvSpectrum([[18.62, 30], [143.33, 60], [584.3, 50], [707.84, 20]]));
    const out = at('pairs.json');
    const r = runCli(['calibrate', csv, '--pairs', '19=404.656,143=435.833,584=546.074,708=576.96', '--model', 'poly', '--json', '--out', out]);
    expect(r.status).toBe(0);
    const j = JSON.parse(r.stdout) as { lines: Array<{ position_px: number; source: string }>; dispersion_nm_per_px: number; model: { kind: string; degree: number } };
    expect(j.model).toMatchObject({ kind: 'polynomial', degree: 1 });
    expect(Math.abs(j.dispersion_nm_per_px - 0.25)).toBeLessThanOrEqual(0.001);
    expect(Math.abs(j.lines[0].position_px - 18.62)).toBeLessThanOrEqual(0.1);
    expect(j.lines.every((l) => l.source === 'manual')).toBe(true);
    expect(existsSync(out)).toBe(true);
    const saved = JSON.parse(readFileSync(out, 'utf8')) as { image: unknown; band: unknown; lamp: string };
    expect(saved).toMatchObject({ image: null, band: null, lamp: 'pairs' });
  });

  it('prints the residual table and the safety cautions in --help', () => {
    const help = runCli(['calibrate', '--help']);
    expect(help.status).toBe(0);
    expect(help.stdout).toMatch(/kilovolts/);
    expect(help.stdout).toMatch(/UV/);
    expect(help.stdout).toMatch(/--pairs/);
  });
});
