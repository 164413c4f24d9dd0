/**
 * Synthetic calibrated peak tables drawn from the OUTSIDE reference (NIST ASD lines in ../shared/reference, read by
 * test/helpers/nistReference.ts), to be identified with the PROJECT's own line list: the two are independent, so the
 * tests check the curation and the method together. Tabulated intensities are perturbed by a random factor of up to 3
 * either way per line (real lamps differ from tables that much).
 */
import type { CalibratedPeak } from '../../../src/core/identify/identifySpecies.js';
import type { Random } from '../../../src/core/random.js';
import type { Peak } from '../../../src/core/types.js';
import { nistReferenceLines } from '../../helpers/nistReference.js';

export const RANGE: [number, number] = [400, 700];
const reference = nistReferenceLines();

export interface SynthOptions {
  /** Lines of each element drawn (its strongest neutral lines in range). @default 30 */
  linesPerElement?: number;
  /** Lines closer than this merge into one (blended) peak (nm). @default 0.5 */
  mergeNm?: number;
  /** Stray peaks (reflections, other orders) at random places. @default 2 */
  strays?: number;
  /** Centroid uncertainty (nm). @default 0.08 */
  uncertaintyNm?: number;
}

/** A camera's view of the recipe's elements: what a ~0.4 nm/px phone spectroscope resolves and detects. */
export function synthesize(recipe: ReadonlyArray<readonly [string, number]>, rng: Random, options: SynthOptions = {}): CalibratedPeak[] {
  const perElement = options.linesPerElement ?? 30;
  const mergeNm = options.mergeNm ?? 0.5;
  const unc = options.uncertaintyNm ?? 0.08;
  const raw: Array<{ wavelengthNm: number; area: number; lo?: number; hi?: number }> = [];
  for (const [element, weight] of recipe) {
    const lines = reference
      .filter((l) => l.element === element && l.spectrum.endsWith(' I') && l.wavelengthNm >= RANGE[0] && l.wavelengthNm <= RANGE[1])
      .sort((a, b) => b.intensity - a.intensity)
      .slice(0, perElement);
    const max = lines[0]?.intensity ?? 1;
    for (const l of lines) {
      const factor = Math.exp((rng.uniform() * 2 - 1) * Math.log(3));
      raw.push({ wavelengthNm: l.wavelengthNm, area: (weight * l.intensity * factor) / max });
    }
  }
  raw.sort((a, b) => a.wavelengthNm - b.wavelengthNm);
  const merged: typeof raw = [];
  for (const r of raw) {
    const last = merged[merged.length - 1];
    if (last && r.wavelengthNm - last.wavelengthNm < mergeNm) {
      last.lo ??= last.wavelengthNm;
      last.hi = r.wavelengthNm;
      last.wavelengthNm = (last.wavelengthNm * last.area + r.wavelengthNm * r.area) / (last.area + r.area);
      last.area += r.area;
    } else merged.push({ ...r });
  }
  // Peaks below 1/150 of the brightest vanish in the noise.
  const top = Math.max(...merged.map((m) => m.area));
  const visible = merged.filter((m) => m.area > top / 150);
  for (let k = 0; k < (options.strays ?? 2); k++) visible.push({ wavelengthNm: RANGE[0] + 10 + rng.uniform() * 280, area: top / 60 });
  return visible.map((m) => ({
    positionPx: 0,
    positionUncertaintyPx: 0.2,
    fwhmPx: 3,
    fwhmNm: 1.2 + (m.hi !== undefined ? m.hi - m.lo! : 0),
    height: m.area,
    area: m.area,
    prominence: m.area,
    snr: 50,
    saturated: false,
    blended: m.hi !== undefined,
    wavelengthNm: m.wavelengthNm + unc * rng.normal(),
    wavelengthUncertaintyNm: unc,
  }));
}

/** A peak at a given wavelength, for hand-made tables. */
export function peakAt(wavelengthNm: number, area: number, extra: Partial<CalibratedPeak> = {}): CalibratedPeak {
  return {
    positionPx: 0,
    positionUncertaintyPx: 0.2,
    fwhmPx: 3,
    fwhmNm: 1.2,
    height: area,
    area,
    prominence: area,
    snr: 50,
    saturated: false,
    blended: false,
    wavelengthNm,
    wavelengthUncertaintyNm: 0.08,
    ...extra,
  };
}

/**
 * The same peaks as a camera's pixel positions, through the grating equation mλ = d(sin α + sin β) with α = 0, d =
 * 1000 nm (1000 lines/mm), order 1, and a pinhole camera at θc = 33.5° to the grating normal, f = 1324 px: x = x0 + f
 * tan(β − θc). x0 puts 400 nm at 0 px. About 0.63 nm/px, as a phone behind a film grating.
 */
export function synthesizePositions(recipe: ReadonlyArray<readonly [string, number]>, rng: Random, options: SynthOptions = {}): Peak[] {
  const d = 1000;
  const f = 1324;
  const thetaC = (33.5 * Math.PI) / 180;
  const xOf = (lambda: number) => f * Math.tan(Math.asin(lambda / d) - thetaC);
  const x0 = xOf(400);
  return synthesize(recipe, rng, { mergeNm: 1.5, ...options }).map((p) => {
    const x = xOf(p.wavelengthNm) - x0;
    const { wavelengthNm: _w, wavelengthUncertaintyNm: _u, fwhmNm: _f, ...rest } = p;
    return { ...rest, positionPx: x, positionUncertaintyPx: 0.1, fwhmPx: 3.2 };
  });
}
