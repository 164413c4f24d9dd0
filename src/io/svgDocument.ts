import { createRequire } from 'node:module';

type ParseHtml = typeof import('linkedom').parseHTML;
let parseHtml: ParseHtml | undefined;

/**
 * A DOM Document for drawing SVG plots with d3 on Node (linkedom; the browser passes its own document). linkedom is
 * loaded on the first call, not at import: it costs ~0.3 s of start-up that commands printing no plot should not pay.
 */
export function createSvgDocument(): Document {
  parseHtml ??= (createRequire(import.meta.url)('linkedom') as { parseHTML: ParseHtml }).parseHTML;
  return parseHtml('<!doctype html><html><head></head><body></body></html>').document as unknown as Document;
}
