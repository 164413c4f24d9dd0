import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

let cached: string | undefined;

/** The folder holding glowprint's package.json (works from src/ under vitest and from dist/ when installed). */
export function projectRoot(): string {
  if (cached) return cached;
  let dir = path.dirname(fileURLToPath(import.meta.url));
  for (;;) {
    const candidate = path.join(dir, 'package.json');
    if (existsSync(candidate)) {
      const pkg = JSON.parse(readFileSync(candidate, 'utf8')) as { name?: string };
      if (pkg.name === 'glowprint') return (cached = dir);
    }
    const parent = path.dirname(dir);
    if (parent === dir) throw new Error('glowprint: cannot find the package folder');
    dir = parent;
  }
}

/** A path inside the package's data/ folder. */
export function dataPath(...parts: string[]): string {
  return path.join(projectRoot(), 'data', ...parts);
}

export function packageVersion(): string {
  return (JSON.parse(readFileSync(path.join(projectRoot(), 'package.json'), 'utf8')) as { version: string }).version;
}
