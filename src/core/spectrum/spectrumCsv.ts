import { InputError } from '../errors.js';
import { parseNumericCsv } from '../table/parseNumericCsv.js';
import type { Spectrum } from '../types.js';

/** A 1-D spectrum read from CSV text, with what was recognised in it. */
export interface SpectrumTable {
  /**
   * `positionPx` is the pixel column when there is one, else the sample index 0, 1, 2, …; `wavelengthNm` is set when
   * a column holds wavelengths; `variance` is the square of an uncertainty column.
   */
  spectrum: Spectrum;
  /** What the position axis of the file is: pixels (or plain positions) or wavelengths. */
  axis: 'pixel' | 'wavelength';
  /** The header cells used for each role, as written (null when the file has no header or no such column). */
  columns: { pixel: string | null; wavelength: string | null; intensity: string | null; uncertainty: string | null };
  /** Whether the rows were reversed from descending order. */
  reversed: boolean;
  /** Comment and metadata lines, as written. */
  metadata: string[];
  warnings: string[];
}

export interface ParseSpectrumCsvOptions {
  /** Name of the input in messages (a file name or form field). */
  source: string;
}

/** The fewest samples accepted: peak finding needs a few samples around each line. */
export const MIN_SPECTRUM_ROWS = 5;

const PIXEL = /^(pixel|pixels|px|pix|position|pos|x|index|idx|column|col|channel|sample)(?![a-z])/i;
const WAVELENGTH = /^(wavelength|wave[\s_-]*length|wl|lambda|λ|wave)(?![a-z])/i;
const INTENSITY = /^(intensity|counts?|signal|value|y|amplitude|power|irradiance|flux|adu|dn|level|raw|spectrum)(?![a-z])/i;
const UNCERTAINTY = /^(uncertainty|unc|error|err|sigma|σ|std|stdev|stddev|sd|noise|u)(?![a-z])/i;

/**
 * Reads a 1-D spectrum from CSV text (comma, semicolon, tab or whitespace separated; comment lines; see
 * parseNumericCsv). Columns are recognised by their header:
 *  - position: `pixel`, `px`, `position`, `x`, `index`, … (read as pixels),
 *  - wavelength: `wavelength_nm`, `Wavelength (nm)`, `lambda_nm`, `wl`, … (nm; `Å`/`angstrom` and `µm`/`um` in the
 *    header are converted),
 *  - intensity: `intensity`, `counts`, `signal`, `value`, … (the first column that is neither of the others, otherwise),
 *  - uncertainty (optional): `uncertainty`, `error`, `sigma`, `std`, ….
 * Without a header: one column is the intensity; two are position, intensity; three add an uncertainty.
 * Rows are sorted by position: a file in strictly descending order is reversed; any other disorder, a repeated
 * position, a non-finite value or a non-positive uncertainty is an InputError naming the source and the line.
 */
export function parseSpectrumCsv(text: string, options: ParseSpectrumCsvOptions): SpectrumTable {
  const source = options.source;
  const table = parseNumericCsv(text, { source });
  const warnings: string[] = [];
  const width = table.rows[0]?.length ?? 0;
  const roles = assignColumns(table.header, width, source);
  const rows = table.rows;
  const lines = table.lineNumbers;
  if (rows.length < MIN_SPECTRUM_ROWS) {
    throw new InputError(
      `${source}: ${rows.length} data row${rows.length === 1 ? '' : 's'}; a spectrum needs at least ${MIN_SPECTRUM_ROWS}`,
      source,
    );
  }
  const header = table.header;
  const name = (col: number | null): string | null => (col === null ? null : (header?.[col] ?? `column ${col + 1}`));
  for (let r = 0; r < rows.length; r++) {
    for (const col of [roles.pixel, roles.wavelength, roles.intensity, roles.uncertainty]) {
      if (col === null) continue;
      const v = rows[r][col];
      if (!Number.isFinite(v)) {
        throw new InputError(`${source}, line ${lines[r]}, column ${col + 1} (${name(col)}): expected a finite number, got ${v}`, source);
      }
    }
    if (roles.uncertainty !== null && !(rows[r][roles.uncertainty] > 0)) {
      throw new InputError(
        `${source}, line ${lines[r]}, column ${roles.uncertainty + 1} (${name(roles.uncertainty)}): expected a positive uncertainty, got ${rows[r][roles.uncertainty]}`,
        source,
      );
    }
  }
  // Order by the position axis (wavelength when there is no pixel column).
  const axisCol = roles.pixel ?? roles.wavelength;
  let order = rows.map((_, i) => i);
  let reversed = false;
  if (axisCol !== null) {
    const xs = rows.map((row) => row[axisCol]);
    const descending = xs.every((v, i) => i === 0 || v < xs[i - 1]);
    if (descending) {
      order = order.reverse();
      reversed = true;
    } else {
      for (let i = 1; i < xs.length; i++) {
        if (xs[i] === xs[i - 1] || (xs[i] < xs[i - 1])) {
          const what = xs[i] === xs[i - 1] ? 'repeats' : 'goes back to';
          throw new InputError(
            `${source}, line ${lines[i]}: ${name(axisCol)} ${what} ${xs[i]} after ${xs[i - 1]} on line ${lines[i - 1]}; expected values that only increase (or only decrease)`,
            source,
          );
        }
      }
    }
    // The other axis, when both are present, must run the same way.
    const other = axisCol === roles.pixel ? roles.wavelength : null;
    if (other !== null) {
      const ws = order.map((i) => rows[i][other]);
      const up = ws[ws.length - 1] > ws[0];
      for (let k = 1; k < ws.length; k++) {
        if (ws[k] === ws[k - 1] || ws[k] > ws[k - 1] !== up) {
          throw new InputError(
            `${source}, line ${lines[order[k]]}: ${name(other)} ${ws[k]} breaks the order of the wavelengths (expected them monotonic along ${name(axisCol)})`,
            source,
          );
        }
      }
    }
  }
  const n = rows.length;
  const get = (col: number, scale = 1): Float64Array => Float64Array.from(order, (i) => rows[i][col] * scale);
  const intensity = get(roles.intensity);
  const positionPx = roles.pixel !== null ? get(roles.pixel) : Float64Array.from({ length: n }, (_, i) => i);
  const spectrum: Spectrum = { positionPx, intensity };
  if (roles.wavelength !== null) {
    const scale = unitScale(header?.[roles.wavelength] ?? '');
    spectrum.wavelengthNm = get(roles.wavelength, scale);
    const lo = Math.min(spectrum.wavelengthNm[0], spectrum.wavelengthNm[n - 1]);
    const hi = Math.max(spectrum.wavelengthNm[0], spectrum.wavelengthNm[n - 1]);
    if (lo < 150 || hi > 3000) {
      warnings.push(
        `${source}: wavelengths run from ${lo} to ${hi} nm, outside 150–3000 nm; if they are not nanometres, name the unit in the header (e.g. "wavelength (Å)")`,
      );
    }
  }
  if (roles.uncertainty !== null) {
    const u = get(roles.uncertainty);
    spectrum.variance = u.map((v) => v * v);
  }
  if (roles.pixel !== null && roles.wavelength === null && header === null) {
    const xs = spectrum.positionPx;
    const integer = xs.every((v) => Number.isInteger(v));
    if (!integer && xs[0] >= 150 && xs[n - 1] <= 2500) {
      warnings.push(
        `${source}: the first column looks like wavelengths but the file has no header; it is read as pixel positions (add a header "wavelength_nm,intensity" to read it as wavelengths)`,
      );
    }
  }
  return {
    spectrum,
    axis: roles.wavelength !== null && roles.pixel === null ? 'wavelength' : 'pixel',
    columns: {
      pixel: header && roles.pixel !== null ? header[roles.pixel] : null,
      wavelength: header && roles.wavelength !== null ? header[roles.wavelength] : null,
      intensity: header ? header[roles.intensity] : null,
      uncertainty: header && roles.uncertainty !== null ? header[roles.uncertainty] : null,
    },
    reversed,
    metadata: table.metadata,
    warnings,
  };
}

interface Roles {
  pixel: number | null;
  wavelength: number | null;
  intensity: number;
  uncertainty: number | null;
}

/** Which column plays which role, from the header, or by position without one. */
function assignColumns(header: string[] | null, width: number, source: string): Roles {
  if (!header) {
    if (width === 1) return { pixel: null, wavelength: null, intensity: 0, uncertainty: null };
    if (width === 2) return { pixel: 0, wavelength: null, intensity: 1, uncertainty: null };
    if (width === 3) return { pixel: 0, wavelength: null, intensity: 1, uncertainty: 2 };
    throw new InputError(
      `${source}: ${width} columns and no header; expected position, intensity and optionally uncertainty, or a header naming the columns (e.g. "wavelength_nm,intensity")`,
      source,
    );
  }
  const cells = header.slice(0, width).map(cleanHeader);
  const find = (re: RegExp, taken: Array<number | null>): number | null => {
    const i = cells.findIndex((c, k) => re.test(c) && !taken.includes(k));
    return i >= 0 ? i : null;
  };
  const wavelength = find(WAVELENGTH, []) ?? findByUnit(cells);
  const pixel = find(PIXEL, [wavelength]);
  let intensity = find(INTENSITY, [wavelength, pixel]);
  const uncertainty = find(UNCERTAINTY, [wavelength, pixel, intensity]);
  if (intensity === null) {
    const rest = cells.map((_, k) => k).filter((k) => ![wavelength, pixel, uncertainty].includes(k));
    if (rest.length === 0) {
      throw new InputError(`${source}: no intensity column among ${header.map((h) => JSON.stringify(h)).join(', ')}`, source);
    }
    intensity = rest[0];
  }
  if (wavelength === null && pixel === null && width >= 2 && intensity !== 0) {
    // An unnamed first column ahead of the intensity is the position.
    return { pixel: 0, wavelength: null, intensity, uncertainty };
  }
  return { pixel, wavelength, intensity, uncertainty };
}

/** Lower-case, with quotes and surrounding space removed. */
function cleanHeader(cell: string): string {
  return cell.replace(/^["']|["']$/g, '').trim().toLowerCase();
}

/** A header that names only a length unit, e.g. "nm" or "[nm]", is a wavelength column. */
function findByUnit(cells: string[]): number | null {
  const i = cells.findIndex((c) => /^[[(]?\s*(nm|nanometers?|nanometres?|å|angstroms?|µm|um|microns?)\s*[\])]?$/.test(c));
  return i >= 0 ? i : null;
}

/** Factor to nm from the unit named in a wavelength header (nm when none is named). */
function unitScale(headerCell: string): number {
  const h = headerCell.toLowerCase();
  if (/(å|angstrom|\(a\)|\[a\]|_a$)/.test(h)) return 0.1;
  if (/(µm|μm|\bum\b|_um\b|micron)/.test(h)) return 1000;
  return 1;
}
