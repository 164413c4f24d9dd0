/**
 * The camera tab of the source card: the live view with the band overlay, the live spectrum at the camera's frame
 * rate, frame averaging, the exposure meter, capture/resume, and a running guess of what the tube holds.
 */
import type { BandGeometry } from '../../../src/core/types.js';
import type { AnalysisClient } from '../analysis/client.js';
import type { ImagePayload } from '../analysis/jobs.js';
import type { Session } from '../analysis/session.js';
import { linearImageFromSrgb8, rgbaToRgb, type RectPx } from '../decode/linearImage.js';
import { bandCrop, bandInCrop, defaultBand } from '../live/bandGeometry.js';
import { BandOverlay, describeBand } from '../live/bandOverlay.js';
import { type Camera, eachVideoFrame } from '../live/camera.js';
import { FrameAverager } from '../live/frameAverager.js';
import { extractLiveSpectrum, finishLiveSpectrum, liveHalfWidthPx, type LiveSpectrum, type LiveWorkspace } from '../live/liveSpectrum.js';
import { SpectrumAverager } from '../live/spectrumAverager.js';
import { button, field, h, select } from '../ui/dom.js';
import { say } from '../ui/status.js';
import type { SpectrumCard } from './spectrumCard.js';

/** Frames between automatic band searches when "follow" is on (~3 s at 30 fps). */
const FOLLOW_EVERY_FRAMES = 90;
/** Least time between two background identifications of the live view (ms). */
const GUESS_EVERY_MS = 2000;

export class CameraSource {
  readonly root: HTMLElement;
  private overlay: BandOverlay;
  private band: BandGeometry | null = null;
  private frameSize = { width: 0, height: 0 };
  private averager = new FrameAverager();
  private spectra = new SpectrumAverager();
  private ws: LiveWorkspace = {};
  private canvas = document.createElement('canvas');
  private ctx = this.canvas.getContext('2d', { willReadFrequently: true })!;
  private codes: Uint8Array | undefined;
  private frozen = false;
  private stopLoop: (() => void) | null = null;
  private frames = 0;
  private fps = 0;
  private procMs = 0;
  private lastFrameAt = 0;
  private findingBand = false;
  private guessing = false;
  private lastGuessAt = 0;
  private lastCrop: RectPx | null = null;
  private ui: {
    start: HTMLButtonElement;
    stop: HTMLButtonElement;
    devices: HTMLSelectElement;
    findBand: HTMLButtonElement;
    follow: HTMLInputElement;
    average: HTMLSelectElement;
    capture: HTMLButtonElement;
    resume: HTMLButtonElement;
    meter: HTMLElement;
    meterText: HTMLElement;
    bandText: HTMLElement;
    guess: HTMLElement;
    guessOn: HTMLInputElement;
    stage: HTMLElement;
  };

  constructor(
    private camera: Camera,
    private client: AnalysisClient,
    private session: Session,
    private spectrum: SpectrumCard,
  ) {
    this.overlay = new BandOverlay((band, done) => {
      this.band = band;
      this.resetAveraging();
      this.ui.bandText.textContent = describeBand(band);
      if (done) say('Band set by hand.', 'info');
    });
    const stage = h('div', { class: 'stage camera-stage', 'data-empty': 'true' }, camera.video, this.overlay.svg, h('p', { class: 'stage-hint' }, 'Camera off'));
    const averageSelect = select(
      [1, 2, 4, 8, 16, 32].map((n) => ({ value: String(n), label: n === 1 ? 'off' : `${n} frames` })),
      {
        id: 'average-frames',
        onchange: () => {
          this.averager.setWindow(Number(this.ui.average.value));
          this.spectra.setWindow(Number(this.ui.average.value));
        },
      },
    );
    this.ui = {
      start: button('Start camera', () => void this.start(), { class: 'primary', id: 'camera-start' }),
      stop: button('Stop', () => this.stop(), { id: 'camera-stop', disabled: true }),
      devices: select([{ value: '', label: 'default camera' }], { id: 'camera-device', 'aria-label': 'Camera', onchange: () => void this.start(this.ui.devices.value || undefined) }),
      findBand: button('Find band', () => void this.findBandNow(), { id: 'find-band', disabled: true, title: 'Search the frame for the spectrum band (F)' }),
      follow: h('input', { type: 'checkbox', id: 'follow-band' }),
      average: averageSelect,
      capture: button('Capture', () => void this.capture(), { class: 'primary', id: 'capture', disabled: true, title: 'Freeze the view and measure it (C)' }),
      resume: button('Back to live', () => this.resume(), { id: 'resume', disabled: true }),
      meter: h('div', { class: 'meter-fill' }),
      meterText: h('span', { class: 'meter-text' }, '—'),
      bandText: h('p', { class: 'band-text mono' }, 'No band yet'),
      guess: h('p', { class: 'live-guess', id: 'live-guess', 'aria-live': 'polite' }, ''),
      guessOn: h('input', { type: 'checkbox', id: 'live-identify', checked: true }),
      stage,
    };
    this.root = h(
      'div',
      { class: 'source-camera' },
      h('div', { class: 'toolbar' }, this.ui.start, this.ui.stop, this.ui.devices),
      stage,
      this.ui.bandText,
      h(
        'div',
        { class: 'toolbar' },
        this.ui.findBand,
        h('label', { class: 'check' }, this.ui.follow, 'follow band'),
        field('Average', this.ui.average),
      ),
      h('div', { class: 'meter', role: 'meter', 'aria-label': 'Brightest band pixel', 'aria-valuemin': '0', 'aria-valuemax': '100' }, this.ui.meter, this.ui.meterText),
      h('div', { class: 'toolbar' }, this.ui.capture, this.ui.resume, h('label', { class: 'check' }, this.ui.guessOn, 'name the gas while live')),
      this.ui.guess,
    );
    this.root.addEventListener('keydown', (e) => {
      if (e.target instanceof HTMLInputElement || e.target instanceof HTMLSelectElement) return;
      if (e.key === 'c' || e.key === 'C') {
        if (!this.ui.capture.disabled) void this.capture();
      } else if (e.key === 'f' || e.key === 'F') {
        if (!this.ui.findBand.disabled) void this.findBandNow();
      } else return;
      e.preventDefault();
    });
    camera.onChange((s) => {
      const on = s.stream !== null;
      this.ui.start.disabled = on;
      this.ui.stop.disabled = !on;
      this.ui.findBand.disabled = !on;
      this.ui.capture.disabled = !on;
      stage.dataset.empty = on ? 'false' : 'true';
    });
  }

  private resetAveraging(): void {
    this.averager.reset();
    this.spectra.reset();
  }

  get currentBand(): BandGeometry | null {
    return this.band;
  }

  async start(deviceId?: string): Promise<void> {
    try {
      say('Starting the camera…', 'busy');
      await this.camera.start(deviceId);
      const list = await this.camera.devices();
      const current = this.camera.current.deviceId;
      this.ui.devices.replaceChildren(...list.map((d, i) => h('option', { value: d.deviceId, selected: d.deviceId === current }, d.label || `camera ${i + 1}`)));
      this.frozen = false;
      this.ui.resume.disabled = true;
      this.frames = 0;
      this.stopLoop?.();
      this.stopLoop = eachVideoFrame(this.camera.video, (now) => this.onFrame(now));
      say(`Camera on (${this.camera.current.label}). Finding the band…`, 'ok');
    } catch (err) {
      say(`Camera: ${(err as Error).message}`, 'error');
    }
  }

  stop(): void {
    this.stopLoop?.();
    this.stopLoop = null;
    this.camera.stop();
    say('Camera off.', 'info');
  }

  private onFrame(now: number): void {
    const video = this.camera.video;
    const w = video.videoWidth;
    const hgt = video.videoHeight;
    if (!w || !hgt) return;
    if (w !== this.frameSize.width || hgt !== this.frameSize.height) {
      this.frameSize = { width: w, height: hgt };
      this.ui.stage.style.aspectRatio = `${w} / ${hgt}`;
      this.overlay.setFrame(w, hgt);
      this.band = defaultBand(w, hgt);
      this.overlay.setBand(this.band);
      void this.findBandNow();
    }
    if (this.lastFrameAt) this.fps = 0.9 * this.fps + 0.1 * (1000 / Math.max(1, now - this.lastFrameAt));
    this.lastFrameAt = now;
    this.frames++;
    if (this.frozen || !this.band) return;
    if (this.ui.follow.checked && this.frames % FOLLOW_EVERY_FRAMES === 0) void this.findBandNow(true);
    const crop = bandCrop(this.band, liveHalfWidthPx(this.band), w, hgt);
    if (!crop) return;
    if (this.canvas.width !== crop.width || this.canvas.height !== crop.height) {
      this.canvas.width = crop.width;
      this.canvas.height = crop.height;
    }
    this.ctx.drawImage(video, crop.x, crop.y, crop.width, crop.height, 0, 0, crop.width, crop.height);
    const rgba = this.ctx.getImageData(0, 0, crop.width, crop.height).data;
    const t0 = performance.now();
    this.codes = rgbaToRgb(rgba, crop.width, crop.height, undefined, this.codes);
    const averaging = this.spectra.frameWindow > 1;
    let live: LiveSpectrum;
    try {
      const one = extractLiveSpectrum(linearImageFromSrgb8(this.codes, crop.width, crop.height), bandInCrop(this.band, crop), {}, this.ws);
      if (averaging) this.averager.push(this.codes, crop.width, crop.height);
      live = finishLiveSpectrum(averaging ? this.spectra.push(one) : one);
    } catch (err) {
      say(`Live spectrum: ${(err as Error).message}`, 'error');
      return;
    }
    this.procMs = 0.9 * this.procMs + 0.1 * (performance.now() - t0);
    this.lastCrop = crop;
    const level = Math.min(1, live.peakLevel);
    this.ui.meter.style.width = `${(100 * level).toFixed(1)}%`;
    this.ui.meter.dataset.level = live.saturatedSamples > 0 ? 'clipped' : level > 0.85 ? 'high' : level < 0.1 ? 'low' : 'ok';
    this.ui.meterText.textContent =
      live.saturatedSamples > 0 ? `${live.saturatedSamples} samples clipped: lower the exposure` : `brightest ${(100 * level).toFixed(0)} % of full scale`;
    const avg = averaging ? ` · mean of ${this.spectra.filled}/${this.spectra.frameWindow} frames` : '';
    this.spectrum.showLive(
      live,
      this.band,
      `Live · ${this.fps.toFixed(0)} fps · ${this.procMs.toFixed(1)} ms per frame · ${live.peaks.length} peaks${avg}. Preview: capture (C) for measured values.`,
    );
    if (this.ui.guessOn.checked && !this.guessing && now - this.lastGuessAt > GUESS_EVERY_MS) void this.guess();
  }

  /** The current (averaged) crop as a payload for the worker: a copy, since transferring it detaches the buffer. */
  private payload(): { image: ImagePayload; crop: RectPx } | null {
    const crop = this.lastCrop;
    if (!crop) return null;
    if (this.spectra.frameWindow > 1) {
      const mean = this.averager.mean();
      if (mean) return { image: { width: mean.width, height: mean.height, data: mean.data, saturated: mean.saturated! }, crop };
    }
    return this.codes ? { image: { width: crop.width, height: crop.height, codes: this.codes.slice() }, crop } : null;
  }

  private grabFullFrame(): ImagePayload | null {
    const video = this.camera.video;
    const w = video.videoWidth;
    const hgt = video.videoHeight;
    if (!w || !hgt) return null;
    const c = new OffscreenCanvas(w, hgt);
    const ctx = c.getContext('2d', { willReadFrequently: true })!;
    ctx.drawImage(video, 0, 0);
    return { width: w, height: hgt, codes: rgbaToRgb(ctx.getImageData(0, 0, w, hgt).data, w, hgt) };
  }

  async findBandNow(quiet = false): Promise<void> {
    if (this.findingBand) return;
    const frame = this.grabFullFrame();
    if (!frame) return;
    this.findingBand = true;
    if (!quiet) say('Looking for the spectrum band…', 'busy');
    try {
      const found = await this.client.findBand(frame, 'the camera frame');
      this.band = found.band;
      this.resetAveraging();
      this.overlay.setBand(found.band);
      this.ui.bandText.textContent = describeBand(found.band);
      if (!quiet) say(`Band found${found.warnings.length ? ` (${found.warnings.join('; ')})` : ''}. Drag it, or focus it and use the arrow keys, to adjust.`, 'ok');
    } catch (err) {
      if (!quiet) say(`${(err as Error).message}. Point the grating at a lit tube, or drag the band onto the spectrum.`, 'error');
    } finally {
      this.findingBand = false;
    }
  }

  /** Freezes the view and measures the current (averaged) frame with the full pipeline. */
  async capture(): Promise<void> {
    const p = this.payload();
    if (!p || !this.band) return;
    this.frozen = true;
    this.ui.resume.disabled = false;
    const time = new Date().toLocaleTimeString([], { hour12: false });
    say('Measuring the captured frame…', 'busy');
    try {
      const cap = await this.client.analyseImage(p.image, {
        sourceName: `camera frame ${time}`,
        kind: 'camera',
        band: this.band,
        origin: { x: p.crop.x, y: p.crop.y },
        frame: { widthPx: this.frameSize.width, heightPx: this.frameSize.height },
      });
      this.session.setCapture(cap, null);
      say(`Captured: ${cap.peaks.length} peaks measured${cap.warnings.length ? `; ${cap.warnings[0]}` : ''}.`, 'ok');
    } catch (err) {
      say((err as Error).message, 'error');
    }
  }

  resume(): void {
    this.frozen = false;
    this.ui.resume.disabled = true;
    say('Live again.', 'info');
  }

  /** Background identification of the live view, at most one at a time. */
  private async guess(): Promise<void> {
    const p = this.payload();
    if (!p || !this.band) return;
    this.guessing = true;
    this.lastGuessAt = performance.now();
    try {
      const cap = await this.client.analyseImage(p.image, {
        sourceName: 'live view',
        kind: 'camera',
        band: this.band,
        origin: { x: p.crop.x, y: p.crop.y },
        frame: { widthPx: this.frameSize.width, heightPx: this.frameSize.height },
      });
      const outcome = await this.client.identify(cap, this.session.scale?.profile ?? null);
      const present = outcome.identification.species.filter((s) => s.present);
      const from = outcome.identification.calibration?.from;
      const how = from === 'profile' ? 'with the profile' : from === 'self' ? 'self-calibrated' : '';
      const laser = outcome.identification.laser;
      this.ui.guess.textContent = laser
        ? `Looks like a laser line at ${laser.wavelengthNm.toFixed(1)} nm${laser.candidates[0] ? ` (${laser.candidates[0].name})` : ''}`
        : present.length
          ? `Looks like: ${present.map((s) => `${s.element} (${s.score.toFixed(2)})`).join(', ')}${how ? ` — ${how}` : ''}`
          : outcome.identification.emissionLinesFound
            ? 'No species stands out yet'
            : 'No emission lines in view';
      this.ui.guess.dataset.species = present.map((s) => s.element).join(',');
    } catch {
      this.ui.guess.textContent = '';
    } finally {
      this.guessing = false;
    }
  }
}
