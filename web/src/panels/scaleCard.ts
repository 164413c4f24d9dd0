/**
 * The wavelength-scale card: calibrate the capture from a lamp (automatic line matching) and/or by clicking peaks and
 * picking their lines; see the fit (RMS, dispersion, range, residuals); save the result as an instrument profile in
 * the server's workspace, load one back, or move profiles as JSON files.
 */
import { profileFromJson, profileToJson, type InstrumentProfile } from '../../../src/core/calibration/profile.js';
import type { ModelChoice } from '../../../src/core/calibration/fitDispersion.js';
import { wavelengthAtNm } from '../../../src/core/calibration/model.js';
import { lampLines, type ListedLine } from '../../../src/core/lines/index.js';
import type { AnalysisClient } from '../analysis/client.js';
import type { PairDraft, Session } from '../analysis/session.js';
import { lampCatalog } from '../data/catalog.js';
import { download, exportButtons } from '../plots/exporters.js';
import { button, card, clear, field, formatPm, h, select } from '../ui/dom.js';
import { say } from '../ui/status.js';
import { apiJson } from './api.js';
import { baseName } from './spectrumCard.js';

export class ScaleCard {
  readonly root: HTMLElement;
  private summary = h('p', { class: 'scale-summary', id: 'scale-summary' }, 'No scale: positions are in pixels.');
  private lamp: HTMLSelectElement;
  private laserNm = h('input', { type: 'number', id: 'laser-nm', step: '0.001', min: '200', max: '2000', value: '632.816', 'aria-label': 'laser wavelength in air, nm' });
  private model: HTMLSelectElement;
  private picked = h('p', { class: 'picked', id: 'picked-peak' }, 'Pick a peak in the spectrum to assign it a line.');
  private search = h('input', { type: 'search', id: 'line-search', placeholder: 'filter: Ne, 585, Hg 546…', 'aria-label': 'filter the line list' });
  private candidates = h('div', { class: 'candidates', id: 'line-candidates', role: 'list' });
  private ownNm = h('input', { type: 'number', id: 'pair-nm', step: '0.001', min: '200', max: '2000', 'aria-label': 'wavelength of the picked peak, nm' });
  private pairsList = h('ol', { class: 'pairs', id: 'pairs' });
  private fitPairs: HTMLButtonElement;
  private result = h('div', { class: 'scale-result', id: 'scale-result' });
  private profileName = h('input', { type: 'text', id: 'profile-name', placeholder: 'e.g. bench-2-phone', pattern: '[A-Za-z0-9][A-Za-z0-9._-]{0,63}', 'aria-label': 'profile name' });
  private profileList = h('select', { id: 'profile-list', 'aria-label': 'saved profiles' });
  private fileInput = h('input', { type: 'file', id: 'profile-file', accept: '.json,application/json', class: 'visually-hidden' });

  constructor(
    private client: AnalysisClient,
    private session: Session,
  ) {
    const lamps = lampCatalog().lamps;
    this.lamp = select(
      [
        { value: '', label: 'none: pairs only' },
        ...lamps.map((l) => ({ value: l.name, label: `${l.name} — ${l.description}` })),
        { value: 'laser', label: 'a laser line (nm below)' },
      ],
      { id: 'lamp-select', onchange: () => this.lampChanged() },
    );
    this.model = select(
      [
        { value: 'auto', label: 'chosen by the fit (AICc)' },
        { value: 'polynomial', label: 'polynomial' },
        { value: 'grating', label: 'grating + camera model' },
      ],
      { id: 'model-select' },
    );
    this.fitPairs = button('Fit scale from pairs', () => void this.calibrate(false), { id: 'fit-pairs', disabled: true });
    this.search.addEventListener('input', () => this.refreshCandidates());
    this.ownNm.addEventListener('keydown', (e) => {
      if (e.key === 'Enter') this.useOwnWavelength();
    });
    this.fileInput.addEventListener('change', () => void this.openProfileFile());
    const c = card('Wavelength scale', {
      id: 'scale-card',
      tools: [
        exportButtons({
          baseName: () => `profile-${baseName(this.session.scale?.name ?? this.session.capture?.sourceName ?? 'scale')}`,
          json: () => (this.session.scale ? profileToJson(this.session.scale.profile) : null),
        }),
      ],
    });
    c.body.append(
      this.summary,
      h(
        'fieldset',
        { class: 'group' },
        h('legend', {}, 'From a lamp'),
        field('Lamp', this.lamp),
        (this.laserField = field('Laser line', this.laserNm, 'air wavelength, nm')),
        field('Model', this.model),
        button('Match lamp lines', () => void this.calibrate(true), { class: 'primary', id: 'match-lamp' }),
      ),
      h(
        'fieldset',
        { class: 'group' },
        h('legend', {}, 'By hand'),
        this.picked,
        field('Line', this.search),
        this.candidates,
        h('div', { class: 'inline' }, field('or λ (nm)', this.ownNm), button('Use', () => this.useOwnWavelength(), { id: 'pair-use' })),
        this.pairsList,
        this.fitPairs,
      ),
      this.result,
      h(
        'fieldset',
        { class: 'group' },
        h('legend', {}, 'Instrument profile'),
        h('div', { class: 'inline' }, field('Save as', this.profileName), button('Save', () => void this.save(), { id: 'profile-save' })),
        h('div', { class: 'inline' }, field('Saved', this.profileList), button('Load', () => void this.load(), { id: 'profile-load' }), button('↻', () => void this.refreshProfiles(), { title: 'Refresh the list', 'aria-label': 'Refresh the list of saved profiles' })),
        h(
          'div',
          { class: 'inline' },
          h('label', { class: 'button', for: 'profile-file', tabindex: '0' }, 'Open profile file…'),
          this.fileInput,
          button('Download profile', () => this.downloadProfile()),
          button('Clear scale', () => this.session.setScale(null), { id: 'scale-clear' }),
        ),
      ),
    );
    this.root = c.root;
    session.on('selection', () => this.refreshPicked());
    session.on('capture', () => {
      this.refreshPicked();
      this.result.replaceChildren();
    });
    session.on('pairs', () => this.refreshPairs());
    session.on('scale', () => {
      this.refreshSummary();
      if (!this.session.scale) this.result.replaceChildren();
    });
    this.lampChanged();
    void this.refreshProfiles();
  }

  private laserField: HTMLElement | null = null;

  private lampChanged(): void {
    if (this.laserField) this.laserField.hidden = this.lamp.value !== 'laser';
    this.refreshCandidates();
  }

  private lampSpec(): string | null {
    const v = this.lamp.value;
    if (v === '') return null;
    if (v === 'laser') return `laser:${this.laserNm.value}`;
    return v;
  }

  private refreshSummary(): void {
    const s = this.session.scale;
    if (!s) {
      this.summary.textContent = 'No scale: positions are in pixels.';
      return;
    }
    const p = s.profile;
    const from = s.origin === 'self' ? 'self-calibrated from the spectrum' : s.origin === 'loaded' ? `profile ${s.name}` : `made here (${p.lamp})${s.name ? `, saved as ${s.name}` : ', not saved yet'}`;
    this.summary.textContent = `Scale: ${from} — ${p.model.kind} model, RMS ${p.rmsNm.toFixed(3)} nm, ${p.rangeNm[0].toFixed(1)}–${p.rangeNm[1].toFixed(1)} nm, ${p.linesUsed} lines${p.linesPerMm ? `, grating ${formatPm(p.linesPerMm, p.linesPerMmUncertainty)} lines/mm` : ''}.`;
  }

  private refreshPicked(): void {
    const cap = this.session.capture;
    const i = this.session.pickedPeak;
    if (!cap || i === null || !cap.peaks[i]) {
      this.picked.textContent = cap ? 'Pick a peak in the spectrum to assign it a line.' : 'Capture or open a spectrum first.';
      this.refreshCandidates();
      return;
    }
    const p = cap.peaks[i];
    const nm = this.predictedNm(p.positionPx);
    this.picked.textContent = `Peak ${i + 1}: ${p.positionPx.toFixed(2)} ± ${p.positionUncertaintyPx.toFixed(2)} px${nm !== null ? `, ≈ ${nm.toFixed(2)} nm on the current scale` : ''}${p.saturated ? ' (clipped)' : ''}${p.blended ? ' (blended)' : ''}`;
    this.refreshCandidates();
    this.search.focus({ preventScroll: true });
  }

  private predictedNm(positionPx: number): number | null {
    const s = this.session.scale;
    if (s) return wavelengthAtNm(s.profile.model, positionPx);
    const scale = this.session.identification?.identification.scale;
    if (scale) return wavelengthAtNm(scale.model, positionPx);
    return null;
  }

  /** Candidate lines for the picked peak: the chosen lamp's (else the strong lines of the list), nearest first when a scale predicts λ. */
  private refreshCandidates(): void {
    clear(this.candidates);
    const spec = this.lampSpec();
    let lines: ListedLine[];
    try {
      lines = spec && !spec.startsWith('laser:') ? lampLines(spec, { catalog: lampCatalog() }).lines : lampCatalog().lines.filter((l) => l.strong && l.kind !== 'band-head' && l.wavelengthNm >= 350 && l.wavelengthNm <= 1000);
    } catch {
      lines = [];
    }
    const q = this.search.value.trim().toLowerCase();
    if (q) {
      const words = q.split(/\s+/);
      lines = lines.filter((l) => words.every((w) => l.spectrum.toLowerCase().startsWith(w) || l.element.toLowerCase() === w || l.wavelengthNm.toFixed(3).includes(w)));
    }
    const cap = this.session.capture;
    const i = this.session.pickedPeak;
    const nm = cap && i !== null && cap.peaks[i] ? this.predictedNm(cap.peaks[i].positionPx) : null;
    lines = nm !== null ? [...lines].sort((a, b) => Math.abs(a.wavelengthNm - nm) - Math.abs(b.wavelengthNm - nm)) : [...lines].sort((a, b) => b.intensity - a.intensity);
    for (const l of lines.slice(0, 30)) {
      this.candidates.append(
        h(
          'button',
          { type: 'button', role: 'listitem', class: 'candidate', 'data-nm': l.wavelengthNm, onclick: () => this.addPair(l.wavelengthNm, `${l.spectrum} ${l.wavelengthNm.toFixed(3)}`) },
          `${l.spectrum} ${l.wavelengthNm.toFixed(3)}`,
          nm !== null ? h('span', { class: 'muted' }, ` ${(l.wavelengthNm - nm >= 0 ? '+' : '') + (l.wavelengthNm - nm).toFixed(2)}`) : null,
        ),
      );
    }
    if (lines.length === 0) this.candidates.append(h('p', { class: 'muted' }, 'No line matches the filter.'));
  }

  private useOwnWavelength(): void {
    const v = Number(this.ownNm.value);
    if (!(v > 0)) {
      say('Type the wavelength (nm, air) of the picked peak.', 'error');
      return;
    }
    this.addPair(v, `${v} nm (typed)`);
  }

  private addPair(wavelengthNm: number, label: string): void {
    const cap = this.session.capture;
    const i = this.session.pickedPeak;
    if (!cap || i === null || !cap.peaks[i]) {
      say('Pick a peak in the spectrum first (click it, or focus the plot and use ← → Enter).', 'error');
      return;
    }
    const positionPx = cap.peaks[i].positionPx;
    const pairs = this.session.pairs.filter((p) => p.positionPx !== positionPx && p.wavelengthNm !== wavelengthNm);
    pairs.push({ positionPx, wavelengthNm, label });
    pairs.sort((a, b) => a.positionPx - b.positionPx);
    this.session.setPairs(pairs);
    say(`Pair added: ${positionPx.toFixed(2)} px = ${label}.`, 'ok');
  }

  private refreshPairs(): void {
    clear(this.pairsList);
    for (const p of this.session.pairs) {
      this.pairsList.append(
        h(
          'li',
          {},
          h('span', { class: 'mono' }, `${p.positionPx.toFixed(2)} px = ${p.wavelengthNm.toFixed(3)} nm`),
          ' ',
          h('span', { class: 'muted' }, p.label),
          ' ',
          button('×', () => this.session.setPairs(this.session.pairs.filter((q) => q !== p)), { 'aria-label': `remove the pair at ${p.positionPx.toFixed(1)} px`, class: 'small' }),
        ),
      );
    }
    this.fitPairs.disabled = this.session.pairs.length < 2;
  }

  private async calibrate(withLamp: boolean): Promise<void> {
    const cap = this.session.capture;
    if (!cap) {
      say('Capture or open a spectrum first.', 'error');
      return;
    }
    const lamp = withLamp ? this.lampSpec() : null;
    if (withLamp && !lamp) {
      say('Choose the lamp the spectrum shows (or use pairs).', 'error');
      return;
    }
    if (!withLamp && this.session.pairs.length < 2) {
      say('Two pairs at least: pick peaks and their lines.', 'error');
      return;
    }
    say(lamp ? `Matching ${lamp} lines${this.session.pairs.length ? ' with your pairs' : ''}…` : 'Fitting the pairs…', 'busy');
    try {
      const res = await this.client.calibrate(cap, {
        lamp,
        pairs: this.session.pairs.map(({ positionPx, wavelengthNm }) => ({ positionPx, wavelengthNm })),
        model: this.model.value as ModelChoice,
        camera: this.session.camera,
      });
      this.session.setScale({ profile: res.profile, origin: 'calibrated', name: null, result: res });
      this.showResult(res.profile, res.warnings);
      say(`Scale: RMS ${res.profile.rmsNm.toFixed(3)} nm over ${res.profile.linesUsed} lines.`, 'ok');
    } catch (err) {
      say((err as Error).message, 'error');
    }
  }

  private showResult(p: InstrumentProfile, warnings: string[]): void {
    const rows = p.lines.map((l) =>
      h(
        'tr',
        { class: l.used ? '' : 'unused' },
        h('td', { class: 'num' }, l.positionPx.toFixed(2)),
        h('td', { class: 'num' }, l.wavelengthNm.toFixed(3)),
        h('td', { class: 'num' }, (l.residualNm >= 0 ? '+' : '') + l.residualNm.toFixed(3)),
        h('td', {}, l.label ?? ''),
        h('td', {}, l.used ? l.source : 'left out'),
      ),
    );
    this.result.replaceChildren(
      h(
        'dl',
        { class: 'figures' },
        h('dt', {}, 'RMS'),
        h('dd', { id: 'scale-rms' }, `${p.rmsNm.toFixed(3)} nm (${p.rmsPx.toFixed(2)} px)`),
        h('dt', {}, 'Dispersion'),
        h('dd', {}, `${Math.abs(p.dispersionNmPerPx).toFixed(4)} nm/px`),
        h('dt', {}, 'Range'),
        h('dd', {}, `${p.rangeNm[0].toFixed(1)}–${p.rangeNm[1].toFixed(1)} nm`),
        h('dt', {}, 'Lines used'),
        h('dd', {}, `${p.linesUsed} of ${p.lines.length}`),
        h('dt', {}, 'Model'),
        h('dd', {}, p.model.kind === 'polynomial' ? `polynomial, degree ${p.model.degree}` : `grating + camera (order ${p.model.order})`),
        ...(p.linesPerMm ? [h('dt', {}, 'Grating'), h('dd', {}, `${formatPm(p.linesPerMm, p.linesPerMmUncertainty)} lines/mm`)] : []),
      ),
      h(
        'details',
        {},
        h('summary', {}, 'Residuals'),
        h('table', { class: 'table' }, h('thead', {}, h('tr', {}, ...['px', 'λ nm', 'residual nm', 'line', ''].map((t) => h('th', {}, t)))), h('tbody', {}, ...rows)),
      ),
      ...warnings.map((w) => h('p', { class: 'warning' }, w)),
    );
  }

  private async save(): Promise<void> {
    const s = this.session.scale;
    const name = this.profileName.value.trim();
    if (!s) {
      say('Make a scale first (match a lamp or fit pairs).', 'error');
      return;
    }
    if (!name) {
      say('Give the profile a name.', 'error');
      this.profileName.focus();
      return;
    }
    try {
      await apiJson(`/api/profiles/${encodeURIComponent(name)}`, { method: 'PUT', body: profileToJson(s.profile) });
      this.session.setScale({ ...s, name });
      say(`Profile saved as ${name}.`, 'ok');
      await this.refreshProfiles(name);
    } catch (err) {
      say((err as Error).message, 'error');
    }
  }

  private async refreshProfiles(selectName?: string): Promise<void> {
    try {
      const { profiles } = (await apiJson('/api/profiles')) as { profiles: string[] };
      this.profileList.replaceChildren(...(profiles.length ? profiles : ['']).map((n) => h('option', { value: n, selected: n === selectName }, n || '(none saved)')));
    } catch {
      this.profileList.replaceChildren(h('option', { value: '' }, '(workspace unavailable)'));
    }
  }

  private async load(): Promise<void> {
    const name = this.profileList.value;
    if (!name) return;
    try {
      const json = await apiJson(`/api/profiles/${encodeURIComponent(name)}`);
      this.useProfile(profileFromJson(json, `profile ${name}`), name);
    } catch (err) {
      say((err as Error).message, 'error');
    }
  }

  private useProfile(profile: InstrumentProfile, name: string): void {
    this.session.setScale({ profile, origin: 'loaded', name, result: null });
    this.showResult(profile, []);
    say(`Profile ${name} in use: RMS ${profile.rmsNm.toFixed(3)} nm, ${profile.rangeNm[0].toFixed(0)}–${profile.rangeNm[1].toFixed(0)} nm.`, 'ok');
  }

  private async openProfileFile(): Promise<void> {
    const f = this.fileInput.files?.[0];
    this.fileInput.value = '';
    if (!f) return;
    try {
      let json: unknown;
      try {
        json = JSON.parse(await f.text());
      } catch (e) {
        throw new Error(`${f.name}: not valid JSON (${(e as Error).message})`);
      }
      this.useProfile(profileFromJson(json, f.name), f.name.replace(/\.json$/i, ''));
    } catch (err) {
      say((err as Error).message, 'error');
    }
  }

  private downloadProfile(): void {
    const s = this.session.scale;
    if (!s) {
      say('No scale to download.', 'error');
      return;
    }
    download(`${s.name ?? 'profile'}.json`, JSON.stringify(profileToJson(s.profile), null, 2) + '\n', 'application/json');
  }
}

export type { PairDraft };
