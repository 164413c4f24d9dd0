import { assertFinite } from '../../errors.js';

/**
 * Which peaks survive a minimum spacing: peaks are taken in order of decreasing `priority` (their height, in
 * find_peaks), and each kept peak removes every other peak closer than ⌈distance⌉ samples (scipy
 * `_select_by_peak_distance`). Ties in priority go to the later peak, as in scipy's loop over an ascending sort.
 * Returns a keep-mask aligned with `peaks`, which must be sorted ascending.
 */
export function selectByDistance(peaks: ArrayLike<number>, priority: ArrayLike<number>, distance: number): Uint8Array {
  assertFinite('distance', distance, 1);
  const n = peaks.length;
  const keep = new Uint8Array(n).fill(1);
  const spacing = Math.ceil(distance);
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => priority[a] - priority[b] || a - b);
  for (let r = n - 1; r >= 0; r--) {
    const j = order[r];
    if (!keep[j]) continue;
    for (let k = j - 1; k >= 0 && peaks[j] - peaks[k] < spacing; k--) keep[k] = 0;
    for (let k = j + 1; k < n && peaks[k] - peaks[j] < spacing; k++) keep[k] = 0;
  }
  return keep;
}
