import { readFileSync } from 'node:fs';
import { promises as fs } from 'node:fs';
import type { ErrorObject } from 'ajv';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { InputError } from '../core/errors.js';
import { type InstrumentProfile, profileFromJson, profileToJson } from '../core/calibration/profile.js';
import { dataPath } from './projectRoot.js';
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

/** A JSON value as a message shows it: `"abc"`, `12`, `null`, `an array of 3`, `an object`. */
function shownValue(v: unknown): string {
  if (v === undefined) return 'nothing';
  if (v === null || typeof v === 'number' || typeof v === 'boolean') return String(v);
  if (typeof v === 'string') return JSON.stringify(v.length > 40 ? `${v.slice(0, 40)}…` : v);
  if (Array.isArray(v)) return `an array of ${v.length}`;
  return 'an object';
}

const TYPE_WORDS: Record<string, string> = {
  number: 'a number',
  integer: 'an integer',
  string: 'a string',
  boolean: 'true or false',
  object: 'an object',
  array: 'an array',
  null: 'null',
};

function typeWords(type: unknown): string {
  const types = Array.isArray(type) ? type : String(type).split(',');
  return types.map((t: string) => TYPE_WORDS[t] ?? t).join(' or ');
}

const COMPARISON_WORDS: Record<string, string> = { '>=': '≥', '<=': '≤', '>': '>', '<': '<' };

/** A JSON pointer as the field path messages use: "/model/covariance/1/2" → "model.covariance[1][2]". */
function dottedPath(pointer: string): string {
  return pointer
    .slice(1)
    .split('/')
    .map((part) => part.replace(/~1/g, '/').replace(/~0/g, '~'))
    .map((part, i) => (/^\d+$/.test(part) ? `[${part}]` : i === 0 ? part : `.${part}`))
    .join('');
}

/** One schema error as "field: expected …, got …" (the field as a dotted path, as in the file's keys). */
function describeError(e: ErrorObject): string {
  const where = dottedPath(e.instancePath);
  const at = (what: string): string => (where ? `${where}: ${what}` : what);
  const got = `got ${shownValue(e.data)}`;
  const p = e.params as Record<string, unknown>;
  switch (e.keyword) {
    case 'type':
      return at(`expected ${typeWords(p.type)}, ${got}`);
    case 'const':
      return at(`expected ${JSON.stringify(p.allowedValue)}, ${got}`);
    case 'enum':
      return at(`expected one of ${(p.allowedValues as unknown[]).map((v) => JSON.stringify(v)).join(', ')}, ${got}`);
    case 'minimum':
    case 'maximum':
    case 'exclusiveMinimum':
    case 'exclusiveMaximum':
      return at(`expected a number ${COMPARISON_WORDS[String(p.comparison)] ?? String(p.comparison)} ${String(p.limit)}, ${got}`);
    case 'minItems':
      return at(`expected at least ${String(p.limit)} items, ${got}`);
    case 'maxItems':
      return at(`expected at most ${String(p.limit)} items, ${got}`);
    default:
      return at(`${e.message ?? 'invalid'}, ${got}`);
  }
}

/**
 * The schema's errors as one message. The schema judges a model by the kind it declares (an if/then per kind), so
 * the errors are the field's own, not a list of every field another kind would need; "must match the then schema"
 * above them says nothing more and is left out.
 */
function describeErrors(errors: ErrorObject[]): string {
  const useful = errors.filter((e) => e.keyword !== 'if' && e.keyword !== 'oneOf' && e.keyword !== 'anyOf');
  // The missing (or unknown) fields of one object make one message: 'model: missing fields "degree", "center_px"'.
  // Of an object that declares its kind (a model), the message says which kind the fields were judged by.
  type FieldGroup = { where: string; what: string; names: string[]; kind?: string };
  const entries: (string | FieldGroup)[] = [];
  const groups = new Map<string, FieldGroup>();
  for (const e of useful.length ? useful : errors) {
    if (e.keyword === 'required' || e.keyword === 'additionalProperties') {
      const p = e.params as { missingProperty?: string; additionalProperty?: string };
      const name = JSON.stringify(p.missingProperty ?? p.additionalProperty);
      const key = `${e.keyword} ${e.instancePath}`;
      let group = groups.get(key);
      if (!group) {
        const kind = (e.data as { kind?: unknown } | undefined)?.kind;
        group = {
          where: dottedPath(e.instancePath),
          what: e.keyword === 'required' ? 'missing field' : 'unknown field',
          names: [],
          ...(typeof kind === 'string' && p.missingProperty !== 'kind' ? { kind } : {}),
        };
        groups.set(key, group);
        entries.push(group);
      }
      if (!group.names.includes(name)) group.names.push(name);
    } else {
      const m = describeError(e);
      if (!entries.includes(m)) entries.push(m);
    }
  }
  const text = entries.map((m) => {
    if (typeof m === 'string') return m;
    const many = m.names.length > 1;
    const kind = m.kind === undefined ? '' : m.what === 'missing field' ? ` (a ${JSON.stringify(m.kind)} model needs ${many ? 'them' : 'it'})` : ` (not part of a ${JSON.stringify(m.kind)} model)`;
    const what = `${m.what}${many ? 's' : ''} ${m.names.join(', ')}${kind}`;
    return m.where ? `${m.where}: ${what}` : what;
  });
  return text.slice(0, 3).join('; ') + (text.length > 3 ? ` (and ${text.length - 3} more)` : '');
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
    if (!validate(json)) throw new InputError(`${source}: not a usable instrument profile: ${describeErrors(validate.errors ?? [])}`, source);
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
      `${target}: the calibration cannot be saved as a valid profile (${describeErrors(validate.errors ?? [])}); ` +
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
