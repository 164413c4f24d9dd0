import { afterAll, describe, expect, it } from 'vitest';
import { CALIBRATE_MATCH_DEFAULTS } from '../../../src/core/calibration/calibrate.js';
import { calibrationLampLines } from '../../../src/core/calibration/calibrationLines.js';
import { isBroadFeature } from '../../../src/core/calibration/lineReference.js';
import { matchLines, type MatchLinesOptions } from '../../../src/core/calibration/matchLines.js';
import { lampLines } from '../../../src/core/lines/index.js';
import { createRandom } from '../../../src/core/random.js';
import type { Peak, SpectralLine } from '../../../src/core/types.js';
import { loadLampCatalog } from '../../../src/io/lineList.js';
import { syntheticCase, type SyntheticCase, type SyntheticOptions } from './syntheticPeaks.js';

const catalog = loadLampCatalog();
/** Every listed line of the lamps' spectra, as `glowprint calibrate` matches with (broad bands never calibrate). */
const lamp = (spec: string): SpectralLine[] => calibrationLampLines(spec, catalog).lines.filter((l) => !isBroadFeature(l));

/**
 * What a photo gives the matcher: the focal length from EXIF (±2 %) and the principal point (±1.5 % of the image
 * diagonal, drawn at 1 %), as gratingPriors derives them (EXIF_FOCAL_LENGTH_RELATIVE_SIGMA,
 * PRINCIPAL_POINT_RELATIVE_SIGMA).
 */
function photoPriors(c: SyntheticCase, seed: number): Partial<MatchLinesOptions> {
  const rng = createRandom(seed);
  const diag = Math.hypot(c.sensor.widthPx, c.sensor.heightPx);
  return {
    grating: {
      focalLengthPx: { value: c.truth.focalLengthPx * (1 + 0.02 * rng.normal()), sigma: 0.02 * c.truth.focalLengthPx },
      axisPositionPx: { value: c.truth.axisPositionPx + 0.01 * diag * rng.normal(), sigma: 0.015 * diag },
    },
  };
}

/**
 * The zero order as the band search would see it: where the truth's first-order scale reads 0 nm (x0 − s f tan θc,
 * θi = 0), off by 1 px (σ, seeded), when it lies in the frame (within the sensor's width along the band); else null.
 */
function zeroOrderSeen(c: SyntheticCase, seed: number): MatchLinesOptions['zeroOrder'] {
  const t = c.truth;
  const x = t.axisPositionPx - t.direction * t.focalLengthPx * Math.tan((t.cameraAngleDeg * Math.PI) / 180);
  if (!(x >= 0 && x < c.sensor.widthPx)) return null;
  return { positionPx: x + createRandom(seed + 17).normal(), uncertaintyPx: 2 };
}

/** Peaks that are true, unblended lines. */
const cleanLines = (c: SyntheticCase) => c.peaks.filter((p, i) => c.truthNm[i] !== null && !p.blended).length;

/**
 * A match is wrong when its peak is a true line of another wavelength (more than 2.5 px of dispersion away: a blend
 * partner is fine) or an extra peak that is not even blended. A case is identified correctly when at least 80 % of
 * the matches are right and they take in at least 60 % of the clean true lines.
 */
function judge(c: SyntheticCase, result: ReturnType<typeof matchLines>, dispersion: number) {
  let good = 0;
  for (const m of result.matches) {
    if (m.peakIndex < 0) continue;
    const t = c.truthNm[m.peakIndex];
    const bad = t === null ? !c.peaks[m.peakIndex].blended : Math.abs(t - m.wavelengthNm) > 2.5 * dispersion;
    if (!bad) good++;
  }
  return { good, correct: good >= 0.8 * result.matches.length && good >= 0.6 * cleanLines(c) };
}

/**
 * The instruments of the sweep: 300–1200 lines/mm (the generator's default) in front of a 720p or 1080p
 * webcam, or an 8- or 12-MP phone camera, focal lengths 22–40 mm (35-mm equivalent: phone main cameras 23–28 mm,
 * webcams 60–80° diagonal field of view ≈ 26–38 mm; common practice, no source). Dispersion d·cos β / f then runs
 * from 0.1 nm/px (1200 l/mm, 12 MP, 40 mm: f = 4620 px, cos β ≈ 0.6) to 4.4 nm/px (300 l/mm, 720p, 22 mm:
 * f = 750 px); above 2 nm/px, the largest the issue asks of automatic matching (and the matcher's default prior),
 * the visible spectrum spans < 150 px, and such cases do not count.
 */
const INSTRUMENTS: SyntheticOptions['camera'] = {
  sensors: [
    { widthPx: 1280, heightPx: 720 },
    { widthPx: 1920, heightPx: 1080 },
    { widthPx: 3264, heightPx: 2448 },
    { widthPx: 4000, heightPx: 3000 },
  ],
  focal35mmMm: [22, 40],
};
const MAX_SWEEP_DISPERSION_NM_PER_PX = 2;

interface SweepResult {
  cases: number;
  correct: number;
  wrong: number;
  rejected: number;
  /** Cases whose zero order lies in the frame (and was given, with `withZeroOrder`). */
  zeroOrderInFrame: number;
}

/**
 * Seeded sweep: either the instruments (INSTRUMENTS) or, with `camera: null`, a dispersion drawn from
 * 0.05–2 nm/px at the centre of a 1920-px sensor whatever the grating (focal lengths no phone has, for robustness);
 * either direction, position noise 0.03–0.3 px, 15 % of lines lost at random, a random detection threshold, up to
 * 40 % extra peaks, blends of lines closer than 1.2 FWHM. Only cases with at least `minClean` clean true lines count:
 * fewer is too little for a scale with a check, and the matcher declines them.
 */
function sweep(
  spec: string,
  n: number,
  minClean: number,
  priors: boolean,
  camera: SyntheticOptions['camera'] = INSTRUMENTS,
  secondOrder: SyntheticOptions['secondOrder'] = null,
  withZeroOrder = false,
): SweepResult {
  const lines = lamp(spec);
  const r: SweepResult = { cases: 0, correct: 0, wrong: 0, rejected: 0, zeroOrderInFrame: 0 };
  for (let seed = 1; r.cases < n && seed < 20 * n; seed++) {
    const c = syntheticCase(seed * 7919 + spec.length, lines, { camera, secondOrder });
    if (cleanLines(c) < minClean || c.centreDispersionNmPerPx > MAX_SWEEP_DISPERSION_NM_PER_PX) continue;
    r.cases++;
    const zeroOrder = withZeroOrder ? zeroOrderSeen(c, seed) : null;
    if (zeroOrder) r.zeroOrderInFrame++;
    const result = matchLines(c.peaks, lines, { ...CALIBRATE_MATCH_DEFAULTS, ...(priors ? photoPriors(c, seed) : {}), zeroOrder });
    if (!result.accepted) {
      r.rejected++;
      continue;
    }
    if (judge(c, result, c.centreDispersionNmPerPx).correct) r.correct++;
    else r.wrong++;
  }
  return r;
}

describe('matchLines(peaks, lines) on a seeded sweep of synthetic instruments', () => {
  // Spectra from every listed line of the lamp, matched against the same list (as glowprint calibrate does), with a
  // photo's priors, the first 40 cases of each lamp. Measured on the instruments: Xe 100 %, fluorescent 95 %,
  // Ar 92.5 %, Ne+Hg 85 %, Ne 82.5 %; none accepted wrong (before the count of the hypotheses that reach the same
  // solution, generatingPairsLog10, and the runner-up margin: 100, 87.5, 75, 72.5, 77.5 %). The cases declined are
  // mostly right-but-not-significant: 8–12 clean lines at 0.5–1 nm/px among 75–90 listed lines, where the matcher
  // rightly says it cannot tell; in a few the search does not reach the truth's assignment. The 95 % is met
  // for Xe and fluorescent; see the report of this change. Floors sit a case or two under.
  // The 18 declines, case by case (pooled 182 of 200): 8 find the right solution with the grating model, bounded at
  // 10^-2.0 … 10^-0.8 against the 5·10^-3 (10^-2.3) asked — the trials factor of 10^4.2–10^5.7 scale hypotheses is
  // what they cannot beat with 7–12 matches; 3 find it but score it as a polynomial, whose multiplicity is 1 (bounds
  // 10^0.3–10^2.0; its grating twin reaches 10^-1.0 … 10^-0.6); 5 never grow it (three on 1280-px sensors, all in the
  // dense Ar, Ne and Ne+Hg lists); 1 ranks it under a wrong one (bounds 10^1.0 and 10^1.6); 1 is the ambiguous Ne
  // case below. None of these was resolved without letting a wrong lamp or a wrong scale through: counting only the
  // colour-consistent trials (exact, 0.2–0.7 decades fewer) accepted a wrong fluorescent scale in the wide sweep and
  // brought the null sweep's lowest bound from 10^-1.64 to 10^-2.26; the dispersion prior of a 300–1200 l/mm grating
  // at the EXIF focal length removes 0.05–0.1 decades; ranking by evidence with the multiplicity (and the grating
  // twin taking over on it) moved 3 cases into the first group and cost one Ar case (declined as ambiguous), a
  // wide-sweep Ne+Hg case and a Xe case without priors; counts on the locally brightest lines alone lost 1–3 cases, a
  // rank-aware Fisher combination none, and blend uncertainties at the photo's resolution lost 2 Ne cases (and none
  // gained on the rendered photos).
  // Hg I 567.581, 580.378 and 671.634 nm entered in the list, and order-2 images counted beyond a list's longest line
  // (scoreSolution): Xe 40, fluorescent 38 → 36, Ar 37 → 39, Ne+Hg 34 → 37, Ne 33 of 40 (the mercury cases are drawn
  // anew from the longer list; fluorescent's two new declines are 8–10 clean lines at 0.16–0.26 nm/px, bounded at
  // 10^-2.1 … 10^-1.1 or ambiguous).
  const floors: Array<[string, number]> = [
    ['Xe', 0.95],
    ['fluorescent', 0.875],
    ['Ar', 0.95],
    ['Ne+Hg', 0.9],
    ['Ne', 0.8],
  ];
  for (const [spec, floor] of floors) {
    it(`identifies ${spec} lines in ≥ ${floor * 100} % of the issue's instruments with ≥ 8 clean lines, none wrong`, () => {
      const r = sweep(spec, 40, 8, true);
      expect(r.cases).toBe(40);
      expect(r.wrong).toBe(0);
      expect(r.correct / r.cases).toBeGreaterThanOrEqual(floor);
    });
  }

  // The wide sweep (0.05–2 nm/px on 1920 px, any grating): Xe 100 %, Ne 97.5 %, Ne+Hg 90 %, Ar 85 %, fluorescent
  // 62.5 % (at ≤ 0.15 nm/px its window holds two or three Hg lines and phosphor peaks known to ±0.15–0.3 nm: declined,
  // not guessed). One Ar case takes lines one off at the far end of a long extrapolation (11 of 14 right).
  const wide: Array<[string, number, number]> = [
    ['Ne', 0.925, 0],
    ['Ar', 0.8, 1],
    ['fluorescent', 0.575, 0],
  ];
  for (const [spec, floor, partly] of wide) {
    it(`identifies ${spec} lines in ≥ ${floor * 100} % of a wide 0.05–2 nm/px sweep (≤ ${partly} partly wrong)`, () => {
      const r = sweep(spec, 40, 8, true, null);
      expect(r.cases).toBe(40);
      expect(r.wrong).toBeLessThanOrEqual(partly);
      expect(r.correct / r.cases).toBeGreaterThanOrEqual(floor);
    });
  }

  it('declines, naming the ambiguity, a Ne spectrum that its own lines fit mirrored almost as well as the right way', () => {
    // Seeded case (the instruments' Ne case 31: 19 peaks, 8 clean lines at 0.73 nm/px, most peaks blended): the
    // mirrored assignment onto the dense 580–660 nm lines beats chance as clearly as the right one could.
    const lines = lamp('Ne');
    const c = syntheticCase(31 * 7919 + 'Ne'.length, lines, { camera: INSTRUMENTS });
    const r = matchLines(c.peaks, lines, { ...CALIBRATE_MATCH_DEFAULTS, ...photoPriors(c, 31) });
    expect(r.accepted).toBe(false);
    expect(r.message).toMatch(/almost equally well.*--pairs/);
  });

  it('works without a photo (spectrum CSV: no priors) for a lamp with many lines', () => {
    // Measured: 90 % of the first 30 Xe cases of the instruments (the polynomial spends more parameters than
    // the physics would), none wrong (the case partly wrong before the runner-up margin, 8 of 11 matches right at
    // 0.35 nm/px, is now declined as ambiguous).
    const r = sweep('Xe', 30, 8, false);
    expect(r.wrong).toBeLessThanOrEqual(1);
    expect(r.correct / r.cases).toBeGreaterThanOrEqual(0.8);
  });
});

describe('matchLines with the zero order seen in the photo, on the same seeded sweep', () => {
  // The same 40 cases of each lamp, given the zero order where it lies in the frame (the truth's 0 nm point, 1 px off),
  // as the band search reports it. A solution whose grating model puts it there counts that agreement as evidence
  // (zeroOrderAgreement), and a declined search is tried again from the zero order's own seeds (zeroOrderSeeds.ts).
  // In 16–25 of each lamp's 40 cases it lies in the frame. Measured (right / wrong / declined), without → with:
  // Xe 40/0/0 → 40/0/0, fluorescent 38/0/2 → 38/0/2, Ar 37/0/3 → 39/0/1, Ne+Hg 34/0/6 → 36/0/4, Ne 33/0/7 → 35/0/5:
  // pooled 182 → 188 of 200 (94 %), none wrong; the agreement alone gave 186, and seeding from the zero order in the
  // first search (before the triplets) 184 (it cost Xe and Ar cases their ranking). Of the 12 still declined, 6 show
  // no zero order. With order-2 images added: Xe 39, fluorescent 38, Ar 33 → 38, Ne+Hg 33 → 36, Ne 31 → 34 (its one
  // wrong case, without the zero order too, stays). Then Hg I 567.581, 580.378 and 671.634 nm entered, and order-2
  // images counted beyond a list's longest line: Xe 40, fluorescent 38 → 37, Ar 39, Ne+Hg 36 → 39, Ne 35 → 36, pooled
  // 191 of 200 (95.5 %), none wrong: the 95 %. With only scales growing away from the zero order tried when
  // it lies beside every peak, and a declined search rescoring six solutions with the physical model: Ne 36 → 37,
  // pooled 192 of 200 (96 %), none wrong (the other sweeps of this file unchanged). Measured again after the zero
  // order's gap rule (0.3 of the span) and the order-2 images beside unresolved blends: Xe 40, fluorescent 37, Ar 39,
  // Ne+Hg 39, Ne 38, pooled 193 of 200, none wrong (the blend rule itself changed no case here). Floors: each lamp's
  // earlier measurement, less one case, and the pooled target itself.
  const floors: Array<[string, number]> = [
    ['Xe', 39],
    ['fluorescent', 36],
    ['Ar', 38],
    ['Ne+Hg', 38],
    ['Ne', 36],
  ];
  const pooled = { cases: 0, correct: 0, wrong: 0 };
  for (const [spec, floor] of floors) {
    it(`identifies ${spec} lines in ≥ ${floor} of 40 of the issue's instruments with the zero order where it is seen, none wrong`, () => {
      const r = sweep(spec, 40, 8, true, INSTRUMENTS, null, true);
      pooled.cases += r.cases;
      pooled.correct += r.correct;
      pooled.wrong += r.wrong;
      expect(r.cases).toBe(40);
      expect(r.zeroOrderInFrame).toBeGreaterThanOrEqual(10);
      expect(r.wrong).toBe(0);
      expect(r.correct).toBeGreaterThanOrEqual(floor);
    });
  }
  it("calibrates ≥ 95 % of the pooled 200 instruments automatically (the issue's target), none wrong", () => {
    expect(pooled.cases, 'the per-lamp sweeps above ran').toBe(200);
    expect(pooled.wrong).toBe(0);
    expect(pooled.correct / pooled.cases).toBeGreaterThanOrEqual(0.95);
  });
});

describe('matchLines(peaks with order-2 images, lines) on the same seeded sweep', () => {
  // The same 40 cases of each lamp (same order-1 peaks and extras) with each line's order-2 image added where the
  // scale reads 2λ, at 3–30 % of its order-1 brightness, when above the detection threshold: what photos of a
  // transmission grating show (8 of the 16 rendered photos have 6–22 such peaks). Measured before the order-2 terms
  // of the matcher: 156 of 200 right and 22 WRONG — the second order, a copy of the lamp's pattern at half the
  // dispersion, matched as the first at bounds of 10^-6 to 10^-20, its first order several matched spans away,
  // beyond the old reach of the invisible-peaks veto. With the order-2 images counted and the veto reaching every
  // peak that such a scale reads between 0.3 × its shortest line and the UV (173 right, 5 wrong: Ne's first order
  // reads 293–372 nm under its order-2 scale, mostly above the 320 nm limit), and also the unmatched ones beyond the
  // matched lines reading up to 0.55 × the longest: Xe 39, fluorescent 38, Ar 33, Ne+Hg 33, Ne 31 of 40. One Ne case
  // is still wrong: its order-2 images lie at the sensor's edge (x 109–433 of 1280) with the first order off the
  // frame, where no photo can tell them from a first order. Then Hg I 567.581, 580.378 and 671.634 nm entered, and
  // order-2 images counted beyond a list's longest line: Xe 39, fluorescent 38 → 36, Ar 33 → 36, Ne+Hg 33 → 36,
  // Ne 31 → 30 (the same one wrong). Floors a case under.
  const floors: Array<[string, number, number]> = [
    ['Xe', 0.95, 0],
    ['fluorescent', 0.875, 0],
    ['Ar', 0.875, 0],
    ['Ne+Hg', 0.875, 0],
    ['Ne', 0.725, 1],
  ];
  for (const [spec, floor, wrong] of floors) {
    it(`identifies ${spec} lines in ≥ ${floor * 100} % of the instruments with order-2 images (≤ ${wrong} wrong)`, () => {
      const r = sweep(spec, 40, 8, true, INSTRUMENTS, [0.03, 0.3]);
      expect(r.cases).toBe(40);
      expect(r.wrong).toBeLessThanOrEqual(wrong);
      expect(r.correct / r.cases).toBeGreaterThanOrEqual(floor);
    });
  }
});

describe('matchLines: a wrong lamp or unrelated peaks never give a scale', () => {
  let zeroOrderSearches = 0;
  let lowestWithZeroOrder = 1;
  afterAll(() => {
    if (process.env.SWEEP_REPORT) console.log(`wrong lamp with the zero order: ${zeroOrderSearches} searches, lowest bound ${lowestWithZeroOrder}`);
  });
  const pairs: Array<[string, string]> = [
    ['Ne', 'Hg'],
    ['Hg', 'Ne'],
    ['fluorescent', 'Ne'],
    ['Ne', 'fluorescent'],
    ['Xe', 'Kr'],
    ['He', 'Ne'],
    ['Ne+Hg', 'Xe'],
    ['H', 'He'],
  ];
  for (const [truth, given] of pairs) {
    it(`rejects ${given} for a ${truth} spectrum (seeded, 24 instruments), with the reason`, () => {
      const lines = lamp(given);
      for (let seed = 1; seed <= 24; seed++) {
        // Half the instruments, half the wide sweep; the matcher's defaults (as self-calibrating
        // identification uses it) and glowprint calibrate's, with and without a photo's priors.
        const c = syntheticCase(seed * 104729 + truth.length, lamp(truth), { camera: seed % 4 < 2 ? INSTRUMENTS : null });
        if (c.peaks.length < 3) continue;
        const r = matchLines(c.peaks, lines, { ...(seed % 4 >= 2 ? CALIBRATE_MATCH_DEFAULTS : {}), ...(seed % 2 ? photoPriors(c, seed) : {}) });
        expect(r.accepted).toBe(false);
        // With a photo's priors, also given the photo's own zero order where it is in the frame (59 searches; measured:
        // none accepted, every bound 1).
        const zeroOrder = seed % 2 ? zeroOrderSeen(c, seed) : null;
        if (zeroOrder) {
          zeroOrderSearches++;
          const z = matchLines(c.peaks, lines, { ...(seed % 4 >= 2 ? CALIBRATE_MATCH_DEFAULTS : {}), ...photoPriors(c, seed), zeroOrder });
          lowestWithZeroOrder = Math.min(lowestWithZeroOrder, z.score?.falseMatchProbability ?? 1);
          expect(z.accepted).toBe(false);
        }
        expect(r.message).toMatch(/do not match|no consistent assignment|needs at least/);
        expect(r.message).toMatch(/--lamp|--pairs/);
      }
    });
  }

  it('rejects random peak positions for every lamp', () => {
    const rng = createRandom(5);
    for (let k = 0; k < 30; k++) {
      const n = 5 + Math.floor(rng.uniform() * 30);
      const peaks: Peak[] = Array.from({ length: n }, () => ({
        positionPx: rng.uniform() * 1920,
        positionUncertaintyPx: 0.05 + 0.2 * rng.uniform(),
        fwhmPx: 3,
        height: rng.uniform(),
        area: 1,
        prominence: rng.uniform(),
        snr: 50,
        saturated: false,
        blended: false,
      }));
      const spec = ['Ne', 'Hg', 'fluorescent', 'Xe', 'Ne+Hg', 'He'][k % 6];
      expect(matchLines(peaks, lamp(spec)).accepted).toBe(false);
      expect(matchLines(peaks, lamp(spec), CALIBRATE_MATCH_DEFAULTS).accepted).toBe(false);
    }
  });
});

describe('matchLines with manual pairs, single lines and odd input', () => {
  const ne = lamp('Ne');
  const c = (() => {
    for (let seed = 1; ; seed++) {
      const s = syntheticCase(seed * 31, ne, { dispersionNmPerPx: [0.3, 0.4], extraFraction: [0.2, 0.3] });
      if (cleanLines(s) >= 12) return s;
    }
  })();
  const trueIdx = c.peaks.map((_, i) => i).filter((i) => c.truthNm[i] !== null && !c.peaks[i].blended);

  it('two manual pairs seed the solution and stay in it, marked manual', () => {
    const [a, b] = [trueIdx[1], trueIdx[trueIdx.length - 2]];
    const pairs = [a, b].map((i) => ({ positionPx: c.peaks[i].positionPx + 0.8, wavelengthNm: c.truthNm[i]! }));
    const r = matchLines(c.peaks, ne, { ...CALIBRATE_MATCH_DEFAULTS, pairs });
    expect(r.accepted).toBe(true);
    const manual = r.matches.filter((m) => m.source === 'manual');
    expect(manual).toHaveLength(2);
    // snapped to the peaks' centroids
    expect(manual.map((m) => m.peakIndex).sort()).toEqual([a, b].sort());
    expect(r.matches.length).toBeGreaterThanOrEqual(0.6 * trueIdx.length);
    expect(judge(c, r, c.centreDispersionNmPerPx).correct).toBe(true);
  });

  it('one manual pair narrows the search and joins the solution', () => {
    const i = trueIdx[Math.floor(trueIdx.length / 2)];
    const r = matchLines(c.peaks, ne, { ...CALIBRATE_MATCH_DEFAULTS, pairs: [{ positionPx: c.peaks[i].positionPx, wavelengthNm: c.truthNm[i]! }] });
    expect(r.accepted).toBe(true);
    expect(r.matches.some((m) => m.source === 'manual' && m.peakIndex === i)).toBe(true);
    expect(judge(c, r, c.centreDispersionNmPerPx).correct).toBe(true);
  });

  it('a lamp of one line (a laser) cannot calibrate alone and says to give pairs', () => {
    const laser = lampLines('laser:632.816', { catalog }).lines;
    const r = matchLines(c.peaks, laser);
    expect(r.accepted).toBe(false);
    expect(r.message).toMatch(/1 line\(s\).*give --pairs/);
  });

  it('warns when every peak is saturated', () => {
    const sat = c.peaks.map((p) => ({ ...p, saturated: true }));
    const r = matchLines(sat, ne);
    expect(r.warnings.join(' ')).toMatch(/all \d+ peaks are saturated/);
  });

  it('respects the direction option', () => {
    const dir = c.truth.direction === 1 ? 'decreasing' : 'increasing';
    const r = matchLines(c.peaks, ne, { ...CALIBRATE_MATCH_DEFAULTS, direction: dir });
    expect(r.accepted).toBe(false);
    const right = c.truth.direction === 1 ? 'increasing' : 'decreasing';
    expect(matchLines(c.peaks, ne, { ...CALIBRATE_MATCH_DEFAULTS, direction: right }).accepted).toBe(true);
  });

  it('rejects a bad dispersion interval and a bad pair with the option named', () => {
    expect(() => matchLines(c.peaks, ne, { dispersionNmPerPx: [2, 1] })).toThrow(/dispersionNmPerPx/);
    expect(() => matchLines(c.peaks, ne, { pairs: [{ positionPx: 10, wavelengthNm: NaN }] })).toThrow(/pairs/);
  });
});
