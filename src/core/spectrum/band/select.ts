/** k-th smallest of the first n values (0-based), by quickselect (Hoare's FIND) in place: O(n) on average. */
export function selectInPlace(a: Float32Array | Float64Array, n: number, k: number): number {
  let lo = 0;
  let hi = n - 1;
  while (hi > lo) {
    // Median of three as pivot.
    const mid = (lo + hi) >> 1;
    const x = a[lo];
    const y = a[mid];
    const z = a[hi];
    // Median of x, y, z without swaps (no array destructuring in the hot loop).
    const pivot = x < y ? (y < z ? y : x < z ? z : x) : x < z ? x : y < z ? z : y;
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        const t = a[i];
        a[i] = a[j];
        a[j] = t;
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
