import { parseHTML } from 'linkedom';

/** A DOM Document for drawing SVG plots with d3 on Node (linkedom; the browser passes its own document). */
export function createSvgDocument(): Document {
  return parseHTML('<!doctype html><html><head></head><body></body></html>').document as unknown as Document;
}
