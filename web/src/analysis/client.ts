/**
 * Promise-style calls into the analysis worker. Bad input comes back as an InputError (its message is for the user);
 * anything else as an Error. Without worker support the jobs run in the page.
 */
import { InputError } from '../../../src/core/errors.js';
import type { InstrumentProfile } from '../../../src/core/calibration/profile.js';
import type { BandGeometry } from '../../../src/core/types.js';
import type { IdentifyOutcome } from './identify.js';
import { runJob, type ImagePayload, type JobRequest } from './jobs.js';
import type { AnalyseImageOptions, SpectrumCapture } from './pipeline.js';
import type { CalibrateCaptureOptions, ScaleResult } from './scale.js';

type Pending = { resolve: (v: unknown) => void; reject: (e: Error) => void };

export class AnalysisClient {
  private worker: Worker | null = null;
  private nextId = 1;
  private pending = new Map<number, Pending>();

  constructor() {
    try {
      this.worker = new Worker(new URL('./worker.ts', import.meta.url), { type: 'module' });
      this.worker.onmessage = (e: MessageEvent<{ id: number; ok: boolean; result?: unknown; error?: string; input?: boolean }>) => {
        const p = this.pending.get(e.data.id);
        if (!p) return;
        this.pending.delete(e.data.id);
        if (e.data.ok) p.resolve(e.data.result);
        else p.reject(e.data.input ? new InputError(e.data.error ?? 'bad input') : new Error(e.data.error));
      };
      this.worker.onerror = (e) => {
        for (const p of this.pending.values()) p.reject(new Error(`analysis worker failed: ${e.message}`));
        this.pending.clear();
      };
    } catch {
      this.worker = null;
    }
  }

  private call<T>(request: JobRequest, transfer: Transferable[] = []): Promise<T> {
    if (!this.worker) {
      return new Promise<T>((resolve, reject) => {
        setTimeout(() => {
          try {
            resolve(runJob(request) as T);
          } catch (err) {
            reject(err as Error);
          }
        }, 0);
      });
    }
    const id = this.nextId++;
    return new Promise<T>((resolve, reject) => {
      this.pending.set(id, { resolve: resolve as (v: unknown) => void, reject });
      this.worker!.postMessage({ id, request }, transfer);
    });
  }

  findBand(image: ImagePayload, sourceName: string): Promise<{ band: BandGeometry; warnings: string[]; extraction: { objectMarginPx: number } }> {
    return this.call({ kind: 'findBand', image, sourceName }, transferOf(image));
  }

  analyseImage(image: ImagePayload, options: AnalyseImageOptions): Promise<SpectrumCapture> {
    return this.call({ kind: 'analyseImage', image, options }, transferOf(image));
  }

  analyseText(text: string, sourceName: string): Promise<SpectrumCapture> {
    return this.call({ kind: 'analyseText', text, sourceName });
  }

  identify(capture: SpectrumCapture, profile: InstrumentProfile | null): Promise<IdentifyOutcome> {
    return this.call({ kind: 'identify', capture, profile });
  }

  calibrate(capture: SpectrumCapture, options: CalibrateCaptureOptions): Promise<ScaleResult> {
    return this.call({ kind: 'calibrate', capture, options });
  }
}

function transferOf(p: ImagePayload): Transferable[] {
  return 'codes' in p ? [p.codes.buffer] : [p.data.buffer, p.saturated.buffer];
}
