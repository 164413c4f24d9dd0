/**
 * Errors caused by the user's input (a file, an option, a value). Front ends map them to exit code 1
 * (CLI) or HTTP 4xx (server) and print `message` alone, without a stack trace.
 */
export class InputError extends Error {
  override readonly name = 'InputError';
  /** Which input the problem is in: a file name, an option name, a form field. */
  readonly source?: string;
  constructor(message: string, source?: string) {
    super(message);
    this.source = source;
  }
}

/** A mistake in how a command was called (a missing or conflicting option): exit code 2, unlike bad input (1). */
export class UsageError extends Error {
  override readonly name = 'UsageError';
}

/** Shows a received value briefly and unambiguously in a message. */
export function describeValue(value: unknown): string {
  if (typeof value === 'string') return JSON.stringify(value.length > 60 ? value.slice(0, 57) + '...' : value);
  if (typeof value === 'number') return Number.isNaN(value) ? 'NaN' : String(value);
  if (value === null) return 'null';
  if (value === undefined) return 'nothing';
  if (Array.isArray(value)) return `an array of ${value.length}`;
  if (ArrayBuffer.isView(value)) return `a typed array of ${(value as unknown as ArrayLike<number>).length}`;
  return typeof value;
}

/**
 * The one helper that builds every invalid-parameter message: which input, what was expected, what was received.
 * `invalid('angleDeg', 'a finite number', NaN)` → InputError "angleDeg: expected a finite number, got NaN".
 */
export function invalid(name: string, expected: string, received: unknown): InputError {
  return new InputError(`${name}: expected ${expected}, got ${describeValue(received)}`, name);
}

/** Throws `invalid(...)` unless `value` is a finite number (optionally within [min, max]). */
export function assertFinite(name: string, value: unknown, min = -Infinity, max = Infinity): asserts value is number {
  if (typeof value !== 'number' || !Number.isFinite(value)) throw invalid(name, 'a finite number', value);
  if (value < min || value > max) {
    const range = min === -Infinity ? `≤ ${max}` : max === Infinity ? `≥ ${min}` : `between ${min} and ${max}`;
    throw invalid(name, `a number ${range}`, value);
  }
}

/** Parses a number given as text (a flag or form field), naming the option in the error; undefined stays undefined. */
export function parseNumberOption(name: string, value: string | undefined): number | undefined {
  if (value === undefined) return undefined;
  const v = Number(value);
  if (value.trim() === '' || !Number.isFinite(v)) throw new InputError(`${name}: expected a number, got ${JSON.stringify(value)}`, name);
  return v;
}
