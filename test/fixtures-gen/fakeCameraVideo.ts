/**
 * The fake camera's video for the browser tests: a demo tube's scene (src/io/demoData.ts, e.g. tube A, neon) rendered
 * by the project's renderer (src/core/render) into a small webcam-sized frame, a few frames with independent noise
 * (a fresh seed each), encoded as 8-bit sRGB and written as .y4m. The rig is the demo's (1000 lines/mm, camera at
 * 33.5°) with the demo camera's focal length in pixels, so the band keeps the demo's dispersion (~0.63 nm/px) and
 * fits a 640-px frame; the tube image is made lower (90 px) to fit 360 px.
 */
import { demoScenario, DEMO_RIG } from '../../src/io/demoData.js';
import { encodeSrgb8, focalLengthPxFrom35mm, renderSpectroscopePhoto, type RenderTruth } from '../../src/core/render/index.js';
import { writeY4m } from '../helpers/y4m.js';

export interface FakeCameraOptions {
  /** Demo photo whose scene is rendered. @default 'tube-a.jpg' */
  demoFile?: string;
  widthPx?: number;
  heightPx?: number;
  frames?: number;
}

export function writeFakeCameraVideo(file: string, options: FakeCameraOptions = {}): { truth: RenderTruth; contents: string[] } {
  const demoFile = options.demoFile ?? 'tube-a.jpg';
  const width = options.widthPx ?? 640;
  const height = options.heightPx ?? 360;
  const spec = demoScenario().find((s) => s.file === demoFile);
  if (!spec) throw new Error(`no demo photo ${demoFile}`);
  const focalLengthPx = focalLengthPxFrom35mm({ focalLength35mmMm: DEMO_RIG.focalLength35mmMm, widthPx: DEMO_RIG.widthPx, heightPx: DEMO_RIG.heightPx });
  const frames = [];
  let truth: RenderTruth | undefined;
  for (let k = 0; k < (options.frames ?? 4); k++) {
    const photo = renderSpectroscopePhoto({
      ...spec.render,
      widthPx: width,
      heightPx: height,
      camera: { ...spec.render.camera, focal: { kind: 'px', focalLengthPx } },
      band: { ...spec.render.band, offsetPx: 0, heightPx: 90 },
      seed: 1000 + k,
    });
    truth = photo.truth;
    frames.push({ rgb: encodeSrgb8(photo.image) });
  }
  writeY4m(file, frames, width, height);
  return { truth: truth!, contents: spec.contents };
}
