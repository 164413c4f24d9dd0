/**
 * Labels for the peaks of a spectrum plot, written upright (a quarter turn, reading upwards) above their peaks.
 *
 * Where peaks crowd, the labels move sideways to the nearest positions at which no two overlap: the least-squares
 * placement under a minimum spacing s, which is the isotonic regression of dᵢ − i·s (dᵢ the peaks' positions in
 * order), solved exactly by the pool-adjacent-violators algorithm (Ayer, Brunk, Ewing, Reid & Silverman 1955; Barlow,
 * Bartholomew, Bremner & Brunk 1972, ch. 1) and then clipped to the plot's width, which keeps it optimal for bounds
 * common to all. A label that moved is tied to its peak by a leader: straight up from the peak, then aslant to the
 * label. The labels of one crowd share a baseline above every trace and marker beneath them, so no leader crosses
 * another (their order is the same at both ends) and no label crosses a trace. Spectral line atlases label their
 * lines this way (common practice, no source).
 *
 * Everything is in the plot area's pixels, y downwards; text extents are estimated (labelLayout.ts).
 */
import type { Selection } from 'd3';
import { textWidthPx } from './labelLayout.js';

/** Horizontal room one upright label takes, as a multiple of its font size (line height plus a little air). */
export const UPRIGHT_LABEL_PITCH_EM = 1.2;
/** Clearance between a peak's marker top and its label or leader (px). */
const MARKER_GAP_PX = 3;
/** Height of a peak marker above the trace (plotSpectrum's triangle: 3 px clear of the trace, 7 px tall). */
const MARKER_HEIGHT_PX = 10;
/** How far a leader rises aslant from the crowd's common kink to its label (px). */
const SLANT_RISE_PX = 9;
/** Clearance between the highest trace or marker under a crowd and its leaders' kink (px). */
const CROWD_GAP_PX = 4;

/**
 * Positions as close as possible to `desired` (sorted ascending) in the least-squares sense, at least `spacing` apart,
 * all within [lo, hi]. When they cannot all fit they are packed at `spacing` from `lo`.
 */
export function spreadPositions(desired: readonly number[], spacing: number, lo: number, hi: number): number[] {
  const n = desired.length;
  if (n === 0) return [];
  for (let i = 1; i < n; i++) {
    if (!(desired[i] >= desired[i - 1])) throw new RangeError('spreadPositions: desired positions must be sorted ascending');
  }
  // Isotonic regression of eᵢ = dᵢ − i·s by pooling adjacent violators: blocks of equal value, merged while out of order.
  const sums: number[] = [];
  const counts: number[] = [];
  for (let i = 0; i < n; i++) {
    let sum = desired[i] - i * spacing;
    let count = 1;
    while (sums.length > 0 && sums[sums.length - 1] / counts[counts.length - 1] >= sum / count) {
      sum += sums.pop()!;
      count += counts.pop()!;
    }
    sums.push(sum);
    counts.push(count);
  }
  const upper = Math.max(lo, hi - (n - 1) * spacing);
  const out: number[] = [];
  for (let b = 0; b < sums.length; b++) {
    const q = Math.min(upper, Math.max(lo, sums[b] / counts[b]));
    for (let k = 0; k < counts[b]; k++) out.push(q + out.length * spacing);
  }
  return out;
}

export interface PeakLabelRequest {
  /** The peak's position across the plot (px). */
  xPx: number;
  text: string;
  fontPx: number;
}

/** Labels (indices into the requests, in the peaks' order) whose peaks and labels share room, and the span they cover (px). */
export interface LabelCrowd {
  members: number[];
  x0Px: number;
  x1Px: number;
}

/** The sideways part of the layout, which needs no vertical scale. */
export interface PeakLabelArrangement {
  /** Requests in the order of their peaks' positions (indices into the requests). */
  order: number[];
  /** Where each request's label stands (px, indexed like the requests). */
  labelXPx: number[];
  /** Crowds: runs of labels (in `order`) whose peaks and labels share room, each with the span it covers (px). */
  crowds: LabelCrowd[];
  /** Estimated length of each label's text (px). */
  lengthPx: number[];
}

/** Spreads the labels sideways within [0, widthPx] and groups them into crowds. */
export function arrangePeakLabels(requests: readonly PeakLabelRequest[], widthPx: number): PeakLabelArrangement {
  const order = requests.map((_, i) => i).sort((a, b) => requests[a].xPx - requests[b].xPx || a - b);
  const pitch = Math.max(0, ...requests.map((r) => UPRIGHT_LABEL_PITCH_EM * r.fontPx));
  const half = pitch / 2;
  const spread = spreadPositions(
    order.map((i) => requests[i].xPx),
    pitch,
    half,
    widthPx - half,
  );
  const labelXPx = new Array<number>(requests.length);
  order.forEach((i, k) => (labelXPx[i] = spread[k]));
  const crowds: PeakLabelArrangement['crowds'] = [];
  for (const i of order) {
    const x0Px = Math.min(requests[i].xPx, labelXPx[i]) - half;
    const x1Px = Math.max(requests[i].xPx, labelXPx[i]) + half;
    const last = crowds[crowds.length - 1];
    if (last && x0Px < last.x1Px) {
      last.members.push(i);
      last.x1Px = Math.max(last.x1Px, x1Px);
    } else crowds.push({ members: [i], x0Px, x1Px });
  }
  return { order, labelXPx, crowds, lengthPx: requests.map((r) => textWidthPx(r.text, r.fontPx)) };
}

export interface PlacedPeakLabel {
  /** Where the text starts (its lower end, upright text reading upwards) and its centre line across (px). */
  xPx: number;
  startYPx: number;
  /** The upper end of the text (px). */
  endYPx: number;
  /** Leader from the peak's marker to the label's start, as a polyline (empty when the label sits on its peak). */
  leader: Array<[number, number]>;
}

/**
 * The vertical part: each crowd's baseline above the highest trace or marker under it (`ceilingPx(x0, x1)` gives the
 * smallest y any trace reaches across [x0, x1]), leaders for the labels that moved or stand above a higher
 * neighbour. `markerTopPx` is the top of the trace at each request's peak.
 */
export function placePeakLabels(
  requests: readonly PeakLabelRequest[],
  arrangement: PeakLabelArrangement,
  markerTopPx: readonly number[],
  ceilingPx: (x0Px: number, x1Px: number) => number,
): PlacedPeakLabel[] {
  const placed = new Array<PlacedPeakLabel>(requests.length);
  for (const crowd of arrangement.crowds) {
    const markersTop = Math.min(...crowd.members.map((i) => markerTopPx[i] - MARKER_HEIGHT_PX));
    const ceiling = Math.min(ceilingPx(crowd.x0Px, crowd.x1Px), markersTop);
    if (crowd.members.length === 1) {
      const i = crowd.members[0];
      const start = ceiling - MARKER_GAP_PX;
      const leader: Array<[number, number]> = start < markerTopPx[i] - MARKER_HEIGHT_PX - MARKER_GAP_PX - 1 ? [[requests[i].xPx, markerTopPx[i] - MARKER_HEIGHT_PX - MARKER_GAP_PX], [requests[i].xPx, start]] : [];
      placed[i] = { xPx: arrangement.labelXPx[i], startYPx: start, endYPx: start - arrangement.lengthPx[i], leader };
      continue;
    }
    const kink = ceiling - CROWD_GAP_PX;
    const start = kink - SLANT_RISE_PX;
    for (const i of crowd.members) {
      const fromY = markerTopPx[i] - MARKER_HEIGHT_PX - MARKER_GAP_PX;
      const leader: Array<[number, number]> = [
        [requests[i].xPx, Math.max(fromY, kink)],
        [requests[i].xPx, kink],
        [arrangement.labelXPx[i], start + 1],
      ];
      placed[i] = { xPx: arrangement.labelXPx[i], startYPx: start, endYPx: start - arrangement.lengthPx[i], leader };
    }
  }
  return placed;
}

/** How far above the highest trace under it a crowd's labels reach, beyond their own length (px). */
function crowdRisePx(members: number): number {
  return MARKER_HEIGHT_PX + (members > 1 ? CROWD_GAP_PX + SLANT_RISE_PX : MARKER_GAP_PX);
}

/** A crowd of labels may take at most this share of the plot's height; beyond, the scale is not raised for it. */
const MAX_LABEL_SHARE = 0.85;

/**
 * The top of a linear vertical scale [bottom, top] raised, where needed, so that every crowd's labels fit above the
 * highest value beneath it (`highestUnder(crowd)`, in the scale's units, −∞ for none: traces and markers across the
 * crowd's span): the crowd's longest label, its leaders' rise and `clearPx(crowd)` (room kept free above it, e.g.
 * under a legend) within `innerHeightPx`.
 */
export function scaleTopForLabels(
  arrangement: PeakLabelArrangement,
  highestUnder: (crowd: LabelCrowd) => number,
  clearPx: (crowd: LabelCrowd) => number,
  innerHeightPx: number,
  bottom: number,
  top: number,
): number {
  let raised = top;
  for (const crowd of arrangement.crowds) {
    const v = highestUnder(crowd);
    const needPx = Math.max(...crowd.members.map((i) => arrangement.lengthPx[i])) + crowdRisePx(crowd.members.length) + clearPx(crowd);
    const share = needPx / innerHeightPx;
    // The value sits needPx below the top when (top − v) / (top − bottom) = share.
    if (share < MAX_LABEL_SHARE && Number.isFinite(v)) raised = Math.max(raised, (v - share * bottom) / (1 - share));
  }
  return raised;
}

/** How one placed label is drawn. */
export interface DrawnLabelStyle {
  text: string;
  colour: string;
  className: string;
}

/**
 * Draws placed labels into `layer` in the peaks' order: each one's leader (a thin line in its colour) and its upright
 * text centred on its place across. `keep` leaves out a label that found no room.
 */
export function drawPeakLabels(
  layer: Selection<SVGGElement, unknown, null, undefined>,
  arrangement: PeakLabelArrangement,
  placed: readonly PlacedPeakLabel[],
  styleOf: (i: number) => DrawnLabelStyle,
  fontPx: number,
  keep: (at: PlacedPeakLabel) => boolean = () => true,
): void {
  for (const i of arrangement.order) {
    const at = placed[i];
    if (!keep(at)) continue;
    const style = styleOf(i);
    if (at.leader.length > 1) {
      layer
        .append('path')
        .attr('class', 'label-leader')
        .attr('d', 'M' + at.leader.map(([lx, ly]) => `${lx.toFixed(1)},${ly.toFixed(1)}`).join('L'))
        .attr('fill', 'none')
        .attr('stroke', style.colour)
        .attr('stroke-width', 0.6)
        .attr('opacity', 0.6);
    }
    // Upright text reading upwards: its glyphs lie across [x − 0.8 em, x + 0.22 em] of the anchor; centred on xPx.
    layer
      .append('text')
      .attr('class', style.className)
      .attr('transform', `translate(${(at.xPx + 0.29 * fontPx).toFixed(1)},${at.startYPx.toFixed(1)}) rotate(-90)`)
      .attr('font-size', fontPx)
      .attr('fill', style.colour)
      .text(style.text);
  }
}
