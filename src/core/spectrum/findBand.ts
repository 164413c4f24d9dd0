/**
 * Finds the dispersed band in a photo: its axis angle, the slant of its line images, its centre, length and height.
 *
 * Pipeline (coarse to fine, never warping the photo):
 *  1. block-average to at most `coarseMaxSidePx` (band/decimate.ts) and flatten the ambient light with a robust
 *     quadratic surface (band/flatten.ts);
 *  2. threshold, label components and pick the set lying along one line, leaving out glare off the axis and a zero
 *     order at one end (band/coarse.ts);
 *  3. refine the axis by a per-column centroid fit and the slant by slab cross-correlation (band/refine.ts), first on
 *     the decimated image, then at full resolution;
 *  4. measure the height (FWHM of the cross profile, band/extent.ts) and take the length from the coarse components'
 *     extent along the refined axis (padded, inside the image, the zero order left out), and refine once more.
 *
 * Direction convention: automatic bands have angleDeg in (−90°, 90°], so position grows to the right (downwards for a
 * vertical band). Which end is blue is not known here; calibration decides and may reverse the band (reverseBand).
 * Callers with a band of their own skip this and pass their BandGeometry to extractSpectrum.
 */
import { assertFinite, invalid } from '../errors.js';
import type { BandGeometry, LinearImage, PointPx } from '../types.js';
import { type Ambient, ambientFromSurfaces } from './band/ambient.js';
import { type CoarseBand, coarseBand } from './band/coarse.js';
import { type Decimated, decimate } from './band/decimate.js';
import { insideRange, measureHeight } from './band/extent.js';
import { flattenBackground } from './band/flatten.js';
import { foldAxisAngleDeg, imageToBandPx, reverseBand } from './band/frame.js';
import { refineBand } from './band/refine.js';
import { Scratch } from './scratch.js';

/**
 * The band stages' working arrays, kept from photo to photo (scratch.ts): findBand and searchBandCoarse run to the end
 * without awaiting anything, and none of their samples outlives the call.
 */
const BAND_SCRATCH = new Scratch();

export interface FindBandOptions {
  /** Name of the input in messages ("no spectrum found in <source>"). @default 'the image' */
  source?: string;
  /** Detection threshold above the flattened background, in noise σ of the 3 × 3-smoothed coarse image. @default 5 */
  detectionSigma?: number;
  /** Smallest signal above the background that counts (linear units, 1 = clipped), whatever the noise. @default 0.003 */
  minSignal?: number;
  /** Longest side of the block-averaged image of the coarse search (px). @default 640 */
  coarseMaxSidePx?: number;
  /**
   * Axis/slant refinement iterations at full resolution before the height is measured (it stops earlier once
   * converged); one more follows at the measured height. @default 2
   */
  refineIterations?: number;
  /** Measure the slant of the line images (else 0°). @default true */
  measureSlant?: boolean;
  /** See SampleBandOptions.saturationLevel. @default 0.999 */
  saturationLevel?: number;
}

export const FIND_BAND_DEFAULTS = {
  source: 'the image',
  detectionSigma: 5,
  minSignal: 0.003,
  coarseMaxSidePx: 640,
  refineIterations: 2,
  measureSlant: true,
  saturationLevel: 0.999,
} as const satisfies Required<FindBandOptions>;

export interface FindBandDiagnostics {
  /** The coarse estimate before refinement (full-resolution px). */
  coarse: BandGeometry;
  /** How the coarse axis was decided. */
  rule: string;
  /** Block size of the coarse image. */
  decimation: number;
  /** Components above the threshold in the coarse image, and how many make up the band. */
  components: number;
  members: number;
  /** Noise σ and threshold of the coarse image (linear units). */
  noiseSigma: number;
  threshold: number;
  /** The zero order found on the axis and left out of the band, with its position along the final band. */
  zeroOrder: (PointPx & { positionPx: number }) | null;
  /** Standard uncertainty of the axis angle from the last centroid fit (deg; see band/refine.ts). */
  angleUncertaintyDeg: number;
  /** Standard uncertainty of the slant (deg), the axis angle's included; null when it could not be measured. */
  slantUncertaintyDeg: number | null;
  slantMeasured: boolean;
  /** Columns that carried enough light for the axis fit. */
  columnsUsed: number;
  /** Distance from the half-maximum edge of the cross profile to its 1 % level (px). */
  wingPx: number;
  /** The band's cross profile (background subtracted, summed along the band) at its final geometry. */
  crossProfile: { offsetPx: Float64Array; value: Float64Array };
  /** The band reaches the image edge at one end (the spectrum may continue outside). */
  touchesEdge: boolean;
}

export interface FoundBand {
  band: BandGeometry;
  warnings: string[];
  /** Extraction settings suited to this band's cross profile (pass them to extractSpectrum). */
  extraction: { objectMarginPx: number };
  diagnostics: FindBandDiagnostics;
}

/**
 * The coarse stage of findBand on its own: from a decimated photo (decimate(), or decimatePreview() of a decoder's
 * reduced-size decode) to the first band estimate in full-resolution pixels. It needs no full-resolution pixel, so a
 * caller may run it while the full photo is still being decoded and pass the result to findBand as `coarse`.
 */
export interface CoarseSearch {
  /** Size of the full-resolution photo the estimate refers to. */
  widthPx: number;
  heightPx: number;
  /** Block size of the coarse image (full-resolution px per coarse px). */
  factor: number;
  coarse: CoarseBand;
  ambient: Ambient;
  /** The coarse band refined on the coarse image (full-resolution px). */
  band: BandGeometry;
  /** The slant was measured on the coarse image. */
  slantSeen: boolean;
}

/**
 * Whether a preview holding the means of `scale` × `scale` blocks suits the coarse search of a `widthPx` × `heightPx`
 * photo: its coarse image (decimatePreview) must have blocks no more than 4/3 the size findBand would choose, because
 * the coarse search's components change with the scale. Measured: on the 1920 × 1080 demo photos, blocks of 8 px
 * instead of 3 lengthened three bands by ~690 px (light off the band joined them); on rendered 3264–4032 px photos,
 * blocks of 8 instead of 6–7 px gave the same geometry within its uncertainty.
 */
export function previewSuitsSearch(widthPx: number, heightPx: number, scale: number, coarseMaxSidePx: number = FIND_BAND_DEFAULTS.coarseMaxSidePx): boolean {
  const longSide = Math.max(widthPx, heightPx);
  const own = Math.max(1, Math.ceil(longSide / coarseMaxSidePx));
  const fromPreview = scale * Math.max(1, Math.ceil(Math.ceil(longSide / scale) / coarseMaxSidePx));
  return fromPreview >= own && fromPreview <= (4 / 3) * own;
}

/** The options of findBand that the coarse stage reads, and a hook into it. */
export type CoarseSearchOptions = Pick<FindBandOptions, 'source' | 'detectionSigma' | 'minSignal' | 'measureSlant'> & {
  /**
   * Called with the band of the coarse components (full-resolution px) before it is refined on the coarse image: a
   * caller that decodes the band's rows can start that decode here and let it run during the refinement.
   */
  onComponents?: (coarse: CoarseBand) => void;
};

/** Runs the coarse stage on `dec`, a decimated copy of a `widthPx` × `heightPx` photo; see CoarseSearch. */
export function searchBandCoarse(dec: Decimated, widthPx: number, heightPx: number, options: CoarseSearchOptions = {}): CoarseSearch {
  const d = FIND_BAND_DEFAULTS;
  const source = options.source ?? d.source;
  const detectionSigma = options.detectionSigma ?? d.detectionSigma;
  const minSignal = options.minSignal ?? d.minSignal;
  const measureSlant = options.measureSlant ?? d.measureSlant;
  assertFinite('detectionSigma', detectionSigma, 1);
  assertFinite('minSignal', minSignal, 0);
  const f = dec.factor;
  if (dec.width !== Math.ceil(widthPx / f) || dec.height !== Math.ceil(heightPx / f)) {
    throw invalid('coarse image', `${Math.ceil(widthPx / f)} × ${Math.ceil(heightPx / f)} blocks of ${f} px`, `${dec.width} × ${dec.height}`);
  }
  const flat = flattenBackground(dec.planes, dec.width, dec.height, BAND_SCRATCH);
  const coarse = coarseBand(dec, flat.residual, { detectionSigma, minSignal, source, scratch: BAND_SCRATCH });
  options.onComponents?.(coarse);
  const ambient = ambientFromSurfaces(flat.surfaces, dec.width, dec.height, f);
  let band = coarse.band;
  let slantSeen = false;
  if (f > 1) {
    // Refinement on the decimated luminance, in decimated px.
    const toDec = (b: BandGeometry): BandGeometry => ({
      ...b,
      center: { x: (b.center.x - (f - 1) / 2) / f, y: (b.center.y - (f - 1) / 2) / f },
      lengthPx: b.lengthPx / f,
      heightPx: b.heightPx / f,
    });
    const toFull = (b: BandGeometry): BandGeometry => ({
      ...b,
      center: { x: f * b.center.x + (f - 1) / 2, y: f * b.center.y + (f - 1) / 2 },
      lengthPx: b.lengthPx * f,
      heightPx: b.heightPx * f,
    });
    const small: LinearImage = { width: dec.width, height: dec.height, channels: 1, data: coarse.luminance };
    const coarseRefined = refineBand(small, toDec(band), { iterations: 4, slant: measureSlant, scratch: BAND_SCRATCH });
    slantSeen = coarseRefined.report.slantMeasured;
    band = toFull(withHeight(small, coarseRefined.band, undefined));
  }
  return { widthPx, heightPx, factor: f, coarse, ambient, band, slantSeen };
}

/**
 * Locates the dispersed band; throws InputError "no spectrum found in <source>" when nothing stands out. With
 * `coarse` (searchBandCoarse on a preview of this photo) the coarse stage is taken from it and `coarseMaxSidePx` is
 * not used.
 */
export function findBand(image: LinearImage, options: FindBandOptions & { coarse?: CoarseSearch } = {}): FoundBand {
  const d = FIND_BAND_DEFAULTS;
  const source = options.source ?? d.source;
  const coarseMaxSidePx = options.coarseMaxSidePx ?? d.coarseMaxSidePx;
  const refineIterations = options.refineIterations ?? d.refineIterations;
  const measureSlant = options.measureSlant ?? d.measureSlant;
  const saturationLevel = options.saturationLevel ?? d.saturationLevel;
  assertFinite('coarseMaxSidePx', coarseMaxSidePx, 32);
  assertFinite('refineIterations', refineIterations, 1, 50);
  assertFinite('saturationLevel', saturationLevel, 0);
  const warnings: string[] = [];

  // 1–3 (coarse). Block-average, flatten, threshold and label, refine on the decimated luminance.
  let search = options.coarse;
  if (search === undefined) {
    const factor = Math.max(1, Math.ceil(Math.max(image.width, image.height) / coarseMaxSidePx));
    search = searchBandCoarse(decimate(image, factor, saturationLevel, BAND_SCRATCH), image.width, image.height, { ...options, source });
  } else if (search.widthPx !== image.width || search.heightPx !== image.height) {
    throw invalid('coarse', `a coarse search of this ${image.width} × ${image.height} photo`, `one of ${search.widthPx} × ${search.heightPx}`);
  }
  const { coarse, ambient, factor: f } = search;
  let band = search.band;
  // The slant counts as measured when any stage measured it (the last may lack the rows for it in a short band).
  let slantSeen = search.slantSeen;

  // 3 (fine). Refinement at full resolution.
  band = withMemberExtent(band, coarse.memberEnds, image.width, image.height);
  const scratch = BAND_SCRATCH;
  let refined = refineBand(image, band, { iterations: refineIterations, slant: measureSlant, ambient, scratch });
  slantSeen ||= refined.report.slantMeasured;
  band = withHeight(image, refined.band, ambient);
  band = withMemberExtent(band, coarse.memberEnds, image.width, image.height);
  // The axis so far, with its uncertainty, stands when this last pass cannot fit it (the slant's uncertainty needs it).
  const earlierAngleUncertaintyDeg = refined.report.angleUncertaintyDeg;
  refined = refineBand(image, band, { iterations: 1, slant: measureSlant, ambient, scratch, startAngleUncertaintyDeg: earlierAngleUncertaintyDeg });
  slantSeen ||= refined.report.slantMeasured;
  band = refined.band;
  const height = measureHeight(image, band, ambient, scratch);
  band = shiftAcross(band, height.centreOffsetPx, height.heightPx);
  band = withMemberExtent(band, coarse.memberEnds, image.width, image.height);
  const [inFrom, inTo] = insideRange(band, image.width, image.height);
  const touchesEdge = inFrom >= -0.5 || inTo <= band.lengthPx + 0.5;

  // 4. Direction convention.
  if (foldAxisAngleDeg(band.angleDeg) !== band.angleDeg) band = reverseBand(band);
  band = { ...band, angleDeg: foldAxisAngleDeg(band.angleDeg) };

  if (!slantSeen) {
    if (measureSlant) warnings.push('slant of the line images not measurable (no sharp lines in the band): 0° assumed');
    band = { ...band, slantDeg: 0 };
  }
  if (coarse.zeroOrder) {
    warnings.push(`zero order at (${coarse.zeroOrder.x.toFixed(0)}, ${coarse.zeroOrder.y.toFixed(0)}) px left out of the band`);
  }
  if (touchesEdge) warnings.push('the band reaches the edge of the image: the spectrum may continue outside it');
  if (band.heightPx < 20 || band.heightPx > 500) {
    warnings.push(`band height ${band.heightPx.toFixed(0)} px is outside the tested range 20–500 px`);
  }
  return {
    band,
    warnings,
    extraction: { objectMarginPx: Math.max(3, Math.ceil(height.wingPx + 1)) },
    diagnostics: {
      coarse: coarse.band,
      rule: coarse.rule,
      decimation: f,
      components: coarse.components,
      members: coarse.members,
      noiseSigma: coarse.noiseSigma,
      threshold: coarse.threshold,
      zeroOrder: coarse.zeroOrder ? { ...coarse.zeroOrder, positionPx: imageToBandPx(band, coarse.zeroOrder).positionPx } : null,
      angleUncertaintyDeg: Number.isFinite(refined.report.angleUncertaintyDeg) ? refined.report.angleUncertaintyDeg : earlierAngleUncertaintyDeg,
      slantUncertaintyDeg: refined.report.slantUncertaintyDeg,
      slantMeasured: slantSeen,
      columnsUsed: refined.report.columnsUsed,
      wingPx: height.wingPx,
      crossProfile: height.profile,
      touchesEdge,
    },
  };
}

/** The band with its height measured and its centre moved onto the cross profile's half-maximum midpoint. */
function withHeight(image: LinearImage, band: BandGeometry, ambient: Ambient | undefined): BandGeometry {
  const m = measureHeight(image, band, ambient, BAND_SCRATCH);
  return shiftAcross(band, m.centreOffsetPx, m.heightPx);
}

function shiftAcross(band: BandGeometry, offsetPx: number, heightPx: number): BandGeometry {
  const a = (band.angleDeg * Math.PI) / 180;
  return {
    ...band,
    heightPx,
    center: { x: band.center.x - offsetPx * Math.sin(a), y: band.center.y + offsetPx * Math.cos(a) },
  };
}

/**
 * The band cut to the extent of its coarse components along the (refined) axis, padded by max(12 px, 2 %) and kept
 * inside the image. The components come from the detail layer, so glare beside the band does not lengthen it, and
 * the zero order is not among them.
 */
function withMemberExtent(band: BandGeometry, ends: PointPx[], width: number, height: number): BandGeometry {
  let lo = Infinity;
  let hi = -Infinity;
  for (const pt of ends) {
    const p = imageToBandPx(band, pt).positionPx;
    lo = Math.min(lo, p);
    hi = Math.max(hi, p);
  }
  if (!(hi > lo)) return band;
  const pad = Math.max(12, 0.02 * (hi - lo));
  const [inFrom, inTo] = insideRange(band, width, height);
  return setExtent(band, Math.max(inFrom, lo - pad), Math.min(inTo, hi + pad));
}

function setExtent(band: BandGeometry, fromPx: number, toPx: number): BandGeometry {
  const a = (band.angleDeg * Math.PI) / 180;
  const mid = 0.5 * (fromPx + toPx) - band.lengthPx / 2;
  return {
    ...band,
    lengthPx: Math.max(2, toPx - fromPx),
    center: { x: band.center.x + mid * Math.cos(a), y: band.center.y + mid * Math.sin(a) },
  };
}
