import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ALL_CAUTIONS } from '../../src/core/safety.js';
import { browserSuite } from '../helpers/browser.js';
import { startHarness, type Harness } from './harness.js';

describe.runIf(browserSuite === 'run')('the web app in headless Chromium', () => {
  let harness: Harness;
  beforeAll(async () => {
    harness = await startHarness();
  });
  afterAll(async () => {
    await harness?.close();
  });

  it('loads the built page under its Content-Security-Policy with no console errors and shows the safety notes', async () => {
    const { page, errors } = await harness.open();
    const response = await page.goto(harness.server.url + '/');
    expect(response?.headers()['content-security-policy']).toMatch(/script-src 'self'/);
    await expect.poll(async () => page.textContent('body')).toMatch(/IEC 60825-1/);
    // Every caution, in the one wording of src/core/safety.ts, is on the spectrum bench (tubes, lamps and lasers).
    const text = (await page.textContent('#bench-spectra .safety'))!;
    for (const c of ALL_CAUTIONS) expect(text).toContain(c);
    expect(errors).toEqual([]);
  });

  it('every bench is reachable by keyboard, and each names its hazards', async () => {
    const { page, errors } = await harness.open();
    // Tab from the top: the skip link, then the bench links of the rail.
    await page.keyboard.press('Tab');
    expect(await page.evaluate(() => document.activeElement?.className)).toBe('skip-link');
    for (const [bench, hazard] of [
      ['polarization', 'Laser'],
      ['grating', 'Laser'],
      ['modes', 'Laser'],
      ['spectra', 'High voltage'],
    ] as const) {
      await page.focus(`.rail-link[data-bench="${bench}"]`);
      await page.keyboard.press('Enter');
      await page.waitForFunction((b) => !document.getElementById(`bench-${b}`)!.hidden, bench);
      expect(await page.getAttribute(`.rail-link[data-bench="${bench}"]`, 'aria-current')).toBe('page');
      expect(await page.textContent(`#bench-${bench} .safety`)).toContain(hazard);
    }
    // Tabs follow the ARIA pattern: arrow keys move between them.
    await page.focus('#tab-src-camera');
    await page.keyboard.press('ArrowRight');
    expect(await page.evaluate(() => document.activeElement?.id)).toBe('tab-src-file');
    expect(await page.isVisible('#spectrum-drop')).toBe(true);
    await harness.shot(page, 'shell');
    expect(errors).toEqual([]);
  });
});
