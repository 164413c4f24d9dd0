import { ALL_CAUTIONS } from '../safety.js';
import { escapeHtml, renderTable, type ReportTable } from './html.js';

/** One measurement in a report: a photo's identification, a polarization series, a grating check, a mode trace. */
export interface ReportSection {
  /** Stable anchor id. */
  id: string;
  heading: string;
  /** What was measured, in a line (file names, settings). */
  subtitle?: string;
  /** The answer in a few words, shown large (e.g. "Neon, with mercury present — score 0.93"). */
  verdict?: string;
  /** Key figures as label → formatted value. */
  figures?: Array<[string, string]>;
  tables?: ReportTable[];
  /** Standalone SVG texts (from the plot functions), inlined. */
  svgs?: string[];
  warnings?: string[];
}

export interface ReportOptions {
  title: string;
  /** A line under the title (where, when, which rig). */
  intro?: string;
  /** The summary table for the lot, shown first. */
  summary?: ReportTable;
  sections: ReportSection[];
  /** @default ALL_CAUTIONS */
  cautions?: readonly string[];
  generatedAt?: Date;
  version?: string;
}

const STYLE = `
:root { --ink:#1f2430; --muted:#5a6475; --line:#d9dce3; --accent:#2b6cb0; --warn:#9c4221; --warnbg:#fff4e5; }
* { box-sizing: border-box; }
body { font: 15px/1.45 system-ui, sans-serif; color: var(--ink); margin: 0 auto; max-width: 1040px; padding: 24px; }
h1 { font-size: 26px; margin: 0 0 4px; } h2 { font-size: 20px; margin: 36px 0 4px; border-top: 2px solid var(--line); padding-top: 18px; }
.sub { color: var(--muted); margin: 0 0 12px; }
.verdict { font-size: 18px; font-weight: 600; margin: 8px 0 12px; }
dl.figures { display: grid; grid-template-columns: max-content 1fr; gap: 2px 18px; margin: 8px 0 16px; }
dl.figures dt { color: var(--muted); } dl.figures dd { margin: 0; font-variant-numeric: tabular-nums; }
table { border-collapse: collapse; margin: 10px 0 18px; font-size: 13.5px; }
caption { text-align: left; font-weight: 600; padding-bottom: 4px; }
th, td { border-bottom: 1px solid var(--line); padding: 3px 10px; text-align: left; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
.warnings { background: var(--warnbg); border-left: 4px solid var(--warn); padding: 8px 14px; margin: 10px 0; }
.warnings li { color: var(--warn); }
.cautions { border: 2px solid var(--warn); padding: 10px 16px; margin: 18px 0; }
.cautions h3 { margin: 0 0 6px; font-size: 15px; color: var(--warn); }
figure { margin: 10px 0; } svg { max-width: 100%; height: auto; }
nav a { margin-right: 14px; }
footer { color: var(--muted); margin-top: 40px; font-size: 12.5px; }
`;

/** A self-contained HTML report: inline CSS and SVG, no scripts, no external requests. */
export function buildReport(options: ReportOptions): string {
  const cautions = options.cautions ?? ALL_CAUTIONS;
  const parts: string[] = [];
  parts.push(`<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">`);
  parts.push(`<title>${escapeHtml(options.title)}</title><style>${STYLE}</style></head><body>`);
  parts.push(`<h1>${escapeHtml(options.title)}</h1>`);
  if (options.intro) parts.push(`<p class="sub">${escapeHtml(options.intro)}</p>`);
  if (cautions.length > 0) {
    parts.push(`<section class="cautions"><h3>Safety</h3><ul>${cautions.map((c) => `<li>${escapeHtml(c)}</li>`).join('')}</ul></section>`);
  }
  if (options.sections.length > 1) {
    parts.push(`<nav>${options.sections.map((s) => `<a href="#${escapeHtml(s.id)}">${escapeHtml(s.heading)}</a>`).join('')}</nav>`);
  }
  if (options.summary) parts.push(renderTable(options.summary));
  for (const s of options.sections) {
    parts.push(`<section id="${escapeHtml(s.id)}"><h2>${escapeHtml(s.heading)}</h2>`);
    if (s.subtitle) parts.push(`<p class="sub">${escapeHtml(s.subtitle)}</p>`);
    if (s.verdict) parts.push(`<p class="verdict">${escapeHtml(s.verdict)}</p>`);
    if (s.warnings && s.warnings.length > 0) {
      parts.push(`<div class="warnings"><ul>${s.warnings.map((w) => `<li>${escapeHtml(w)}</li>`).join('')}</ul></div>`);
    }
    if (s.figures && s.figures.length > 0) {
      parts.push(`<dl class="figures">${s.figures.map(([k, v]) => `<dt>${escapeHtml(k)}</dt><dd>${escapeHtml(v)}</dd>`).join('')}</dl>`);
    }
    for (const svg of s.svgs ?? []) parts.push(`<figure>${svg.replace(/^<\?xml[^>]*>\s*/, '')}</figure>`);
    for (const t of s.tables ?? []) parts.push(renderTable(t));
    parts.push('</section>');
  }
  const when = (options.generatedAt ?? new Date()).toISOString().replace('T', ' ').replace(/\.\d+Z$/, ' UTC');
  parts.push(`<footer>Made by glowprint${options.version ? ' ' + escapeHtml(options.version) : ''} on ${escapeHtml(when)}. Uncertainties are standard (1σ) unless stated.</footer>`);
  parts.push('</body></html>\n');
  return parts.join('\n');
}
