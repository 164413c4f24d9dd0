import { defineConfig } from 'vite';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const here = path.dirname(fileURLToPath(import.meta.url));

// The browser app: web/ is the Vite root; it imports src/core directly so live work runs in the page.
export default defineConfig({
  root: here,
  base: './',
  resolve: {
    // The core reads CSV with csv-parse; its Node build needs Buffer, its browser build carries what it needs.
    alias: [{ find: /^csv-parse\/sync$/, replacement: 'csv-parse/browser/esm/sync' }],
  },
  build: {
    outDir: path.resolve(here, '../dist/web'),
    emptyOutDir: true,
    sourcemap: true,
    chunkSizeWarningLimit: 2000,
  },
  // The analysis worker is an ES module (it shares the core's chunks with the page).
  worker: { format: 'es' },
  server: { port: 5178, strictPort: false },
});
