import type { Router } from 'express';
import { InputError } from '../../core/errors.js';
import { checkProfileName, listProfiles, loadProfile, saveProfile } from '../../io/workspace.js';
import type { RouteContext } from './index.js';

/** Validators by profile `format`, filled by the modules that own each profile kind. */
export const profileValidators = new Map<string, (json: unknown, source: string) => void>();

export function registerProfileRoutes(router: Router, { config }: RouteContext): void {
  router.get('/profiles', async (_req, res) => {
    res.json({ profiles: await listProfiles(config.workspaceDir), warnings: [] });
  });
  router.get('/profiles/:name', async (req, res) => {
    const name = checkProfileName(req.params.name);
    const profile = await loadProfile(config.workspaceDir, name);
    if (profile === null) {
      res.status(404).json({ error: `no saved profile named ${name}`, warnings: [] });
      return;
    }
    res.json(profile);
  });
  router.put('/profiles/:name', async (req, res) => {
    const name = checkProfileName(req.params.name);
    const body = req.body as unknown;
    if (!body || typeof body !== 'object' || Array.isArray(body)) {
      throw new InputError('profile: expected a JSON object in the request body (Content-Type: application/json)');
    }
    const format = (body as { format?: unknown }).format;
    const validate = typeof format === 'string' ? profileValidators.get(format) : undefined;
    if (!validate) {
      const known = [...profileValidators.keys()].join(', ') || 'none registered';
      throw new InputError(`profile: expected a "format" of a known profile kind (${known}), got ${JSON.stringify(format)}`);
    }
    validate(body, `profile ${name}`);
    await saveProfile(config.workspaceDir, name, body);
    res.status(200).json({ saved: name, warnings: [] });
  });
}
