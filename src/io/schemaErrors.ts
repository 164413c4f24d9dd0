import type { ErrorObject } from 'ajv';

/**
 * Ajv's schema errors worded for the people who edit glowprint's JSON files by hand: each as "field: expected …,
 * got …", the field as a dotted path of the file's own keys ("model.covariance[1][2]"), the missing or unknown fields
 * of one object in one message. Validators should be compiled with `verbose: true`, so that each error carries the
 * value it is about.
 */

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
 * A schema's errors as one message, at most three of them. A schema that judges an object by the kind it declares
 * (an if/then per kind, as the instrument profile's model) yields the field's own errors, not a list of every field
 * another kind would need; "must match the then schema" above them says nothing more and is left out.
 */
export function describeSchemaErrors(errors: ErrorObject[]): string {
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
