import os from 'node:os';
import path from 'node:path';
import { InputError } from '../core/errors.js';

export interface ServerConfig {
  /** @default 5177 */
  port: number;
  /** Loopback unless told otherwise. @default '127.0.0.1' */
  host: string;
  /** Folder holding saved instrument and analyser profiles. @default ~/.glowprint */
  workspaceDir: string;
  /** Largest accepted upload per file (bytes). @default 40 MiB */
  maxUploadBytes: number;
  /** Largest image accepted (pixels, from the header, before decoding). @default 50 MP */
  maxPixels: number;
  /** Most files in one request. @default 60 */
  maxFiles: number;
  /** Folder of the built web app (served as static files), if any. */
  webDir?: string;
}

export const SERVER_DEFAULTS = {
  port: 5177,
  host: '127.0.0.1',
  maxUploadBytes: 40 * 1024 * 1024,
  maxPixels: 50e6,
  maxFiles: 60,
} as const;

/** Fills defaults and checks every value once, at start-up, with messages that name the setting. */
export function resolveServerConfig(partial: Partial<ServerConfig> = {}): ServerConfig {
  const config: ServerConfig = {
    port: partial.port ?? SERVER_DEFAULTS.port,
    host: partial.host ?? SERVER_DEFAULTS.host,
    workspaceDir: path.resolve(partial.workspaceDir ?? path.join(os.homedir(), '.glowprint')),
    maxUploadBytes: partial.maxUploadBytes ?? SERVER_DEFAULTS.maxUploadBytes,
    maxPixels: partial.maxPixels ?? SERVER_DEFAULTS.maxPixels,
    maxFiles: partial.maxFiles ?? SERVER_DEFAULTS.maxFiles,
    webDir: partial.webDir,
  };
  if (!Number.isInteger(config.port) || config.port < 0 || config.port > 65535) {
    throw new InputError(`--port: expected a whole number from 0 to 65535, got ${config.port}`, 'port');
  }
  if (!(config.maxUploadBytes > 0)) throw new InputError(`--max-upload-mb: expected a positive size, got ${config.maxUploadBytes}`);
  if (!(config.maxPixels > 0)) throw new InputError(`--max-pixels: expected a positive number, got ${config.maxPixels}`);
  return config;
}

export function isLoopback(host: string): boolean {
  return host === 'localhost' || host === '::1' || /^127\./.test(host);
}
