/**
 * The spectrum card: the live preview while the camera runs, else the current capture with its peaks, wavelength axis
 * (from the scale, a self-calibration or the file) and line labels (from the identification).
 */
import { wavelengthAtNm } from '../../../src/core/calibration/model.js';
import type { InstrumentProfile } from '../../../src/core/calibration/profile.js';
import type { BandGeometry } from '../../../src/core/types.js';
import type { Session } from '../analysis/session.js';
import { applyProfile, sampleWavelengths } from '../analysis/scale.js';
import type { LiveSpectrum } from '../live/liveSpectrum.js';
import { exportButtons } from '../plots/exporters.js';
import { SpectrumView, type ViewPeak } from '../plots/spectrumView.js';
import { card, h } from '../ui/dom.js';
import { speciesColours } from './speciesColours.js';

export class SpectrumCard {
  readonly root: HTMLElement;
  readonly view: SpectrumView;
  private caption: HTMLElement;
  private mode: 'empty' | 'live' | 'capture' = 'empty';
  private liveWavelengths: { key: string; values: Float64Array } | null = null;

  constructor(private session: Session) {
    this.view = new SpectrumView({
      label: 'Spectrum plot',
      heightPx: 340,
      onPeakPick: (i) => {
        if (this.mode === 'capture') session.pick(i);
      },
    });
    this.caption = h('p', { class: 'card-caption', id: 'spectrum-caption' }, 'No spectrum yet: start the camera, or open a photo or a spectrum CSV.');
    const c = card('Spectrum', {
      id: 'spectrum-card',
      tools: [
        exportButtons({
          baseName: () => baseName(session.capture?.sourceName ?? 'spectrum'),
          svg: () => this.view.svgElement,
          csv: () => this.view.visibleCsv(),
          json: () => this.exportJson(),
        }),
      ],
    });
    c.body.append(this.caption, this.view.root);
    this.root = c.root;
    session.on('capture', () => this.showCapture());
    session.on('scale', () => (this.mode === 'capture' ? this.showCapture() : undefined));
    session.on('identification', () => (this.mode === 'capture' ? this.showCapture() : undefined));
    session.on('selection', () => this.view.select(session.pickedPeak));
  }

  get showing(): 'empty' | 'live' | 'capture' {
    return this.mode;
  }

  /** One live frame's preview. */
  showLive(live: LiveSpectrum, band: BandGeometry, status: string): void {
    if (this.mode !== 'live') {
      this.mode = 'live';
      this.view.select(null);
    }
    const profile = this.session.scale?.profile ?? null;
    const wl = profile ? this.wavelengthsForLive(live, band, profile) : null;
    const peaks: ViewPeak[] = live.peaks.map((p) => ({
      positionPx: p.positionPx,
      height: p.height,
      saturated: p.saturated,
      wavelengthNm: profile && wl ? interpolate(live.positionPx, wl, p.positionPx) : undefined,
    }));
    this.view.setData({ positionPx: live.positionPx, intensity: live.intensity, channels: live.channels, saturated: live.saturated, wavelengthNm: wl }, peaks);
    this.caption.textContent = status;
    this.root.dataset.mode = 'live';
  }

  private wavelengthsForLive(live: LiveSpectrum, band: BandGeometry, profile: InstrumentProfile): Float64Array {
    const key = `${profile.createdAt}|${band.center.x},${band.center.y},${band.angleDeg},${band.slantDeg},${band.lengthPx}|${live.positionPx.length}`;
    if (this.liveWavelengths?.key !== key) this.liveWavelengths = { key, values: sampleWavelengths(live.positionPx, band, profile) };
    return this.liveWavelengths.values;
  }

  /** The current capture, with what the scale and identification add. */
  showCapture(): void {
    const cap = this.session.capture;
    if (!cap) {
      this.mode = 'empty';
      this.view.setData(null);
      return;
    }
    this.mode = 'capture';
    this.root.dataset.mode = 'capture';
    const ident = this.session.identification;
    const scale = this.session.scale;
    let wavelengths: Float64Array | null = null;
    let peakNm: Array<number | undefined> = cap.peaks.map((p) => p.wavelengthNm);
    let axisNote = 'positions in px (no wavelength scale yet)';
    if (scale) {
      wavelengths = sampleWavelengths(cap.spectrum.positionPx, cap.band, scale.profile);
      const applied = applyProfile(cap, scale.profile);
      peakNm = applied.peaks.map((p) => p.wavelengthNm);
      axisNote = `wavelengths from ${scale.origin === 'self' ? 'the self-calibrated scale' : `profile ${scale.name ?? '(unsaved)'}`}, RMS ${scale.profile.rmsNm.toFixed(3)} nm`;
    } else if (cap.spectrum.wavelengthNm) {
      wavelengths = cap.spectrum.wavelengthNm;
      axisNote = 'wavelengths from the file';
    } else if (ident?.identification.scale && ident.sampleWavelengthNm) {
      const model = ident.identification.scale.model;
      const c = ident.identification.calibration;
      wavelengths = ident.sampleWavelengthNm;
      peakNm = cap.peaks.map((p) => wavelengthAtNm(model, p.positionPx));
      axisNote = `wavelengths from the spectrum's own ${c?.lamp ?? ''} lines (self-calibrated, RMS ${(c?.rmsNm ?? NaN).toFixed(2)} nm)`;
    }
    const speciesColour = speciesColours(ident?.identification);
    const labels = new Map<number, { label: string; element: string }>();
    for (const p of ident?.identification.peaks ?? []) {
      if (p.line) labels.set(p.positionPx, { label: `${p.line.spectrum} ${p.line.wavelengthNm.toFixed(2)}${p.line.order ? ` (order ${p.line.order})` : ''}`, element: p.line.element });
    }
    const peaks: ViewPeak[] = cap.peaks.map((p, i) => {
      const l = labels.get(p.positionPx);
      return {
        positionPx: p.positionPx,
        wavelengthNm: peakNm[i],
        height: p.height,
        saturated: p.saturated,
        blended: p.blended,
        label: l?.label,
        colour: l ? speciesColour(l.element) : undefined,
      };
    });
    this.view.setData(
      { positionPx: cap.spectrum.positionPx, intensity: cap.spectrum.intensity, channels: cap.spectrum.channels, saturated: cap.spectrum.saturated, wavelengthNm: wavelengths },
      peaks,
    );
    this.view.select(this.session.pickedPeak);
    this.caption.textContent = `${cap.sourceName}: ${cap.spectrum.intensity.length} samples, ${cap.peaks.length} peaks; ${axisNote}. Click a peak (or focus the plot and use ← → Enter) to assign it a line.`;
  }

  private exportJson(): unknown {
    const cap = this.session.capture;
    if (!cap) return null;
    const scale = this.session.scale;
    const applied = scale ? applyProfile(cap, scale.profile) : null;
    return {
      input: { file: cap.sourceName, kind: cap.kind, ...(cap.image ? { widthPx: cap.image.widthPx, heightPx: cap.image.heightPx } : {}) },
      band: cap.band,
      spectrum: { samples: cap.spectrum.intensity.length, noise: cap.noise, threshold: cap.threshold },
      peaks: applied ? applied.peaks : cap.peaks,
      calibration: scale ? { from: scale.origin, profile: scale.name, rmsNm: scale.profile.rmsNm } : null,
      warnings: [...cap.warnings, ...(applied?.warnings ?? [])],
    };
  }
}

function interpolate(xs: Float64Array, ys: Float64Array, x: number): number {
  const n = xs.length;
  if (n === 0) return NaN;
  const step = n > 1 ? xs[1] - xs[0] : 1;
  const f = (x - xs[0]) / step;
  const i = Math.max(0, Math.min(n - 2, Math.floor(f)));
  const t = f - i;
  return ys[i] + (ys[i + 1] - ys[i]) * t;
}

export function baseName(name: string): string {
  return name.replace(/\.[A-Za-z0-9]{1,5}$/, '').replace(/[^A-Za-z0-9._-]+/g, '-').replace(/^-+|-+$/g, '') || 'spectrum';
}
