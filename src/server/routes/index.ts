import type { Router } from 'express';
import type multer from 'multer';
import type { ServerConfig } from '../config.js';
import { registerProfileRoutes } from './profiles.js';
import { registerCalibrateRoutes } from './calibrate.js';
import { registerGratingRoutes } from './grating.js';
import { registerIdentifyRoutes } from './identify.js';
import { registerLampRoutes } from './lamps.js';
import { registerModesRoutes } from './modes.js';
import { registerPolarizationRoutes } from './polarization.js';
import { registerSpectrumRoutes } from './spectrum.js';

export interface RouteContext {
  config: ServerConfig;
  upload: multer.Multer;
}

/** Every API route module registers itself here. */
export const routes: Array<(router: Router, ctx: RouteContext) => void> = [
  registerProfileRoutes,
  registerLampRoutes,
  registerSpectrumRoutes,
  registerCalibrateRoutes,
  registerIdentifyRoutes,
  registerPolarizationRoutes,
  registerGratingRoutes,
  registerModesRoutes,
];
