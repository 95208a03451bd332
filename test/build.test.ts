// The build runs once (scripts/build.mjs): after `npm test`'s own build nothing is stale, so
// `npm start`, `pretest` and `npm link` do not build again; a step reruns only when the content of
// one of its inputs changed (a time stamp alone does not count) or an output is missing. Checked on
// a copy of the inputs, stamps and outputs in a temporary folder, so the checkout is never edited.

import { spawnSync } from 'node:child_process';
import { appendFileSync, cpSync, existsSync, mkdtempSync, rmSync, utimesSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { STEPS, staleSteps } from '../scripts/build.mjs';

const root = fileURLToPath(new URL('../', import.meta.url));
const steps = STEPS;
const built = Object.values(steps).every((step) => step.outputs.every((file) => existsSync(join(root, file))));

describe.skipIf(!built)('the incremental build', () => {
  it('after the build, nothing is stale: `node scripts/build.mjs` runs no step', () => {
    const check = spawnSync(process.execPath, ['scripts/build.mjs', '--check'], { cwd: root, encoding: 'utf8' });
    expect(check.status).toBe(0);
    expect(check.stdout).toBe('');
  });

  it('npm start, pretest, prepare and bench build through it (no unconditional rebuild)', async () => {
    const { scripts } = (await import('../package.json', { with: { type: 'json' } })).default as { scripts: Record<string, string> };
    for (const name of ['start', 'pretest', 'prepare', 'bench', 'build']) expect(scripts[name]).toMatch(/^node scripts\/build\.mjs\b/);
  });

  describe('on a copy', () => {
    let copy = '';
    beforeAll(() => {
      copy = mkdtempSync(join(tmpdir(), 'pronk-build-'));
      const paths = new Set(['build/.stamps', ...Object.values(steps).flatMap((step) => [...step.inputs, ...step.outputs])]);
      for (const path of paths) {
        if (existsSync(join(root, path))) cpSync(join(root, path), join(copy, path), { recursive: true });
      }
    });
    afterAll(() => {
      if (copy) rmSync(copy, { recursive: true, force: true });
    });

    it('is current as copied', () => expect(staleSteps(copy)).toEqual([]));

    it('a newer time stamp with the same content rebuilds nothing', () => {
      const later = new Date(Date.now() + 60_000);
      utimesSync(join(copy, 'src/cli/main.ts'), later, later);
      utimesSync(join(copy, 'assembly/layout.ts'), later, later);
      expect(staleSteps(copy)).toEqual([]);
    });

    it('a changed TypeScript source reruns the TypeScript and workbench steps, not the kernel', () => {
      appendFileSync(join(copy, 'src/cli/main.ts'), '\n// changed\n');
      expect(staleSteps(copy)).toEqual(['ts', 'ui']);
      expect(staleSteps(copy, ['ts'])).toEqual(['ts']);
    });

    it('a missing output reruns its step', () => {
      rmSync(join(copy, 'schemas/study.schema.json'));
      rmSync(join(copy, 'build/pronk.wasm'));
      expect(staleSteps(copy)).toEqual(['wasm', 'ts', 'ui']);
    });
  });
});
