/**
 * The laser-modes bench: scope CSV exports of a scanning Fabry-Perot (one, or a warm-up series), the interferometer's
 * FSR (or mirror spacing and kind), and the answer from the server (`POST /api/modes`, the same analysis as
 * `glowprint modes`): mode count, spacing, cavity length, gain width, finesse, drift, with the core's plots.
 */
import { exportButtons } from '../plots/exporters.js';
import { button, card, clear, field, formatPm, h, select } from '../ui/dom.js';
import { say } from '../ui/status.js';
import { apiJson } from './api.js';

interface ModesJson {
  fsr_hz: number;
  mode_spacing_hz: number | null;
  mode_spacing_uncertainty_hz: number | null;
  cavity_length_m: number | null;
  cavity_length_uncertainty_m: number | null;
  mode_count: number;
  modes: Array<{ index: number; offset_hz: number; relative_power: number; lasing: boolean }>;
  gain_fwhm_hz: number | null;
  finesse: number | null;
  drift_hz_per_s: number | null;
  drift_uncertainty_hz_per_s: number | null;
  svg?: string;
  warnings: string[];
}

export function modesBench(): { root: HTMLElement } {
  const files = h('input', { type: 'file', id: 'modes-files', multiple: true, accept: '.csv,.txt,.tsv,text/csv,text/plain' });
  const how = select(
    [
      { value: 'fsr', label: 'free spectral range' },
      { value: 'confocal', label: 'mirror spacing, confocal (FSR = c/4d)' },
      { value: 'planar', label: 'mirror spacing, planar (FSR = c/2d)' },
    ],
    { id: 'modes-how' },
  );
  const fsr = h('input', { type: 'text', id: 'modes-fsr', value: '10 GHz', 'aria-label': 'FSR or mirror spacing, with its unit' });
  const fsrU = h('input', { type: 'text', id: 'modes-fsr-u', placeholder: 'e.g. 0.2% or 20 MHz', 'aria-label': 'FSR uncertainty' });
  const interval = h('input', { type: 'text', id: 'modes-interval', placeholder: 'from the files, or e.g. 30 s', 'aria-label': 'time between traces' });
  const n = h('input', { type: 'number', id: 'modes-n', value: '1', step: 'any', min: '1', 'aria-label': 'refractive index in the cavity' });
  const envelope = select(
    [
      { value: 'gaussian', label: 'Gaussian envelope of the mode powers' },
      { value: 'above-threshold', label: 'gain above threshold (≥ 5 modes)' },
    ],
    { id: 'modes-envelope' },
  );
  how.addEventListener('change', () => {
    if (how.value === 'fsr' && !/Hz/i.test(fsr.value)) fsr.value = '10 GHz';
    if (how.value !== 'fsr' && /Hz/i.test(fsr.value)) fsr.value = '7.5 mm';
  });
  const summary = h('div', { class: 'verdict-box', id: 'modes-result' }, h('p', { class: 'muted' }, 'Choose the scope traces and give the FSR, then Analyse.'));
  const figure = h('div', { class: 'sheet', id: 'modes-figure' });
  let last: ModesJson | null = null;

  const analyse = async (): Promise<void> => {
    const list = Array.from(files.files ?? []);
    if (list.length === 0) {
      say('Choose one or more scope CSV files.', 'error');
      return;
    }
    const form = new FormData();
    for (const f of list) form.append('traces', f, f.name);
    if (how.value === 'fsr') form.append('fsr', fsr.value);
    else {
      form.append('mirror_spacing', fsr.value);
      form.append('interferometer', how.value);
    }
    if (fsrU.value.trim()) form.append('fsr_uncertainty', fsrU.value.trim());
    if (interval.value.trim()) form.append('interval', interval.value.trim());
    form.append('refractive_index', n.value || '1');
    form.append('envelope', envelope.value);
    form.append('svg', 'true');
    say(`Analysing ${list.length} trace(s)…`, 'busy');
    try {
      last = (await apiJson('/api/modes', { form })) as ModesJson;
      render(last);
      say(`${last.mode_count} lasing mode(s).`, 'ok');
    } catch (err) {
      say((err as Error).message, 'error');
    }
  };

  const render = (r: ModesJson): void => {
    clear(summary);
    clear(figure);
    const mhz = (v: number | null, u?: number | null): string => (v === null ? '—' : `${formatPm(v / 1e6, u != null ? u / 1e6 : null)} MHz`);
    summary.append(
      h('p', { class: 'headline', id: 'modes-count' }, `${r.mode_count} lasing mode${r.mode_count === 1 ? '' : 's'}`),
      h(
        'dl',
        { class: 'figures' },
        h('dt', {}, 'Mode spacing'),
        h('dd', { id: 'modes-spacing' }, mhz(r.mode_spacing_hz, r.mode_spacing_uncertainty_hz)),
        h('dt', {}, 'Cavity length'),
        h('dd', { id: 'modes-length' }, r.cavity_length_m === null ? '—' : `${formatPm(r.cavity_length_m * 100, r.cavity_length_uncertainty_m !== null ? r.cavity_length_uncertainty_m * 100 : null)} cm (L = c/2nΔν)`),
        h('dt', {}, 'Gain width'),
        h('dd', {}, r.gain_fwhm_hz === null ? '—' : `${(r.gain_fwhm_hz / 1e9).toFixed(3)} GHz FWHM`),
        h('dt', {}, 'Finesse'),
        h('dd', {}, r.finesse === null ? '—' : r.finesse.toFixed(0)),
        h('dt', {}, 'Drift'),
        h('dd', {}, r.drift_hz_per_s === null ? '— (one trace, or no capture times)' : mhz(r.drift_hz_per_s, r.drift_uncertainty_hz_per_s).replace('MHz', 'MHz/s')),
        h('dt', {}, 'FSR'),
        h('dd', {}, `${(r.fsr_hz / 1e9).toFixed(4)} GHz`),
      ),
      h(
        'table',
        { class: 'table' },
        h('thead', {}, h('tr', {}, ...['mode', 'offset (MHz)', 'relative power', ''].map((t) => h('th', { scope: 'col' }, t)))),
        h('tbody', {}, ...r.modes.map((m) => h('tr', { class: m.lasing ? '' : 'unused' }, h('td', { class: 'num' }, String(m.index)), h('td', { class: 'num' }, (m.offset_hz / 1e6).toFixed(1)), h('td', { class: 'num' }, m.relative_power.toFixed(3)), h('td', {}, m.lasing ? '' : 'below 5 %')))),
      ),
      ...r.warnings.slice(0, 6).map((w) => h('p', { class: 'warning' }, w)),
    );
    if (r.svg) {
      const doc = new DOMParser().parseFromString(r.svg, 'image/svg+xml');
      const svg = doc.documentElement;
      if (svg.nodeName === 'svg') {
        svg.setAttribute('role', 'img');
        svg.setAttribute('aria-label', 'Interferometer sweep, mode powers with the gain envelope, and drift');
        figure.append(document.importNode(svg, true));
      }
    }
  };

  const formCard = card('Scope traces', { id: 'modes-form' });
  formCard.body.append(
    field('Traces (CSV)', files, 'several files = a warm-up series, in time order'),
    h('div', { class: 'grid2' }, field('Interferometer', how), field('Value', fsr, 'with its unit: 10 GHz, 7.5 mm'), field('± FSR', fsrU), field('Time between traces', interval), field('Refractive index', n), field('Gain model', envelope)),
    button('Analyse', () => void analyse(), { class: 'primary', id: 'modes-go' }),
  );
  const resultCard = card('Longitudinal modes', {
    id: 'modes-result-card',
    tools: [
      exportButtons({
        baseName: () => 'modes',
        svg: () => figure.querySelector('svg'),
        csv: () => (last ? ['index,offset_hz,relative_power,lasing', ...last.modes.map((m) => [m.index, m.offset_hz, m.relative_power, m.lasing ? 1 : 0].join(','))].join('\n') + '\n' : null),
        json: () => (last ? { ...last, svg: undefined } : null),
      }),
    ],
  });
  resultCard.body.append(summary, figure);
  return { root: h('div', { class: 'bench modes-bench' }, formCard.root, resultCard.root) };
}
