/** The spectrum bench: source (camera or file) beside the spectrum, with the scale, identification and peak cards. */
import type { AnalysisClient } from '../analysis/client.js';
import { Session } from '../analysis/session.js';
import type { Camera } from '../live/camera.js';
import { card, h } from '../ui/dom.js';
import { tabs } from '../ui/tabs.js';
import { CameraSource } from './cameraSource.js';
import { FileSource } from './fileSource.js';
import { IdentifyCard } from './identifyCard.js';
import { PeaksCard } from './peaksCard.js';
import { ScaleCard } from './scaleCard.js';
import { SpectrumCard } from './spectrumCard.js';

export function spectraBench(camera: Camera, client: AnalysisClient): { root: HTMLElement; session: Session; cameraSource: CameraSource; fileSource: FileSource } {
  const session = new Session();
  const spectrum = new SpectrumCard(session);
  const cameraSource = new CameraSource(camera, client, session, spectrum);
  const fileSource = new FileSource(client, session);
  const source = card('Source', { id: 'source-card' });
  source.body.append(
    tabs(
      [
        { id: 'src-camera', label: 'Camera', panel: h('div', {}, cameraSource.root) },
        { id: 'src-file', label: 'Photo or CSV', panel: h('div', {}, fileSource.root) },
      ],
      { label: 'Spectrum source' },
    ).root,
  );
  const scale = new ScaleCard(client, session);
  const identify = new IdentifyCard(client, session);
  const peaks = new PeaksCard(session);
  const root = h(
    'div',
    { class: 'bench spectra-bench' },
    h('div', { class: 'col-source' }, source.root, scale.root),
    h('div', { class: 'col-main' }, spectrum.root, identify.root, peaks.root),
  );
  return { root, session, cameraSource, fileSource };
}
