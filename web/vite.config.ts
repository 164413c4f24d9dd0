import { defineConfig } from 'vite';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const here = path.dirname(fileURLToPath(import.meta.url));

// The browser app: web/ is the Vite root; it imports src/core directly so live work runs in the page.
export default defineConfig({
  root: here,
  base: './',
  build: {
    outDir: path.resolve(here, '../dist/web'),
    emptyOutDir: true,
    sourcemap: true,
    chunkSizeWarningLimit: 2000,
  },
  server: { port: 5178, strictPort: false },
});
