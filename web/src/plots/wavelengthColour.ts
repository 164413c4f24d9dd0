/**
 * An approximate display colour for a wavelength of visible light, for tinting plots: piecewise-linear ramps between
 * violet, blue, cyan, green, yellow and red with the brightness falling off towards both ends of vision. It is the
 * common textbook approximation (hue ramps at 440, 490, 510, 580, 645 nm; common practice, no source), not a
 * colorimetric conversion — good enough to tell a plot's blue end from its red end at a glance.
 */
export function wavelengthRgb(wavelengthNm: number): [number, number, number] {
  const l = wavelengthNm;
  let r = 0;
  let g = 0;
  let b = 0;
  if (l >= 380 && l < 440) {
    r = (440 - l) / 60;
    b = 1;
  } else if (l >= 440 && l < 490) {
    g = (l - 440) / 50;
    b = 1;
  } else if (l >= 490 && l < 510) {
    g = 1;
    b = (510 - l) / 20;
  } else if (l >= 510 && l < 580) {
    r = (l - 510) / 70;
    g = 1;
  } else if (l >= 580 && l < 645) {
    r = 1;
    g = (645 - l) / 65;
  } else if (l >= 645 && l <= 780) {
    r = 1;
  }
  // Fall-off of the eye's sensitivity at the ends of the range.
  const fade = l < 380 || l > 780 ? 0.25 : l < 420 ? 0.3 + (0.7 * (l - 380)) / 40 : l > 700 ? 0.3 + (0.7 * (780 - l)) / 80 : 1;
  return [r * fade, g * fade, b * fade].map((c) => Math.round(255 * Math.max(c, 0.12 * fade))) as [number, number, number];
}

export function wavelengthCss(wavelengthNm: number): string {
  const [r, g, b] = wavelengthRgb(wavelengthNm);
  return `rgb(${r},${g},${b})`;
}
