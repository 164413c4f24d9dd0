import { promises as fs } from 'node:fs';
import path from 'node:path';
import { InputError } from '../core/errors.js';
import { writeFileAtomic } from './writeAtomic.js';

/** Profile names: letters, digits, dot, dash, underscore; no path separators, no leading dot, at most 64 characters. */
const NAME = /^[A-Za-z0-9][A-Za-z0-9._-]{0,63}$/;

export function checkProfileName(name: string): string {
  if (!NAME.test(name) || name.includes('..')) {
    throw new InputError(
      `profile name: expected 1–64 letters, digits, '.', '-' or '_' (not starting with '.'), got ${JSON.stringify(name.slice(0, 80))}`,
      'name',
    );
  }
  return name;
}

function profilePath(workspaceDir: string, name: string): string {
  const file = path.join(workspaceDir, 'profiles', `${checkProfileName(name)}.json`);
  // Defence in depth: the resolved file must stay inside the profiles folder.
  const base = path.resolve(workspaceDir, 'profiles') + path.sep;
  if (!path.resolve(file).startsWith(base)) throw new InputError('profile name: not allowed', 'name');
  return file;
}

export async function saveProfile(workspaceDir: string, name: string, profile: unknown): Promise<void> {
  await writeFileAtomic(profilePath(workspaceDir, name), JSON.stringify(profile, null, 2) + '\n');
}

/** The saved profile's JSON, or null when there is none of that name. */
export async function loadProfile(workspaceDir: string, name: string): Promise<unknown | null> {
  const file = profilePath(workspaceDir, name);
  let text: string;
  try {
    text = await fs.readFile(file, 'utf8');
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') return null;
    throw err;
  }
  try {
    return JSON.parse(text);
  } catch {
    throw new InputError(`profile ${name}: the saved file is not valid JSON`, 'name');
  }
}

export async function listProfiles(workspaceDir: string): Promise<string[]> {
  try {
    const names = await fs.readdir(path.join(workspaceDir, 'profiles'));
    return names.filter((n) => n.endsWith('.json') && NAME.test(n.slice(0, -5))).map((n) => n.slice(0, -5)).sort();
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') return [];
    throw err;
  }
}
