import express, { type NextFunction, type Request, type Response } from 'express';
import { existsSync } from 'node:fs';
import type { AddressInfo } from 'node:net';
import multer from 'multer';
import { InputError } from '../core/errors.js';
import { toSnakeCase } from '../core/json/toSnakeCase.js';
import { isLoopback, resolveServerConfig, type ServerConfig } from './config.js';
import { routes, type RouteContext } from './routes/index.js';

/** Content-Security-Policy of the web app: only its own scripts; camera frames and blobs for the live view. */
export const CONTENT_SECURITY_POLICY = [
  "default-src 'self'",
  "script-src 'self'",
  "style-src 'self' 'unsafe-inline'",
  "img-src 'self' data: blob:",
  "media-src 'self' blob: mediastream:",
  "connect-src 'self'",
  "object-src 'none'",
  "base-uri 'none'",
  "frame-ancestors 'none'",
  "form-action 'self'",
].join('; ');

/** Builds the express app (no listening): the JSON API over the same core as the CLI, and the built web app. */
export function createApp(partial: Partial<ServerConfig> = {}): express.Express {
  const config = resolveServerConfig(partial);
  const app = express();
  app.disable('x-powered-by');
  app.use((_req, res, next) => {
    res.set({
      'Content-Security-Policy': CONTENT_SECURITY_POLICY,
      'X-Content-Type-Options': 'nosniff',
      'Referrer-Policy': 'no-referrer',
      'Cross-Origin-Opener-Policy': 'same-origin',
    });
    next();
  });
  const upload = multer({
    storage: multer.memoryStorage(),
    limits: { fileSize: config.maxUploadBytes, files: config.maxFiles, fields: 100, fieldSize: 1024 * 1024 },
  });
  const ctx: RouteContext = { config, upload };
  const api = express.Router();
  api.use(express.json({ limit: '2mb' }));
  for (const register of routes) register(api, ctx);
  api.use((req, res) => {
    res.status(404).json({ error: `no such API route: ${req.method} ${req.path}`, warnings: [] });
  });
  app.use('/api', api);
  if (config.webDir && existsSync(config.webDir)) {
    app.use(express.static(config.webDir, { index: 'index.html', maxAge: 0 }));
  }
  app.use(errorHandler);
  return app;
}

/** Sends a result as the JSON contract (snake_case keys with units, a warnings array). */
export function sendResult(res: Response, result: object): void {
  res.type('application/json').send(JSON.stringify(toSnakeCase(result)));
}

function errorHandler(err: unknown, _req: Request, res: Response, _next: NextFunction): void {
  if (err instanceof multer.MulterError) {
    const status = err.code === 'LIMIT_FILE_SIZE' ? 413 : 400;
    const what = err.code === 'LIMIT_FILE_SIZE' ? 'upload too large' : err.message.toLowerCase();
    res.status(status).json({ error: `${what}${err.field ? ` (field ${err.field})` : ''}`, warnings: [] });
    return;
  }
  if (err instanceof InputError) {
    res.status(400).json({ error: err.message, warnings: [] });
    return;
  }
  const e = err as { type?: string; status?: number; message?: string };
  if (e && e.type === 'entity.too.large') {
    res.status(413).json({ error: 'request body too large', warnings: [] });
    return;
  }
  if (e && e.type === 'entity.parse.failed') {
    res.status(400).json({ error: 'request body is not valid JSON', warnings: [] });
    return;
  }
  console.error(err);
  res.status(500).json({ error: 'internal error in glowprint (see the server log)', warnings: [] });
}

export interface RunningServer {
  url: string;
  port: number;
  close(): Promise<void>;
  warnings: string[];
}

/** Starts listening; resolves once the port is bound (port 0 picks a free one). */
export async function startServer(partial: Partial<ServerConfig> = {}): Promise<RunningServer> {
  const config = resolveServerConfig(partial);
  const app = createApp(config);
  const warnings: string[] = [];
  if (!isLoopback(config.host)) {
    warnings.push(
      `listening on ${config.host}, not only on this computer: anyone on the network can use this server and its saved profiles`,
    );
  }
  return new Promise((resolve, reject) => {
    const server = app.listen(config.port, config.host, () => {
      const { port } = server.address() as AddressInfo;
      const hostForUrl = config.host.includes(':') ? `[${config.host}]` : config.host;
      resolve({
        url: `http://${hostForUrl}:${port}`,
        port,
        warnings,
        close: () => new Promise<void>((done) => server.close(() => done())),
      });
    });
    server.on('error', (err: NodeJS.ErrnoException) =>
      reject(err.code === 'EADDRINUSE' ? new InputError(`--port ${config.port}: already in use; choose another`) : err),
    );
  });
}
