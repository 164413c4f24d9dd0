import { readFileSync } from 'node:fs';
import { promises as fs } from 'node:fs';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { InputError } from '../core/errors.js';
import { type InstrumentProfile, profileFromJson, profileToJson } from '../core/calibration/profile.js';
import { dataPath } from './projectRoot.js';
import { describeSchemaErrors } from './schemaErrors.js';
import { writeFileAtomic } from './writeAtomic.js';

/**
 * Instrument profile files (format `glowprint-instrument-profile`, version 1): read with a JSON parse that names the
 * line and column of a syntax error, the JSON Schema in data/schema/instrument-profile.schema.json (draft 2020-12,
 * checked with Ajv; the model's fields are judged by the kind it declares), then the core's semantic checks (matrix
 * sizes, symmetric covariances); written atomically after the same schema check, so no half-written or invalid
 * profile ever replaces a good one.
 */

let validator: ReturnType<Ajv2020['compile']> | undefined;

function schemaValidator(): ReturnType<Ajv2020['compile']> {
  if (validator) return validator;
  const schema = JSON.parse(readFileSync(dataPath('schema', 'instrument-profile.schema.json'), 'utf8')) as object;
  // verbose: each error carries the value it is about, so a message can say what was found ("got \"abc\"").
  const ajv = new Ajv2020({ allErrors: true, strict: false, verbose: true });
  validator = ajv.compile(schema);
  return validator;
}

/** The JSON Schema of instrument profiles, as shipped in data/schema. */
export function instrumentProfileSchema(): object {
  return JSON.parse(readFileSync(dataPath('schema', 'instrument-profile.schema.json'), 'utf8')) as object;
}

/** Where a JSON syntax error is, as " at line L, column C" (plus a hint for NaN and Infinity), or "". */
function locateSyntaxError(text: string, message: string): string {
  const at = (pos: number): string => {
    const before = text.slice(0, pos);
    return ` at line ${before.split('\n').length}, column ${pos - before.lastIndexOf('\n')}`;
  };
  // Hand edits most often leave NaN or Infinity, which JSON does not have (outside strings: after : [ or ,).
  const bad = /([:[,]\s*)(-?(?:NaN|Infinity))\b/.exec(text);
  if (bad) return `${at(bad.index + bad[1].length)} (NaN and Infinity are not JSON numbers: write a number, or calibrate again)`;
  const m = /position (\d+)/.exec(message);
  if (m) return at(Number(m[1]));
  return message.startsWith('Unexpected end') ? ' (the file ends too early)' : '';
}

/** Parses profile text: JSON syntax (NaN and Infinity are not JSON), schema, then the core checks. */
export function parseProfileText(text: string, source: string): InstrumentProfile {
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (err) {
    throw new InputError(`${source}: not a valid JSON file${locateSyntaxError(text, (err as Error).message)}`, source);
  }
  const validate = schemaValidator();
  const raw = json as Record<string, unknown> | null;
  // The format and version checks come first and speak for themselves (a newer profile, another kind of file).
  if (raw && typeof raw === 'object' && !Array.isArray(raw) && raw.format === 'glowprint-instrument-profile' && raw.version === 1) {
    if (!validate(json)) throw new InputError(`${source}: not a usable instrument profile: ${describeSchemaErrors(validate.errors ?? [])}`, source);
  }
  return profileFromJson(json, source);
}

/** Reads and checks a profile file; every problem is one InputError naming the file and the field. */
export async function readProfile(file: string): Promise<InstrumentProfile> {
  let text: string;
  try {
    text = await fs.readFile(file, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'EISDIR') throw new InputError(`${file}: is a folder, not a profile file (give the .json that "glowprint calibrate --out" wrote)`, file);
    throw new InputError(`${file}: cannot read the profile (${code === 'ENOENT' ? 'no such file' : code ?? (err as Error).message})`, file);
  }
  return parseProfileText(text, file);
}

/** The profile as the JSON text written to disk (checked against the schema first). */
export function profileText(profile: InstrumentProfile, target = 'profile'): string {
  const json = profileToJson(profile);
  const validate = schemaValidator();
  if (!validate(json)) {
    throw new InputError(
      `${target}: the calibration cannot be saved as a valid profile (${describeSchemaErrors(validate.errors ?? [])}); ` +
        'usually a fit without a usable covariance: add lines',
      target,
    );
  }
  return JSON.stringify(json, null, 2) + '\n';
}

/** Writes a profile atomically; never over one of `inputs`. */
export async function writeProfile(file: string, profile: InstrumentProfile, options: { inputs?: readonly string[] } = {}): Promise<void> {
  await writeFileAtomic(file, profileText(profile, file), { inputs: options.inputs });
}
