import path from 'node:path';
import { parseHTML } from 'linkedom';
import { expect } from 'vitest';
import { ROOT, runCli } from '../../../helpers/runCli.js';

/** Demo inputs (invented data, data/demo/). */
export const DEMO = path.join(ROOT, 'data/demo');

/** What a command's --json prints, run through the built CLI: the exact input of the report adapters. */
export function cliJson(args: string[]): Record<string, any> {
  const r = runCli([...args, '--json']);
  expect(r.status, r.stderr).toBe(0);
  return JSON.parse(r.stdout);
}

/** Report text with the no-break spaces that keep "value ± u unit" together turned back into spaces. */
export function plainText(s: string | undefined): string {
  return (s ?? '').replace(/\u00a0/g, ' ');
}

/** An SVG text parsed for inspection. */
export function parseSvg(svg: string): Document {
  return parseHTML(`<!doctype html><html><body>${svg.replace(/^<\?xml[^>]*>\s*/, '')}</body></html>`).document as unknown as Document;
}

/** The figure with this label. */
export function figure(figures: Array<[string, string]> | undefined, label: RegExp): string {
  const f = (figures ?? []).find(([k]) => label.test(k));
  expect(f, `a figure matching ${label}`).toBeDefined();
  return plainText(f![1]);
}
