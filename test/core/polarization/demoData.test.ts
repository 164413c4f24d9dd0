import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { writePolarizationDemo } from '../../../src/io/demoPolarization.js';
import { ROOT } from '../../helpers/runCli.js';

const DEMO = path.join(ROOT, 'data/demo/polarization');
const tmp = mkdtempSync(path.join(os.tmpdir(), 'glowprint-demo-pol-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

describe('data/demo/polarization (invented demo data)', () => {
  it('is exactly what the committed, seeded generator writes (tables and truth byte for byte; the same photos)', async () => {
    await writePolarizationDemo(tmp);
    for (const name of ['floor-glare.csv', 'laser-a-power-meter.csv', 'laser-b-rotation.csv', 'laser-b-burst.csv', 'laser-b-burst-total.csv', 'truth.json']) {
      expect(readFileSync(path.join(tmp, name), 'utf8'), name).toBe(readFileSync(path.join(DEMO, name), 'utf8'));
    }
    // JPEG bytes may differ between libjpeg builds; the file sets must not.
    for (const folder of ['laser-c-photos', 'laser-c-overexposed']) {
      expect(readdirSync(path.join(tmp, folder)).sort()).toEqual(readdirSync(path.join(DEMO, folder)).filter((f) => f.endsWith('.jpg')).sort());
    }
  });
});
