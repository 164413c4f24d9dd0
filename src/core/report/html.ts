/** Small, safe HTML building blocks for self-contained reports (no external assets, no scripts). */

export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

export interface ReportTable {
  caption?: string;
  columns: string[];
  rows: Array<Array<string | number | null | undefined>>;
  /** Column indices to right-align (numbers). @default every column whose cells are numbers */
  numeric?: number[];
}

/** A measured value with its standard uncertainty, rounded so the uncertainty has two significant digits. */
export function formatWithUncertainty(value: number, uncertainty: number | undefined, unit = ''): string {
  const u = unit ? ` ${unit}` : '';
  if (!Number.isFinite(value)) return '—';
  if (uncertainty === undefined || !Number.isFinite(uncertainty) || uncertainty <= 0) return `${formatNumber(value)}${u}`;
  const exponent = Math.floor(Math.log10(uncertainty)) - 1;
  const decimals = Math.max(0, -exponent);
  if (decimals > 12) return `${formatNumber(value)} ± ${formatNumber(uncertainty)}${u}`;
  return `${value.toFixed(decimals)} ± ${uncertainty.toFixed(decimals)}${u}`;
}

/** Numbers shown to a person: at most 6 significant digits, no exponent for ordinary magnitudes. */
export function formatNumber(value: number, significant = 6): string {
  if (!Number.isFinite(value)) return '—';
  if (value === 0) return '0';
  const abs = Math.abs(value);
  if (abs >= 1e-3 && abs < 1e9) return String(Number(value.toPrecision(significant)));
  return value.toExponential(significant - 1);
}

export function renderTable(table: ReportTable): string {
  const numeric = new Set(
    table.numeric ??
      table.columns.map((_, j) => j).filter((j) => table.rows.length > 0 && table.rows.every((r) => typeof r[j] === 'number')),
  );
  const cell = (v: string | number | null | undefined): string =>
    v === null || v === undefined ? '—' : typeof v === 'number' ? formatNumber(v) : escapeHtml(v);
  const head = table.columns.map((c, j) => `<th${numeric.has(j) ? ' class="num"' : ''}>${escapeHtml(c)}</th>`).join('');
  const body = table.rows
    .map((r) => '<tr>' + r.map((v, j) => `<td${numeric.has(j) ? ' class="num"' : ''}>${cell(v)}</td>`).join('') + '</tr>')
    .join('\n');
  const caption = table.caption ? `<caption>${escapeHtml(table.caption)}</caption>` : '';
  return `<table>${caption}<thead><tr>${head}</tr></thead><tbody>\n${body}\n</tbody></table>`;
}
