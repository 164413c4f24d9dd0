/**
 * Safety notices, in the wording kept in src/core/safety.ts: a strip under the header naming the hazards of the bench
 * in use (high voltage and UV for discharge tubes, the laser caution for laser work), expandable to the full text.
 */
import { HIGH_VOLTAGE_CAUTION, LASER_CAUTION, UV_CAUTION } from '../../../src/core/safety.js';
import { h } from './dom.js';

export type Hazard = 'laser' | 'high-voltage' | 'uv';

const TEXT: Record<Hazard, { title: string; full: string }> = {
  laser: { title: 'Laser', full: LASER_CAUTION },
  'high-voltage': { title: 'High voltage', full: HIGH_VOLTAGE_CAUTION },
  uv: { title: 'Ultraviolet', full: UV_CAUTION },
};

/** A notice block for one bench: one line per hazard, the full caution under a disclosure. */
export function safetyNotice(hazards: Hazard[]): HTMLElement {
  return h(
    'aside',
    { class: 'safety', 'aria-label': 'Safety' },
    ...hazards.map((z) =>
      h(
        'details',
        { class: `hazard hazard-${z}` },
        h('summary', {}, h('span', { class: 'hazard-mark', 'aria-hidden': 'true' }, '!'), h('strong', {}, TEXT[z].title), ' — ', firstSentence(TEXT[z].full)),
        h('p', {}, TEXT[z].full),
      ),
    ),
  );
}

function firstSentence(text: string): string {
  const i = text.indexOf(': ');
  const body = i >= 0 ? text.slice(i + 2) : text;
  const end = body.search(/[.;—]\s/);
  if (end <= 0) return body;
  const head = body.slice(0, end + 1);
  return head.endsWith('.') ? head : head.slice(0, -1).trimEnd() + '.';
}
