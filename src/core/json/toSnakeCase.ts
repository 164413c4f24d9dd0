/**
 * Converts the camelCase keys of core results (`wavelengthNm`, `positionUncertaintyPx`) into the snake_case keys of
 * the JSON contract (`wavelength_nm`, `position_uncertainty_px`), recursively. Typed arrays become plain arrays;
 * non-finite numbers become null (JSON has no NaN). Keys that are already snake_case pass unchanged.
 */
export function toSnakeCase(value: unknown): unknown {
  if (value === null || value === undefined) return value ?? null;
  if (typeof value === 'number') return Number.isFinite(value) ? value : null;
  if (typeof value !== 'object') return value;
  if (ArrayBuffer.isView(value) && !(value instanceof DataView)) {
    return Array.from(value as unknown as ArrayLike<number>, (v) => (Number.isFinite(v) ? v : null));
  }
  if (Array.isArray(value)) return value.map(toSnakeCase);
  if (value instanceof Date) return value.toISOString();
  const out: Record<string, unknown> = {};
  for (const [key, v] of Object.entries(value as Record<string, unknown>)) {
    if (v === undefined) continue;
    out[snakeKey(key)] = toSnakeCase(v);
  }
  return out;
}

/** `positionUncertaintyPx` → `position_uncertainty_px`; `s0` → `s0`; `iMax` → `i_max`; `rgbR` → `rgb_r`. */
export function snakeKey(key: string): string {
  return key.replace(/([a-z0-9])([A-Z])/g, '$1_$2').replace(/([A-Z])([A-Z][a-z])/g, '$1_$2').toLowerCase();
}
