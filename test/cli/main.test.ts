import { describe, expect, it } from 'vitest';
import { runCli } from '../helpers/runCli.js';

describe('glowprint (the program)', () => {
  it('prints help and exits 0', () => {
    const r = runCli(['--help']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/Usage: glowprint/);
  });
  it('exits 2 on an unknown command or option (usage error)', () => {
    expect(runCli(['no-such-command']).status).toBe(2);
    expect(runCli(['--no-such-option']).status).toBe(2);
  });
});
