/**
 * Angle bookkeeping for analyser series. A linear analyser (and the azimuth of linear polarization) repeats every
 * 180°, so angles are compared and reported modulo 180°, azimuths in [0, 180).
 */

const DEG = Math.PI / 180;

/** An azimuth wrapped into [0, 180). */
export function wrapAzimuthDeg(angleDeg: number): number {
  const w = ((angleDeg % 180) + 180) % 180;
  // −1e-15 % 180 + 180 rounds to 180; keep the half-open interval.
  return w >= 180 ? 0 : w;
}

/** A difference of two axes wrapped into (−90, 90]: how far axis `a` lies from axis `b`. */
export function axisDifferenceDeg(a: number, b: number): number {
  let d = wrapAzimuthDeg(a - b);
  if (d > 90) d -= 180;
  return d;
}

/**
 * The distinct analyser settings of a series, modulo 180°: angles closer than `toleranceDeg` (on the 180° circle)
 * count as one setting. Returned sorted in [0, 180).
 */
export function distinctAnglesMod180(anglesDeg: readonly number[], toleranceDeg: number): number[] {
  const wrapped = anglesDeg.map(wrapAzimuthDeg).sort((x, y) => x - y);
  const out: number[] = [];
  for (const a of wrapped) {
    if (out.length === 0 || a - out[out.length - 1] > toleranceDeg) out.push(a);
  }
  // The first and last may be the same setting across the wrap (0.01° and 179.99°).
  if (out.length > 1 && out[0] + 180 - out[out.length - 1] <= toleranceDeg) out.pop();
  return out;
}

/**
 * How much of the 180° period the settings cover: 180° minus the largest gap between neighbouring settings on the
 * circle. Ten-degree steps from 0° to 170° cover 170°; 0°, 45°, 90°, 135° cover 135°.
 */
export function angleSpanDeg(distinctSortedDeg: readonly number[]): number {
  const n = distinctSortedDeg.length;
  if (n < 2) return 0;
  let maxGap = distinctSortedDeg[0] + 180 - distinctSortedDeg[n - 1];
  for (let i = 1; i < n; i++) maxGap = Math.max(maxGap, distinctSortedDeg[i] - distinctSortedDeg[i - 1]);
  return 180 - maxGap;
}

export function toRad(angleDeg: number): number {
  return angleDeg * DEG;
}

export function toDeg(angleRad: number): number {
  return angleRad / DEG;
}
