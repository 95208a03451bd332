// Put the WASM kernel beside the compiled CLI: dist/src/core/engine.js looks for
// it at ../../build/pronk.wasm, i.e. dist/build/pronk.wasm.
import { mkdirSync, copyFileSync } from 'node:fs';
mkdirSync('dist/build', { recursive: true });
copyFileSync('build/pronk.wasm', 'dist/build/pronk.wasm');
