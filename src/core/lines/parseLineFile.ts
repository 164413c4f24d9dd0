import type { LineListResult } from './lineTypes.js';
import { parseLineTable, type ParseLineTableOptions } from './parseLineTable.js';
import { parseNistAsd, type ParseNistAsdOptions } from './parseNistAsd.js';

export type ParseLineFileOptions = Omit<ParseLineTableOptions, 'source'> & ParseNistAsdOptions;

/** Whether the text looks like a NIST ASD export (text table or CSV/tab output) rather than a plain line table. */
export function isNistAsdExport(text: string): boolean {
  const head = text.slice(0, 20_000);
  return /(obs|ritz)_wl_(air|vac)/i.test(head) || /\|[^\n]*\bRitz\b/.test(head) || /Observed\s*\|/.test(head);
}

/** Reads any line list a user may bring: a NIST ASD export (text, CSV or tab) or a plain wavelength table. */
export function parseLineFile(text: string, source: string, options: ParseLineFileOptions = {}): LineListResult {
  if (isNistAsdExport(text)) return parseNistAsd(text, source, options);
  return parseLineTable(text, { source, spectrum: options.spectrum, onBadRow: options.onBadRow });
}
