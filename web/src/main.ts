/**
 * glowprint bench: the browser front end. Four benches — spectra (camera or files → spectrum → scale → what is in
 * the tube), polarization, grating and laser modes — over the same core as the command line; live work runs in the
 * page, heavy work in a worker, saved profiles and scope traces go through the server's API.
 */
import './styles.css';
import { AnalysisClient } from './analysis/client.js';
import { installBench } from './bench.js';
import { Camera } from './live/camera.js';
import { gratingBench } from './panels/gratingBench.js';
import { modesBench } from './panels/modesBench.js';
import { polarizationBench } from './panels/polarizationBench.js';
import { spectraBench } from './panels/spectraBench.js';
import { h } from './ui/dom.js';
import { safetyNotice, type Hazard } from './ui/safety.js';
import { say, statusRegion } from './ui/status.js';

const app = document.getElementById('app')!;
app.replaceChildren();
const camera = new Camera();
const client = new AnalysisClient();

const spectra = spectraBench(camera, client);
const benches: Array<{ id: string; label: string; hint: string; hazards: Hazard[]; root: HTMLElement }> = [
  { id: 'spectra', label: 'Spectra', hint: 'tubes, lamps, lasers through a grating', hazards: ['high-voltage', 'uv', 'laser'], root: spectra.root },
  { id: 'polarization', label: 'Polarization', hint: 'Malus fit, DoLP, azimuth', hazards: ['laser'], root: polarizationBench(camera).root },
  { id: 'grating', label: 'Grating', hint: 'line density from orders', hazards: ['laser'], root: gratingBench().root },
  { id: 'modes', label: 'Laser modes', hint: 'scanning Fabry-Perot traces', hazards: ['laser'], root: modesBench().root },
];

const nav = h('nav', { class: 'rail', 'aria-label': 'Benches' });
const main = h('main', { id: 'main', tabindex: '-1' });
const links: HTMLAnchorElement[] = [];
for (const b of benches) {
  const a = h('a', { href: `#${b.id}`, class: 'rail-link', 'data-bench': b.id }, h('span', { class: 'rail-label' }, b.label), h('span', { class: 'rail-hint' }, b.hint));
  links.push(a);
  nav.append(a);
  const section = h('div', { class: 'bench-wrap', id: `bench-${b.id}`, hidden: true }, h('h1', { class: 'bench-title' }, b.label), safetyNotice(b.hazards), b.root);
  main.append(section);
}

function show(id: string): void {
  const known = benches.some((b) => b.id === id) ? id : 'spectra';
  for (const b of benches) document.getElementById(`bench-${b.id}`)!.hidden = b.id !== known;
  links.forEach((a) => (a.dataset.bench === known ? a.setAttribute('aria-current', 'page') : a.removeAttribute('aria-current')));
}
window.addEventListener('hashchange', () => show(location.hash.slice(1)));

const header = h(
  'header',
  { class: 'topbar' },
  h('div', { class: 'brand' }, h('span', { class: 'brand-mark', 'aria-hidden': 'true' }), h('span', { class: 'brand-name' }, 'glowprint'), h('span', { class: 'brand-sub' }, 'bench')),
  statusRegion(),
);
app.append(header, h('div', { class: 'frame' }, nav, main));
show(location.hash.slice(1));
say('Ready. Start the camera, or open a photo or a spectrum CSV.', 'info');
installBench();
(window as unknown as { __glowprint: unknown }).__glowprint = { spectra, camera };
