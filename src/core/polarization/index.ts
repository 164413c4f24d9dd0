export { angleSpanDeg, axisDifferenceDeg, distinctAnglesMod180, wrapAzimuthDeg } from './angles.js';
export { fitMalus, malusIntensity, MALUS_FIT_DEFAULTS, AZIMUTH_UNCERTAINTY_CAP_DEG } from './malusFit.js';
export type { MalusFit, MalusFitOptions, MalusPoint, MalusPointResult, FourThetaCheck, DriftCheck } from './malusFit.js';
export { stokesFromFourAngles, fitRotatingRetarder, fullStokes, ROTATING_RETARDER_DEFAULTS } from './stokes.js';
export type { FourAngleIntensities, FourAngleStokes, FullStokes, RetarderPoint, RotatingRetarderFit, RotatingRetarderOptions } from './stokes.js';
export {
  analyserOffsetFromReference,
  applyAnalyserOffset,
  correctExtinction,
  extinctionFactor,
  validateAnalyserProfile,
} from './corrections.js';
export type { AnalyserProfile } from './corrections.js';
export { analyseTimeSeries, seriesStatistics, TIME_SERIES_DEFAULTS } from './timeSeries.js';
export type { SeriesStatistics, TimeSeries, TimeSeriesAnalysis, TimeSeriesOptions, TimeSeriesVerdict } from './timeSeries.js';
export { polarizationVerdict, VERDICT_DEFAULTS } from './verdict.js';
export type { PolarizationVerdict, Verdict, VerdictOptions } from './verdict.js';
export { measureSpotSeries, spotSeriesToPoints, SPOT_PHOTOMETRY_DEFAULTS } from './spotPhotometry.js';
export type { FrameExposure, SpotFrame, SpotPhotometry, SpotPhotometryOptions } from './spotPhotometry.js';
export { plotPolarization, plotTimeSeries, polarizationFigureSvgText, polarizationSvgText, POLARIZATION_PLOT_SIZE } from './plotPolarization.js';
export type { PolarizationPlotOptions } from './plotPolarization.js';
export { analyseRotatingAnalyser, analyseRotatingRetarder, calibrateAnalyser, interpretTogether, ANALYSER_CALIBRATION_DEFAULTS } from './analyse.js';
export type { AnalyseOptions, AnalyserCalibrationOptions, PolarizationResult, StokesResult } from './analyse.js';
export { renderSpotSeries, SPOT_SERIES_DEFAULTS } from './renderSpotSeries.js';
export type { RenderedFrame, SpotSeriesScene } from './renderSpotSeries.js';
export { malusPointsFromTable, timeSeriesFromTable } from './tables.js';
