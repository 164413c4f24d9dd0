/** Shapes shared by the mode-analysis stages (traces in, ramps, peaks, frequency scale, results out). */

/** One oscilloscope capture reduced to what the analysis needs; times in seconds from the first sample. */
export interface ModeTrace {
  /** Name of the input in messages (a file name). */
  source: string;
  timeS: Float64Array;
  /** Photodiode behind the interferometer. */
  signal: Float64Array;
  /** Piezo drive, when recorded. */
  ramp?: Float64Array;
  /** Sync or trigger output of the ramp generator, when recorded. */
  trigger?: Float64Array;
  /** Absolute time of the capture (s, any fixed origin), for drift over a warm-up. */
  captureTimeS?: number;
}

/** One sweep of the interferometer, flyback removed. Indices into the trace, end exclusive. */
export interface RampSegment {
  startIndex: number;
  endIndex: number;
  /**
   * The segment's time origin (s, trace time): where the ramp crossed its start level, or the trigger edge. Peak times
   * within the segment are measured from here, and the frequency scale's origin is tied to it (drift is measured
   * against it).
   */
  originS: number;
  /** +1 when the ramp rises during the sweep, −1 when it falls (its time axis is then reversed). */
  direction: 1 | -1;
  /** Whether both ends of the sweep lie inside the trace. */
  complete: boolean;
  /** Whether `originS` is a true start-level crossing or trigger edge (not the trace's edge): drift needs it. */
  originValid: boolean;
}

/** A transmission peak inside one sweep. */
export interface ModePeak {
  segment: number;
  /** Time from the segment origin along the sweep direction (s). */
  timeS: number;
  timeUncertaintyS: number;
  /** Above the baseline (signal units). */
  height: number;
  /** Full width at half maximum in time (s), from the sampled peak (not a model). */
  fwhmS: number;
  blended: boolean;
}
