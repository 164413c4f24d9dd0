/** Internal state of the line matcher (matchLines.ts): peaks and lines in search form, pairs, sorted-array search. */
import type { Peak, SpectralLine } from '../../types.js';
import type { ColourPriorOptions } from '../colourPrior.js';
import { referenceUncertaintyNm, type LampLineInfo } from '../lineReference.js';

export interface PeakItem {
  /** Index into the caller's peaks. */
  index: number;
  x: number;
  /** Centroid uncertainty (px), floored. */
  sigma: number;
  strength: number;
  /** Wavelength interval the peak's colour allows, or null. */
  band: [number, number] | null;
  saturated: boolean;
  blended: boolean;
  /** Full width at half maximum (px), where the peak finder measured it. */
  fwhmPx?: number;
}

export interface LineItem {
  wavelengthNm: number;
  /** Brightness relative to the strongest line of its spectrum (0–1]. */
  rank: number;
  /** How well the listed wavelength gives the recorded centre (nm): blends with lamp neighbours, broad features. */
  sigmaNm: number;
  line: SpectralLine;
}

export interface Pair {
  /** Index into ctx.P, or −1 for a manual pair with no peak near it. */
  peak: number;
  /** Index into ctx.L, or −1 for a manual wavelength not in the list. */
  line: number;
  x: number;
  lambda: number;
  manual: boolean;
}

/** What the search stages share. */
export interface SearchSettings {
  dispersionNmPerPx: [number, number];
  direction: 'either' | 'increasing' | 'decreasing';
  seedPeaks: number;
  seedLinesPerPeak: number;
  maxGrown: number;
  tolerancePx: [number, number];
  colour: ColourPriorOptions;
  /** Sensitive range of the camera (nm). */
  wavelengthRangeNm: [number, number];
  /** See MatchLinesOptions.invisiblePeaksVeto. */
  invisiblePeaksVeto: number;
  /** How matches count as evidence (see scoreSolution). */
  evidence?: 'tolerance' | 'windows';
}

export interface Ctx {
  /** Peaks taking part, sorted by position. */
  P: PeakItem[];
  /** Their positions. */
  px: Float64Array;
  /** Lines taking part, sorted by wavelength. */
  L: LineItem[];
  lw: Float64Array;
  o: SearchSettings;
  /** Bound on the relative change of dispersion per pixel (1/px). */
  curvature: number;
  manual: Pair[];
}

export function lowerBound(values: ArrayLike<number>, v: number): number {
  let lo = 0;
  let hi = values.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (values[mid] < v) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Index of the value in the sorted array nearest to v (−1 for an empty array). */
export function nearest(values: ArrayLike<number>, v: number): number {
  if (values.length === 0) return -1;
  const i = lowerBound(values, v);
  if (i === 0) return 0;
  if (i === values.length) return values.length - 1;
  return v - values[i - 1] <= values[i] - v ? i - 1 : i;
}

/**
 * Lookups in a sorted wavelength array in constant time: a table of lower bounds on a uniform grid (four cells per
 * line on average) gives the start of a short linear scan. Same answers as `lowerBound` and `nearest` (ties to the
 * shorter wavelength); the line search makes ~10⁶ of them.
 */
export class LineIndex {
  private readonly lo: number;
  private readonly cells: number;
  private readonly invStep: number;
  private readonly start: Int32Array;
  constructor(private readonly lw: Float64Array) {
    const n = lw.length;
    this.lo = n ? lw[0] : 0;
    this.cells = Math.max(1, 4 * n);
    const step = n ? Math.max((lw[n - 1] - this.lo) / this.cells, 1e-9) : 1;
    this.invStep = 1 / step;
    this.start = new Int32Array(this.cells + 1);
    for (let c = 0, i = 0; c <= this.cells; c++) {
      const edge = this.lo + c * step;
      while (i < n && lw[i] < edge) i++;
      this.start[c] = i;
    }
  }
  /** First index whose wavelength is ≥ v. */
  lowerBound(v: number): number {
    const lw = this.lw;
    const n = lw.length;
    if (!(v > this.lo)) return v <= this.lo || n === 0 ? 0 : lowerBound(lw, v); // NaN: as the binary search
    const c = Math.min(this.cells, Math.floor((v - this.lo) * this.invStep));
    let i = this.start[c];
    while (i > 0 && lw[i - 1] >= v) i--; // the cell's edge rounded above v
    while (i < n && lw[i] < v) i++;
    return i;
  }
  /** Index of the wavelength nearest to v (−1 for an empty array). */
  nearest(v: number): number {
    const lw = this.lw;
    const n = lw.length;
    if (n === 0) return -1;
    const i = this.lowerBound(v);
    if (i === 0) return 0;
    if (i === n) return n - 1;
    return v - lw[i - 1] <= lw[i] - v ? i - 1 : i;
  }
}

export function strength(p: Peak): number {
  const v = Number.isFinite(p.prominence) && p.prominence > 0 ? p.prominence : p.height;
  return Number.isFinite(v) ? v : 0;
}

/**
 * Lines inside the sensitive range, sorted, lines within 0.01 nm merged (the brighter kept), faint lines next to a
 * much brighter one dropped (see SHADOW_NM), each with its brightness
 * rank (the line list's relative intensity, or the intensity over the strongest of its spectrum: intensities are
 * comparable only within one spectrum of one source) and reference uncertainty.
 */
export function prepareLines(lines: readonly SpectralLine[], rangeNm: [number, number]): LineItem[] {
  const inRange = lines.filter(
    (l) => Number.isFinite(l.wavelengthNm) && l.wavelengthNm >= rangeNm[0] && l.wavelengthNm <= rangeNm[1],
  );
  const maxBySpectrum = new Map<string, number>();
  const intensity = (l: SpectralLine) => (Number.isFinite(l.intensity) && l.intensity > 0 ? l.intensity : 1);
  for (const l of inRange) {
    const key = `${l.element}|${l.spectrum}`;
    maxBySpectrum.set(key, Math.max(maxBySpectrum.get(key) ?? 0, intensity(l)));
  }
  const items = inRange.map((line) => {
    const rel = (line as LampLineInfo).relativeIntensity;
    return {
      wavelengthNm: line.wavelengthNm,
      rank: typeof rel === 'number' && rel > 0 ? rel : intensity(line) / (maxBySpectrum.get(`${line.element}|${line.spectrum}`) ?? 1),
      sigmaNm: referenceUncertaintyNm(line, inRange),
      line,
    };
  });
  items.sort((a, b) => a.wavelengthNm - b.wavelengthNm);
  const merged: LineItem[] = [];
  for (const it of items) {
    const last = merged[merged.length - 1];
    if (last && it.wavelengthNm - last.wavelengthNm < 0.01) {
      if (it.rank > last.rank) merged[merged.length - 1] = it;
    } else merged.push(it);
  }
  // A line much fainter than a neighbour of its own spectrum within SHADOW_NM is no peak of its own at a camera's
  // resolution; left in, its wide blend uncertainty would let it catch the bright neighbour's peak.
  return merged.filter(
    (it) =>
      !merged.some(
        (n) =>
          n !== it &&
          n.line.spectrum === it.line.spectrum &&
          Math.abs(n.wavelengthNm - it.wavelengthNm) <= SHADOW_NM &&
          it.rank < SHADOW_RATIO * n.rank,
      ),
  );
}

/** A line fainter than SHADOW_RATIO × a same-spectrum neighbour within SHADOW_NM (nm) is not matched. */
export const SHADOW_NM = 1.2;
export const SHADOW_RATIO = 0.2;

/** Least position uncertainty of a blended peak in the search's fits (px): its centroid may lie between lines. */
export const BLENDED_SIGMA_PX = 0.3;

export function sigmaOf(ctx: Ctx, q: Pair): number {
  if (q.peak < 0) return 0.5;
  const p = ctx.P[q.peak];
  return p.blended ? Math.max(p.sigma, BLENDED_SIGMA_PX) : p.sigma;
}

export function lineSigmaNm(ctx: Ctx, q: Pair): number {
  return q.line >= 0 ? ctx.L[q.line].sigmaNm : 0;
}

/** Whether two pair lists hold the same peak–line pairs in the same order. */
export function samePairs(a: readonly Pair[], b: readonly Pair[]): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i].peak !== b[i].peak || a[i].line !== b[i].line) return false;
  return true;
}

export function median(values: number[]): number {
  if (values.length === 0) return NaN;
  const v = [...values].sort((a, b) => a - b);
  const h = v.length >> 1;
  return v.length % 2 ? v[h] : (v[h - 1] + v[h]) / 2;
}
