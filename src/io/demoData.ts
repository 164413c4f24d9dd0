/**
 * Generator of the bundled demo photos (data/demo): a fictional stockroom audit of unlabelled discharge tubes,
 * photographed with a phone behind a 1000 lines/mm film grating, rendered by core/render from the project's line list
 * (data/lines, data/lamps.json). Deterministic: every photo has its own fixed seed.
 *
 *   node dist/src/io/demoData.js [--out data/demo]
 *
 * Writes the JPEGs (with EXIF) and truth.json into the folder; other files there are left alone.
 */
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { InputError } from '../core/errors.js';
import { toSnakeCase } from '../core/json/toSnakeCase.js';
import { renderSpectroscopePhoto } from '../core/render/index.js';
import type { ContinuumComponent, EmissionLine, RenderedPhoto, RenderOptionsInput } from '../core/render/index.js';
import { loadAllListedLines, loadLampDefinitions } from './lineList.js';
import { dataPath } from './projectRoot.js';
import type { PhotoExif } from './writeRenderedPhoto.js';
import { writeRenderedPhoto } from './writeRenderedPhoto.js';
import { writeFileAtomic } from './writeAtomic.js';

/** The bench rig, the same for every photo (one calibration serves all tubes). */
export const DEMO_RIG = {
  widthPx: 1920,
  heightPx: 1080,
  linesPerMm: 1000,
  /** Phone main camera, EXIF FocalLengthIn35mmFilm. */
  focalLength35mmMm: 26,
  focalLengthMm: 4.3,
  fNumber: 1.8,
  /** Phone axis turned 33.5° from the grating normal, so that order +1 fills the middle of the frame. */
  cameraAngleDeg: 33.5,
  /** The phone sits slightly rolled on its stand; the grating slide is a little rotated in its holder. */
  bandAngleDeg: 1.8,
  slantDeg: 0.7,
  sigmaPx: 1.0,
  jpegQuality: 90,
} as const;

export interface DemoPhotoSpec {
  file: string;
  role: 'calibration' | 'tube';
  /** What the label on the tube (or box) says. */
  label: string;
  /** What is really in it (spectra present in the render). */
  contents: string[];
  description: string;
  exif: PhotoExif;
  render: RenderOptionsInput;
}

const BASE_ISO = 50;
const FULL_WELL_AT_BASE_ISO = 12000;

/** Lines of the project's list for the given spectra, scaled; in the camera's reach (350–1000 nm). */
function listLines(spectra: Record<string, number>): EmissionLine[] {
  const out: EmissionLine[] = [];
  for (const l of loadAllListedLines()) {
    const scale = spectra[l.spectrum];
    if (scale === undefined || l.kind === 'band-head' || l.wavelengthNm < 350 || l.wavelengthNm > 1000) continue;
    out.push({ wavelengthNm: l.wavelengthNm, intensity: l.intensity * scale, species: l.spectrum });
  }
  for (const s of Object.keys(spectra)) {
    if (!out.some((l) => l.species === s)) throw new Error(`demo: the line list has no lines of ${s}`);
  }
  return out;
}

/** Molecular band heads of the project's list (N2 2nd positive, N2+ 1st negative): degraded to the violet. */
function listBandHeads(scale: number, tailNm: number): ContinuumComponent[] {
  return loadAllListedLines()
    .filter((l) => l.kind === 'band-head')
    .map((l) => ({
      kind: 'bandHead' as const,
      headNm: l.wavelengthNm,
      tailNm,
      degradesTo: 'violet' as const,
      intensity: l.intensity * scale,
      label: `${l.spectrum} ${l.wavelengthNm} nm`,
    }));
}

/** Phosphor peaks of the fluorescent lamp definition (data/lamps.json) as Gaussian bands. */
function phosphorBands(scale: number, broadScale: number): ContinuumComponent[] {
  const lamp = loadLampDefinitions().find((d) => d.name === 'fluorescent');
  if (!lamp) throw new Error('demo: data/lamps.json has no fluorescent lamp');
  return lamp.extraLines.map((p) => {
    const fwhmNm = p.widthNm ?? 2;
    // lamps.json gives relative peak heights; a Gaussian band's area is peak · FWHM · 1.0645.
    const k = fwhmNm > 20 ? broadScale : scale;
    return { kind: 'gaussianBand' as const, centerNm: p.wavelengthNm, fwhmNm, intensity: p.intensity * fwhmNm * 1.0645 * k, label: p.spectrum };
  });
}

function exif(exposureTimeS: number, isoSpeed: number, time: string): PhotoExif {
  return {
    make: 'glowprint demo',
    model: 'simulated phone camera (26 mm equiv.)',
    software: 'glowprint demo renderer',
    exposureTimeS,
    isoSpeed,
    focalLengthMm: DEMO_RIG.focalLengthMm,
    focalLength35mmMm: DEMO_RIG.focalLength35mmMm,
    fNumber: DEMO_RIG.fNumber,
    dateTimeOriginal: `2031:03:12 ${time}`,
  };
}

interface PhotoSetting {
  seed: number;
  source: { lines: EmissionLine[]; continua?: ContinuumComponent[] };
  exposureTimeS: number;
  isoSpeed: number;
  /** Brightest band pixel as a fraction of the clipping level (> 1: clipped lines, as real photos have). */
  brightest: number;
  /** Source image: offset from the frame centre across the band, height along the tube, width across it (px). */
  offsetPx: number;
  heightPx: number;
  slitWidthPx: number;
  /** Room light reaching each pixel in 1/60 s (e⁻). */
  ambient: { r: number; g: number; b: number };
}

function renderOptions(s: PhotoSetting): RenderOptionsInput {
  const gain = s.isoSpeed / BASE_ISO;
  const t = s.exposureTimeS * 60;
  return {
    widthPx: DEMO_RIG.widthPx,
    heightPx: DEMO_RIG.heightPx,
    source: s.source,
    grating: {
      linesPerMm: DEMO_RIG.linesPerMm,
      incidenceDeg: 0,
      orders: [
        { order: 0, efficiency: 0.1 },
        { order: 1, efficiency: 0.3 },
        { order: -1, efficiency: 0.3 },
        { order: 2, efficiency: 0.03 },
      ],
    },
    camera: { focal: { kind: '35mm', focalLength35mmMm: DEMO_RIG.focalLength35mmMm }, cameraAngleDeg: DEMO_RIG.cameraAngleDeg },
    band: { angleDeg: DEMO_RIG.bandAngleDeg, slantDeg: DEMO_RIG.slantDeg, offsetPx: s.offsetPx, heightPx: s.heightPx, rangeNm: [400, 700] },
    lineSpread: { sigmaPx: DEMO_RIG.sigmaPx, slitWidthPx: s.slitWidthPx, defocusRadiusPx: 0 },
    // Higher ISO = more gain: the clipping level falls in electrons; read noise in electrons falls a little.
    sensor: { fullWellElectrons: FULL_WELL_AT_BASE_ISO / gain, readNoiseElectrons: 3 / Math.sqrt(gain) + 1 },
    exposure: { kind: 'brightestPeak', fractionOfFullWell: s.brightest },
    ambient: { electrons: { r: s.ambient.r * t, g: s.ambient.g * t, b: s.ambient.b * t }, gradient: { x: 0.45, y: -0.25 }, vignetting: 0.3 },
    strayLight: { fraction: 0.02, sigmaPx: 45 },
    seed: s.seed,
  };
}

/** The scenario: a calibration photo of a compact fluorescent bulb, then five tubes from the drawer. */
export function demoScenario(): DemoPhotoSpec[] {
  // Room light at 1/60 s (e⁻ per pixel); renderOptions scales it with the exposure time.
  const dim = { r: 8, g: 9, b: 13 };
  const photos: (Omit<DemoPhotoSpec, 'render' | 'exif'> & { setting: PhotoSetting; time: string })[] = [
    {
      file: 'cfl-calibration.jpg',
      role: 'calibration',
      label: 'compact fluorescent bulb (desk lamp), behind a card slit',
      contents: ['Hg I', 'rare-earth phosphors (Eu3+, Tb3+, Eu2+)'],
      description: 'Calibration lamp: mercury lines plus tri-phosphor peaks, seen through a 1 mm slit cut in card.',
      time: '14:02:10',
      setting: {
        seed: 101,
        source: { lines: listLines({ 'Hg I': 1 }), continua: phosphorBands(1000, 300) },
        exposureTimeS: 1 / 100,
        isoSpeed: 50,
        brightest: 0.95,
        offsetPx: -25,
        heightPx: 210,
        slitWidthPx: 2.2,
        ambient: dim,
      },
    },
    {
      file: 'tube-a.jpg',
      role: 'tube',
      label: 'Ne',
      contents: ['Ne I'],
      description: 'Tube A, label reads "Ne": bright neon; several red-orange lines clip at this exposure.',
      time: '14:09:44',
      setting: {
        seed: 102,
        source: { lines: listLines({ 'Ne I': 1 }) },
        exposureTimeS: 1 / 60,
        isoSpeed: 64,
        brightest: 1.6,
        offsetPx: 12,
        heightPx: 280,
        slitWidthPx: 3,
        ambient: dim,
      },
    },
    {
      file: 'tube-b.jpg',
      role: 'tube',
      label: 'Ar (label worn)',
      contents: ['Ar I', 'Ar II', 'Hg I'],
      description: 'Tube B, worn label "Ar…": argon with a mercury admixture (a blue sign-tube fill).',
      time: '14:14:03',
      setting: {
        seed: 103,
        source: { lines: [...listLines({ 'Ar I': 1, 'Ar II': 0.15 }), ...listLines({ 'Hg I': 0.5 })] },
        exposureTimeS: 1 / 30,
        isoSpeed: 125,
        brightest: 0.9,
        offsetPx: 8,
        heightPx: 280,
        slitWidthPx: 3,
        ambient: dim,
      },
    },
    {
      file: 'tube-c.jpg',
      role: 'tube',
      label: 'He',
      contents: ['He I'],
      description: 'Tube C, label reads "He": helium; the yellow 587.6 nm line clips.',
      time: '14:18:51',
      setting: {
        seed: 104,
        source: { lines: listLines({ 'He I': 1 }) },
        exposureTimeS: 1 / 30,
        isoSpeed: 100,
        brightest: 1.15,
        offsetPx: 15,
        heightPx: 280,
        slitWidthPx: 3,
        ambient: dim,
      },
    },
    {
      file: 'tube-d.jpg',
      role: 'tube',
      label: 'H2',
      contents: ['H I', 'O I', 'N II', 'N2 2nd positive', 'N2+ 1st negative', 'N2 1st positive'],
      description:
        'Tube D, label reads "H2": an old, leaky hydrogen tube — weak Balmer lines, water-vapour and air features ' +
        '(O I, nitrogen atoms and bands, among them the red N2 first-positive band heads).',
      time: '14:25:30',
      setting: {
        seed: 105,
        source: {
          lines: listLines({ 'H I': 0.004, 'O I': 2, 'N II': 0.4 }),
          continua: [
            ...listBandHeads(60, 2.5),
          ],
        },
        exposureTimeS: 1 / 15,
        isoSpeed: 400,
        brightest: 0.8,
        offsetPx: 10,
        heightPx: 270,
        slitWidthPx: 3,
        ambient: dim,
      },
    },
    {
      file: 'tube-e.jpg',
      role: 'tube',
      label: '(no label)',
      contents: ['Ne I', 'Hg I'],
      description: 'Tube E, unlabelled: neon with a trace of mercury (the blue 435.8 nm and green 546.1 nm lines).',
      time: '14:31:12',
      setting: {
        seed: 106,
        source: { lines: [...listLines({ 'Ne I': 1 }), ...listLines({ 'Hg I': 0.4 })] },
        exposureTimeS: 1 / 60,
        isoSpeed: 64,
        brightest: 1.3,
        offsetPx: 18,
        heightPx: 280,
        slitWidthPx: 3,
        ambient: dim,
      },
    },
  ];
  return photos.map(({ setting, time, ...rest }) => ({
    ...rest,
    exif: exif(setting.exposureTimeS, setting.isoSpeed, time),
    render: renderOptions(setting),
  }));
}

/** The truth.json entry of one rendered photo (camelCase; written snake_case). */
export function demoTruthEntry(spec: DemoPhotoSpec, photo: RenderedPhoto): Record<string, unknown> {
  const t = photo.truth;
  return {
    file: spec.file,
    role: spec.role,
    label: spec.label,
    contents: spec.contents,
    description: spec.description,
    exif: spec.exif,
    widthPx: photo.image.width,
    heightPx: photo.image.height,
    band: t.band,
    dispersionNmPerPx: t.dispersionNmPerPx,
    model: t.model,
    lineFwhmPx: t.lineFwhmPx,
    zeroOrder: t.zeroOrder,
    // Lines in the frame; a line with a few electrons is there but lost in the noise.
    lines: t.lines
      .filter((l) => l.inFrame)
      .map((l) => ({
        wavelengthNm: l.wavelengthNm,
        species: l.species,
        order: l.order,
        positionPx: l.positionPx,
        imagePx: l.imagePx,
        peakElectrons: l.peakElectrons,
        saturated: l.saturated,
      })),
    continuumMarks: t.continuumMarks,
    exposure: {
      electronsPerIntensity: t.electronsPerIntensity,
      fullWellElectrons: t.fullWellElectrons,
      readNoiseElectrons: t.readNoiseElectrons,
    },
    seed: t.seed,
  };
}

const round = (v: unknown): unknown => {
  if (typeof v === 'number') return Number.isInteger(v) ? v : Number(v.toPrecision(10));
  if (Array.isArray(v)) return v.map(round);
  if (v && typeof v === 'object') return Object.fromEntries(Object.entries(v).map(([k, x]) => [k, round(x)]));
  return v;
};

/** Renders every demo photo into `dir` with its EXIF, and truth.json beside them. */
export async function writeDemoData(dir: string, log: (message: string) => void = () => {}): Promise<string[]> {
  const written: string[] = [];
  const entries: unknown[] = [];
  for (const spec of demoScenario()) {
    const photo = renderSpectroscopePhoto(spec.render);
    const target = path.join(dir, spec.file);
    await writeRenderedPhoto(target, photo.image, { format: { kind: 'jpeg', quality: DEMO_RIG.jpegQuality }, exif: spec.exif });
    entries.push(demoTruthEntry(spec, photo));
    written.push(target);
    log(`wrote ${target}`);
  }
  const truth = {
    format: 'glowprint-demo-truth',
    version: 1,
    about:
      'Ground truth of the demo photos rendered by src/core/render (see README.md). Positions are along the band ' +
      '(order +1, 400–700 nm) from its start at 400 nm; band angle_deg points from blue to red.',
    rig: DEMO_RIG,
    photos: entries,
  };
  const truthFile = path.join(dir, 'truth.json');
  await writeFileAtomic(truthFile, JSON.stringify(round(toSnakeCase(truth)), null, 1) + '\n');
  written.push(truthFile);
  log(`wrote ${truthFile}`);
  return written;
}

function parseArgs(argv: string[]): { out: string } {
  let out = dataPath('demo');
  for (let i = 0; i < argv.length; i++) {
    if (argv[i] === '--out') {
      const v = argv[++i];
      if (!v) throw new InputError('--out: expected a folder name', '--out');
      out = v;
    } else {
      throw new InputError(`${argv[i]}: unknown argument (usage: node dist/src/io/demoData.js [--out data/demo])`, argv[i]);
    }
  }
  return { out };
}

if (process.argv[1] && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href) {
  try {
    const { out } = parseArgs(process.argv.slice(2));
    await writeDemoData(out, (m) => process.stderr.write(m + '\n'));
  } catch (e) {
    process.stderr.write(`${e instanceof InputError ? e.message : (e as Error).stack}\n`);
    process.exit(1);
  }
}
