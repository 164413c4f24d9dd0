/** Tabs (WAI-ARIA tabs pattern): arrow keys move between tabs, Home/End jump, the active panel alone is shown. */
import { h } from './dom.js';

export interface TabSpec {
  id: string;
  label: string;
  panel: HTMLElement;
}

export function tabs(specs: TabSpec[], options: { label: string; className?: string; onChange?: (id: string) => void; vertical?: boolean }): { root: HTMLElement; list: HTMLElement; select: (id: string) => void } {
  const list = h('div', { role: 'tablist', 'aria-label': options.label, 'aria-orientation': options.vertical ? 'vertical' : 'horizontal', class: 'tablist' });
  const buttons: HTMLButtonElement[] = [];
  const panels = h('div', { class: 'tabpanels' });
  const select = (id: string): void => {
    specs.forEach((s, i) => {
      const on = s.id === id;
      buttons[i].setAttribute('aria-selected', String(on));
      buttons[i].tabIndex = on ? 0 : -1;
      s.panel.hidden = !on;
    });
    options.onChange?.(id);
  };
  specs.forEach((s, i) => {
    const b = h('button', { type: 'button', role: 'tab', id: `tab-${s.id}`, 'aria-controls': `panel-${s.id}`, class: 'tab' }, s.label);
    b.addEventListener('click', () => select(s.id));
    b.addEventListener('keydown', (e) => {
      const next = options.vertical ? ['ArrowDown', 'ArrowRight'] : ['ArrowRight'];
      const prev = options.vertical ? ['ArrowUp', 'ArrowLeft'] : ['ArrowLeft'];
      let k = -1;
      if (next.includes(e.key)) k = (i + 1) % specs.length;
      else if (prev.includes(e.key)) k = (i - 1 + specs.length) % specs.length;
      else if (e.key === 'Home') k = 0;
      else if (e.key === 'End') k = specs.length - 1;
      if (k < 0) return;
      e.preventDefault();
      select(specs[k].id);
      buttons[k].focus();
    });
    buttons.push(b);
    list.append(b);
    s.panel.id = `panel-${s.id}`;
    s.panel.setAttribute('role', 'tabpanel');
    s.panel.setAttribute('aria-labelledby', `tab-${s.id}`);
    s.panel.tabIndex = -1;
    panels.append(s.panel);
  });
  const root = h('div', { class: `tabs ${options.className ?? ''}`.trim() }, list, panels);
  select(specs[0].id);
  return { root, list, select };
}
