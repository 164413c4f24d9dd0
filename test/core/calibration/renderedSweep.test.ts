/**
 * Automatic calibration on rendered photos through the real pipeline: the project renderer (src/core/render) draws
 * a discharge tube through a grating in front of a seeded camera of the issue's range, sharp encodes it as a JPEG
 * with the EXIF 35-mm focal length, and the photo goes the way `glowprint calibrate` takes it: decode → band → peaks
 * (analyseSpectrumInput) → grating priors from the EXIF and the band → calibrateFromPeaks against every listed line
 * of the lamp (the PROJECT line list). The tubes shine with the OUTSIDE reference's lines (NIST ASD in ../shared,
 * test/helpers/nistReference.ts, via tubeSource), each intensity perturbed by up to ×3, so the line list is checked
 * against data it was not made from.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { calibrateFromPeaks, gratingPriors, zeroOrderSighting } from '../../../src/core/calibration/calibrate.js';
import { calibrationLampLines } from '../../../src/core/calibration/calibrationLines.js';
import { wavelengthAtNm } from '../../../src/core/calibration/model.js';
import { InputError } from '../../../src/core/errors.js';
import { createRandom } from '../../../src/core/random.js';
import { renderSpectroscopePhoto, type RenderOptionsInput } from '../../../src/core/render/index.js';
import { imageToBandPx } from '../../../src/core/spectrum/band/frame.js';
import { loadLampCatalog } from '../../../src/io/lineList.js';
import { encodeRenderedPhoto } from '../../../src/io/writeRenderedPhoto.js';
import { analyseSpectrumInput } from '../../../src/tasks/spectrum.js';
import { tubeSource } from '../identify/renderedTubes.js';

const catalog = loadLampCatalog();
/** Every listed line of the lamp's spectra, as glowprint calibrate matches with. */
const calibrationLines = (spec: string, resolutionNm?: number) => calibrationLampLines(spec, catalog, resolutionNm).lines;

/** A tube: its recipe for the renderer (elements and weights) and the lamp spec the user gives. */
type Tube = { lamp: string; recipe: Array<[string, number]> };

/** The tubes of the first sweep, among them the many-lined Xe and Kr. */
const TUBES: Tube[] = [
  { lamp: 'Ne', recipe: [['Ne', 1]] },
  { lamp: 'Ar', recipe: [['Ar', 1]] },
  { lamp: 'Xe', recipe: [['Xe', 1]] },
  { lamp: 'Ne+Hg', recipe: [['Ne', 1], ['Hg', 0.7]] },
  { lamp: 'Kr', recipe: [['Kr', 1]] },
];

/** The lamps the issue names for calibrating a rig (a mercury lamp, a neon indicator, a helium or argon tube). */
const CALIBRATION_TUBES: Tube[] = [
  { lamp: 'Hg', recipe: [['Hg', 1]] },
  { lamp: 'Ne', recipe: [['Ne', 1]] },
  { lamp: 'He', recipe: [['He', 1]] },
  { lamp: 'Ar', recipe: [['Ar', 1]] },
  { lamp: 'Ne+Hg', recipe: [['Ne', 1], ['Hg', 1]] },
];

/** Sensors of the sweep: 720p and 1080p webcams and phones, and two larger phone frames. */
const SENSORS: Array<[number, number]> = [
  [1280, 720],
  [1920, 1080],
  [1280, 720],
  [1920, 1080],
  [1280, 720],
  [1920, 1080],
  [3264, 2448],
  [4000, 3000],
];

interface Instrument {
  lamp: string;
  recipe: Array<[string, number]>;
  render: RenderOptionsInput;
  focal35mmMm: number;
  dispersionNmPerPx: number;
  linesPerMm: number;
  reversed: boolean;
}

/**
 * A seeded instrument of the issue's range (300–1200 lines/mm, 22–40 mm equivalent, see matchLines.test.ts for the
 * derivation) aimed at 480–620 nm, with tilt, slant, blur, noise, ambient light, stray light and, for a third of
 * them, an exposure that saturates the brightest lines; half of them see the spectrum the other way round. Drawn
 * again while the centre dispersion exceeds the 2 nm/px the issue asks of automatic matching.
 */
function instrument(k: number, tubes: Tube[] = TUBES): Instrument {
  const rng = createRandom(9100 + 37 * k);
  const tube = tubes[k % tubes.length];
  const [widthPx, heightPx] = SENSORS[k % SENSORS.length];
  const diag = Math.hypot(widthPx, heightPx);
  for (;;) {
    const linesPerMm = 300 + 900 * rng.uniform();
    const focal35mmMm = 22 + 18 * rng.uniform();
    const f = (focal35mmMm * diag) / Math.hypot(36, 24);
    const axisNm = 480 + 140 * rng.uniform();
    const sinC = (axisNm * linesPerMm) / 1e6;
    const dispersionNmPerPx = (1e6 / linesPerMm) * Math.sqrt(1 - sinC * sinC) / f;
    if (dispersionNmPerPx > 2) continue;
    const reversed = rng.uniform() < 0.5;
    const tiltDeg = 6 * (rng.uniform() - 0.5);
    const saturate = rng.uniform() < 1 / 3;
    return {
      lamp: tube.lamp,
      recipe: tube.recipe,
      focal35mmMm,
      dispersionNmPerPx,
      linesPerMm,
      reversed,
      render: {
        widthPx,
        heightPx,
        grating: { linesPerMm, incidenceDeg: 0, orders: [{ order: 0, efficiency: 0.1 }, { order: 1, efficiency: 0.3 }, { order: 2, efficiency: 0.03 }] },
        camera: { focal: { kind: '35mm', focalLength35mmMm: focal35mmMm }, cameraAngleDeg: (Math.asin(sinC) * 180) / Math.PI },
        band: {
          angleDeg: tiltDeg + (reversed ? 180 : 0),
          slantDeg: 3 * (rng.uniform() - 0.5),
          offsetPx: 0.1 * heightPx * (rng.uniform() - 0.5),
          heightPx: Math.round(heightPx * (0.08 + 0.08 * rng.uniform())),
          rangeNm: [400, 700],
        },
        lineSpread: { sigmaPx: 0.8 + 1.2 * rng.uniform(), slitWidthPx: 2 + 2 * rng.uniform(), defocusRadiusPx: 2 * rng.uniform() },
        sensor: { fullWellElectrons: 6000 + 14000 * rng.uniform(), readNoiseElectrons: 2 + 4 * rng.uniform() },
        exposure: { kind: 'brightestPeak', fractionOfFullWell: saturate ? 1.3 + 0.7 * rng.uniform() : 0.5 + 0.4 * rng.uniform() },
        ambient: { electrons: { r: 20 + 60 * rng.uniform(), g: 20 + 60 * rng.uniform(), b: 25 + 60 * rng.uniform() }, gradient: { x: 0.3, y: -0.2 }, vignetting: 0.25 },
        strayLight: { fraction: 0.01 + 0.03 * rng.uniform(), sigmaPx: 30 + 40 * rng.uniform() },
        spectralRangeNm: [380, 720],
        seed: 500 + k,
      },
    };
  }
}

const dir = mkdtempSync(path.join(tmpdir(), 'glowprint-rendered-sweep-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

type Outcome = { kind: 'declined'; message: string } | { kind: 'calibrated'; right: boolean; zeroOrderCounted: boolean; detail: string };

interface RenderedCase {
  inst: Instrument;
  photo: ReturnType<typeof renderSpectroscopePhoto>;
  analysis: Awaited<ReturnType<typeof analyseSpectrumInput>>['analysis'];
}

/** Renders, encodes and decodes one instrument's photo through the `glowprint calibrate` pipeline up to the peaks. */
async function renderedCase(k: number, tubes: Tube[], name: string): Promise<RenderedCase> {
  const inst = instrument(k, tubes);
  const photo = renderSpectroscopePhoto({ ...inst.render, source: { lines: tubeSource(inst.recipe, 77 + k) } });
  const jpeg = await encodeRenderedPhoto(photo.image, {
    format: { kind: 'jpeg', quality: 90 },
    exif: { focalLength35mmMm: inst.focal35mmMm, make: 'glowprint test', model: 'rendered' },
  });
  const file = path.join(dir, `${name}-${k}.jpg`);
  writeFileSync(file, jpeg);
  const { analysis } = await analyseSpectrumInput(file);
  return { inst, photo, analysis };
}

/**
 * Calibrates a rendered case as `glowprint calibrate` does (grating priors from the EXIF and the band, the zero order
 * the band search found unless `zeroOrder` is false) against `lamp` (default: the tube's own); judges the scale
 * against the renderer's truth.
 */
function calibrateCase(c: RenderedCase, options: { lamp?: string; zeroOrder?: boolean } = {}): Outcome {
  const { inst, photo, analysis } = c;
  const lamp = options.lamp ?? inst.lamp;
  if (!analysis.band) return { kind: 'declined', message: 'no band found' };
  const band = analysis.band;
  const priors = gratingPriors({
    image: { widthPx: analysis.input.widthPx!, heightPx: analysis.input.heightPx! },
    band,
    focalLength35mmMm: analysis.input.exif?.focalLength35mmMm,
  });
  let result;
  try {
    result = calibrateFromPeaks(analysis.peaks, calibrationLines(lamp), {
      linesAtResolution: (resolutionNm) => calibrationLines(lamp, resolutionNm),
      match: { zeroOrder: options.zeroOrder === false ? null : zeroOrderSighting(band.zeroOrderPx) },
      fit: { grating: { order: 1, focalLengthPx: priors.focalLengthPx, axisPositionPx: priors.axisPositionPx } },
    });
  } catch (e) {
    if (e instanceof InputError) return { kind: 'declined', message: e.message };
    throw e;
  }
  // The truth in the found band's frame: where each first-order line crosses the band's centre line.
  const truth = photo.truth.lines
    .filter((l) => l.order === 1 && l.inFrame)
    .map((l) => ({ wavelengthNm: l.wavelengthNm, positionPx: imageToBandPx(band, l.imagePx).positionPx }));
  const disp = inst.dispersionNmPerPx;
  // Every line the fit used must sit on a true line of that wavelength (a blend partner within 2.5 px is fine) …
  const used = result.fit.lines.filter((l) => l.used);
  const wrongLines = used.filter(
    (l) => !truth.some((t) => Math.abs(t.positionPx - l.positionPx) <= 2.5 && Math.abs(t.wavelengthNm - l.wavelengthNm) <= 2.5 * disp),
  );
  // … and the scale must put the true lines inside its range where they are (1.5 px, at least 0.5 nm).
  const [lo, hi] = result.fit.rangePx;
  const inside = truth.filter((t) => t.positionPx >= lo && t.positionPx <= hi);
  const off = inside.filter((t) => Math.abs(wavelengthAtNm(result.fit.model, t.positionPx) - t.wavelengthNm) > Math.max(0.5, 1.5 * disp));
  const right = lamp === inst.lamp && used.length >= 3 && wrongLines.length === 0 && off.length <= 0.1 * inside.length;
  const zeroOrderCounted = result.match?.score?.zeroOrder !== undefined;
  return {
    kind: 'calibrated',
    right,
    zeroOrderCounted,
    detail:
      `${used.length} lines used (${wrongLines.length} wrong), ${off.length} of ${inside.length} true lines off the scale, ` +
      `rms ${result.fit.rmsNm.toFixed(3)} nm${zeroOrderCounted ? ', zero order counted' : ''}`,
  };
}

function describeCase(k: number, c: RenderedCase, o: Outcome, lamp = c.inst.lamp): string {
  return (
    `#${k} ${c.inst.lamp}${lamp !== c.inst.lamp ? ` as ${lamp}` : ''} ${c.inst.render.widthPx}×${c.inst.render.heightPx} ` +
    `${c.inst.linesPerMm.toFixed(0)} l/mm ${c.inst.dispersionNmPerPx.toFixed(2)} nm/px${c.inst.reversed ? ' reversed' : ''}: ` +
    (o.kind === 'declined' ? `declined (${o.message})` : `${o.right ? 'right' : 'WRONG'}, ${o.detail}`)
  );
}

/** SWEEP_REPORT=1 prints every photo's outcome (the figures in the comments below). */
const show = (report: string): void => void (process.env.SWEEP_REPORT && console.log(report));

const right = (outcomes: Outcome[]) => outcomes.filter((o) => o.kind === 'calibrated' && o.right).length;

describe('calibrateFromPeaks on rendered photos (render → JPEG → decode → band → peaks → calibrate)', () => {
  const PHOTOS = 16;
  const firstSweep: RenderedCase[] = [];
  const calibrationSweep: RenderedCase[] = [];

  // Measured on the 16 photos before the zero order counted: 5 calibrated right (Ne at 1.0, 0.24 nm/px; Ar at 0.65,
  // 0.46 nm/px; Ne+Hg at 0.62 nm/px: 8–20 lines, RMS 0.01–0.45 nm), none wrong, 11 declined with the matcher's
  // reason. Far below the issue's 95 %: the band the peak finder takes often holds the second order (in 6 of the
  // photos it gives 13–22 of the peaks, up to half of them), and at 0.4–1.8 nm/px many tube peaks are blends. The
  // second order's lines, matched as the first order, made a consistent but wrong scale in two of these photos until
  // the invisible-peak veto (invisiblePeaksVeto) ruled such scales out; with order-2 images modelled the same 5 were
  // right. Of the 11 declined, two Ne photos (#5 at 0.86, #10 at 0.93 nm/px) reached the right solution, bounded at
  // 10^-2.21 and 10^-2.18 against the 10^-2.3 asked; in the other nine the band holds 6–22 second-order peaks or
  // the first order's peaks are multi-line blends the peak finder does not flag (#3, #5), and given two true pairs
  // the matcher finds the right scale in 11 of 16, mostly short of the bound.
  // The zero order, which the band search finds in 12 of these photos, is the 0 nm point of a first-order scale;
  // counted as evidence when the solution's grating model puts it there (zeroOrderAgreement in matchLines.ts): 7 right
  // (#5 and #10 added, each with the zero order within its window), none wrong. A declined search tried again from
  // the zero order's seeds (zeroOrderSeeds.ts) adds #7 (Xe, 0.38 nm/px, 10 lines) and #13 (Ne+Hg, 1.40 nm/px, 5 lines):
  // 9 right, none wrong. With Hg I 567.581, 580.378 and 671.634 nm in the list, #3 (Ne+Hg, 1.02 nm/px, 17 lines) is
  // added: 10 right, none wrong. With nine more Kr I lines in the list (428–442 and 565–642 nm, the yellow-green lines
  // beside 557 and 587 nm), #9 (Kr, 0.36 nm/px, 9 lines) is added: 11 right, none wrong; the two other Kr photos
  // still decline (6 of 7 and 6 of 13 peaks matched at 0.87–0.90 nm/px, where chance gives 2.6–2.8). With the zero
  // order taken at a gap of 0.3 (was 0.35) of the other members' span (findZeroOrder), #11 (Ar, 1.23 nm/px, its zero
  // order 0.33 of the span from the lines) is added: 12 right, none wrong. With the order-2 images of the photo's own
  // matched peaks counted whatever rank the list gives their lines (ownImageSources in scoreSolution.ts), the same 12;
  // without the zero order 8 (was 6: #5 Ne at 0.86 and #11 Ar at 1.23 nm/px added).
  // The four still declined, measured peak by peak against the renderer's truth: #2 and #12 (Xe, 1.77–1.84 nm/px)
  // show 9–11 first-order peaks, most of them Xe I lines the project's list lacks (539.3, 556.7, 569.6, 587.5, 589.5,
  // 650.4, 666.9, 672.8 nm), and 14–16 order-2 images; the truth's own assignment matches 7–9 lines and is no
  // evidence (chance ≥ 10^-2.8 against 10^5.5 trials). #14 (Kr, 0.87 nm/px): 13 of its 30 peaks are order-2 images,
  // several first-order lines are missing from the list (481.3, 549.1/550.1, 669.9, 681.3, 690.5 nm); the truth's
  // assignment reaches 10^2.8 before the zero order. #4 (Kr, 0.90 nm/px) is a right decline: its best scale reads
  // 11 of the 31 true lines more than 1.5 px off (widening the order-2 windows by the model's uncertainty let it
  // through, so that was not kept). The floors are the counts measured.
  it(`calibrates ≥ 12 of ${PHOTOS} seeded photos of the issue's instruments automatically and none wrongly`, async () => {
    for (let k = 0; k < PHOTOS; k++) firstSweep.push(await renderedCase(k, TUBES, 'sweep'));
    const outcomes = firstSweep.map((c) => calibrateCase(c));
    const report = outcomes.map((o, k) => describeCase(k, firstSweep[k], o)).join('\n');
    show(report);
    expect(outcomes.flatMap((o, k) => (o.kind === 'calibrated' && !o.right ? [describeCase(k, firstSweep[k], o)] : []))).toEqual([]);
    expect(right(outcomes), report).toBeGreaterThanOrEqual(12);
    // Without the zero order the same photos give fewer (5 before the Kr I lines were added, 6 before the photo's own
    // order-2 images counted): it adds at least three.
    const without = firstSweep.map((c) => calibrateCase(c, { zeroOrder: false }));
    const withoutReport = without.map((o, k) => describeCase(k, firstSweep[k], o)).join('\n');
    expect(without.flatMap((o, k) => (o.kind === 'calibrated' && !o.right ? [describeCase(k, firstSweep[k], o)] : []))).toEqual([]);
    expect(right(without), withoutReport).toBeGreaterThanOrEqual(8);
    expect(right(outcomes) - right(without), report).toBeGreaterThanOrEqual(3);
  }, 600_000);

  // The lamps the issue names for calibrating (Hg, Ne, He, Ar and a neon–mercury tube), 20 instruments drawn as
  // above. Measured: 7 right without the zero order, 10 with its agreement counted (He at 1.14 and 1.77 nm/px, Ar at
  // 1.40 nm/px added), 11 with the second search from its seeds (Ne+Hg at 0.87 nm/px), none wrong. The mercury tubes
  // declined in all four photos: the outside reference's Hg I spectrum holds lines the project's 16-line mercury list
  // lacked (567.6, 671.6 nm …) at 2–5 % of 546 nm, so 4–7 of 13–21 peaks matched. With Hg I 567.581, 580.378 and
  // 671.634 nm entered, three of them calibrate (and Ne+Hg at 0.90 nm/px): 14; with the order-2 images of 435.8 and
  // 546.1 nm counted where they read beyond the list's 709 nm (scoreSolution), the fourth (0.86 nm/px): 15 of 20, none
  // wrong. With the zero order also seen a little off the members' summed colour (findZeroOrder), He at 1.84 nm/px
  // (#2): 16 of 20. With the zero order seen beside every peak, only scales growing away from it are tried (half the
  // trials: every bound here 10^0.3 stronger), and a declined search rescoring six of its solutions with the physical
  // model instead of three (matchLines.ts): Ar at 1.02 nm/px (#3, 9 lines, bound 3.8e-3, its right solution ranked
  // fourth) added, 17 of 20, none wrong; the first sweep stays at 10. With an order-2 image counted when its line's
  // order-1 light lies in an unresolved blend matched to no line (scoreSolution's firstOrderStrength), He at 1.77 nm/px
  // (#12: 501.6 nm blended with 492.2 nm; 10^-1.9 before) added: 18 of 20, none wrong, the first sweep unchanged, and
  // all 346 searches of both sweeps' photos against every other lamp, with and without the zero order, declined.
  // Still declined: Ne at 1.13–1.23 nm/px: multi-line blends and the order-2 images of blue lines the list ranks
  // weak; with the truth's assignment forced, they score only 10^-4.6 and 10^-3.4 against 10^5.9 trials. Tried and not kept (no photo
  // gained without one lost, or a synthetic case lost or accepted wrong): judging each solution's blends at its own
  // resolution (FWHM × dispersion: at 4.6 nm every red Ne line is a blend, so every peak's chance grows as much as the
  // matches), order-2 hypotheses for lines the photo's three to six strongest peaks match (with their windows bounded
  // in every peak's chance), and each peak's chance as the union of the admitted lines' own windows.
  // The two Ne photos (#11 at 1.23, #16 at 1.13 nm/px), measured peak by peak: at a 4.4–4.6 nm line width the red
  // Ne I lines (some forty in 575–720 nm) blend into one another, so a random red peak lands on one of them with
  // chance 0.2–0.3: the truth's own assignment, refitted with the grating model (9 of 22 and 17 of 25 peaks), was
  // bounded at 10^-0.1 and 10^-0.1 with the trials counted, before the zero order's agreement (10^-1.6). Their 5–6
  // order-2 images are of the blue lines 470.4–483 nm, which the tubes (outside reference) draw about as bright as the
  // red ones while the project's list ranks them 100 times fainter; counted from the photo's own matched peaks
  // (ownImageSources), the truth of #16 reaches 10^-2.4 before the zero order, but the search's best scale there
  // keeps 13 of its 17 lines (three red blends fall outside its 0.36 px tolerance) and is bounded at 10^-1.9 with
  // the zero order: still declined.
  // The floor is the count measured.
  it('calibrates ≥ 18 of 20 seeded photos of mercury, neon, helium and argon tubes and none wrongly', async () => {
    for (let k = 0; k < 20; k++) calibrationSweep.push(await renderedCase(k, CALIBRATION_TUBES, 'lamps'));
    const outcomes = calibrationSweep.map((c) => calibrateCase(c));
    const report = outcomes.map((o, k) => describeCase(k, calibrationSweep[k], o)).join('\n');
    show(report);
    expect(outcomes.flatMap((o, k) => (o.kind === 'calibrated' && !o.right ? [describeCase(k, calibrationSweep[k], o)] : []))).toEqual([]);
    expect(right(outcomes), report).toBeGreaterThanOrEqual(18);
  }, 600_000);

  // The band search's zero order on both sweeps' photos: where the renderer put it, when it is in the frame, and never
  // when it is not. Measured: seen in 26 of the 29 photos with it in the frame before findZeroOrder (coarse.ts) took a
  // zero order a little off the members' summed colour or a little fainter than the median member; 28 after, all
  // within 1.4 px, none seen when out of the frame. The one still missed (Ar at 1.23 nm/px, 32 px inside the band from
  // its start: the search kept it as the band's first member) stood at a gap of 0.33 of the other members' span, short
  // of the 0.35 then asked; at 0.3 all 29 are seen, none misplaced.
  it('finds the zero order where the renderer put it in all 29 photos with it in the frame, and none elsewhere', () => {
    let inFrame = 0;
    let seen = 0;
    const misplaced: string[] = [];
    for (const [sweep, cases] of [['first', firstSweep], ['calibration', calibrationSweep]] as const) {
      expect(cases.length, `the ${sweep} sweep's photos (rendered by the tests above)`).toBeGreaterThan(0);
      cases.forEach((c, k) => {
        const truth = c.photo.truth.zeroOrder;
        const found = c.analysis.band?.zeroOrderPx;
        if (!truth?.inFrame) {
          if (found !== undefined) misplaced.push(`${sweep} #${k}: seen at ${found.toFixed(1)} px, out of the frame`);
          return;
        }
        inFrame++;
        if (found === undefined) return void (process.env.SWEEP_REPORT && console.log(`zero order missed: ${sweep} #${k} at ${imageToBandPx(c.analysis.band!, truth.imagePx).positionPx.toFixed(1)} px of a ${c.analysis.band!.lengthPx.toFixed(0)}-px band`));
        const offPx = Math.abs(found - imageToBandPx(c.analysis.band!, truth.imagePx).positionPx);
        if (offPx <= 2) seen++;
        else misplaced.push(`${sweep} #${k}: ${offPx.toFixed(1)} px off`);
      });
    }
    expect(misplaced).toEqual([]);
    expect(inFrame).toBe(29);
    expect(seen).toBe(29);
  });

  // A wrong lamp must never give a scale, the zero order's agreement counted or not: every photo of both sweeps
  // against two lamps of other elements (Ne, Ar, Xe, Kr, He, Hg in turn). Measured: all 72 declined (and all 173
  // against every other lamp, with the zero order's side and the wider rescoring of a declined search; all 346, with
  // and without the zero order, once order-2 images counted beside unresolved blends).
  it('never calibrates those photos against a wrong lamp, the zero order counted', () => {
    const LAMPS = ['Ne', 'Ar', 'Xe', 'Kr', 'He', 'Hg'];
    const accepted: string[] = [];
    let searched = 0;
    for (const [sweep, cases] of [['first', firstSweep], ['calibration', calibrationSweep]] as const) {
      expect(cases.length, `the ${sweep} sweep's photos (rendered by the tests above)`).toBeGreaterThan(0);
      cases.forEach((c, k) => {
        const own = c.inst.lamp.split('+');
        const others = LAMPS.filter((l) => !own.includes(l));
        for (const lamp of [others[k % others.length], others[(k + 2) % others.length]]) {
          searched++;
          const o = calibrateCase(c, { lamp });
          if (o.kind === 'calibrated') accepted.push(describeCase(k, c, o, lamp));
        }
      });
    }
    expect(searched).toBe(72);
    expect(accepted).toEqual([]);
  }, 600_000);
});
