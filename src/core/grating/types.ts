/** Result shapes shared by the grating methods (screen, angles, calibration profile). */

export interface PositionResidual {
  order: number;
  /** 'position': one spot from the undeviated spot (or a ruler reading); 'separation': between the +m and −m spots. */
  kind: 'position' | 'separation';
  measuredMm: number;
  fittedMm: number;
  residualMm: number;
  uncertaintyMm: number;
}

export interface AngleResidual {
  order: number;
  kind: 'angle';
  measuredDeg: number;
  fittedDeg: number;
  residualDeg: number;
  uncertaintyDeg: number;
}

/** Contributions to the line-density uncertainty (lines/mm, one standard uncertainty each). */
export interface LineDensityBudget {
  /** From the measured positions or angles, through the fit (scaled up when the scatter exceeds the stated uncertainties). */
  fitLinesPerMm: number;
  /** From the grating-to-screen distance (screen method). */
  distanceLinesPerMm: number;
  /** From the wavelength. */
  wavelengthLinesPerMm: number;
  /** From the calibration profile (photo method). */
  calibrationLinesPerMm?: number;
}

export interface GratingMeasurement {
  method: 'screen' | 'angles' | 'profile';
  linesPerMm: number;
  /** Combined standard uncertainty (k = 1). */
  linesPerMmUncertainty: number;
  periodUm: number;
  periodUncertaintyUm: number;
  wavelengthNm: number;
  /** Angle of incidence on the grating (its tilt from square to the beam), deg. */
  incidenceDeg: number;
  /** Null when the incidence was given or assumed, not fitted. */
  incidenceUncertaintyDeg: number | null;
  incidenceFitted: boolean;
  /** Ruler reading of the undeviated spot, when the positions were ruler readings including order 0. */
  zeroPositionMm?: number;
  budget: LineDensityBudget;
  residuals: Array<PositionResidual | AngleResidual>;
  /** Σ (residual/uncertainty)². */
  chi2: number;
  dof: number;
  /** √(χ²/dof): about 1 when the scatter matches the stated uncertainties; null with no redundancy (dof = 0). */
  birgeRatio: number | null;
  warnings: string[];
}
