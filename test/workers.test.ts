// `--workers N` on every command that runs worker threads: one option, one range, and a cap at the
// useful number of threads, said on stderr. Before, `robustness --workers 1024` started about a
// thousand threads (8.5 GB, 44 s against 66 MB and 0.8 s on one).
import { availableParallelism } from 'node:os';
import { afterAll, describe, expect, it } from 'vitest';
import { loadCommands, type CliIO } from '../src/cli/main.js';
import { pronk } from './pronk-cli.js';
import { MAX_WORKERS_OPTION, workerThreads } from '../src/cli/workers.js';
import { closeWorkerPool } from '../src/worker/pool.js';

afterAll(() => closeWorkerPool());

function capture(): CliIO & { err: () => string } {
  let stderr = '';
  return { stdout: { write: () => true }, stderr: { write: (c: string) => (stderr += c) }, env: {}, err: () => stderr };
}

describe('workerThreads: min(cores x per core, work items)', () => {
  it('without --workers: every useful thread, silently', () => {
    const io = capture();
    expect(workerThreads(io, 'basin', undefined, { items: 1000, unit: 'cells', cores: 8 })).toBe(8);
    expect(workerThreads(io, 'basin', undefined, { items: 3, unit: 'cells', cores: 8 })).toBe(3);
    expect(workerThreads(io, 'basin', undefined, { items: 0, unit: 'cells', cores: 8 })).toBe(1);
    expect(workerThreads(io, 'optimize', undefined, { items: 6, unit: 'restarts', cores: 2, perCore: 2 })).toBe(4);
    expect(io.err()).toBe('');
  });

  it('a request within the cap is kept as asked', () => {
    const io = capture();
    expect(workerThreads(io, 'robustness', 3, { items: 1000, unit: 'rollouts', cores: 8 })).toBe(3);
    expect(io.err()).toBe('');
  });

  it('a request above the cap is capped and said, naming both numbers and why', () => {
    let io = capture();
    expect(workerThreads(io, 'robustness', 1024, { items: 1000, unit: 'rollouts', cores: 2 })).toBe(2);
    expect(io.err()).toBe('pronk robustness: --workers 1024 capped at 2 (2 cores available; more threads would only wait)\n');
    io = capture();
    expect(workerThreads(io, 'basin', 16, { items: 1, unit: 'cells', cores: 8 })).toBe(1);
    expect(io.err()).toBe('pronk basin: --workers 16 capped at 1 (1 cell to run; more threads would only wait)\n');
    io = capture();
    expect(workerThreads(io, 'optimize', 64, { items: 40, unit: 'restarts', cores: 2, perCore: 2 })).toBe(4);
    expect(io.err()).toMatch(/--workers 64 capped at 4 \(2 cores available, 2 threads per core at most;/);
  });
});

describe('every command with --workers takes the same option', () => {
  it('the same range, and the cap named in its help', async () => {
    const withWorkers = (await loadCommands()).filter((command) => command.options.workers);
    expect(withWorkers.map((command) => command.name).sort()).toEqual(['basin', 'deadbeat', 'optimize', 'robustness', 'scan']);
    for (const command of withWorkers) expect(command.options.workers.description).toMatch(/never changes the result/);
  });

  it('--workers beyond the range is refused naming the range', async () => {
    for (const args of [
      ['basin', '--heights', '1:1.2:2', '--speeds', '4:5:2'],
      ['robustness', '--sigma', '0.01', '--rollouts', '4'],
      ['scan', '--x', 'policy.angle.attack_deg:60:80:2', '--y', 'body.leg_stiffness_N_per_m:15000:20000:2'],
    ]) {
      const r = await pronk([...args, '--workers', String(MAX_WORKERS_OPTION + 1)]);
      expect(r.code).toBe(2);
      expect(r.stderr).toMatch(new RegExp(`--workers: expected an integer from 1 to ${MAX_WORKERS_OPTION}, found "?1025`));
    }
  });

  it('robustness --workers 1024 runs on the useful number, says so, and gives the one-thread result', async () => {
    const args = ['robustness', '--sigma', '0.005', '--rollouts', '6', '--strides', '4', '--json'];
    const one = await pronk([...args, '--workers', '1']);
    const many = await pronk([...args, '--workers', '1024']);
    expect(many.code).toBe(0);
    const cap = Math.min(availableParallelism(), 6);
    expect(many.stderr).toContain(`pronk robustness: --workers 1024 capped at ${cap} (`);
    expect(many.stdout).toBe(one.stdout);
  }, 60_000);

  it('basin with one cell per worker asked for is capped at the cells', async () => {
    const r = await pronk(['basin', '--heights', '1:1:1', '--speeds', '5:5:1', '--strides', '3', '--workers', '8']);
    expect(r.code).toBe(0);
    expect(r.stderr).toContain('pronk basin: --workers 8 capped at 1 (1 cell to run;');
  }, 60_000);
});
