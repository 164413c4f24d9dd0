import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { browserSuite } from '../helpers/browser.js';
import { ROOT } from '../helpers/runCli.js';
import { startHarness, type Harness } from './harness.js';

const POL = path.join(ROOT, 'data/demo/polarization');
const truth = JSON.parse(readFileSync(path.join(POL, 'truth.json'), 'utf8'));

const num = (t: string | null): number => Number.parseFloat(t ?? '');
const pm = (t: string | null): [number, number] => {
  const [v, u] = (t ?? '').split('±').map((x) => Number.parseFloat(x));
  return [v, u];
};

describe.runIf(browserSuite === 'run')('the polarization bench in the page', () => {
  let harness: Harness;
  beforeAll(async () => {
    harness = await startHarness();
  });
  afterAll(async () => {
    await harness?.close();
  });

  it('typed readings of a published case fit live: 60 % polarized light at 30° (Collett, Field Guide to Polarization)', async () => {
    const { page, errors } = await harness.open('polarization');
    // I0, I45, I90, I135 = 0.65, 0.759808, 0.35, 0.240192 for DoLP 0.6, azimuth 30° (CHECK_VALUES.md, computed from
    // I(θ) = ½(S0 + S1 cos 2θ + S2 sin 2θ), Collett 2005).
    const readings: Array<[number, number]> = [
      [0, 0.65],
      [45, 0.759808],
      [90, 0.35],
    ];
    await page.fill('#pol-step', '45');
    for (const [angle, value] of readings) {
      await page.fill('#pol-angle', String(angle));
      await page.fill('#pol-intensity', String(value));
      await page.press('#pol-intensity', 'Enter');
    }
    // Three angles determine the three Malus parameters: the fit is there already, exact.
    await page.waitForSelector('#pol-dolp');
    expect(Math.abs(num(await page.textContent('#pol-dolp')) - 0.6)).toBeLessThanOrEqual(1e-3);
    // The angle field stepped on by itself: 135° comes next.
    expect(await page.inputValue('#pol-angle')).toBe('135');
    await page.fill('#pol-intensity', '0.240192');
    await page.press('#pol-intensity', 'Enter');
    expect(Math.abs(num(await page.textContent('#pol-dolp')) - 0.6)).toBeLessThanOrEqual(1e-3);
    expect(Math.abs(num(await page.textContent('#pol-azimuth')) - 30)).toBeLessThanOrEqual(0.1);
    expect(await page.$$eval('#pol-table-readings tbody tr', (r) => r.length)).toBe(4);
    expect(await page.$('#pol-figure svg')).not.toBeNull();
    expect(errors).toEqual([]);
  });

  it('a photo series (server photometry) and a power-meter table give the demo truth; the analyser profile saves and corrects the azimuth', async () => {
    const { page, errors } = await harness.open('polarization');
    // Photo series of laser C: 13 frames, angles in the file names (demo truth: DoLP 0.995 through an ER 300 analyser,
    // azimuth 26.5° on the scale).
    await page.click('#tab-pol-in-photos');
    const dir = path.join(POL, 'laser-c-photos');
    await page.setInputFiles('#pol-photos', readdirSync(dir).sort().map((f) => path.join(dir, f)));
    await page.fill('#pol-er', '300');
    await page.click('#pol-photos-go');
    await page.waitForFunction(() => document.querySelectorAll('#pol-table-readings tbody tr').length === 13, null, { timeout: 20_000 });
    await page.waitForSelector('#pol-verdict-text');
    expect(await page.textContent('#pol-verdict-text')).toMatch(/^polarized/);
    const [az, azU] = pm(await page.textContent('#pol-azimuth'));
    expect(Math.abs(az - truth.laser_c.azimuth_scale_deg)).toBeLessThanOrEqual(3 * azU + 0.3);
    const [dolp, dolpU] = pm(await page.textContent('#pol-dolp'));
    expect(Math.abs(dolp - truth.laser_c.dolp)).toBeLessThanOrEqual(3 * dolpU + 0.01);
    await harness.shot(page, 'polarization-photo-series');

    // The analyser, calibrated on floor glare (mostly horizontal: 0° true) and saved to the workspace.
    await page.click('#pol-clear');
    await page.click('#tab-pol-in-table');
    await page.setInputFiles('#pol-table', path.join(POL, 'floor-glare.csv'));
    await page.waitForSelector('#pol-dolp');
    await page.click('#pol-analyser-info + details summary');
    await page.fill('#pol-ref-az', '0');
    await page.fill('#pol-profile-name', 'analyser-a');
    await page.click('#pol-calibrate');
    await page.waitForFunction(() => Array.from((document.getElementById('pol-analyser') as HTMLSelectElement).options).some((o) => o.value === 'analyser-a'), null, { timeout: 10_000 });
    const saved = JSON.parse(readFileSync(path.join(harness.workspaceDir, 'profiles/analyser-a.json'), 'utf8'));
    expect(saved.format).toBe('glowprint-analyser-profile');
    // Demo truth: true azimuth = scale reading + 3.5°.
    expect(Math.abs(saved.offset_deg - truth.analyser.offset_deg)).toBeLessThanOrEqual(3 * saved.offset_uncertainty_deg + 0.2);

    // Laser A's power-meter table with that analyser: vertical (90° true), DoLP 0.998 after the ER correction.
    await page.click('#pol-clear');
    await page.selectOption('#pol-analyser', 'analyser-a');
    await page.waitForFunction(() => /^Analyser analyser-a/.test(document.getElementById('pol-analyser-info')?.textContent ?? ''));
    await page.setInputFiles('#pol-table', path.join(POL, 'laser-a-power-meter.csv'));
    await page.waitForFunction(() => /true, offset applied/.test(document.getElementById('pol-azimuth')?.textContent ?? ''));
    const [azA, azAU] = pm(await page.textContent('#pol-azimuth'));
    expect(Math.abs(azA - truth.laser_a.azimuth_true_deg)).toBeLessThanOrEqual(3 * azAU + 0.3);
    const [dA, dAU] = pm(await page.textContent('#pol-dolp'));
    expect(Math.abs(dA - truth.laser_a.dolp)).toBeLessThanOrEqual(3 * dAU + 0.005);
    await harness.shot(page, 'polarization-laser-a-with-analyser');
    expect(errors).toEqual([]);
  });
});
