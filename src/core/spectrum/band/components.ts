/**
 * Connected components (8-connected) of a thresholded image with the moments the coarse search needs: weight,
 * weighted centroid and second moments, colour sums, peak, clipped pixels, bounding box. Two-pass labelling with
 * union–find on typed arrays.
 */

export interface Component {
  /** Pixels in the component. */
  area: number;
  /** Σ w, the component's weight (w = the capped signal of each pixel). */
  weight: number;
  /** Weighted centroid. */
  cx: number;
  cy: number;
  /** Weighted central second moments. */
  sxx: number;
  sxy: number;
  syy: number;
  /** Σ of each plane's signal over the component (colour). */
  colour: number[];
  /** The same over the pixels that are not clipped (the true colour of a clipped image is in its wings). */
  colourUnclipped: number[];
  /** Largest signal. */
  peak: number;
  /** Pixels with clipped data. */
  clippedPixels: number;
  minX: number;
  maxX: number;
  minY: number;
  maxY: number;
}

/**
 * Labels `mask` (1 = set) and accumulates the statistics. `weight` gives each pixel's w, `planes` the colour signal,
 * `clipped` a per-pixel clipped fraction; `setPixels` lists the set pixels in ascending order when the caller has
 * them (a threshold pass), so that a mostly empty mask costs its set pixels, not its size; `labels`, width × height,
 * receives the labels (a caller's working array; by default a new one).
 */
// find and union are module functions, not closures made per call: V8 keeps a closure's optimized code only weakly
// once the call that made it has returned, and the mark-compact that each 12-MP photo's decode buffer brings on threw
// it away, so every photo compiled them again (measured with --trace-opt over 14 photos in one process).

/** Root of a's set, halving the path on the way. */
function find(parent: number[], a: number): number {
  while (parent[a] !== a) {
    parent[a] = parent[parent[a]];
    a = parent[a];
  }
  return a;
}

/** Joins the sets of a and b under the smaller root; returns it. */
function union(parent: number[], a: number, b: number): number {
  const ra = find(parent, a);
  const rb = find(parent, b);
  if (ra === rb) return ra;
  if (ra < rb) {
    parent[rb] = ra;
    return ra;
  }
  parent[ra] = rb;
  return rb;
}

export function labelComponents(
  mask: Uint8Array,
  width: number,
  height: number,
  weight: Float32Array,
  planes: Float32Array[],
  clipped: Float32Array,
  setPixels: Int32Array = setPixelsOf(mask),
  labels: Int32Array = new Int32Array(width * height),
): { components: Component[]; labels: Int32Array } {
  labels.fill(-1);
  const parent: number[] = [];
  // Every pass visits the set pixels only, in raster order (the same order as a scan of the whole image).
  for (let s = 0; s < setPixels.length; s++) {
    const k = setPixels[s];
    const x = k % width;
    const y = (k - x) / width;
    let l = -1;
    // Neighbours already visited: W, NW, N, NE.
    for (let t = 0; t < 4; t++) {
      const n =
        t === 0 ? (x > 0 ? k - 1 : -1) : t === 1 ? (y > 0 && x > 0 ? k - width - 1 : -1) : t === 2 ? (y > 0 ? k - width : -1) : y > 0 && x < width - 1 ? k - width + 1 : -1;
      if (n < 0 || labels[n] < 0) continue;
      l = l < 0 ? find(parent, labels[n]) : union(parent, l, labels[n]);
    }
    if (l < 0) {
      l = parent.length;
      parent.push(l);
    }
    labels[k] = l;
  }
  const index = new Int32Array(parent.length).fill(-1);
  const acc: {
    n: number;
    w: number;
    x: number;
    y: number;
    xx: number;
    xy: number;
    yy: number;
    col: number[];
    colU: number[];
    peak: number;
    clip: number;
    minX: number;
    maxX: number;
    minY: number;
    maxY: number;
  }[] = [];
  const np = planes.length;
  for (let s = 0; s < setPixels.length; s++) {
    const k = setPixels[s];
    const x = k % width;
    const y = (k - x) / width;
    const root = find(parent, labels[k]);
    let c = index[root];
    if (c < 0) {
      c = acc.length;
      index[root] = c;
      acc.push({
        n: 0,
        w: 0,
        x: 0,
        y: 0,
        xx: 0,
        xy: 0,
        yy: 0,
        col: new Array<number>(np).fill(0),
        colU: new Array<number>(np).fill(0),
        peak: -Infinity,
        clip: 0,
        minX: x,
        maxX: x,
        minY: y,
        maxY: y,
      });
    }
    const a = acc[c];
    const w = weight[k];
    a.n++;
    a.w += w;
    a.x += w * x;
    a.y += w * y;
    a.xx += w * x * x;
    a.xy += w * x * y;
    a.yy += w * y * y;
    for (let p = 0; p < np; p++) a.col[p] += planes[p][k];
    if (clipped[k] === 0) for (let p = 0; p < np; p++) a.colU[p] += planes[p][k];
    if (w > a.peak) a.peak = w;
    if (clipped[k] > 0) a.clip++;
    if (x < a.minX) a.minX = x;
    if (x > a.maxX) a.maxX = x;
    if (y < a.minY) a.minY = y;
    if (y > a.maxY) a.maxY = y;
  }
  // Labels → index into the returned list (−1: background or a component of zero weight).
  const keep = acc.map((a) => a.w > 0);
  const renumber = new Int32Array(acc.length).fill(-1);
  let next = 0;
  for (let c = 0; c < acc.length; c++) if (keep[c]) renumber[c] = next++;
  for (let s = 0; s < setPixels.length; s++) {
    const k = setPixels[s];
    labels[k] = renumber[index[find(parent, labels[k])]];
  }
  const components = acc
    .filter((a) => a.w > 0)
    .map((a) => {
      const cx = a.x / a.w;
      const cy = a.y / a.w;
      return {
        area: a.n,
        weight: a.w,
        cx,
        cy,
        // Central moments plus 1/12 px² for the pixel's own extent (so a 1-px-wide bar is not infinitely thin).
        sxx: Math.max(0, a.xx / a.w - cx * cx) + 1 / 12,
        sxy: a.xy / a.w - cx * cy,
        syy: Math.max(0, a.yy / a.w - cy * cy) + 1 / 12,
        colour: a.col,
        colourUnclipped: a.colU,
        peak: a.peak,
        clippedPixels: a.clip,
        minX: a.minX,
        maxX: a.maxX,
        minY: a.minY,
        maxY: a.maxY,
      };
    });
  return { components, labels };
}

/** Indices of the set pixels of a mask, ascending. */
export function setPixelsOf(mask: Uint8Array): Int32Array {
  const all = new Int32Array(mask.length);
  let n = 0;
  for (let k = 0; k < mask.length; k++) if (mask[k]) all[n++] = k;
  return all.subarray(0, n);
}

/** Principal axes of a component: major-axis direction (rad, in (−π/2, π/2]) and the standard deviations along both axes. */
export function principalAxes(c: Pick<Component, 'sxx' | 'sxy' | 'syy'>): { angle: number; major: number; minor: number } {
  const t = 0.5 * (c.sxx + c.syy);
  const d = Math.sqrt(0.25 * (c.sxx - c.syy) ** 2 + c.sxy * c.sxy);
  const angle = 0.5 * Math.atan2(2 * c.sxy, c.sxx - c.syy);
  return { angle, major: Math.sqrt(Math.max(0, t + d)), minor: Math.sqrt(Math.max(0, t - d)) };
}

/** Standard deviation of a component along direction (ux, uy). */
export function spreadAlong(c: Pick<Component, 'sxx' | 'sxy' | 'syy'>, ux: number, uy: number): number {
  return Math.sqrt(Math.max(0, ux * ux * c.sxx + 2 * ux * uy * c.sxy + uy * uy * c.syy));
}
