/**
 * The batch summary as CSV: one row per file, in input order — file, status, the command's answer and key figures
 * (units in the headers), the number of warnings, and the error of a file that failed. RFC 4180: comma-separated,
 * CRLF line ends, fields with commas, quotes or line breaks quoted, quotes doubled.
 */
import type { BatchCommand } from './jobs.js';
import type { BatchItem } from './pool.js';

type Json = Record<string, unknown>;
type Cell = string | number | boolean | null | undefined;

interface SummaryColumn {
  header: string;
  value: (json: Json) => Cell;
}

const arr = (v: unknown): Json[] => (Array.isArray(v) ? (v as Json[]) : []);
const rec = (v: unknown): Json | null => (v !== null && typeof v === 'object' && !Array.isArray(v) ? (v as Json) : null);
const num = (v: unknown): number | null => (typeof v === 'number' && Number.isFinite(v) ? v : null);

/**
 * The present species, the one that gives most of the line flux first (the gas that fills the tube), then by score:
 * the order the report's verdict names them in ("Mercury, with argon").
 */
function presentSpecies(json: Json): Json[] {
  return arr(json.species)
    .filter((s) => s.present === true)
    .sort((a, b) => (num(b.fluxFraction) ?? 0) - (num(a.fluxFraction) ?? 0) || (num(b.score) ?? 0) - (num(a.score) ?? 0));
}

const IDENTIFY_COLUMNS: SummaryColumn[] = [
  { header: 'species_present', value: (j) => presentSpecies(j).map((s) => s.element).join(' + ') },
  { header: 'top_species', value: (j) => presentSpecies(j)[0]?.element as string | undefined },
  { header: 'top_species_score', value: (j) => num(presentSpecies(j)[0]?.score) },
  { header: 'emission_lines_found', value: (j) => j.emissionLinesFound as boolean | undefined },
  { header: 'calibration_from', value: (j) => rec(j.calibration)?.from as string | undefined },
  { header: 'calibration_lamp', value: (j) => rec(j.calibration)?.lamp as string | undefined },
  { header: 'calibration_rms_nm', value: (j) => num(rec(j.calibration)?.rmsNm) },
  { header: 'peaks', value: (j) => arr(j.peaks).length },
  { header: 'peaks_identified', value: (j) => arr(j.peaks).filter((p) => p.line !== null && p.line !== undefined).length },
  { header: 'unexplained_flux_percent', value: (j) => (num(j.unexplainedFluxFraction) === null ? null : 100 * num(j.unexplainedFluxFraction)!) },
  { header: 'laser_wavelength_nm', value: (j) => num(rec(j.laser)?.wavelengthNm) },
  { header: 'laser_wavelength_uncertainty_nm', value: (j) => num(rec(j.laser)?.wavelengthUncertaintyNm) },
];

/** The brightest peak (by height). */
function brightest(json: Json): Json | undefined {
  let best: Json | undefined;
  for (const p of arr(json.peaks)) if (!best || (num(p.height) ?? -Infinity) > (num(best.height) ?? -Infinity)) best = p;
  return best;
}

const SPECTRUM_COLUMNS: SummaryColumn[] = [
  { header: 'kind', value: (j) => rec(j.input)?.kind as string | undefined },
  { header: 'width_px', value: (j) => num(rec(j.input)?.widthPx) },
  { header: 'height_px', value: (j) => num(rec(j.input)?.heightPx) },
  { header: 'band_angle_deg', value: (j) => num(rec(j.band)?.angleDeg) },
  { header: 'band_length_px', value: (j) => num(rec(j.band)?.lengthPx) },
  { header: 'samples', value: (j) => num(rec(j.spectrum)?.samples) },
  { header: 'saturated_samples', value: (j) => num(rec(j.spectrum)?.saturatedSamples) },
  { header: 'peaks', value: (j) => arr(j.peaks).length },
  { header: 'brightest_peak_position_px', value: (j) => num(brightest(j)?.positionPx) },
  { header: 'brightest_peak_wavelength_nm', value: (j) => num(brightest(j)?.wavelengthNm) },
  { header: 'brightest_peak_wavelength_uncertainty_nm', value: (j) => num(brightest(j)?.wavelengthUncertaintyNm) },
  { header: 'brightest_peak_snr', value: (j) => num(brightest(j)?.snr) },
  { header: 'calibration_rms_nm', value: (j) => num(rec(j.calibration)?.rmsNm) },
];

/** Each command's answer columns, read from its result JSON (camelCase, as the task returns it). */
export const SUMMARY_COLUMNS: Record<BatchCommand, SummaryColumn[]> = {
  identify: IDENTIFY_COLUMNS,
  spectrum: SPECTRUM_COLUMNS,
};

function cell(v: Cell): string {
  if (v === null || v === undefined) return '';
  const s = typeof v === 'number' ? String(Number(v.toPrecision(7))) : String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** The summary CSV of a batch. */
export function batchSummaryCsv(command: BatchCommand, items: readonly BatchItem[]): string {
  const columns = SUMMARY_COLUMNS[command];
  const lines = [['file', 'status', ...columns.map((c) => c.header), 'warnings', 'error'].join(',')];
  for (const item of items) {
    const answer = item.status === 'ok' ? columns.map((c) => c.value(item.result.json)) : columns.map(() => null);
    const row: Cell[] = [item.file, item.status, ...answer, item.status === 'ok' ? item.result.warnings.length : null, item.status === 'failed' ? item.error : null];
    lines.push(row.map(cell).join(','));
  }
  return lines.join('\r\n') + '\r\n';
}
