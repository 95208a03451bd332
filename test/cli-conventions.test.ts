// The command line's conventions, the same in every command: `pronk --help` and `--version` start
// without loading any command (nor the validators or the engine); every `--json` output starts
// with format, format_version, model and section and is the only thing on stdout; stderr holds only
// status lines ("pronk COMMAND: ...") and, on a terminal only, one progress line redrawn in place
// and erased at the end.

import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { main } from '../src/cli/main.js';
import { startProgress, status } from '../src/cli/progress.js';
import { closeWorkerPool } from '../src/worker/pool.js';

const root = fileURLToPath(new URL('../', import.meta.url));
const built = (() => {
  try {
    readFileSync(join(root, 'dist/src/cli/main.js'));
    readFileSync(join(root, 'dist/build/pronk.wasm'));
    return true;
  } catch {
    return false;
  }
})();
const folder = mkdtempSync(join(tmpdir(), 'pronk-conventions-'));
afterAll(async () => {
  rmSync(folder, { recursive: true, force: true });
  await closeWorkerPool();
});

function spawnPronk(args: string[], extra: { nodeArgs?: string[] } = {}) {
  const run = spawnSync(process.execPath, [...(extra.nodeArgs ?? []), join(root, 'bin/pronk.js'), ...args], {
    cwd: folder,
    encoding: 'utf8',
    maxBuffer: 64 << 20,
    env: { ...process.env, PRONK_DEBUG: '1' },
  });
  return { code: run.status, stdout: run.stdout, stderr: run.stderr };
}

/** A writable stream that records what it got; a terminal of `columns` when `tty`. */
function stream(tty: boolean, columns = 80) {
  const chunks: string[] = [];
  return { chunks, isTTY: tty, columns, write: (chunk: string) => chunks.push(chunk), text: () => chunks.join('') };
}

describe.skipIf(!built)('start-up', () => {
  // A module-loading hook (node:module register) lists every file the process loads.
  // biome-ignore lint/suspicious/noTemplateCurlyInString: the hook's own source, a template literal inside
  writeFileSync(join(folder, 'hooks.mjs'), "export async function load(url, context, next) {\n  if (url.startsWith('file:')) process.stderr.write(`loaded ${url}\\n`);\n  return next(url, context);\n}\n");
  writeFileSync(join(folder, 'register.mjs'), "import { register } from 'node:module';\nregister('./hooks.mjs', import.meta.url);\n");
  const loaded = (args: string[]) => {
    const run = spawnPronk(args, { nodeArgs: ['--import', join(folder, 'register.mjs')] });
    expect(run.code).toBe(0);
    return run.stderr
      .split('\n')
      .filter((line) => line.startsWith('loaded '))
      .map((line) => fileURLToPath(line.slice(7)).slice(root.length));
  };

  it.each([['--help'], ['--version'], ['help']])('pronk %s loads no command, no validator, no dependency', (flag) => {
    const files = loaded([flag]);
    expect(files).toContain('dist/src/cli/main.js');
    expect(files.filter((file) => file.includes('node_modules'))).toEqual([]);
    const commands = ['simulate', 'map', 'scan', 'basin', 'stepdown', 'robustness', 'optimize', 'deadbeat', 'export', 'merge'];
    expect(files.filter((file) => commands.some((name) => file === `dist/src/cli/${name}.js`))).toEqual([]);
    expect(files.filter((file) => /scenario|engine|zod/.test(file))).toEqual([]);
    expect(files.length).toBeLessThanOrEqual(10);
  });

  it('a command loads only its own module among the commands', () => {
    const files = loaded(['simulate', '--help']);
    expect(files).toContain('dist/src/cli/simulate.js');
    expect(files.filter((file) => /^dist\/src\/cli\/(map|scan|basin|stepdown|optimize|deadbeat|export|merge)\.js$/.test(file))).toEqual([]);
  });
});

describe('the progress line', () => {
  const clock = () => {
    let t = 0;
    return { now: () => t, advance: (ms: number) => (t += ms) };
  };
  const io = (stderr: ReturnType<typeof stream>) => ({ stdout: stream(false), stderr, env: {} });

  it('is not drawn when stderr is not a terminal (a pipe or a log file), nor on a dumb terminal', () => {
    for (const [tty, env] of [[false, {}], [true, { TERM: 'dumb' }]] as const) {
      const stderr = stream(tty);
      const t = clock();
      const progress = startProgress({ stdout: stream(false), stderr, env }, 'basin', { now: t.now });
      t.advance(1000);
      progress.update(5, 10);
      progress.done();
      expect(stderr.text()).toBe('');
    }
  });

  it('waits a quarter second, redraws in place at most every 100 ms, and is erased at the end', () => {
    const stderr = stream(true);
    const t = clock();
    const progress = startProgress(io(stderr), 'basin', { unit: 'rollouts', now: t.now });
    progress.update(1, 100);
    expect(stderr.chunks).toEqual([]); // a quick run shows nothing
    t.advance(300);
    progress.update(10, 100);
    t.advance(50);
    progress.update(11, 100); // within 100 ms: not redrawn
    t.advance(60);
    progress.update(12, 100);
    expect(stderr.chunks).toEqual([
      '\rpronk basin: 10 of 100 rollouts (10 %), 0 s\u001b[K',
      '\rpronk basin: 12 of 100 rollouts (12 %), 0 s\u001b[K',
    ]);
    t.advance(2600);
    progress.update(50, 100);
    expect(stderr.chunks.at(-1)).toBe('\rpronk basin: 50 of 100 rollouts (50 %), about 3 s left, 3 s\u001b[K');
    progress.update(100, 100); // the end is always drawn
    expect(stderr.chunks.at(-1)).toMatch(/100 of 100 rollouts \(100 %\)/);
    progress.done();
    expect(stderr.chunks.at(-1)).toBe('\r\u001b[K');
  });

  it('names its phases, counts without a total, and never outgrows the terminal', () => {
    const stderr = stream(true, 40);
    const t = clock();
    const progress = startProgress(io(stderr), 'deadbeat', { unit: 'rollouts', now: t.now });
    t.advance(1000);
    progress.phase('solving the table');
    expect(stderr.chunks.at(-1)).toBe('\rpronk deadbeat: solving the table, 1 s\u001b[K');
    progress.phase('comparing with the best fixed angle and retraction', 5000);
    const line = stderr.chunks.at(-1)!.replace('\r', '').replace('\u001b[K', '');
    expect(line.length).toBeLessThanOrEqual(39);
    expect(line.endsWith('…')).toBe(true);
    progress.done();
  });

  it('a status line steps around it: the line is erased, the status written, the line drawn again', () => {
    const stderr = stream(true);
    const t = clock();
    const cli = io(stderr);
    const progress = startProgress(cli, 'optimize', { unit: 'evaluations', now: t.now });
    t.advance(500);
    progress.update(3, 10);
    status(cli, 'optimize', 'stopping');
    expect(stderr.chunks.slice(-3)).toEqual(['\r\u001b[K', 'pronk optimize: stopping\n', '\rpronk optimize: 3 of 10 evaluations (30 %), 1 s\u001b[K']);
    progress.done();
    status(cli, 'optimize', 'result written to r.json');
    expect(stderr.chunks.slice(-2)).toEqual(['\r\u001b[K', 'pronk optimize: result written to r.json\n']);
  });

  it('a run on a terminal shows progress on stderr only, erased before the result is printed', async () => {
    const stdout = stream(true);
    const stderr = stream(true);
    const scenario = join(root, 'scenarios/demo.json');
    // 25600 cells x 30 strides: well over the quarter second before the line is first drawn, also
    // with the kernel's four-lane batches (about 0.8 million strides per CPU-second)
    const code = await main(['basin', scenario, '--heights', '0.4:0.7:160', '--speeds', '1:2.5:160', '--workers', '1', '--json'], { stdout, stderr, env: {} });
    expect(code).toBe(0);
    expect(stdout.text()).not.toContain('\r');
    expect(JSON.parse(stdout.text()).format).toBe('pronk-basin');
    expect(stderr.chunks.length).toBeGreaterThan(1);
    const ERASE = '\u001b[K'; // erase to the end of the line
    for (const chunk of stderr.chunks) {
      expect(chunk.startsWith('\r') && chunk.endsWith(ERASE), JSON.stringify(chunk)).toBe(true);
      expect(chunk.slice(1, -ERASE.length)).toMatch(/^(pronk basin: \d+ of 25600 rollouts .*)?$/);
    }
    expect(stderr.chunks.at(-1)).toBe('\r\u001b[K');
  }, 120_000);
});

describe.skipIf(!built)('every --json output describes itself; stdout holds only the result', () => {
  const demo = join(root, 'scenarios/demo.json');
  const study = join(folder, 'study.json');
  writeFileSync(
    study,
    JSON.stringify({
      scenario: JSON.parse(readFileSync(demo, 'utf8')),
      free_parameters: [{ path: 'policy.angle.rate_deg_per_s', lower: 0, upper: 80 }],
      objective: { terms: [{ kind: 'survival', terrain: 'random_walk', sigma_m: 0.005, rollouts: 10, strides: 5 }] },
      search: { method: 'COBYLA', max_evaluations: 6, restarts: 1 },
      seed: 1,
      holdout: { seed: 2, rollouts: 20 },
    }),
  );
  const header = { format_version: 1, model: 'slip', section: 'flight_apex' };
  const cases: [string, string[], Record<string, unknown>][] = [
    ['simulate', [demo, '--strides', '2'], { format: 'pronk-simulate', ...header }],
    ['map', [demo, '--samples', '21'], { format: 'pronk-map', ...header }],
    ['scan', [demo, '--x', 'policy.angle.attack_at_apex_deg:62:64:2', '--y', 'policy.angle.rate_deg_per_s:30:40:2', '--samples', '21', '--workers', '1'], { format: 'pronk-scan', ...header }],
    ['basin', [demo, '--heights', '0.45:0.5:2', '--speeds', '1.8:2:2', '--strides', '5', '--workers', '1'], { format: 'pronk-basin', ...header }],
    ['stepdown', [demo, '--after', '3'], { format: 'pronk-stepdown', ...header }],
    ['robustness', [demo, '--sigma', '0.005', '--rollouts', '10', '--strides', '5', '--workers', '1'], { format: 'pronk-robustness', ...header }],
    ['deadbeat', [demo, '--ground=-0.02:0.01', '--knots', '3'], { format: 'pronk-deadbeat', ...header }],
    ['export', [demo, '--format', 'csv', '--out', 'policy.csv'], { format: 'pronk-export', ...header, file_format: 'csv' }],
    ['optimize', [study, '--workers', '1'], { format: 'pronk-result', format_version: 1, kind: 'optimization', model: 'slip' }],
  ];
  for (const [command, args, expected] of cases) {
    it(`pronk ${command} --json`, () => {
      const run = spawnPronk([command, ...args, '--json']);
      expect(run.code, run.stderr).toBe(0);
      const out = JSON.parse(run.stdout); // stdout is exactly one JSON value
      expect(out).toMatchObject(expected);
      expect(Object.keys(out).slice(0, 2)).toEqual(['format', 'format_version']);
      for (const line of run.stderr.split('\n').filter(Boolean)) expect(line).toMatch(new RegExp(`^pronk ${command}: `));
    }, 120_000);
  }

  it('pronk merge --json prints what the sharded command prints on one machine, header included', () => {
    const args = [demo, '--heights', '0.45:0.5:3', '--speeds', '1.8:2:2', '--strides', '5', '--workers', '1'];
    for (const shard of ['1/2', '2/2']) {
      const run = spawnPronk(['basin', ...args, '--shard', shard, '--out', `part-${shard[0]}.json`]);
      expect(run.code, run.stderr).toBe(0);
      expect(run.stderr).toMatch(new RegExp(`^pronk basin: shard ${shard} .* written to part-${shard[0]}.json\\n$`));
    }
    const merged = spawnPronk(['merge', 'part-1.json', 'part-2.json', '--json']);
    const whole = spawnPronk(['basin', ...args, '--json']);
    expect(merged.code).toBe(0);
    expect(merged.stdout).toBe(whole.stdout);
    expect(JSON.parse(merged.stdout).format).toBe('pronk-basin');
  }, 120_000);

  it('a result written with --out is said on stderr, in every command, with --json or without', () => {
    for (const json of [[], ['--json']]) {
      const run = spawnPronk(['robustness', demo, '--sigma', '0.005', '--rollouts', '5', '--strides', '3', '--workers', '1', '--out', 'r.txt', ...json]);
      expect(run.code).toBe(0);
      expect(run.stdout).toBe('');
      expect(run.stderr).toBe('pronk robustness: result written to r.txt\n');
    }
  }, 120_000);
});
