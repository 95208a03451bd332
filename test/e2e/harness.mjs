// Running the built workbench in a real browser, for the end-to-end tests and the long-task bench:
// build it when its sources changed since the last build, serve it with `vite preview` on a free
// localhost port, and drive Debian's /usr/bin/chromium through playwright-core (never a
// downloaded browser; the flags below keep it off the network).

import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

export const ROOT = fileURLToPath(new URL('../..', import.meta.url));
export const CHROMIUM = '/usr/bin/chromium';
export const BUILT = join(ROOT, 'dist/workbench/index.html');
const VITE = join(ROOT, 'node_modules/vite/bin/vite.js');

export const CHROMIUM_ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

export function haveChromium() {
  return existsSync(CHROMIUM);
}

/** Builds the workbench when its inputs changed since it was built (scripts/build.mjs: content, not time stamps). */
export function ensureBuilt(log = () => undefined) {
  const check = spawnSync(process.execPath, ['scripts/build.mjs', 'ui', '--check'], { cwd: ROOT, encoding: 'utf8', env: cleanEnv() });
  if (check.status === 0 && check.stdout.trim() === '') return;
  log('building the workbench (its sources changed since the last build)');
  run(process.execPath, ['scripts/build.mjs', 'ui']);
}

// The build and the server must not see the test runner's environment: with VITEST set, the
// Svelte plugins configure for tests (server-side Svelte), not for the browser.
function cleanEnv() {
  const env = { ...process.env };
  for (const key of Object.keys(env)) if (key.startsWith('VITEST') || key === 'TEST' || key === 'NODE_ENV') delete env[key];
  return env;
}

function run(command, args) {
  const r = spawnSync(command, args, { cwd: ROOT, encoding: 'utf8', env: cleanEnv() });
  if (r.status !== 0) throw new Error(`${command} ${args.join(' ')} failed:\n${r.stdout}\n${r.stderr}`);
}

export function freePort() {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const { port } = server.address();
      server.close(() => resolve(port));
    });
  });
}

/** `vite preview` on a free port; resolves once it answers. stop() ends exactly that process. */
export async function startPreview() {
  const port = await freePort();
  const child = spawn(process.execPath, [VITE, 'preview', '--port', String(port), '--strictPort', '--host', '127.0.0.1'], {
    cwd: ROOT,
    env: cleanEnv(),
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let output = '';
  child.stdout.on('data', (d) => (output += d));
  child.stderr.on('data', (d) => (output += d));
  const url = `http://127.0.0.1:${port}/`;
  const deadline = Date.now() + 30_000;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`vite preview exited (${child.exitCode}):\n${output}`);
    try {
      const response = await fetch(url);
      if (response.ok) break;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline) {
      child.kill('SIGTERM');
      throw new Error(`vite preview did not answer on ${url} within 30 s:\n${output}`);
    }
    await new Promise((r) => setTimeout(r, 150));
  }
  return {
    url,
    async stop() {
      if (child.exitCode !== null) return;
      const exited = new Promise((r) => child.once('exit', r));
      child.kill('SIGTERM');
      await Promise.race([exited, new Promise((r) => setTimeout(r, 3000))]);
      if (child.exitCode === null) child.kill('SIGKILL');
    },
  };
}

/** A fresh browser profile in a temporary folder; close() also removes the folder. */
export async function launchBrowser(options = {}) {
  const { chromium } = await import('playwright-core');
  const profile = mkdtempSync(join(tmpdir(), 'pronk-e2e-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    args: CHROMIUM_ARGS,
    viewport: { width: 1280, height: 800 },
    acceptDownloads: true,
    ...options,
  });
  return {
    context,
    async close() {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    },
  };
}
