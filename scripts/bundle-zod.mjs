// Part of the `ts` build step, after tsc: zod 4 ships as about 95 ES modules, and Node resolves,
// reads and compiles each one on every start of `pronk` and of every worker thread (about 40 ms of
// CPU per start, measured with --cpu-prof). This writes the one export the sources use (`z`, with
// the members they use) as a single module, dist/vendor/zod.js (rolldown, the bundler vite already
// brings), and points the compiled `from 'zod'` imports in dist/ at it. The same zod version and code (the lock file is an
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
// `import { z } from 'zod'` as tsc emits it, or already pointed at the bundle by an earlier run
const IMPORT = /(\bfrom\s*|\bimport\s*\(\s*|\bimport\s+)(['"])zod\2/g;
const IMPORTER = /\bfrom\s*['"](zod|(\.\.?\/)+vendor\/zod\.js)['"]/;

mkdirSync(dirname(OUT), { recursive: true });
// The members of `z` that the compiled modules use (types are erased by then): the bundle keeps
// only what they reach (about 180 kB of zod's 650), with zod's own start-up (its English messages).
const importers = jsFiles(join(DIST, 'src')).filter((file) => IMPORTER.test(readFileSync(file, 'utf8')));
const used = new Set(importers.flatMap((file) => [...readFileSync(file, 'utf8').matchAll(/\bz\.([A-Za-z_$][\w$]*)/g)].map((m) => m[1])));
const { z } = await import('zod');
const missing = [...used].filter((name) => z[name] === undefined);
if (importers.length === 0 || missing.length > 0) {
  console.error(
    importers.length === 0
      ? 'bundle-zod: no compiled module imports zod; the build has changed under this script'
      : `bundle-zod: the compiled modules use z.${missing.join(', z.')}, which zod does not export as a value`,
  );
  process.exit(1);
}
const members = [...used].sort().map((name) => `  ${name}: zod.${name},`);
writeFileSync(ENTRY, `import { z as zod } from 'zod';\nexport const z = Object.freeze({\n${members.join('\n')}\n});\n`);
try {
  await build({ cwd: ROOT, input: ENTRY, output: { file: OUT, format: 'esm' }, logLevel: 'warn' });
} finally {
  rmSync(ENTRY, { force: true });
}
const version = JSON.parse(readFileSync(join(ROOT, 'node_modules', 'zod', 'package.json'), 'utf8')).version;
writeFileSync(OUT, `// zod ${version} (MIT licence, https://zod.dev), bundled into one module by scripts/bundle-zod.mjs\n${readFileSync(OUT, 'utf8')}`);

for (const file of importers) {
  const text = readFileSync(file, 'utf8');
  let target = relative(dirname(file), OUT).split(sep).join('/');
  if (!target.startsWith('.')) target = `./${target}`;
  const next = text.replace(IMPORT, (_, lead, quote) => `${lead}${quote}${target}${quote}`);
  if (next !== text) writeFileSync(file, next);
}

function jsFiles(dir) {
  return readdirSync(dir, { withFileTypes: true }).flatMap((entry) =>
    entry.isDirectory() ? jsFiles(join(dir, entry.name)) : entry.name.endsWith('.js') ? [join(dir, entry.name)] : [],
  );
}
