/**
 * What the spectrum bench is working on: the current capture (a frozen camera frame, a photo or a CSV), the wavelength
 * scale (a profile made here, loaded, or found by self-calibration), the clicked calibration pairs and the latest
 * identification. Cards listen for changes and redraw themselves.
 */
import type { ManualPair } from '../../../src/core/calibration/matchLines.js';
import type { CameraSummary, InstrumentProfile } from '../../../src/core/calibration/profile.js';
import type { IdentifyOutcome } from './identify.js';
import type { SpectrumCapture } from './pipeline.js';
import type { ScaleResult } from './scale.js';

export type SessionEvent = 'capture' | 'scale' | 'pairs' | 'identification' | 'selection';

export interface ScaleState {
  profile: InstrumentProfile;
  /** Where the scale came from. */
  origin: 'calibrated' | 'loaded' | 'self';
  /** Workspace name when saved or loaded. */
  name: string | null;
  /** The calibration that made it, when made here. */
  result: ScaleResult | null;
}

export interface PairDraft extends ManualPair {
  /** What the line is ('Ne I 585.249'). */
  label: string;
}

export class Session {
  capture: SpectrumCapture | null = null;
  camera: CameraSummary | null = null;
  scale: ScaleState | null = null;
  pairs: PairDraft[] = [];
  identification: IdentifyOutcome | null = null;
  /** The peak picked for pairing (index into capture.peaks). */
  pickedPeak: number | null = null;
  private listeners = new Map<SessionEvent, Set<() => void>>();

  on(event: SessionEvent, listener: () => void): void {
    let set = this.listeners.get(event);
    if (!set) this.listeners.set(event, (set = new Set()));
    set.add(listener);
  }

  emit(event: SessionEvent): void {
    for (const l of this.listeners.get(event) ?? []) l();
  }

  setCapture(capture: SpectrumCapture, camera: CameraSummary | null): void {
    this.capture = capture;
    this.camera = camera;
    this.identification = null;
    this.pickedPeak = null;
    this.pairs = [];
    this.emit('capture');
    this.emit('pairs');
    this.emit('identification');
  }

  setScale(scale: ScaleState | null): void {
    this.scale = scale;
    this.emit('scale');
  }

  setPairs(pairs: PairDraft[]): void {
    this.pairs = pairs;
    this.emit('pairs');
  }

  setIdentification(outcome: IdentifyOutcome | null): void {
    this.identification = outcome;
    this.emit('identification');
  }

  pick(peak: number | null): void {
    this.pickedPeak = peak;
    this.emit('selection');
  }
}
