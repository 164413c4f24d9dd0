/**
 * What every page test needs: the built app served by the real server on a free port with a fresh workspace, a
 * headless Debian Chromium (test/helpers/browser.ts), console errors collected, and screenshots written to
 * test/.out/ (git-ignored) so they can be looked at.
 */
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { startServer, type RunningServer } from '../../src/server/app.js';
import { launchChromium } from '../helpers/browser.js';
import { ROOT } from '../helpers/runCli.js';

export const SCREENSHOTS = path.join(ROOT, 'test/.out/browser');
/** The built app (`npm run build` makes dist/web); GLOWPRINT_WEB_DIR points elsewhere, e.g. a private build. */
export const WEB_DIR = process.env.GLOWPRINT_WEB_DIR ?? path.join(ROOT, 'dist/web');

export interface Harness {
  browser: Browser;
  server: RunningServer;
  workspaceDir: string;
  tmp: string;
  /** A page at the app's URL (hash = bench), with its console errors collected into `errors`. */
  open(hash?: string, viewport?: { width: number; height: number }): Promise<{ page: Page; errors: string[] }>;
  shot(page: Page, name: string): Promise<string>;
  close(): Promise<void>;
}

export async function startHarness(chromiumArgs: string[] = [], tmpPrefix = 'gp-browser-'): Promise<Harness> {
  const tmp = mkdtempSync(path.join(tmpdir(), tmpPrefix));
  const workspaceDir = path.join(tmp, 'workspace');
  mkdirSync(workspaceDir);
  mkdirSync(SCREENSHOTS, { recursive: true });
  const server = await startServer({ port: 0, workspaceDir, webDir: WEB_DIR });
  const browser = await launchChromium(chromiumArgs);
  return {
    browser,
    server,
    workspaceDir,
    tmp,
    async open(hash = '', viewport = { width: 1440, height: 900 }) {
      const context = await browser.newContext({ viewport, acceptDownloads: true });
      const page = await context.newPage();
      const errors: string[] = [];
      page.on('console', (m) => m.type() === 'error' && errors.push(m.text()));
      page.on('pageerror', (e) => errors.push(String(e)));
      await page.goto(`${server.url}/${hash ? `#${hash}` : ''}`);
      await page.waitForSelector('.topbar');
      return { page, errors };
    },
    async shot(page, name) {
      const file = path.join(SCREENSHOTS, `${name}.png`);
      await page.screenshot({ path: file, fullPage: true });
      return file;
    },
    async close() {
      await browser?.close();
      await server?.close();
      rmSync(tmp, { recursive: true, force: true });
    },
  };
}
