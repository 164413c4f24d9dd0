import { assertFinite, InputError, invalid } from '../errors.js';
import type { LineKind, ListedLine } from './lineTypes.js';
import { normalizeElement, parseSpectrumName } from './spectrumName.js';

/** A reference lamp: which spectra of the line list it shows, plus features the atomic list lacks (phosphor peaks). */
export interface LampDefinition {
  /** Name as used in `--lamp` ('Hg', 'fluorescent'). */
  name: string;
  /** Other accepted names ('mercury', 'CFL'); matched case-insensitively like `name`. */
  aliases: string[];
  description: string;
  /** Spectra taken from the line list ('Hg I', 'Ar II'). */
  spectra: string[];
  /** 'strong': lines flagged persistent or strong (the calibration set); 'all': every listed line. */
  select: 'strong' | 'all';
  /** Features not in the atomic line list, e.g. phosphor emission peaks of a fluorescent tube. */
  extraLines: ListedLine[];
}

/** A laser kind: nominal air wavelength and the spread of real units around it. */
export interface LaserDefinition {
  /** Identifier used in `laser:<name>` ('HeNe-633'). */
  name: string;
  /** Other accepted names ('HeNe' for the red HeNe line). */
  aliases: string[];
  description: string;
  wavelengthNm: number;
  /** Typical spread of real units about the nominal value (nm); 0 for a gas laser's fixed line. */
  toleranceNm: number;
  kind: 'gas' | 'dpss' | 'diode';
  source: string;
}

export interface LampCatalog {
  /** The line list (from data/lines or a user's bigger list). */
  lines: readonly ListedLine[];
  lamps: readonly LampDefinition[];
  lasers: readonly LaserDefinition[];
}

/** A lamp line as calibration uses it. */
export interface LampLine extends ListedLine {
  /** Intensity over the strongest line of the same spectrum in the lamp's range (0–1). */
  relativeIntensity: number;
  /** Another line of the lamp lies within the resolution with at least `blendRatio` of this line's relative intensity. */
  blended: boolean;
  /** Wavelengths (nm) of the lines that blend this one. */
  blendedWith: number[];
  /** Which spec token brought the line in ('Hg', 'laser:632.816', a file name). */
  lamp: string;
}

export interface LampLinesOptions {
  catalog: LampCatalog;
  /** Lines of user files named in the spec, keyed by the token exactly as written. */
  files?: Readonly<Record<string, readonly ListedLine[]>>;
  /** Wavelength range kept (nm, air). @default [350, 1000] */
  rangeNm?: readonly [number, number];
  /** Resolution at which lines count as blended (nm): a phone-and-grating rig resolves about 1 nm. @default 1 */
  resolutionNm?: number;
  /** A neighbour blends a line when its relative intensity is at least this fraction of the line's. @default 0.1 */
  blendRatio?: number;
}

export const LAMP_LINES_DEFAULTS = Object.freeze({
  rangeNm: [350, 1000] as readonly [number, number],
  resolutionNm: 1,
  blendRatio: 0.1,
});

export interface LampLines {
  /** The lamp's lines, sorted by wavelength. */
  lines: LampLine[];
  /** One sentence: which lamps, how many lines, over which range. */
  description: string;
  warnings: string[];
  /** The spec tokens, as understood ('Ne', 'Hg', 'laser:632.816'). */
  lamps: string[];
}

function sameName(a: string, b: string): boolean {
  return a.localeCompare(b, 'en', { sensitivity: 'accent' }) === 0;
}

function knownNames(catalog: LampCatalog): string {
  const lamps = [...catalog.lamps].map((l) => l.name).sort((a, b) => a.localeCompare(b, 'en', { sensitivity: 'base' }));
  const lasers = catalog.lasers.map((l) => l.name);
  return `${lamps.join(', ')}; laser:<wavelength nm> or laser:<name> (${lasers.join(', ')}); any element of the line list (e.g. Cd); or a line-list file`;
}

function laserLine(token: string, wavelengthNm: number, label: string, source: string): ListedLine {
  return {
    wavelengthNm,
    intensity: 1,
    element: 'laser',
    spectrum: label,
    ionStage: 0,
    kind: 'laser' as LineKind,
    persistent: false,
    strong: true,
    blend: false,
    source,
    note: token,
  };
}

/** Parses one spec token into its lines (all of its spectra, before the range and strong-line selection). */
function resolveToken(
  token: string,
  options: LampLinesOptions,
): { name: string; pool: ListedLine[]; chosen: (l: ListedLine) => boolean; description: string } {
  const { catalog } = options;
  const file = options.files?.[token];
  if (file) {
    return { name: token, pool: [...file], chosen: () => true, description: `${file.length} lines from ${token}` };
  }
  const laser = /^laser\s*:\s*(.+)$/i.exec(token);
  if (laser) {
    const arg = laser[1].trim();
    if (/^[\d.]+$/.test(arg)) {
      const wl = Number(arg);
      assertFinite(`lamp ${token}`, wl, 200, 2000);
      return {
        name: `laser:${arg}`,
        pool: [laserLine(token, wl, `laser ${arg} nm`, 'given')],
        chosen: () => true,
        description: `laser line at ${arg} nm (air)`,
      };
    }
    const def = catalog.lasers.find((l) => sameName(l.name, arg) || l.aliases.some((a) => sameName(a, arg)));
    if (!def) throw new InputError(`lamp: unknown laser ${JSON.stringify(arg)}; known: ${knownNames(catalog)}`, 'lamp');
    return {
      name: `laser:${def.name}`,
      pool: [laserLine(token, def.wavelengthNm, def.description, def.source)],
      chosen: () => true,
      description: `${def.description} at ${def.wavelengthNm} nm (air)`,
    };
  }
  const lamp = catalog.lamps.find((l) => sameName(l.name, token) || l.aliases.some((a) => sameName(a, token)));
  const element = normalizeElement(token);
  if (!lamp && element && catalog.lines.some((l) => l.element === element && l.kind === 'atomic')) {
    // Any element of the line list works as a lamp (a Cd or Zn spectral lamp, a flame): its strong lines.
    const pool = catalog.lines.filter((l) => l.element === element && l.kind === 'atomic');
    const spectra = [...new Set(pool.map((l) => l.spectrum))].join(', ');
    return { name: element, pool, chosen: (l) => l.strong, description: `${spectra} lines of the line list` };
  }
  if (!lamp) throw new InputError(`lamp: unknown lamp ${JSON.stringify(token)}; known: ${knownNames(catalog)}`, 'lamp');
  const spectra = new Set(lamp.spectra);
  const pool = [...catalog.lines.filter((l) => spectra.has(l.spectrum) && l.kind === 'atomic'), ...lamp.extraLines];
  const chosen = (l: ListedLine) => lamp.select === 'all' || l.strong || l.kind === 'phosphor';
  return { name: lamp.name, pool, chosen, description: lamp.description };
}

/**
 * The reference lines of a lamp spec as calibration uses them: `Hg`, `Ne,Hg` (any combination, also with `+`),
 * `laser:632.816` (a line at that air wavelength), `laser:HeNe-633` (a laser kind by name), or a file token whose
 * lines the caller loaded into `options.files`. For each lamp the lines flagged persistent or strong within the range
 * are kept; every line is marked `blended` when another line of the whole spec (strong or not) lies within the
 * resolution and is not much fainter — calibration should weight or skip those.
 */
export function lampLines(spec: string, options: LampLinesOptions): LampLines {
  const rangeNm = options.rangeNm ?? LAMP_LINES_DEFAULTS.rangeNm;
  const resolutionNm = options.resolutionNm ?? LAMP_LINES_DEFAULTS.resolutionNm;
  const blendRatio = options.blendRatio ?? LAMP_LINES_DEFAULTS.blendRatio;
  assertFinite('rangeNm[0]', rangeNm[0], 0);
  assertFinite('rangeNm[1]', rangeNm[1], rangeNm[0]);
  assertFinite('resolutionNm', resolutionNm, 0);
  assertFinite('blendRatio', blendRatio, 0);
  if (typeof spec !== 'string' || spec.trim() === '') throw invalid('lamp', 'a lamp name such as Hg or Ne,Hg', spec);
  const tokens = spec
    .split(/[,+]/)
    .map((t) => t.trim())
    .filter((t, i, all) => t !== '' || i < all.length - 1);
  if (tokens.some((t) => t === '')) throw invalid('lamp', 'names separated by single commas, e.g. Ne,Hg', spec);

  const warnings: string[] = [];
  const inRange = (l: ListedLine) => l.wavelengthNm >= rangeNm[0] && l.wavelengthNm <= rangeNm[1];
  const pool = new Map<string, ListedLine & { lamp: string }>();
  const chosenKeys = new Set<string>();
  const names: string[] = [];
  const descriptions: string[] = [];
  for (const token of tokens) {
    const r = resolveToken(token, options);
    if (names.includes(r.name)) {
      warnings.push(`lamp ${r.name} is named twice; used once`);
      continue;
    }
    names.push(r.name);
    descriptions.push(`${r.name}: ${r.description}`);
    let count = 0;
    for (const l of r.pool) {
      if (!inRange(l)) continue;
      const key = `${l.spectrum}|${l.wavelengthNm.toFixed(4)}`;
      if (!pool.has(key)) pool.set(key, { ...l, lamp: r.name });
      if (r.chosen(l)) {
        chosenKeys.add(key);
        count++;
      }
    }
    if (count === 0) warnings.push(`lamp ${r.name} has no listed lines in ${rangeNm[0]}–${rangeNm[1]} nm`);
  }
  if (chosenKeys.size === 0) {
    throw new InputError(`lamp ${spec}: no reference lines in ${rangeNm[0]}–${rangeNm[1]} nm`, 'lamp');
  }

  // Relative intensities per spectrum (intensities are comparable only within one spectrum of one source).
  const maxBySpectrum = new Map<string, number>();
  for (const l of pool.values()) maxBySpectrum.set(l.spectrum, Math.max(maxBySpectrum.get(l.spectrum) ?? 0, l.intensity));
  const rel = (l: ListedLine) => {
    const m = maxBySpectrum.get(l.spectrum) ?? 0;
    return m > 0 ? l.intensity / m : 1;
  };
  const all = [...pool.values()].sort((a, b) => a.wavelengthNm - b.wavelengthNm);
  const lines: LampLine[] = [];
  for (const [key, l] of pool) {
    if (!chosenKeys.has(key)) continue;
    const own = rel(l);
    const blendedWith: number[] = [];
    for (const n of all) {
      if (n === l) continue;
      // A narrow line on a broad band (a phosphor continuum) keeps its position: only features narrower than a
      // few resolution elements blend a narrow line.
      if ((n.widthNm ?? 0) > 3 * resolutionNm && (l.widthNm ?? 0) <= 3 * resolutionNm) continue;
      const reach = resolutionNm + ((n.widthNm ?? 0) + (l.widthNm ?? 0)) / 2;
      if (Math.abs(n.wavelengthNm - l.wavelengthNm) < reach && rel(n) >= blendRatio * own) blendedWith.push(n.wavelengthNm);
    }
    lines.push({ ...l, relativeIntensity: own, blended: blendedWith.length > 0, blendedWith });
  }
  lines.sort((a, b) => a.wavelengthNm - b.wavelengthNm);
  const nBlended = lines.filter((l) => l.blended).length;
  if (nBlended > 0) {
    const shown = lines
      .filter((l) => l.blended)
      .slice(0, 6)
      .map((l) => `${l.spectrum} ${l.wavelengthNm.toFixed(3)}`)
      .join(', ');
    warnings.push(
      `${nBlended} of ${lines.length} lamp lines are blended at ${resolutionNm} nm resolution (${shown}${nBlended > 6 ? ', …' : ''})`,
    );
  }
  const description =
    `${descriptions.join('; ')}. ${lines.length} reference lines in ${rangeNm[0]}–${rangeNm[1]} nm` +
    (nBlended ? `, ${nBlended} blended at ${resolutionNm} nm.` : '.');
  return { lines, description, warnings, lamps: names };
}

function record(value: unknown, where: string): Record<string, unknown> {
  if (typeof value !== 'object' || value === null || Array.isArray(value)) throw invalid(where, 'an object', value);
  return value as Record<string, unknown>;
}

function text(obj: Record<string, unknown>, key: string, where: string): string {
  const v = obj[key];
  if (typeof v !== 'string' || v.trim() === '') throw invalid(`${where}.${key}`, 'a non-empty string', v);
  return v;
}

/**
 * Reads lamp definitions (data/lamps.json): `{ "lamps": [ { name, aliases?, description, spectra, select?,
 * extra_lines?: [{ wavelength_nm, intensity, spectrum, width_nm?, source, note? }] } ] }`. Errors name the source and
 * the entry.
 */
export function parseLampDefinitions(json: unknown, source: string): LampDefinition[] {
  const root = record(json, source);
  if (!Array.isArray(root.lamps)) throw invalid(`${source}: lamps`, 'an array of lamp definitions', root.lamps);
  return root.lamps.map((entry, i) => {
    const where = `${source}: lamps[${i}]`;
    const o = record(entry, where);
    const name = text(o, 'name', where);
    const aliases = o.aliases === undefined ? [] : o.aliases;
    if (!Array.isArray(aliases) || aliases.some((a) => typeof a !== 'string')) throw invalid(`${where}.aliases`, 'an array of names', aliases);
    if (!Array.isArray(o.spectra) || o.spectra.some((s) => typeof s !== 'string')) {
      throw invalid(`${where}.spectra`, "an array of spectra such as 'Hg I'", o.spectra);
    }
    const spectra = (o.spectra as string[]).map((s) => parseSpectrumName(s, `${where}.spectra`).spectrum);
    const select = o.select ?? 'strong';
    if (select !== 'strong' && select !== 'all') throw invalid(`${where}.select`, "'strong' or 'all'", select);
    const extras = o.extra_lines === undefined ? [] : o.extra_lines;
    if (!Array.isArray(extras)) throw invalid(`${where}.extra_lines`, 'an array of lines', extras);
    const extraLines = extras.map((x, j): ListedLine => {
      const w = `${where}.extra_lines[${j}]`;
      const e = record(x, w);
      assertFinite(`${w}.wavelength_nm`, e.wavelength_nm, 200, 2000);
      assertFinite(`${w}.intensity`, e.intensity, 0);
      if (e.width_nm !== undefined) assertFinite(`${w}.width_nm`, e.width_nm, 0, 200);
      const spectrum = text(e, 'spectrum', w);
      const line: ListedLine = {
        wavelengthNm: e.wavelength_nm as number,
        intensity: e.intensity as number,
        element: spectrum.split(/[\s\d³²⁺+(]/)[0],
        spectrum,
        ionStage: 0,
        kind: 'phosphor',
        persistent: false,
        strong: true,
        blend: false,
        source: text(e, 'source', w),
      };
      if (e.width_nm !== undefined) line.widthNm = e.width_nm as number;
      if (typeof e.note === 'string') line.note = e.note;
      return line;
    });
    return { name, aliases: aliases as string[], description: text(o, 'description', where), spectra, select, extraLines };
  });
}

/** Reads laser kinds (data/lasers.json): `{ "lasers": [ { name, aliases?, description, wavelength_nm, tolerance_nm, kind, source } ] }`. */
export function parseLaserDefinitions(json: unknown, source: string): LaserDefinition[] {
  const root = record(json, source);
  if (!Array.isArray(root.lasers)) throw invalid(`${source}: lasers`, 'an array of laser definitions', root.lasers);
  return root.lasers.map((entry, i) => {
    const where = `${source}: lasers[${i}]`;
    const o = record(entry, where);
    assertFinite(`${where}.wavelength_nm`, o.wavelength_nm, 200, 2000);
    assertFinite(`${where}.tolerance_nm`, o.tolerance_nm, 0, 100);
    const kind = o.kind;
    if (kind !== 'gas' && kind !== 'dpss' && kind !== 'diode') throw invalid(`${where}.kind`, "'gas', 'dpss' or 'diode'", kind);
    const aliases = o.aliases === undefined ? [] : o.aliases;
    if (!Array.isArray(aliases) || aliases.some((a) => typeof a !== 'string')) throw invalid(`${where}.aliases`, 'an array of names', aliases);
    return {
      name: text(o, 'name', where),
      aliases: aliases as string[],
      description: text(o, 'description', where),
      wavelengthNm: o.wavelength_nm as number,
      toleranceNm: o.tolerance_nm as number,
      kind,
      source: text(o, 'source', where),
    };
  });
}
