/**
 * Test helper: the centre of a line in an extracted spectrum by a least-squares Gaussian + constant fit over ±4σ
 * around a guess (the standard sub-pixel estimator for an isolated line; common practice, no source).
 */
import { levenbergMarquardt } from '../../../src/core/fit/index.js';

export function gaussianCentre(position: ArrayLike<number>, intensity: ArrayLike<number>, guessPx: number, sigmaPx: number): number {
  const step = position[1] - position[0];
  const i0 = Math.max(0, Math.round((guessPx - 4 * sigmaPx - position[0]) / step));
  const i1 = Math.min(position.length - 1, Math.round((guessPx + 4 * sigmaPx - position[0]) / step));
  const x: number[] = [];
  const y: number[] = [];
  let peak = -Infinity;
  let at = guessPx;
  for (let i = i0; i <= i1; i++) {
    x.push(position[i]);
    y.push(intensity[i]);
    if (intensity[i] > peak) {
      peak = intensity[i];
      at = position[i];
    }
  }
  const model = (t: number, p: readonly number[]): number => p[0] * Math.exp(-0.5 * ((t - p[1]) / p[2]) ** 2) + p[3];
  const fit = levenbergMarquardt(model, x, y, [peak, at, sigmaPx, 0], { min: [0, at - 3 * sigmaPx, 0.3, -Infinity], max: [Infinity, at + 3 * sigmaPx, 5 * sigmaPx, Infinity] });
  return fit.params[1];
}

export function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}
