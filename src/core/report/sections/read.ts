import { invalid } from '../../errors.js';

/**
 * A read-only view of one object in a result's JSON (as a command's --json printed it, or a file a person edited):
 * every accessor names the key's full path when the value is missing or has the wrong type, so a bad results file
 * gets one clear message ("peaks[3].position_px: expected a number, got nothing") instead of a TypeError.
 */
export class JsonView {
  readonly value: Record<string, unknown>;
  readonly path: string;

  constructor(value: unknown, path = '') {
    if (!isRecord(value)) throw invalid(path || 'result', 'a JSON object', value);
    this.value = value;
    this.path = path;
  }

  has(key: string): boolean {
    return this.value[key] !== undefined && this.value[key] !== null;
  }

  /** A finite number (required). */
  num(key: string): number {
    const v = this.value[key];
    if (typeof v !== 'number' || !Number.isFinite(v)) throw invalid(this.at(key), 'a number', v);
    return v;
  }

  /** A finite number, or undefined when the key is absent or null. */
  optNum(key: string): number | undefined {
    return this.has(key) ? this.num(key) : undefined;
  }

  str(key: string): string {
    const v = this.value[key];
    if (typeof v !== 'string') throw invalid(this.at(key), 'a string', v);
    return v;
  }

  optStr(key: string): string | undefined {
    return this.has(key) ? this.str(key) : undefined;
  }

  bool(key: string): boolean {
    const v = this.value[key];
    if (typeof v !== 'boolean') throw invalid(this.at(key), 'true or false', v);
    return v;
  }

  optBool(key: string): boolean | undefined {
    return this.has(key) ? this.bool(key) : undefined;
  }

  obj(key: string): JsonView {
    return new JsonView(this.value[key], this.at(key));
  }

  optObj(key: string): JsonView | undefined {
    return this.has(key) ? this.obj(key) : undefined;
  }

  /** An array of objects (required). */
  objects(key: string): JsonView[] {
    return this.array(key).map((v, i) => new JsonView(v, `${this.at(key)}[${i}]`));
  }

  /** An array of objects, or [] when the key is absent or null. */
  optObjects(key: string): JsonView[] {
    return this.has(key) ? this.objects(key) : [];
  }

  /** An array of numbers (required). */
  numbers(key: string): number[] {
    return this.array(key).map((v, i) => {
      if (typeof v !== 'number' || !Number.isFinite(v)) throw invalid(`${this.at(key)}[${i}]`, 'a number', v);
      return v;
    });
  }

  /** The `warnings` array of the JSON contract: strings; absent counts as none. */
  warnings(key = 'warnings'): string[] {
    if (!this.has(key)) return [];
    return this.array(key).map((v, i) => {
      if (typeof v !== 'string') throw invalid(`${this.at(key)}[${i}]`, 'a warning text', v);
      return v;
    });
  }

  array(key: string): unknown[] {
    const v = this.value[key];
    if (!Array.isArray(v)) throw invalid(this.at(key), 'an array', v);
    return v;
  }

  at(key: string): string {
    return this.path ? `${this.path}.${key}` : key;
  }
}

export function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

/** The last part of a file path, for item names (results carry the paths the command was given). */
export function baseName(file: string): string {
  const parts = file.split(/[\\/]/);
  return parts[parts.length - 1] || file;
}
