export {
  diffractionAngleDeg,
  dispersionAtPositionNmPerPx,
  focalLengthPxFrom35mm,
  FULL_FRAME_DIAGONAL_MM,
  grooveSpacingNm,
  positionAtWavelengthPx,
  wavelengthAtAngleNm,
  wavelengthAtPositionNm,
} from './gratingCamera.js';
export type { FocalLengthFrom35mmOptions, Grating, GratingCameraModel } from './gratingCamera.js';
export { createSensorResponse, DEFAULT_SENSOR_RESPONSE } from './sensor.js';
export type { ResponseTerm, Rgb, SensorResponse, SensorResponseModel } from './sensor.js';
export { convolveWeights, erf, kernelFwhmPx, LINE_SPREAD_DEFAULTS, lineSpreadKernel, normalCdf } from './lineSpread.js';
export type { LineSpreadOptions, SpreadKernel } from './lineSpread.js';
export { logGamma, NoiseGenerator } from './noise.js';
export { checkSourceSpectrum, continuumDensity, continuumMarkNm, SECOND_RADIATION_CONSTANT_NM_K } from './scene.js';
export type { ContinuumComponent, EmissionLine, SourceSpectrum } from './scene.js';
export { RENDER_DEFAULTS, renderSpectroscopePhoto } from './renderSpectroscopePhoto.js';
export type {
  DiffractionOrder,
  RenderedPhoto,
  RenderOptions,
  RenderOptionsInput,
  RenderTruth,
  TruthContinuumMark,
  TruthLine,
} from './renderSpectroscopePhoto.js';
export { encodeLinear16, encodeSrgb8 } from './encodeRendered.js';
