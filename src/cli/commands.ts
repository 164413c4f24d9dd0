import type { Command } from 'commander';
import { registerServe } from './serve.js';
import { registerDemo } from './demo.js';
import { registerGrating } from './grating.js';
import { registerPolarization } from './polarization.js';
import { registerSpectrum } from './spectrum.js';
import { registerModes } from './modes.js';
import { registerReport } from './report.js';
import { registerCalibrate } from './calibrate.js';
import { registerIdentify } from './identify.js';
import { registerWatch } from './watch.js';

/** Every CLI command registers itself here; one file per command in this folder. */
export const commands: Array<(program: Command) => void> = [
  registerDemo,
  registerServe,
  registerGrating,
  registerPolarization,
  registerSpectrum,
  registerModes,
  registerReport,
  registerCalibrate,
  registerIdentify,
  registerWatch,
];
