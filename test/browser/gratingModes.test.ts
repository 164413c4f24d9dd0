import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { browserSuite } from '../helpers/browser.js';
import { ROOT } from '../helpers/runCli.js';
import { startHarness, type Harness } from './harness.js';

const pm = (t: string | null): [number, number] => {
  const [v, u] = (t ?? '').split('±').map((x) => Number.parseFloat(x));
  return [v, u];
};

describe.runIf(browserSuite === 'run')('the grating and laser-mode benches in the page', () => {
  let harness: Harness;
  beforeAll(async () => {
    harness = await startHarness();
  });
  afterAll(async () => {
    await harness?.close();
  });

  it('grating form: the demo slide C spots give 579 lines/mm (its truth) and the verdict against its 600 label', async () => {
    const { page, errors } = await harness.open('grating');
    // data/demo/grating/slide-c-screen.csv: HeNe 632.816 nm, screen at 850 ± 2 mm; truth 579 lines/mm, turned 4°.
    await page.fill('#gr-wavelength', '632.816');
    await page.fill('#gr-distance', '850 mm');
    await page.fill('#gr-distance-u', '2');
    const values = ['-991.5', '-340', '330', '865.5'];
    const rows = page.locator('#gr-rows .order-row');
    for (let i = 0; i < 4; i++) await rows.nth(i).locator('input.reading').fill(values[i]);
    await page.fill('#gr-nominal', '600');
    await page.click('#gr-measure');
    await page.waitForSelector('#gr-density');
    const [g, u] = pm(await page.textContent('#gr-density'));
    expect(Math.abs(g - 579)).toBeLessThanOrEqual(3 * u);
    expect(await page.textContent('#gr-verdict')).toMatch(/^outside/);
    // The plot: one measured dot and one fitted ring per order, each with a hover read-out.
    expect(await page.$$eval('#gr-figure svg title', (t) => t.map((x) => x.textContent))).toHaveLength(4);
    // PNG export of the plot shown (rendered through an image of the SVG under the page's CSP).
    const [png] = await Promise.all([page.waitForEvent('download'), page.click('#gr-result-card .exports button:text("PNG")')]);
    const bytes = readFileSync((await png.path())!);
    expect(Array.from(bytes.subarray(0, 8))).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]); // PNG signature (ISO/IEC 15948)
    expect(bytes.readUInt32BE(16)).toBe(2 * 620); // IHDR width: the 620-px plot at 2×
    await harness.shot(page, 'grating');
    expect(errors).toEqual([]);
  });

  it('laser modes: a demo warm-up trace through the server gives a 60 cm cavity, with the plots', async () => {
    const { page, errors } = await harness.open('modes');
    await page.setInputFiles('#modes-files', path.join(ROOT, 'data/demo/modes/warmup-1.csv'));
    await page.selectOption('#modes-how', 'confocal');
    await page.fill('#modes-fsr', '7.5 mm');
    await page.click('#modes-go');
    await page.waitForSelector('#modes-length', { timeout: 20_000 });
    // Demo truth (warmup-1.csv header): 249.827 MHz spacing ⇔ L = c/(2Δν) = 60.0 cm (c = 299 792 458 m/s).
    const [cm, u] = pm(await page.textContent('#modes-length'));
    expect(Math.abs(cm - 60)).toBeLessThanOrEqual(3 * u + 0.2);
    expect(await page.$('#modes-figure svg')).not.toBeNull();
    await harness.shot(page, 'laser-modes');
    expect(errors).toEqual([]);
  });
});
