// Part of the `ts` build step, after tsc: zod 4 ships as about 95 ES modules, and Node resolves,
// reads and compiles each one on every start of `pronk` and of every worker thread (about 40 ms of
// CPU per start, measured with --cpu-prof). This writes the one export the sources use (`z`) as a
// single module, dist/vendor/zod.js (rolldown, the bundler vite already brings), and points the
// compiled `from 'zod'` imports in dist/ at it. The same zod version and code (the lock file is an
// input of the step); the sources, the tests and the workbench still import the package itself,
// and the .d.ts files keep `'zod'` for its types.

import { mkdirSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join, relative, sep } from 'node:path';
import { fileURLToPath } from 'node:url';
import { build } from 'rolldown';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..');
const DIST = join(ROOT, 'dist');
const OUT = join(DIST, 'vendor', 'zod.js');
const ENTRY = join(DIST, 'vendor', 'zod-entry.js');

mkdirSync(dirname(OUT), { recursive: true });
writeFileSync(ENTRY, "export { z } from 'zod';\n");
try {
  await build({ cwd: ROOT, input: ENTRY, output: { file: OUT, format: 'esm' }, logLevel: 'warn' });
} finally {
  rmSync(ENTRY, { force: true });
}
const version = JSON.parse(readFileSync(join(ROOT, 'node_modules', 'zod', 'package.json'), 'utf8')).version;
writeFileSync(OUT, `// zod ${version} (MIT licence, https://zod.dev), bundled into one module by scripts/bundle-zod.mjs\n${readFileSync(OUT, 'utf8')}`);

const IMPORT = /(\bfrom\s*|\bimport\s*\(\s*|\bimport\s+)(['"])zod\2/g;
let importers = 0; // compiled modules that import zod (a second run finds them already pointed at the bundle)
for (const file of jsFiles(join(DIST, 'src'))) {
  const text = readFileSync(file, 'utf8');
  if (!text.includes('zod')) continue;
  if (text.includes('vendor/zod.js')) importers++;
  let target = relative(dirname(file), OUT).split(sep).join('/');
  if (!target.startsWith('.')) target = `./${target}`;
  const next = text.replace(IMPORT, (_, lead, quote) => `${lead}${quote}${target}${quote}`);
  if (next !== text) {
    writeFileSync(file, next);
    importers++;
  }
}
if (importers === 0) {
  console.error('bundle-zod: no compiled module imports zod; the build has changed under this script');
  process.exitCode = 1;
}

function jsFiles(dir) {
  return readdirSync(dir, { withFileTypes: true }).flatMap((entry) =>
    entry.isDirectory() ? jsFiles(join(dir, entry.name)) : entry.name.endsWith('.js') ? [join(dir, entry.name)] : [],
  );
}
