import type { ModePeak } from './types.js';

/**
 * Labels every transmission peak with the interferometer order it belongs to (j: which repeat of the mode pattern
 * within its sweep) and the longitudinal mode it is (k: a common index across all repeats and sweeps).
 *
 * 1. Repeats: within a sweep, the peaks of one mode group sit close together and the groups are one FSR apart, so the
 *    gaps between successive peaks fall into two classes (within a group, between groups). The split is the largest
 *    jump in the sorted gaps; peaks closer than it belong to one group, and groups in time order are j = 0, 1, 2…
 * 2. Modes within a group: longitudinal modes are equally spaced in frequency, and over one group's short span the
 *    sweep rate hardly changes, so a group's peaks sit at whole multiples of its own internal spacing δ.
 * 3. Modes across groups: the pattern of mode powers is the same in every repeat; each group is shifted by the whole
 *    number of modes that best overlays its powers on the strongest group's (most shared power). A shift by one mode
 *    puts unequal powers side by side and loses the end modes, so the true alignment wins even for a symmetric pair.
 * Peaks that do not fall on a group's comb (more than 0.3 δ off) are left unlabelled: transverse modes, reflections.
 */
export interface LabelledPeak extends ModePeak {
  /** Repeat index within the sweep (FSR order, relative), or -1 when unlabelled. */
  repeat: number;
  /** Mode index, common to all sweeps of the trace, or null when the peak is off the comb. */
  mode: number | null;
  group: number;
}

export interface ModeAssignment {
  peaks: LabelledPeak[];
  /** Number of groups (pattern repeats) per segment. */
  repeatsPerSegment: number[];
  /** 'groups': the pattern has gaps; 'single': one peak per repeat (single-mode laser); 'filled': no gap structure. */
  pattern: 'groups' | 'single' | 'filled';
  offComb: number;
  warnings: string[];
}

/** Below this ratio of successive sorted gaps there is no clear within/between split. */
const GAP_SPLIT_RATIO = 2.5;
const OFF_COMB = 0.3;

export function assignModes(peaks: readonly ModePeak[], segmentDurationsS: readonly number[]): ModeAssignment {
  const segmentCount = segmentDurationsS.length;
  const warnings: string[] = [];
  const bySegment: ModePeak[][] = Array.from({ length: segmentCount }, () => []);
  for (const p of peaks) bySegment[p.segment].push(p);
  for (const list of bySegment) list.sort((a, b) => a.timeS - b.timeS);
  const gaps: number[] = [];
  for (const list of bySegment) for (let i = 1; i < list.length; i++) gaps.push(list[i].timeS - list[i - 1].timeS);
  gaps.sort((a, b) => a - b);
  let split = NaN;
  let bestRatio = 0;
  for (let i = 1; i < gaps.length; i++) {
    const ratio = gaps[i] / Math.max(gaps[i - 1], Number.MIN_VALUE);
    if (ratio > bestRatio) {
      bestRatio = ratio;
      split = Math.sqrt(gaps[i] * gaps[i - 1]);
    }
  }
  let pattern: ModeAssignment['pattern'] = 'groups';
  // Two interleaved combs (two modes spaced near FSR/2) give alternating short and long gaps, too alike for one
  // global split (the sweep rate changes along the sweep); each long gap, longer than both neighbours, is a break.
  let pairBreaks: Array<Set<number>> | null = null;
  if (!(bestRatio >= GAP_SPLIT_RATIO)) pairBreaks = alternatingBreaks(bySegment);
  // Peaks bunched in a small part of every sweep are one group per sweep: the scan is shorter than one FSR.
  const bunched = bySegment.every((list, s) => list.length < 2 || list[list.length - 1].timeS - list[0].timeS < 0.5 * segmentDurationsS[s]);
  if (!(bestRatio >= GAP_SPLIT_RATIO) && bunched && peaks.length > 0) {
    pairBreaks = null;
    split = Infinity;
  } else if (pairBreaks) {
    split = NaN;
  } else if (!(bestRatio >= GAP_SPLIT_RATIO)) {
    // No two classes of gaps: one peak per repeat (single-mode) when the peaks are few and alike, else a filled comb.
    const heights = peaks.map((p) => p.height);
    const alike = heights.length > 0 && Math.max(...heights) <= 1.6 * Math.min(...heights);
    const few = bySegment.every((l) => l.length <= 8);
    pattern = alike && few ? 'single' : 'filled';
    split = pattern === 'single' ? 0 : Infinity;
  }
  // Groups per segment.
  const groups: Array<{ segment: number; repeat: number; members: ModePeak[] }> = [];
  const repeatsPerSegment = bySegment.map((list, s) => {
    let repeat = 0;
    let current: ModePeak[] = [];
    const flush = (): void => {
      if (current.length) groups.push({ segment: s, repeat: repeat++, members: current });
      current = [];
    };
    for (let i = 0; i < list.length; i++) {
      const between = pairBreaks ? pairBreaks[s].has(i) : list[i].timeS - (list[i - 1]?.timeS ?? 0) > split;
      if (i > 0 && between) flush();
      current.push(list[i]);
    }
    flush();
    return repeat;
  });
  // A lone weak "group" inside a sweep of strong ones is noise (a real group cut short sits at a sweep's end): it
  // would otherwise count as a repeat of its own and shift the orders of the groups after it.
  if (pattern === 'groups') {
    const sums = groups.map((g) => g.members.reduce((a, p) => a + p.height, 0));
    const typical = [...sums].sort((a, b) => a - b)[Math.floor((sums.length - 1) / 2)];
    for (let i = groups.length - 1; i >= 0; i--) {
      const g = groups[i];
      const inSweep = groups.filter((h) => h.segment === g.segment);
      const inner = g.repeat > 0 && g.repeat < inSweep.length - 1;
      if (inner && sums[i] < 0.15 * typical) {
        groups.splice(i, 1);
        for (const h of groups) if (h.segment === g.segment && h.repeat > g.repeat) h.repeat--;
        repeatsPerSegment[g.segment]--;
        warnings.push(`a weak isolated peak at ${(g.members[0].timeS * 1e3).toFixed(3)} ms of sweep ${g.segment + 1} is not part of the mode pattern and was left out`);
      }
    }
  }
  // Internal spacing of each group (time), from its smallest gaps refined over whole multiples.
  const spacing = groups.map((g) => groupSpacing(g.members.map((p) => p.timeS)));
  // Groups with a single peak borrow the spacing of the nearest group of their segment (the sweep rate varies slowly).
  groups.forEach((g, i) => {
    if (Number.isFinite(spacing[i])) return;
    let best = NaN;
    let bestDist = Infinity;
    groups.forEach((h, j) => {
      if (h.segment !== g.segment || !Number.isFinite(spacing[j])) return;
      const d = Math.abs(h.members[0].timeS - g.members[0].timeS);
      if (d < bestDist) {
        bestDist = d;
        best = spacing[j];
      }
    });
    if (!Number.isFinite(best)) {
      const all = spacing.filter(Number.isFinite);
      best = all.length ? all.sort((a, b) => a - b)[Math.floor(all.length / 2)] : NaN;
    }
    spacing[i] = best;
  });
  // Local comb index within each group, from its strongest peak.
  let offComb = 0;
  const local: Array<Map<number, ModePeak>> = groups.map((g, i) => {
    const map = new Map<number, ModePeak>();
    const strongest = g.members.reduce((a, b) => (b.height > a.height ? b : a));
    const d = spacing[i];
    for (const p of g.members) {
      const x = Number.isFinite(d) && d > 0 ? (p.timeS - strongest.timeS) / d : 0;
      const k = Math.round(x);
      if (Math.abs(x - k) > OFF_COMB) {
        offComb++;
        continue;
      }
      const had = map.get(k);
      if (had) {
        offComb++;
        if (had.height >= p.height) continue;
      }
      map.set(k, p);
    }
    return map;
  });
  // Align every group to the one with the most power.
  const power = local.map((m) => [...m.values()].reduce((s, p) => s + p.height, 0));
  const ref = power.indexOf(Math.max(...power));
  const shifts = local.map((m, i) => (i === ref ? 0 : bestShift(local[ref], m)));
  const labelled: LabelledPeak[] = [];
  const labelOf = new Map<ModePeak, { mode: number; group: number }>();
  local.forEach((m, i) => {
    for (const [k, p] of m) labelOf.set(p, { mode: k + shifts[i], group: i });
  });
  groups.forEach((g, gi) => {
    for (const p of g.members) {
      const l = labelOf.get(p);
      labelled.push({ ...p, repeat: l ? g.repeat : -1, mode: l ? l.mode : null, group: gi });
    }
  });
  // Renumber modes from 0 at the lowest.
  const modes = labelled.filter((p) => p.mode !== null).map((p) => p.mode as number);
  const lowest = modes.length ? Math.min(...modes) : 0;
  for (const p of labelled) if (p.mode !== null) p.mode -= lowest;
  if (offComb > 0) warnings.push(`${offComb} peak(s) lie off the comb of longitudinal modes (transverse modes or stray reflections?) and were left out`);
  return { peaks: labelled, repeatsPerSegment, pattern, offComb, warnings };
}

/**
 * For sweeps whose gaps alternate short/long (relative alternation ≥ 5 %, at least 4 peaks in some sweep): the set of
 * peak indices, per segment, that follow a long gap. Null when no sweep alternates.
 */
function alternatingBreaks(bySegment: ReadonlyArray<readonly ModePeak[]>): Array<Set<number>> | null {
  let alternating = 0;
  let smooth = 0;
  const breaks = bySegment.map((list) => {
    const g = list.slice(1).map((p, i) => p.timeS - list[i].timeS);
    const set = new Set<number>();
    for (let i = 1; i + 1 < g.length; i++) {
      const local = Math.abs(g[i] - (g[i - 1] + g[i + 1]) / 2) / ((g[i - 1] + g[i] + g[i + 1]) / 3);
      if (local >= 0.05 && Math.sign(g[i] - g[i - 1]) === Math.sign(g[i] - g[i + 1])) alternating++;
      else smooth++;
    }
    for (let i = 0; i < g.length; i++) {
      const left = i > 0 ? g[i - 1] : g[i + 1];
      const right = i + 1 < g.length ? g[i + 1] : g[i - 1];
      if (left !== undefined && right !== undefined && g[i] > left && g[i] > right) set.add(i + 1);
    }
    return set;
  });
  return alternating >= 2 && alternating > 2 * smooth ? breaks : null;
}

/** Spacing of nearly equally spaced times with possible gaps (missing members): NaN for fewer than two. */
export function groupSpacing(times: readonly number[]): number {
  if (times.length < 2) return NaN;
  const gaps = times.slice(1).map((t, i) => t - times[i]).filter((g) => g > 0);
  if (gaps.length === 0) return NaN;
  // Most gaps are single steps (a missing weak mode makes a double one): start from the median gap, then refine over
  // all gaps as whole multiples of the step, leaving out gaps that are no clean multiple (a stray peak).
  let d = [...gaps].sort((a, b) => a - b)[Math.floor((gaps.length - 1) / 2)];
  for (let it = 0; it < 3; it++) {
    let num = 0;
    let den = 0;
    for (const g of gaps) {
      const k = Math.max(1, Math.round(g / d));
      if (Math.abs(g / d - k) > OFF_COMB) continue;
      num += g;
      den += k;
    }
    if (den > 0) d = num / den;
  }
  return d;
}

/** The whole-number shift s maximising Σ min(h_ref[k], h[k − s]) (shared power), ties to the smallest |s|. */
function bestShift(ref: Map<number, ModePeak>, other: Map<number, ModePeak>): number {
  const refKeys = [...ref.keys()];
  const otherKeys = [...other.keys()];
  if (otherKeys.length === 0) return 0;
  const lo = Math.min(...refKeys) - Math.max(...otherKeys);
  const hi = Math.max(...refKeys) - Math.min(...otherKeys);
  let best = 0;
  let bestScore = -Infinity;
  for (let s = lo; s <= hi; s++) {
    let score = 0;
    for (const [k, p] of other) {
      const q = ref.get(k + s);
      if (q) score += Math.min(p.height, q.height) - 0.5 * Math.abs(p.height - q.height);
    }
    if (score > bestScore + 1e-12 || (Math.abs(score - bestScore) <= 1e-12 && Math.abs(s) < Math.abs(best))) {
      bestScore = score;
      best = s;
    }
  }
  return best;
}
