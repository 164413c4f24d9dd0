export { matchLines, MATCH_LINES_DEFAULTS } from './matchLines.js';
export type { LineMatch, ManualPair, MatchLinesOptions, MatchResult, MatchScore } from './matchLines.js';
export { fitDispersion, FIT_DISPERSION_DEFAULTS } from './fitDispersion.js';
export type { CalibrationPoint, DispersionFit, FitDispersionOptions, FittedLine, ModelCandidate, ModelChoice } from './fitDispersion.js';
export { informationCriterion } from './informationCriterion.js';
export { fitPolynomial, polynomialDispersionNmPerPx, polynomialFrame, polynomialGradient, polynomialWavelengthNm } from './polynomialModel.js';
export type { PolynomialFit, PolynomialModel, WeightedPoint } from './polynomialModel.js';
export {
  fitGrating,
  GRATING_FIT_DEFAULTS,
  GRATING_PARAMETERS,
  gratingDispersionNmPerPx,
  gratingGradient,
  gratingLinesPerMm,
  gratingWavelengthNm,
} from './gratingModel.js';
export type { GratingFit, GratingFitOptions, GratingModel, ParameterPrior } from './gratingModel.js';
export { dispersionAtNmPerPx, modelGradient, positionAtPx, wavelengthAtNm } from './model.js';
export type { DispersionModel } from './model.js';
export { modelSigmaNm, polynomialSigmaNm, wavelengthWithUncertainty } from './uncertainty.js';
export type { CalibrationScale, WavelengthEstimate } from './uncertainty.js';
export {
  APPLY_PROFILE_DEFAULTS,
  applyProfileToPeaks,
  buildProfile,
  compareGeometry,
  GEOMETRY_TOLERANCES,
  PROFILE_FORMAT,
  PROFILE_VERSION,
  profileFromJson,
  profileScale,
  profileToJson,
  positionsInProfileFrame,
} from './profile.js';
export type {
  AppliedProfile,
  ApplyProfileOptions,
  CalibratedPeak,
  CameraSummary,
  FrameTransfer,
  GeometryCheck,
  GeometryTolerances,
  InstrumentProfile,
  ProfileContext,
  ProfileLine,
} from './profile.js';
export {
  CALIBRATE_DEFAULTS,
  CALIBRATE_MATCH_DEFAULTS,
  calibrateFromPeaks,
  EXIF_FOCAL_LENGTH_RELATIVE_SIGMA,
  gratingPriors,
  PRINCIPAL_POINT_RELATIVE_SIGMA,
} from './calibrate.js';
export type { CalibrateOptions, CalibrationResult, GratingPriors, GratingPriorsInput } from './calibrate.js';
export { calibrationLampLines } from './calibrationLines.js';
export { BROAD_FEATURE_RELATIVE_SIGMA, isBroadFeature, MAX_FEATURE_WIDTH_NM, referenceUncertaintyNm } from './lineReference.js';
export { COLOUR_PRIOR_DEFAULTS, colourAllows, colourBandNm } from './colourPrior.js';
export type { ColourPriorOptions, ColourRule, RgbFractions } from './colourPrior.js';
export { log10BinomialTail } from './significance.js';
