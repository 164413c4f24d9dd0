/**
 * Data shapes shared between the pipeline stages. Pixel geometry follows the upright image (after EXIF orientation):
 * x to the right, y down, points as {x, y} in pixels.
 */

/** A decoded image in linear light, values relative to the sensor's maximum (1 = clipped). Row-major, interleaved. */
export interface LinearImage {
  width: number;
  height: number;
  /** 1 (grey) or 3 (R, G, B). */
  channels: 1 | 3;
  data: Float32Array;
  /** Optional per-pixel flag: 1 where any channel reached the sensor's maximum code value. */
  saturated?: Uint8Array;
  /**
   * Optional fast path for large photos (set by io/image when no dark frame was subtracted): the decoded integer
   * codes, interleaved like `data`, with `data[i] === codeToLinear[codes[i]]`; a code equal to
   * `codeToLinear.length - 1` is clipped. `data` and `saturated` are then built lazily on first access (Float32 is
   * 144 MB for a 12-MP RGB photo against 36 MB of 8-bit codes): stages that read only part of the image should
   * read `codeToLinear[codes[i]]` instead of touching `data`.
   */
  codes?: Uint8Array | Uint16Array;
  /** code → linear light relative to the maximum (256 entries for 8-bit, 65536 for 16-bit); see `codes`. */
  codeToLinear?: Float32Array;
}

export interface PointPx {
  x: number;
  y: number;
}

/** Where the dispersed band lies. `angleDeg` is the direction in which position grows, from +x towards +y, in (−180, 180]. */
export interface BandGeometry {
  angleDeg: number;
  /** Tilt of the line images relative to the normal of the dispersion axis (deg). */
  slantDeg: number;
  center: PointPx;
  lengthPx: number;
  heightPx: number;
}

/** A 1-D spectrum sampled at `positionPx` (along the band from its start) or at `wavelengthNm`. */
export interface Spectrum {
  positionPx: Float64Array;
  intensity: Float64Array;
  /** Per-sample variance of `intensity`, where known. */
  variance?: Float64Array;
  /** Per-channel spectra (linear R, G, B), where the input had colour. */
  channels?: { r: Float64Array; g: Float64Array; b: Float64Array };
  /** 1 where a contributing pixel was at the sensor's maximum. */
  saturated?: Uint8Array;
  /** Wavelength of each sample, where a calibration was applied. */
  wavelengthNm?: Float64Array;
}

export interface Peak {
  positionPx: number;
  positionUncertaintyPx: number;
  fwhmPx: number;
  height: number;
  area: number;
  prominence: number;
  snr: number;
  saturated: boolean;
  blended: boolean;
  /** Mean linear colour of the peak (fractions of R+G+B), where the spectrum had colour. */
  rgb?: { r: number; g: number; b: number };
  /** Filled in when a calibration is applied. */
  wavelengthNm?: number;
  wavelengthUncertaintyNm?: number;
}

/** One entry of a line list. */
export interface SpectralLine {
  /** Air wavelength (nm), NIST convention for 200–2000 nm. */
  wavelengthNm: number;
  /** Relative intensity, comparable only within one spectrum of one source. */
  intensity: number;
  element: string;
  /** Spectrum notation: `Ne I`, `Ar II`. */
  spectrum: string;
  source?: string;
}
