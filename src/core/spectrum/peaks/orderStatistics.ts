/**
 * The k-th smallest of a[lo..hi] (inclusive), rearranging that range in place (Hoare's quickselect with a
 * median-of-three pivot; expected linear time). NaN must not be present.
 */
export function selectInPlace(a: Float64Array, k: number, lo = 0, hi = a.length - 1): number {
  while (hi > lo) {
    const mid = (lo + hi) >> 1;
    // median of three → a[mid]
    if (a[mid] < a[lo]) swap(a, mid, lo);
    if (a[hi] < a[lo]) swap(a, hi, lo);
    if (a[hi] < a[mid]) swap(a, hi, mid);
    const pivot = a[mid];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        swap(a, i, j);
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return a[k];
  }
  return a[k];
}

/**
 * Quantile q ∈ [0, 1] of a[lo..hi] with linear interpolation between order statistics (the usual "type 7"
 * definition, numpy's default), rearranging that range in place.
 */
export function quantileInPlace(a: Float64Array, q: number, lo = 0, hi = a.length - 1): number {
  const n = hi - lo + 1;
  if (n <= 0) return NaN;
  const h = (n - 1) * q;
  const k = Math.floor(h);
  const v = selectInPlace(a, lo + k, lo, hi);
  if (h === k || k + 1 >= n) return v;
  // The next order statistic is the minimum of the part above k after the partition.
  let next = Infinity;
  for (let i = lo + k + 1; i <= hi; i++) if (a[i] < next) next = a[i];
  return v + (h - k) * (next - v);
}

function swap(a: Float64Array, i: number, j: number): void {
  const t = a[i];
  a[i] = a[j];
  a[j] = t;
}
