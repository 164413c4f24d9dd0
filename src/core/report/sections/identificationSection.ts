import { PALETTE } from '../../plot/chart.js';
import type { ReportTable } from '../html.js';
import { capitalise, count, likeU, percent, plain, withU } from './format.js';
import { plotSticks, type Stick } from './plotSticks.js';
import { baseName, JsonView } from './read.js';
import { peakNotes, readPeak, type PeakRow } from './spectrumSection.js';
import type { ResultSection, SectionOptions } from './types.js';
import { KIND_LABEL } from './types.js';

/** Names of the species in the project's line list, for readers who do not think in symbols. */
const SPECIES_NAME: Record<string, string> = {
  H: 'hydrogen', He: 'helium', Li: 'lithium', N: 'nitrogen', O: 'oxygen', Ne: 'neon', Na: 'sodium', Ar: 'argon',
  K: 'potassium', Ca: 'calcium', Cu: 'copper', Zn: 'zinc', Kr: 'krypton', Rb: 'rubidium', Sr: 'strontium',
  Cd: 'cadmium', In: 'indium', Xe: 'xenon', Cs: 'caesium', Ba: 'barium', Hg: 'mercury', Tl: 'thallium',
  N2: 'nitrogen (N₂ bands)', 'N2+': 'nitrogen ion (N₂⁺ bands)',
};

export function speciesName(element: string): string {
  return SPECIES_NAME[element] ?? element;
}

interface SpeciesRow {
  element: string;
  score: number;
  present: boolean;
  linesMatched: number;
  fluxFraction: number;
  missingLinesNm: number[];
}

interface IdentifiedRow extends PeakRow {
  /** `order`: the diffraction order the line is seen in, when not the first (it then appears at order × λ). */
  line: { element: string; spectrum?: string; wavelengthNm: number; order: number; blendedWithNm: number[] } | null;
  confidence?: number;
}

/** A peak's notes in the peak table: its flags, and the lines its line is unresolved from (which pull its centre). */
function identifiedNotes(p: IdentifiedRow, measure: string): string {
  const blend = p.line?.blendedWithNm.length ? `unresolved from ${p.line.blendedWithNm.map((w) => w.toFixed(3)).join(', ')} nm` : '';
  return [peakNotes(p, measure), blend].filter(Boolean).join('; ');
}

/**
 * `glowprint identify --json` → a report section: which gas, how sure, what else is present, which lines no species
 * explains, the laser line when there is one; a stick plot of the peaks labelled with their lines (unexplained ones
 * grey, marked "?"), the species table, the peak table and the list of unexplained lines.
 */
export function identificationSection(json: unknown, options: SectionOptions): ResultSection {
  const r = new JsonView(json);
  const id = options.id ?? 'identification';
  const warnings = r.warnings();
  const input = r.optObj('input');
  const file = input?.optStr('file') ?? r.optStr('file');
  const item = file ? baseName(file) : options.source ? baseName(options.source) : 'spectrum';
  const species: SpeciesRow[] = r.objects('species').map((s) => ({
    element: s.str('element'),
    score: s.num('score'),
    present: s.bool('present'),
    linesMatched: s.num('lines_matched'),
    fluxFraction: s.num('flux_fraction'),
    missingLinesNm: s.has('missing_lines_nm') ? s.numbers('missing_lines_nm') : [],
  }));
  // Line strength for the plot: the peak's height, else its area (identify reports areas), else all drawn equal.
  const peakViews = r.objects('peaks');
  const strength = peakViews.every((p) => p.has('height')) ? 'height' : peakViews.every((p) => p.has('area')) ? 'area' : null;
  const peaks: IdentifiedRow[] = peakViews.map((p) => {
    const line = p.optObj('line');
    return {
      ...readPeak(new JsonView({ ...p.value, height: strength ? p.num(strength) : 1 }, p.path)),
      line: line
        ? {
            element: line.str('element'),
            spectrum: line.optStr('spectrum'),
            wavelengthNm: line.num('wavelength_nm'),
            order: line.optNum('order') ?? 1,
            blendedWithNm: line.has('blended_with_nm') ? line.numbers('blended_with_nm') : [],
          }
        : null,
      confidence: p.optNum('confidence'),
    };
  });
  const hasHeights = strength !== null;
  // null: no wavelength scale (no profile, and no lamp's lines fit the peaks), so nothing could be identified.
  const calibration = r.optObj('calibration');
  const from = calibration?.str('from') ?? 'none';
  const calRms = calibration?.optNum('rms_nm');
  const laser = r.optObj('laser');
  const present = species.filter((s) => s.present).sort((a, b) => b.fluxFraction - a.fluxFraction || b.score - a.score);
  const unexplained = peaks.filter((p) => p.line === null && p.wavelengthNm !== undefined);
  const unexplainedFlux = r.optNum('unexplained_flux_fraction');
  const selfNote = from === 'self' ? ' — wavelength scale from the spectrum’s own lines, so the confidence is lowered' : '';
  const measure = strength === 'area' ? 'flux' : 'height';

  let verdict: string;
  let result: string;
  if (laser) {
    const cands = laser.optObjects('candidates');
    const best = cands[0];
    verdict = `Laser line at ${withU(laser.num('wavelength_nm'), laser.optNum('wavelength_uncertainty_nm'), 'nm')}${best ? ` — consistent with ${best.str('name')}${best.has('nominal_wavelength_nm') ? ` (${plain(best.num('nominal_wavelength_nm'))} nm)` : ''}` : ' — no known laser kind emits there'}`;
    result = best ? `laser: ${best.str('name')}` : 'laser line';
  } else if (present.length === 0) {
    verdict =
      r.optBool('emission_lines_found') === false
        ? 'No emission lines found: nothing is identified'
        : !calibration
          ? 'Not identified: no wavelength scale (no lamp’s line pattern fits these peaks); calibrate the rig and give --calibration'
          : 'No species identified with confidence';
    result = 'not identified';
  } else {
    const [main, ...others] = present;
    const withText = others.length ? `, with ${others.map((s) => `${speciesName(s.element)} (score ${s.score.toFixed(2)})`).join(', ')}` : '';
    verdict = `${capitalise(speciesName(main.element))} (score ${main.score.toFixed(2)})${withText}${selfNote}`;
    result = present.map((s) => s.element).join(' + ');
  }

  const figures: Array<[string, string]> = [];
  if (file) figures.push(['Photo', file]);
  figures.push([
    'Wavelength scale',
    !calibration
      ? 'none: the spectrum did not calibrate itself'
      : from === 'self'
        ? `from the spectrum's own lines${calibration.has('lamp') ? ` (${calibration.str('lamp')} lines${calibration.has('lines_used') ? `, ${calibration.num('lines_used')} used` : ''})` : ''}${calRms !== undefined ? `, RMS ${plain(calRms, 'nm', 2)}` : ''}${calibration.has('probability') ? `, probability ${calibration.num('probability').toFixed(3)} that this scale is the right one` : ''}`
        : from === 'file'
          ? "from the spectrum file's own wavelength axis"
          : `${calibration.optStr('file') ?? calibration.optStr('profile') ?? 'instrument profile'}${calibration.has('lamp') ? ` (${calibration.str('lamp')} lamp)` : ''}${calRms !== undefined ? `, RMS ${plain(calRms, 'nm', 2)}` : ''}`,
  ]);
  if (present.length) {
    figures.push(['Present', present.map((s) => `${speciesName(s.element)} ${percent(s.fluxFraction, 0)} of the flux`).join('; ')]);
  }
  const absent = species.filter((s) => !s.present).slice(0, 3);
  if (absent.length) figures.push(['Next candidates (judged absent)', absent.map((s) => `${speciesName(s.element)} (score ${s.score.toFixed(2)})`).join(', ')]);
  if (calibration) {
    figures.push([
      'Unexplained peaks',
      unexplained.length
        ? `${unexplained.length}${unexplainedFlux !== undefined ? `, ${percent(unexplainedFlux)} of the peak flux` : ''}: no present species explains them (a contaminant, molecular bands, stray light, a second order) — listed below`
        : 'none',
    ]);
  }
  if (laser) {
    const cands = laser.optObjects('candidates');
    if (cands.length) figures.push(['Laser kinds that fit', cands.map((c) => `${c.str('name')}${c.has('deviation_sigma') ? ` (${plain(c.num('deviation_sigma'), 'σ', 2)} off)` : ''}`).join(', ')]);
    if (laser.optBool('saturated')) figures.push(['Note', 'the laser line clips the sensor: its position is good, its flux share a lower bound']);
  }

  // Colours: one per present species, in the order of the verdict; unexplained peaks grey.
  const colourOf = new Map(present.map((s, i) => [s.element, PALETTE.series[i % PALETTE.series.length]]));
  const sticks: Stick[] = peaks
    .filter((p) => p.wavelengthNm !== undefined)
    .map((p) => ({
      x: p.wavelengthNm!,
      height: p.height,
      label: p.line ? `${p.line.spectrum ?? p.line.element} ${p.line.wavelengthNm.toFixed(1)}${p.line.order !== 1 ? ` (order ${p.line.order})` : ''}` : `? ${p.wavelengthNm!.toFixed(1)}`,
      colour: p.line ? (colourOf.get(p.line.element) ?? PALETTE.series[4]) : PALETTE.muted,
      lowerBound: p.saturated,
      hollow: p.blended,
    }));
  const svgs = sticks.length
    ? [
        plotSticks({
          document: options.document,
          sticks,
          title: `${item}: peaks labelled with their lines${hasHeights ? '' : ' (strengths not in the result: all drawn equal)'}`,
          xLabel: 'wavelength (nm)',
          yLabel: strength === 'area' ? 'line flux (peak area, relative)' : hasHeights ? 'peak height (relative)' : 'peak',
          yScale: hasHeights ? 'auto' : 'linear',
          legend: [
            ...present.map((s) => [speciesName(s.element), colourOf.get(s.element)!] as const),
            ...(unexplained.length ? ([['unexplained (?)', PALETTE.muted]] as const) : []),
          ],
        }),
      ]
    : [];

  const tables: ReportTable[] = [];
  if (species.length) {
    tables.push({
      caption: 'Species, by score (score 0–1: 0.5 at the presence threshold)',
      columns: ['species', 'present', 'score', 'lines matched', 'share of the flux', 'strong lines missing (nm)'],
      numeric: [2, 3, 4],
      rows: species.map((s) => [
        `${speciesName(s.element)} (${s.element})`,
        s.present ? 'yes' : 'no',
        s.score.toFixed(3),
        s.linesMatched,
        percent(s.fluxFraction),
        s.missingLinesNm.length ? s.missingLinesNm.map((w) => w.toFixed(1)).join(', ') : '',
      ]),
    });
  }
  if (unexplained.length) {
    tables.push({
      caption: `Unexplained lines (${unexplained.length}), strongest first`,
      columns: ['wavelength (nm)', strength === 'area' ? 'flux (area)' : 'height', 'note'],
      numeric: [0, 1],
      rows: [...unexplained].sort((a, b) => b.height - a.height).map((p) => [withU(p.wavelengthNm, p.wavelengthUncertaintyNm), hasHeights ? plain(p.height, '', 4) : undefined, peakNotes(p, measure)]),
    });
  }
  if (peaks.length) tables.push({
    caption: `Peaks (${peaks.length})`,
    columns: ['wavelength (nm)', 'line', 'tabulated (nm)', 'measured − tabulated (nm)', 'confidence', 'note'],
    numeric: [0, 2, 3, 4],
    rows: peaks.map((p) => [
      withU(p.wavelengthNm, p.wavelengthUncertaintyNm),
      p.line ? `${p.line.spectrum ?? p.line.element}${p.line.order !== 1 ? `, order ${p.line.order}` : ''}` : 'unexplained',
      p.line ? `${p.line.wavelengthNm.toFixed(3)}${p.line.order !== 1 ? ` × ${p.line.order}` : ''}` : undefined,
      // A line seen in order m appears at m·λ on the first-order scale.
      p.line && p.wavelengthNm !== undefined ? likeU(p.wavelengthNm - p.line.order * p.line.wavelengthNm, p.wavelengthUncertaintyNm) : undefined,
      p.confidence === undefined ? undefined : p.confidence.toFixed(2),
      identifiedNotes(p, measure),
    ]),
  });

  return {
    kind: 'identification',
    section: { id, heading: `${item} — ${KIND_LABEL.identification.toLowerCase()}`, subtitle: file ? `Measured from ${file}` : undefined, verdict, figures, svgs, tables, warnings },
    summary: {
      id,
      item,
      measurement: KIND_LABEL.identification,
      result,
      keyFigure: laser
        ? withU(laser.num('wavelength_nm'), laser.optNum('wavelength_uncertainty_nm'), 'nm')
        : !calibration
          ? 'no wavelength scale'
          : `${present.length ? `score ${present[0].score.toFixed(2)}, ` : ''}${count(unexplained.length, 'unexplained line')}${from === 'self' ? ', self-calibrated' : ''}`,
      warnings: warnings.length,
    },
  };
}
