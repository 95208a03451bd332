// The scalar native-C baseline (test/bench/c/slip_dp5.c): built here with `gcc -O3` when a C
// compiler is present, and driven through its two modes (one stride per input line; timed
// passes over rollouts). Also whole-process CPU time of any command (bash's `times`, which
// reports the user and system time of the children: getrusage(RUSAGE_CHILDREN)).

import { spawnSync } from 'node:child_process';
import { mkdirSync, statSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
export const ROOT = join(here, '..', '..');
const SOURCE = join(here, 'c', 'slip_dp5.c');
const EXE = join(ROOT, 'build', 'bench', 'slip_dp5');
export const C_FLAGS = ['-O3', '-std=c11', '-D_POSIX_C_SOURCE=199309L'];

/** The C compiler on PATH (gcc, else cc), or null. */
function compiler() {
  for (const cc of ['gcc', 'cc']) {
    const r = spawnSync(cc, ['--version'], { encoding: 'utf8' });
    if (r.status === 0) return { cc, version: r.stdout.split('\n')[0] };
  }
  return null;
}

/** Builds the baseline if its source is newer; returns { exe, cc, version } or { skipped: reason }. */
export function buildNative() {
  const c = compiler();
  if (!c) return { skipped: 'no C compiler (gcc or cc) on PATH' };
  let fresh = false;
  try {
    fresh = statSync(EXE).mtimeMs >= statSync(SOURCE).mtimeMs;
  } catch {
    fresh = false;
  }
  if (!fresh) {
    mkdirSync(dirname(EXE), { recursive: true });
    const r = spawnSync(c.cc, [...C_FLAGS, '-o', EXE, SOURCE, '-lm'], { encoding: 'utf8' });
    if (r.status !== 0) return { skipped: `${c.cc} failed to build ${SOURCE}: ${r.stderr.trim().split('\n').slice(0, 3).join(' / ')}` };
  }
  return { exe: EXE, ...c };
}

const modelArgs = (body, attackRad) => [body.mass, body.leg, body.k, body.g, attackRad].map(String);

/** One stride per row { rtol, atol, height, speed, ground }; returns { next, speed, steps, rejected, status } each. */
export function nativeStrides(exe, body, attackRad, rows) {
  const input = rows.map((r) => `${r.rtol} ${r.atol} ${r.height} ${r.speed} ${r.ground ?? 0}`).join('\n') + '\n';
  const r = spawnSync(exe, ['one', ...modelArgs(body, attackRad)], { input, encoding: 'utf8', maxBuffer: 1 << 26 });
  if (r.status !== 0) throw new Error(`native baseline failed: ${r.stderr}`);
  return r.stdout
    .trim()
    .split('\n')
    .map((line) => {
      const [next, speed, steps, rejected, status] = line.split(' ').map(Number);
      return { next, speed, steps, rejected, status };
    });
}

/** REPS timed passes of rollouts x strides; the median pass's CPU seconds as the program measured it. */
export function nativeRun(exe, body, attackRad, o) {
  const args = ['run', ...modelArgs(body, attackRad), o.rtol, o.atol, o.height, o.speed, o.rollouts, o.strides, o.sigma ?? 0, o.seed ?? 1, o.reps ?? 1].map(String);
  const r = spawnSync(exe, args, { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`native baseline failed: ${r.stderr}`);
  const [cpu, strides, completed, steps, rejected, checksum] = r.stdout.trim().split(' ').map(Number);
  return { cpu, strides, completed, steps, rejected, checksum };
}

/**
 * Runs a command to its end; returns its stdout, wall seconds and the CPU seconds (user + system)
 * of the whole process tree that it started, every thread included.
 */
export function processCpu(cmd, args, options = {}) {
  const t0 = performance.now();
  const r = spawnSync('bash', ['-c', '"$@"; status=$?; times >&2; exit $status', 'bash', cmd, ...args], {
    encoding: 'utf8',
    maxBuffer: 1 << 28,
    cwd: options.cwd ?? ROOT,
    env: options.env ?? process.env,
  });
  const wall = (performance.now() - t0) / 1000;
  if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} exited with ${r.status}: ${r.stderr.slice(-2000)}`);
  const lines = r.stderr.trim().split('\n');
  const children = lines[lines.length - 1].trim().split(/\s+/);
  const seconds = (t) => {
    const m = /^(\d+)m([\d.]+)s$/.exec(t);
    if (!m) throw new Error(`unexpected output of bash's times: ${lines.slice(-2).join(' / ')}`);
    return 60 * Number(m[1]) + Number(m[2]);
  };
  return { stdout: r.stdout, wall, cpu: seconds(children[0]) + seconds(children[1]) };
}
