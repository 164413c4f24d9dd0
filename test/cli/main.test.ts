import { execFileSync } from 'node:child_process';
import { readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT, runCli } from '../helpers/runCli.js';

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
  it('runs as the package bin (npx glowprint): the build leaves it executable, with its shebang', () => {
    const pkg = JSON.parse(readFileSync(path.join(ROOT, 'package.json'), 'utf8')) as { bin: { glowprint: string }; version: string };
    const bin = path.join(ROOT, pkg.bin.glowprint);
    expect(statSync(bin).mode & 0o111, `${bin} is not executable`).not.toBe(0);
    expect(readFileSync(bin, 'utf8').startsWith('#!/usr/bin/env node')).toBe(true);
    expect(execFileSync(bin, ['--version'], { encoding: 'utf8' }).trim()).toBe(pkg.version);
  });
});
