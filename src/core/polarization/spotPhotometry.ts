import { InputError, assertFinite } from '../errors.js';
import type { LinearImage, PointPx } from '../types.js';
import type { MalusPoint } from './malusFit.js';
import { withDefaults } from './options.js';
import { clippedMeanSigma, median, robustSigma } from './statistics.js';

/**
 * Aperture photometry of a laser spot (on a card or screen) through a series of photos: one fixed circular aperture
 * for the whole series, the background from a surrounding annulus, saturation checked frame by frame. A clipped spot
 * reads too low at the bright angles, flattens the Malus curve and makes polarized light look unpolarized, so clipped
 * frames are never used silently.
 */

/** Exposure settings of one frame, as read from its EXIF. */
export interface FrameExposure {
  exposureTimeS?: number;
  iso?: number;
  fNumber?: number;
}

export interface SpotPhotometryOptions {
  /** A fixed aperture instead of the search: centre and radius in pixels. */
  roi?: { x: number; y: number; radiusPx: number };
  /** Linear value at or above which a channel counts as clipped when the image carries no saturation flags. @default 0.998 */
  saturationLevel?: number;
  /** The aperture reaches out to where the spot's radial profile falls to this fraction of its peak. @default 0.01 */
  edgeFraction?: number;
  /** Margin on that radius. @default 1.25 */
  apertureMargin?: number;
  /** Background annulus from innerFactor·R to outerFactor·R. @default 1.5 */
  annulusInnerFactor?: number;
  /** @default 2.5 */
  annulusOuterFactor?: number;
  /** Per-frame EXIF exposure; intensities are normalised by exposure time × ISO / f-number² when these vary. */
  exposures?: readonly FrameExposure[];
  /** Frame names for messages (file names). */
  labels?: readonly string[];
}

export const SPOT_PHOTOMETRY_DEFAULTS = {
  saturationLevel: 0.998,
  edgeFraction: 0.01,
  apertureMargin: 1.25,
  annulusInnerFactor: 1.5,
  annulusOuterFactor: 2.5,
} as const;

export interface SpotFrame {
  index: number;
  label: string;
  /** Aperture sum of the linear signal (sum of channels) minus the background, before exposure normalisation. */
  rawSum: number;
  /** rawSum divided by the frame's relative exposure: the intensity handed to the fit. */
  intensity: number;
  /** Standard uncertainty of `intensity` from the background noise (detector and ambient light), normalised likewise. */
  uncertainty: number;
  /** Background per pixel (σ-clipped mean of the annulus) and its σ. */
  backgroundPerPx: number;
  backgroundSigmaPerPx: number;
  /** Exposure relative to the first frame (1 when not normalised). */
  relativeExposure: number;
  /** Pixels in the aperture with a clipped channel. */
  saturatedPixels: number;
  saturated: boolean;
  /** Brightest channel value in the aperture (1 = clipped). */
  peakValue: number;
  /** Centroid of the background-subtracted signal in the aperture. */
  centroid: PointPx;
}

export interface SpotPhotometry {
  center: PointPx;
  apertureRadiusPx: number;
  annulusInnerPx: number;
  annulusOuterPx: number;
  aperturePixels: number;
  annulusPixels: number;
  /** 'roi' when the user placed the aperture, 'search' when it was found. */
  placement: 'roi' | 'search';
  exposureNormalised: boolean;
  /** Largest distance of a frame's centroid from the aperture centre (a wedged polarizer walks the spot). */
  maxCentroidShiftPx: number;
  frames: SpotFrame[];
  warnings: string[];
}

/**
 * Finds the spot (unless an ROI is given) as the brightest compact blob of the summed series, sets one aperture from
 * its radial profile, and measures every frame through it.
 */
export function measureSpotSeries(images: readonly LinearImage[], options: SpotPhotometryOptions = {}): SpotPhotometry {
  const o = withDefaults(SPOT_PHOTOMETRY_DEFAULTS, options) as Required<Omit<SpotPhotometryOptions, 'roi' | 'exposures' | 'labels'>> &
    SpotPhotometryOptions;
  if (images.length === 0) throw new InputError('photo series: no images', 'images');
  const label = (i: number): string => o.labels?.[i] ?? `frame ${i + 1}`;
  const { width, height } = images[0];
  images.forEach((im, i) => {
    if (im.width !== width || im.height !== height) {
      throw new InputError(
        `${label(i)}: is ${im.width}×${im.height} px but ${label(0)} is ${width}×${height} px; all frames of a series must be the same size and orientation`,
        label(i),
      );
    }
  });
  if (o.exposures && o.exposures.length !== images.length) {
    throw new InputError(`photo series: ${o.exposures.length} exposure records for ${images.length} frames`, 'exposures');
  }
  const warnings: string[] = [];
  const readers = images.map(pixelReader);

  let center: PointPx;
  let radius: number;
  let placement: 'roi' | 'search';
  if (o.roi) {
    assertFinite('roi x', o.roi.x, 0, width - 1);
    assertFinite('roi y', o.roi.y, 0, height - 1);
    assertFinite('roi radius', o.roi.radiusPx, 1, Math.max(width, height));
    center = { x: o.roi.x, y: o.roi.y };
    radius = o.roi.radiusPx;
    placement = 'roi';
  } else {
    const found = findSpot(readers, width, height, o.edgeFraction, o.apertureMargin);
    center = found.center;
    radius = found.radiusPx;
    placement = 'search';
    warnings.push(...found.warnings);
  }
  const inner = radius * o.annulusInnerFactor;
  const outer = radius * o.annulusOuterFactor;
  const ap: number[] = [];
  const ann: number[] = [];
  const x0 = Math.max(0, Math.floor(center.x - outer));
  const x1 = Math.min(width - 1, Math.ceil(center.x + outer));
  const y0 = Math.max(0, Math.floor(center.y - outer));
  const y1 = Math.min(height - 1, Math.ceil(center.y + outer));
  for (let y = y0; y <= y1; y++) {
    for (let x = x0; x <= x1; x++) {
      const r = Math.hypot(x - center.x, y - center.y);
      if (r <= radius) ap.push(y * width + x);
      else if (r >= inner && r <= outer) ann.push(y * width + x);
    }
  }
  if (center.x - radius < 0 || center.y - radius < 0 || center.x + radius > width - 1 || center.y + radius > height - 1) {
    warnings.push('the aperture runs off the edge of the frame: part of the spot is outside the photo; frame the spot with a margin');
  }
  if (ann.length < Math.max(20, ap.length / 2)) {
    warnings.push(`the background annulus has only ${ann.length} pixels inside the frame: the background estimate is weak`);
  }
  if (ann.length < 5) throw new InputError('photo series: no room for a background annulus around the spot inside the frame', 'images');

  const rel = relativeExposures(o.exposures, images.length, label, warnings);
  const frames: SpotFrame[] = images.map((_, i) => {
    const px = readers[i];
    const bgValues = new Float64Array(ann.length);
    for (let k = 0; k < ann.length; k++) bgValues[k] = px.grey(ann[k]);
    const { mean: bg, sigma: bgSigma } = clippedMeanSigma(bgValues);
    let sum = 0;
    let sx = 0;
    let sy = 0;
    let sw = 0;
    let sat = 0;
    let peak = 0;
    for (const idx of ap) {
      const v = px.grey(idx) - bg;
      sum += v;
      if (v > 0) {
        sx += v * (idx % width);
        sy += v * Math.floor(idx / width);
        sw += v;
      }
      if (px.clipped(idx, o.saturationLevel)) sat++;
      peak = Math.max(peak, px.maxChannel(idx));
    }
    // Background noise in the sum: N σ² from the aperture pixels plus the background estimate's own variance σ²/M × N².
    const n = ap.length;
    const sigmaSum = bgSigma * Math.sqrt(n + (n * n) / ann.length);
    return {
      index: i,
      label: label(i),
      rawSum: sum,
      intensity: sum / rel[i],
      uncertainty: Math.max(sigmaSum, 1e-12 * Math.abs(sum) + 1e-300) / rel[i],
      backgroundPerPx: bg,
      backgroundSigmaPerPx: bgSigma,
      relativeExposure: rel[i],
      saturatedPixels: sat,
      saturated: sat > 0,
      peakValue: peak,
      centroid: sw > 0 ? { x: sx / sw, y: sy / sw } : { ...center },
    };
  });
  let maxShift = 0;
  const meanSum = frames.reduce((s, f) => s + Math.max(0, f.rawSum), 0) / frames.length;
  for (const f of frames) {
    // Only frames with real signal have a meaningful centroid (the extinction frames are mostly noise).
    if (f.rawSum > 0.2 * meanSum) maxShift = Math.max(maxShift, Math.hypot(f.centroid.x - center.x, f.centroid.y - center.y));
  }
  if (maxShift > 0.3 * radius) {
    warnings.push(
      `the spot moves by up to ${maxShift.toFixed(1)} px between frames (aperture radius ${radius.toFixed(1)} px): a wedged polarizer or a loose mount walks the beam`,
    );
  }
  return {
    center,
    apertureRadiusPx: radius,
    annulusInnerPx: inner,
    annulusOuterPx: outer,
    aperturePixels: ap.length,
    annulusPixels: ann.length,
    placement,
    exposureNormalised: rel.some((r) => r !== 1),
    maxCentroidShiftPx: maxShift,
    frames,
    warnings,
  };
}

/**
 * Turns a measured series into fit points at the given analyser angles. Saturated frames are excluded (or, with
 * `keepSaturated`, kept and named in a warning); either way they are reported.
 */
export function spotSeriesToPoints(
  photometry: SpotPhotometry,
  anglesDeg: readonly number[],
  options: { keepSaturated?: boolean } = {},
): { points: MalusPoint[]; warnings: string[] } {
  if (anglesDeg.length !== photometry.frames.length) {
    throw new InputError(`photo series: ${anglesDeg.length} angles for ${photometry.frames.length} images; give one angle per image`, 'angles');
  }
  const keep = options.keepSaturated ?? false;
  const saturated = photometry.frames.filter((f) => f.saturated);
  const warnings: string[] = [];
  if (saturated.length > 0) {
    const names = saturated.map((f) => f.label);
    const list = names.length > 6 ? `${names.slice(0, 6).join(', ')} and ${names.length - 6} more` : names.join(', ');
    warnings.push(
      `${saturated.length} of ${photometry.frames.length} frames have a clipped (saturated) spot: ${list}. ` +
        (keep
          ? 'They are KEPT in the fit as asked: clipping flattens the curve and lowers the DoLP. '
          : 'They are left out of the fit, since clipping flattens the curve and makes polarized light look unpolarized. ') +
        'Lower the exposure (or ISO) and re-shoot.',
    );
  }
  const points = photometry.frames.map((f, i) => ({
    angleDeg: anglesDeg[i],
    intensity: f.intensity,
    uncertainty: f.uncertainty,
    source: f.label,
    ...(f.saturated && !keep ? { excluded: true, exclusionReason: 'saturated' } : {}),
  }));
  return { points, warnings };
}

interface PixelReader {
  /** Sum of the channels (linear light) at a pixel index. */
  grey(idx: number): number;
  /** Brightest channel at a pixel. */
  maxChannel(idx: number): number;
  /** Whether any channel is clipped: the image's codes or flags where it has them, else `level`. */
  clipped(idx: number, level: number): boolean;
}

/**
 * Pixel access that reads the integer codes when the image keeps them (photos from io/image), so that a series of
 * large photos never materialises a Float32 copy of each frame.
 */
function pixelReader(im: LinearImage): PixelReader {
  const ch = im.channels;
  if (im.codes && im.codeToLinear) {
    const codes = im.codes;
    const table = im.codeToLinear;
    const max = table.length - 1;
    if (ch === 1) {
      return { grey: (i) => table[codes[i]], maxChannel: (i) => table[codes[i]], clipped: (i) => codes[i] === max };
    }
    return {
      grey: (i) => table[codes[3 * i]] + table[codes[3 * i + 1]] + table[codes[3 * i + 2]],
      maxChannel: (i) => table[Math.max(codes[3 * i], codes[3 * i + 1], codes[3 * i + 2])],
      clipped: (i) => codes[3 * i] === max || codes[3 * i + 1] === max || codes[3 * i + 2] === max,
    };
  }
  const d = im.data;
  const flags = im.saturated;
  if (ch === 1) {
    return { grey: (i) => d[i], maxChannel: (i) => d[i], clipped: (i, level) => (flags ? flags[i] !== 0 : d[i] >= level) };
  }
  const maxChannel = (i: number): number => Math.max(d[3 * i], d[3 * i + 1], d[3 * i + 2]);
  return {
    grey: (i) => d[3 * i] + d[3 * i + 1] + d[3 * i + 2],
    maxChannel,
    clipped: (i, level) => (flags ? flags[i] !== 0 : maxChannel(i) >= level),
  };
}

/** Exposure of each frame relative to the first: t · ISO / N², used only when it varies. */
function relativeExposures(
  exposures: readonly FrameExposure[] | undefined,
  n: number,
  label: (i: number) => string,
  warnings: string[],
): number[] {
  const ones = new Array<number>(n).fill(1);
  if (!exposures) return ones;
  const fields = ['exposureTimeS', 'iso', 'fNumber'] as const;
  const usable = fields.filter((f) => exposures.every((e) => typeof e[f] === 'number' && (e[f] as number) > 0));
  const varies = (f: (typeof fields)[number]): boolean => {
    const v = exposures.map((e) => e[f]).filter((x): x is number => typeof x === 'number' && x > 0);
    return v.length > 1 && Math.max(...v) > Math.min(...v) * (1 + 1e-6);
  };
  const missing = fields.filter((f) => varies(f) && !usable.includes(f));
  if (missing.length > 0) {
    const lacking = exposures.map((e, i) => (missing.some((f) => !(typeof e[f] === 'number')) ? label(i) : null)).filter(Boolean);
    warnings.push(
      `the exposure (${missing.join(', ')}) varies between frames but is missing for ${lacking.join(', ')}: intensities cannot be normalised by it; lock the exposure and re-shoot`,
    );
  }
  const used = usable.filter(varies);
  if (used.length === 0) return ones;
  const scale = exposures.map((e) => {
    let s = 1;
    if (used.includes('exposureTimeS')) s *= e.exposureTimeS!;
    if (used.includes('iso')) s *= e.iso!;
    if (used.includes('fNumber')) s /= e.fNumber! ** 2;
    return s;
  });
  warnings.push(
    `the exposure varies between frames (${used.join(', ')}; auto exposure?): intensities are normalised by exposure time × ISO / f-number², which assumes a linear sensor response; lock the exposure for best results`,
  );
  return scale.map((s) => s / scale[0]);
}

/** Pixel count of the binned summed frame the spot search works on (a 12-MP series is searched at ~0.75 MP). */
const SEARCH_PIXELS = 1_000_000;

/**
 * The brightest compact blob of the summed series and an aperture radius from its radial profile. The search runs on
 * the sum of all frames binned to at most SEARCH_PIXELS (so a phone-sized series costs one pass over its pixels);
 * the centroid and the profile are then measured at full resolution around the spot.
 */
function findSpot(
  readers: PixelReader[],
  width: number,
  height: number,
  edgeFraction: number,
  margin: number,
): { center: PointPx; radiusPx: number; warnings: string[] } {
  const bin = Math.max(1, Math.ceil(Math.sqrt((width * height) / SEARCH_PIXELS)));
  const bw = Math.ceil(width / bin);
  const bh = Math.ceil(height / bin);
  const nb = bw * bh;
  const binned = new Float64Array(nb);
  const counts = new Float64Array(nb);
  for (let y = 0; y < height; y++) {
    const row = Math.floor(y / bin) * bw;
    for (let x = 0; x < width; x++) counts[row + Math.floor(x / bin)]++;
  }
  for (const px of readers) {
    for (let y = 0, i = 0; y < height; y++) {
      const row = Math.floor(y / bin) * bw;
      for (let x = 0; x < width; x++, i++) binned[row + Math.floor(x / bin)] += px.grey(i);
    }
  }
  for (let k = 0; k < nb; k++) binned[k] /= counts[k];
  // Background level and noise of the binned sum from a sparse sample.
  const stride = Math.max(1, Math.floor(nb / 20000));
  const sample: number[] = [];
  for (let i = 0; i < nb; i += stride) sample.push(binned[i]);
  const bg = median(sample);
  const noise = Math.max(robustSigma(sample), 1e-9 * Math.max(1, Math.abs(bg)));
  // Box-smooth at ~1/100 of the frame so that a hot pixel or a speckle grain does not win over the spot.
  const r = Math.max(1, Math.round(Math.min(bw, bh) / 100));
  const smooth = boxBlur(binned, bw, bh, r);
  let best = 0;
  for (let i = 1; i < nb; i++) if (smooth[i] > smooth[best]) best = i;
  const peak = smooth[best] - bg;
  if (!(peak > 10 * (noise / (2 * r + 1))) || !(peak > 0)) {
    throw new InputError(
      'photo series: no spot found (nothing stands out from the background); give the spot position with --roi x,y,r',
      'images',
    );
  }
  // Grow the half-maximum region from the peak (4-connected) for a first centre and the compactness check.
  const half = bg + 0.5 * peak;
  const seen = new Uint8Array(nb);
  const stack = [best];
  seen[best] = 1;
  let area = 0;
  let sx = 0;
  let sy = 0;
  let sw = 0;
  let touches = false;
  while (stack.length) {
    const i = stack.pop()!;
    const x = i % bw;
    const y = (i - x) / bw;
    area++;
    const w = binned[i] - bg;
    if (w > 0) {
      sx += w * x;
      sy += w * y;
      sw += w;
    }
    if (x === 0 || y === 0 || x === bw - 1 || y === bh - 1) touches = true;
    for (const j of [i - 1, i + 1, i - bw, i + bw]) {
      if (j < 0 || j >= nb || seen[j]) continue;
      if ((j === i - 1 && x === 0) || (j === i + 1 && x === bw - 1)) continue;
      if (smooth[j] >= half) {
        seen[j] = 1;
        stack.push(j);
      }
    }
  }
  const warnings: string[] = [];
  if (touches || area > 0.05 * nb) {
    warnings.push(
      'the brightest region is not a compact spot (it is large or touches the frame edge): check the photos, or give the spot with --roi x,y,r',
    );
  }
  const coarse = sw > 0 ? { x: (sx / sw + 0.5) * bin - 0.5, y: (sy / sw + 0.5) * bin - 0.5 } : { x: (best % bw) * bin, y: Math.floor(best / bw) * bin };
  const rHalf = Math.max(1, Math.sqrt(area / Math.PI) * bin);
  const rMax = Math.min(Math.max(10, 12 * rHalf), Math.max(width, height));
  // Full-resolution sum of the frames in a window around the spot.
  const xa = Math.max(0, Math.floor(coarse.x - rMax));
  const xb = Math.min(width - 1, Math.ceil(coarse.x + rMax));
  const ya = Math.max(0, Math.floor(coarse.y - rMax));
  const yb = Math.min(height - 1, Math.ceil(coarse.y + rMax));
  const ww = xb - xa + 1;
  const win = new Float64Array(ww * (yb - ya + 1));
  for (const px of readers) {
    for (let y = ya; y <= yb; y++) for (let x = xa; x <= xb; x++) win[(y - ya) * ww + (x - xa)] += px.grey(y * width + x);
  }
  const at = (x: number, y: number): number => win[(y - ya) * ww + (x - xa)];
  // Rings of 1 px about a centre; the local background is the median ring mean of the outer third (beyond the halo).
  const profile = (c: PointPx): { ring: (k: number) => number; bins: number; local: number } => {
    const bins = Math.ceil(rMax) + 1;
    const ringSum = new Float64Array(bins);
    const ringCount = new Float64Array(bins);
    for (let y = ya; y <= yb; y++) {
      for (let x = xa; x <= xb; x++) {
        const k = Math.floor(Math.hypot(x - c.x, y - c.y));
        if (k >= bins) continue;
        ringSum[k] += at(x, y);
        ringCount[k]++;
      }
    }
    const means: number[] = [];
    for (let k = Math.floor((2 * bins) / 3); k < bins; k++) if (ringCount[k] > 0) means.push(ringSum[k] / ringCount[k]);
    const local = means.length ? median(means) : bg * readers.length;
    return { ring: (k) => (ringCount[k] > 0 ? ringSum[k] / ringCount[k] - local : 0), bins, local };
  };
  // Refine the centre: intensity-weighted centroid above the local background within 2 r_half, twice.
  let center = coarse;
  let local = profile(center).local;
  for (let pass = 0; pass < 2; pass++) {
    let cx = 0;
    let cy = 0;
    let cw = 0;
    const rr = 2 * rHalf;
    for (let y = Math.max(ya, Math.floor(center.y - rr)); y <= Math.min(yb, Math.ceil(center.y + rr)); y++) {
      for (let x = Math.max(xa, Math.floor(center.x - rr)); x <= Math.min(xb, Math.ceil(center.x + rr)); x++) {
        if (Math.hypot(x - center.x, y - center.y) > rr) continue;
        const w = at(x, y) - local;
        if (w > 0) {
          cx += w * x;
          cy += w * y;
          cw += w;
        }
      }
    }
    if (cw > 0) center = { x: cx / cw, y: cy / cw };
    local = profile(center).local;
  }
  const prof = profile(center);
  let top = 0;
  for (let k = 0; k < Math.max(2, Math.ceil(rHalf)) && k < prof.bins; k++) top = Math.max(top, prof.ring(k));
  let edge = prof.bins - 1;
  for (let k = 1; k < prof.bins; k++) {
    if (prof.ring(k) <= edgeFraction * top) {
      edge = k;
      break;
    }
  }
  if (edge >= Math.floor((2 * prof.bins) / 3)) {
    warnings.push('the spot has no clear edge (a wide halo): the aperture may not hold all of its light; consider --roi');
  }
  return { center, radiusPx: Math.max(3, edge * margin), warnings };
}

/** Box blur of half-width r by a summed-area table (edges use the part of the box inside the frame). */
function boxBlur(src: Float64Array, width: number, height: number, r: number): Float64Array {
  const sat = new Float64Array((width + 1) * (height + 1));
  for (let y = 0; y < height; y++) {
    let row = 0;
    for (let x = 0; x < width; x++) {
      row += src[y * width + x];
      sat[(y + 1) * (width + 1) + x + 1] = sat[y * (width + 1) + x + 1] + row;
    }
  }
  const out = new Float64Array(width * height);
  for (let y = 0; y < height; y++) {
    const ya = Math.max(0, y - r);
    const yb = Math.min(height, y + r + 1);
    for (let x = 0; x < width; x++) {
      const xa = Math.max(0, x - r);
      const xb = Math.min(width, x + r + 1);
      const s = sat[yb * (width + 1) + xb] - sat[ya * (width + 1) + xb] - sat[yb * (width + 1) + xa] + sat[ya * (width + 1) + xa];
      out[y * width + x] = s / ((yb - ya) * (xb - xa));
    }
  }
  return out;
}
