import { PALETTE } from '../../plot/chart.js';
import type { ReportTable } from '../html.js';
import { count, deg, plain, withU } from './format.js';
import { plotSticks, type Stick } from './plotSticks.js';
import { baseName, JsonView } from './read.js';
import type { ResultSection, SectionOptions } from './types.js';
import { KIND_LABEL } from './types.js';

/** A peak of a peak table (spectrum, identify): the keys of issue 2's contract, wavelength once calibrated. */
export interface PeakRow {
  positionPx: number;
  positionUncertaintyPx?: number;
  wavelengthNm?: number;
  wavelengthUncertaintyNm?: number;
  fwhmPx?: number;
  height: number;
  snr?: number;
  saturated: boolean;
  blended: boolean;
}

export function readPeak(p: JsonView): PeakRow {
  return {
    positionPx: p.num('position_px'),
    positionUncertaintyPx: p.optNum('position_uncertainty_px'),
    wavelengthNm: p.optNum('wavelength_nm'),
    wavelengthUncertaintyNm: p.optNum('wavelength_uncertainty_nm'),
    fwhmPx: p.optNum('fwhm_px'),
    height: p.num('height'),
    snr: p.optNum('snr'),
    saturated: p.optBool('saturated') ?? false,
    blended: p.optBool('blended') ?? false,
  };
}

/** The flags of a peak in words; `measure` names what a clipped peak understates (its height, its flux). */
export function peakNotes(p: PeakRow, measure = 'height'): string {
  return [p.saturated ? `clipped (${measure} is a lower bound)` : '', p.blended ? 'blended' : ''].filter(Boolean).join(', ');
}

/**
 * `glowprint spectrum --json` → a report section: the band, the peak table, and a stick plot of the peaks (the JSON
 * carries the peak table, not the samples, so the plot shows each peak's fitted height at its centre).
 */
export function spectrumSection(json: unknown, options: SectionOptions): ResultSection {
  const r = new JsonView(json);
  const input = r.optObj('input');
  const file = input?.optStr('file');
  const item = file ? baseName(file) : options.source ? baseName(options.source) : 'spectrum';
  const band = r.optObj('band');
  const summary = r.optObj('spectrum');
  const peaks = r.objects('peaks').map(readPeak);
  const warnings = r.warnings();
  const calibrated = peaks.length > 0 && peaks.every((p) => p.wavelengthNm !== undefined);
  const clipped = peaks.filter((p) => p.saturated).length;
  const id = options.id ?? 'spectrum';

  const verdict =
    peaks.length === 0
      ? 'No peaks found'
      : `${count(peaks.length, 'peak')} found${clipped ? `, ${clipped} clipped` : ''}` +
        (calibrated ? `, ${rangeText(peaks)}` : ' (positions in pixels along the band: no wavelength calibration applied)');

  const figures: Array<[string, string]> = [];
  if (input) {
    const exif = input.optObj('exif');
    const size = input.has('width_px') ? `${input.num('width_px')} × ${input.num('height_px')} px` : undefined;
    figures.push(['Input', [file ?? '—', input.optStr('kind'), size].filter(Boolean).join(', ')]);
    if (exif) {
      const t = exif.optNum('exposure_time_s');
      const parts = [
        t !== undefined ? (t < 1 ? `1/${Math.round(1 / t)} s` : `${plain(t)} s`) : undefined,
        exif.has('iso') ? `ISO ${exif.num('iso')}` : undefined,
        exif.has('f_number') ? `f/${exif.num('f_number')}` : undefined,
        [exif.optStr('camera_make'), exif.optStr('camera_model')].filter(Boolean).join(' ') || undefined,
      ].filter(Boolean);
      if (parts.length) figures.push(['Camera', parts.join(', ')]);
    }
    if (input.has('dark_file')) figures.push(['Dark frame', input.str('dark_file')]);
  }
  if (band) {
    const c = band.obj('center');
    figures.push(['Band axis', `${deg(band.num('angle_deg'), band.optNum('angle_uncertainty_deg'))} from +x towards +y (${band.optStr('source') === 'manual' ? 'set by hand' : 'found in the photo'})`]);
    figures.push(['Line slant', deg(band.num('slant_deg'), band.optNum('slant_uncertainty_deg'))]);
    figures.push(['Band centre, size', `(${plain(c.num('x'), '', 5)}, ${plain(c.num('y'), '', 5)}) px; ${plain(band.num('length_px'), '', 4)} × ${plain(band.num('height_px'), '', 3)} px`]);
  }
  const calibration = r.optObj('calibration');
  if (calibration) {
    const range = calibration.has('range_nm') ? calibration.numbers('range_nm') : [];
    figures.push([
      'Wavelength scale',
      `${calibration.optStr('medium') ?? 'air'} wavelengths from profile ${baseName(calibration.optStr('profile') ?? '—')}` +
        ` (${calibration.optStr('lamp') ?? '?'} lamp, ${calibration.optStr('model') ?? '?'} model, RMS ${plain(calibration.optNum('rms_nm'), 'nm', 2)}` +
        (range.length === 2 ? `, calibrated ${range[0].toFixed(1)}–${range[1].toFixed(1)} nm` : '') +
        ')' +
        (calibration.optNum('extrapolated_peaks') ? `; ${count(calibration.num('extrapolated_peaks'), 'peak')} extrapolated beyond that range` : ''),
    ]);
  }
  if (summary) {
    figures.push(['Samples', `${summary.num('samples')}${summary.optNum('saturated_samples') ? `, ${summary.num('saturated_samples')} with clipped pixels` : ''}`]);
    if (summary.has('noise')) figures.push(['Noise (robust σ), detection threshold', `${plain(summary.num('noise'), '', 3)}, ${plain(summary.optNum('threshold'), '', 3)}`]);
  }

  const sticks: Stick[] = peaks.map((p) => ({
    x: calibrated ? p.wavelengthNm! : p.positionPx,
    height: p.height,
    label: calibrated ? p.wavelengthNm!.toFixed(1) : p.positionPx.toFixed(0),
    colour: p.saturated ? PALETTE.marker : PALETTE.series[0],
    lowerBound: p.saturated,
    hollow: p.blended,
  }));
  const svgs = peaks.length
    ? [
        plotSticks({
          document: options.document,
          sticks,
          title: `${item}: peak table (fitted height at each peak centre)`,
          xLabel: calibrated ? 'wavelength (nm)' : 'position along the band (px)',
          yLabel: 'peak height (relative)',
          yScale: 'auto',
          legend: [
            ['peak', PALETTE.series[0]],
            ...(clipped ? ([['clipped: height is a lower bound', PALETTE.marker]] as const) : []),
          ],
        }),
      ]
    : [];

  return {
    kind: 'spectrum',
    section: {
      id,
      heading: `${item} — ${KIND_LABEL.spectrum.toLowerCase()}`,
      subtitle: file ? `Measured from ${file}` : undefined,
      verdict,
      figures,
      svgs,
      tables: [peakTable(peaks, calibrated)],
      warnings,
    },
    summary: {
      id,
      item,
      measurement: KIND_LABEL.spectrum,
      result: peaks.length ? `${count(peaks.length, 'peak')}${clipped ? `, ${clipped} clipped` : ''}` : 'no peaks',
      keyFigure: calibrated ? rangeText(peaks) : band ? `band axis at ${band.num('angle_deg').toFixed(2)}°` : '—',
      warnings: warnings.length,
    },
  };
}

function rangeText(peaks: PeakRow[]): string {
  const w = peaks.map((p) => p.wavelengthNm!).filter(Number.isFinite);
  return `${Math.min(...w).toFixed(1)}–${Math.max(...w).toFixed(1)} nm`;
}

export function peakTable(peaks: PeakRow[], calibrated: boolean): ReportTable {
  const columns = ['#', 'position (px)'];
  if (calibrated) columns.push('wavelength (nm)');
  columns.push('FWHM (px)', 'height', 'SNR', 'note');
  return {
    caption: `Peaks (${peaks.length}), in order along the band`,
    columns,
    numeric: calibrated ? [0, 1, 2, 3, 4, 5] : [0, 1, 2, 3, 4],
    rows: peaks.map((p, i) => {
      const row: Array<string | number | undefined> = [i + 1, withU(p.positionPx, p.positionUncertaintyPx)];
      if (calibrated) row.push(withU(p.wavelengthNm, p.wavelengthUncertaintyNm));
      row.push(p.fwhmPx === undefined ? undefined : plain(p.fwhmPx, '', 3), plain(p.height, '', 4), p.snr === undefined ? undefined : plain(p.snr, '', 3), peakNotes(p));
      return row;
    }),
  };
}
