import { InputError, describeValue } from '../errors.js';

/**
 * Values with SI prefixes and units as people type them on a bench and as instruments write them in headers:
 * `10GHz`, `7.5mm`, `250 MHz`, `1.2e-3 s`, `-3 µs`, `632.8nm`, `22.3°`. Values come back in a unit the caller asks
 * for (`unit: 'Hz'`, `unit: 'mm'`), so the core never guesses what a bare number meant.
 *
 * Prefixes: the SI prefixes from quecto to quetta (BIPM, *The International System of Units*, 9th ed., 2019, Table 7),
 * with `u` accepted for µ (both U+00B5 and U+03BC). Lenient only where nothing can be confused: `K` for kilo
 * (`KHz`), case-insensitive unit names (`hz`, `HZ`, `Sec`, `Volt`). An all-lower-case `mhz` is refused: it could be
 * milli- or megahertz, a factor of 10⁹ apart.
 */

/** The kinds of quantity glowprint reads, each with the unit its values are held in internally. */
export type Dimension = 'length' | 'time' | 'frequency' | 'voltage' | 'current' | 'power' | 'angle';

interface BaseUnit {
  symbol: string;
  dimension: Dimension;
  /** Size of the unit in the dimension's reference unit (m, s, Hz, V, A, W, degree). */
  factor: number;
  /** Whether SI prefixes combine with it. */
  prefixable: boolean;
}

const BASE_UNITS: readonly BaseUnit[] = [
  { symbol: 'm', dimension: 'length', factor: 1, prefixable: true },
  { symbol: 'Å', dimension: 'length', factor: 1e-10, prefixable: false },
  { symbol: 's', dimension: 'time', factor: 1, prefixable: true },
  { symbol: 'min', dimension: 'time', factor: 60, prefixable: false },
  { symbol: 'h', dimension: 'time', factor: 3600, prefixable: false },
  { symbol: 'Hz', dimension: 'frequency', factor: 1, prefixable: true },
  { symbol: 'V', dimension: 'voltage', factor: 1, prefixable: true },
  { symbol: 'A', dimension: 'current', factor: 1, prefixable: true },
  { symbol: 'W', dimension: 'power', factor: 1, prefixable: true },
  { symbol: 'deg', dimension: 'angle', factor: 1, prefixable: false },
  { symbol: '°', dimension: 'angle', factor: 1, prefixable: false },
  { symbol: 'rad', dimension: 'angle', factor: 180 / Math.PI, prefixable: true },
];

/** Spelled-out names and instrument spellings, matched case-insensitively. */
const WORD_UNITS: Readonly<Record<string, string>> = {
  metre: 'm', metres: 'm', meter: 'm', meters: 'm',
  second: 's', seconds: 's', sec: 's', secs: 's',
  minute: 'min', minutes: 'min', mins: 'min',
  hour: 'h', hours: 'h', hr: 'h', hrs: 'h',
  hertz: 'Hz', hz: 'Hz',
  volt: 'V', volts: 'V',
  amp: 'A', amps: 'A', ampere: 'A', amperes: 'A',
  watt: 'W', watts: 'W',
  degree: 'deg', degrees: 'deg', degs: 'deg',
  radian: 'rad', radians: 'rad',
};

/** SI prefixes (BIPM SI Brochure, 9th ed., Table 7). */
const PREFIXES: Readonly<Record<string, number>> = {
  q: 1e-30, r: 1e-27, y: 1e-24, z: 1e-21, a: 1e-18, f: 1e-15, p: 1e-12, n: 1e-9,
  µ: 1e-6, μ: 1e-6, u: 1e-6, m: 1e-3, c: 1e-2, d: 1e-1, da: 1e1, h: 1e2,
  k: 1e3, K: 1e3, M: 1e6, G: 1e9, T: 1e12, P: 1e15, E: 1e18, Z: 1e21, Y: 1e24, R: 1e27, Q: 1e30,
};

const EXAMPLE: Readonly<Record<Dimension, string>> = {
  length: '7.5mm',
  time: '1.2e-3 s',
  frequency: '10GHz',
  voltage: '250 mV',
  current: '2 mA',
  power: '1 mW',
  angle: '22.3deg',
};

/** A unit as understood: its dimension and its size in the dimension's reference unit (m, s, Hz, V, A, W, degree). */
export interface ParsedUnit {
  dimension: Dimension;
  factor: number;
  /** The unit as written, normalised (`GHz`, `µs`, `deg`). */
  symbol: string;
}

/**
 * Reads a unit written alone (`ms`, `GHz`, `µm`, `Second`, `mV`, `°`). Returns null when the text is not a unit
 * glowprint knows; throws for the one ambiguous spelling (`mhz`).
 */
export function parseUnit(text: string): ParsedUnit | null {
  const t = text.trim();
  if (t === '') return null;
  for (const base of BASE_UNITS) {
    if (t === base.symbol) return { dimension: base.dimension, factor: base.factor, symbol: base.symbol };
  }
  const word = WORD_UNITS[t.toLowerCase()];
  if (word) return parseUnit(word);
  // A prefix followed by a prefixable unit; the unit part is matched case-sensitively first, then as a word.
  for (const base of BASE_UNITS) {
    if (!base.prefixable) continue;
    const candidates = [base.symbol, ...Object.keys(WORD_UNITS).filter((w) => WORD_UNITS[w] === base.symbol)];
    for (const unitText of candidates) {
      const exact = t.endsWith(unitText);
      const loose = !exact && t.toLowerCase().endsWith(unitText.toLowerCase()) && unitText.length > 1;
      if (!exact && !loose) continue;
      const prefix = t.slice(0, t.length - unitText.length);
      if (prefix === '') continue;
      if (base.symbol === 'Hz' && prefix === 'm' && t.slice(1) !== 'Hz') {
        throw new InputError(`${describeValue(text)}: ambiguous unit; write MHz (megahertz) or mHz (millihertz)`);
      }
      let factor: number | undefined = PREFIXES[prefix];
      // Lower-case giga / tera are never anything else when a unit follows (`ghz`, `thz`).
      if (factor === undefined && (prefix === 'g' || prefix === 't')) factor = PREFIXES[prefix.toUpperCase()];
      if (factor === undefined) continue;
      const symbol = (prefix === 'u' || prefix === 'μ' ? 'µ' : prefix === 'K' ? 'k' : prefix) + base.symbol;
      return { dimension: base.dimension, factor: factor * base.factor, symbol };
    }
  }
  return null;
}

export interface ParseQuantityOptions {
  /** Name of the input in messages (`--fsr`, `distance`). */
  name: string;
  /** Unit to return the value in, with or without a prefix: `Hz`, `mm`, `nm`, `s`, `deg`. */
  unit: string;
  /** Unit a bare number is read in. @default the `unit` option */
  bareUnit?: string;
  /** Refuse zero and negative values. @default false */
  positive?: boolean;
  /** Refuse negative values. @default false */
  nonNegative?: boolean;
}

const NUMBER = /^([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*)$/;

/**
 * Reads a number with an optional unit and returns it in `options.unit`:
 * `parseQuantity('10GHz', {name: '--fsr', unit: 'Hz'})` → 1e10; `parseQuantity('1 m', {name: 'd', unit: 'mm'})` →
 * 1000; `parseQuantity('1000', {name: 'd', unit: 'mm'})` → 1000. A unit of the wrong kind, an unknown unit, a
 * missing number or a non-finite value is an InputError naming the input.
 */
export function parseQuantity(text: string, options: ParseQuantityOptions): number {
  const target = requireUnit(options.unit);
  const bare = options.bareUnit === undefined ? target : requireUnit(options.bareUnit);
  if (bare.dimension !== target.dimension) throw new Error(`parseQuantity: bareUnit ${options.bareUnit} is not a ${target.dimension}`);
  const expected = `a ${target.dimension} such as ${EXAMPLE[target.dimension]}`;
  const fail = (why = expected): InputError => new InputError(`${options.name}: expected ${why}, got ${describeValue(text)}`, options.name);
  if (typeof text !== 'string') throw fail();
  const m = NUMBER.exec(text.trim());
  if (!m) throw fail();
  const value = Number(m[1]);
  const unitText = m[2].trim();
  let unit: ParsedUnit | null = bare;
  if (unitText !== '') {
    try {
      unit = parseUnit(unitText);
    } catch (err) {
      if (err instanceof InputError) throw new InputError(`${options.name}: ${err.message}`, options.name);
      throw err;
    }
    if (!unit) throw fail(`${expected} (unknown unit ${JSON.stringify(unitText)})`);
    if (unit.dimension !== target.dimension) throw fail(`${expected}, not a ${unit.dimension}`);
  }
  const result = (value * unit.factor) / target.factor;
  if (!Number.isFinite(result)) throw fail(`${expected} (a finite value)`);
  if (options.positive && !(result > 0)) throw fail(`a positive ${target.dimension}`);
  if (options.nonNegative && result < 0) throw fail(`a ${target.dimension} ≥ 0`);
  return result;
}

function requireUnit(unit: string): ParsedUnit {
  const parsed = parseUnit(unit);
  if (!parsed) throw new Error(`parseQuantity: unknown unit ${unit}`);
  return parsed;
}

/**
 * Finds a unit inside an instrument's column header: `Time (s)`, `CH1[mV]`, `t/ms`, `Volt`, `TIME_us`. Returns the
 * header's name part and the unit, or the whole header as the name and null when there is no unit.
 */
export function unitInHeader(header: string): { name: string; unit: ParsedUnit | null } {
  const h = header.trim();
  const bracketed = /^(.*?)[\s_]*[([{]\s*([^)\]}]*?)\s*[)\]}]\s*$/.exec(h);
  const slashed = /^(.*?)\s*\/\s*([^/]+)$/.exec(h);
  const suffixed = /^(.*?)[\s_-]+([^\s_-]+)$/.exec(h);
  for (const m of [bracketed, slashed, suffixed]) {
    if (!m) continue;
    let unit: ParsedUnit | null = null;
    try {
      unit = parseUnit(m[2]);
    } catch {
      unit = null;
    }
    if (unit) return { name: m[1].trim() || h, unit };
  }
  let whole: ParsedUnit | null = null;
  try {
    whole = parseUnit(h);
  } catch {
    whole = null;
  }
  return { name: h, unit: whole };
}
