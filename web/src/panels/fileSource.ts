/**
 * The photo/CSV tab of the source card: pick or drop a photo (the band is found and drawn over it, and can be moved
 * and re-measured) or a spectrum CSV.
 */
import type { BandGeometry } from '../../../src/core/types.js';
import type { AnalysisClient } from '../analysis/client.js';
import type { Session } from '../analysis/session.js';
import { readUserFile, type PhotoFile } from '../decode/readFile.js';
import { BandOverlay, describeBand } from '../live/bandOverlay.js';
import { button, h } from '../ui/dom.js';
import { say } from '../ui/status.js';

export class FileSource {
  readonly root: HTMLElement;
  private overlay: BandOverlay;
  private photo: PhotoFile | null = null;
  private canvas = h('canvas', { class: 'photo-canvas', 'aria-label': 'the opened photo' });
  private stage: HTMLElement;
  private info = h('p', { class: 'file-info' }, '');
  private bandText = h('p', { class: 'band-text mono' }, '');
  private remeasure: HTMLButtonElement;
  private input: HTMLInputElement;

  constructor(
    private client: AnalysisClient,
    private session: Session,
  ) {
    this.overlay = new BandOverlay((band) => {
      this.bandText.textContent = describeBand(band);
      this.remeasure.disabled = false;
    });
    this.input = h('input', { type: 'file', id: 'spectrum-file', accept: 'image/jpeg,image/png,image/webp,.csv,.tsv,.txt,.dat,text/csv,text/plain', class: 'visually-hidden' });
    this.input.addEventListener('change', () => {
      const f = this.input.files?.[0];
      if (f) void this.open(f);
      this.input.value = '';
    });
    const pick = h('label', { class: 'button primary', for: 'spectrum-file', tabindex: '0' }, 'Open photo or CSV…');
    pick.addEventListener('keydown', (e) => {
      if (e.key === 'Enter' || e.key === ' ') {
        e.preventDefault();
        this.input.click();
      }
    });
    this.stage = h('div', { class: 'stage photo-stage', 'data-empty': 'true' }, this.canvas, this.overlay.svg, h('p', { class: 'stage-hint' }, 'Drop a photo or a spectrum CSV here'));
    this.remeasure = button('Measure along this band', () => void this.measure(this.overlay.current ?? undefined), { disabled: true, id: 'remeasure' });
    const drop = h('div', { class: 'dropzone', id: 'spectrum-drop' }, this.stage);
    for (const type of ['dragenter', 'dragover']) {
      drop.addEventListener(type, (e) => {
        e.preventDefault();
        drop.classList.add('dragging');
      });
    }
    drop.addEventListener('dragleave', () => drop.classList.remove('dragging'));
    drop.addEventListener('drop', (e) => {
      e.preventDefault();
      drop.classList.remove('dragging');
      const f = (e as DragEvent).dataTransfer?.files?.[0];
      if (f) void this.open(f);
    });
    this.root = h(
      'div',
      { class: 'source-files' },
      h('div', { class: 'toolbar' }, pick, this.input, h('span', { class: 'muted' }, 'JPEG, PNG, WebP photos; CSV spectra (pixel or wavelength, intensity)')),
      drop,
      this.info,
      this.bandText,
      h('div', { class: 'toolbar' }, this.remeasure),
    );
  }

  async open(file: File): Promise<void> {
    say(`Reading ${file.name}…`, 'busy');
    try {
      const read = await readUserFile(file);
      if (read.kind === 'text') {
        this.photo = null;
        this.stage.dataset.empty = 'true';
        this.overlay.setBand(null);
        this.bandText.textContent = '';
        this.remeasure.disabled = true;
        const cap = await this.client.analyseText(read.text, read.name);
        this.info.textContent = `${read.name}: spectrum CSV, ${cap.spectrum.intensity.length} samples (${cap.axis === 'wavelength' ? 'wavelength' : 'pixel'} axis)`;
        this.session.setCapture(cap, null);
        say(`${read.name}: ${cap.peaks.length} peaks.`, 'ok');
        return;
      }
      this.photo = read;
      this.canvas.width = read.width;
      this.canvas.height = read.height;
      this.canvas.getContext('2d')!.drawImage(read.bitmap, 0, 0);
      this.stage.dataset.empty = 'false';
      this.stage.style.aspectRatio = `${read.width} / ${read.height}`;
      this.overlay.setFrame(read.width, read.height);
      const cam = read.camera;
      const exif = [cam.cameraModel, cam.exposureTimeS ? `${cam.exposureTimeS < 1 ? `1/${Math.round(1 / cam.exposureTimeS)}` : cam.exposureTimeS} s` : null, cam.iso ? `ISO ${cam.iso}` : null, cam.focalLength35mmMm ? `${cam.focalLength35mmMm} mm equiv.` : null]
        .filter(Boolean)
        .join(', ');
      this.info.textContent = `${read.name}: ${read.width}×${read.height} px${exif ? ` — ${exif}` : ''}${read.warnings.length ? ` (${read.warnings.join('; ')})` : ''}`;
      await this.measure();
    } catch (err) {
      say((err as Error).message, 'error');
    }
  }

  /** Runs the capture pipeline on the open photo (the band found, or the one given). */
  private async measure(band?: BandGeometry): Promise<void> {
    const photo = this.photo;
    if (!photo) return;
    say(band ? `Measuring ${photo.name} along the band you set…` : `Finding the band in ${photo.name} and measuring it…`, 'busy');
    try {
      const cap = await this.client.analyseImage(
        { width: photo.width, height: photo.height, codes: photo.codes.slice() },
        { sourceName: photo.name, kind: 'photo', band },
      );
      if (cap.band) {
        this.overlay.setBand(cap.band);
        this.bandText.textContent = describeBand(cap.band);
      }
      this.remeasure.disabled = true;
      this.session.setCapture(cap, photo.camera);
      say(`${photo.name}: ${cap.peaks.length} peaks${cap.warnings.length ? `; ${cap.warnings[0]}` : ''}.`, 'ok');
    } catch (err) {
      say((err as Error).message, 'error');
    }
  }
}
