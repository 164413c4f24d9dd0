import { mkdtempSync, readFileSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startServer, type RunningServer } from '../../src/server/app.js';
import { ROOT, SHARED } from '../helpers/runCli.js';

/**
 * The JSON API over real HTTP on a free port: each route's happy path on the demo inputs (data/demo, ground truth in
 * its truth.json files; invented data with known answers), checked against published values where there are some,
 * and the guards: upload size (413), magic bytes and declared types (415), pixel limits, names (no path traversal).
 */
const DEMO = path.join(ROOT, 'data/demo');
let server: RunningServer;
let workspaceDir: string;

function form(files: Array<{ field: string; file: string; type?: string; name?: string }>, fields: Record<string, string> = {}): FormData {
  const f = new FormData();
  for (const x of files) {
    const bytes = readFileSync(x.file);
    f.append(x.field, new Blob([bytes], { type: x.type ?? 'application/octet-stream' }), x.name ?? path.basename(x.file));
  }
  for (const [k, v] of Object.entries(fields)) f.append(k, v);
  return f;
}

async function post(route: string, body: FormData | object): Promise<{ status: number; json: Record<string, any> }> {
  const init: RequestInit =
    body instanceof FormData ? { method: 'POST', body } : { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body) };
  const r = await fetch(`${server.url}/api/${route}`, init);
  return { status: r.status, json: (await r.json()) as Record<string, any> };
}

function nistAir(element: string, ion: string): number[] {
  return readFileSync(path.join(SHARED, 'reference/nist-asd-lines-air.tsv'), 'utf8')
    .split('\n')
    .slice(1)
    .map((r) => r.split('\t'))
    .filter((c) => c[0] === element && c[1] === ion)
    .map((c) => Number(c[2]));
}

beforeAll(async () => {
  workspaceDir = mkdtempSync(path.join(tmpdir(), 'gp-api-'));
  server = await startServer({ port: 0, workspaceDir });
});
afterAll(async () => {
  await server?.close();
});

describe('GET /api/lamps', () => {
  it('lists the catalogued lamps with their calibration lines and the laser kinds', async () => {
    const r = await fetch(`${server.url}/api/lamps`);
    expect(r.status).toBe(200);
    const j = (await r.json()) as { lamps: Array<{ name: string; lines: Array<{ wavelength_nm: number; spectrum: string }> }>; lasers: Array<{ name: string; wavelength_nm: number }>; warnings: string[] };
    expect(j.lamps.map((l) => l.name)).toEqual(expect.arrayContaining(['Hg', 'Ne', 'He', 'Ar', 'fluorescent']));
    // Hg I 435.8335 and 546.0750 nm (NIST ASD air wavelengths, ../shared/reference) within 0.01 nm.
    const hg = j.lamps.find((l) => l.name === 'Hg')!.lines.map((l) => l.wavelength_nm);
    for (const ref of nistAir('Hg', 'I').filter((x) => Math.abs(x - 435.8335) < 0.01 || Math.abs(x - 546.075) < 0.01)) {
      expect(Math.min(...hg.map((w) => Math.abs(w - ref)))).toBeLessThanOrEqual(0.01);
    }
    // HeNe 632.9908 nm in vacuum (CIPM 2007) is ≈ 632.816 nm in standard air (CHECK_VALUES.md).
    const hene = j.lasers.find((l) => l.name === 'HeNe-633')!;
    expect(Math.abs(hene.wavelength_nm - 632.816)).toBeLessThanOrEqual(0.001);
    expect(Array.isArray(j.warnings)).toBe(true);
  });
});

describe('POST /api/spectrum', () => {
  it('a photo upload → band and peak table, snake_case keys, no server paths in the answer', async () => {
    const { status, json } = await post('spectrum', form([{ field: 'image', file: path.join(DEMO, 'tube-a.jpg'), type: 'image/jpeg' }]));
    expect(status).toBe(200);
    expect(json.input.file).toBe('tube-a.jpg');
    expect(json.input.width_px).toBe(1920);
    expect(json.band.source).toBe('found');
    expect(json.peaks.length).toBeGreaterThanOrEqual(15);
    expect(json.peaks[0]).toHaveProperty('position_uncertainty_px');
    expect(Array.isArray(json.warnings)).toBe(true);
    expect(JSON.stringify(json)).not.toContain('glowprint-upload-');
  });

  it('a manual band (form field) and a spectrum CSV are taken too', async () => {
    const manual = await post('spectrum', form([{ field: 'image', file: path.join(DEMO, 'tube-a.jpg') }], { band: '971,552,1.8,480,200,0.7' }));
    expect(manual.status).toBe(200);
    expect(manual.json.band.source).toBe('manual');
    const csv = 'wavelength_nm,intensity\n' + Array.from({ length: 200 }, (_, i) => `${500 + i * 0.5},${(10 + 1000 * Math.exp(-0.5 * ((i - 100) / 2) ** 2)).toFixed(3)}`).join('\n');
    const f = new FormData();
    f.append('image', new Blob([csv], { type: 'text/csv' }), 'line.csv');
    const r = await post('spectrum', f);
    expect(r.status).toBe(200);
    expect(r.json.input.kind).toBe('csv');
    // One Gaussian line put at 550 nm: its peak comes back within 0.05 nm.
    expect(r.json.peaks.length).toBe(1);
    expect(Math.abs(r.json.peaks[0].wavelength_nm - 550)).toBeLessThanOrEqual(0.05);
  });

  it('refuses bytes that are no photo (415), a declared type that contradicts the bytes (415), and no file (400)', async () => {
    const gif = new FormData();
    gif.append('image', new Blob([Buffer.from('GIF89a\x01\x00\x01\x00\x80\x00\x00\xff\xff\xff\x00\x00\x00!', 'latin1')], { type: 'image/gif' }), 'spot.gif');
    const g = await post('spectrum', gif);
    expect(g.status).toBe(415);
    expect(g.json.error).toMatch(/image "spot.gif"/);
    const lying = await post('spectrum', form([{ field: 'image', file: path.join(DEMO, 'tube-a.jpg'), type: 'image/png' }]));
    expect(lying.status).toBe(415);
    expect(lying.json.error).toMatch(/declared as image\/png, but its bytes are a JPEG/);
    const none = await post('spectrum', new FormData());
    expect(none.status).toBe(400);
    expect(none.json.error).toMatch(/no file/);
  });

  it('answers 413 past the upload limit and 400 past the pixel limit, with JSON errors', async () => {
    const small = await startServer({ port: 0, workspaceDir, maxUploadBytes: 50_000, maxPixels: 1_000_000 });
    try {
      const big = await fetch(`${small.url}/api/spectrum`, { method: 'POST', body: form([{ field: 'image', file: path.join(DEMO, 'tube-a.jpg'), type: 'image/jpeg' }]) });
      expect(big.status).toBe(413);
      expect(((await big.json()) as { error: string }).error).toMatch(/upload too large/);
      const tiny = await startServer({ port: 0, workspaceDir, maxPixels: 50_000 });
      try {
        const r = await fetch(`${tiny.url}/api/spectrum`, {
          method: 'POST',
          body: form([{ field: 'image', file: path.join(DEMO, 'polarization/laser-c-photos/laser-c_000deg.jpg'), type: 'image/jpeg' }]),
        });
        expect(r.status).toBe(400);
        expect(((await r.json()) as { error: string }).error).toMatch(/pixel|MP|px/i);
      } finally {
        await tiny.close();
      }
    } finally {
      await small.close();
    }
  });
});

describe('POST /api/calibrate and the instrument profile', () => {
  it('calibrates the fluorescent-lamp demo photo, saves the profile, and the saved profile validates on PUT', async () => {
    const { status, json } = await post('calibrate', form([{ field: 'image', file: path.join(DEMO, 'cfl-calibration.jpg') }], { lamp: 'fluorescent', save: 'bench-cfl' }));
    expect(status).toBe(200);
    expect(json.instrument_profile.format).toBe('glowprint-instrument-profile');
    expect(json.profile).toBe('bench-cfl');
    expect(json.input.file).toBe('cfl-calibration.jpg');
    expect(json.rms_nm).toBeGreaterThan(0);
    expect(json.rms_nm).toBeLessThanOrEqual(0.35);
    expect(json.range_nm[0]).toBeLessThan(json.range_nm[1]);
    // The fitted lines are the lamp's: Hg I 435.8335 nm in air (NIST ASD) among them, residual under 0.3 nm.
    const hg = json.lines.find((l: { wavelength_nm: number }) => Math.abs(l.wavelength_nm - 435.8335) < 0.01);
    expect(hg).toBeDefined();
    expect(Math.abs(hg.residual_nm)).toBeLessThanOrEqual(0.3);
    // Demo rig truth (data/demo/truth.json): a 1000 lines/mm grating; the grating model reports it when chosen.
    if (json.model.kind === 'grating') expect(Math.abs(json.lines_per_mm - 1000)).toBeLessThanOrEqual(3 * json.lines_per_mm_uncertainty + 5);
    const saved = await (await fetch(`${server.url}/api/profiles/bench-cfl`)).json();
    expect(saved).toEqual(json.instrument_profile);
    expect(saved.rms_nm).toBe(json.rms_nm);
    const profile = json.instrument_profile;
    const put = await fetch(`${server.url}/api/profiles/bench-copy`, { method: 'PUT', headers: { 'content-type': 'application/json' }, body: JSON.stringify(profile) });
    expect(put.status).toBe(200);
    const damaged = { ...profile, model: { ...profile.model, covariance: 'oops' } };
    const bad = await fetch(`${server.url}/api/profiles/bench-bad`, { method: 'PUT', headers: { 'content-type': 'application/json' }, body: JSON.stringify(damaged) });
    expect(bad.status).toBe(400);
    expect(((await bad.json()) as { error: string }).error).toMatch(/^profile bench-bad: not a usable instrument profile: model/);
  });

  it('refuses a wrong lamp with the matcher\'s reason, a lamp spec naming a file, and a traversing save name', async () => {
    const wrong = await post('calibrate', form([{ field: 'image', file: path.join(DEMO, 'cfl-calibration.jpg') }], { lamp: 'He' }));
    expect(wrong.status).toBe(400);
    expect(wrong.json.error).toMatch(/do not match/);
    const file = await post('calibrate', form([{ field: 'image', file: path.join(DEMO, 'cfl-calibration.jpg') }], { lamp: '/etc/passwd' }));
    expect(file.status).toBe(400);
    expect(file.json.error).toMatch(/files are not read over the API/);
    const traversal = await post('calibrate', form([{ field: 'image', file: path.join(DEMO, 'cfl-calibration.jpg') }], { lamp: 'fluorescent', save: '../../evil' }));
    expect(traversal.status).toBe(400);
    expect(readdirSync(path.join(workspaceDir, 'profiles')).every((f) => !f.includes('evil'))).toBe(true);
  });
});

describe('POST /api/identify', () => {
  it('names neon in tube A with no profile (self-calibrated, and says so)', async () => {
    const { status, json } = await post('identify', form([{ field: 'image', file: path.join(DEMO, 'tube-a.jpg') }]));
    expect(status).toBe(200);
    // Demo truth (data/demo/truth.json): tube-a.jpg holds Ne I only.
    expect(json.species.filter((s: { present: boolean }) => s.present).map((s: { element: string }) => s.element)).toEqual(['Ne']);
    expect(json.calibration.from).toBe('self');
    expect(json.warnings.join(' ')).toMatch(/from the spectrum itself/);
  });

  it('with a saved profile: tube B is argon with mercury, and its Ar I lines sit on NIST wavelengths', async () => {
    const { status, json } = await post('identify', form([{ field: 'image', file: path.join(DEMO, 'tube-b.jpg') }], { profile: 'bench-cfl' }));
    expect(status).toBe(200);
    expect(json.profile).toBe('bench-cfl');
    expect(json.calibration.from).toBe('profile');
    expect(json.species.filter((s: { present: boolean }) => s.present).map((s: { element: string }) => s.element).sort()).toEqual(['Ar', 'Hg']);
    const ar = nistAir('Ar', 'I');
    const arPeaks = json.peaks.filter((p: { line: { spectrum: string } | null }) => p.line?.spectrum === 'Ar I');
    expect(arPeaks.length).toBeGreaterThanOrEqual(4);
    // Each within 3 of its own stated standard uncertainties plus one pixel of this rig (0.63 nm/px, demo truth): the
    // route carries the core's numbers; the core's own accuracy targets are tested beside it.
    // An order-2 image (told by its blue colour beyond the red) lies at twice its line's wavelength on this scale.
    for (const p of arPeaks as Array<{ wavelength_nm: number; wavelength_uncertainty_nm: number; line: { order?: number } }>) {
      const m = p.line.order ?? 1;
      const d = Math.min(...ar.map((n) => Math.abs(n - p.wavelength_nm / m)));
      expect(d).toBeLessThanOrEqual((3 * p.wavelength_uncertainty_nm + 0.63) / m);
    }
    expect(arPeaks.filter((p: { line: { order?: number } }) => p.line.order === undefined).length).toBeGreaterThanOrEqual(4);
  });

  it('refuses an unknown profile and a traversing profile name with 400', async () => {
    const missing = await post('identify', form([{ field: 'image', file: path.join(DEMO, 'tube-a.jpg') }], { profile: 'nope' }));
    expect(missing.status).toBe(400);
    expect(missing.json.error).toMatch(/no saved profile named nope/);
    const evil = await post('identify', form([{ field: 'image', file: path.join(DEMO, 'tube-a.jpg') }], { profile: '../profiles/bench-cfl' }));
    expect(evil.status).toBe(400);
    expect(evil.json.error).toMatch(/profile name/);
  });
});

describe('POST /api/polarization', () => {
  const pol = path.join(DEMO, 'polarization');
  const truth = JSON.parse(readFileSync(path.join(pol, 'truth.json'), 'utf8'));

  it('a power-meter table → polarized, DoLP and azimuth as the demo truth; an analyser calibrated on floor glare corrects the azimuth', async () => {
    const cal = await post('polarization', form([{ field: 'table', file: path.join(pol, 'floor-glare.csv'), type: 'text/csv' }], { calibrate_analyser: 'true', reference_azimuth: '0', save: 'analyser-a', extinction_ratio: '300' }));
    expect(cal.status).toBe(200);
    expect(cal.json.saved).toBe('analyser-a');
    // Truth: the analyser's 0° mark sits 3.5° off its axis (true = scale + 3.5°).
    expect(Math.abs(cal.json.offset_deg - truth.analyser.offset_deg)).toBeLessThanOrEqual(3 * cal.json.offset_uncertainty_deg + 0.2);
    const { status, json } = await post('polarization', form([{ field: 'table', file: path.join(pol, 'laser-a-power-meter.csv') }], { analyser: 'analyser-a' }));
    expect(status).toBe(200);
    expect(json.verdict).toBe('polarized');
    expect(Math.abs(json.dolp - truth.laser_a.dolp)).toBeLessThanOrEqual(3 * json.dolp_uncertainty + 0.005);
    expect(Math.abs(json.azimuth_deg - truth.laser_a.azimuth_true_deg)).toBeLessThanOrEqual(3 * json.azimuth_uncertainty_deg + 0.3);
  });

  it('a photo series (angles from the file names) → spot photometry and the Malus fit of laser C', async () => {
    const dir = path.join(pol, 'laser-c-photos');
    const files = readdirSync(dir).sort().map((f) => ({ field: 'images', file: path.join(dir, f), type: 'image/jpeg' }));
    const { status, json } = await post('polarization', form(files, { extinction_ratio: '300' }));
    expect(status).toBe(200);
    expect(json.points).toHaveLength(13);
    expect(json.points[3].file).toBe('laser-c_045deg.jpg');
    expect(Math.abs(json.azimuth_scale_deg - truth.laser_c.azimuth_scale_deg)).toBeLessThanOrEqual(3 * json.azimuth_uncertainty_deg + 0.3);
    expect(json.verdict).toBe('polarized');
  });

  it('refuses a photo where a table belongs (415) and an unknown analyser profile (400)', async () => {
    const wrong = await post('polarization', form([{ field: 'table', file: path.join(DEMO, 'tube-a.jpg') }]));
    expect(wrong.status).toBe(415);
    const missing = await post('polarization', form([{ field: 'table', file: path.join(pol, 'laser-a-power-meter.csv') }], { analyser: 'nobody' }));
    expect(missing.status).toBe(400);
  });
});

describe('POST /api/grating', () => {
  it('goniometer angles from a published case: 1200 lines/mm at 500 nm diffracts order 1 to 36.8699° (CHECK_VALUES.md, grating equation)', async () => {
    const { status, json } = await post('grating', { wavelength: '500 nm', angles: [{ order: -1, value: -36.8699 }, { order: 1, value: 36.8699 }], angle_reference: 'normal', angle_uncertainty: 0.001, nominal: 1200 });
    expect(status).toBe(200);
    expect(Math.abs(json.lines_per_mm - 1200)).toBeLessThanOrEqual(0.05);
    expect(json.verdict).toBe('within');
  });

  it('screen positions of the demo slide C (truth 579 lines/mm, turned 4°) → outside its 600 lines/mm label', async () => {
    const { status, json } = await post('grating', { wavelength: '632.816', distance: '850', distance_uncertainty: '2', positions: '-2:-991.5,-1:-340,1:330,2:865.5', nominal: '600' });
    expect(status).toBe(200);
    expect(Math.abs(json.lines_per_mm - 579)).toBeLessThanOrEqual(3 * json.lines_per_mm_uncertainty);
    expect(json.verdict).toBe('outside');
  });

  it('a table upload works, and a request without a wavelength is a 400 naming it', async () => {
    const t = await post('grating', form([{ field: 'table', file: path.join(DEMO, 'grating/slide-d-goniometer.csv'), type: 'text/csv' }], { wavelength: '632.816', angle_uncertainty: '0.017', nominal: '300', tolerance: '1%' }));
    expect(t.status).toBe(200);
    // Demo truth (slide-d-goniometer.csv header): 301.2 lines/mm.
    expect(Math.abs(t.json.lines_per_mm - 301.2)).toBeLessThanOrEqual(3 * t.json.lines_per_mm_uncertainty);
    const bad = await post('grating', { positions: '1:330' });
    expect(bad.status).toBe(400);
    expect(bad.json.error).toMatch(/wavelength/);
  });
});

describe('POST /api/modes', () => {
  it('a warm-up trace on a 7.5 mm confocal interferometer → mode spacing and a 60 cm cavity, with the plots as SVG', async () => {
    const { status, json } = await post('modes', form([{ field: 'traces', file: path.join(DEMO, 'modes/warmup-1.csv'), type: 'text/csv' }], { mirror_spacing: '7.5mm', interferometer: 'confocal', svg: 'true' }));
    expect(status).toBe(200);
    // Demo truth (warmup-1.csv header): spacing 249.827 MHz = c/(2 · 0.600 m) with c = 299 792 458 m/s (C).
    expect(Math.abs(json.mode_spacing_hz - 249.827e6)).toBeLessThanOrEqual(3 * json.mode_spacing_uncertainty_hz + 0.5e6);
    expect(Math.abs(json.cavity_length_m - 0.6)).toBeLessThanOrEqual(3 * json.cavity_length_uncertainty_m + 0.002);
    expect(json.mode_count).toBeGreaterThanOrEqual(2);
    expect(json.svg).toMatch(/<svg/);
    expect(JSON.stringify(json)).not.toContain('glowprint-upload-');
  });

  it('without an FSR the answer is a 400 that says what is needed', async () => {
    const r = await post('modes', form([{ field: 'traces', file: path.join(DEMO, 'modes/warmup-1.csv') }]));
    expect(r.status).toBe(400);
    expect(r.json.error).toMatch(/free spectral range/);
  });
});
