/**
 * The browser bundle of the live report: src/page/live.ts with the library it calls (layout
 * loading, the solver, the analyses and the renderers) as one self-contained script,
 * dist/page/live.js, that the CLI inlines into report.html (src/cli/pageScript.ts). The drawing
 * primitives build their elements on svgdom in Node; in the page they use the browser's own
 * document (src/page/svgdomWindow.ts), and the file readers a stand-in that reads nothing
 * (src/page/noFiles.ts). `npm run build` runs it after tsc.
 */
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vite';

export default defineConfig({
  resolve: {
    alias: {
      svgdom: fileURLToPath(new URL('./src/page/svgdomWindow.ts', import.meta.url)),
      'node:fs': fileURLToPath(new URL('./src/page/noFiles.ts', import.meta.url)),
    },
  },
  logLevel: 'warn',
  build: {
    outDir: 'dist/page',
    emptyOutDir: true,
    target: 'es2022',
    minify: true,
    lib: { entry: fileURLToPath(new URL('./src/page/live.ts', import.meta.url)), formats: ['iife'], name: 'stratiflowPage', fileName: () => 'live.js' },
  },
});
