import type { Command } from 'commander';
import path from 'node:path';
import { HIGH_VOLTAGE_CAUTION, LASER_CAUTION } from '../core/safety.js';
import { projectRoot } from '../io/projectRoot.js';
import { SERVER_DEFAULTS } from '../server/config.js';
import { action, note, numberOption } from './run.js';

export function registerServe(program: Command): void {
  program
    .command('serve')
    .description('Start the bench web app and its JSON API on this computer')
    .option('--port <n>', 'port to listen on (0 picks a free one)', String(SERVER_DEFAULTS.port))
    .option('--host <address>', 'address to bind; anything but loopback exposes the server to the network', SERVER_DEFAULTS.host)
    .option('--workspace <dir>', 'folder for saved instrument and analyser profiles (default ~/.glowprint)')
    .option('--max-upload-mb <n>', 'largest upload per file, MiB', String(SERVER_DEFAULTS.maxUploadBytes / 1024 / 1024))
    .addHelpText('after', `\nSafety:\n  ${LASER_CAUTION}\n  ${HIGH_VOLTAGE_CAUTION}\n`)
    .action(
      action(async (opts: { port: string; host: string; workspace?: string; maxUploadMb: string }) => {
        // Loaded here, not at the top: express, the routes and their schemas cost ~1 s of start-up that no other
        // command should pay.
        const { startServer } = await import('../server/app.js');
        const server = await startServer({
          port: numberOption('--port', opts.port),
          host: opts.host,
          workspaceDir: opts.workspace,
          maxUploadBytes: (numberOption('--max-upload-mb', opts.maxUploadMb) ?? 40) * 1024 * 1024,
          webDir: path.join(projectRoot(), 'dist', 'web'),
        });
        for (const w of server.warnings) note(`glowprint: warning: ${w}`);
        note(`glowprint: serving on ${server.url} (Ctrl-C stops)`);
        await new Promise<void>((resolve) => {
          const stop = (): void => {
            void server.close().then(resolve);
          };
          process.once('SIGINT', stop);
          process.once('SIGTERM', stop);
        });
      }),
    );
}
