import { mkdtempSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { InputError } from '../../src/core/errors.js';
import { startServer, type RunningServer } from '../../src/server/app.js';
import { profileValidators } from '../../src/server/routes/profiles.js';

let server: RunningServer;
let workspaceDir: string;

beforeAll(async () => {
  workspaceDir = mkdtempSync(path.join(tmpdir(), 'gp-ws-'));
  profileValidators.set('test-profile', (json) => {
    if (typeof (json as { value?: unknown }).value !== 'number') throw new InputError('value: expected a number');
  });
  server = await startServer({ port: 0, workspaceDir });
});
afterAll(async () => {
  await server?.close();
});

describe('the API server (over real HTTP on a free port)', () => {
  it('sends a Content-Security-Policy and answers unknown routes with JSON 404', async () => {
    const r = await fetch(`${server.url}/api/nothing-here`);
    expect(r.status).toBe(404);
    expect(r.headers.get('content-security-policy')).toMatch(/default-src 'self'/);
    expect(r.headers.get('x-content-type-options')).toBe('nosniff');
    expect(await r.json()).toEqual({ error: 'no such API route: GET /nothing-here', warnings: [] });
  });

  it('binds to loopback by default without a warning', () => {
    expect(server.url).toMatch(/^http:\/\/127\.0\.0\.1:\d+$/);
    expect(server.warnings).toEqual([]);
  });

  it('saves and reads back a profile, and lists it', async () => {
    const put = await fetch(`${server.url}/api/profiles/bench-2.rig_A`, {
      method: 'PUT',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ format: 'test-profile', value: 3 }),
    });
    expect(put.status).toBe(200);
    const got = await (await fetch(`${server.url}/api/profiles/bench-2.rig_A`)).json();
    expect(got).toEqual({ format: 'test-profile', value: 3 });
    expect((await (await fetch(`${server.url}/api/profiles`)).json()).profiles).toEqual(['bench-2.rig_A']);
  });

  it('rejects path traversal and bad names with 400, unknown or invalid profiles with 400, missing ones with 404', async () => {
    for (const name of ['..%2F..%2Fetc%2Fpasswd', '.hidden', 'a%2Fb', 'x'.repeat(65), '..']) {
      const r = await fetch(`${server.url}/api/profiles/${name}`, {
        method: 'PUT',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify({ format: 'test-profile', value: 1 }),
      });
      expect([400, 404]).toContain(r.status);
      expect((await r.json()).error).toBeTypeOf('string');
    }
    const unknown = await fetch(`${server.url}/api/profiles/ok`, { method: 'PUT', headers: { 'content-type': 'application/json' }, body: '{"format":"other"}' });
    expect(unknown.status).toBe(400);
    const invalid = await fetch(`${server.url}/api/profiles/ok`, { method: 'PUT', headers: { 'content-type': 'application/json' }, body: '{"format":"test-profile","value":"x"}' });
    expect(invalid.status).toBe(400);
    const notJson = await fetch(`${server.url}/api/profiles/ok`, { method: 'PUT', headers: { 'content-type': 'application/json' }, body: '{oops' });
    expect(notJson.status).toBe(400);
    expect((await fetch(`${server.url}/api/profiles/missing`)).status).toBe(404);
    expect(readdirSync(path.join(workspaceDir, 'profiles'))).toEqual(['bench-2.rig_A.json']);
  });
});
