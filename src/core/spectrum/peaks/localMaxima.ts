/** Indices of the local maxima of a signal, with the edges of flat tops. */
export interface LocalMaxima {
  /** Middle sample of each maximum; for a flat top of even length, the middle rounded down. */
  midpoints: Int32Array;
  /** First sample of each flat top (equal to the midpoint for a one-sample maximum). */
  leftEdges: Int32Array;
  /** Last sample of each flat top. */
  rightEdges: Int32Array;
}

/**
 * All local maxima of `x`, defined as scipy.signal.find_peaks documents them (scipy `_local_maxima_1d`): a sample, or a
 * run of equal samples (a flat top), whose left neighbour is strictly lower and whose right neighbour is strictly
 * lower. The first and last samples are never maxima (one of their neighbours is missing), and NaN never compares
 * higher, so it never starts or ends a maximum.
 */
export function localMaxima(x: ArrayLike<number>): LocalMaxima {
  const n = x.length;
  // At most one maximum per two samples.
  const mid = new Int32Array(Math.max(0, n >> 1));
  const left = new Int32Array(mid.length);
  const right = new Int32Array(mid.length);
  let count = 0;
  let i = 1;
  const last = n - 1;
  while (i < last) {
    if (x[i - 1] < x[i]) {
      let ahead = i + 1;
      while (ahead < last && x[ahead] === x[i]) ahead++;
      if (x[ahead] < x[i]) {
        left[count] = i;
        right[count] = ahead - 1;
        mid[count] = (i + ahead - 1) >> 1;
        count++;
        i = ahead; // the sample after the top cannot be a maximum
      }
    }
    i++;
  }
  return { midpoints: mid.slice(0, count), leftEdges: left.slice(0, count), rightEdges: right.slice(0, count) };
}
