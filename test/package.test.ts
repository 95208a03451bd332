// The package as a user gets it: `npm pack` of this checkout (after the build that `npm test`
// runs first), installed with npm into an empty project in a temporary folder, offline — the
// package from its tarball, its dependencies linked from this checkout's node_modules (the same
// versions the lockfile pins). Then `import('pronk')` runs a short simulation, the type
// declarations check a small TypeScript user, the JSON Schemas resolve through `exports`, and
// the installed `pronk` command answers.

import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

const root = fileURLToPath(new URL('../', import.meta.url));
const built = existsSync(join(root, 'dist/src/index.js')) && existsSync(join(root, 'dist/src/index.d.ts'));
const npm = process.platform === 'win32' ? 'npm.cmd' : 'npm';

function run(command: string, args: string[], cwd: string) {
  const result = spawnSync(command, args, { cwd, encoding: 'utf8', env: { ...process.env, npm_config_update_notifier: 'false' }, timeout: 180_000 });
  if (result.status !== 0) throw new Error(`${command} ${args.join(' ')} failed (${result.status}):\n${result.stdout}\n${result.stderr}`);
  return result.stdout;
}

describe.skipIf(!built)('the packed package, installed in an empty project', () => {
  let folder = '';
  let app = '';
  let packed: { filename: string; files: { path: string }[] };

  beforeAll(() => {
    folder = mkdtempSync(join(tmpdir(), 'pronk-pack-'));
    app = join(folder, 'app');
    packed = JSON.parse(run(npm, ['pack', '--ignore-scripts', '--json', '--pack-destination', folder], root))[0];
    mkdirSync(app);
    writeFileSync(join(app, 'package.json'), `${JSON.stringify({ name: 'pronk-user', private: true, type: 'module' })}\n`);
    const manifest = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8'));
    const dependencies = Object.keys(manifest.dependencies ?? {}).map((name) => join(root, 'node_modules', name));
    run(npm, ['install', '--offline', '--no-audit', '--no-fund', '--ignore-scripts', join(folder, packed.filename), ...dependencies], app);
  }, 240_000);
  afterAll(() => {
    if (folder) rmSync(folder, { recursive: true, force: true });
  });

  it('holds the compiled library, its declarations, the kernel, the schemas, the licence and no tests', () => {
    const paths = packed.files.map((file) => file.path);
    for (const file of ['dist/src/index.js', 'dist/src/index.d.ts', 'dist/build/pronk.wasm', 'bin/pronk.js', 'schemas/scenario.schema.json', 'LICENSE', 'README.md']) {
      expect(paths, file).toContain(file);
    }
    expect(paths.filter((path) => path.startsWith('test/') || path.startsWith('src/'))).toEqual([]);
  });

  it("import('pronk') runs a short simulation of the demo robot", () => {
    writeFileSync(
      join(app, 'run.mjs'),
      [
        "const pronk = await import('pronk');",
        "const names = ['simulate', 'returnMap', 'basin', 'robustness', 'optimize', 'exportPolicy'];",
        "const scenario = JSON.parse((await import('node:fs')).readFileSync(new URL('./node_modules/pronk/scenarios/demo.json', import.meta.url), 'utf8'));",
        'const result = await pronk.simulate(scenario, { strides: 3 });',
        'console.log(JSON.stringify({ kinds: names.map((n) => typeof pronk[n]), status: result.outcome.status, apexes: result.apexes.length, version: pronk.PRONK_VERSION }));',
      ].join('\n'),
    );
    const out = JSON.parse(run(process.execPath, ['run.mjs'], app));
    expect(out.kinds).toEqual(Array(6).fill('function'));
    expect(out.status).toBe('completed');
    expect(out.apexes).toBe(4); // the start apex and one per stride
    expect(out.version).toBe(JSON.parse(readFileSync(join(root, 'package.json'), 'utf8')).version);
  });

  it('bad input is an InputError naming the field', () => {
    writeFileSync(
      join(app, 'bad.mjs'),
      [
        "import { simulate, InputError } from 'pronk';",
        "try { await simulate({ body: { mass_kg: -1 } }); } catch (error) { console.log(JSON.stringify({ input: error instanceof InputError, paths: error.issues.map((i) => i.path) })); }",
      ].join('\n'),
    );
    const out = JSON.parse(run(process.execPath, ['bad.mjs'], app));
    expect(out.input).toBe(true);
    expect(out.paths).toContain('body.mass_kg');
  });

  it('the type declarations check a TypeScript user (and catch a wrong option)', () => {
    writeFileSync(
      join(app, 'tsconfig.json'),
      JSON.stringify({ compilerOptions: { module: 'nodenext', moduleResolution: 'nodenext', target: 'es2022', strict: true, noEmit: true, skipLibCheck: true, types: [] } }),
    );
    const good = [
      "import { simulate, robustness, type SimulationResult } from 'pronk';",
      'export async function apexes(scenario: unknown): Promise<number[]> {',
      '  const result: SimulationResult = await simulate(scenario, { strides: 5 });',
      '  await robustness(scenario, { rollouts: 10, sigma_m: 0.01, seed: 1 });',
      '  return result.apexes.map((apex) => apex.height_m);',
      '}',
    ].join('\n');
    writeFileSync(join(app, 'use.ts'), good);
    const tsc = join(root, 'node_modules', 'typescript', 'bin', 'tsc');
    const ok = spawnSync(process.execPath, [tsc, '-p', '.'], { cwd: app, encoding: 'utf8' });
    expect(ok.stdout + ok.stderr).toBe('');
    expect(ok.status).toBe(0);
    writeFileSync(join(app, 'use.ts'), good.replace('{ strides: 5 }', "{ strides: 'five' }"));
    const wrong = spawnSync(process.execPath, [tsc, '-p', '.'], { cwd: app, encoding: 'utf8' });
    expect(wrong.status).not.toBe(0);
    expect(wrong.stdout).toMatch(/use\.ts.*strides|string.*number/s);
  });

  it('the JSON Schemas resolve through the package exports', () => {
    const out = run(process.execPath, ['-e', "console.log(require.resolve('pronk/schemas/study.schema.json'))"], app).trim();
    expect(JSON.parse(readFileSync(out, 'utf8')).title).toBe('Pronk study');
  });

  it('the installed pronk command runs', () => {
    const bin = join(app, 'node_modules', '.bin', 'pronk');
    const out = spawnSync(bin, ['simulate', '--strides', '2', '--json'], { cwd: app, encoding: 'utf8' });
    expect(out.stderr).toBe('pronk simulate: no FILE given; running the built-in demo scenario (scenarios/demo.json)\n');
    expect(out.status).toBe(0);
    expect(JSON.parse(out.stdout)).toMatchObject({ format: 'pronk-simulate', outcome: { strides_completed: 2 } });
    const version = spawnSync(bin, ['--version'], { cwd: app, encoding: 'utf8' });
    expect(version.stdout).toBe(`pronk ${JSON.parse(readFileSync(join(root, 'package.json'), 'utf8')).version}\n`);
  });
});
