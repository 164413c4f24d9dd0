import { assertFinite, invalid } from '../errors.js';
import type { ListedLine } from './lineTypes.js';
import { normalizeElement, parseSpectrumName } from './spectrumName.js';

export interface SelectLinesOptions {
  /** Element symbols to keep ('Ne', 'hg'); all when absent. */
  elements?: readonly string[];
  /** Spectra to keep ('Ar II'); all when absent. Combined with `elements` as "either". */
  spectra?: readonly string[];
  /** Inclusive wavelength range (nm, air). */
  rangeNm?: readonly [number, number];
  /** Keep only lines flagged persistent or strong. @default false */
  strongOnly?: boolean;
  /** Drop lines weaker than this fraction of the strongest line of their spectrum within the selection. @default 0 */
  minRelativeIntensity?: number;
  /** Keep molecular band heads. @default false */
  includeBands?: boolean;
}

export const SELECT_LINES_DEFAULTS = Object.freeze({ strongOnly: false, minRelativeIntensity: 0, includeBands: false });

/** The lines matching every given criterion, sorted by wavelength. Unknown element symbols are an InputError. */
export function selectLines(lines: readonly ListedLine[], options: SelectLinesOptions = {}): ListedLine[] {
  const o = { ...SELECT_LINES_DEFAULTS, ...options };
  const elements = o.elements?.map((e) => {
    const s = normalizeElement(e);
    if (!s) throw invalid('elements', 'element symbols such as Ne, Hg, Ar', e);
    return s;
  });
  const spectra = o.spectra?.map((s) => parseSpectrumName(s, 'spectra').spectrum);
  let lo = -Infinity;
  let hi = Infinity;
  if (o.rangeNm) {
    [lo, hi] = o.rangeNm;
    assertFinite('rangeNm[0]', lo, 0);
    assertFinite('rangeNm[1]', hi, lo);
  }
  assertFinite('minRelativeIntensity', o.minRelativeIntensity, 0, 1);
  const picked = lines.filter((l) => {
    if (elements || spectra) {
      const byElement = elements?.includes(l.element) ?? false;
      const bySpectrum = spectra?.includes(l.spectrum) ?? false;
      if (!byElement && !bySpectrum) return false;
    }
    if (l.wavelengthNm < lo || l.wavelengthNm > hi) return false;
    if (o.strongOnly && !l.strong) return false;
    if (!o.includeBands && l.kind === 'band-head') return false;
    return true;
  });
  let out = picked;
  if (o.minRelativeIntensity > 0) {
    const max = new Map<string, number>();
    for (const l of picked) max.set(l.spectrum, Math.max(max.get(l.spectrum) ?? 0, l.intensity));
    out = picked.filter((l) => l.intensity >= o.minRelativeIntensity * (max.get(l.spectrum) ?? 0));
  }
  return [...out].sort((a, b) => a.wavelengthNm - b.wavelengthNm);
}
