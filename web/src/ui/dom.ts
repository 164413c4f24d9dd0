/** Small DOM helpers: the app builds its elements with `h()` (no framework). */

type Child = Node | string | number | null | undefined | false;
type Attrs = Record<string, string | number | boolean | null | undefined | ((event: never) => void)>;

/**
 * `h('button', { class: 'primary', onclick: go }, 'Capture')`. Attributes named on… bind listeners; `true` sets a
 * boolean attribute, `false`/null/undefined leave it out.
 */
export function h<K extends keyof HTMLElementTagNameMap>(tag: K, attrs: Attrs = {}, ...children: Child[]): HTMLElementTagNameMap[K] {
  const el = document.createElement(tag);
  for (const [key, value] of Object.entries(attrs)) {
    if (value === undefined || value === null || value === false) continue;
    if (key.startsWith('on') && typeof value === 'function') {
      el.addEventListener(key.slice(2), value as EventListener);
    } else if (key === 'class') {
      el.className = String(value);
    } else if (value === true) {
      el.setAttribute(key, '');
    } else {
      el.setAttribute(key, String(value));
    }
  }
  append(el, ...children);
  return el;
}

export function append(parent: Node, ...children: Child[]): void {
  for (const c of children) {
    if (c === null || c === undefined || c === false) continue;
    parent.appendChild(typeof c === 'string' || typeof c === 'number' ? document.createTextNode(String(c)) : c);
  }
}

export function clear(el: Element): void {
  while (el.firstChild) el.removeChild(el.firstChild);
}

/** A card: titled section with an optional toolbar (the app's one container shape). */
export function card(title: string, options: { id?: string; tools?: HTMLElement[]; className?: string } = {}): { root: HTMLElement; body: HTMLElement; tools: HTMLElement } {
  const tools = h('div', { class: 'card-tools' }, ...(options.tools ?? []));
  const headingId = options.id ? `${options.id}-title` : undefined;
  const body = h('div', { class: 'card-body' });
  const root = h(
    'section',
    { class: `card ${options.className ?? ''}`.trim(), id: options.id, 'aria-labelledby': headingId },
    h('header', { class: 'card-head' }, h('h2', { id: headingId }, title), tools),
    body,
  );
  return { root, body, tools };
}

/** Labelled form field around an input (label text first). */
export function field(label: string, control: HTMLElement, hint?: string): HTMLLabelElement {
  return h('label', { class: 'field' }, h('span', { class: 'field-label' }, label), control, hint ? h('span', { class: 'field-hint' }, hint) : null);
}

export function button(label: string, onclick: (e: MouseEvent) => void, attrs: Attrs = {}): HTMLButtonElement {
  return h('button', { type: 'button', ...attrs, onclick }, label);
}

export function select(options: Array<{ value: string; label: string }>, attrs: Attrs = {}): HTMLSelectElement {
  return h('select', attrs, ...options.map((o) => h('option', { value: o.value }, o.label)));
}

/** Formats a value with its uncertainty to the uncertainty's two significant digits: "585.249 ± 0.012". */
export function formatPm(value: number, sigma: number | null | undefined, minDigits = 0, maxDigits = 6): string {
  if (!Number.isFinite(value)) return '—';
  if (sigma === null || sigma === undefined || !Number.isFinite(sigma) || !(sigma > 0)) return value.toFixed(Math.max(minDigits, 2));
  const d = Math.max(minDigits, Math.min(maxDigits, 1 - Math.floor(Math.log10(sigma))));
  return `${value.toFixed(d)} ± ${sigma.toFixed(d)}`;
}

/** Compact number for read-outs (4 significant digits, exponent when very large or small). */
export function formatNumber(v: number): string {
  if (!Number.isFinite(v)) return '—';
  if (v === 0) return '0';
  const a = Math.abs(v);
  return a >= 1e5 || a < 1e-3 ? v.toExponential(2) : String(Number(v.toPrecision(4)));
}
