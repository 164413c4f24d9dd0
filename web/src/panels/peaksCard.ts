/** The peak table of the capture: position, wavelength with uncertainty, width, SNR, flags and the line each is. */
import type { Session } from '../analysis/session.js';
import { applyProfile } from '../analysis/scale.js';
import { exportButtons } from '../plots/exporters.js';
import { card, clear, formatPm, h } from '../ui/dom.js';
import { baseName } from './spectrumCard.js';

export class PeaksCard {
  readonly root: HTMLElement;
  private tbody = h('tbody');
  private rows: HTMLTableRowElement[] = [];

  constructor(private session: Session) {
    const c = card('Peak table', {
      id: 'peaks-card',
      className: 'wide',
      tools: [exportButtons({ baseName: () => `peaks-${baseName(session.capture?.sourceName ?? 'spectrum')}`, csv: () => this.csv() })],
    });
    c.body.append(
      h(
        'div',
        { class: 'table-scroll' },
        h(
          'table',
          { class: 'table', id: 'peak-table' },
          h('thead', {}, h('tr', {}, ...['#', 'position (px)', 'λ (nm)', 'FWHM (px)', 'SNR', 'flags', 'line'].map((t) => h('th', { scope: 'col' }, t)))),
          this.tbody,
        ),
      ),
    );
    this.root = c.root;
    for (const e of ['capture', 'scale', 'identification'] as const) session.on(e, () => this.render());
    session.on('selection', () => this.highlight());
  }

  private wavelengths(): Array<{ nm: number; sigma: number } | null> {
    const cap = this.session.capture!;
    if (this.session.scale) return applyProfile(cap, this.session.scale.profile).peaks.map((p) => ({ nm: p.wavelengthNm, sigma: p.wavelengthUncertaintyNm }));
    const ids = new Map((this.session.identification?.identification.peaks ?? []).map((p) => [p.positionPx, p]));
    return cap.peaks.map((p) => {
      const q = ids.get(p.positionPx);
      if (q) return { nm: q.wavelengthNm, sigma: q.wavelengthUncertaintyNm };
      return p.wavelengthNm !== undefined ? { nm: p.wavelengthNm, sigma: p.wavelengthUncertaintyNm ?? NaN } : null;
    });
  }

  private render(): void {
    clear(this.tbody);
    this.rows = [];
    const cap = this.session.capture;
    if (!cap) return;
    const wl = this.wavelengths();
    const lines = new Map((this.session.identification?.identification.peaks ?? []).map((p) => [p.positionPx, p.line]));
    cap.peaks.forEach((p, i) => {
      const w = wl[i];
      const line = lines.get(p.positionPx);
      const row = h(
        'tr',
        { tabindex: '-1', 'data-index': i },
        h('td', { class: 'num' }, String(i + 1)),
        h('td', { class: 'num' }, formatPm(p.positionPx, p.positionUncertaintyPx)),
        h('td', { class: 'num' }, w ? formatPm(w.nm, w.sigma) : '—'),
        h('td', { class: 'num' }, p.fwhmPx.toFixed(2)),
        h('td', { class: 'num' }, p.snr >= 100 ? p.snr.toFixed(0) : p.snr.toFixed(1)),
        h('td', {}, [p.saturated ? 'clipped' : '', p.blended ? 'blended' : ''].filter(Boolean).join(' ')),
        h('td', {}, line ? `${line.spectrum} ${line.wavelengthNm.toFixed(3)}${line.order ? ` (order ${line.order})` : ''}` : ''),
      );
      row.addEventListener('click', () => this.session.pick(i));
      row.addEventListener('keydown', (e) => {
        if (e.key === 'Enter') this.session.pick(i);
        else if (e.key === 'ArrowDown') this.rows[i + 1]?.focus();
        else if (e.key === 'ArrowUp') this.rows[i - 1]?.focus();
        else return;
        e.preventDefault();
      });
      this.rows.push(row);
      this.tbody.append(row);
    });
    if (this.rows[0]) this.rows[0].tabIndex = 0;
    this.highlight();
  }

  private highlight(): void {
    const i = this.session.pickedPeak;
    this.rows.forEach((r, k) => r.classList.toggle('selected', k === i));
    const row = i !== null ? this.rows[i] : undefined;
    const box = row?.closest('.table-scroll') as HTMLElement | null | undefined;
    // Scroll the table, not the page: the plot the user clicked stays where it is.
    if (row && box) {
      const top = row.offsetTop - (row.parentElement?.offsetTop ?? 0);
      if (top < box.scrollTop + 24) box.scrollTop = Math.max(0, top - 24);
      else if (top + row.offsetHeight > box.scrollTop + box.clientHeight) box.scrollTop = top + row.offsetHeight - box.clientHeight;
    }
  }

  private csv(): string | null {
    const cap = this.session.capture;
    if (!cap) return null;
    const wl = this.wavelengths();
    const out = ['position_px,position_uncertainty_px,wavelength_nm,wavelength_uncertainty_nm,fwhm_px,height,area,snr,saturated,blended'];
    cap.peaks.forEach((p, i) => {
      const w = wl[i];
      out.push([p.positionPx, p.positionUncertaintyPx, w?.nm ?? '', w?.sigma ?? '', p.fwhmPx, p.height, p.area, p.snr, p.saturated ? 1 : 0, p.blended ? 1 : 0].join(','));
    });
    return out.join('\n') + '\n';
  }
}
