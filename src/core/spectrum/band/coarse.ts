/**
 * Coarse band search on the decimated, flattened photo.
 *
 * 1. Threshold the 3 × 3-smoothed detail layer of the luminance (the image less its local mean over ~1/25 of its size,
 *    which removes glare and halos but keeps line images, band edges and compact spots) at k σ and label the connected
 *    components.
 * 2. The band is the set of components lying along one straight line: line images (parallel bars) strung along the
 *    dispersion axis, or one long strip (a continuum). Candidate lines come from each strong component's principal
 *    axes and from the line through each pair of strong components; a line scores the (capped) signal of the
 *    components that lie on it with a cross-extent compatible with the band's. Off-axis glare and reflections lose.
 * 3. A lone component is ambiguous (one line image, or one continuous strip): a colour that changes along it means a
 *    dispersed strip (axis along it); a uniform colour and a width below that of a slit image mean one line image
 *    (axis across it).
 * 4. The zero order lies on the same axis and is left out when it sits at one end of the band beyond a wide gap and
 *    looks like the undispersed sum of the rest (its colour matches the summed colour of the other components, or it
 *    is clipped to white).
 */
import { InputError } from '../../errors.js';
import type { BandGeometry, PointPx } from '../../types.js';
import { type Component, labelComponents, principalAxes, spreadAlong } from './components.js';
import type { Decimated } from './decimate.js';
import { boxMean3, detailLayer, imageSigma } from './flatten.js';
import { foldAxisAngleDeg } from './frame.js';
import { type Scratch, takeOrNew } from '../scratch.js';
import { selectInPlace } from './select.js';

const DEG = 180 / Math.PI;
const SQRT3 = Math.sqrt(3);

export interface CoarseOptions {
  detectionSigma: number;
  minSignal: number;
  source: string;
  /** Working arrays for the per-pixel passes (see scratch.ts); the result holds none of them. */
  scratch?: Scratch;
}

export interface CoarseBand {
  /** First estimate, full-resolution pixels. */
  band: BandGeometry;
  /** The zero order found on the axis and left out (full-resolution centroid), or null. */
  zeroOrder: PointPx | null;
  /** Both ends of every member along the axis (full-resolution px): the band's extent, whatever the final axis. */
  memberEnds: PointPx[];
  /** Components above the threshold, and how many lie on the band. */
  components: number;
  members: number;
  /** Luminance residual (decimated) for the refinement at low resolution. */
  luminance: Float32Array;
  noiseSigma: number;
  threshold: number;
  /** How the axis was decided. */
  rule: 'collinear components' | 'strip with a colour gradient' | 'strip wider than a line image' | 'single line image' | 'edges of one strip';
}

interface Hypothesis {
  px: number;
  py: number;
  angle: number;
  heightPx: number;
  score: number;
  members: number[];
  single: number | null;
  across: boolean;
}

export function coarseBand(dec: Decimated, residual: Float32Array[], options: CoarseOptions): CoarseBand {
  const { width: w, height: h, factor: f } = dec;
  const np = residual.length;
  const lum = meanOfPlanes(residual, w * h);
  // Detection on the detail layer (glare and halos broader than ~25 coarse px removed), 3 × 3-smoothed.
  const detailRadius = Math.max(4, Math.round(Math.max(w, h) / 50));
  const scratch = options.scratch;
  const s3 = boxMean3(detailLayer(lum, w, h, detailRadius, scratch), w, h, scratch);
  const { median, sigma } = imageSigma(s3, scratch);
  const threshold = median + Math.max(options.detectionSigma * sigma, options.minSignal);
  const mask = takeOrNew(scratch, 'coarse.mask', Uint8Array, w * h);
  const detected = thresholdMask(s3, threshold, mask, takeOrNew(scratch, 'coarse.detected', Int32Array, w * h, false));
  const any = detected.length;
  if (any < 2) throw noSpectrum(options.source, s3, median, sigma);
  // Weight of a pixel: its signal above the background, capped at the 90th percentile of the detected pixels so that a
  // saturated zero order or lamp does not outweigh the band by its brightness alone.
  const weight = cappedWeights(s3, detected, median, takeOrNew(scratch, 'coarse.weight', Float32Array, w * h));
  const labelled = takeOrNew(scratch, 'coarse.labels', Int32Array, w * h, false); // filled with −1 by labelComponents
  const { components: all, labels } = labelComponents(mask, w, h, weight, residual, dec.clipped, detected, labelled);
  let maxWeight = 0;
  for (const c of all) if (c.weight > maxWeight) maxWeight = c.weight;
  const comps = all.filter((c) => c.area >= 2 && c.weight >= 0.002 * maxWeight);
  if (comps.length === 0) throw noSpectrum(options.source, s3, median, sigma);
  const order = comps.map((_, i) => i).sort((a, b) => comps[b].weight - comps[a].weight);
  const top = order.slice(0, 14);

  // Candidate axes.
  const hyps: Hypothesis[] = [];
  const evaluate = (px: number, py: number, angle: number, heightPx: number, single: number | null, across: boolean): void =>
    void hyps.push(axisHypothesis(comps, px, py, angle, heightPx, single, across));
  for (const i of top) {
    const c = comps[i];
    const ax = principalAxes(c);
    // Along the component's major axis (a strip), and across it (a line image).
    evaluate(c.cx, c.cy, ax.angle, 2 * SQRT3 * ax.minor, i, false);
    evaluate(c.cx, c.cy, ax.angle + Math.PI / 2, 2 * SQRT3 * ax.major, i, true);
  }
  for (let a = 0; a < top.length; a++) {
    for (let b = a + 1; b < top.length; b++) {
      const c = comps[top[a]];
      const d = comps[top[b]];
      const dx = d.cx - c.cx;
      const dy = d.cy - c.cy;
      const dist = Math.hypot(dx, dy);
      if (dist < 2) continue;
      const angle = Math.atan2(dy, dx);
      const nx = -dy / dist;
      const ny = dx / dist;
      const hgt = 2 * SQRT3 * Math.max(spreadAlong(c, nx, ny), spreadAlong(d, nx, ny));
      if (dist < 0.5 * hgt) continue; // side by side across the axis, not along it
      evaluate(c.cx, c.cy, angle, hgt, null, false);
    }
  }
  // Best score; among equals the most members, then a line through two components (its direction is the best defined).
  hyps.sort((a, b) => b.score - a.score || b.members.length - a.members.length || (a.single === null ? 0 : 1) - (b.single === null ? 0 : 1));
  let best = hyps[0];
  let rule: CoarseBand['rule'] = 'collinear components';
  // A lone component: the two readings tie; decide by colour, else by width.
  const lone = best.members.length === 1 ? best.members[0] : null;
  if (lone !== null) {
    const c = comps[lone];
    const ax = principalAxes(c);
    const along = hyps.find((hh) => hh.single === lone && !hh.across)!;
    const across = hyps.find((hh) => hh.single === lone && hh.across)!;
    const gradient = np === 3 ? colourGradient(c, lone, labels, residual, w, ax.angle) : 0;
    const minorFullPx = 2 * SQRT3 * ax.minor * f;
    if (Math.abs(gradient) >= 0.5) {
      best = along;
      rule = 'strip with a colour gradient';
    } else if (minorFullPx >= 16) {
      best = along;
      rule = 'strip wider than a line image';
    } else {
      best = across;
      rule = 'single line image';
    }
  }

  // Two parallel strips of equal length with light between them are the two edges of one filled strip (the detail
  // layer hollows a strip wider than its window), not two line images: the axis runs along them.
  let heightOverride: number | null = null;
  if (lone === null && best.members.length === 2) {
    const [a, b] = best.members.map((i) => comps[i]);
    const axA = principalAxes(a);
    const axB = principalAxes(b);
    let turn = Math.abs(axA.angle - axB.angle) % Math.PI;
    if (turn > Math.PI / 2) turn = Math.PI - turn;
    const lenA = 2 * SQRT3 * axA.major;
    const lenB = 2 * SQRT3 * axB.major;
    const dist = Math.hypot(a.cx - b.cx, a.cy - b.cy);
    const level = (x: number, y: number): number => {
      let t = 0;
      let n = 0;
      for (let dy = -1; dy <= 1; dy++) {
        for (let dx = -1; dx <= 1; dx++) {
          const xi = Math.round(x) + dx;
          const yi = Math.round(y) + dy;
          if (xi >= 0 && yi >= 0 && xi < w && yi < h) {
            t += lum[yi * w + xi];
            n++;
          }
        }
      }
      return n > 0 ? t / n : 0;
    };
    const edges =
      turn < (10 / 180) * Math.PI &&
      lenA > 3 * 2 * SQRT3 * axA.minor &&
      lenB > 3 * 2 * SQRT3 * axB.minor &&
      Math.min(lenA, lenB) >= 0.75 * Math.max(lenA, lenB) &&
      dist <= Math.max(lenA, lenB) &&
      level(0.5 * (a.cx + b.cx), 0.5 * (a.cy + b.cy)) >= 0.5 * Math.min(level(a.cx, a.cy), level(b.cx, b.cy));
    if (edges) {
      best = { ...best, px: 0.5 * (a.cx + b.cx), py: 0.5 * (a.cy + b.cy), angle: 0.5 * (axA.angle + axB.angle + (Math.abs(axA.angle - axB.angle) > Math.PI / 2 ? Math.PI : 0)), single: null, across: false };
      heightOverride = dist + SQRT3 * (axA.minor + axB.minor);
      rule = 'edges of one strip';
    }
  }

  // Members, the axis through them, the zero order.
  let members = best.members.map((i) => comps[i]);
  let angle = best.angle;
  const lineOfMembers = members.length >= 3 && lone === null;
  if (lineOfMembers) angle = refineLine(members, angle);
  let ux = Math.cos(angle);
  let uy = Math.sin(angle);
  const along = (c: Component): number => (c.cx - best.px) * ux + (c.cy - best.py) * uy;
  members.sort((a, b) => along(a) - along(b));
  const zero = members.length >= 3 ? findZeroOrder(members, ux, uy, along, np === 3) : null;
  let zeroOrder: PointPx | null = null;
  if (zero !== null) {
    zeroOrder = { x: f * members[zero].cx + (f - 1) / 2, y: f * members[zero].cy + (f - 1) / 2 };
    members = members.filter((_, i) => i !== zero);
    if (members.length >= 3 && lineOfMembers) {
      angle = refineLine(members, angle);
      ux = Math.cos(angle);
      uy = Math.sin(angle);
    }
  }

  // Initial geometry (decimated px, then full resolution).
  const nx = -uy;
  const ny = ux;
  let pMin = Infinity;
  let pMax = -Infinity;
  let qSum = 0;
  let wSum = 0;
  const heights: { v: number; w: number }[] = [];
  for (const c of members) {
    const p = (c.cx - best.px) * ux + (c.cy - best.py) * uy;
    const half = SQRT3 * spreadAlong(c, ux, uy);
    pMin = Math.min(pMin, p - half);
    pMax = Math.max(pMax, p + half);
    qSum += c.weight * ((c.cx - best.px) * nx + (c.cy - best.py) * ny);
    wSum += c.weight;
    heights.push({ v: 2 * SQRT3 * spreadAlong(c, nx, ny), w: c.weight });
  }
  const qMean = qSum / wSum;
  const heightDec = heightOverride ?? weightedMedian(heights);
  const pMid = 0.5 * (pMin + pMax);
  const cxDec = best.px + pMid * ux + qMean * nx;
  const cyDec = best.py + pMid * uy + qMean * ny;
  // Slant: the mean orientation of the elongated members (line images), relative to the axis normal.
  let slant = 0;
  let sw = 0;
  for (const c of members) {
    const ax = principalAxes(c);
    if (ax.major < 2.5 * ax.minor || 2 * SQRT3 * ax.major < 4) continue;
    let d = ((ax.angle - angle - Math.PI / 2) * DEG) % 180;
    if (d > 90) d -= 180;
    if (d <= -90) d += 180;
    if (Math.abs(d) > 20) continue;
    slant += d * c.weight;
    sw += c.weight;
  }
  if (sw > 0) slant /= sw;
  const full = (x: number, y: number): PointPx => ({ x: f * x + (f - 1) / 2, y: f * y + (f - 1) / 2 });
  const memberEnds: PointPx[] = [];
  for (const c of members) {
    const half = SQRT3 * spreadAlong(c, ux, uy);
    memberEnds.push(full(c.cx - half * ux, c.cy - half * uy), full(c.cx + half * ux, c.cy + half * uy));
  }
  const band: BandGeometry = {
    angleDeg: foldAxisAngleDeg(angle * DEG),
    slantDeg: slant,
    center: { x: f * cxDec + (f - 1) / 2, y: f * cyDec + (f - 1) / 2 },
    lengthPx: Math.max(4, (pMax - pMin) * f),
    heightPx: Math.max(4, heightDec * f),
  };
  return {
    band,
    zeroOrder,
    memberEnds,
    components: comps.length,
    members: members.length,
    luminance: lum,
    noiseSigma: sigma,
    threshold,
    rule,
  };
}

/**
 * The members (components on the line through (px, py) along `angle`, no farther from it than 0.3 × heightPx + 1.5 and
 * no wider across it than 1.6 × heightPx + 3) and their summed weight. A module function, not a closure made per call:
 * V8 drops a dead closure's optimized code at the next mark-compact, and each 12-MP photo brings one on (see
 * components.ts find).
 */
function axisHypothesis(comps: Component[], px: number, py: number, angle: number, heightPx: number, single: number | null, across: boolean): Hypothesis {
  const ux = Math.cos(angle);
  const uy = Math.sin(angle);
  const members: number[] = [];
  let score = 0;
  for (let i = 0; i < comps.length; i++) {
    const c = comps[i];
    const d = Math.abs(-(c.cx - px) * uy + (c.cy - py) * ux);
    const ext = 2 * SQRT3 * spreadAlong(c, -uy, ux);
    if (d <= 0.3 * heightPx + 1.5 && ext <= 1.6 * heightPx + 3) {
      members.push(i);
      score += c.weight;
    }
  }
  return { px, py, angle, heightPx, score, members, single, across };
}

function noSpectrum(source: string, s3: Float32Array, median: number, sigma: number): InputError {
  let peak = -Infinity;
  for (let k = 0; k < s3.length; k++) if (s3[k] > peak) peak = s3[k];
  const detail =
    sigma > 0 || peak > median
      ? `nothing stands out of the background (brightest ${(peak - median).toPrecision(2)} above it, noise ${sigma.toPrecision(2)})`
      : 'the image is flat';
  return new InputError(`no spectrum found in ${source}: ${detail}`, source);
}

/** Orthogonal regression through the members' centroids (weighted); keeps `angle` when the fit turns by > 30°. */
function refineLine(members: Component[], angle: number): number {
  let w = 0, x = 0, y = 0;
  for (const c of members) {
    w += c.weight;
    x += c.weight * c.cx;
    y += c.weight * c.cy;
  }
  x /= w;
  y /= w;
  let sxx = 0, sxy = 0, syy = 0;
  for (const c of members) {
    sxx += c.weight * (c.cx - x) ** 2;
    sxy += c.weight * (c.cx - x) * (c.cy - y);
    syy += c.weight * (c.cy - y) ** 2;
  }
  const fit = principalAxes({ sxx, sxy, syy });
  let d = fit.angle - angle;
  while (d > Math.PI / 2) d -= Math.PI;
  while (d <= -Math.PI / 2) d += Math.PI;
  return Math.abs(d) <= (30 / 180) * Math.PI ? angle + d : angle;
}

/** Correlation between position along `angle` and the red-minus-blue share of a component's pixels. */
function colourGradient(c: Component, label: number, labels: Int32Array, planes: Float32Array[], w: number, angle: number): number {
  const ux = Math.cos(angle);
  const uy = Math.sin(angle);
  let sw = 0, st = 0, sc = 0, stt = 0, scc = 0, stc = 0;
  for (let y = c.minY; y <= c.maxY; y++) {
    for (let x = c.minX; x <= c.maxX; x++) {
      const k = y * w + x;
      if (labels[k] !== label) continue;
      const r = Math.max(0, planes[0][k]);
      const g = Math.max(0, planes[1][k]);
      const b = Math.max(0, planes[2][k]);
      const sum = r + g + b;
      if (!(sum > 0)) continue;
      const chroma = (r - b) / sum;
      const t = (x - c.cx) * ux + (y - c.cy) * uy;
      sw += sum;
      st += sum * t;
      sc += sum * chroma;
      stt += sum * t * t;
      scc += sum * chroma * chroma;
      stc += sum * t * chroma;
    }
  }
  if (!(sw > 0)) return 0;
  const vt = stt / sw - (st / sw) ** 2;
  const vc = scc / sw - (sc / sw) ** 2;
  const cov = stc / sw - (st / sw) * (sc / sw);
  return vt > 0 && vc > 1e-6 ? cov / Math.sqrt(vt * vc) : 0;
}

/**
 * Index of the member at one end that is the zero order, or null. Members are sorted along the axis. The end member
 * qualifies when a gap of at least 35 % of the rest's span (and 6 px) parts it from the rest and it looks like their
 * undispersed sum: chromaticity within 0.15 of the rest's summed chromaticity, or clipped to near white; without
 * colour the gap must exceed 1.2 × the rest's span. (The zero order also holds the light of lines too faint, or too far
 * in the violet or red, to be members: a rendered helium tube's was 0.125 off, and missed at the former 0.12. On the
 * 36 photos of the rendered sweeps, renderedSweep.test.ts, the band search now sees it in 28 of the 29 where it is in
 * the frame, within 1.4 px, and in none of the others.)
 */
function findZeroOrder(members: Component[], ux: number, uy: number, along: (c: Component) => number, colour: boolean): number | null {
  const ends = [0, members.length - 1];
  let best: number | null = null;
  let bestRatio = -Infinity;
  for (const e of ends) {
    const rest = members.filter((_, i) => i !== e);
    const half = (c: Component): number => SQRT3 * spreadAlong(c, ux, uy);
    const restLo = Math.min(...rest.map((c) => along(c) - half(c)));
    const restHi = Math.max(...rest.map((c) => along(c) + half(c)));
    const c = members[e];
    const gap = e === 0 ? restLo - (along(c) + half(c)) : along(c) - half(c) - restHi;
    const span = restHi - restLo;
    const ratio = gap / Math.max(span, 1e-9);
    // The zero order carries the light of all lines: not a speck (a cosmic-ray hit) and not fainter than a typical line.
    const weights = rest.map((r) => r.weight).sort((p, q) => p - q);
    // A zero order a little fainter than the median line still passes when it is as big as the brightest line's image
    // (with few lines, one or two bright ones, the median is a bright line; a speck is never that big).
    const heaviest = rest.reduce((m, r) => (r.weight > m.weight ? r : m), rest[0]);
    const medianWeight = weights[weights.length >> 1];
    if (gap < 3 || c.area < 4 || !(c.weight >= medianWeight || (c.weight >= 0.5 * medianWeight && c.area >= 0.5 * heaviest.area))) continue;
    // Evidence, one point each: it looks like the undispersed sum of the rest (colour of their summed light, or clipped
    // to white); it is a compact round spot whose size does not match the line images' height (a pinhole source); a
    // wide gap parts it from the rest. Two points are needed, so a lone line beyond a wide gap (Hα) stays.
    let points = 0;
    if (colour) {
      // Colours from unclipped pixels where there are any (clipping whitens the core of a bright image).
      const own = (r: Component): number[] => (r.colourUnclipped.some((v) => v > 0) ? r.colourUnclipped : r.colour);
      const sum = [0, 0, 0];
      for (const r of rest) for (let k = 0; k < 3; k++) sum[k] += Math.max(0, own(r)[k]);
      const chroma = (v: number[]): number[] => {
        const t = Math.max(1e-12, Math.max(0, v[0]) + Math.max(0, v[1]) + Math.max(0, v[2]));
        return v.map((x) => Math.max(0, x) / t);
      };
      const a = chroma(own(c));
      const b = chroma(sum);
      const dist = Math.max(...a.map((x, k) => Math.abs(x - b[k])));
      const white = c.clippedPixels >= 0.2 * c.area && Math.min(...chroma(c.colour)) >= 0.22;
      if (dist <= 0.15 || white) points++;
    }
    const ax = principalAxes(c);
    const heights = rest.map((r) => 2 * SQRT3 * spreadAlong(r, -uy, ux)).sort((p, q) => p - q);
    const bandHeight = heights[heights.length >> 1];
    const ownHeight = 2 * SQRT3 * spreadAlong(c, -uy, ux);
    if (ax.major <= 1.6 * ax.minor && (ownHeight < 0.7 * bandHeight || ownHeight > 1.35 * bandHeight)) points++;
    // The gap is judged against the span of the rest: 0.3 of it at least (an argon tube at 1.23 nm/px, its lines
    // bunched far from a zero order seen off the camera axis, gives 0.33; a lone Hα beyond Hβ–Hδ stands about 2 from
    // them on a linear scale: 170 nm of gap over a 76-nm span).
    if (gap >= 6 && ratio >= 0.3) points += !colour && ratio >= 1.2 ? 2 : 1;
    if (points >= 2 && ratio > bestRatio) {
      best = e;
      bestRatio = ratio;
    }
  }
  return best;
}

function weightedMedian(items: { v: number; w: number }[]): number {
  const s = [...items].sort((a, b) => a.v - b.v);
  const total = s.reduce((a, b) => a + b.w, 0);
  let acc = 0;
  for (const it of s) {
    acc += it.w;
    if (acc >= total / 2) return it.v;
  }
  return s[s.length - 1]?.v ?? 0;
}

function meanOfPlanes(planes: Float32Array[], n: number): Float32Array {
  const out = new Float32Array(n);
  const inv = 1 / planes.length;
  for (const plane of planes) addScaled(out, plane, inv, n);
  return out;
}

/** out += plane · factor (a loop of its own, so that it is compiled once for all planes). */
function addScaled(out: Float32Array, plane: Float32Array, factor: number, n: number): void {
  for (let k = 0; k < n; k++) out[k] += plane[k] * factor;
}

/** Sets mask[k] = 1 where values[k] ≥ threshold; returns those k, ascending (the later passes visit only them). */
function thresholdMask(values: Float32Array, threshold: number, mask: Uint8Array, set: Int32Array): Int32Array {
  let n = 0;
  for (let k = 0; k < values.length; k++) {
    if (values[k] >= threshold) {
      mask[k] = 1;
      set[n++] = k;
    }
  }
  return set.subarray(0, n);
}

function cappedWeights(values: Float32Array, set: Int32Array, level: number, weight: Float32Array): Float32Array {
  const count = set.length;
  const detected = new Float32Array(count);
  for (let n = 0; n < count; n++) detected[n] = values[set[n]] - level;
  const cap = selectInPlace(detected, count, Math.floor(0.9 * (count - 1)));
  for (let n = 0; n < count; n++) weight[set[n]] = Math.min(values[set[n]] - level, cap);
  return weight;
}
