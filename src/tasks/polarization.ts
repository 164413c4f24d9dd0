import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { InputError, parseNumberOption as numberOption, UsageError } from '../core/errors.js';
import {
  MALUS_FIT_DEFAULTS,
  analyseRotatingAnalyser,
  analyseRotatingRetarder,
  analyseTimeSeries,
  calibrateAnalyser,
  interpretTogether,
  malusPointsFromTable,
  measureSpotSeries,
  polarizationFigureSvgText,
  spotSeriesToPoints,
  timeSeriesFromTable,
  type AnalyserProfile,
  type MalusPoint,
  type PolarizationResult,
  type SpotPhotometry,
  type TimeSeries,
  type TimeSeriesAnalysis,
} from '../core/polarization/index.js';
import { parseNumericCsv } from '../core/table/parseNumericCsv.js';
import { readAnalyserProfile, writeAnalyserProfile } from '../io/analyserProfile.js';
import { loadPhotoSeries, type PhotoSeries } from '../io/photoSeries.js';
import { packageVersion } from '../io/projectRoot.js';
import { createSvgDocument } from '../io/svgDocument.js';
import { writeFileAtomic } from '../io/writeAtomic.js';

export interface PolarizationOptions {
  table?: string;
  angles?: string;
  start?: string;
  step?: string;
  anglesCsv?: string;
  roi?: string;
  keepSaturated?: boolean;
  analyser?: string;
  extinctionRatio?: string;
  qwp?: boolean;
  retardance?: string;
  analyserAngle?: string;
  correctDrift?: boolean;
  timeSeries?: string;
  reference?: string;
  simultaneous?: boolean;
  calibrateAnalyser?: boolean;
  referenceAzimuth?: string;
  referenceAzimuthUncertainty?: string;
  out?: string;
  name?: string;
  polarizedMin?: string;
  unpolarizedMax?: string;
  coverageFactor?: string;
  json?: boolean;
  svg?: string;
}

function usage(message: string): never {
  throw new UsageError(message);
}

/** What a polarization run gives: the JSON object of the contract, the readable text, the warnings. */
export interface PolarizationRun {
  json: Record<string, unknown>;
  text: string;
  warnings: string[];
}

/**
 * The polarization measurement behind `glowprint polarization` and the API: options as the command takes them (strings,
 * as flags and form fields arrive). Writes the --svg and --out files it is asked for, atomically.
 */
export async function runPolarization(images: string[], opts: PolarizationOptions): Promise<PolarizationRun> {
  const hasRotation = opts.table !== undefined || images.length > 0;
  if (opts.table !== undefined && images.length > 0) {
    usage('give either --table or photos, not both');
  }
  if (!hasRotation && opts.timeSeries === undefined) {
    usage('give a --table, photos, or a --time-series');
  }
  if (opts.reference !== undefined && opts.timeSeries === undefined) {
    usage('--reference goes with --time-series');
  }
  if (opts.calibrateAnalyser && (!hasRotation || opts.out === undefined)) {
    usage('--calibrate-analyser needs a reference series (--table or photos) and --out FILE');
  }
  if (opts.table !== undefined && (opts.angles !== undefined || opts.start !== undefined || opts.step !== undefined || opts.anglesCsv !== undefined)) {
    usage('--angles, --start/--step and --angles-csv are for photos; a table has its own angle column');
  }
  const inputs: string[] = [...images, ...[opts.table, opts.timeSeries, opts.reference, opts.analyser, opts.anglesCsv].filter((f): f is string => !!f)];
  for (const out of [opts.out, opts.svg]) {
    if (out && inputs.some((i) => path.resolve(i) === path.resolve(out))) {
      throw new InputError(`${out}: refusing to write over an input file; choose another output name`, out);
    }
  }
  const verdict = {
    polarizedMinDolp: fraction('--polarized-min', opts.polarizedMin),
    unpolarizedMaxDolp: fraction('--unpolarized-max', opts.unpolarizedMax),
    coverageFactor: positive('--coverage-factor', opts.coverageFactor, true),
  };
  const extinctionRatio = numberOption('--extinction-ratio', opts.extinctionRatio);
  if (extinctionRatio !== undefined && !(extinctionRatio > 1)) {
    throw new InputError(`--extinction-ratio: expected k1/k2 greater than 1 (e.g. 100 for 100:1), got ${opts.extinctionRatio}`, '--extinction-ratio');
  }
  const profile: AnalyserProfile | undefined = opts.analyser ? await readAnalyserProfile(opts.analyser) : undefined;

  // The rotation series: a table or photos → points.
  let points: MalusPoint[] | undefined;
  let series: PhotoSeries | undefined;
  let photometry: SpotPhotometry | undefined;
  const warnings: string[] = [];
  if (opts.table !== undefined) {
    const table = parseNumericCsv(await readFile(opts.table, 'utf8'), { source: opts.table, minColumns: 2 });
    points = malusPointsFromTable(table, opts.table);
  } else if (images.length > 0) {
    series = await loadPhotoSeries(images, {
      angles: opts.angles,
      startDeg: numberOption('--start', opts.start),
      stepDeg: numberOption('--step', opts.step),
      anglesCsv: opts.anglesCsv,
    });
    warnings.push(...series.warnings);
    photometry = measureSpotSeries(series.images, {
      roi: opts.roi !== undefined ? parseRoi(opts.roi) : undefined,
      exposures: series.exposures,
      labels: images.map((f) => path.basename(f)),
    });
    warnings.push(...photometry.warnings);
    const converted = spotSeriesToPoints(photometry, series.anglesDeg, { keepSaturated: opts.keepSaturated });
    warnings.push(...converted.warnings);
    points = converted.points;
    series.images.length = 0; // the pixels are no longer needed
  }
  const source = opts.table ?? (images.length ? 'photo series' : 'series');
  let ts: TimeSeriesAnalysis | undefined;
  let tsData: { series: TimeSeries; reference?: TimeSeries } | undefined;
  if (opts.timeSeries !== undefined) {
    const s = timeSeriesFromTable(parseNumericCsv(await readFile(opts.timeSeries, 'utf8'), { source: opts.timeSeries, minColumns: 2 }), opts.timeSeries);
    const r = opts.reference
      ? timeSeriesFromTable(parseNumericCsv(await readFile(opts.reference, 'utf8'), { source: opts.reference, minColumns: 2 }), opts.reference)
      : undefined;
    ts = analyseTimeSeries(s, { reference: r, simultaneous: opts.simultaneous });
    tsData = { series: s, reference: r };
    warnings.push(...ts.warnings);
  }

  // A burst that shows the polarization fluctuating tells the rotation fit that a drift is the source's own.
  const fitOptions = {
    source,
    correctDrift: opts.correctDrift ?? MALUS_FIT_DEFAULTS.correctDrift,
    sourceFluctuates: ts?.verdict === 'fluctuating',
  };

  if (opts.calibrateAnalyser) {
    const cal = calibrateAnalyser(points!, {
      referenceAzimuthDeg: numberOption('--reference-azimuth', opts.referenceAzimuth),
      referenceAzimuthUncertaintyDeg: positive('--reference-azimuth-uncertainty', opts.referenceAzimuthUncertainty, false),
      extinctionRatio: extinctionRatio ?? profile?.extinctionRatio,
      fit: fitOptions,
    });
    const file = {
      ...cal.profile,
      ...(opts.name ? { name: opts.name } : {}),
      calibration: {
        referenceAzimuthDeg: numberOption('--reference-azimuth', opts.referenceAzimuth) ?? 0,
        measuredAzimuthDeg: cal.fit.azimuthDeg,
        measuredAzimuthUncertaintyDeg: cal.fit.azimuthUncertaintyDeg,
        referenceDolp: cal.fit.dolp,
        inputs: (opts.table ? [opts.table] : images).map((f) => path.basename(f)),
        created: new Date().toISOString(),
        glowprintVersion: packageVersion(),
      },
    };
    await writeAnalyserProfile(opts.out!, file, inputs);
    const allWarnings = [...warnings, ...cal.warnings];
    const json = {
        command: 'polarization',
        profileFile: opts.out,
        offsetDeg: cal.profile.offsetDeg,
        offsetUncertaintyDeg: cal.profile.offsetUncertaintyDeg,
        extinctionRatio: cal.profile.extinctionRatio ?? null,
        reference: {
          azimuthDeg: file.calibration.referenceAzimuthDeg,
          measuredAzimuthDeg: cal.fit.azimuthDeg,
          measuredAzimuthUncertaintyDeg: cal.fit.azimuthUncertaintyDeg,
          dolp: cal.fit.dolp,
          dolpUncertainty: cal.fit.dolpUncertainty,
        },
        points: jsonPoints(cal.fit.points, series),
        warnings: allWarnings,
      };
      const lines = [
        `Analyser offset  ${signed(cal.profile.offsetDeg, 2)}° ± ${cal.profile.offsetUncertaintyDeg.toFixed(2)}°  (true azimuth = scale reading + offset)`,
        `Reference        measured ${cal.fit.azimuthDeg.toFixed(2)}° on the scale, DoLP ${cal.fit.dolp.toFixed(3)}; taken as ${file.calibration.referenceAzimuthDeg}°`,
        `Profile written  ${opts.out}`,
      ];
    return { json, text: lines.join('\n') + '\n', warnings: allWarnings };
  }

  let result: PolarizationResult | undefined;
  if (points) {
    result = opts.qwp
      ? analyseRotatingRetarder(
          points.map((p) => ({ angleDeg: p.angleDeg, intensity: p.intensity, uncertainty: p.uncertainty, excluded: p.excluded, source: p.source })),
          {
            profile,
            extinctionRatio,
            verdict,
            retarder: {
              source,
              retardanceDeg: numberOption('--retardance', opts.retardance),
              analyserAngleDeg: numberOption('--analyser-angle', opts.analyserAngle),
            },
          },
        )
      : analyseRotatingAnalyser(points, { profile, extinctionRatio, verdict, fit: fitOptions });
    warnings.push(...result.warnings);
  }

  const interpretation = ts ? interpretTogether(result ?? null, ts) : null;

  if (opts.svg) {
    const document = createSvgDocument();
    const svg = polarizationFigureSvgText({
      document,
      rotation:
        result?.malus !== undefined
          ? { document, fit: result.malus, correctedAzimuthDeg: profile ? result.azimuthDeg : undefined }
          : undefined,
      timeSeries: tsData,
    });
    if (result && !result.malus && !tsData) warnings.push('the rotating-plate method has no Malus curve to plot; no SVG written');
    else await writeFileAtomic(opts.svg, svg, { inputs });
  }

  const output = {
    input: opts.table
      ? { kind: 'table', file: opts.table }
      : images.length
        ? { kind: 'photos', files: images, angleSource: series!.angleSource, sidecar: series!.sidecar }
        : { kind: 'time-series', file: opts.timeSeries },
    method: result?.method ?? null,
    dolp: result?.dolp ?? null,
    dolpUncertainty: result?.dolpUncertainty ?? null,
    dolpMeasured: result?.dolpMeasured ?? null,
    dolpMeasuredUncertainty: result?.dolpMeasuredUncertainty ?? null,
    dolpDebiased: result?.dolpDebiased ?? null,
    azimuthDeg: result?.azimuthDeg ?? null,
    azimuthUncertaintyDeg: result?.azimuthUncertaintyDeg ?? null,
    azimuthScaleDeg: result?.azimuthScaleDeg ?? null,
    iMax: result?.iMax ?? null,
    iMaxUncertainty: result?.iMaxUncertainty ?? null,
    iMin: result?.iMin ?? null,
    iMinUncertainty: result?.iMinUncertainty ?? null,
    verdict: result?.verdict ?? null,
    verdictReason: result?.verdictReason ?? null,
    verdictThresholds: result?.verdictThresholds ?? null,
    dolpInterval: result?.dolpInterval ?? null,
    corrections: result?.corrections ?? null,
    stokes: result?.stokes ?? null,
    fit: result?.fit ?? null,
    points: result ? jsonPoints(result.points, series) : [],
    ...(photometry ? { photometry: photometrySummary(photometry) } : {}),
    ...(ts ? { timeSeries: ts, interpretation } : {}),
    warnings,
  };
  return { json: { command: 'polarization', ...output }, text: formatText(result, ts, interpretation, photometry), warnings };
}

/** Points for the JSON: the photo's file name, or the table line. */
function jsonPoints(points: PolarizationResult['points'], series: PhotoSeries | undefined): Array<Record<string, unknown>> {
  return points.map((p, i) => {
    const { source, ...rest } = p;
    return { ...rest, ...(series ? { file: series.files[i] } : source ? { line: Number(source.replace(/^line /, '')) || source } : {}) };
  });
}

function photometrySummary(p: SpotPhotometry): Record<string, unknown> {
  return {
    placement: p.placement,
    centerXPx: p.center.x,
    centerYPx: p.center.y,
    apertureRadiusPx: p.apertureRadiusPx,
    annulusInnerPx: p.annulusInnerPx,
    annulusOuterPx: p.annulusOuterPx,
    exposureNormalised: p.exposureNormalised,
    maxCentroidShiftPx: p.maxCentroidShiftPx,
    frames: p.frames.map((f) => ({
      file: f.label,
      rawSum: f.rawSum,
      intensity: f.intensity,
      uncertainty: f.uncertainty,
      backgroundPerPx: f.backgroundPerPx,
      relativeExposure: f.relativeExposure,
      saturatedPixels: f.saturatedPixels,
      saturated: f.saturated,
      peakValue: f.peakValue,
    })),
  };
}

function formatText(
  r: PolarizationResult | undefined,
  ts: TimeSeriesAnalysis | undefined,
  interpretation: string | null,
  photometry: SpotPhotometry | undefined,
): string {
  const lines: string[] = [];
  if (r) {
    const d = digits(r.dolpUncertainty);
    const a = digits(r.azimuthUncertaintyDeg, 1);
    lines.push(`Verdict       ${r.verdict.replace('_', ' ')} — ${r.verdictReason}`);
    lines.push(`DoLP          ${r.dolp.toFixed(d)} ± ${r.dolpUncertainty.toFixed(d)}${r.corrections.extinctionRatio !== null ? ` (corrected for ER ${r.corrections.extinctionRatio}; measured ${r.dolpMeasured.toFixed(d)})` : ''}`);
    lines.push(
      `Azimuth       ${r.azimuthDeg.toFixed(a)}° ± ${r.azimuthUncertaintyDeg.toFixed(a)}°${r.corrections.analyserOffsetDeg !== null ? ` (scale reading ${r.azimuthScaleDeg.toFixed(a)}°, offset ${signed(r.corrections.analyserOffsetDeg, 2)}°)` : ' (on the analyser scale)'}`,
    );
    lines.push(`I_max, I_min  ${r.iMax.toPrecision(5)} ± ${r.iMaxUncertainty.toPrecision(2)}, ${r.iMin.toPrecision(4)} ± ${r.iMinUncertainty.toPrecision(2)}`);
    const s = r.stokes;
    lines.push(
      `Stokes        S0 ${s.s0.toPrecision(5)}, S1 ${s.s1.toPrecision(4)}, S2 ${s.s2.toPrecision(4)}${s.s3 !== undefined ? `, S3 ${s.s3.toPrecision(4)}` : ''}`,
    );
    if (s.dop !== undefined) {
      lines.push(`              DoP ${s.dop.toFixed(3)} ± ${s.dopUncertainty!.toFixed(3)}, DoCP ${s.docp!.toFixed(3)} ± ${s.docpUncertainty!.toFixed(3)}, ellipticity ${s.ellipticity!.toFixed(3)}`);
    }
    const scatter =
      r.fit.chi2PValue !== null
        ? `χ²/dof ${r.fit.reducedChi2.toFixed(2)} (${r.fit.dof} dof)`
        : `rms residual ${r.fit.rms.toPrecision(3)} (${r.fit.dof} dof; no stated uncertainties, so the scatter sets them)`;
    lines.push(`Fit           ${scatter}, ${r.fit.distinctAngles} angles${r.fit.angleSpanDeg !== undefined ? ` over ${r.fit.angleSpanDeg.toFixed(0)}°` : ''}`);
    if (photometry) {
      lines.push(`Photometry    aperture r = ${photometry.apertureRadiusPx.toFixed(1)} px at (${photometry.center.x.toFixed(1)}, ${photometry.center.y.toFixed(1)}), ${photometry.frames.filter((f) => f.saturated).length} clipped frame(s)`);
    }
    lines.push('');
    lines.push('   angle °    intensity     residual   note');
    for (const p of r.points) {
      lines.push(
        `${p.angleDeg.toFixed(1).padStart(10)}   ${p.intensity.toPrecision(5).padStart(10)}   ${p.residual.toPrecision(3).padStart(10)}   ${p.excluded ? `excluded (${p.exclusionReason ?? ''})` : ''}${p.source ? ` ${p.source}` : ''}`,
      );
    }
  }
  if (ts) {
    if (lines.length) lines.push('');
    lines.push(`Time series   ${ts.verdict} — ${ts.interpretation}`);
    const a = ts.analysed;
    lines.push(`  analysed    ${a.count} samples over ${a.durationS.toFixed(1)} s: slow ${(100 * a.relativeSlowFluctuation).toFixed(2)} %, white ${(100 * a.relativeWhiteNoise).toFixed(2)} %, range ${(100 * a.relativeRange).toFixed(1)} %${a.correlationTimeS !== null ? `, correlation time ${a.correlationTimeS.toFixed(1)} s` : ''}`);
    if (ts.reference) {
      const b = ts.reference;
      lines.push(`  total       slow ${(100 * b.relativeSlowFluctuation).toFixed(2)} %, white ${(100 * b.relativeWhiteNoise).toFixed(2)} %, range ${(100 * b.relativeRange).toFixed(1)} %`);
    }
    if (interpretation) lines.push(`Reading       ${interpretation}`);
  }
  return lines.join('\n') + '\n';
}

function digits(sigma: number, min = 3): number {
  if (!(sigma > 0) || !Number.isFinite(sigma)) return min;
  return Math.max(min, Math.min(6, 1 - Math.floor(Math.log10(sigma))));
}

function signed(v: number, d: number): string {
  return `${v >= 0 ? '+' : ''}${v.toFixed(d)}`;
}

function parseRoi(text: string): { x: number; y: number; radiusPx: number } {
  const parts = text.split(/[,\s]+/).filter(Boolean).map(Number);
  if (parts.length !== 3 || !parts.every(Number.isFinite) || !(parts[2] > 0)) {
    throw new InputError(`--roi: expected x,y,r in pixels (centre and radius, e.g. 812,604,40), got ${JSON.stringify(text)}`, '--roi');
  }
  return { x: parts[0], y: parts[1], radiusPx: parts[2] };
}

function fraction(name: string, text: string | undefined): number | undefined {
  const v = numberOption(name, text);
  if (v !== undefined && !(v >= 0 && v <= 1)) throw new InputError(`${name}: expected a DoLP between 0 and 1, got ${text}`, name);
  return v;
}

function positive(name: string, text: string | undefined, strict: boolean): number | undefined {
  const v = numberOption(name, text);
  if (v !== undefined && !(strict ? v > 0 : v >= 0)) throw new InputError(`${name}: expected a ${strict ? 'positive' : 'non-negative'} number, got ${text}`, name);
  return v;
}
