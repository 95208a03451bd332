// One config for the workbench (Vite: `npm run build:ui`, `vite preview`) and the tests (vitest).
import { svelte } from '@sveltejs/vite-plugin-svelte';
import { svelteTesting } from '@testing-library/svelte/vite';
import type { Plugin } from 'vite';
import { defineConfig } from 'vitest/config';

// SharedArrayBuffer (the optimizer's cancel flag) needs a cross-origin isolated page.
const isolation = {
  'Cross-Origin-Opener-Policy': 'same-origin',
  'Cross-Origin-Embedder-Policy': 'require-corp',
};

// Node-only branches that the browser never takes (the Node worker pool behind a lazy import,
// readStudyFile, nlopt-js's Node loader) import Node built-ins, which Vite stubs for the browser
// and reports once per module. Those reports, and only for these importers, are left out.
const NODE_ONLY_IMPORTERS = [
  'src/worker/paths.ts',
  'src/worker/pool.ts',
  'src/core/optimize/study.ts',
  'src/core/scenario.ts',
  'src/core/export/input.ts',
  'node_modules/nlopt-js/',
];
function quietNodeOnlyBuiltins(): Plugin {
  return {
    name: 'pronk-quiet-node-only-builtins',
    onLog(_level, log) {
      const message = typeof log === 'string' ? log : log.message;
      if (message.includes('externalized for browser compatibility') && NODE_ONLY_IMPORTERS.some((m) => message.includes(m))) return false;
    },
  };
}

export default defineConfig({
  plugins: [svelte({ configFile: false }), svelteTesting(), quietNodeOnlyBuiltins()],
  // nlopt-js reads `global` (webpack's Node shim) in a browser worker.
  define: { global: 'globalThis' },
  server: { headers: isolation },
  preview: { headers: isolation },
  worker: { format: 'es', plugins: () => [quietNodeOnlyBuiltins()] },
  build: {
    outDir: 'dist/workbench',
    emptyOutDir: true,
    target: 'es2022',
    chunkSizeWarningLimit: 2000,
  },
  test: {
    include: ['test/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
  },
});
