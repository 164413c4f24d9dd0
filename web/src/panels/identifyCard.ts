/**
 * The identification card: which species explain the capture, ranked, with how sure; what is left unexplained; the
 * laser kind for a single dominant line; and whether the wavelength scale came from a profile or from the spectrum
 * itself. Runs by itself after each capture.
 */
import type { AnalysisClient } from '../analysis/client.js';
import type { Session } from '../analysis/session.js';
import { profileFromSelfScale } from '../analysis/scale.js';
import { exportButtons } from '../plots/exporters.js';
import { button, card, clear, formatPm, h } from '../ui/dom.js';
import { say } from '../ui/status.js';
import { baseName } from './spectrumCard.js';
import { speciesColours } from './speciesColours.js';

export class IdentifyCard {
  readonly root: HTMLElement;
  private body: HTMLElement;
  private running = false;
  /** A new capture (or scale) arrived while an identification ran: run again when it ends. */
  private again = false;

  constructor(
    private client: AnalysisClient,
    private session: Session,
  ) {
    const c = card('What is in it', {
      id: 'identify-card',
      tools: [
        button('Identify', () => void this.run(), { id: 'identify-run', class: 'primary' }),
        exportButtons({
          baseName: () => `identify-${baseName(session.capture?.sourceName ?? 'spectrum')}`,
          json: () => this.exportJson(),
        }),
      ],
    });
    this.body = c.body;
    this.root = c.root;
    this.body.append(h('p', { class: 'muted' }, 'Capture or open a spectrum: the gas is named here.'));
    session.on('capture', () => void this.run());
    session.on('scale', () => {
      if (this.session.scale?.origin !== 'self' && this.session.capture) void this.run();
    });
    session.on('identification', () => this.render());
  }

  async run(): Promise<void> {
    const cap = this.session.capture;
    if (!cap) return;
    if (this.running) {
      this.again = true;
      return;
    }
    this.running = true;
    this.again = false;
    this.root.dataset.state = 'busy';
    say(`Identifying ${cap.sourceName}…`, 'busy');
    try {
      const outcome = await this.client.identify(cap, this.session.scale?.profile ?? null);
      if (this.session.capture !== cap) return;
      this.session.setIdentification(outcome);
      const present = outcome.identification.species.filter((s) => s.present).map((s) => s.element);
      say(present.length ? `Identified: ${present.join(', ')}.` : 'No species identified.', 'ok');
    } catch (err) {
      say((err as Error).message, 'error');
    } finally {
      this.running = false;
      if (this.again) void this.run();
      else this.root.dataset.state = 'done';
    }
  }

  private render(): void {
    clear(this.body);
    const o = this.session.identification;
    if (!o) {
      this.body.append(h('p', { class: 'muted' }, this.session.capture ? 'Identifying…' : 'Capture or open a spectrum: the gas is named here.'));
      return;
    }
    const ident = o.identification;
    const cal = ident.calibration;
    const calText =
      cal === null
        ? 'No wavelength scale: nothing could be identified.'
        : cal.from === 'profile'
          ? `Wavelengths from the instrument profile (${cal.lamp ?? ''}, RMS ${(cal.rmsNm ?? NaN).toFixed(3)} nm).`
          : cal.from === 'file'
            ? 'Wavelengths from the spectrum file.'
            : `No profile: the spectrum calibrated itself from its own ${cal.lamp} lines (${cal.linesUsed} lines, RMS ${(cal.rmsNm ?? NaN).toFixed(2)} nm${cal.probability !== undefined ? `, probability ${cal.probability.toFixed(2)} among the candidate scales` : ''}); confidence is lowered for it.`;
    this.body.append(h('p', { class: 'calibration-from', id: 'identify-calibration' }, calText));
    if (cal && cal.from === 'self' && ident.scale && this.session.capture) {
      const capture = this.session.capture;
      const scale = ident.scale;
      this.body.append(
        button('Use this scale', () => {
          const profile = profileFromSelfScale(scale, cal, capture, this.session.camera);
          this.session.setScale({ profile, origin: 'self', name: null, result: null });
          say(`Scale taken from the ${cal.lamp} lines of ${capture.sourceName}.`, 'ok');
        }, { class: 'small', id: 'use-self-scale' }),
      );
    }
    if (ident.laser) {
      const l = ident.laser;
      this.body.append(
        h(
          'div',
          { class: 'laser', id: 'identify-laser' },
          h('strong', {}, `Laser line ${formatPm(l.wavelengthNm, l.wavelengthUncertaintyNm)} nm`),
          ` — ${l.candidates.length ? l.candidates.map((c) => c.name).join(', ') : 'no known kind emits here'}${l.saturated ? ' (clipped)' : ''}`,
        ),
      );
    }
    if (!ident.emissionLinesFound) {
      this.body.append(h('p', { class: 'verdict none' }, 'No emission lines found: nothing is named.'));
    }
    const list = h('ol', { class: 'species', id: 'species-list' });
    const speciesColour = speciesColours(ident);
    // The present species, then the strongest few of the rest (a list of every element at 0.00 says nothing).
    const shown = ident.species.filter((s, i) => s.present || (i < 8 && s.score >= 0.01)).slice(0, 8);
    for (const s of shown.length ? shown : ident.species.slice(0, 3)) {
      const colour = speciesColour(s.element);
      list.append(
        h(
          'li',
          { class: s.present ? 'present' : 'absent', 'data-element': s.element },
          h('span', { class: 'swatch', style: `background:${colour}` }),
          h('span', { class: 'element' }, s.element),
          h('span', { class: 'bar', role: 'meter', 'aria-valuemin': '0', 'aria-valuemax': '1', 'aria-valuenow': s.score.toFixed(2), 'aria-label': `score of ${s.element}` }, h('span', { style: `width:${(100 * s.score).toFixed(0)}%;background:${colour}` })),
          h('span', { class: 'score mono' }, s.score.toFixed(2)),
          h('span', { class: 'detail' }, s.present ? `present · ${s.linesMatched} lines · ${(100 * s.fluxFraction).toFixed(0)} % of the flux` : `absent${s.missingLinesNm.length ? ` · missing ${s.missingLinesNm.slice(0, 3).map((x) => x.toFixed(1)).join(', ')} nm` : ''}`),
        ),
      );
    }
    this.body.append(list);
    if (ident.unexplained.length) {
      this.body.append(
        h(
          'details',
          { open: ident.unexplainedFluxFraction > 0.1 },
          h('summary', {}, `${ident.unexplained.length} unexplained peak(s), ${(100 * ident.unexplainedFluxFraction).toFixed(0)} % of the flux`),
          h('ul', { class: 'unexplained' }, ...ident.unexplained.slice(0, 20).map((p) => h('li', { class: 'mono' }, `${formatPm(p.wavelengthNm, p.wavelengthUncertaintyNm)} nm · SNR ${p.snr.toFixed(0)}`))),
        ),
      );
    }
    for (const w of o.warnings.slice(0, 4)) this.body.append(h('p', { class: 'warning' }, w));
  }

  private exportJson(): unknown {
    const o = this.session.identification;
    if (!o) return null;
    const id = o.identification;
    return {
      input: this.session.capture?.sourceName,
      species: o.identification.species,
      peaks: o.identification.peaks,
      unexplained: o.identification.unexplained,
      calibration: id.calibration,
      laser: id.laser,
      scaleCandidates: id.scaleCandidates,
      warnings: o.warnings,
    };
  }
}
