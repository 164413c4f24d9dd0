import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
/** The shared outside-reference folder (NIST data, design notes), beside the project. */
export const SHARED = path.resolve(ROOT, '../shared');

export interface CliResult {
  status: number | null;
  stdout: string;
  stderr: string;
}

/** Runs the built CLI (dist/, made by `npm run build`, which `npm test` runs first). */
export function runCli(args: string[], options: { cwd?: string; input?: string } = {}): CliResult {
  const r = spawnSync(process.execPath, [path.join(ROOT, 'dist/src/cli/main.js'), ...args], {
    cwd: options.cwd ?? ROOT,
    input: options.input,
    encoding: 'utf8',
    env: { ...process.env, NO_COLOR: '1', FORCE_COLOR: '0' },
    maxBuffer: 64 * 1024 * 1024,
  });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}
