// The build, run once: each step (the WASM kernel, the TypeScript for the CLI and library with the
// JSON Schemas, the workbench) runs only when the content of its inputs changed since it last ran
// or one of its outputs is missing. `npm ci` builds; `npm start`, `npm test`, `npm run bench` and
// `npm link` then find nothing to do.
//
//   node scripts/build.mjs [wasm|ts|ui ...] [--force | --check]
//
// --check runs nothing: it prints the steps that would run, one a line, and exits 0.
//
// Each step's inputs are hashed (SHA-256 over the paths and contents, plus the command); the hash
// is kept in build/.stamps/STEP.json after the step succeeds. Content, not time stamps: a checkout
// or a `touch` that changes nothing does not rebuild, and a changed file always does.

import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { copyFileSync, existsSync, mkdirSync, readFileSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..');

export const STEPS = {
  wasm: {
    what: 'the WASM kernel (asc)',
    inputs: ['assembly', 'asconfig.json', 'package-lock.json'],
    outputs: ['build/pronk.wasm'],
    run: () => tool('asc', ['assembly/index.ts', '--target', 'release']),
  },
  ts: {
    what: 'the CLI and library (tsc, zod as one module) and the JSON Schemas',
    inputs: [
      'src/index.ts', 'src/core', 'src/cli', 'src/worker', 'src/types', 'assembly/layout.ts', 'scenarios',
      'package.json', 'package-lock.json', 'tsconfig.json', 'tsconfig.build.json', 'scripts/build-schemas.mjs', 'scripts/bundle-zod.mjs',
    ],
    outputs: ['dist/src/index.js', 'dist/src/index.d.ts', 'dist/src/cli/main.js', 'dist/vendor/zod.js', 'schemas/scenario.schema.json', 'schemas/study.schema.json', 'schemas/result.schema.json'],
    run: () => tool('tsc', ['-p', 'tsconfig.build.json']) && node('scripts/bundle-zod.mjs') && node('scripts/build-schemas.mjs'),
  },
  ui: {
    what: 'the workbench (vite)',
    inputs: ['src', 'assembly/layout.ts', 'build/pronk.wasm', 'scenarios', 'index.html', 'vite.config.ts', 'package.json', 'package-lock.json'],
    outputs: ['dist/workbench/index.html'],
    run: () => tool('vite', ['build', '--logLevel', 'warn']),
  },
};

/** The steps (of `asked`, in build order) whose inputs changed since they last ran, or whose outputs are missing. */
export function staleSteps(root, asked = []) {
  const order = Object.keys(STEPS).filter((name) => asked.length === 0 || asked.includes(name));
  // ts and ui need the kernel's output
  if (order.some((name) => name !== 'wasm') && !order.includes('wasm') && !existsSync(join(root, 'build/pronk.wasm'))) order.unshift('wasm');
  return order.filter((name) => {
    const step = STEPS[name];
    const complete = step.outputs.every((file) => existsSync(join(root, file)));
    return !complete || readStamp(root, name) !== inputHash(root, step);
  });
}

function main(args) {
  const asked = args.filter((a) => !a.startsWith('--'));
  for (const name of asked) {
    if (!(name in STEPS)) {
      console.error(`build: unknown step ${JSON.stringify(name)} (steps: ${Object.keys(STEPS).join(', ')})`);
      return 2;
    }
  }
  process.chdir(ROOT);
  const steps = args.includes('--force') ? Object.keys(STEPS).filter((name) => asked.length === 0 || asked.includes(name)) : staleSteps(ROOT, asked);
  if (args.includes('--check')) {
    for (const name of steps) console.log(name);
    return 0;
  }
  for (const name of steps) {
    const step = STEPS[name];
    console.error(`build: ${step.what}`);
    if (!step.run()) return 1;
    const stampFile = join(ROOT, 'build', '.stamps', `${name}.json`);
    mkdirSync(dirname(stampFile), { recursive: true });
    writeFileSync(stampFile, `${JSON.stringify({ inputs: inputHash(ROOT, step) })}\n`);
  }
  // dist/src/core/engine.js loads ../../build/pronk.wasm: keep the copy beside the compiled JS current.
  copyIfChanged('build/pronk.wasm', 'dist/build/pronk.wasm');
  return 0;
}

/** SHA-256 over the step's command and the paths and contents of its input files. */
export function inputHash(root, step) {
  const hash = createHash('sha256');
  hash.update(step.run.toString());
  for (const file of step.inputs.flatMap((input) => filesUnder(root, input)).sort()) {
    hash.update(`\0${file}\0`);
    hash.update(readFileSync(join(root, file)));
  }
  return hash.digest('hex');
}

// Files under a path relative to root (itself, if a file), skipping dot files and node_modules.
function filesUnder(root, path) {
  const full = join(root, path);
  if (!existsSync(full)) return [];
  if (!statSync(full).isDirectory()) return [path];
  return readdirSync(full, { withFileTypes: true }).flatMap((entry) =>
    entry.name === 'node_modules' || entry.name.startsWith('.') ? [] : filesUnder(root, join(path, entry.name)),
  );
}

function readStamp(root, name) {
  try {
    return JSON.parse(readFileSync(join(root, 'build', '.stamps', `${name}.json`), 'utf8')).inputs;
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
  const bin = join(ROOT, 'node_modules', '.bin', process.platform === 'win32' ? `${name}.cmd` : name);
  const result = spawnSync(bin, toolArgs, { stdio: 'inherit', shell: process.platform === 'win32' });
  if (result.error) console.error(`build: ${name}: ${result.error.message}`);
  return result.status === 0;
}

function node(script) {
  const result = spawnSync(process.execPath, [script], { stdio: 'inherit' });
  return result.status === 0;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) process.exitCode = main(process.argv.slice(2));
