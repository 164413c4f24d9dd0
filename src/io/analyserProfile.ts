import { promises as fs } from 'node:fs';
import { Ajv } from 'ajv';
import { InputError } from '../core/errors.js';
import { type AnalyserProfile, validateAnalyserProfile } from '../core/polarization/corrections.js';
import { describeSchemaErrors } from './schemaErrors.js';
import { writeFileAtomic } from './writeAtomic.js';

/**
 * The analyser profile file: what glowprint knows about one polarizer on its rotation mount (the offset of its scale
 * from its transmission axis, its extinction ratio), measured once and applied to every later series. JSON, snake_case
 * keys with units, checked against the schema below when read; written atomically.
 */

export const ANALYSER_PROFILE_FORMAT = 'glowprint-analyser-profile';
export const ANALYSER_PROFILE_VERSION = 1;

/** JSON Schema (draft-07, as Ajv reads it by default) of the profile file. */
export const ANALYSER_PROFILE_SCHEMA = {
  type: 'object',
  required: ['format', 'version', 'offset_deg', 'offset_uncertainty_deg'],
  additionalProperties: false,
  properties: {
    format: { const: ANALYSER_PROFILE_FORMAT },
    version: { const: ANALYSER_PROFILE_VERSION },
    name: { type: 'string', maxLength: 200 },
    /** true azimuth = scale reading + offset_deg */
    offset_deg: { type: 'number', minimum: -90, maximum: 90 },
    offset_uncertainty_deg: { type: 'number', minimum: 0, maximum: 90 },
    extinction_ratio: { type: 'number', exclusiveMinimum: 1 },
    extinction_ratio_uncertainty: { type: 'number', minimum: 0 },
    calibration: {
      type: 'object',
      additionalProperties: false,
      properties: {
        reference_azimuth_deg: { type: 'number' },
        measured_azimuth_deg: { type: 'number' },
        measured_azimuth_uncertainty_deg: { type: 'number', minimum: 0 },
        reference_dolp: { type: 'number' },
        inputs: { type: 'array', items: { type: 'string' } },
        created: { type: 'string' },
        glowprint_version: { type: 'string' },
      },
    },
  },
} as const;

export interface AnalyserProfileFile extends AnalyserProfile {
  name?: string;
  calibration?: {
    referenceAzimuthDeg?: number;
    measuredAzimuthDeg?: number;
    measuredAzimuthUncertaintyDeg?: number;
    referenceDolp?: number;
    inputs?: string[];
    created?: string;
    glowprintVersion?: string;
  };
}

let validator: ReturnType<Ajv['compile']> | undefined;

/** The schema's validator, compiled on first use: compiling it at import cost every command ~30 ms of start-up. */
function schemaValidator(): ReturnType<Ajv['compile']> {
  return (validator ??= new Ajv({ allErrors: true, strict: false, verbose: true }).compile(ANALYSER_PROFILE_SCHEMA));
}

/** Reads and checks an analyser profile; any problem is one InputError naming the file and the key. */
export async function readAnalyserProfile(file: string): Promise<AnalyserProfileFile> {
  const text = await fs.readFile(file, 'utf8');
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (err) {
    throw new InputError(`${file}: not valid JSON (${(err as Error).message})`, file);
  }
  return parseAnalyserProfile(json, file);
}

/** Checks parsed JSON against the schema and turns it into the camelCase profile. */
export function parseAnalyserProfile(json: unknown, source: string): AnalyserProfileFile {
  const validate = schemaValidator();
  if (!validate(json)) throw new InputError(`${source}: not a usable analyser profile: ${describeSchemaErrors(validate.errors ?? [])}`, source);
  const j = json as unknown as Record<string, unknown> & { calibration?: Record<string, unknown> };
  const core = validateAnalyserProfile(
    {
      offsetDeg: j.offset_deg as number,
      offsetUncertaintyDeg: j.offset_uncertainty_deg as number,
      ...(j.extinction_ratio !== undefined ? { extinctionRatio: j.extinction_ratio as number } : {}),
      ...(j.extinction_ratio_uncertainty !== undefined ? { extinctionRatioUncertainty: j.extinction_ratio_uncertainty as number } : {}),
    },
    source,
  );
  const c = j.calibration;
  return {
    ...core,
    ...(typeof j.name === 'string' ? { name: j.name } : {}),
    ...(c
      ? {
          calibration: {
            referenceAzimuthDeg: c.reference_azimuth_deg as number | undefined,
            measuredAzimuthDeg: c.measured_azimuth_deg as number | undefined,
            measuredAzimuthUncertaintyDeg: c.measured_azimuth_uncertainty_deg as number | undefined,
            referenceDolp: c.reference_dolp as number | undefined,
            inputs: c.inputs as string[] | undefined,
            created: c.created as string | undefined,
            glowprintVersion: c.glowprint_version as string | undefined,
          },
        }
      : {}),
  };
}

/** The profile as the JSON written to disk (snake_case keys; undefined fields left out). */
export function analyserProfileToJson(profile: AnalyserProfileFile): Record<string, unknown> {
  const c = profile.calibration;
  const out: Record<string, unknown> = {
    format: ANALYSER_PROFILE_FORMAT,
    version: ANALYSER_PROFILE_VERSION,
    ...(profile.name ? { name: profile.name } : {}),
    offset_deg: profile.offsetDeg,
    offset_uncertainty_deg: profile.offsetUncertaintyDeg,
    ...(profile.extinctionRatio !== undefined ? { extinction_ratio: profile.extinctionRatio } : {}),
    ...(profile.extinctionRatioUncertainty !== undefined ? { extinction_ratio_uncertainty: profile.extinctionRatioUncertainty } : {}),
  };
  if (c) {
    const cal: Record<string, unknown> = {};
    if (c.referenceAzimuthDeg !== undefined) cal.reference_azimuth_deg = c.referenceAzimuthDeg;
    if (c.measuredAzimuthDeg !== undefined) cal.measured_azimuth_deg = c.measuredAzimuthDeg;
    if (c.measuredAzimuthUncertaintyDeg !== undefined) cal.measured_azimuth_uncertainty_deg = c.measuredAzimuthUncertaintyDeg;
    if (c.referenceDolp !== undefined) cal.reference_dolp = c.referenceDolp;
    if (c.inputs) cal.inputs = c.inputs;
    if (c.created) cal.created = c.created;
    if (c.glowprintVersion) cal.glowprint_version = c.glowprintVersion;
    out.calibration = cal;
  }
  return out;
}

/** Writes the profile atomically, refusing to overwrite any of `inputs` (the files the run read). */
export async function writeAnalyserProfile(file: string, profile: AnalyserProfileFile, inputs: readonly string[] = []): Promise<void> {
  const json = analyserProfileToJson(profile);
  // What is written must read back: checked before the file is touched.
  parseAnalyserProfile(json, file);
  await writeFileAtomic(file, JSON.stringify(json, null, 2) + '\n', { inputs });
}
