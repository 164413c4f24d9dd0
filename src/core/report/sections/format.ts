import { formatNumber, formatWithUncertainty } from '../html.js';

/** No-break space: a value, its ± and its unit stay on one line in narrow table cells. */
const NBSP = '\u00a0';

/** Keeps "value ± u unit" together and writes degrees as "12.5°". */
function tie(text: string): string {
  return text.replace(/ ± /g, `${NBSP}±${NBSP}`).replace(/ (?=[^\d\s±—−-][^ ]*$)/, NBSP).replace(/\u00a0°/g, '°');
}

/** value ± u with a unit; "—" when the value is missing. */
export function withU(value: number | undefined, uncertainty: number | undefined, unit = ''): string {
  return value === undefined ? '—' : tie(formatWithUncertainty(value, uncertainty, unit));
}

/** A number with a unit, 6 significant digits at most; "—" when missing. */
export function plain(value: number | undefined, unit = '', significant = 6): string {
  if (value === undefined || !Number.isFinite(value)) return '—';
  return tie(`${formatNumber(value, significant)}${unit ? ' ' + unit : ''}`);
}

/**
 * A value shown to the decimals its uncertainty earns (the rule of formatWithUncertainty: two significant digits of
 * the uncertainty), for fitted values and residuals beside a measured value ± u. Without an uncertainty: `plain`.
 */
export function likeU(value: number | undefined, uncertainty: number | undefined, unit = ''): string {
  if (value === undefined || !Number.isFinite(value)) return '—';
  if (uncertainty === undefined || !(uncertainty > 0) || !Number.isFinite(uncertainty)) return plain(value, unit, 4);
  const decimals = Math.max(0, 1 - Math.floor(Math.log10(uncertainty)));
  const text = value.toFixed(Math.min(decimals, 12)).replace(/^-(0(\.0*)?)$/, '$1');
  return tie(`${text}${unit ? ' ' + unit : ''}`);
}

/** A fraction shown as a percentage. */
export function percent(fraction: number | undefined, decimals = 1): string {
  return fraction === undefined || !Number.isFinite(fraction) ? '—' : `${(100 * fraction).toFixed(decimals)}${NBSP}%`;
}

const FREQUENCY_UNITS: Array<[number, string]> = [
  [1e9, 'GHz'],
  [1e6, 'MHz'],
  [1e3, 'kHz'],
  [1, 'Hz'],
];

/** A frequency in Hz, shown in the unit that suits its size (GHz, MHz, kHz), with its uncertainty. */
export function frequency(hz: number | undefined, uncertaintyHz?: number): string {
  if (hz === undefined) return '—';
  const [scale, unit] = FREQUENCY_UNITS.find(([s]) => Math.abs(hz) >= s) ?? FREQUENCY_UNITS[FREQUENCY_UNITS.length - 1];
  return withU(hz / scale, uncertaintyHz === undefined ? undefined : uncertaintyHz / scale, unit);
}

/** A length in metres shown in cm below 1 m (cavities), with its uncertainty. */
export function length(m: number | undefined, uncertaintyM?: number): string {
  if (m === undefined) return '—';
  if (Math.abs(m) < 1) return withU(m * 100, uncertaintyM === undefined ? undefined : uncertaintyM * 100, 'cm');
  return withU(m, uncertaintyM, 'm');
}

/** An angle with a sign, for offsets and tilts: "+3.65° ± 0.11°". */
export function signedDeg(value: number | undefined, uncertainty: number | undefined): string {
  if (value === undefined) return '—';
  return `${value >= 0 ? '+' : ''}${deg(value, uncertainty)}`;
}

/** Degrees with uncertainty: "86.525° ± 0.028°". */
export function deg(value: number | undefined, uncertainty: number | undefined): string {
  if (value === undefined) return '—';
  const text = formatWithUncertainty(value, uncertainty);
  return tie(text.includes('±') ? text.replace(/ ± /, '° ± ') + '°' : text + '°');
}

/** "1 warning", "3 warnings". */
export function count(n: number, singular: string, plural = singular + 's'): string {
  return `${n} ${n === 1 ? singular : plural}`;
}

/** First letter upper case. */
export function capitalise(text: string): string {
  return text ? text[0].toUpperCase() + text.slice(1) : text;
}
