import type { Command } from 'commander';
import path from 'node:path';
import { InputError } from '../core/errors.js';
import { toSnakeCase } from '../core/json/toSnakeCase.js';
import { sectionFromResult } from '../core/report/sections/index.js';
import { HIGH_VOLTAGE_CAUTION, UV_CAUTION } from '../core/safety.js';
import { loadLineList } from '../io/lineList.js';
import { readProfile } from '../io/profileFile.js';
import { createSvgDocument } from '../io/svgDocument.js';
import { watchFolder, WATCH_DEFAULTS } from '../tasks/watch.js';
import { identificationJson, identifyFile } from '../tasks/identify.js';
import { action, note, numberOption } from './run.js';

interface WatchCliOptions {
  calibration?: string;
  log?: string;
  once?: boolean;
  settle: string;
  poll: string;
}

export const WATCH_CLI_DEFAULTS = { settleS: String(WATCH_DEFAULTS.settleMs / 1000), pollS: String(WATCH_DEFAULTS.pollMs / 1000) } as const;

export function registerWatch(program: Command): void {
  program
    .command('watch')
    .description('Identify each new photo as it lands in a folder (tethered camera, phone sync folder); one JSON line per photo in a results log')
    .argument('<folder>', 'the folder the photos land in (not searched below)')
    .option('--calibration <profile>', 'calibration profile (JSON) from "glowprint calibrate"; without it each spectrum calibrates itself')
    .option('--log <file>', `results log, one JSON object per line (default: ${WATCH_DEFAULTS.logName} in the folder)`)
    .option('--once', 'process the photos that are there (waiting for any still being written), then exit')
    .option('--settle <seconds>', 'a photo counts as complete when its size and time stamp have not changed for this long', WATCH_CLI_DEFAULTS.settleS)
    .option('--poll <seconds>', 'rescan the folder this often, for folders whose changes are not announced (network shares)', WATCH_CLI_DEFAULTS.pollS)
    .addHelpText(
      'after',
      `
Photos: ${WATCH_DEFAULTS.extensions.join(' ')} (any case). Hidden files and names sync clients use while a file is
still arriving (.part, .tmp, .crdownload, ~) are left alone until renamed into place.
Each photo is processed once: the log records its name, size and time stamp, so a restarted watch skips what it has
done, and a photo replaced under the same name counts as new. A photo that cannot be measured is logged with its
error and not tried again until it changes. Photos are only read, never moved or changed; the log is only appended to.
Ctrl-C stops after the photo in hand. "glowprint report <log>" makes the report of everything in the log.

Example:
  glowprint calibrate photos/cfl.jpg --lamp fluorescent --out rig.json
  glowprint watch photos/ --calibration rig.json

Safety:
  ${HIGH_VOLTAGE_CAUTION}
  ${UV_CAUTION}
`,
    )
    .action(
      action(async (folder: string, opts: WatchCliOptions) => {
        const settleS = numberOption('--settle', opts.settle)!;
        const pollS = numberOption('--poll', opts.poll)!;
        if (!(settleS >= 0)) throw new InputError(`--settle: expected seconds ≥ 0, got ${opts.settle}`, '--settle');
        if (!(pollS > 0)) throw new InputError(`--poll: expected seconds > 0, got ${opts.poll}`, '--poll');
        const profile = opts.calibration ? await readProfile(opts.calibration) : undefined;
        const lines = loadLineList({ includeBands: true });
        const document = createSvgDocument();
        const controller = new AbortController();
        // The first Ctrl-C stops after the photo in hand; a second one (the default handler again) ends at once.
        process.once('SIGINT', () => {
          note('glowprint watch: stopping after the photo in hand (Ctrl-C again to quit at once)');
          controller.abort();
        });
        process.once('SIGTERM', () => controller.abort());
        const logFile = opts.log ?? path.join(folder, WATCH_DEFAULTS.logName);
        if (!opts.once) note(`glowprint watch: watching ${folder}, results to ${logFile} (Ctrl-C to stop)`);
        const run = await watchFolder({
          folder,
          logFile,
          once: opts.once,
          settleMs: settleS * 1000,
          pollMs: pollS * 1000,
          signal: controller.signal,
          process: async (file) => {
            const r = await identifyFile(file, { profile, lines });
            return { command: 'identify', ...(toSnakeCase(identificationJson(r)) as Record<string, unknown>) };
          },
          summarise: (json, name) => {
            const { summary } = sectionFromResult(json, { document, source: name });
            return `${name}: ${summary.result} — ${summary.keyFigure}${summary.warnings ? ` [${summary.warnings} warning${summary.warnings === 1 ? '' : 's'}]` : ''}`;
          },
          onLine: (line) => process.stdout.write(`${clock()}  ${line.replace(/\u00a0/g, ' ')}\n`),
          onNote: (message) => note(`glowprint watch: ${message}`),
        });
        note(`glowprint watch: ${run.processed} photo(s) processed, ${run.failed} failed, ${run.skipped} already in ${run.logFile}`);
      }),
    );
}

function clock(): string {
  return new Date().toTimeString().slice(0, 8);
}
