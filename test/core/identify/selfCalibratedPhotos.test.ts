import { describe, expect, it } from 'vitest';
import { wavelengthAtNm } from '../../../src/core/calibration/model.js';
import { fitPolynomial } from '../../../src/core/calibration/polynomialModel.js';
import { dispersionPriorNmPerPx } from '../../../src/core/identify/dispersionPrior.js';
import { identifySelfCalibrated, type SelfCalibratedIdentification } from '../../../src/core/identify/identifySelfCalibrated.js';
import { loadLineList } from '../../../src/io/lineList.js';
import { evaluationSet, INSTRUMENTS, SELF_GASES, type EvaluationPhoto } from './selfCalibratedPhotos.js';

const lines = loadLineList({ includeBands: true });

/**
 * The seeded evaluation of self-calibrating identification (issue target: top-1 ≥ 85 %): 40 rendered single-gas photos
 * (selfCalibratedPhotos.ts; lines from NIST ASD, the outside reference, each ×3 at random), five per gas, on five
 * instruments (0.30–0.63 nm/px, wavelength growing either way), identified with no profile with the project's list.
 * Sodium counts as right when nothing is named (one doublet cannot set a scale) or when sodium is.
 * Measured: 37 of 40 (H, He, Ne, Ar, Kr, Hg, Na 5/5; Xe 2/5) since a self-made scale must explain most bright peaks
 * and carry its lamp's lines at plausible fluxes (scaleCredibility.ts: Ar 4 → 5) and a lone line of a species' minor
 * spectrum predicts no missing lines (identifySpecies: Kr 4 → 5); before, 35 of 40, and 33 before the brightest-line
 * search scored matches by the species' prior weights and missing strong lines. 34 of 40 on a second set of new seeds,
 * evaluationSet(5, 5). The rendered xenon tubes lack the list's strongest visible Xe I lines (462.4,
 * 467.1 nm: the reference's Xe I lines start at 473 nm) and every Xe II line (only neutral spectra are rendered), and
 * many of their lines are not in the list, so even on the true scale xenon clears presence by a few nats only. (The
 * krypton tube on the 0.30 nm/px webcam, missed before, put Kr I 645.6 nm on Kr II 647.1 nm at the red end, beyond the
 * lines that made the scale, and that one ion line then called five strong blue Kr II lines missing.) Floors sit two
 * cases under in all, one under per gas (Xe as before).
 */
const right = (p: EvaluationPhoto, r: SelfCalibratedIdentification): boolean => {
  const top = r.species[0];
  if (p.gas === 'Na') return !r.species.some((s) => s.present) || (top.element === 'Na' && top.present);
  return top.element === p.gas && top.present;
};

describe('identifySelfCalibrated on rendered tube photos (no profile)', () => {
  const photos = evaluationSet(5);
  const results = photos.map((p) => ({ p, r: identifySelfCalibrated(p.peaks, { lines, positionRangePx: p.positionRangePx }) }));

  it('names the gas (top-1) in at least 35 of 40 photos, at least 1–4 of 5 per gas', () => {
    const perGas = new Map<string, number>(SELF_GASES.map((g) => [g, 0]));
    const misses: string[] = [];
    for (const { p, r } of results) {
      if (right(p, r)) perGas.set(p.gas, perGas.get(p.gas)! + 1);
      else misses.push(`${p.gas} on ${p.instrument} → ${r.species.filter((s) => s.present).map((s) => s.element).join('+') || 'nothing'}`);
    }
    const total = [...perGas.values()].reduce((a, b) => a + b, 0);
    expect(total, misses.join('; ')).toBeGreaterThanOrEqual(35);
    const floors: Record<string, number> = { H: 4, He: 4, Ne: 4, Ar: 4, Kr: 4, Xe: 1, Hg: 4, Na: 4 };
    for (const g of SELF_GASES) expect(perGas.get(g)!, `${g}: ${misses.join('; ')}`).toBeGreaterThanOrEqual(floors[g]);
  });

  it('says the scale came from the spectrum, puts ≥ 95 % of the gas lines within 1 nm of the truth, and lowers the gas evidence for making it', () => {
    let checked = 0;
    let lineCount = 0;
    let within = 0;
    const far: string[] = [];
    for (const { p, r } of results) {
      if (p.gas === 'Na' || !right(p, r)) continue;
      checked++;
      expect(r.calibration?.from).toBe('self');
      expect(r.warnings[0]).toMatch(/wavelength scale from the spectrum itself/);
      // The renderer's truth: order-1 line positions → wavelengths (a cubic through them is exact to < 0.01 nm).
      const truth = fitPolynomial(p.truthLines.map(([x, w]) => ({ xPx: x, wavelengthNm: w, weight: 1 })), 3)!.model;
      // The gas's own first-order lines inside the span of the lines that made the scale (beyond it, extrapolated).
      const [lo, hi] = r.calibration!.rangeNm;
      for (const q of r.peaks.filter((x) => x.line?.element === p.gas && x.line.order === undefined && x.wavelengthNm >= lo && x.wavelengthNm <= hi)) {
        lineCount++;
        const off = Math.abs(q.wavelengthNm - wavelengthAtNm(truth, q.positionPx));
        if (off <= 1) within++;
        else far.push(`${p.gas} ${p.instrument} ${q.wavelengthNm.toFixed(1)} nm (${off.toFixed(1)} off)`);
      }
      // The gas pays for the scale its own lines made (its evidence is lowered), and shares its score with the
      // competing scales.
      const self = r.species.find((s) => s.element === p.gas)!;
      expect(self.evidenceTerms.penalty, `${p.gas} ${p.instrument}`).toBeGreaterThan(0);
      expect(r.calibration!.probability).toBeLessThanOrEqual(1);
    }
    expect(checked).toBeGreaterThanOrEqual(28);
    // Measured: 347 of 349 lines within 1 nm (argon on the 0.30 nm/px webcam: the two bluest lines put on Ar I
    // lines about 3 nm from their own by the line matcher, a weakness at the ends of the band); second seed set 346
    // of 347.
    expect(within / lineCount, `${within}/${lineCount}: ${far.join('; ')}`).toBeGreaterThanOrEqual(0.95);
  });

  it('names nothing for a sodium lamp it cannot calibrate, and says why', () => {
    for (const { p, r } of results.filter((x) => x.p.gas === 'Na' && !x.r.species.some((s) => s.present))) {
      expect(r.warnings.join(' '), p.instrument).toMatch(/cannot calibrate itself|needs at least 4 lines/);
    }
  });
});

/**
 * The same evaluation as `glowprint identify` runs it on a photo without a profile: with the dispersion prior its
 * focal length gives (dispersionPrior.ts; here the instrument's focal length in px, as EXIF and the image size give
 * the CLI), over both seed sets, 80 photos. Measured: 37 of 40 and 34 of 40, 71 of 80 = 88.75 % (without the prior
 * also 71 of 80), and no wrong answer: the misses are 9 declines (nothing named: Xe 7, Kr 1, Ar 1). Before a self-made
 * scale had to explain most bright peaks and carry its lamp's lines at plausible fluxes (scaleCredibility.ts), 67 of 80
 * with two wrong answers: a xenon tube named hydrogen (Balmer lines on 5 of its 21 peaks, 14 of the 19 bright ones left
 * over) and a sodium lamp named helium (the D line on He 706.5 nm, helium's
 * strongest line on a peak 200 times fainter), both declined now. On four more seed sets the same checks (with a
 * brightest-line scale dropped when its species leave two of the four brightest peaks unexplained, and the flux check
 * against the photo's own peak areas) give 70 of 80 for evaluationSet(5, 10) + (5, 15) (before: 66 with 5 wrong —
 * mercury and krypton tubes named hydrogen, sodium lamps named helium — which shaped those two checks) and, as a
 * holdout looked at only after them, 69 of 80 for evaluationSet(5, 20) + (5, 25) (before: 64 with 6 wrong), no wrong
 * answer in either, with or without the prior (three brightest-line hypotheses kept per species, two before: +1 on
 * each set). Floor three cases under; no wrong answer.
 */
describe('identifySelfCalibrated with the photo\'s dispersion prior, as identify runs it (no profile)', () => {
  it('names the gas (top-1) in at least 68 of 80 photos over two seed sets and never names a wrong gas', () => {
    let ok = 0;
    let wrong = 0;
    const misses: string[] = [];
    for (const p of [...evaluationSet(5), ...evaluationSet(5, 5)]) {
      const instrument = INSTRUMENTS.find((i) => i.name === p.instrument)!;
      const dispersionNmPerPx = dispersionPriorNmPerPx({ focalLengthPx: instrument.focalLengthPx });
      // The prior must hold the instrument's true dispersion, or it would rule out the right scale.
      expect(p.dispersionNmPerPx).toBeGreaterThanOrEqual(dispersionNmPerPx[0]);
      expect(p.dispersionNmPerPx).toBeLessThanOrEqual(dispersionNmPerPx[1]);
      const r = identifySelfCalibrated(p.peaks, { lines, positionRangePx: p.positionRangePx, match: { dispersionNmPerPx } });
      if (right(p, r)) ok++;
      else {
        const named = r.species.filter((s) => s.present).map((s) => s.element);
        if (named.length > 0) wrong++;
        misses.push(`${p.gas} on ${p.instrument} → ${named.join('+') || 'nothing'}`);
      }
    }
    expect(ok, misses.join('; ')).toBeGreaterThanOrEqual(68);
    expect(wrong, misses.join('; ')).toBe(0);
  }, 180_000);
});
