/**
 * Peak colour as a coarse prior on wavelength. A colour camera's three filters split the visible into broad,
 * overlapping bands whose responses cross near 490–500 nm (blue = green) and 580–590 nm (green = red). A line that
 * is mostly blue in linear RGB lies short of the first crossing, mostly red beyond the second, and the more one
 * channel dominates the farther from the crossing it lies. Only such dominance rules are used, with generous limits,
 * because filter curves differ between cameras, in the near infrared all three dyes transmit again (an 850 nm line
 * looks grey or magenta), and background light, saturation and JPEG chroma subsampling dilute a peak's colour. The
 * crossings and limits are common practice for Bayer sensors (no source); they only reject assignments that no
 * camera would produce.
 */
/** A rule: when `channel` carries at least `fraction` of R+G+B, the wavelength lies in `rangeNm`. */
export interface ColourRule {
  channel: 'r' | 'g' | 'b';
  fraction: number;
  rangeNm: [number, number];
}

export interface ColourPriorOptions {
  /** Checked strongest first; the first rule that applies gives the band. */
  rules: ColourRule[];
}

export const COLOUR_PRIOR_DEFAULTS: ColourPriorOptions = {
  rules: [
    { channel: 'b', fraction: 0.75, rangeNm: [0, 500] },
    { channel: 'r', fraction: 0.75, rangeNm: [575, Infinity] },
    { channel: 'g', fraction: 0.75, rangeNm: [480, 610] },
    { channel: 'b', fraction: 0.55, rangeNm: [0, 530] },
    { channel: 'r', fraction: 0.55, rangeNm: [560, Infinity] },
    { channel: 'g', fraction: 0.55, rangeNm: [465, 630] },
  ],
};

export interface RgbFractions {
  r: number;
  g: number;
  b: number;
}

/** The wavelength interval a peak of this colour may lie in, or null when its colour says nothing. */
export function colourBandNm(
  rgb: RgbFractions | undefined,
  options: ColourPriorOptions = COLOUR_PRIOR_DEFAULTS,
): [number, number] | null {
  if (!rgb) return null;
  const { r, g, b } = rgb;
  const sum = r + g + b;
  if (!(sum > 0) || ![r, g, b].every(Number.isFinite)) return null;
  const value = { r, g, b };
  for (const rule of options.rules) if (value[rule.channel] >= rule.fraction * sum) return rule.rangeNm;
  return null;
}

/** True unless the peak's colour rules the wavelength out. */
export function colourAllows(band: [number, number] | null, wavelengthNm: number): boolean {
  return band === null || (wavelengthNm >= band[0] && wavelengthNm <= band[1]);
}
