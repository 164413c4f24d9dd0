/**
 * Exports of what a card shows: the plot as SVG or PNG, its data as CSV, the analysis as JSON (the same snake_case
 * contract as the CLI's --json). Files are handed to the browser as downloads; nothing leaves the machine.
 */
import { toSnakeCase } from '../../../src/core/json/toSnakeCase.js';
import { button, h } from '../ui/dom.js';

export function download(fileName: string, content: string | Blob, type = 'text/plain'): void {
  const blob = typeof content === 'string' ? new Blob([content], { type }) : content;
  const url = URL.createObjectURL(blob);
  const a = h('a', { href: url, download: fileName, class: 'hidden-link' });
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

/** A standalone SVG file of an SVG element on the page. */
export function svgFileText(svg: SVGSVGElement): string {
  const copy = svg.cloneNode(true) as SVGSVGElement;
  copy.setAttribute('xmlns', 'http://www.w3.org/2000/svg');
  copy.removeAttribute('tabindex');
  return '<?xml version="1.0" encoding="UTF-8"?>\n' + new XMLSerializer().serializeToString(copy) + '\n';
}

/** Renders an SVG element to a PNG at `scale` × its size (via an image of the SVG file, then a canvas). */
export async function svgToPng(svg: SVGSVGElement, scale = 2): Promise<Blob> {
  const text = svgFileText(svg);
  const width = Number(svg.getAttribute('width')) || svg.getBoundingClientRect().width;
  const height = Number(svg.getAttribute('height')) || svg.getBoundingClientRect().height;
  const url = URL.createObjectURL(new Blob([text], { type: 'image/svg+xml' }));
  try {
    const img = new Image();
    img.decoding = 'async';
    img.src = url;
    await img.decode();
    const canvas = h('canvas', { width: Math.round(width * scale), height: Math.round(height * scale) });
    const ctx = canvas.getContext('2d')!;
    ctx.scale(scale, scale);
    ctx.drawImage(img, 0, 0, width, height);
    return await new Promise<Blob>((resolve, reject) => canvas.toBlob((b) => (b ? resolve(b) : reject(new Error('PNG encoding failed'))), 'image/png'));
  } finally {
    URL.revokeObjectURL(url);
  }
}

/** JSON text of a result in the CLI's contract (snake_case keys with units). */
export function resultJson(result: unknown): string {
  return JSON.stringify(toSnakeCase(result), (_k, v) => (ArrayBuffer.isView(v) ? Array.from(v as unknown as ArrayLike<number>) : v), 2) + '\n';
}

export interface ExportSources {
  baseName: () => string;
  svg?: () => SVGSVGElement | null;
  csv?: () => string | null;
  json?: () => unknown;
}

/** The export buttons of a card: SVG, PNG, CSV, JSON — each shown only when the card has that kind of content. */
export function exportButtons(src: ExportSources): HTMLElement {
  const wrap = h('div', { class: 'exports', role: 'group', 'aria-label': 'Export' });
  if (src.svg) {
    wrap.append(
      button('SVG', () => {
        const s = src.svg!();
        if (s) download(`${src.baseName()}.svg`, svgFileText(s), 'image/svg+xml');
      }, { title: 'Download the plot as SVG' }),
      button('PNG', async () => {
        const s = src.svg!();
        if (s) download(`${src.baseName()}.png`, await svgToPng(s));
      }, { title: 'Download the plot as PNG' }),
    );
  }
  if (src.csv) {
    wrap.append(
      button('CSV', () => {
        const t = src.csv!();
        if (t) download(`${src.baseName()}.csv`, t, 'text/csv');
      }, { title: 'Download the data shown as CSV' }),
    );
  }
  if (src.json) {
    wrap.append(
      button('JSON', () => {
        const r = src.json!();
        if (r !== null && r !== undefined) download(`${src.baseName()}.json`, resultJson(r), 'application/json');
      }, { title: 'Download the result as JSON' }),
    );
  }
  return wrap;
}
