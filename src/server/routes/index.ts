import type { Router } from 'express';
import type multer from 'multer';
import type { ServerConfig } from '../config.js';
import { registerProfileRoutes } from './profiles.js';

export interface RouteContext {
  config: ServerConfig;
  upload: multer.Multer;
}

/** Every API route module registers itself here. */
export const routes: Array<(router: Router, ctx: RouteContext) => void> = [registerProfileRoutes];
