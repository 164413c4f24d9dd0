import { readFile } from 'node:fs/promises';
import {
  FIT_ANGLES_DEFAULTS,
  FIT_SCREEN_DEFAULTS,
  derivedFigures,
  fitAngles,
  fitScreen,
  gratingVerdict,
  ordersFromTable,
  parseOrderList,
  parseTolerance,
  type DerivedFigures,
  type GratingMeasurement,
  type GratingVerdict,
  type OrderValue,
} from '../core/grating/index.js';
import { InputError, UsageError } from '../core/errors.js';
import { LASER_CAUTION } from '../core/safety.js';
import { parseNumericCsv } from '../core/table/parseNumericCsv.js';
import { parseQuantity } from '../core/units/quantity.js';
import { lineDensityFromProfile, type ProfileLineDensitySource } from '../core/grating/index.js';
import { readProfile } from '../io/profileFile.js';

function usage(message: string): never {
  throw new UsageError(message);
}

export interface GratingOptions {
  wavelength?: string;
  wavelengthUncertainty?: string;
  distance?: string;
  distanceUncertainty?: string;
  positions?: string;
  separations?: string;
  positionUncertainty?: string;
  angles?: string;
  table?: string;
  angleUncertainty?: string;
  angleReference: string;
  incidence?: string;
  nominal?: string;
  tolerance: string;
  beamWidth?: string;
  /** Photo method: an instrument profile made with the physical grating model. */
  profile?: string;
  json?: boolean;
}

export const GRATING_OPTION_DEFAULTS = { tolerance: '2%', angleReference: 'undeviated' } as const;


/** The grating measurement behind `glowprint grating` and the API, with options as the command takes them (text). */
export async function runGrating(opts: GratingOptions): Promise<{ json: Record<string, unknown>; text: string; warnings: string[] }> {
  let positions: OrderValue[] | undefined;
  let separations: OrderValue[] | undefined;
  let angleList: OrderValue[] | undefined;
  if (opts.profile !== undefined) {
    if (opts.table !== undefined || opts.positions !== undefined || opts.separations !== undefined || opts.angles !== undefined) {
      usage('--profile is a method of its own: give it without --table, --positions, --separations or --angles');
    }
    return gratingFromProfile(opts);
  }
  if (opts.table !== undefined) {
    if (opts.positions !== undefined || opts.separations !== undefined || opts.angles !== undefined) {
      usage('give the measurements either in --table or on the command line, not both');
    }
    const table = ordersFromTable(parseNumericCsv(await readFile(opts.table, 'utf8'), { source: opts.table, minColumns: 2 }), opts.table);
    if (table.kind === 'position') positions = table.items;
    else if (table.kind === 'separation') separations = table.items;
    else angleList = table.items;
  } else {
    if (opts.positions !== undefined) positions = parseOrderList(opts.positions, { name: '--positions', unit: 'mm' });
    if (opts.separations !== undefined) separations = parseOrderList(opts.separations, { name: '--separations', unit: 'mm' });
    if (opts.angles !== undefined) angleList = parseOrderList(opts.angles, { name: '--angles', unit: 'deg' });
  }
  const screen = positions !== undefined || separations !== undefined;
  if (screen === (angleList !== undefined)) {
    usage('give either --positions/--separations (with --distance), --angles, or --table');
  }
  if (opts.wavelength === undefined) usage('--wavelength is required');
  const wavelengthNm = parseQuantity(opts.wavelength!, { name: '--wavelength', unit: 'nm', positive: true });
  const wavelengthUncertaintyNm = optionalQuantity(opts.wavelengthUncertainty, '--wavelength-uncertainty', 'nm');
  const incidenceDeg = optionalQuantity(opts.incidence, '--incidence', 'deg', false);
  let measurement: GratingMeasurement;
  let distanceMm: number | undefined;
  if (screen) {
    if (opts.distance === undefined) usage('the screen method needs --distance');
    distanceMm = parseQuantity(opts.distance!, { name: '--distance', unit: 'mm' });
    if (!(distanceMm > 0)) throw new InputError(`--distance: expected the grating-to-screen distance (a positive length), got ${JSON.stringify(opts.distance)}`, '--distance');
    measurement = fitScreen({
      wavelengthNm,
      wavelengthUncertaintyNm,
      distanceMm,
      distanceUncertaintyMm: optionalQuantity(opts.distanceUncertainty, '--distance-uncertainty', 'mm'),
      positionUncertaintyMm: optionalQuantity(opts.positionUncertainty, '--position-uncertainty', 'mm', true),
      positions: (positions ?? []).map((p) => ({ order: p.order, positionMm: p.value, uncertaintyMm: p.uncertainty })),
      separations: (separations ?? []).map((s) => ({ order: s.order, separationMm: s.value, uncertaintyMm: s.uncertainty })),
      incidenceDeg,
    });
  } else {
    const reference = opts.angleReference;
    if (reference !== 'undeviated' && reference !== 'normal') {
      throw new InputError(`--angle-reference: expected "undeviated" or "normal", got ${JSON.stringify(reference)}`, '--angle-reference');
    }
    measurement = fitAngles({
      wavelengthNm,
      wavelengthUncertaintyNm,
      angles: angleList!.map((a) => ({ order: a.order, angleDeg: a.value, uncertaintyDeg: a.uncertainty })),
      angleUncertaintyDeg: optionalQuantity(opts.angleUncertainty, '--angle-uncertainty', 'deg', true),
      reference,
      incidenceDeg,
    });
  }
  return finish(measurement, opts, wavelengthNm, distanceMm);
}

function optionalQuantity(text: string | undefined, name: string, unit: string, positive = false): number | undefined {
  if (text === undefined) return undefined;
  return parseQuantity(text, { name, unit, positive, nonNegative: !positive && unit !== 'deg' });
}

function formatText(m: GratingMeasurement, v: GratingVerdict | null, d: DerivedFigures): string {
  const digits = m.linesPerMmUncertainty > 0 ? Math.max(0, Math.min(4, 1 - Math.floor(Math.log10(m.linesPerMmUncertainty)))) : 2;
  const pDigits = Math.max(digits + 3, 3);
  const lines: string[] = [];
  lines.push(`Line density  ${m.linesPerMm.toFixed(digits)} ± ${m.linesPerMmUncertainty.toFixed(digits)} lines/mm (k = 1)`);
  lines.push(`Period        ${m.periodUm.toFixed(pDigits)} ± ${m.periodUncertaintyUm.toFixed(pDigits)} µm`);
  lines.push(
    `Incidence     ${m.incidenceDeg.toFixed(2)}°${m.incidenceUncertaintyDeg !== null ? ` ± ${m.incidenceUncertaintyDeg.toFixed(2)}° (fitted)` : ' (assumed)'}`,
  );
  const b = m.budget;
  lines.push(
    `Budget        fit ${b.fitLinesPerMm.toFixed(digits)}, distance ${b.distanceLinesPerMm.toFixed(digits)}, wavelength ${b.wavelengthLinesPerMm.toFixed(digits)} lines/mm`,
  );
  if (v) lines.push(`Verdict       ${v.explanation}`);
  lines.push('');
  lines.push(m.method === 'angles' ? ' order   measured °   fitted °   residual °' : ' order   kind         measured mm   fitted mm   residual mm');
  for (const r of m.residuals) {
    if (r.kind === 'angle') {
      lines.push(`${String(r.order).padStart(6)}   ${r.measuredDeg.toFixed(3).padStart(10)}   ${r.fittedDeg.toFixed(3).padStart(8)}   ${r.residualDeg.toFixed(3).padStart(10)}`);
    } else {
      lines.push(
        `${String(r.order).padStart(6)}   ${r.kind.padEnd(10)}   ${r.measuredMm.toFixed(2).padStart(11)}   ${r.fittedMm.toFixed(2).padStart(9)}   ${r.residualMm.toFixed(2).padStart(11)}`,
      );
    }
  }
  lines.push('');
  lines.push(`Orders at ${m.wavelengthNm} nm, square to the beam: ${d.minOrder} … +${d.maxOrder}`);
  for (const o of d.orders.filter((o) => o.order > 0)) {
    const extra = [
      o.linearDispersionMmPerNm !== undefined ? `${o.linearDispersionMmPerNm.toFixed(3)} mm/nm on the screen` : '',
      o.resolvingPower !== undefined ? `R = ${o.resolvingPower.toFixed(0)} (${(o.resolvableNm ?? NaN).toPrecision(2)} nm)` : '',
    ].filter(Boolean);
    lines.push(`  m = ${o.order}: θ = ${o.deviationDeg.toFixed(2)}°, ${o.angularDispersionDegPerNm.toFixed(4)} °/nm${extra.length ? ', ' + extra.join(', ') : ''}`);
  }
  for (const w of m.warnings) lines.push(`warning: ${w}`);
  return lines.join('\n') + '\n';
}

/** Photo method: the line density the physical grating model fitted when the rig was calibrated. */
async function gratingFromProfile(opts: GratingOptions): Promise<{ json: Record<string, unknown>; text: string; warnings: string[] }> {
  const profile = await readProfile(opts.profile!);
  const measurement = lineDensityFromProfile(profile as unknown as ProfileLineDensitySource, opts.profile);
  const wavelengthNm = opts.wavelength !== undefined ? parseQuantity(opts.wavelength, { name: '--wavelength', unit: 'nm', positive: true }) : 632.816;
  if (opts.wavelength === undefined) measurement.warnings.push('derived figures (orders, dispersion) at 632.816 nm; give --wavelength for another');
  if (!Number.isFinite(measurement.wavelengthNm)) measurement.wavelengthNm = wavelengthNm;
  return finish(measurement, opts, wavelengthNm, undefined);
}

/** Where the measurements came from: the table or profile file, or the command line. */
function inputSummary(opts: GratingOptions): { file: string | null; kind: 'table' | 'profile' | 'command-line' } {
  if (opts.profile !== undefined) return { file: opts.profile, kind: 'profile' };
  if (opts.table !== undefined) return { file: opts.table, kind: 'table' };
  return { file: null, kind: 'command-line' };
}

/** Verdict against the nominal, derived figures, and the outputs: the same for every method. */
function finish(
  measurement: GratingMeasurement,
  opts: GratingOptions,
  wavelengthNm: number,
  distanceMm: number | undefined,
): { json: Record<string, unknown>; text: string; warnings: string[] } {
  let verdict: GratingVerdict | null = null;
  if (opts.nominal !== undefined) {
    const nominal = Number(opts.nominal.replace(/\s*(lines?\/mm|l\/mm|\/mm)$/, ''));
    if (!(nominal > 0) || !Number.isFinite(nominal)) throw new InputError(`--nominal: expected a line density in lines/mm such as 600, got ${JSON.stringify(opts.nominal)}`, '--nominal');
    verdict = gratingVerdict({
      linesPerMm: measurement.linesPerMm,
      linesPerMmUncertainty: measurement.linesPerMmUncertainty,
      nominalLinesPerMm: nominal,
      tolerance: parseTolerance(opts.tolerance),
    });
  }
  const derived = derivedFigures({
    linesPerMm: measurement.linesPerMm,
    linesPerMmUncertainty: measurement.linesPerMmUncertainty,
    wavelengthNm,
    incidenceDeg: 0,
    illuminatedWidthMm: optionalQuantity(opts.beamWidth, '--beam-width', 'mm', true),
    distanceMm,
  });
  const json = {
    command: 'grating',
    input: inputSummary(opts),
    ...measurement,
    verdict: verdict?.verdict ?? null,
    verdictDetail: verdict,
    derived,
    warnings: measurement.warnings,
  };
  return { json, text: formatText(measurement, verdict, derived), warnings: [] };
}
