// The README's batch-scheduler recipe ("Running sweeps on a cluster") on a real one-node Slurm:
// scripts/slurm-one-node.sh starts Debian's munged, slurmctld and slurmd as root, without systemd.
// The job-array script and the submit, merge and rerun commands are taken from README.md
// character for character and run by bash from a folder holding robot.json, as a user would, for a
// basin, a scan and a Monte Carlo study; the merged result must be byte for byte the one-machine
// run. Then one array task is made to fail: the merge job must be cancelled (not left pending, and
// not taken for a success), Slurm and the task's log must say what the README says the user sees,
// and the README's rerun of that one task followed by the same merge must complete the result.
//
// The only change to the README's commands: smaller grids (SMALLER below; each replaced text must
// occur exactly once in the README's line), as a user edits them. `pronk` is put on the PATH the
// way `npm link` does it (a symlink named pronk to bin/pronk.js), in a private directory.
//
// Skipped, with the reason printed, where Slurm cannot run: not root, or Debian's slurmctld,
// slurmd, slurm-client and munge are not installed (.ci/run installs them through
// `scripts/slurm-one-node.sh install`). If they are there but the cluster does not start, the test
// fails with the daemons' logs.
//
// NEEDS `npm run build` (dist/); `npm test` builds first.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmdirSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';

const repo = join(dirname(fileURLToPath(import.meta.url)), '..');
const upDown = join(repo, 'scripts', 'slurm-one-node.sh');

// ---- the README's recipe, as written -------------------------------------------------------

const readme = readFileSync(join(repo, 'README.md'), 'utf8');
const sectionStart = readme.indexOf('## Running sweeps on a cluster');
const section = readme.slice(sectionStart, readme.indexOf('\n## ', sectionStart + 1));
const shBlocks = [...section.matchAll(/```sh\n([\s\S]*?)```/g)].map((m) => m[1]);

/** The one sh block of the cluster section that starts with `start`. */
function block(start: string): string {
  const found = shBlocks.filter((b) => b.startsWith(start));
  if (found.length !== 1) throw new Error(`README's cluster section: expected one sh block starting with ${JSON.stringify(start)}, found ${found.length}`);
  return found[0];
}

const arrayScript = block('#!/bin/bash\n');
const scriptName = /^# (\S+\.sh): /m.exec(arrayScript)?.[1] ?? 'the job script names no file (# NAME.sh: ...)';
const submitBlock = block(`jobid=$(sbatch --parsable ${scriptName} basin `);
const [basinSubmit, ...mergeLines] = submitBlock.trimEnd().split('\n');
const mergeCommand = mergeLines.join('\n');
const otherSubmits = block(`jobid=$(sbatch --parsable ${scriptName} scan `).trimEnd().split('\n');
const submitLine: Record<Analysis, string> = {
  basin: basinSubmit,
  scan: otherSubmits.find((l) => l.includes(` ${scriptName} scan `)) ?? '',
  robustness: otherSubmits.find((l) => l.includes(` ${scriptName} robustness `)) ?? '',
};
const rerunBlock = block('jobid=$(sbatch --parsable --array=');
const [rerunSubmit, ...rerunMergeLines] = rerunBlock.trimEnd().split('\n');
const failedTask = Number(/--array=(\d+) /.exec(rerunSubmit)?.[1]);

type Analysis = 'basin' | 'scan' | 'robustness';

// The README's grids, made small enough for a 2-core CI machine but still a mix of outcomes
// (basin: converged, wandering and fell cells; scan: stable, unstable-only and no fixed point;
// robustness: survivors and falls).
const SMALLER: Record<Analysis, [string, string][]> = {
  basin: [['--heights 0.9:1.6:400', '--heights 0.9:1.6:12'], ['--speeds 3:8:400', '--speeds 3:8:10']],
  scan: [[':55:75:201', ':55:75:9'], [':0:100:101', ':0:100:5']],
  robustness: [['--rollouts 100000', '--rollouts 320']],
};

function smaller(line: string, analysis: Analysis): string {
  let out = line;
  for (const [from, to] of SMALLER[analysis]) {
    const count = out.split(from).length - 1;
    if (count !== 1) throw new Error(`README's ${analysis} command ${JSON.stringify(line)} holds ${JSON.stringify(from)} ${count} times, expected once: update SMALLER in this test`);
    out = out.replace(from, to);
  }
  return out;
}

/** The pronk command a submit line hands to the job script (everything after the script's name). */
function analysisOf(submit: string): string {
  const m = new RegExp(`^jobid=\\$\\(sbatch --parsable (?:--array=\\d+ )?${scriptName.replace('.', '\\.')} (.+)\\)$`).exec(submit);
  if (!m) throw new Error(`not a submit line of the README's form: ${submit}`);
  return m[1];
}

// A robot as a user writes it: Seyfarth, Geyer & Herr 2003's human-like body (80 kg, 1 m leg,
// 20 kN/m) with swing-leg retraction, which has a sizable basin in the README's grid.
const robot = {
  body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
  start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
  policy: { angle: { kind: 'retraction', attack_at_apex_deg: 62, rate_deg_per_s: 50 } },
  terrain: { kind: 'random_walk', sigma_m: 0.01, seed: 3 },
  strides: 20,
};

// ---- can Slurm run here? ------------------------------------------------------------------------

const PROGRAMS = ['munged', 'slurmctld', 'slurmd', 'sbatch', 'scontrol', 'squeue'];
const missing = PROGRAMS.filter((p) => spawnSync('sh', ['-c', `command -v ${p}`]).status !== 0);
const skipReason =
  process.platform !== 'linux' ? `needs Linux (found ${process.platform})`
  : process.getuid?.() !== 0 ? `needs root to start munged, slurmctld and slurmd (running as uid ${process.getuid?.()})`
  : missing.length ? `Slurm is not installed (missing ${missing.join(', ')}; install with: scripts/slurm-one-node.sh install)`
  : '';
if (skipReason) console.warn(`slurm: skipped: ${skipReason}`);

// ---- Slurm as the test sees it -----------------------------------------------------------------

interface JobRecord { taskId?: string; state: string; reason: string; exitCode: string; dependency: string }

const TERMINAL = new Set(['COMPLETED', 'FAILED', 'CANCELLED', 'TIMEOUT', 'NODE_FAIL', 'OUT_OF_MEMORY', 'PREEMPTED', 'BOOT_FAIL', 'DEADLINE']);
const POLL_LIMIT_MS = 12 * 60_000;
const TEST_TIMEOUT_MS = 15 * 60_000;

let stateDir = '';
let binDir = '';
let env: NodeJS.ProcessEnv = {};
const folders: string[] = [];
let keep = false; // a test failed: leave the daemons' logs and the job folders for a look

function run(command: string, args: string[], cwd = repo) {
  const child = spawnSync(command, args, { cwd, env, encoding: 'utf8' });
  return { code: child.status, stdout: child.stdout ?? '', stderr: child.stderr ?? '' };
}

/** Every record of a job (an array job: one per task, and one for tasks not yet started). */
function jobRecords(id: string): JobRecord[] {
  const r = run('scontrol', ['show', 'job', '-o', id]);
  if (r.code !== 0) throw new Error(`scontrol show job ${id}: ${r.stderr.trim()}`);
  const field = (line: string, name: string) => new RegExp(`(?:^| )${name}=(\\S*)`).exec(line)?.[1] ?? '';
  return r.stdout.trim().split('\n').filter(Boolean).map((line) => ({
    taskId: field(line, 'ArrayTaskId') || undefined,
    state: field(line, 'JobState'),
    reason: field(line, 'Reason'),
    exitCode: field(line, 'ExitCode'),
    dependency: field(line, 'Dependency'),
  }));
}

/** Poll scontrol until every record of the job is in a terminal state (sbatch --wait cannot tell). */
async function finished(id: string): Promise<JobRecord[]> {
  const deadline = Date.now() + POLL_LIMIT_MS;
  for (;;) {
    const records = jobRecords(id);
    if (records.every((r) => TERMINAL.has(r.state))) return records;
    if (Date.now() > deadline) throw new Error(`job ${id} not finished after ${POLL_LIMIT_MS / 60_000} min: ${JSON.stringify(records)}`);
    await new Promise((resolve) => setTimeout(resolve, 500));
  }
}

/** A fresh folder holding robot.json and the README's job script, as a user prepares one. */
function userFolder(name: string): string {
  const folder = mkdtempSync(join(tmpdir(), `pronk-slurm-${name}-`));
  folders.push(folder);
  writeFileSync(join(folder, 'robot.json'), `${JSON.stringify(robot, null, 2)}\n`);
  writeFileSync(join(folder, scriptName), arrayScript);
  return folder;
}

/** Run README commands with bash in the folder; the ids of the array job and of the merge job. */
function submit(folder: string, commands: string): { arrayJob: string; mergeJob: string } {
  const r = run('bash', ['-eu', '-c', `${commands}\necho "array job: \${jobid}"`], folder);
  expect(r.code, `the README's commands failed:\n${commands}\n${r.stderr}`).toBe(0);
  const arrayJob = /^array job: (\d+)$/m.exec(r.stdout)?.[1];
  const mergeJob = /^Submitted batch job (\d+)$/m.exec(r.stdout)?.[1];
  if (!arrayJob || !mergeJob) throw new Error(`no job ids in the output of the README's commands: ${r.stdout}`);
  return { arrayJob, mergeJob };
}

/** What `pronk ANALYSIS --json` prints on one machine, the reference for the merged file. */
function oneMachine(folder: string, analysis: string): Buffer {
  const child = spawnSync('bash', ['-eu', '-c', `pronk ${analysis} --json`], { cwd: folder, env });
  expect(child.status, String(child.stderr)).toBe(0);
  return child.stdout;
}

function mergedFile(folder: string): string {
  const m = /--out (\S+?)"?$/m.exec(mergeCommand);
  if (!m) throw new Error(`the README's merge command names no --out file: ${mergeCommand}`);
  return join(folder, m[1]);
}

function seconds(since: number): string {
  return ((performance.now() - since) / 1000).toFixed(1);
}

// ---- the tests -----------------------------------------------------------------------------------

describe('the README recipe text', () => {
  it('has the job script, the three submit lines, the merge and the rerun, in the forms the test runs', () => {
    expect(scriptName).toBe('pronk-array.sh');
    expect(arrayScript).toMatch(/^#SBATCH --array=1-(\d+)\n[\s\S]*--shard "\$\{SLURM_ARRAY_TASK_ID\}\/\1"/m);
    for (const analysis of ['basin', 'scan', 'robustness'] as const) expect(analysisOf(submitLine[analysis])).toMatch(new RegExp(`^${analysis} robot\\.json `));
    expect(mergeCommand).toContain('--kill-on-invalid-dep=yes');
    expect(mergeCommand).toContain('--dependency=afterok:${jobid}');
    // the rerun is the basin's own command with --array=K, followed by the very same merge
    expect(rerunSubmit).toBe(basinSubmit.replace('--parsable ', `--parsable --array=${failedTask} `));
    expect(rerunMergeLines.join('\n')).toBe(mergeCommand);
    // no npx in the cluster section's commands: outside the checkout it runs whatever the registry holds
    for (const b of shBlocks) expect(b).not.toMatch(/\bnpx\b/);
  });
});

describe.skipIf(skipReason !== '')('the README recipe on a one-node Slurm', () => {
  beforeAll(() => {
    stateDir = mkdtempSync(join(tmpdir(), 'pronk-slurm-state-'));
    binDir = mkdtempSync(join(tmpdir(), 'pronk-slurm-bin-'));
    symlinkSync(join(repo, 'bin', 'pronk.js'), join(binDir, 'pronk')); // what `npm link` makes
    env = { ...process.env, PATH: `${binDir}:${process.env.PATH ?? ''}`, SLURM_CONF: join(stateDir, 'slurm.conf'), PRONK_DEBUG: '' };
    for (const key of Object.keys(env)) if (key.startsWith('SLURM_') && key !== 'SLURM_CONF') delete env[key];
    const started = performance.now();
    const up = run(upDown, ['up', stateDir]);
    if (up.code !== 0) keep = true;
    if (up.code !== 0) throw new Error(`scripts/slurm-one-node.sh up failed (exit ${up.code}):\n${up.stdout}${up.stderr}`);
    console.log(`slurm: ${up.stdout.trim().split('\n')[0]} in ${seconds(started)} s`);
  }, 120_000);

  afterEach(({ task }) => {
    if (task.result?.state === 'fail') keep = true;
  });

  afterAll(() => {
    if (stateDir) {
      const down = run(upDown, ['down', stateDir]);
      if (down.code !== 0) console.warn(`slurm: scripts/slurm-one-node.sh down failed:\n${down.stdout}${down.stderr}`);
    }
    if (keep) console.warn(`slurm: kept for a look: the daemons' logs in ${join(stateDir, 'log')}, the job folders ${folders.join(', ')}`);
    else for (const dir of [...folders, stateDir]) if (dir) rmSync(dir, { recursive: true, force: true });
    if (binDir) rmSync(binDir, { recursive: true, force: true });
  }, 120_000);

  for (const analysis of ['basin', 'scan', 'robustness'] as const) {
    it(`${analysis}: the array and the merge complete, and the merged file is the one-machine run byte for byte`, async () => {
      const started = performance.now();
      const folder = userFolder(analysis);
      const line = smaller(submitLine[analysis], analysis);
      const { arrayJob, mergeJob } = submit(folder, `${line}\n${mergeCommand}`);

      const merge = await finished(mergeJob);
      const tasks = await finished(arrayJob);
      expect(merge).toEqual([expect.objectContaining({ state: 'COMPLETED', exitCode: '0:0' })]);
      expect(tasks.map((t) => Number(t.taskId)).sort((a, b) => a - b)).toEqual(Array.from({ length: 16 }, (_, i) => i + 1));
      for (const task of tasks) expect(task, `task ${task.taskId}`).toMatchObject({ state: 'COMPLETED', exitCode: '0:0' });
      expect(readdirSync(folder).filter((f) => /^part-\d+\.json$/.test(f))).toHaveLength(16);

      const merged = readFileSync(mergedFile(folder));
      const reference = oneMachine(folder, analysisOf(line));
      expect(merged.length).toBeGreaterThan(100);
      expect(merged.equals(reference), `${mergedFile(folder)} differs from the one-machine run`).toBe(true);
      console.log(`slurm: ${analysis}: 16 array tasks and the merge in ${seconds(started)} s (${analysisOf(line)})`);
    }, TEST_TIMEOUT_MS);
  }

  it('a failed task: the merge is cancelled, Slurm and the log say why, and rerunning that task alone completes the merge', async () => {
    const started = performance.now();
    const folder = userFolder('failed-task');
    const part = join(folder, `part-${failedTask}.json`);
    mkdirSync(part); // a directory in the way: task K cannot write its part (Pronk's exit code 2)
    const line = smaller(basinSubmit, 'basin');
    const { arrayJob, mergeJob } = submit(folder, `${line}\n${mergeCommand}`);

    // the merge is cancelled, not left pending and not run
    const merge = await finished(mergeJob);
    expect(merge).toEqual([expect.objectContaining({ state: 'CANCELLED', reason: 'DependencyNeverSatisfied', dependency: `afterok:${arrayJob}_*(failed)` })]);
    const tasks = await finished(arrayJob);
    for (const task of tasks) {
      if (Number(task.taskId) === failedTask) expect(task).toMatchObject({ state: 'FAILED', reason: 'NonZeroExitCode', exitCode: '2:0' });
      else expect(task, `task ${task.taskId}`).toMatchObject({ state: 'COMPLETED', exitCode: '0:0' });
    }
    expect(tasks).toHaveLength(16);
    expect(existsSync(mergedFile(folder))).toBe(false);
    expect(run('squeue', ['-h', '-o', '%i']).stdout.split('\n')).not.toContain(mergeJob);

    // the task's log holds Pronk's message, the README's example of it
    const log = readFileSync(join(folder, `slurm-${arrayJob}_${failedTask}.out`), 'utf8');
    expect(log).toContain(`cannot write "part-${failedTask}.json" (it is a directory)`);
    const example = /for example `([^`]+)`/.exec(section)?.[1].replace(/\s+/g, ' ');
    expect(example, 'the README quotes the failed task\'s message').toBeDefined();
    expect(log.replace(/\s+/g, ' ')).toContain(example);

    // what the README says of `sbatch --wait`: 0 for a job cancelled for its dependency
    const waited = run('sbatch', ['--wait', `--dependency=afterok:${arrayJob}`, '--kill-on-invalid-dep=yes', '--job-name=pronk-wait', '--wrap', 'true'], folder);
    expect(waited.code).toBe(0);
    const waitedJob = /Submitted batch job (\d+)/.exec(waited.stdout)?.[1] ?? '';
    expect(jobRecords(waitedJob)).toEqual([expect.objectContaining({ state: 'CANCELLED' })]);
    console.log(`slurm: failed task ${failedTask}: merge cancelled after ${seconds(started)} s`);

    // the cause fixed, the README's rerun of task K and the same merge
    rmdirSync(part);
    const rerun = smaller(rerunSubmit, 'basin');
    const again = submit(folder, `${rerun}\n${rerunMergeLines.join('\n')}`);
    const mergeAgain = await finished(again.mergeJob);
    const rerunTasks = await finished(again.arrayJob);
    expect(rerunTasks).toEqual([expect.objectContaining({ taskId: String(failedTask), state: 'COMPLETED', exitCode: '0:0' })]);
    expect(mergeAgain).toEqual([expect.objectContaining({ state: 'COMPLETED', exitCode: '0:0' })]);
    expect(readFileSync(mergedFile(folder)).equals(oneMachine(folder, analysisOf(line)))).toBe(true);
    console.log(`slurm: failed task ${failedTask}: rerun and merged, byte for byte the one-machine run, in ${seconds(started)} s in all`);
  }, TEST_TIMEOUT_MS);
});
