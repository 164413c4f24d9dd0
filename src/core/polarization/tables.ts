import { InputError } from '../errors.js';
import type { NumericTable } from '../table/parseNumericCsv.js';
import type { MalusPoint } from './malusFit.js';
import type { TimeSeries } from './timeSeries.js';

/**
 * Column mapping for the polarization tables (parsed by parseNumericCsv). With a header the columns are found by
 * name (`angle_deg`, `intensity`/`power_mw`/`counts`…, `uncertainty`/`sigma`…, `time_s`); without one they are taken
 * in the documented order.
 */

const ANGLE = /^(angle|angle_deg|theta|theta_deg|analyser|analyzer|analyser_deg|analyzer_deg|deg|plate_deg|qwp_deg)$/i;
const INTENSITY = /^(intensity|i|power|power_\w+|signal|counts|reading|value|irradiance|voltage|voltage_\w+|current_\w+)$/i;
const UNCERTAINTY = /^(uncertainty|uncertainty_\w+|sigma|sigma_\w+|u|err|error|std|stdev|sd)$/i;
const TIME = /^(time|time_s|t|t_s|seconds|s)$/i;

/**
 * parseNumericCsv starts the data at the first two consecutive numeric rows and keeps what precedes them as
 * metadata (or takes the row just before them for a header); a reading such as "0,NaN" near the top would vanish
 * there. A metadata line or header that starts like a reading (a number, then a delimiter) is therefore refused, quoted.
 */
function refuseHiddenRows(table: NumericTable, source: string, expected: string): void {
  // A header row whose first cell is a number is a reading the reader could not parse ("0,NaN" before the data).
  if (table.header && /^[+-]?(\d|\.\d)/.test(table.header[0] ?? '')) {
    throw new InputError(`${source}: the row ${JSON.stringify(table.header.join(',').slice(0, 60))} is not all numbers; expected ${expected}`, source);
  }
  for (const line of table.metadata) {
    if (/^\s*[+-]?(\d|\.\d)[^,;\t ]*\s*[,;\t ]/.test(line)) {
      throw new InputError(`${source}: the row ${JSON.stringify(line.trim().slice(0, 60))} is not all numbers; expected ${expected}`, source);
    }
  }
}

function findColumn(header: string[] | null, pattern: RegExp): number {
  if (!header) return -1;
  return header.findIndex((h) => pattern.test(h.trim().replace(/\s+/g, '_').replace(/[()[\]]/g, '')));
}

/**
 * Readings `angle_deg, intensity[, uncertainty]` → fit points, each labelled with its line in the file. A header
 * with other names than these (in any order) is matched by name; with none, the column order is used.
 */
export function malusPointsFromTable(table: NumericTable, source: string): MalusPoint[] {
  const width = table.rows[0]?.length ?? 0;
  if (width < 2) throw new InputError(`${source}: expected at least two columns (angle_deg, intensity), got ${width}`, source);
  refuseHiddenRows(table, source, 'angle_deg,intensity[,uncertainty]');
  let angle = findColumn(table.header, ANGLE);
  let intensity = findColumn(table.header, INTENSITY);
  let uncertainty = findColumn(table.header, UNCERTAINTY);
  if (angle < 0 || intensity < 0) {
    // Names not recognised: take the documented order, unless the header puts the angle elsewhere.
    if (angle > 0) {
      throw new InputError(
        `${source}: the header "${table.header!.join(',')}" has the angle in column ${angle + 1} but names no intensity column; expected angle_deg,intensity[,uncertainty]`,
        source,
      );
    }
    angle = 0;
    intensity = 1;
    uncertainty = width >= 3 ? (uncertainty >= 0 ? uncertainty : 2) : -1;
  }
  return table.rows.map((row, i) => ({
    angleDeg: row[angle],
    intensity: row[intensity],
    ...(uncertainty >= 0 ? { uncertainty: row[uncertainty] } : {}),
    source: `line ${table.lineNumbers[i]}`,
  }));
}

/** Samples `time_s, intensity` → a time series, labelled by line. */
export function timeSeriesFromTable(table: NumericTable, source: string): TimeSeries {
  const width = table.rows[0]?.length ?? 0;
  if (width < 2) throw new InputError(`${source}: expected two columns (time_s, intensity), got ${width}`, source);
  refuseHiddenRows(table, source, 'time_s,intensity');
  let time = findColumn(table.header, TIME);
  let intensity = findColumn(table.header, INTENSITY);
  if (time < 0 || intensity < 0) {
    time = 0;
    intensity = 1;
  }
  return {
    timeS: table.rows.map((r) => r[time]),
    intensity: table.rows.map((r) => r[intensity]),
    source,
    labels: table.lineNumbers.map((l) => `line ${l}`),
  };
}
