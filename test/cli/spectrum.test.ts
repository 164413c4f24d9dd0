import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createRandom } from '../../src/core/random.js';
import { renderSpectroscopePhoto } from '../../src/core/render/index.js';
import type { RenderTruth } from '../../src/core/render/renderSpectroscopePhoto.js';
import { encodeRenderedPhoto } from '../../src/io/writeRenderedPhoto.js';
import { runCli } from '../helpers/runCli.js';

// Fixtures are generated here (seeded) into a temporary folder; the photo comes from the project's renderer, whose
// ground truth is the reference for the recovery checks.
const dir = mkdtempSync(path.join(tmpdir(), 'glowprint-spectrum-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (name: string): string => path.join(dir, name);

/** Line positions (px) and peak heights of the CSV fixture; σ = 1.8 px Gaussians on a sloping baseline. */
const CSV_LINES: Array<[number, number]> = [
  [112.3, 900],
  [287.65, 400],
  [301.1, 650],
  [540.42, 1200],
  [777.8, 250],
];
const CSV_NOISE = 2;

function csvSpectrum(header: string, xOf: (px: number) => number | string): string {
  const rand = createRandom(7);
  const rows = [header];
  for (let px = 0; px < 900; px++) {
    let y = 50 + 0.02 * px;
    for (const [c, a] of CSV_LINES) y += a * Math.exp(-0.5 * ((px - c) / 1.8) ** 2);
    rows.push(`${xOf(px)},${(y + CSV_NOISE * rand.normal()).toFixed(3)}`);
  }
  return rows.join('\n') + '\n';
}

interface JsonPeak {
  position_px: number;
  position_uncertainty_px: number;
  fwhm_px: number;
  height: number;
  snr: number;
  saturated: boolean;
  blended: boolean;
  wavelength_nm?: number;
}

describe('glowprint spectrum <csv>', () => {
  it('finds the lines of a pixel,intensity CSV: centres within 4σ of their stated uncertainty and ≤ 0.05 px (seeded truth)', () => {
    const file = at('lines.csv');
    writeFileSync(file, '# bench spectrometer export\n' + csvSpectrum('pixel,intensity', (px) => px));
    const r = runCli(['spectrum', file, '--json']);
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout) as { band: unknown; peaks: JsonPeak[]; warnings: string[]; input: { file: string; kind: string } };
    expect(out.band).toBeNull();
    expect(out.input).toMatchObject({ file, kind: 'csv' });
    expect(Array.isArray(out.warnings)).toBe(true);
    expect(out.peaks.length).toBe(CSV_LINES.length);
    out.peaks.forEach((p, k) => {
      const err = Math.abs(p.position_px - CSV_LINES[k][0]);
      expect(err).toBeLessThanOrEqual(0.05);
      expect(err).toBeLessThanOrEqual(4 * p.position_uncertainty_px);
      // FWHM of a Gaussian = 2√(2 ln 2) σ = 4.239 px for σ = 1.8 (textbook identity).
      expect(Math.abs(p.fwhm_px - 2 * Math.sqrt(2 * Math.LN2) * 1.8)).toBeLessThanOrEqual(0.1);
      expect(p.saturated).toBe(false);
    });
  });

  it('reports wavelengths for a wavelength_nm,intensity CSV', () => {
    const file = at('wl.csv');
    writeFileSync(file, csvSpectrum('wavelength_nm,intensity', (px) => (400 + 0.25 * px).toFixed(3)));
    const r = runCli(['spectrum', file, '--json']);
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout) as { peaks: JsonPeak[] };
    expect(out.peaks.length).toBe(CSV_LINES.length);
    out.peaks.forEach((p, k) => expect(Math.abs(p.wavelength_nm! - (400 + 0.25 * CSV_LINES[k][0]))).toBeLessThanOrEqual(0.02));
  });

  it('prints a readable table by default: one row per peak with position ± uncertainty', () => {
    const file = at('table.csv');
    writeFileSync(file, csvSpectrum('pixel,intensity', (px) => px));
    const r = runCli(['spectrum', file]);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/position \(px\)\s+FWHM \(px\)\s+height\s+SNR\s+flags/);
    expect(r.stdout).toMatch(/^\s*4\s+540\.4\d ± 0\.0\d/m);
    expect(r.stdout).toMatch(/5 peaks/);
  });

  it('--band on a CSV spectrum is bad input (exit 1, one line)', () => {
    const file = at('band.csv');
    writeFileSync(file, csvSpectrum('pixel,intensity', (px) => px));
    const r = runCli(['spectrum', file, '--band', '10,10,0,100,20']);
    expect(r.status).toBe(1);
    expect(r.stderr.trim()).toBe(`glowprint: ${file}: --band and --dark apply to photos; this input is a CSV spectrum`);
  });
});

/** A 1600×700 spectroscope photo from the renderer: tilted, slanted band, Hg/Ne-like lines, one clipped. */
let photo: string;
let truth: RenderTruth;
beforeAll(async () => {
  const rendered = renderSpectroscopePhoto({
    widthPx: 1600,
    heightPx: 700,
    seed: 11,
    band: { angleDeg: -6, slantDeg: 2, heightPx: 70, rangeNm: [420, 680] },
    camera: { focal: { kind: 'px', focalLengthPx: 1400 } },
    source: {
      lines: [
        { wavelengthNm: 435.8, intensity: 0.6 },
        { wavelengthNm: 491.6, intensity: 0.15 },
        { wavelengthNm: 546.1, intensity: 3.0 },
        { wavelengthNm: 577.0, intensity: 0.4 },
        { wavelengthNm: 585.2, intensity: 0.5 },
        { wavelengthNm: 640.2, intensity: 0.45 },
      ],
    },
    exposure: { kind: 'brightestPeak', fractionOfFullWell: 1.6 },
  });
  truth = rendered.truth;
  photo = at('tube.jpg');
  writeFileSync(photo, await encodeRenderedPhoto(rendered.image, { format: { kind: 'jpeg', quality: 92 }, exif: { model: 'Bench Cam', exposureTimeS: 0.02, isoSpeed: 100 } }));
});

interface JsonOut {
  input: { file: string; width_px: number; height_px: number; bit_depth: number; exif: Record<string, unknown> };
  band: { angle_deg: number; slant_deg: number; center: { x: number; y: number }; length_px: number; height_px: number; source: string };
  peaks: JsonPeak[];
  warnings: string[];
}

/** Where a position along the band lies in the photo (the geometry convention). */
function bandPoint(b: JsonOut['band'], positionPx: number): { x: number; y: number } {
  const a = (b.angle_deg * Math.PI) / 180;
  const s = positionPx - b.length_px / 2;
  return { x: b.center.x + s * Math.cos(a), y: b.center.y + s * Math.sin(a) };
}

describe('glowprint spectrum <photo>', () => {
  it('--json: band geometry and peaks match the renderer\'s truth (angle ≤ 0.1°, strong-line centres ≤ 0.25 px), the clipped line flagged', () => {
    const r = runCli(['spectrum', photo, '--json']);
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout) as JsonOut;
    expect(out.input).toMatchObject({ file: photo, width_px: 1600, height_px: 700, bit_depth: 8 });
    expect(out.input.exif).toMatchObject({ camera_model: 'Bench Cam', exposure_time_s: 0.02, iso: 100 });
    expect(Math.abs(out.band.angle_deg - truth.band.angleDeg)).toBeLessThanOrEqual(0.1);
    expect(Math.abs(out.band.slant_deg - truth.band.slantDeg)).toBeLessThanOrEqual(0.5);
    expect(out.band.source).toBe('found');
    const inFrame = truth.lines.filter((l) => l.order === 1 && l.inFrame && l.positionPx > 0 && l.positionPx < truth.band.lengthPx);
    for (const line of inFrame) {
      // Compare in photo coordinates, so the check does not depend on where each side puts the band's start.
      const near = out.peaks
        .map((p) => ({ p, q: bandPoint(out.band, p.position_px) }))
        .map(({ p, q }) => ({ p, d: Math.hypot(q.x - line.imagePx.x, q.y - line.imagePx.y) }))
        .sort((a, b) => a.d - b.d)[0];
      expect(near, `line ${line.wavelengthNm} nm`).toBeDefined();
      expect(near.d, `line ${line.wavelengthNm} nm`).toBeLessThanOrEqual(0.25);
      expect(near.p.saturated, `line ${line.wavelengthNm} nm`).toBe(line.saturated);
    }
    expect(inFrame.some((l) => l.saturated)).toBe(true);
  });

  it('default output: the band line and the peak table; --csv and --svg written', () => {
    const csv = at('tube-spectrum.csv');
    const svg = at('tube-spectrum.svg');
    const r = runCli(['spectrum', photo, '--csv', csv, '--svg', svg]);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/band \(found\): angle -?\d+\.\d\d°( ± \d+\.\d\d°)?, slant -?\d+\.\d\d°( ± \d+\.\d\d°)?, centre \(\d+\.\d, \d+\.\d\) px, length \d+ px, height \d+ px/);
    expect(r.stdout).toMatch(/saturated/);
    const all = readFileSync(csv, 'utf8').trim().split('\n');
    // One comment line keeps the photo's geometry (for a calibration from the CSV), then the table.
    expect(all[0]).toMatch(/^# photo_geometry: \{"source_file":"[^"]+","width_px":\d+,"height_px":\d+/);
    const lines = all.slice(1);
    expect(lines[0]).toBe('position_px,intensity,r,g,b,saturated');
    expect(lines[1].split(',').length).toBe(6);
    expect(lines.some((l) => l.endsWith(',1'))).toBe(true); // the clipped line's samples
    const text = readFileSync(svg, 'utf8');
    expect(text.startsWith('<?xml')).toBe(true);
    expect(text).toContain('peak-marker');
  });

  it('--band overrides the search and is echoed back (manual geometry)', () => {
    const b = truth.band;
    const spec = [b.center.x, b.center.y, b.angleDeg, b.lengthPx, b.heightPx, b.slantDeg].map((v) => v.toFixed(3)).join(',');
    const r = runCli(['spectrum', photo, '--json', '--band', spec]);
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout) as JsonOut;
    expect(out.band.source).toBe('manual');
    expect(Math.abs(out.band.angle_deg - b.angleDeg)).toBeLessThanOrEqual(1e-3);
    expect(Math.abs(out.band.length_px - b.lengthPx)).toBeLessThanOrEqual(1e-3);
    // With the true band, positions are the truth's own: strong lines within 0.25 px.
    const strong = truth.lines.filter((l) => l.order === 1 && l.inFrame && l.positionPx > 5 && l.positionPx < b.lengthPx - 5);
    for (const line of strong) {
      const best = Math.min(...out.peaks.map((p) => Math.abs(p.position_px - line.positionPx)));
      expect(best, `line ${line.wavelengthNm} nm`).toBeLessThanOrEqual(0.25);
    }
  });

  it('rejects a malformed --band naming the expected form, and a band centred outside the photo', () => {
    const r = runCli(['spectrum', photo, '--band', '1,2,3']);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/^glowprint: --band: expected 5 or 6 numbers "cx,cy,angleDeg,lengthPx,heightPx\[,slantDeg\]", got "1,2,3"\n$/);
    const o = runCli(['spectrum', photo, '--band', '5000,100,0,300,40']);
    expect(o.status).toBe(1);
    expect(o.stderr).toMatch(/--band: centre \(5000, 100\) lies outside the 1600×700 px photo/);
  });

  it('refuses to write --csv over the input, leaving it intact', () => {
    const before = readFileSync(photo);
    const r = runCli(['spectrum', photo, '--csv', photo]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/refusing to write over an input file/);
    expect(readFileSync(photo).equals(before)).toBe(true);
  });
});

describe('glowprint spectrum — bad input: exit 1, one line on stderr, nothing on stdout, nothing written', () => {
  const cases: Array<[string, () => Promise<string>, RegExp]> = [
    ['zero-byte file', async () => write('empty.jpg', Buffer.alloc(0)), /the file is empty \(0 bytes\)/],
    [
      'truncated JPEG',
      async () => {
        const jpg = await sharp(noise(400, 300), { raw: { width: 400, height: 300, channels: 3 } }).jpeg().toBuffer();
        return write('cut.jpg', jpg.subarray(0, jpg.length >> 1));
      },
      /JPEG data is damaged or cut short/,
    ],
    ['text renamed .jpg', async () => write('notes.jpg', 'not a photo\n'), /contains text, not image data \(despite its \.jpg name\)/],
    ['1×1 image', async () => write('dot.png', await sharp(new Uint8Array(3), { raw: { width: 1, height: 1, channels: 3 } }).png().toBuffer()), /too small for a spectrum/],
    [
      'all-black image',
      async () => write('black.png', await sharp(new Uint8Array(640 * 480 * 3), { raw: { width: 640, height: 480, channels: 3 } }).png().toBuffer()),
      /no spectrum found/,
    ],
    ['a header claiming 60000×60000', async () => write('bomb.png', bombPng(60000, 60000)), /claims 60000×60000 px .* refusing to decode/],
    ['an unsupported format', async () => write('anim.gif', await sharp(noise(64, 64), { raw: { width: 64, height: 64, channels: 3 } }).gif().toBuffer()), /GIF images are not supported/],
    ['a missing file', async () => at('missing.jpg'), /no such file/],
  ];
  for (const [name, make, message] of cases) {
    it(name, async () => {
      const file = await make();
      const out = at(`${path.basename(file)}.out.csv`);
      const r = runCli(['spectrum', file, '--csv', out]);
      expect(r.status).toBe(1);
      expect(r.stdout).toBe('');
      const lines = r.stderr.trim().split('\n');
      expect(lines.length).toBe(1);
      expect(lines[0].startsWith(`glowprint: ${file}: `) || lines[0].startsWith('glowprint: ')).toBe(true);
      expect(lines[0]).toContain(file);
      expect(lines[0]).toMatch(message);
      expect(existsSync(out)).toBe(false);
    });
  }

  it('a dark frame of another size', async () => {
    const dark = write('dark-small.png', await sharp(noise(100, 80), { raw: { width: 100, height: 80, channels: 3 } }).png().toBuffer());
    const r = runCli(['spectrum', photo, '--dark', dark]);
    expect(r.status).toBe(1);
    expect(r.stderr.trim()).toBe(`glowprint: ${dark}: dark frame is 100×80 px but the photo is 1600×700 px; a dark frame must be taken with the same camera settings and size`);
  });

  it('--max-pixels below the photo\'s size', () => {
    const r = runCli(['spectrum', photo, '--max-pixels', '1e6']);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/claims 1600×700 px \(1\.1 MP\), over the limit of 1\.0 MP/);
  });
});

describe('glowprint spectrum — usage', () => {
  it('--help documents the geometry, the band override and the cautions (exit 0)', () => {
    const r = runCli(['spectrum', '--help']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/angle_deg\s+direction in which position_px grows, from \+x towards \+y, in \(−180, 180\]/);
    expect(r.stdout).toMatch(/--band "cx,cy,angleDeg,lengthPx,heightPx\[,slantDeg\]"/);
    expect(r.stdout).toMatch(/High voltage/);
  });
  it('exits 2 without an input, on an unknown option, or a bad --transfer', () => {
    expect(runCli(['spectrum']).status).toBe(2);
    expect(runCli(['spectrum', 'x.jpg', '--no-such']).status).toBe(2);
    expect(runCli(['spectrum', 'x.jpg', '--transfer', 'gamma']).status).toBe(2);
  });
});

function write(name: string, data: Buffer | string): string {
  const p = at(name);
  writeFileSync(p, data);
  return p;
}

function noise(w: number, h: number): Uint8Array {
  const rand = createRandom(3);
  return Uint8Array.from({ length: w * h * 3 }, () => Math.floor(rand.uniform() * 256));
}

/** CRC-32 (ISO 3309) as the PNG specification (W3C PNG §5.5) prescribes for chunks. */
function crc32(bytes: Uint8Array): number {
  let c = 0xffffffff;
  for (const b of bytes) {
    c ^= b;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
  }
  return (c ^ 0xffffffff) >>> 0;
}

/** A tiny PNG whose IHDR (W3C PNG §11.2.2) claims width × height, 8-bit RGB. */
function bombPng(width: number, height: number): Buffer {
  const chunk = (type: string, data: Buffer): Buffer => {
    const body = Buffer.concat([Buffer.from(type, 'latin1'), data]);
    const len = Buffer.alloc(4);
    len.writeUInt32BE(data.length);
    const crc = Buffer.alloc(4);
    crc.writeUInt32BE(crc32(body));
    return Buffer.concat([len, body, crc]);
  };
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr[8] = 8;
  ihdr[9] = 2;
  return Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    chunk('IHDR', ihdr),
    chunk('IDAT', Buffer.from([0x78, 0x9c, 0x63, 0x60, 0x00, 0x00, 0x00, 0x02, 0x00, 0x01])),
    chunk('IEND', Buffer.alloc(0)),
  ]);
}
