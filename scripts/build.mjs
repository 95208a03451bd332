// The build, run once: each step (the WASM kernel, the TypeScript for the CLI and library with the
// JSON Schemas, the workbench) runs only when the content of its inputs changed since it last ran
// or one of its outputs is missing. `npm ci` builds; `npm start`, `npm test`, `npm run bench` and
// `npm link` then find nothing to do.
//
//   node scripts/build.mjs [wasm|ts|ui ...] [--force]
//
// Each step's inputs are hashed (SHA-256 over the paths and contents, plus the command); the hash
// is kept in build/.stamps/STEP.json after the step succeeds. Content, not time stamps: a checkout
// or a `touch` that changes nothing does not rebuild, and a changed file always does.

import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { copyFileSync, existsSync, mkdirSync, readFileSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
process.chdir(root);

const STEPS = {
  wasm: {
    what: 'the WASM kernel (asc)',
    inputs: ['assembly', 'asconfig.json', 'package-lock.json'],
    outputs: ['build/pronk.wasm'],
    run: () => tool('asc', ['assembly/index.ts', '--target', 'release']),
  },
  ts: {
    what: 'the CLI and library (tsc) and the JSON Schemas',
    inputs: [
      'src/index.ts', 'src/core', 'src/cli', 'src/worker', 'src/types', 'assembly/layout.ts', 'scenarios',
      'package.json', 'package-lock.json', 'tsconfig.json', 'tsconfig.build.json', 'scripts/build-schemas.mjs',
    ],
    outputs: ['dist/src/index.js', 'dist/src/index.d.ts', 'dist/src/cli/main.js', 'schemas/scenario.schema.json', 'schemas/study.schema.json', 'schemas/result.schema.json'],
    run: () => tool('tsc', ['-p', 'tsconfig.build.json']) && node('scripts/build-schemas.mjs'),
  },
  ui: {
    what: 'the workbench (vite)',
    inputs: ['src', 'assembly/layout.ts', 'build/pronk.wasm', 'scenarios', 'index.html', 'vite.config.ts', 'package.json', 'package-lock.json'],
    outputs: ['dist/workbench/index.html'],
    run: () => tool('vite', ['build', '--logLevel', 'warn']),
  },
};

const args = process.argv.slice(2);
const force = args.includes('--force');
const asked = args.filter((a) => !a.startsWith('--'));
for (const name of asked) {
  if (!(name in STEPS)) {
    console.error(`build: unknown step ${JSON.stringify(name)} (steps: ${Object.keys(STEPS).join(', ')})`);
    process.exit(2);
  }
}
// The steps in dependency order: ts and ui need the kernel's output.
const order = Object.keys(STEPS).filter((name) => asked.length === 0 || asked.includes(name));
if (order.some((name) => name !== 'wasm') && !order.includes('wasm') && !existsSync('build/pronk.wasm')) order.unshift('wasm');

for (const name of order) {
  const step = STEPS[name];
  const hash = inputHash(step);
  const stampFile = join('build', '.stamps', `${name}.json`);
  const stamp = readStamp(stampFile);
  const complete = step.outputs.every((file) => existsSync(file));
  if (!force && complete && stamp === hash) continue;
  console.error(`build: ${step.what}`);
  if (!step.run()) process.exit(1);
  mkdirSync(dirname(stampFile), { recursive: true });
  writeFileSync(stampFile, `${JSON.stringify({ inputs: hash })}\n`);
}
// dist/src/core/engine.js loads ../../build/pronk.wasm: keep the copy beside the compiled JS current.
if (order.includes('ts') || order.includes('wasm')) copyIfChanged('build/pronk.wasm', 'dist/build/pronk.wasm');

function inputHash(step) {
  const hash = createHash('sha256');
  hash.update(step.run.toString());
  for (const file of step.inputs.flatMap(filesUnder).sort()) {
    hash.update(`\0${file}\0`);
    hash.update(readFileSync(file));
  }
  return hash.digest('hex');
}

function filesUnder(path) {
  if (!existsSync(path)) return [];
  if (!statSync(path).isDirectory()) return [path];
  return readdirSync(path, { withFileTypes: true }).flatMap((entry) =>
    entry.name === 'node_modules' || entry.name.startsWith('.') ? [] : filesUnder(relative(root, join(root, path, entry.name))),
  );
}

function readStamp(file) {
  try {
    return JSON.parse(readFileSync(file, 'utf8')).inputs;
  } catch {
    return undefined;
  }
}

function copyIfChanged(from, to) {
  if (!existsSync(from)) return;
  if (existsSync(to) && readFileSync(from).equals(readFileSync(to))) return;
  mkdirSync(dirname(to), { recursive: true });
  copyFileSync(from, to);
}

// A tool from node_modules/.bin, run in the foreground; true when it succeeded.
function tool(name, toolArgs) {
  const bin = join(root, 'node_modules', '.bin', process.platform === 'win32' ? `${name}.cmd` : name);
  const result = spawnSync(bin, toolArgs, { stdio: 'inherit', shell: process.platform === 'win32' });
  if (result.error) console.error(`build: ${name}: ${result.error.message}`);
  return result.status === 0;
}

function node(script) {
  const result = spawnSync(process.execPath, [script], { stdio: 'inherit' });
  return result.status === 0;
}
