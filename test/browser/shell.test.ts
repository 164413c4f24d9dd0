import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { startServer, type RunningServer } from '../../src/server/app.js';
import { browserSuite, launchChromium } from '../helpers/browser.js';
import { ROOT } from '../helpers/runCli.js';

describe.runIf(browserSuite === 'run')('the web app in headless Chromium', () => {
  let browser: Browser;
  let server: RunningServer;
  beforeAll(async () => {
    server = await startServer({ port: 0, workspaceDir: mkdtempSync(path.join(tmpdir(), 'gp-ws-')), webDir: path.join(ROOT, 'dist/web') });
    browser = await launchChromium();
  });
  afterAll(async () => {
    await browser?.close();
    await server?.close();
  });

  it('loads the built page under its Content-Security-Policy with no console errors and shows the safety notes', async () => {
    const page = await browser.newPage();
    const errors: string[] = [];
    page.on('console', (m) => m.type() === 'error' && errors.push(m.text()));
    page.on('pageerror', (e) => errors.push(String(e)));
    await page.goto(server.url + '/');
    await expect.poll(async () => page.textContent('body')).toMatch(/IEC 60825-1/);
    expect(errors).toEqual([]);
  });
});
