/**
 * The band's height and its centre across, measured on the band's own samples; where its centre line is inside the
 * image.
 *
 * Height: the band's cross profile (per row, the median over the bright columns of each column's profile normalised
 * to its flux; background from the outermost rows subtracted); heightPx is its full width at half maximum, the centre
 * the midpoint of the two half-maximum crossings. For a slit image (a flat top with blurred edges) that is the slit
 * image's height; for a Gaussian band its FWHM. The 10 % crossings give the width of the wings, which extraction
 * needs as margin.
 */
import type { BandGeometry, LinearImage } from '../../types.js';
import { columnBackground } from '../extraction/background.js';
import { neighbourSigma } from '../extraction/profile.js';
import { sampleBand } from '../sampleBand.js';
import type { Scratch } from '../scratch.js';
import { type Ambient, subtractAmbient } from './ambient.js';
import { bandFrame } from './frame.js';

export interface CrossProfile {
  offsetPx: Float64Array;
  value: Float64Array;
}

export interface HeightMeasure {
  heightPx: number;
  /** Offset of the half-maximum midpoint from the assumed centre line (px). */
  centreOffsetPx: number;
  /** Distance from the half-maximum to the 1 % level, the larger side (px). */
  wingPx: number;
  profile: CrossProfile;
  /** The half-maximum crossings were found inside the sampled window. */
  complete: boolean;
}

/** `scratch`: working arrays for the samples (see scratch.ts); nothing taken from it outlives the call. */
export function measureHeight(image: LinearImage, band: BandGeometry, ambient?: Ambient, scratch?: Scratch): HeightMeasure {
  let half = Math.max(1.5 * band.heightPx, band.heightPx / 2 + 30);
  let last: HeightMeasure | null = null;
  for (let attempt = 0; attempt < 3; attempt++) {
    const m = crossProfileOnce(image, band, half, ambient, scratch);
    last = m;
    if (m.complete) return m;
    half *= 2;
  }
  return last!;
}

function crossProfileOnce(
  image: LinearImage,
  band: BandGeometry,
  halfWidthPx: number,
  ambient: Ambient | undefined,
  scratch: Scratch | undefined,
): HeightMeasure {
  const rowStepPx = Math.max(1, (2 * halfWidthPx) / 250);
  // About 300 columns: the profile is the median over at most 300 bright ones (more were sampled and then thinned out).
  const stepPx = Math.max(1, band.lengthPx / 300);
  const s = sampleBand(image, band, { halfWidthPx, rowStepPx, stepPx, combine: true, flagSaturated: false, scratch });
  if (ambient) subtractAmbient(s, band, ambient);
  const R = s.rows;
  const N = s.columns;
  const q = s.offsetPx;
  // Rows inside the image in at least half of the columns; the outermost 12 % of them on each side are background.
  let r0 = 0;
  let r1 = R - 1;
  while (r0 < R - 1 && !rowInside(s.valid, N, R, r0)) r0++;
  while (r1 > r0 && !rowInside(s.valid, N, R, r1)) r1--;
  const nb = Math.max(2, Math.round((r1 - r0 + 1) * 0.12));
  const bg = columnBackground(s.planes[0], s.valid, N, R, q, [r0, r0 + nb - 1], [r1 - nb + 1, r1], 9);
  const plane = s.planes[0];
  const core = Math.max(1, band.heightPx / 2);
  const flux = new Float64Array(N);
  coreFluxes(plane, s.valid, bg.base, bg.slope, q, N, R, core, flux);
  // The median over the bright columns of each column's normalised profile: glare beside part of the band, a zero
  // order or one saturated line cannot set it.
  const positive = Array.from(flux).filter((v) => v > 0).sort((x, y) => x - y);
  const p90 = positive.length > 0 ? positive[Math.floor(0.9 * (positive.length - 1))] : 0;
  const noise = neighbourSigma(flux);
  let bright: number[] = [];
  for (let i = 0; i < N; i++) if (flux[i] >= 0.2 * p90 && flux[i] > 5 * noise && flux[i] > 0) bright.push(i);
  if (bright.length > 300) bright = bright.filter((_, n) => n % Math.ceil(bright.length / 300) === 0);
  const value = new Float64Array(R);
  if (bright.length >= 3) {
    const col = new Float64Array(bright.length);
    const columns = Int32Array.from(bright);
    for (let j = 0; j < R; j++) value[j] = medianNormalisedRow(plane, s.valid, bg.base, bg.slope, flux, columns, q[j], j, R, col);
  } else {
    for (let i = 0; i < N; i++) {
      for (let j = 0, k = i * R; j < R; j++, k++) if (s.valid[k]) value[j] += plane[k] - (bg.base[i] + q[j] * bg.slope[i]);
    }
  }
  const sm = new Float64Array(R);
  for (let j = 0; j < R; j++) sm[j] = (value[Math.max(0, j - 1)] + value[j] + value[Math.min(R - 1, j + 1)]) / 3;
  // The plateau: the largest smoothed value nearest the assumed centre.
  let jp = r0;
  for (let j = r0 + 1; j <= r1; j++) if (sm[j] > sm[jp]) jp = j;
  const peak = sm[jp];
  const lo = crossing(sm, q, jp, r0, r1, 0.5 * peak, -1);
  const hi = crossing(sm, q, jp, r0, r1, 0.5 * peak, 1);
  const lo10 = crossing(sm, q, jp, r0, r1, 0.1 * peak, -1);
  const hi10 = crossing(sm, q, jp, r0, r1, 0.1 * peak, 1);
  const clipped = r0 > 0 || r1 < R - 1;
  const complete = clipped || (lo !== null && hi !== null && peak > 0 && lo > q[r0 + nb] && hi < q[r1 - nb]);
  const L = lo ?? q[r0];
  const H = hi ?? q[r1];
  // Half maximum → 1 %: 1.9 × (half maximum → 10 %) for a Gaussian edge (2.33 σ vs 1.28 σ) and a Gaussian band.
  const edge = Math.max(lo10 === null ? 0 : L - lo10, hi10 === null ? 0 : hi10 - H);
  return {
    heightPx: Math.max(1, H - L),
    centreOffsetPx: 0.5 * (L + H),
    wingPx: 1.9 * edge,
    profile: { offsetPx: Float64Array.from(q), value },
    complete,
  };
}

// rowInside and crossing are module functions, not closures made per call (see components.ts find: V8 drops a dead
// closure's optimized code at the next mark-compact, so each photo compiled them again).

/** Row j lies inside the image in at least half of the N columns. */
function rowInside(valid: Uint8Array, N: number, R: number, j: number): boolean {
  let n = 0;
  for (let i = 0; i < N; i++) n += valid[i * R + j];
  return n >= 0.5 * N;
}

/** Offset where the smoothed profile, walking from row jp in direction dir within [r0, r1], first falls below level. */
function crossing(sm: Float64Array, q: Float64Array, jp: number, r0: number, r1: number, level: number, dir: 1 | -1): number | null {
  for (let j = jp; j + dir >= r0 && j + dir <= r1; j += dir) {
    const a = sm[j];
    const b = sm[j + dir];
    if (b < level) return q[j] + ((a - level) / (a - b)) * (q[j + dir] - q[j]);
  }
  return null;
}

// The two loops below are functions of their own (measureHeight runs a few times per photo; see extract.ts for why).

/** Σ D' over the core rows (|q| ≤ core) of every column. */
function coreFluxes(
  plane: Float32Array,
  valid: Uint8Array,
  base: Float64Array,
  slope: Float64Array,
  q: Float64Array,
  N: number,
  R: number,
  core: number,
  flux: Float64Array,
): void {
  for (let i = 0; i < N; i++) {
    let f = 0;
    for (let j = 0, k = i * R; j < R; j++, k++) {
      if (valid[k] && Math.abs(q[j]) <= core) f += plane[k] - (base[i] + q[j] * slope[i]);
    }
    flux[i] = f;
  }
}

/** Median over the given columns of row j's D' / flux (0 when no sample of the row is inside the image). */
function medianNormalisedRow(
  plane: Float32Array,
  valid: Uint8Array,
  base: Float64Array,
  slope: Float64Array,
  flux: Float64Array,
  columns: Int32Array,
  qj: number,
  j: number,
  R: number,
  col: Float64Array,
): number {
  let n = 0;
  for (let t = 0; t < columns.length; t++) {
    const i = columns[t];
    const k = i * R + j;
    if (valid[k]) col[n++] = (plane[k] - (base[i] + qj * slope[i])) / flux[i];
  }
  const sub = col.subarray(0, n);
  sub.sort();
  return n === 0 ? 0 : n % 2 ? sub[(n - 1) >> 1] : 0.5 * (sub[n / 2 - 1] + sub[n / 2]);
}

/** Positions (in the band's frame) where its centre line runs inside the image, [from, to]. */
export function insideRange(band: BandGeometry, width: number, height: number): [number, number] {
  const f = bandFrame(band);
  let lo = -Infinity;
  let hi = Infinity;
  const clip = (s0: number, d: number, max: number): void => {
    if (Math.abs(d) < 1e-12) {
      if (s0 < 0 || s0 > max) {
        lo = Infinity;
        hi = -Infinity;
      }
      return;
    }
    const t0 = (0 - s0) / d;
    const t1 = (max - s0) / d;
    lo = Math.max(lo, Math.min(t0, t1));
    hi = Math.min(hi, Math.max(t0, t1));
  };
  clip(f.startX, f.ux, width - 1);
  clip(f.startY, f.uy, height - 1);
  if (!(hi > lo)) return [0, band.lengthPx];
  return [lo, hi];
}
