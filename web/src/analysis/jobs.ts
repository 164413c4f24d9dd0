/**
 * The heavy work of the page, as plain messages so it can run in a worker (analysis/worker.ts) and keep the live view
 * smooth: finding the band, the capture pipeline, calibration and identification.
 */
import type { InstrumentProfile } from '../../../src/core/calibration/profile.js';
import { findBand } from '../../../src/core/spectrum/findBand.js';
import type { LinearImage } from '../../../src/core/types.js';
import { linearImageFromSrgb8 } from '../decode/linearImage.js';
import { identifyCapture } from './identify.js';
import { analyseImage, analyseSpectrumText, type AnalyseImageOptions, type SpectrumCapture } from './pipeline.js';
import { calibrateCapture, type CalibrateCaptureOptions } from './scale.js';

/** Pixels as they travel to the worker: 8-bit sRGB codes, or linear floats (an averaged frame) with clip flags. */
export type ImagePayload =
  | { width: number; height: number; codes: Uint8Array }
  | { width: number; height: number; data: Float32Array; saturated: Uint8Array };

export type JobRequest =
  | { kind: 'findBand'; image: ImagePayload; sourceName: string }
  | { kind: 'analyseImage'; image: ImagePayload; options: AnalyseImageOptions }
  | { kind: 'analyseText'; text: string; sourceName: string }
  | { kind: 'identify'; capture: SpectrumCapture; profile: InstrumentProfile | null }
  | { kind: 'calibrate'; capture: SpectrumCapture; options: CalibrateCaptureOptions };

export function imageFromPayload(p: ImagePayload): LinearImage {
  if ('codes' in p) return linearImageFromSrgb8(p.codes, p.width, p.height);
  return { width: p.width, height: p.height, channels: 3, data: p.data, saturated: p.saturated };
}

export function runJob(req: JobRequest): unknown {
  switch (req.kind) {
    case 'findBand': {
      const found = findBand(imageFromPayload(req.image), { source: req.sourceName });
      return { band: found.band, warnings: found.warnings, extraction: found.extraction };
    }
    case 'analyseImage':
      return analyseImage(imageFromPayload(req.image), req.options);
    case 'analyseText':
      return analyseSpectrumText(req.text, req.sourceName);
    case 'identify':
      return identifyCapture(req.capture, req.profile);
    case 'calibrate':
      return calibrateCapture(req.capture, req.options);
  }
}
