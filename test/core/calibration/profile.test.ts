import { promises as fs } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { afterAll, describe, expect, it } from 'vitest';
import { fitDispersion, type CalibrationPoint } from '../../../src/core/calibration/fitDispersion.js';
import type { GratingModel } from '../../../src/core/calibration/gratingModel.js';
import { positionAtPx } from '../../../src/core/calibration/model.js';
import {
  applyProfileToPeaks,
  buildProfile,
  compareGeometry,
  type InstrumentProfile,
  positionsInProfileFrame,
  profileFromJson,
  profileToJson,
} from '../../../src/core/calibration/profile.js';
import { InputError } from '../../../src/core/errors.js';
import { createRandom } from '../../../src/core/random.js';
import { bandPointPx } from '../../../src/core/spectrum/band/frame.js';
import type { BandGeometry, Peak } from '../../../src/core/types.js';
import { instrumentProfileSchema, parseProfileText, readProfile, writeProfile } from '../../../src/io/profileFile.js';

const TRUTH: GratingModel = {
  kind: 'grating',
  order: 1,
  incidenceAngleDeg: 0,
  direction: 1,
  grooveSpacingNm: 1000,
  cameraAngleDeg: 33.5,
  axisPositionPx: 231.6,
  focalLengthPx: 1323.78,
  covariance: [],
  free: [true, true, true, true],
};
const BAND: BandGeometry = { angleDeg: 1.8, slantDeg: 0.7, center: { x: 972.3, y: 514.9 }, lengthPx: 487, heightPx: 210 };
const HG_EU = [404.656, 435.833, 546.074, 576.96, 579.066, 587.6, 593.3, 611.6];

function points(seed = 1): CalibrationPoint[] {
  const rng = createRandom(seed);
  return HG_EU.map((l) => ({
    positionPx: positionAtPx(TRUTH, l, -2000, 3000)! + 0.05 * rng.normal(),
    positionUncertaintyPx: 0.05,
    wavelengthNm: l,
    source: 'matched' as const,
    label: `line ${l}`,
  }));
}

function makeProfile(model: 'polynomial' | 'grating' = 'polynomial'): InstrumentProfile {
  const fit = fitDispersion(points(), {
    model,
    grating: { focalLengthPx: { value: 1323.78, sigma: 26 }, axisPositionPx: { value: 231.6, sigma: 33 } },
  });
  return buildProfile(fit, {
    lamp: 'fluorescent',
    sourceFile: 'cfl.jpg',
    image: { widthPx: 1920, heightPx: 1080 },
    camera: { cameraMake: 'test', focalLength35mmMm: 26 },
    band: BAND,
    focalLengthSource: 'exif',
    createdAt: '2031-03-12T14:02:10.000Z',
    software: { name: 'glowprint', version: 'test' },
  });
}

function peak(positionPx: number, sigma = 0.05): Peak {
  return { positionPx, positionUncertaintyPx: sigma, fwhmPx: 3, height: 1, area: 3, prominence: 1, snr: 100, saturated: false, blended: false };
}

const tmp = await fs.mkdtemp(path.join(os.tmpdir(), 'glowprint-profile-'));
afterAll(() => fs.rm(tmp, { recursive: true, force: true }));

describe('instrument profile JSON (format glowprint-instrument-profile, version 1)', () => {
  for (const kind of ['polynomial', 'grating'] as const) {
    it(`round-trips a ${kind} profile through its snake_case JSON and the schema`, () => {
      const p = makeProfile(kind);
      const text = JSON.stringify(profileToJson(p));
      expect(text).toMatch(/"coefficients_nm"|"groove_spacing_nm"/);
      expect(text).toMatch(/"range_nm":\[/);
      const back = parseProfileText(text, 'p.json');
      expect(back).toEqual(p);
    });
  }

  it('names the field of a hand-edited NaN, null or string number', () => {
    const json = profileToJson(makeProfile('polynomial')) as Record<string, Record<string, unknown>>;
    const text = JSON.stringify(json, null, 2);
    const nan = text.replace(/"rms_nm": [0-9.e-]+/, '"rms_nm": NaN');
    expect(() => parseProfileText(nan, 'edited.json')).toThrow(/edited\.json: not a valid JSON file at line \d+, column \d+ \(NaN and Infinity are not JSON numbers/);
    const nulled = structuredClone(json);
    (nulled.model.coefficients_nm as unknown[])[1] = null;
    expect(() => parseProfileText(JSON.stringify(nulled), 'edited.json')).toThrow(/edited\.json: .*model.*coefficients_nm/);
    const str = structuredClone(json);
    str.model.center_px = 'NaN';
    expect(() => parseProfileText(JSON.stringify(str), 'edited.json')).toThrow(/edited\.json: .*center_px/);
  });

  it('says what is wrong with a missing field, a wrong version, another file format, a broken covariance', () => {
    const json = profileToJson(makeProfile('grating')) as Record<string, unknown>;
    const missing = structuredClone(json);
    delete missing.range_px;
    expect(() => parseProfileText(JSON.stringify(missing), 'p.json')).toThrow(/p\.json: .*missing field "range_px"/);
    expect(() => parseProfileText(JSON.stringify({ ...json, version: 2 }), 'p.json')).toThrow(/version 2 is newer than this glowprint reads.*update glowprint/);
    expect(() => parseProfileText(JSON.stringify({ format: 'glowprint-analyser-profile', version: 1 }), 'p.json')).toThrow(
      /not a glowprint instrument profile \(format is "glowprint-analyser-profile"/,
    );
    const asym = structuredClone(json) as { model: { covariance: number[][] } };
    asym.model.covariance[0][1] = asym.model.covariance[1][0] + 1;
    expect(() => parseProfileText(JSON.stringify(asym), 'p.json')).toThrow(/model\.covariance\[[01]\]\[[01]\]: expected the symmetric element/);
    expect(() => parseProfileText('[1, 2', 'p.json')).toThrow(/p\.json: not a valid JSON file/);
  });

  it('judges a hand-edited model by the kind it declares, naming the field and what it holds', () => {
    const grating = profileToJson(makeProfile('grating')) as { model: Record<string, unknown> };
    const message = (edit: (json: Record<string, Record<string, unknown>>) => void, base: object = grating): string => {
      const json = structuredClone(base) as Record<string, Record<string, unknown>>;
      edit(json);
      try {
        parseProfileText(JSON.stringify(json), 'p.json');
      } catch (err) {
        expect(err).toBeInstanceOf(InputError);
        return (err as Error).message;
      }
      throw new Error('the edited profile was accepted');
    };
    // Not the polynomial's fields ('missing field "degree"; … (and 11 more)'): the grating's own field, and its value.
    expect(message((j) => (j.model.groove_spacing_nm = 'abc'))).toBe('p.json: not a usable instrument profile: model.groove_spacing_nm: expected a number, got "abc"');
    expect(message((j) => delete j.model.focal_length_px)).toBe('p.json: not a usable instrument profile: model: missing field "focal_length_px" (a "grating" model needs it)');
    expect(message((j) => (j.model.order = 0))).toBe('p.json: not a usable instrument profile: model.order: expected a number ≥ 1, got 0');
    expect(message((j) => ((j.model.covariance as unknown[][])[1][2] = 'x'))).toBe('p.json: not a usable instrument profile: model.covariance[1][2]: expected a number, got "x"');
    // An unknown kind says which kinds there are; a missing one says it is missing.
    expect(message((j) => (j.model.kind = 'prism'))).toBe('p.json: not a usable instrument profile: model.kind: expected one of "polynomial", "grating", got "prism"');
    expect(message((j) => delete j.model.kind)).toBe('p.json: not a usable instrument profile: model: missing field "kind"');
    // A grating model relabelled as a polynomial is judged as a polynomial, and says so.
    expect(message((j) => (j.model.kind = 'polynomial'))).toMatch(
      /^p\.json: not a usable instrument profile: model: missing fields "degree", "center_px", "scale_px", "coefficients_nm" \(a "polynomial" model needs them\); model: unknown fields "order", .*"free" \(not part of a "polynomial" model\)$/,
    );
    const polynomial = profileToJson(makeProfile('polynomial')) as { model: Record<string, unknown>; check_model: Record<string, unknown> };
    expect(polynomial.check_model).not.toBeNull();
    expect(message((j) => (j.model.degree = 'two'), polynomial)).toBe('p.json: not a usable instrument profile: model.degree: expected an integer, got "two"');
    // check_model likewise: a polynomial or null.
    expect(message((j) => (j.check_model.scale_px = 'abc'), polynomial)).toBe('p.json: not a usable instrument profile: check_model.scale_px: expected a number, got "abc"');
    expect(message((j) => delete j.check_model.coefficients_nm, polynomial)).toBe(
      'p.json: not a usable instrument profile: check_model: missing field "coefficients_nm" (a "polynomial" model needs it)',
    );
    expect(message((j) => ((j as Record<string, unknown>).check_model = 'none'), polynomial)).toBe('p.json: not a usable instrument profile: check_model: expected an object or null, got "none"');
    expect(message((j) => (j.check_model.kind = 'grating'), polynomial)).toBe('p.json: not a usable instrument profile: check_model.kind: expected "polynomial", got "grating"');
    // The other nullable objects name their field, not "must be null".
    expect(message((j) => ((j.band.center as Record<string, unknown>).x = 'left'))).toBe('p.json: not a usable instrument profile: band.center.x: expected a number, got "left"');
  });

  it('ships its schema as valid JSON Schema draft 2020-12 (ajv strict mode), which accepts both kinds of profile and rejects an unknown kind', () => {
    const schema = instrumentProfileSchema() as { $schema: string };
    expect(schema.$schema).toBe('https://json-schema.org/draft/2020-12/schema');
    const validate = new Ajv2020({ allErrors: true, strict: true }).compile(schema);
    for (const kind of ['polynomial', 'grating'] as const) {
      const json = profileToJson(makeProfile(kind));
      expect(validate(json), JSON.stringify(validate.errors)).toBe(true);
      expect(validate({ ...json, model: { ...(json.model as object), kind: 'prism' } })).toBe(false);
    }
  });

  it('is written atomically, never over an input, and refuses to save an unusable calibration', async () => {
    const file = path.join(tmp, 'rig.json');
    const p = makeProfile('grating');
    await writeProfile(file, p);
    expect(await readProfile(file)).toEqual(p);
    const before = await fs.readFile(file, 'utf8');
    await expect(writeProfile(file, p, { inputs: [file] })).rejects.toThrow(/refusing to write over an input file/);
    const broken = { ...p, rmsNm: NaN };
    await expect(writeProfile(file, broken)).rejects.toThrow(InputError);
    expect(await fs.readFile(file, 'utf8')).toBe(before);
    expect((await fs.readdir(tmp)).filter((f) => f.startsWith('.glowprint-tmp'))).toEqual([]);
    await expect(readProfile(path.join(tmp, 'none.json'))).rejects.toThrow(/none\.json: cannot read the profile \(no such file\)/);
  });
});

describe('compareGeometry(profile, photo)', () => {
  const p = makeProfile();
  it('is an error for another image size or a photo turned by 90°, a warning for a small size difference', () => {
    expect(() => compareGeometry(p, { image: { widthPx: 4032, heightPx: 3024 }, band: BAND }, 'big.jpg')).toThrow(
      /1920×1080 px images, big\.jpg is 4032×3024 px: another camera mode or zoom/,
    );
    expect(() => compareGeometry(p, { image: { widthPx: 1080, heightPx: 1920 }, band: BAND }, 'turned.jpg')).toThrow(/turned by 90°/);
    const small = compareGeometry(p, { image: { widthPx: 1920, heightPx: 1088 }, band: BAND }, 'crop.jpg');
    expect(small.warnings.join(' ')).toMatch(/1920×1088/);
    expect(compareGeometry(p, { image: { widthPx: 1920, heightPx: 1080 }, band: BAND }, 'same.jpg').warnings).toEqual([]);
  });
  it('warns when the band turned, slants differently or moved sideways', () => {
    const turned = compareGeometry(p, { image: { widthPx: 1920, heightPx: 1080 }, band: { ...BAND, angleDeg: 3 } }, 'x.jpg');
    expect(turned.warnings.join(' ')).toMatch(/turned by 1\.20°/);
    const moved = compareGeometry(p, { image: { widthPx: 1920, heightPx: 1080 }, band: { ...BAND, center: { x: 970, y: 700 } } }, 'x.jpg');
    expect(moved.warnings.join(' ')).toMatch(/to the side of the profile's/);
    const reversed = compareGeometry(p, { image: { widthPx: 1920, heightPx: 1080 }, band: { ...BAND, angleDeg: -178.2 } }, 'x.jpg');
    expect(reversed.warnings.join(' ')).toMatch(/runs the other way/);
  });
});

describe('positionsInProfileFrame(positions, from, to)', () => {
  it('carries positions of a band found longer or shorter (another lamp lights another stretch) to the same image points', () => {
    // The same axis, the band found with its start 120 px further on: position p there is p + 120 in the profile.
    const from: BandGeometry = { ...BAND, center: bandPointPx(BAND, BAND.lengthPx / 2 + 200), lengthPx: BAND.lengthPx - 160 };
    const t = positionsInProfileFrame([0, 50, 300], from, BAND);
    t.positionsPx.forEach((v, i) => expect(Math.abs(v - ([0, 50, 300][i] + 280)) ).toBeLessThanOrEqual(1e-9));
    expect(t.uncertaintyPx).toBeLessThanOrEqual(1e-9);
  });
  it('projects a band moved sideways straight across, counting the slant ambiguity as uncertainty', () => {
    const n = { x: -Math.sin(1.8 * (Math.PI / 180)), y: Math.cos(1.8 * (Math.PI / 180)) };
    const from: BandGeometry = { ...BAND, center: { x: BAND.center.x + 37 * n.x, y: BAND.center.y + 37 * n.y } };
    const t = positionsInProfileFrame([100, 200], from, BAND);
    expect(Math.abs(t.positionsPx[0] - 100)).toBeLessThanOrEqual(1e-9);
    // half of 37·tan(0.7°)
    expect(Math.abs(t.uncertaintyPx - (37 * Math.tan(0.7 * (Math.PI / 180))) / 2)).toBeLessThanOrEqual(1e-9);
  });
});

describe('applyProfileToPeaks(peaks, profile, options)', () => {
  it('gives each peak its wavelength and uncertainty, flags and warns beyond the range', () => {
    const p = makeProfile('grating');
    const xs = [435.833, 546.074, 700].map((l) => positionAtPx(TRUTH, l, -2000, 3000)!);
    const r = applyProfileToPeaks(xs.map((x) => peak(x)), p, { image: { widthPx: 1920, heightPx: 1080 }, band: BAND });
    expect(r.medium).toBe('air');
    [435.833, 546.074, 700].forEach((l, i) => expect(Math.abs(r.peaks[i].wavelengthNm - l)).toBeLessThanOrEqual(4 * r.peaks[i].wavelengthUncertaintyNm));
    expect(r.peaks[1].wavelengthUncertaintyNm).toBeLessThan(0.1);
    expect(r.peaks[2].extrapolated).toBe(true);
    expect(r.peaks[2].wavelengthUncertaintyNm).toBeGreaterThan(r.peaks[1].wavelengthUncertaintyNm);
    expect(r.warnings.join(' ')).toMatch(/1 peak\(s\) lie beyond the calibrated range 404\.7–611\.6 nm/);
    expect(r.peaks[0].fwhmNm).toBeGreaterThan(1);
  });

  it('reports vacuum wavelengths on request: HeNe 632.816 nm (standard air) ↔ 632.9908 nm (vacuum)', () => {
    // CIPM 2007 (R): unstabilised HeNe 632.9908 nm in vacuum; ≈ 632.816 nm in standard air (C, CHECK_VALUES).
    const p = makeProfile('grating');
    const x = positionAtPx(p.model, 632.816, -2000, 3000)!;
    const air = applyProfileToPeaks([peak(x)], p);
    const vac = applyProfileToPeaks([peak(x)], p, { vacuum: true });
    expect(Math.abs(air.peaks[0].wavelengthNm - 632.816)).toBeLessThanOrEqual(1e-6);
    expect(vac.medium).toBe('vacuum');
    expect(Math.abs(vac.peaks[0].wavelengthNm - 632.9908)).toBeLessThanOrEqual(0.0015);
  });

  it('refuses a photo of another size (nothing computed)', () => {
    expect(() => applyProfileToPeaks([peak(100)], makeProfile(), { image: { widthPx: 1280, heightPx: 720 }, band: BAND, source: 'small.jpg' })).toThrow(
      /small\.jpg is 1280×720 px/,
    );
  });
});
