/**
 * A photo of which only a band of rows was decoded (a "row window"), and the rows a band search needs.
 *
 * A large JPEG's band is found coarsely on its 1/8-scale preview; the stages after that (refinement, height, extraction)
 * read only the band and a margin around it. Decoding just those rows costs the decoder the entropy decode of the rows
 * above but no colour conversion or copy of the rest, and the photo's 36 MB buffer shrinks to a few MB. The windowed
 * image keeps the photo's full `width` × `height` and its coordinates, so every geometric test (where the band meets
 * the image edge, which samples are outside the photo) is the one made on the whole photo; its `codes` hold the rows
 * [firstRowPx, firstRowPx + rowCount) only. A sampler that would read a row outside the window throws RowWindowMiss,
 * and the caller decodes the whole photo and runs again: the results are those of the whole photo, or no results.
 */
import type { BandGeometry, LinearImage, PointPx } from '../../types.js';
import { bandFrame, imageToBandPx } from './frame.js';
import { solve } from '../../fit/index.js';
import { selectInPlace } from './select.js';

export interface RowWindow {
  /** First decoded row of the photo. */
  firstRowPx: number;
  /** Number of decoded rows. */
  rowCount: number;
}

/** A LinearImage with `codes` for the rows of `rowWindow` only (see the file comment); `data` is not available. */
export type WindowedImage = LinearImage & { rowWindow: RowWindow };

export function rowWindowOf(image: LinearImage): RowWindow | undefined {
  return (image as Partial<WindowedImage>).rowWindow;
}

/** Thrown by a sampler asked for a pixel of the photo that lies outside the decoded rows. */
export class RowWindowMiss extends Error {
  constructor(readonly window: RowWindow, readonly rowPx: number) {
    super(`row ${rowPx} lies outside the decoded rows ${window.firstRowPx}–${window.firstRowPx + window.rowCount - 1}`);
    this.name = 'RowWindowMiss';
  }
}

export interface BandRowsOptions {
  /**
   * Half-width sampled across the band, as a multiple of its height, before `extraPx` is added: the height measurement's
   * first window is max(1.5 H, H/2 + 30 px) and refinement and extraction read less. @default 2
   */
  heightMultiple?: number;
  /** Added to the half-width across and to the ends along the band (px). @default 48 */
  extraPx?: number;
}

export const BAND_ROWS_DEFAULTS = { heightMultiple: 2, extraPx: 48 } as const satisfies Required<BandRowsOptions>;

/**
 * The rows [fromPx, toPx) (clamped to the photo) that cover a band found coarsely: the parallelogram of the band's
 * extent along its axis — from its own ends and the coarse components' ends, whichever reach further — by
 * ±(heightMultiple · heightPx + extraPx) across, along the line images' direction.
 * The refinement may still turn or widen the band beyond it; RowWindowMiss then says so.
 */
export function bandRows(
  band: BandGeometry,
  memberEnds: PointPx[],
  heightPx: number,
  options: BandRowsOptions = {},
): { fromPx: number; toPx: number } {
  const heightMultiple = options.heightMultiple ?? BAND_ROWS_DEFAULTS.heightMultiple;
  const extraPx = options.extraPx ?? BAND_ROWS_DEFAULTS.extraPx;
  const f = bandFrame(band);
  let lo = 0;
  let hi = band.lengthPx;
  for (const pt of memberEnds) {
    const p = imageToBandPx(band, pt).positionPx;
    lo = Math.min(lo, p);
    hi = Math.max(hi, p);
  }
  lo -= extraPx;
  hi += extraPx;
  const half = heightMultiple * band.heightPx + extraPx;
  let yMin = Infinity;
  let yMax = -Infinity;
  for (const p of [lo, hi]) {
    for (const q of [-half, half]) {
      const y = f.startY + p * f.uy + q * f.vy;
      yMin = Math.min(yMin, y);
      yMax = Math.max(yMax, y);
    }
  }
  return { fromPx: Math.max(0, Math.floor(yMin) - 1), toPx: Math.min(heightPx, Math.ceil(yMax) + 2) };
}

export interface GuessBandRowsOptions {
  /** Vertical strips of the coarse image whose row profiles are measured. @default 16 */
  strips?: number;
  /** A strip holds part of the band when its profile's peak exceeds this many σ of its noise. @default 12 */
  peakSigma?: number;
  /** Largest tilt of the band's axis from one strip to the next (deg). @default 25 */
  maxTiltDeg?: number;
  /** Strips whose peak is below this fraction of the brightest strip's are left out (glow, faint stray light). @default 0.02 */
  relativePeak?: number;
  /**
   * Half-width across the band, as a multiple of a strip's run at half its peak (plus one coarse pixel, the run's
   * quantum), before `extraPx`. @default 2
   */
  heightMultiple?: number;
  /** The same for the run down to a tenth of the peak; the larger of the two counts. @default 1.6 */
  tenthMultiple?: number;
  /** Added to the half-width across the band (px). @default 80 */
  extraPx?: number;
}

export const GUESS_BAND_ROWS_DEFAULTS = { strips: 16, peakSigma: 12, maxTiltDeg: 25, relativePeak: 0.02, heightMultiple: 2, tenthMultiple: 1.6, extraPx: 80 } as const satisfies Required<GuessBandRowsOptions>;

/**
 * A cheap guess (~1 ms on a 500 × 375 preview), from a reduced image of the photo alone (a decoder's preview, or
 * a decimated copy; any channels), of the rows bandRows will ask for
 * once the coarse search has found the band: for a caller that starts decoding rows while the search runs.
 * The image is cut into vertical strips; in each, the light of each row summed over the strip is a profile
 * across the band. A quadratic in the row fitted to it robustly is the ambient (gradient, vignetting; the band's rows
 * get no weight) and is taken off. A strip whose profile peaks clearly (noise from neighbouring-row differences),
 * falling to half on both sides within a quarter of the photo, gives the band's centre row there (the midpoint of the
 * half-maximum run) and a half-width: the larger of heightMultiple × the half-maximum run and tenthMultiple × the run
 * down to a tenth (a soft-edged band's wings reach the coarse search's threshold: its components' height was up to
 * 1.3 × the FWHM of a Gaussian band, measured). The band is the longest chain of such strips on a line (see below);
 * the guess spans their centres, extended by twice the steepest step between them at each end (the band may end in
 * a strip too faint to count), ± (the widest half-width + extraPx). On rendered 3024–5120 px photos (tilts ±15°,
 * heights 20–480 px, a continuum, zero orders) it covered bandRows every time, with 1.2–2.1× its rows. It can still be
 * wrong (glare brighter than the band along a line of its own): the caller checks it against bandRows and decodes the
 * right rows when it does not cover them. Null when no strip stands out.
 * `factor`: full-resolution px per pixel of `image` (its pixel (X, Y) is centred on (f·X + (f − 1)/2, f·Y + (f − 1)/2)).
 * An image that holds codes (`codes` and `codeToLinear`, as io's JPEG preview does) is read through its table, and
 * its Float32 `data` is never built.
 */
export function guessBandRows(
  image: Pick<LinearImage, 'width' | 'height' | 'channels' | 'data' | 'codes' | 'codeToLinear'>,
  factor: number,
  heightPx: number,
  options: GuessBandRowsOptions = {},
): { fromPx: number; toPx: number } | null {
  const { width, height, channels: C } = image;
  const d = GUESS_BAND_ROWS_DEFAULTS;
  const K = Math.max(1, Math.min(options.strips ?? d.strips, Math.floor(width / 8)));
  const peakSigma = options.peakSigma ?? d.peakSigma;
  const relativePeak = options.relativePeak ?? d.relativePeak;
  const maxTiltDeg = options.maxTiltDeg ?? d.maxTiltDeg;
  const heightMultiple = options.heightMultiple ?? d.heightMultiple;
  const tenthMultiple = options.tenthMultiple ?? d.tenthMultiple;
  const extraPx = options.extraPx ?? d.extraPx;
  if (height < 8 || width < 8) return null;
  // profiles[k·height + Y]: the light of row Y summed over strip k.
  const profiles = new Float64Array(K * height);
  const edges = new Int32Array(K + 1);
  for (let k = 0; k <= K; k++) edges[k] = Math.floor((k * width) / K);
  for (let k = 0; k <= K; k++) edges[k] *= C; // channels interleaved: a strip's values are contiguous in a row
  const { codes, codeToLinear } = image;
  if (codes !== undefined && codeToLinear !== undefined) {
    for (let Y = 0; Y < height; Y++) addCodeRowByStrip(codes, codeToLinear, Y * width * C, edges, K, profiles, height, Y);
  } else {
    const data = image.data;
    for (let Y = 0; Y < height; Y++) addRowByStrip(data, Y * width * C, edges, K, profiles, height, Y);
  }
  const scratch = new Float64Array(height);
  const f = factor;
  const found: Array<{ x: number; y: number; runPx: number; halfWidthPx: number; peak: number }> = [];
  const trend = new Float64Array(height);
  for (let k = 0; k < K; k++) {
    const p = profiles.subarray(k * height, (k + 1) * height);
    // The ambient under the band: a quadratic in the row fitted robustly (the band's rows get no weight), then off.
    if (!robustQuadratic(p, height, trend, scratch)) continue;
    for (let Y = 0; Y < height; Y++) p[Y] -= trend[Y];
    // Noise from differences of neighbouring rows.
    for (let Y = 1; Y < height; Y++) scratch[Y - 1] = Math.abs(p[Y] - p[Y - 1]);
    const sigma = (1.4826 / Math.SQRT2) * selectInPlace(scratch, height - 1, (height - 1) >> 1);
    let top = 0;
    for (let Y = 1; Y < height; Y++) if (p[Y] > p[top]) top = Y;
    const peak = p[top];
    if (!(peak > peakSigma * sigma) || !(peak > 0)) continue;
    let lo = top;
    while (lo > 0 && p[lo - 1] >= peak / 2) lo--;
    let hi = top;
    while (hi < height - 1 && p[hi + 1] >= peak / 2) hi++;
    // A band's profile falls to half its peak on both sides, within a quarter of the photo.
    if (lo === 0 || hi === height - 1 || hi - lo + 1 > height / 4) continue;
    // And the run down to a tenth of the peak, for a band with soft edges (their light reaches the coarse search).
    let lo10 = lo;
    while (lo10 > 0 && p[lo10 - 1] >= peak / 10) lo10--;
    let hi10 = hi;
    while (hi10 < height - 1 && p[hi10 + 1] >= peak / 10) hi10++;
    // Rows lo…hi are at or above half the peak: in full px the run spans f·lo … f·(hi + 1) − 1.
    const halfWidthPx = Math.max(heightMultiple * f * (hi - lo + 2), tenthMultiple * f * (hi10 - lo10 + 2));
    found.push({ x: f * (k + 0.5) * (width / K), y: (f * (lo + hi + 1)) / 2, runPx: f * (hi - lo + 1), halfWidthPx, peak });
  }
  // The band: the longest chain of strips on a line, strip by strip outwards from any one of them (each within a tilt
  // of maxTiltDeg and the two runs of the last one taken, none fainter than relativePeak of the brightest strip); a glow
  // or lamp off that line covers fewer strips, as does the band's faint light at its ends.
  const tanTilt = Math.tan((maxTiltDeg * Math.PI) / 180);
  type Strip = (typeof found)[number];
  let brightest = 0;
  for (const c of found) brightest = Math.max(brightest, c.peak);
  const chainFrom = (b: number): Strip[] => {
    const onLine = (c: Strip, last: Strip): boolean =>
      c.peak >= relativePeak * brightest && Math.abs(c.y - last.y) <= tanTilt * Math.abs(c.x - last.x) + c.runPx + last.runPx;
    const chain = [found[b]];
    for (let i = b + 1, last = found[b]; i < found.length; i++) if (onLine(found[i], last)) chain.push((last = found[i]));
    for (let i = b - 1, last = found[b]; i >= 0; i--) if (onLine(found[i], last)) chain.unshift((last = found[i]));
    return chain;
  };
  const light = (chain: Strip[]): number => chain.reduce((sum, c) => sum + c.peak, 0);
  let centres: Strip[] = [];
  for (let b = 0; b < found.length; b++) {
    if (found[b].peak < relativePeak * brightest) continue;
    const chain = chainFrom(b);
    if (chain.length > centres.length || (chain.length === centres.length && light(chain) > light(centres))) centres = chain;
  }
  if (centres.length === 0) return null;
  let halfMax = 0;
  let yLo = Infinity;
  let yHi = -Infinity;
  for (const c of centres) {
    halfMax = Math.max(halfMax, c.halfWidthPx);
    yLo = Math.min(yLo, c.y);
    yHi = Math.max(yHi, c.y);
  }
  // The tilt over one strip: the steepest step between strips that carry the band (half the width if alone).
  let step = centres.length === 1 ? halfMax / 2 : 0;
  for (let i = 1; i < centres.length; i++) {
    const dx = centres[i].x - centres[i - 1].x;
    step = Math.max(step, (Math.abs(centres[i].y - centres[i - 1].y) * ((f * width) / K)) / dx);
  }
  const half = halfMax + extraPx;
  return {
    fromPx: Math.max(0, Math.floor(yLo - 2 * step - half)),
    toPx: Math.min(heightPx, Math.ceil(yHi + 2 * step + half) + 1),
  };
}

function robustQuadratic(p: Float64Array, n: number, trend: Float64Array, scratch: Float64Array): boolean {
  const w = new Float64Array(n).fill(1);
  const s = 2 / Math.max(1, n - 1);
  for (let it = 0; it < 6; it++) {
    // Normal equations of the weighted fit (3 × 3, in t, which keeps them well conditioned).
    let s0 = 0, s1 = 0, s2 = 0, s3 = 0, s4 = 0, b0 = 0, b1 = 0, b2 = 0;
    for (let Y = 0; Y < n; Y++) {
      const t = Y * s - 1;
      const wt = w[Y];
      const t2 = t * t;
      s0 += wt;
      s1 += wt * t;
      s2 += wt * t2;
      s3 += wt * t2 * t;
      s4 += wt * t2 * t2;
      b0 += wt * p[Y];
      b1 += wt * t * p[Y];
      b2 += wt * t2 * p[Y];
    }
    const c = solve([[s0, s1, s2], [s1, s2, s3], [s2, s3, s4]], [b0, b1, b2]);
    if (!c) return false;
    for (let Y = 0; Y < n; Y++) {
      const t = Y * s - 1;
      trend[Y] = c[0] + (c[1] + c[2] * t) * t;
      scratch[Y] = Math.abs(p[Y] - trend[Y]);
    }
    const scale = 4.685 * 1.4826 * selectInPlace(scratch, n, n >> 1) + 1e-30;
    for (let Y = 0; Y < n; Y++) {
      const u = (p[Y] - trend[Y]) / scale;
      w[Y] = Math.abs(u) < 1 ? (1 - u * u) ** 2 : 0;
    }
  }
  return true;
}

/** addRowByStrip of values held as codes: the same sums of the same Float32 values, looked up in the table. */
function addCodeRowByStrip(
  codes: Uint8Array | Uint16Array,
  lut: Float32Array,
  from: number,
  edges: Int32Array,
  K: number,
  profiles: Float64Array,
  height: number,
  Y: number,
): void {
  for (let k = 0; k < K; k++) {
    let sum = 0;
    for (let i = from + edges[k], end = from + edges[k + 1]; i < end; i++) sum += lut[codes[i]];
    profiles[k * height + Y] += sum;
  }
}

function addRowByStrip(plane: Float32Array, from: number, edges: Int32Array, K: number, profiles: Float64Array, height: number, Y: number): void {
  for (let k = 0; k < K; k++) {
    let sum = 0;
    for (let i = from + edges[k], end = from + edges[k + 1]; i < end; i++) sum += plane[i];
    profiles[k * height + Y] += sum;
  }
}
