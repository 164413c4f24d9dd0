import { describe, expect, it } from 'vitest';
import { InputError } from '../../../src/core/errors.js';
import { createRandom } from '../../../src/core/random.js';
import {
  FIND_PEAKS_DEFAULTS,
  FWHM_PER_SIGMA,
  findPeaks,
  findPeaksDetailed,
} from '../../../src/core/spectrum/peaks/index.js';
import type { Peak, Spectrum } from '../../../src/core/types.js';

// Recovery tests: seeded synthetic spectra with known point-sampled Gaussian lines, white noise and a sloping,
// curved continuum. Tolerances are stated beside each check (common practice for a peak table, no source).

interface Line {
  center: number;
  sigma: number;
  amplitude: number;
}

interface Synthetic {
  spectrum: Spectrum;
  lines: Line[];
}

const index = (n: number) => Float64Array.from({ length: n }, (_, i) => i);
const gauss = (x: number, l: Line) => l.amplitude * Math.exp(-0.5 * ((x - l.center) / l.sigma) ** 2);

/** 60 lines over 4000 samples, instrument-limited widths (σ = 1.6 px ± 15 %), SNR log-uniform in [8, 3000]. */
function lineSpectrum(seed: number, noise = 1, n = 4000, count = 60): Synthetic {
  const rng = createRandom(seed);
  const lines: Line[] = [];
  for (let k = 0; k < count; k++) {
    lines.push({
      center: 30 + ((n - 60) * (k + 0.5)) / count + (rng.uniform() - 0.5) * 20,
      sigma: 1.6 * (0.85 + 0.3 * rng.uniform()),
      amplitude: noise * Math.exp(Math.log(8) + rng.uniform() * Math.log(3000 / 8)),
    });
  }
  const intensity = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let v = 200 * noise + 0.02 * noise * i + 30 * noise * Math.sin(i / 700);
    for (const l of lines) if (Math.abs(i - l.center) < 12 * l.sigma) v += gauss(i, l);
    intensity[i] = v + noise * rng.normal();
  }
  return { spectrum: { positionPx: index(n), intensity }, lines };
}

/** Each true line with the found peak nearest to it (within 2 px), and the found peaks matched to none. */
function match(lines: Line[], peaks: Peak[]) {
  const pairs: Array<{ line: Line; peak: Peak }> = [];
  const used = new Set<Peak>();
  const missed: Line[] = [];
  for (const line of lines) {
    let best: Peak | null = null;
    for (const p of peaks) if (!best || Math.abs(p.positionPx - line.center) < Math.abs(best.positionPx - line.center)) best = p;
    if (best && Math.abs(best.positionPx - line.center) <= 2) {
      pairs.push({ line, peak: best });
      used.add(best);
    } else missed.push(line);
  }
  return { pairs, missed, extra: peaks.filter((p) => !used.has(p)) };
}

const median = (v: number[]) => {
  const s = [...v].sort((a, b) => a - b);
  return s.length % 2 ? s[s.length >> 1] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

describe('findPeaks(spectrum) on seeded line spectra', () => {
  const runs = [1, 2, 3, 4, 5].map((seed) => {
    const s = lineSpectrum(seed);
    const search = findPeaksDetailed(s.spectrum);
    return { ...s, search, ...match(s.lines, search.peaks) };
  });
  const pairs = runs.flatMap((r) => r.pairs);

  it('finds every line (SNR ≥ 8) and nothing else', () => {
    for (const r of runs) {
      expect(r.missed).toEqual([]);
      expect(r.extra).toEqual([]);
    }
    expect(pairs.length).toBe(300);
  });

  it('measures the noise σ within 6 % (the estimator scatter is ≈ 2 % at 4000 samples)', () => {
    for (const r of runs) expect(Math.abs(r.search.noise - 1)).toBeLessThanOrEqual(0.06);
  });

  it('reports centre uncertainties that cover the truth: |error| ≤ 3σ for ≥ 95 % of the lines', () => {
    const covered = pairs.filter(({ line, peak }) => Math.abs(peak.positionPx - line.center) <= 3 * peak.positionUncertaintyPx);
    expect(covered.length / pairs.length).toBeGreaterThanOrEqual(0.95);
    // And they are not wildly inflated either: at SNR < 50, where the floor does not act, the RMS of error/σ is ~1.
    const z = pairs
      .filter(({ line }) => line.amplitude < 50)
      .map(({ line, peak }) => (peak.positionPx - line.center) / peak.positionUncertaintyPx);
    const rms = Math.sqrt(z.reduce((s, v) => s + v * v, 0) / z.length);
    expect(rms).toBeGreaterThan(0.6);
    expect(rms).toBeLessThan(1.4);
  });

  it('puts the median centre error ≤ 0.1 px for SNR > 50 (it is ≈ 0.01 px)', () => {
    const strong = pairs.filter(({ line }) => line.amplitude > 50);
    expect(strong.length).toBeGreaterThan(100);
    const err = median(strong.map(({ line, peak }) => Math.abs(peak.positionPx - line.center)));
    expect(err).toBeLessThanOrEqual(0.1);
    expect(err).toBeLessThanOrEqual(0.03);
  });

  it('gives FWHM, height, area and SNR within 10 % for SNR > 50 and 3 % for SNR > 300, medians within 1 %', () => {
    // The scatter of a fitted width is ≈ σ_width/width ≈ 1.5/SNR for these lines, so 10 % is > 3σ at SNR 50.
    const rel = (got: number, want: number) => Math.abs(got / want - 1);
    for (const [snr, tol] of [[50, 0.1], [300, 0.03]]) {
      const sel = pairs.filter((p) => p.line.amplitude > snr);
      const errors = sel.map(({ line, peak }) => ({
        fwhm: rel(peak.fwhmPx, FWHM_PER_SIGMA * line.sigma),
        height: rel(peak.height, line.amplitude),
        area: rel(peak.area, line.amplitude * line.sigma * Math.sqrt(2 * Math.PI)),
        snr: rel(peak.snr, line.amplitude), // noise σ = 1, so the true SNR is the amplitude
      }));
      for (const key of ['fwhm', 'height', 'area'] as const) {
        expect(Math.max(...errors.map((e) => e[key]))).toBeLessThanOrEqual(tol);
        expect(median(errors.map((e) => e[key]))).toBeLessThanOrEqual(0.01);
      }
      // The SNR also carries the noise estimate's few per cent.
      expect(Math.max(...errors.map((e) => e.snr))).toBeLessThanOrEqual(tol + 0.06);
    }
    for (const { line, peak } of pairs) expect(peak.prominence).toBeGreaterThan(0.8 * line.amplitude);
  });

  it('flags none of these well-separated, unclipped lines as blended or saturated', () => {
    expect(pairs.filter(({ peak }) => peak.blended || peak.saturated).length).toBe(0);
    expect(runs.every((r) => r.search.warnings.length === 0)).toBe(true);
  });

  it('returns the peaks ascending, with all fits accepted', () => {
    for (const r of runs) {
      const pos = r.search.peaks.map((p) => p.positionPx);
      expect(pos).toEqual([...pos].sort((a, b) => a - b));
      expect(r.search.fits.every((f) => f.method === 'gaussian')).toBe(true);
    }
  });
});

describe('findPeaks(spectrum) in a dense cluster of lines', () => {
  it('keeps the baseline on the background under the cluster and the uncertainties honest', () => {
    // Lines 5–15 samples apart (1.3–4 FWHM), amplitudes 15–1500σ, over 400 samples of a 1000-sample spectrum: most
    // fit windows overlap, so lines are fitted in groups, and the baseline must bridge the cluster.
    const z: number[] = [];
    let total = 0;
    let found = 0;
    let extra = 0;
    for (let seed = 61; seed < 71; seed++) {
      const rng = createRandom(seed);
      const lines: Line[] = [];
      for (let c = 300; c < 700; c += 5 + 10 * rng.uniform()) lines.push({ center: c, sigma: 1.6, amplitude: 30 + 3000 * rng.uniform() ** 2 });
      const intensity = Float64Array.from({ length: 1000 }, (_, i) => 100 + lines.reduce((s, l) => s + gauss(i, l), 0) + 2 * rng.normal());
      const search = findPeaksDetailed({ positionPx: index(1000), intensity });
      for (let i = 350; i < 650; i += 10) expect(Math.abs(search.baseline[i] - 100)).toBeLessThanOrEqual(2);
      const m = match(lines, search.peaks);
      total += lines.length;
      found += m.pairs.length;
      extra += m.extra.length;
      for (const { line, peak } of m.pairs) z.push((peak.positionPx - line.center) / peak.positionUncertaintyPx);
    }
    // Weak lines on the flank of a line 100× stronger make no maximum of their own: ≥ 90 % are found.
    expect(found / total).toBeGreaterThanOrEqual(0.9);
    expect(extra).toBeLessThanOrEqual(1);
    expect(z.filter((v) => Math.abs(v) <= 3).length / z.length).toBeGreaterThanOrEqual(0.95);
  });
});

describe('findPeaks(spectrum) flags', () => {
  it('flags a clipped line saturated and still centres it from its flanks', () => {
    const n = 600;
    const rng = createRandom(11);
    const lines: Line[] = [
      { center: 150.3, sigma: 1.7, amplitude: 400 },
      { center: 300.62, sigma: 1.7, amplitude: 5000 },
      { center: 450.1, sigma: 1.7, amplitude: 300 },
    ];
    const clipAt = 1000;
    const intensity = new Float64Array(n);
    const saturated = new Uint8Array(n);
    for (let i = 0; i < n; i++) {
      const v = 20 + lines.reduce((s, l) => s + gauss(i, l), 0) + rng.normal();
      intensity[i] = Math.min(v, clipAt);
      saturated[i] = v >= clipAt ? 1 : 0;
    }
    const flagged = findPeaksDetailed({ positionPx: index(n), intensity, saturated });
    expect(flagged.peaks.map((p) => p.saturated)).toEqual([false, true, false]);
    const clipped = flagged.peaks[1];
    expect(Math.abs(clipped.positionPx - 300.62)).toBeLessThanOrEqual(0.05);
    expect(flagged.fits[1].excludedSamples).toBeGreaterThanOrEqual(5);
    // Its height comes from the unclipped flanks, well above the clip level.
    expect(clipped.height).toBeGreaterThan(2000);
    // Without flags (a CSV), the flat top at the spectrum's maximum marks it.
    const unflagged = findPeaks({ positionPx: index(n), intensity });
    expect(unflagged.map((p) => p.saturated)).toEqual([false, true, false]);
  });

  it('does not take a weak line whose top repeats at the maximum for a clipped one', () => {
    // Integer counts, σ ≈ 1: a 10σ line whose three top samples happen to read the same maximum value.
    const rng = createRandom(14);
    const intensity = Float64Array.from({ length: 300 }, () => Math.round(10 + rng.normal()));
    intensity.set([12, 16, 20, 20, 20, 16, 12], 147);
    const peaks = findPeaks({ positionPx: index(300), intensity });
    expect(peaks.length).toBe(1);
    expect(peaks[0].saturated).toBe(false);
  });

  it('flags lines the joint fit cannot separate as blended (centre correlation > 0.8), and an unresolved pair by its width', () => {
    const n = 900;
    const rng = createRandom(12);
    const sigma = 1.5;
    const fwhm = FWHM_PER_SIGMA * sigma;
    const lines: Line[] = [
      { center: 100, sigma, amplitude: 300 },
      { center: 200, sigma, amplitude: 250 },
      { center: 300, sigma, amplitude: 350 },
      // resolved pair, 1.2 FWHM apart: two maxima, fitted together with a centre correlation ≈ 0.76 — separated
      { center: 420, sigma, amplitude: 300 },
      { center: 420 + 1.2 * fwhm, sigma, amplitude: 200 },
      // pair 1.0 FWHM apart: a shallow dip, centre correlation ≈ 0.94 — blended
      { center: 500, sigma, amplitude: 300 },
      { center: 500 + 1.0 * fwhm, sigma, amplitude: 300 },
      // unresolved pair, 0.6 FWHM apart: one broad maximum
      { center: 600, sigma, amplitude: 300 },
      { center: 600 + 0.6 * fwhm, sigma, amplitude: 300 },
      { center: 700, sigma, amplitude: 200 },
    ];
    const intensity = Float64Array.from({ length: n }, (_, i) => 50 + lines.reduce((s, l) => s + gauss(i, l), 0) + rng.normal());
    const peaks = findPeaks({ positionPx: index(n), intensity });
    const at = (x: number) => peaks.find((p) => Math.abs(p.positionPx - x) < 2)!;
    expect(peaks.length).toBe(9);
    for (const x of [100, 200, 300, 700, 420, 420 + 1.2 * fwhm]) expect(at(x).blended).toBe(false);
    expect(at(500).blended).toBe(true);
    expect(at(500 + fwhm).blended).toBe(true);
    const broad = at(600 + 0.3 * fwhm);
    expect(broad.blended).toBe(true);
    expect(broad.fwhmPx).toBeGreaterThan(1.2 * fwhm);
    // The separated pair is fitted together: both centres within 0.1 px and within 3 of their stated uncertainties.
    for (const x of [420, 420 + 1.2 * fwhm]) {
      expect(Math.abs(at(x).positionPx - x)).toBeLessThanOrEqual(0.1);
      expect(Math.abs(at(x).positionPx - x)).toBeLessThanOrEqual(3 * at(x).positionUncertaintyPx);
    }
    // A stricter correlation limit flags the 1.2-FWHM pair as well; a limit of 1 leaves only the separation test.
    const strict = findPeaks({ positionPx: index(n), intensity }, { blendCentreCorrelation: 0.5 });
    expect(strict.find((p) => Math.abs(p.positionPx - 420) < 2)!.blended).toBe(true);
    const loose = findPeaks({ positionPx: index(n), intensity }, { blendCentreCorrelation: 1 });
    expect(loose.find((p) => Math.abs(p.positionPx - 500) < 2)!.blended).toBe(false);
  });

  it('gives the colour of each line as channel fractions of its core', () => {
    const n = 400;
    const rng = createRandom(13);
    const lineA: Line = { center: 120.4, sigma: 1.8, amplitude: 300 };
    const lineB: Line = { center: 270.8, sigma: 1.8, amplitude: 300 };
    const mix = (i: number, wa: number, wb: number, bg: number) => bg + wa * gauss(i, lineA) + wb * gauss(i, lineB) + 0.3 * rng.normal();
    // A is red (0.7, 0.2, 0.1), B is blue-green (0.05, 0.45, 0.5); a grey continuum under both.
    const r = Float64Array.from({ length: n }, (_, i) => mix(i, 0.7, 0.05, 10));
    const g = Float64Array.from({ length: n }, (_, i) => mix(i, 0.2, 0.45, 10));
    const b = Float64Array.from({ length: n }, (_, i) => mix(i, 0.1, 0.5, 10));
    const intensity = Float64Array.from({ length: n }, (_, i) => r[i] + g[i] + b[i]);
    const peaks = findPeaks({ positionPx: index(n), intensity, channels: { r, g, b } });
    expect(peaks.length).toBe(2);
    const want = [[0.7, 0.2, 0.1], [0.05, 0.45, 0.5]];
    peaks.forEach((p, k) => {
      expect(Math.abs(p.rgb!.r - want[k][0])).toBeLessThanOrEqual(0.02);
      expect(Math.abs(p.rgb!.g - want[k][1])).toBeLessThanOrEqual(0.02);
      expect(Math.abs(p.rgb!.b - want[k][2])).toBeLessThanOrEqual(0.02);
    });
  });
});

describe('findPeaks(spectrum) and one-sample spikes', () => {
  const spiky = (sigma: number) => {
    const n = 1200;
    const rng = createRandom(15);
    const lines: Line[] = Array.from({ length: 10 }, (_, k) => ({ center: 60 + 110 * k + 0.37 * k, sigma, amplitude: 100 + 50 * k }));
    const intensity = Float64Array.from({ length: n }, (_, i) => 30 + lines.reduce((s, l) => s + gauss(i, l), 0) + rng.normal());
    return { lines, intensity, n };
  };

  it('leaves hot pixels out of the table and names them, when the lines are several samples wide', () => {
    const { lines, intensity, n } = spiky(1.8);
    for (const i of [115, 508, 1003]) intensity[i] += 300;
    const search = findPeaksDetailed({ positionPx: index(n), intensity });
    expect(search.spikesPx).toEqual([115, 508, 1003]);
    expect(search.warnings.join(' ')).toMatch(/3 one-sample spike\(s\) left out/);
    const m = match(lines, search.peaks);
    expect(m.missed).toEqual([]);
    expect(m.extra).toEqual([]);
  });

  it('keeps every line of an undersampled spectrum (FWHM ≈ 1 sample), where lines and spikes look alike', () => {
    const { lines, intensity, n } = spiky(0.45);
    const search = findPeaksDetailed({ positionPx: index(n), intensity });
    expect(search.spikesPx).toEqual([]);
    expect(match(lines, search.peaks).missed).toEqual([]);
  });
});

describe('findPeaks(spectrum) on pure noise', () => {
  it('finds at most 2 false peaks in 200 spectra of 4000 samples at the default 5σ', () => {
    // Expected: a sample exceeds +5σ with P = 2.87e-7 (one-sided normal tail, from memory), so 200 × 4000 samples
    // give ≈ 0.23 false peaks; allowing 2 leaves room for the noise estimate's ±3 % scatter.
    let found = 0;
    for (let seed = 100; seed < 300; seed++) {
      const rng = createRandom(seed);
      const intensity = Float64Array.from({ length: 4000 }, (_, i) => 100 + 0.01 * i + 20 * Math.sin(i / 500) + rng.normal());
      found += findPeaks({ positionPx: index(4000), intensity }).length;
    }
    expect(found).toBeLessThanOrEqual(2);
  });

  it('finds many at a 3σ threshold, so the 5σ result is the threshold working', () => {
    const rng = createRandom(99);
    const intensity = Float64Array.from({ length: 4000 }, () => 100 + rng.normal());
    // P(Z > 3) = 1.35e-3 per sample (from memory): a few local maxima clear both height and prominence.
    expect(findPeaks({ positionPx: index(4000), intensity }, { thresholdSigma: 3 }).length).toBeGreaterThan(1);
  });
});

describe('findPeaks(spectrum) positions, variance and edge cases', () => {
  it('reports positions, FWHM and area in the units of positionPx', () => {
    const { spectrum, lines } = lineSpectrum(21, 1, 2000, 20);
    const base = findPeaks(spectrum);
    const scaled = findPeaks({ ...spectrum, positionPx: spectrum.positionPx.map((i) => 250 + 0.5 * i) });
    expect(scaled.length).toBe(base.length);
    scaled.forEach((p, k) => {
      expect(Math.abs(p.positionPx - (250 + 0.5 * base[k].positionPx))).toBeLessThanOrEqual(1e-9);
      expect(Math.abs(p.fwhmPx - 0.5 * base[k].fwhmPx)).toBeLessThanOrEqual(1e-9);
      expect(Math.abs(p.area - 0.5 * base[k].area)).toBeLessThanOrEqual(1e-9 * base[k].area);
      expect(Math.abs(p.positionUncertaintyPx - Math.max(0.5 * base[k].positionUncertaintyPx, FIND_PEAKS_DEFAULTS.minPositionUncertaintyPx))).toBeLessThanOrEqual(1e-12);
    });
    expect(match(lines, base).missed).toEqual([]);
  });

  it('weights the fit by the spectrum variance of Poisson counts and keeps its uncertainties honest', () => {
    const z: number[] = [];
    for (let seed = 31; seed < 36; seed++) {
      const rng = createRandom(seed);
      const lines: Line[] = Array.from({ length: 40 }, (_, k) => ({
        center: 40 + 98 * k + 10 * rng.uniform(),
        sigma: 1.7,
        amplitude: 300 + 20000 * rng.uniform(),
      }));
      const n = 4000;
      const intensity = new Float64Array(n);
      for (let i = 0; i < n; i++) intensity[i] = rng.poisson(900 + 0.1 * i + lines.reduce((s, l) => s + gauss(i, l), 0));
      const variance = intensity.map((v) => Math.max(v, 1));
      const peaks = findPeaks({ positionPx: index(n), intensity, variance });
      const m = match(lines, peaks);
      expect(m.missed).toEqual([]);
      for (const { line, peak } of m.pairs) z.push((peak.positionPx - line.center) / peak.positionUncertaintyPx);
    }
    expect(z.filter((v) => Math.abs(v) <= 3).length / z.length).toBeGreaterThanOrEqual(0.95);
  });

  it('handles lines near both ends of the spectrum', () => {
    const n = 200;
    const rng = createRandom(41);
    const lines: Line[] = [
      { center: 3.2, sigma: 1.4, amplitude: 200 },
      { center: 100, sigma: 1.4, amplitude: 200 },
      { center: 196.7, sigma: 1.4, amplitude: 200 },
    ];
    const intensity = Float64Array.from({ length: n }, (_, i) => 10 + lines.reduce((s, l) => s + gauss(i, l), 0) + rng.normal());
    const peaks = findPeaks({ positionPx: index(n), intensity });
    expect(peaks.length).toBe(3);
    peaks.forEach((p, k) => expect(Math.abs(p.positionPx - lines[k].center)).toBeLessThanOrEqual(0.1));
  });

  it('measures the line of a noiseless spectrum exactly, and warns on a flat one', () => {
    const line: Line = { center: 50.37, sigma: 2, amplitude: 10 };
    const intensity = Float64Array.from({ length: 101 }, (_, i) => 1 + gauss(i, line));
    const search = findPeaksDetailed({ positionPx: index(101), intensity });
    expect(search.peaks.length).toBe(1);
    expect(Math.abs(search.peaks[0].positionPx - 50.37)).toBeLessThanOrEqual(1e-6);
    expect(Math.abs(search.peaks[0].fwhmPx - FWHM_PER_SIGMA * 2)).toBeLessThanOrEqual(1e-5);
    expect(Math.abs(search.peaks[0].height - 10)).toBeLessThanOrEqual(1e-6);
    const flat = findPeaksDetailed({ positionPx: index(50), intensity: new Float64Array(50).fill(7) });
    expect(flat.peaks).toEqual([]);
    expect(flat.warnings.join(' ')).toMatch(/no measurable noise/);
  });

  it('returns no peaks and a warning for fewer than 5 samples', () => {
    const search = findPeaksDetailed({ positionPx: index(3), intensity: Float64Array.from([0, 5, 0]) });
    expect(search.peaks).toEqual([]);
    expect(search.warnings[0]).toMatch(/at least 5/);
  });

  it('rejects bad options and mismatched arrays with InputError naming them', () => {
    const s = lineSpectrum(1, 1, 500, 5).spectrum;
    expect(() => findPeaks(s, { thresholdSigma: -1 })).toThrow(/thresholdSigma/);
    expect(() => findPeaks(s, { baselineWindowSamples: 2 })).toThrow(/baselineWindowSamples/);
    expect(() => findPeaks(s, { noise: NaN })).toThrow(InputError);
    expect(() => findPeaks({ ...s, positionPx: index(10) })).toThrow(/positionPx/);
    expect(() => findPeaks({ ...s, saturated: new Uint8Array(3) })).toThrow(/saturated/);
  });

  it('keeps its defaults in one exported constant', () => {
    expect(FIND_PEAKS_DEFAULTS).toEqual({
      thresholdSigma: 5,
      baselineWindowSamples: 'auto',
      fitWindowFwhm: 1.5,
      minSeparationSamples: 1,
      blendSeparationFwhm: 1,
      blendCentreCorrelation: 0.8,
      blendWidthRatio: 1.25,
      minWidthRatio: 0.6,
      minPositionUncertaintyPx: 0.01,
      centreSystematicFwhm: 0.005,
      maxGroupSize: 6,
      rejectSpikes: true,
    });
  });
});

describe('findPeaks(spectrum) on pixel-integrated lines', () => {
  it('reads the FWHM of the sampled profile, √(σ² + 1/12) for a Gaussian integrated over unit pixels', () => {
    // A pixel integrating a Gaussian adds the variance of a unit box, 1/12 px² (moments of a convolution, from
    // memory). Integrated here by averaging 200 sub-samples per pixel.
    const n = 300;
    const lines: Line[] = [
      { center: 60.3, sigma: 1.2, amplitude: 1000 },
      { center: 150.71, sigma: 1.2, amplitude: 1000 },
      { center: 240.5, sigma: 1.2, amplitude: 1000 },
    ];
    const intensity = Float64Array.from({ length: n }, (_, i) => {
      let v = 0;
      for (let k = 0; k < 200; k++) v += lines.reduce((s, l) => s + gauss(i - 0.5 + (k + 0.5) / 200, l), 0);
      return 5 + v / 200;
    });
    const peaks = findPeaks({ positionPx: index(n), intensity }, { noise: 0.01 });
    expect(peaks.length).toBe(3);
    peaks.forEach((p, k) => {
      expect(Math.abs(p.positionPx - lines[k].center)).toBeLessThanOrEqual(0.005);
      const want = FWHM_PER_SIGMA * Math.sqrt(1.2 ** 2 + 1 / 12);
      expect(Math.abs(p.fwhmPx / want - 1)).toBeLessThanOrEqual(0.01);
    });
  });
});

describe('findPeaks(spectrum) with missing samples', () => {
  it('skips NaN samples and still measures the lines around them', () => {
    const n = 500;
    const rng = createRandom(51);
    const lines: Line[] = [
      { center: 120.3, sigma: 1.6, amplitude: 200 },
      { center: 380.8, sigma: 1.6, amplitude: 150 },
    ];
    const intensity = Float64Array.from({ length: n }, (_, i) => 40 + lines.reduce((s, l) => s + gauss(i, l), 0) + rng.normal());
    for (const i of [10, 11, 250, 383]) intensity[i] = NaN; // one inside the second line's fit window
    const peaks = findPeaks({ positionPx: index(n), intensity });
    expect(peaks.length).toBe(2);
    peaks.forEach((p, k) => expect(Math.abs(p.positionPx - lines[k].center)).toBeLessThanOrEqual(0.1));
  });
});
