/**
 * Merges an options object over its defaults constant, skipping keys that are present but undefined (so that
 * `{ threshold: undefined }` from a front end keeps the documented default rather than erasing it).
 */
export function withDefaults<D extends object, O extends Partial<Record<keyof D, unknown>>>(defaults: D, options: O | undefined): D & O {
  const out: Record<string, unknown> = { ...(defaults as Record<string, unknown>) };
  for (const [k, v] of Object.entries(options ?? {})) if (v !== undefined) out[k] = v;
  return out as D & O;
}
