/**
 * The live path in the browser: the page's `window.__glowprintBench` (web/src/bench.ts) run in headless Chromium
 * (Debian's, as the browser tests use it) against the built app served by the real server. It times one 1280×720
 * frame through what the live loop does after the pixels are read (band crop → RGB codes, band sampling, box
 * extraction with background, peak search) and reports the per-frame median against the 4 ms budget, and as a ratio to
 * the floor measured in the same page and run: the browser's own getImageData of the whole frame.
 *
 * As a section of `npm run bench` (browserSection), or alone: `node dist/bench/browser.js`. Needs `npm run build`.
 */
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { startServer } from '../src/server/app.js';
import { projectRoot } from '../src/io/projectRoot.js';
import { hasChromium, launchChromium } from '../test/helpers/browser.js';
import { type BenchFigure, type BenchSection } from './section.js';
import type { BenchResult } from '../web/src/bench.js';

/** What the page's bench returns: the type web/src/bench.ts declares, not a copy of it. */
type PageBench = BenchResult;

const FRAMES = 400;

export const browserSection: BenchSection = {
  name: 'live spectrum in the browser: one 1280×720 frame (headless Chromium)',
  async run(ctx) {
    const webDir = process.env.GLOWPRINT_WEB_DIR ?? path.join(projectRoot(), 'dist', 'web');
    if (!existsSync(path.join(webDir, 'index.html'))) throw new Error(`no built web app in ${webDir}: run npm run build first`);
    if (!hasChromium) throw new Error("Debian's chromium is not installed (apt-get install -y chromium)");
    const workspaceDir = mkdtempSync(path.join(tmpdir(), 'glowprint-bench-ws-'));
    const server = await startServer({ port: 0, workspaceDir, webDir });
    const browser = await launchChromium();
    try {
      const page = await browser.newPage();
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(String(e)));
      await page.goto(`${server.url}/`);
      await page.waitForFunction(() => typeof (window as unknown as { __glowprintBench?: unknown }).__glowprintBench === 'function');
      ctx.log(`  rendering a 1280×720 neon frame in the page and timing ${FRAMES} frames…`);
      const r = (await page.evaluate(
        (frames) => (window as unknown as { __glowprintBench: (o: { frames: number }) => Promise<unknown> }).__glowprintBench({ frames }),
        FRAMES,
      )) as PageBench;
      if (errors.length) throw new Error(`page errors: ${errors.join('; ')}`);
      const detail =
        `median of ${r.frames} frames ${r.medianMs.toFixed(2)} ms (p90 ${r.p90Ms.toFixed(2)}, mean ${r.meanMs.toFixed(2)}), ${r.peaks} peaks; ` +
        `with an 8-frame running mean ${r.averagedMedianMs.toFixed(2)} ms; floor getImageData(1280×720) ${r.floorMedianMs.toFixed(2)} ms; ` +
        `once per band: findBand ${r.findBandMs.toFixed(0)} ms; once per capture: optimal extraction + fitted peaks ${r.captureMs.toFixed(0)} ms (${r.captureSamples} samples)`;
      return [
        { name: 'live frame, band sampling + extraction + peaks', value: r.medianMs, unit: ' ms', target: r.targetMs, kind: 'max', detail },
        {
          name: 'live frame ÷ getImageData of the same frame',
          value: r.medianMs / r.floorMedianMs,
          unit: '×',
          // The analysis of a frame should cost no more than getting its pixels (common practice, no source).
          target: 1,
          kind: 'max',
          detail: 'the floor: the browser handing one frame\'s pixels to script, measured interleaved in the same page',
        },
      ] satisfies BenchFigure[];
    } finally {
      await browser.close();
      await server.close();
      rmSync(workspaceDir, { recursive: true, force: true });
    }
  },
};

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const figures = await browserSection.run({ workDir: tmpdir(), log: (m) => void process.stderr.write(m + '\n') });
  process.stdout.write(`\n${browserSection.name}\n`);
  for (const f of figures) {
    const ok = f.kind === 'max' ? f.value <= f.target : f.value >= f.target;
    process.stdout.write(`  ${f.name}: ${f.value.toFixed(2)}${f.unit}  (target ${f.kind === 'max' ? '≤' : '≥'} ${f.target}${f.unit})  ${ok ? 'PASS' : 'OVER TARGET'}\n      ${f.detail ?? ''}\n`);
  }
}
