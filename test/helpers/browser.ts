import { existsSync } from 'node:fs';
import { chromium, type Browser } from 'playwright-core';

/** Debian's Chromium (installed by .ci/run); never a browser downloaded by a test tool. */
export const CHROMIUM = process.env.GLOWPRINT_CHROMIUM ?? '/usr/bin/chromium';

export const hasChromium = existsSync(CHROMIUM);

/**
 * Flags this sandbox needs: headless as root without the sandbox, no GPU, and no background networking (the machine's
 * closed network refuses those connections). Playwright gives each launch a fresh, empty profile. Extra flags, e.g. the fake camera, are appended.
 */
export async function launchChromium(extraArgs: string[] = []): Promise<Browser> {
  if (!hasChromium) {
    throw new Error(`browser tests need Debian's chromium at ${CHROMIUM} (apt-get install -y chromium; .ci/run does it)`);
  }
  return chromium.launch({
    executablePath: CHROMIUM,
    headless: true,
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      ...extraArgs,
    ],
  });
}

/** Browser tests run wherever Chromium is installed, and must run in CI. */
export const browserSuite = hasChromium || process.env.CI ? 'run' : 'skip';
