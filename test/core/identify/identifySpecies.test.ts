import { describe, expect, it } from 'vitest';
import { identifySpecies, NO_EMISSION_LINES, type CalibratedPeak } from '../../../src/core/identify/identifySpecies.js';
import { createRandom } from '../../../src/core/random.js';
import type { SpectralLine } from '../../../src/core/types.js';
import { loadLineList } from '../../../src/io/lineList.js';
import { peakAt, RANGE, synthesize } from './syntheticPeaks.js';

const projectLines = loadLineList();
const withBands = loadLineList({ includeBands: true });

function presentSet(peaks: CalibratedPeak[], lines: readonly SpectralLine[] = projectLines): string[] {
  return identifySpecies(peaks, { lines, rangeNm: RANGE }).species.filter((s) => s.present).map((s) => s.element).sort();
}

// Peaks drawn from NIST ASD (the outside reference), identified with the project's list; intensities ×3 per line.
describe('identifySpecies(peaks, {lines, rangeNm}) on peaks drawn from NIST ASD', () => {
  it('names the gas of single-gas tubes (top-1 ≥ 95 % over seeds)', () => {
    const gases = ['Ne', 'Ar', 'He', 'Hg', 'Kr', 'Xe', 'H', 'Na'];
    let right = 0;
    let total = 0;
    const misses: string[] = [];
    for (const gas of gases) {
      for (let seed = 1; seed <= 10; seed++) {
        const peaks = synthesize([[gas, 1]], createRandom(seed * 97 + gas.charCodeAt(0)));
        const top = identifySpecies(peaks, { lines: projectLines, rangeNm: RANGE }).species[0];
        total++;
        if (top.element === gas && top.present) right++;
        else misses.push(`${gas}#${seed}→${top.element}`);
      }
    }
    expect(right / total, misses.join(' ')).toBeGreaterThanOrEqual(0.95);
  });

  it('finds exactly the species of mixtures Ar+Hg, He+Ne, Ne+Ar, Ne+Hg, Ne+H (≥ 85 % over seeds)', () => {
    const mixtures: Array<Array<[string, number]>> = [
      [['Ar', 1], ['Hg', 0.6]],
      [['He', 1], ['Ne', 0.5]],
      [['Ne', 1], ['Ar', 0.4]],
      [['Ne', 1], ['Hg', 0.4]],
      [['Ne', 1], ['H', 0.3]],
    ];
    let right = 0;
    let total = 0;
    const misses: string[] = [];
    for (const mix of mixtures) {
      const want = mix.map(([e]) => e).sort();
      for (let seed = 1; seed <= 10; seed++) {
        const got = presentSet(synthesize(mix, createRandom(seed * 31 + want.join('').length)));
        total++;
        if (got.join('+') === want.join('+')) right++;
        else misses.push(`${want.join('+')}#${seed}→${got.join('+')}`);
      }
    }
    expect(right / total, misses.join(' ')).toBeGreaterThanOrEqual(0.85);
  });

  it('gives each species of a mixture its share of the line flux', () => {
    // Hg at 0.4 of Ne's strongest line: Hg's visible lines carry ~15-35 % of the flux of such a spectrum.
    let hgShare = 0;
    const seeds = 10;
    for (let seed = 1; seed <= seeds; seed++) {
      const r = identifySpecies(synthesize([['Ne', 1], ['Hg', 0.4]], createRandom(seed)), { lines: projectLines, rangeNm: RANGE });
      const ne = r.species.find((s) => s.element === 'Ne')!;
      const hg = r.species.find((s) => s.element === 'Hg')!;
      expect(ne.fluxFraction + hg.fluxFraction + r.unexplainedFluxFraction).toBeLessThanOrEqual(1 + 1e-9);
      expect(ne.fluxFraction).toBeGreaterThan(hg.fluxFraction);
      hgShare += hg.fluxFraction / seeds;
    }
    expect(hgShare).toBeGreaterThan(0.05);
    expect(hgShare).toBeLessThan(0.45);
  });

  it('labels each matched peak with its line and lists the stray ones as unexplained', () => {
    const peaks = synthesize([['Ne', 1]], createRandom(5));
    const result = identifySpecies(peaks, { lines: projectLines, rangeNm: RANGE });
    const labelled = result.peaks.filter((p) => p.line?.element === 'Ne');
    expect(labelled.length).toBeGreaterThanOrEqual(10);
    for (const p of labelled) expect(Math.abs(p.wavelengthNm - p.line!.wavelengthNm)).toBeLessThanOrEqual(1);
    expect(result.unexplained.length).toBeGreaterThanOrEqual(1);
    const ne = result.species.find((s) => s.element === 'Ne')!;
    expect(ne.fluxFraction).toBeGreaterThan(0.8);
    expect(ne.score).toBeGreaterThan(0.9);
    expect(result.species[0].element).toBe('Ne');
  });

  it('judges nothing present for peaks at random wavelengths (≤ 2 of 40 tables)', () => {
    const rng = createRandom(11);
    let falseAlarms = 0;
    for (let trial = 0; trial < 40; trial++) {
      const peaks: CalibratedPeak[] = Array.from({ length: 4 + (trial % 12) }, () =>
        peakAt(400 + 300 * rng.uniform(), trial % 2 ? 1 : Math.exp(4 * rng.uniform())),
      );
      if (identifySpecies(peaks, { lines: projectLines, rangeNm: RANGE }).species.some((s) => s.present)) falseAlarms++;
    }
    expect(falseAlarms).toBeLessThanOrEqual(2);
  });
});

describe('identifySpecies: intensities only coarsely', () => {
  it('names sodium from its D doublet alone, blended into one peak (588.995 / 589.592 nm, common practice, no source)', () => {
    // Low-pressure sodium at camera resolution: one peak at the flux-weighted centre of D2 and D1, ~2 nm wide.
    const peaks = [peakAt(589.19, 100, { fwhmNm: 2.2 }), peakAt(523.4, 0.5), peakAt(630.7, 0.4)];
    const r = identifySpecies(peaks, { lines: projectLines, rangeNm: RANGE });
    expect(r.species[0].element).toBe('Na');
    expect(r.species[0].present).toBe(true);
    expect(r.species[0].evidenceTerms.rank).toBeGreaterThan(0);
    expect(r.peaks[0].line?.element).toBe('Na');
    expect(r.unexplained.map((p) => p.wavelengthNm).sort()).toEqual([523.4, 630.7]);
  });

  it('needs the strong lines a weak line implies: one Ne line that is not among its strongest names nothing', () => {
    // Ne I 533.078 nm is a modest Ne line; alone, the strong 585.249 / 640.225 nm lines are missing.
    const r = identifySpecies([peakAt(533.08, 10), peakAt(470.0, 2), peakAt(612.2, 1)], { lines: projectLines, rangeNm: RANGE });
    expect(r.species.find((s) => s.element === 'Ne')!.present).toBe(false);
  });

  it('takes no missing lines from a lone line of a minor spectrum: a Kr I tube with a peak on Kr II 647.088 nm', () => {
    // Kr II 647.088 nm (NIST ASD, the project list) beside Kr I 645.629 nm: a scale slightly off at the red end puts a
    // Kr I peak there. One ion line does not establish Kr II, so its strong blue lines (461.9, 465.9 nm …) are not
    // called missing; two ion lines do predict them.
    const kr2 = projectLines.filter((l) => l.element === 'Kr' && l.spectrum === 'Kr II').map((l) => l.wavelengthNm);
    for (let seed = 1; seed <= 10; seed++) {
      const peaks = synthesize([['Kr', 1]], createRandom(seed * 7 + 3));
      const brightest = Math.max(...peaks.map((p) => p.area));
      const lone = identifySpecies([...peaks, peakAt(647.088, 0.1 * brightest)], { lines: projectLines, rangeNm: RANGE });
      const kr = lone.species.find((s) => s.element === 'Kr')!;
      expect(kr.present, `seed ${seed}`).toBe(true);
      expect(kr.missingLinesNm.filter((w) => kr2.includes(w)), `seed ${seed}`).toEqual([]);
      const two = identifySpecies([...peaks, peakAt(647.088, 0.1 * brightest), peakAt(676.442, 0.1 * brightest)], { lines: projectLines, rangeNm: RANGE });
      expect(two.species.find((s) => s.element === 'Kr')!.missingLinesNm.filter((w) => kr2.includes(w)).length, `seed ${seed}`).toBeGreaterThan(0);
    }
  });

  it('is unmoved by a factor of 3 on every intensity (same present set with the areas perturbed)', () => {
    const rng = createRandom(21);
    let same = 0;
    for (let seed = 1; seed <= 10; seed++) {
      const peaks = synthesize([['Ar', 1], ['Hg', 0.6]], createRandom(seed + 100));
      const perturbed = peaks.map((p) => ({ ...p, area: p.area * Math.exp((2 * rng.uniform() - 1) * Math.log(3)) }));
      if (presentSet(peaks).join() === presentSet(perturbed).join()) same++;
    }
    expect(same).toBeGreaterThanOrEqual(9);
  });
});

describe('identifySpecies: what else is in it', () => {
  it('labels a second-order image of a bright line (mλ = d sin θ: order 2 of 435.833 nm sits at 871.666 nm)', () => {
    // Hg I 404.656, 435.833, 546.074 nm (common practice, no source) and the grating equation (textbook).
    const peaks = [peakAt(404.66, 30), peakAt(435.83, 100), peakAt(546.07, 80), peakAt(576.96, 12), peakAt(579.07, 14), peakAt(871.67, 5, { wavelengthUncertaintyNm: 0.16 })];
    const r = identifySpecies(peaks, { lines: projectLines, rangeNm: [380, 900] });
    const second = r.peaks.find((p) => Math.abs(p.wavelengthNm - 871.67) < 0.01)!;
    expect(second.line?.element).toBe('Hg');
    expect(second.line?.order).toBe(2);
    expect(Math.abs(second.line!.wavelengthNm - 435.833)).toBeLessThanOrEqual(0.001);
    expect(r.unexplained).toEqual([]);
  });

  it('names the lines a first-order blend resolves into in order 2 (Hg I 433.922, 434.749, 435.833 nm)', () => {
    // Hg I lines from NIST ASD; in order 2 (mλ = d sin θ) they stand at 867.844, 869.498 and 871.666 nm, 1.7–2.2 nm
    // apart on the first-order scale, where the camera's 2.4 nm-wide first-order peak holds all three. Each image is
    // 1.2 nm wide on the scale, 0.6 nm in first-order wavelength: resolved. The first is wider (2 nm: 1 nm in first
    // order, enough to hold 434.749 too), but 434.749 has its own image beside it, so it is no blend of the first's.
    const peaks = [
      peakAt(404.66, 30, { fwhmNm: 2.4 }),
      peakAt(435.7, 100, { fwhmNm: 2.4 }),
      peakAt(546.07, 80, { fwhmNm: 2.4 }),
      peakAt(576.96, 12, { fwhmNm: 2.4 }),
      peakAt(579.07, 14, { fwhmNm: 2.4 }),
      peakAt(867.9, 2, { wavelengthUncertaintyNm: 0.3, fwhmNm: 2 }),
      peakAt(869.4, 3, { wavelengthUncertaintyNm: 0.3 }),
      peakAt(871.7, 8, { wavelengthUncertaintyNm: 0.3 }),
    ];
    const r = identifySpecies(peaks, { lines: projectLines, rangeNm: [380, 900] });
    const at = (w: number) => r.peaks.find((p) => Math.abs(p.wavelengthNm - w) < 0.01)!.line;
    expect(at(435.7)?.blendedWithNm).toEqual([433.922, 434.749]);
    expect(at(867.9)).toEqual({ element: 'Hg', spectrum: 'Hg I', wavelengthNm: 433.922, order: 2 });
    expect(at(869.4)).toEqual({ element: 'Hg', spectrum: 'Hg I', wavelengthNm: 434.749, order: 2 });
    expect(at(871.7)).toEqual({ element: 'Hg', spectrum: 'Hg I', wavelengthNm: 435.833, order: 2 });
  });

  it('takes a blue peak beyond the red for a second-order image, seen in first order or not; a red one stays first order', () => {
    // An argon-mercury tube (lines from NIST ASD) on a scale reaching 900 nm. At 2 × Hg I 404.656, Ar I 415.859 and
    // Ar I 420.067 nm the camera records blue light (the order-2 images, mλ = d sin θ), near Ar I 810.369, 840.821 nm;
    // Ar I 811.531 nm itself is recorded red. Hg 404.656 and Ar 415.859 lie short of the band, unseen in first order.
    const rng = createRandom(11);
    const first = synthesize([['Ar', 1], ['Hg', 0.6]], rng, { strays: 0 }).filter((p) => p.wavelengthNm > 425);
    const top = Math.max(...first.map((p) => p.area));
    const blue = { r: 0.1, g: 0.03, b: 0.87 };
    const red = { r: 0.9, g: 0.05, b: 0.05 };
    const peaks = [
      ...first,
      peakAt(2 * 404.656 + 0.3, 0.05 * top, { wavelengthUncertaintyNm: 0.5, rgb: blue }),
      peakAt(2 * 415.859 + 0.4, 0.05 * top, { wavelengthUncertaintyNm: 0.6, rgb: blue }),
      peakAt(2 * 420.067 + 0.3, 0.05 * top, { wavelengthUncertaintyNm: 0.7, rgb: blue }),
      peakAt(811.531 + 0.2, 0.08 * top, { wavelengthUncertaintyNm: 0.5, rgb: red }),
    ];
    // A phone camera behind its IR-cut filter sees to about 700 nm (common practice, no source).
    const r = identifySpecies(peaks, { lines: projectLines, rangeNm: [425, 900], sensitiveRangeNm: [425, 700] });
    const at = (w: number) => r.peaks.find((p) => Math.abs(p.wavelengthNm - w) < 0.01)!.line;
    expect(at(2 * 404.656 + 0.3)).toMatchObject({ element: 'Hg', wavelengthNm: 404.656, order: 2 });
    expect(at(2 * 415.859 + 0.4)).toMatchObject({ element: 'Ar', wavelengthNm: 415.859, order: 2 });
    expect(at(2 * 420.067 + 0.3)).toMatchObject({ element: 'Ar', wavelengthNm: 420.067, order: 2 });
    const ir = at(811.531 + 0.2);
    expect(ir).toMatchObject({ element: 'Ar', wavelengthNm: 811.531 });
    expect(ir?.order).toBeUndefined();
  });

  it('offers nitrogen band heads as a molecular candidate, marked molecular', () => {
    // N2 second-positive band heads 380.49, 375.54, 371.05, 357.69 nm and N2+ 391.44 nm (Pearse & Gaydon's tables,
    // from memory); a band's peak at camera resolution sits a few tenths of a nm to the violet of its head.
    const peaks = [380.1, 375.1, 370.7, 357.3, 391.0, 399.5, 405.5].map((w, k) => peakAt(w, [60, 40, 15, 70, 100, 20, 25][k], { fwhmNm: 2 }));
    const r = identifySpecies(peaks, { lines: withBands, rangeNm: [350, 450] });
    const n2 = r.species.find((s) => s.element === 'N2')!;
    expect(n2.present).toBe(true);
    expect(n2.molecular).toBe(true);
    expect(r.peaks.filter((p) => p.line?.molecular).length).toBeGreaterThanOrEqual(5);
  });

  it('lists the strong peaks no species explains, brightest first, and warns when they carry much flux', () => {
    const peaks = synthesize([['He', 1]], createRandom(3), { strays: 0 });
    const top = Math.max(...peaks.map((p) => p.area));
    peaks.push(peakAt(520.0, top * 0.5), peakAt(610.0, top * 0.3));
    const r = identifySpecies(peaks, { lines: projectLines, rangeNm: RANGE });
    expect(r.species[0].element).toBe('He');
    expect(r.unexplained.slice(0, 2).map((p) => p.wavelengthNm)).toEqual([520.0, 610.0]);
    expect(r.unexplainedFluxFraction).toBeGreaterThan(0.1);
    expect(r.warnings.some((w) => /not explained/.test(w))).toBe(true);
  });
});

describe('identifySpecies: no emission lines, no guess', () => {
  it(`says "${NO_EMISSION_LINES}" for an empty peak table`, () => {
    const r = identifySpecies([], { lines: projectLines, rangeNm: RANGE });
    expect(r.emissionLinesFound).toBe(false);
    expect(r.species.every((s) => !s.present && s.score === 0)).toBe(true);
    expect(r.warnings[0]).toMatch(new RegExp(`^${NO_EMISSION_LINES}`));
  });

  it('says so for noise only (every peak below SNR 5) and for a continuum (only bumps broader than 12 nm)', () => {
    const rng = createRandom(4);
    const noise = Array.from({ length: 12 }, () => peakAt(400 + 300 * rng.uniform(), 0.01, { snr: 2 + 2 * rng.uniform() }));
    const continuum = [peakAt(585.2, 40, { fwhmNm: 120, snr: 400 })];
    for (const peaks of [noise, continuum]) {
      const r = identifySpecies(peaks, { lines: projectLines, rangeNm: RANGE });
      expect(r.emissionLinesFound).toBe(false);
      expect(r.species.some((s) => s.present)).toBe(false);
      expect(r.warnings.join(' ')).toMatch(/no emission lines found/);
    }
  });
});
