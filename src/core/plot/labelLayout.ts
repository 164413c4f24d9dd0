/**
 * Placing small text labels beside plot markers so that no two overlap and none covers a marker or leaves the plot.
 * Text is not measured (core code has no font engine): its extent is estimated from the font size and the characters,
 * rounded up from the widths of the sans-serif faces browsers use for `system-ui` (DejaVu Sans: digits 0.64 em,
 * lower case 0.3–1 em, capitals up to 1 em). Boxes are in the plot area's pixels, y downwards.
 */

export interface Box {
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

export type TextAnchor = 'start' | 'middle' | 'end';

/** A straight leader line from a marker to its label, drawn when the label had to move away from the marker. */
export interface Segment {
  x1: number;
  y1: number;
  x2: number;
  y2: number;
}

/** One place a label could go, with how much less it is liked than the label's first choice (0). */
export interface LabelCandidate {
  x: number;
  baseline: number;
  anchor: TextAnchor;
  cost: number;
  leader?: Segment;
}

export interface LabelRequest {
  text: string;
  fontPx: number;
  /** The label's own marker: an obstacle for the label's box, not for its leader. */
  marker: Box;
  /** Places to try, any order (the cheapest free one wins). */
  candidates: readonly LabelCandidate[];
  /** Placed before the others (e.g. the values of off-scale points, which the plot cannot show otherwise). */
  priority?: boolean;
}

export interface PlacedLabel extends LabelCandidate {
  text: string;
  fontPx: number;
  box: Box;
  /**
   * What this label overlaps, weighted (text on text 10, text on a marker 3, its leader across a marker 1): 0 unless
   * the plot is too crowded for every label to find a free place.
   */
  collisions: number;
}

export interface LabelObstacles {
  /** Not to be covered: markers without a label of their own. */
  hard: readonly Box[];
  /** Other text already on the plot (level labels): never to be covered. */
  texts?: readonly Box[];
  /** Better not covered (error bars): each one a label covers adds 1 to its cost. */
  soft?: readonly Box[];
}

/** Clearance kept between a label and anything else (px). */
export const LABEL_GAP_PX = 1;

/**
 * Estimated advance of one character, in em, for the sans-serif faces `system-ui` resolves to, rounded up: 0.64 em
 * (a digit in DejaVu Sans) for anything narrower too, so that a label is never drawn wider than its estimate.
 */
export function charWidthEm(ch: string): number {
  if ('mwMW@%'.includes(ch)) return 1;
  if ('−–—±×+=<>~'.includes(ch)) return 0.84;
  if (ch >= 'A' && ch <= 'Z') return 0.76;
  return 0.64;
}

/** Estimated width of `text` at `fontPx` (px). */
export function textWidthPx(text: string, fontPx: number): number {
  let em = 0;
  for (const ch of text) em += charWidthEm(ch);
  return em * fontPx;
}

/** Estimated box of a text drawn at (x, baseline) with this anchor: cap height and descenders included. */
export function textBox(x: number, baseline: number, anchor: TextAnchor, text: string, fontPx: number): Box {
  const w = textWidthPx(text, fontPx);
  const x0 = anchor === 'start' ? x : anchor === 'end' ? x - w : x - w / 2;
  return { x0, y0: baseline - 0.8 * fontPx, x1: x0 + w, y1: baseline + 0.22 * fontPx };
}

/** Do two boxes overlap, with `gap` of clearance? */
export function boxesOverlap(a: Box, b: Box, gap = 0): boolean {
  return a.x0 < b.x1 + gap && b.x0 < a.x1 + gap && a.y0 < b.y1 + gap && b.y0 < a.y1 + gap;
}

/** Does the segment cross the box (Liang–Barsky clipping)? */
export function segmentHitsBox(s: Segment, b: Box): boolean {
  let t0 = 0;
  let t1 = 1;
  const dx = s.x2 - s.x1;
  const dy = s.y2 - s.y1;
  const clip = (p: number, q: number): boolean => {
    if (p === 0) return q >= 0;
    const r = q / p;
    if (p < 0) {
      if (r > t1) return false;
      if (r > t0) t0 = r;
    } else {
      if (r < t0) return false;
      if (r < t1) t1 = r;
    }
    return true;
  };
  return clip(-dx, s.x1 - b.x0) && clip(dx, b.x1 - s.x1) && clip(-dy, s.y1 - b.y0) && clip(dy, b.y1 - s.y1) && t0 <= t1;
}

/** How much each kind of overlap counts against a place (only places with the least total are considered). */
const OVERLAP_WEIGHT = { textOnText: 10, textOnMarker: 3, leaderOnMarker: 1 } as const;

/** A box less half a pixel all round: a leader may start at a marker's tip and touch its neighbour's edge. */
const shrink = (b: Box): Box => ({ x0: b.x0 + 0.5, y0: b.y0 + 0.5, x1: b.x1 - 0.5, y1: b.y1 - 0.5 });

const inside = (b: Box, bounds: Box): boolean => b.x0 >= bounds.x0 && b.x1 <= bounds.x1 && b.y0 >= bounds.y0 && b.y1 <= bounds.y1;

/**
 * Places every label at its cheapest candidate that stays inside `bounds`, overlaps no marker, obstacle or label
 * already placed, and whose leader crosses none of them (nor is crossed by a later label). Greedy, so the result
 * depends on the order: a few natural orders (left to right, right to left, each side's labels outwards) are tried
 * and the layout with the fewest overlaps, then the lowest total cost, is kept. When no free place is left a label
 * still gets the least crowded one: a value is never dropped. Results are in the order of `requests`.
 */
export function layoutLabels(requests: readonly LabelRequest[], obstacles: LabelObstacles, bounds: Box): PlacedLabel[] {
  if (requests.length === 0) return [];
  const idx = requests.map((_, i) => i);
  const centre = (i: number): number => (requests[i].marker.x0 + requests[i].marker.x1) / 2;
  // A label's favourite side: where its cheapest candidate lies.
  const rightward = (i: number): boolean => {
    const best = [...requests[i].candidates].sort((a, b) => a.cost - b.cost)[0];
    return best === undefined || best.anchor !== 'end';
  };
  const asc = [...idx].sort((a, b) => centre(a) - centre(b));
  const desc = [...asc].reverse();
  const outwards = [...desc.filter(rightward), ...asc.filter((i) => !rightward(i))];
  const inwards = [...asc.filter((i) => !rightward(i)), ...desc.filter(rightward)];
  const first = (order: number[]): number[] => [...order.filter((i) => requests[i].priority), ...order.filter((i) => !requests[i].priority)];
  let best: { placed: PlacedLabel[]; collisions: number; cost: number } | undefined;
  for (const order of [outwards, inwards, asc, desc].map(first)) {
    const placed = placeInOrder(requests, order, obstacles, bounds);
    const collisions = placed.reduce((s, p) => s + p.collisions, 0);
    const cost = placed.reduce((s, p) => s + p.cost, 0);
    if (!best || collisions < best.collisions || (collisions === best.collisions && cost < best.cost - 1e-9)) best = { placed, collisions, cost };
  }
  return best!.placed;
}

function placeInOrder(requests: readonly LabelRequest[], order: readonly number[], obstacles: LabelObstacles, bounds: Box): PlacedLabel[] {
  const result: PlacedLabel[] = new Array(requests.length);
  const boxes: Box[] = [];
  const leaders: Segment[] = [];
  const markers = requests.map((r) => r.marker);
  for (const i of order) {
    const req = requests[i];
    let chosen: { c: LabelCandidate; box: Box; collisions: number; cost: number } | undefined;
    for (const c of req.candidates) {
      const box = textBox(c.x, c.baseline, c.anchor, req.text, req.fontPx);
      if (!inside(box, bounds)) continue;
      // Overlaps weighted by how badly they hurt reading: text on text (or a leader through text) is unreadable;
      // text over a marker hides it; a leader brushing past a marker is a blemish.
      let collisions = 0;
      for (const b of obstacles.hard) if (boxesOverlap(box, b, LABEL_GAP_PX)) collisions += OVERLAP_WEIGHT.textOnMarker;
      for (const b of markers) if (boxesOverlap(box, b, LABEL_GAP_PX)) collisions += OVERLAP_WEIGHT.textOnMarker;
      for (const b of [...boxes, ...(obstacles.texts ?? [])]) if (boxesOverlap(box, b, LABEL_GAP_PX)) collisions += OVERLAP_WEIGHT.textOnText;
      for (const s of leaders) if (segmentHitsBox(s, box)) collisions += OVERLAP_WEIGHT.textOnText;
      if (c.leader) {
        for (const b of [...boxes, ...(obstacles.texts ?? [])]) if (segmentHitsBox(c.leader, b)) collisions += OVERLAP_WEIGHT.textOnText;
        for (const b of obstacles.hard) if (segmentHitsBox(c.leader, shrink(b))) collisions += OVERLAP_WEIGHT.leaderOnMarker;
        markers.forEach((b, j) => {
          if (j !== i && segmentHitsBox(c.leader!, shrink(b))) collisions += OVERLAP_WEIGHT.leaderOnMarker;
        });
      }
      let cost = c.cost;
      for (const b of obstacles.soft ?? []) if (boxesOverlap(box, b)) cost += 1;
      if (!chosen || collisions < chosen.collisions || (collisions === chosen.collisions && cost < chosen.cost)) chosen = { c, box, collisions, cost };
    }
    if (!chosen) {
      // Nothing fits inside the plot: the first choice, as the plot always drew it.
      const c = req.candidates[0];
      chosen = { c, box: textBox(c.x, c.baseline, c.anchor, req.text, req.fontPx), collisions: OVERLAP_WEIGHT.textOnText, cost: c.cost };
    }
    boxes.push(chosen.box);
    if (chosen.c.leader) leaders.push(chosen.c.leader);
    result[i] = { ...chosen.c, cost: chosen.cost, text: req.text, fontPx: req.fontPx, box: chosen.box, collisions: chosen.collisions };
  }
  return result;
}
