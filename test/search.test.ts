// The policy search end to end: restarts in worker threads, determinism over any number of
// workers, the three labelled phases, screened start points, cancel (in process and by Ctrl-C),
// the result file and its one sign convention.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadEngine } from '../src/core/engine.js';
import type { Outcome } from '../src/core/optimize/nlopt.js';
import { comparePolicies, type Evaluation } from '../src/core/optimize/objectives.js';
import type { RestartResult } from '../src/core/optimize/restart.js';
import { pickBest, restartStarts, type SearchProgress } from '../src/core/optimize/search.js';
import { optimizeStudy } from '../src/worker/node-optimize.js';
import { parseStudy, readStudyFile, scenarioValueAt, type Study } from '../src/core/optimize/study.js';
import { parseScenario } from '../src/core/scenario.js';
import { simulate } from '../src/core/simulate.js';

// Human-like body of Seyfarth et al. 2002 (J. Biomech. 35(5):649–655), retraction as in
// Seyfarth, Geyer & Herr 2003 (J. Exp. Biol. 206:2547–2555); loose tolerance for speed.
const base = {
  body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
  start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
  policy: { angle: { kind: 'retraction', attack_at_apex_deg: 64, rate_deg_per_s: 30 }, stiffness: { kind: 'constant' } },
  terrain: { kind: 'flat' },
  strides: 10,
  integrator: { relative_tolerance: 1e-8, absolute_tolerance: 1e-10 },
};
const study = (search: Record<string, unknown>, rollouts = 40) =>
  parseStudy({
    name: 'retraction for rough ground',
    scenario: base,
    free_parameters: [
      { path: 'policy.angle.attack_at_apex_deg', lower: 58, upper: 72 },
      { path: 'policy.angle.rate_deg_per_s', lower: 0, upper: 120 },
    ],
    objective: { terms: [{ kind: 'survival', terrain: 'random_walk', sigma_m: 0.01, rollouts }] },
    constraints: { max_leg_force_N: 4000 },
    search,
    seed: 3,
    holdout: { seed: 4, rollouts: 60 },
  });

describe('optimizeStudy', () => {
  it('same study and seed give the same result, restarts included (COBYLA, and ISRES and PRAXIS, which draw random numbers)', async () => {
    for (const search of [
      { method: 'COBYLA', max_evaluations: 25, restarts: 2 },
      { method: 'ISRES', max_evaluations: 30, restarts: 2 },
      { method: 'PRAXIS', max_evaluations: 30, restarts: 2 },
    ]) {
      const a = await optimizeStudy(study(search), { workers: 2 });
      const b = await optimizeStudy(study(search), { workers: 1 });
      expect(a.restarts.map((r) => r.x)).toEqual(b.restarts.map((r) => r.x));
      expect(a.restarts.map((r) => r.value)).toEqual(b.restarts.map((r) => r.value));
      expect(a.restarts.every((r) => r.reproducible)).toBe(true);
      expect(a.parameters.map((p) => p.value)).toEqual(b.parameters.map((p) => p.value));
    }
  });

  it('improves on the start on the training seeds, and reports held-out scores and margins', async () => {
    const r = await optimizeStudy(study({ method: 'COBYLA', max_evaluations: 40, restarts: 1 }), { workers: 1 });
    expect(r.scores.training.best.objective).toBeGreaterThanOrEqual(r.scores.training.start.objective);
    expect(r.constraints.map((c) => c.name)).toContain('max_leg_force_N');
    expect(r.restarts[0].evaluations).toBeLessThanOrEqual(40);
    const comparison = (r.scores.holdout.comparison as { comparisons: { rollouts: number }[] }).comparisons[0];
    expect(comparison.rollouts).toBe(60);
    // the result's scenario runs as is
    const s = parseScenario(r.scenario);
    expect((s.policy.angle as { attack_at_apex_deg: number }).attack_at_apex_deg).toBe(r.parameters[0].value);
    expect((await simulate(s)).strides.length).toBeGreaterThan(0);
    expect(r.caution).toMatch(/tethered/);
  });

  it('cancel stops a long search and returns the best point so far', async () => {
    const controller = new AbortController();
    let evaluations = 0;
    const running = optimizeStudy(study({ method: 'SUBPLEX', max_evaluations: 1_000_000, restarts: 1 }, 200), {
      workers: 1,
      signal: controller.signal,
      onProgress: (p) => {
        evaluations = p.evaluations;
        if (p.evaluations >= 5 && !controller.signal.aborted) controller.abort();
      },
    });
    const r = await running;
    expect(r.cancelled).toBe(true);
    expect(r.restarts[0].reason).toBe('cancelled');
    expect(r.restarts[0].evaluations).toBeLessThan(1000);
    expect(evaluations).toBeGreaterThanOrEqual(5);
    // how soon it stops is measured in the benchmark (test/bench/optimize.mjs), not asserted here
  });

  it('restart start points: the study start first, the rest spread inside the bounds, fixed by the seed', () => {
    const a = restartStarts([1, 2], [0, 0], [10, 10], 5, 7);
    expect(a[0]).toEqual([1, 2]);
    for (const x of a) for (const v of x) expect(v >= 0 && v <= 10).toBe(true);
    expect(restartStarts([1, 2], [0, 0], [10, 10], 5, 7)).toEqual(a);
    expect(restartStarts([1, 2], [0, 0], [10, 10], 5, 8)).not.toEqual(a);
  });
});

describe('pronk optimize (built CLI)', () => {
  const dir = mkdtempSync(join(tmpdir(), 'pronk-optimize-'));
  const pronk = (args: string[]) => spawnSync(process.execPath, ['bin/pronk.js', ...args], { encoding: 'utf8', timeout: 120_000 });

  it('writes a result file whose scenario and policy run', () => {
    const file = join(dir, 'study.json');
    writeFileSync(file, JSON.stringify({ ...JSON.parse(JSON.stringify(study({ method: 'COBYLA', max_evaluations: 10, restarts: 1 }))) }));
    const out = join(dir, 'result.json');
    const run = pronk(['optimize', file, '--out', out, '--workers', '1']);
    expect(run.status).toBe(0);
    expect(run.stdout).toMatch(/Held-out survival/);
    const result = JSON.parse(readFileSync(out, 'utf8'));
    expect(result.format).toBe('pronk-result');
    expect(result.kind).toBe('optimization');
    expect(result.provenance.method).toBe('COBYLA');
    expect(parseScenario(result.scenario).policy).toEqual(result.policy);
  });

  it('bad studies and options exit 2 naming the field', () => {
    const bad = join(dir, 'bad.json');
    writeFileSync(bad, JSON.stringify({ ...JSON.parse(JSON.stringify(study({ method: 'COBYLA' }))), free_parameters: [{ path: 'policy.angle.atack_deg', lower: 1, upper: 2 }] }));
    const run = pronk(['optimize', bad]);
    expect(run.status).toBe(2);
    expect(run.stderr).toMatch(/free_parameters\[0\]\.path/);
    expect(run.stderr).not.toMatch(/\n\s+at /);
    expect(pronk(['optimize']).status).toBe(2);
    expect(pronk(['optimize', bad, '--workers', '0']).stderr).toMatch(/--workers/);
  });
});

describe('pronk optimize --plot', () => {
  it('draws the convergence of every restart as an SVG, and refuses a bad file name', () => {
    const dir = mkdtempSync(join(tmpdir(), 'pronk-optimize-plot-'));
    const file = join(dir, 'study.json');
    writeFileSync(file, JSON.stringify(JSON.parse(JSON.stringify(study({ method: 'COBYLA', max_evaluations: 8, restarts: 2 })))));
    const svg = join(dir, 'convergence.svg');
    const run = spawnSync(process.execPath, ['bin/pronk.js', 'optimize', file, '--workers', '1', '--plot', svg], { encoding: 'utf8', timeout: 120_000 });
    expect(run.status).toBe(0);
    const text = readFileSync(svg, 'utf8');
    expect(text).toMatch(/^<svg/);
    expect(text).toMatch(/restart 0/);
    expect(text).toMatch(/restart 1/);
    const bad = spawnSync(process.execPath, ['bin/pronk.js', 'optimize', file, '--plot', join(dir, 'x.png')], { encoding: 'utf8' });
    expect(bad.status).toBe(2);
    expect(bad.stderr).toMatch(/--plot/);
  });
});

// ---------------------------------------------------------------------------------------------
// Determinism: the winner is taken in restart order, never finishing order.

const fakeRestart = (restart: number, score: number, feasible = true): RestartResult => {
  const evaluation = { score, value: -score, feasible } as Evaluation;
  return { restart, x0: [restart], outcome: { x: [restart] } as Outcome, start: evaluation, evaluation, seconds: 0 };
};

describe('the winner', () => {
  it('is taken over the restarts in index order: a tie goes to the lower index, whatever order they finished in', () => {
    // finishing order 2, 3, 1, 0; restarts 1 and 3 tie at the top, restart 2 scores as high but is infeasible
    const finished = [fakeRestart(2, 1.5, false), fakeRestart(3, 1.2), fakeRestart(1, 1.2), fakeRestart(0, 1.1)];
    expect(pickBest(finished).restart).toBe(1);
    expect(pickBest([...finished].reverse()).restart).toBe(1);
    // feasible first, then the highest score
    expect(pickBest([fakeRestart(0, 0.5), fakeRestart(1, 0.9, false)]).restart).toBe(0);
    expect(pickBest([fakeRestart(1, 0.7), fakeRestart(0, 0.5)]).restart).toBe(1);
  });
});

// A tie-prone study: on gentle ground every reasonable retraction survives all 20 rollouts, so the
// restarts end at the same score (1: measured) and only the tie-break decides the winner.
const TIE_PRONE = {
  name: 'tie-prone: gentle ground, every good policy survives every rollout',
  scenario: base,
  free_parameters: [
    { path: 'policy.angle.attack_at_apex_deg', lower: 58, upper: 72 },
    { path: 'policy.angle.rate_deg_per_s', lower: 0, upper: 120 },
  ],
  objective: { terms: [{ kind: 'survival', terrain: 'random_walk', sigma_m: 0.002, rollouts: 20 }] },
  constraints: { max_leg_force_N: 4000 },
  search: { method: 'COBYLA', max_evaluations: 12, restarts: 4 },
  seed: 3,
  holdout: { seed: 4, rollouts: 40 },
};

/** A result file without its timings (the only fields that may differ between runs). */
function withoutTimings(text: string): string {
  const r = JSON.parse(text);
  for (const x of r.restarts) delete x.seconds;
  delete r.provenance.seconds;
  delete r.provenance.phase_seconds;
  delete r.provenance.date;
  return JSON.stringify(r, null, 2);
}

describe('pronk optimize on 1, 2 and 4 workers', () => {
  it('writes byte-identical result files (timings aside), and the policy is always the parameters applied to the scenario', () => {
    const dir = mkdtempSync(join(tmpdir(), 'pronk-optimize-ties-'));
    const file = join(dir, 'study.json');
    writeFileSync(file, JSON.stringify(TIE_PRONE));
    const texts = [1, 2, 4].map((workers) => {
      const out = join(dir, `result-${workers}.json`);
      const run = spawnSync(process.execPath, ['bin/pronk.js', 'optimize', file, '--workers', String(workers), '--out', out], { encoding: 'utf8', timeout: 180_000 });
      expect(run.status, run.stderr).toBe(0);
      return readFileSync(out, 'utf8');
    });
    const stripped = texts.map(withoutTimings);
    expect(stripped[1]).toBe(stripped[0]);
    expect(stripped[2]).toBe(stripped[0]);
    const study = parseStudy(TIE_PRONE);
    for (const text of texts) {
      const r = JSON.parse(text);
      // the study is tie-prone indeed: more than one restart at the best score, and the lowest index wins
      const top = Math.max(...r.restarts.filter((x: { feasible: boolean }) => x.feasible).map((x: { score: number }) => x.score));
      const tied = r.restarts.filter((x: { score: number; feasible: boolean }) => x.feasible && x.score === top).map((x: { restart: number }) => x.restart);
      expect(tied.length).toBeGreaterThan(1);
      expect(r.best_restart).toBe(Math.min(...tied));
      // policy = parameters applied to the scenario = the best restart's point
      const values = r.parameters.map((p: { value: number }) => p.value);
      expect(values).toEqual(r.restarts[r.best_restart].x);
      const applied = parseScenario(scenarioValueAt(study.scenario, study.free_parameters, values));
      expect(r.policy).toEqual(applied.policy);
      expect(r.scenario).toEqual(JSON.parse(JSON.stringify(applied)));
    }
  }, 600_000);
});

// ---------------------------------------------------------------------------------------------
// The three phases, and the held-out comparison from the re-scoring's own rollouts.

describe('the search phases', () => {
  it('screening, search and held-out re-scoring report in order with their counts; the comparison is the re-scoring\'s own', async () => {
    const s = study({ method: 'COBYLA', max_evaluations: 8, restarts: 2 }, 30);
    const events: SearchProgress[] = [];
    const r = await optimizeStudy(s, { workers: 2, onProgress: (p) => events.push(p) });
    const phases = events.map((e) => e.phase).filter((p, i, all) => i === 0 || all[i - 1] !== p);
    expect(phases).toEqual(['screening', 'search', 'holdout']);
    for (const phase of ['screening', 'search', 'holdout'] as const) {
      const of = events.filter((e) => e.phase === phase);
      expect(of.every((e) => e.label.length > 0 && e.unit.length > 0 && e.done <= e.total)).toBe(true);
      of.forEach((e, i) => i === 0 || expect(e.done).toBeGreaterThanOrEqual(of[i - 1].done));
    }
    const screening = events.filter((e) => e.phase === 'screening');
    expect(screening.at(-1)).toMatchObject({ done: r.screening.candidates, total: r.screening.candidates, unit: 'candidates' });
    const holdout = events.filter((e) => e.phase === 'holdout');
    // the start and the winner (once when the search kept the start), each: holdout.rollouts of
    // the one Monte Carlo term and the nominal gait
    const candidates = r.parameters.every((p) => p.value === p.start) ? 1 : 2;
    expect(holdout.at(-1)).toMatchObject({ done: candidates * (60 + 1), total: candidates * (60 + 1), unit: 'rollouts' });
    expect(holdout.at(-1)!.evaluations).toBe(r.provenance.evaluations);
    // every score in the progress is larger-is-better: the last best score is the winner's
    expect(events.filter((e) => e.phase === 'search').at(-1)!.bestScore).toBe(r.summary.training_score.best);
    // the paired comparison comes from the re-scoring's rollouts: the same as running them again
    const engine = await loadEngine();
    const again = comparePolicies(s, engine, s.free_parameters.map((p) => p.start), r.parameters.map((p) => p.value));
    expect(r.scores.holdout.comparison).toEqual(again);
    expect(r.summary.holdout_survival[0].gain).toBe(-again.comparisons[0].difference);
  }, 300_000);

  it('a second signal skips the held-out re-scoring: the result says so and carries the training margins', async () => {
    const stop = new AbortController();
    const skip = new AbortController();
    stop.abort();
    skip.abort();
    const r = await optimizeStudy(study({ method: 'COBYLA', max_evaluations: 8, restarts: 2 }, 30), { workers: 1, signal: stop.signal, holdoutSignal: skip.signal });
    expect(r.cancelled).toBe(true);
    expect(r.scores.holdout).toEqual({ start: null, best: null, comparison: null, skipped: true });
    expect(r.constraints_set).toBe('training');
    expect(r.constraints).toEqual(r.scores.training.best.constraints);
    expect(r.restarts.map((x) => x.restart)).toEqual([0]); // only restart 0 runs after a cancel
    expect(r.restarts[0].stopped_because).toMatch(/^cancelled before its first evaluation/);
  }, 120_000);
});

// ---------------------------------------------------------------------------------------------
// The demo study: restarts start where the robot runs, and none sits on a plateau.

describe('the demo study (reduced budget)', () => {
  it('every restart starts at a viable point and none ends on a plateau at its start value', async () => {
    const demo = await readStudyFile('scenarios/demo-study.json');
    const reduced: Study = { ...demo, search: { ...demo.search, max_evaluations: 30 }, holdout: { ...demo.holdout, rollouts: 200 } };
    const r = await optimizeStudy(reduced, { workers: 2 });
    expect(r.restarts).toHaveLength(3);
    for (const x of r.restarts) {
      expect(x.screening?.viable, `restart ${x.restart}`).toBe(true);
      expect(x.plateau, x.stopped_because).toBe(false);
      expect(x.score).toBeGreaterThan(x.start_score);
      expect(x.stopped_because.length).toBeGreaterThan(20);
    }
    expect(r.summary.restarts).toEqual({ planned: 3, run: 3, on_plateau: 0, improved: 3 });
    // margins as % of the limit, one of them binding
    expect(r.constraints.filter((c) => c.binding)).toHaveLength(1);
    for (const c of r.constraints) expect(c.margin_percent).toBeCloseTo((100 * c.margin!) / Math.abs(c.limit), 10);
    expect(r.summary.binding_limit?.name).toBe(r.constraints.find((c) => c.binding)!.name);
  }, 600_000);
});

// ---------------------------------------------------------------------------------------------
// The command line: Ctrl-C, and a study whose objective could not stay finite.

describe('pronk optimize, interrupted', () => {
  it('Ctrl-C writes the result file marked cancelled, with the best point so far, and exits 130', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'pronk-optimize-sigint-'));
    const file = join(dir, 'study.json');
    // ISRES runs to its budget (it has no convergence test to end it early): far longer than this test waits
    const long = { ...JSON.parse(JSON.stringify(TIE_PRONE)), search: { method: 'ISRES', max_evaluations: 100000, restarts: 2 } };
    long.objective.terms[0] = { kind: 'survival', terrain: 'random_walk', sigma_m: 0.02, rollouts: 100 };
    writeFileSync(file, JSON.stringify(long));
    const out = join(dir, 'result.json');
    const child = spawn(process.execPath, ['bin/pronk.js', 'optimize', file, '--workers', '2', '--out', out], { stdio: ['ignore', 'pipe', 'pipe'] });
    let stderr = '';
    child.stderr.setEncoding('utf8');
    child.stderr.on('data', (chunk: string) => {
      stderr += chunk;
    });
    // the status line says the search began (the SIGINT handler is in place); give it time to evaluate
    await expect.poll(() => stderr, { timeout: 60_000, interval: 100 }).toMatch(/Ctrl-C stops the search/);
    await new Promise((resolve) => setTimeout(resolve, 3000));
    child.kill('SIGINT');
    const code = await new Promise<number | null>((resolve) => child.on('exit', (c) => resolve(c)));
    expect(code, stderr).toBe(130);
    expect(existsSync(out)).toBe(true);
    expect(readdirSync(dir).sort()).toEqual(['result.json', 'study.json']);
    const r = JSON.parse(readFileSync(out, 'utf8'));
    expect(r.cancelled).toBe(true);
    expect(r.restarts.some((x: { reason: string }) => x.reason === 'cancelled')).toBe(true);
    expect(r.scores.holdout.skipped).toBe(false); // one Ctrl-C: the best point is still re-scored
    const s = parseStudy(TIE_PRONE);
    expect(r.policy).toEqual(parseScenario(scenarioValueAt(s.scenario, s.free_parameters, r.parameters.map((p: { value: number }) => p.value))).policy);
    expect(stderr).toMatch(/stopping the search/);
  }, 180_000);

  it('an objective weight of 1e200 is exit 2 naming the field (it once failed inside NLopt, exit 1)', () => {
    const dir = mkdtempSync(join(tmpdir(), 'pronk-optimize-weight-'));
    const file = join(dir, 'study.json');
    const heavy = JSON.parse(JSON.stringify(TIE_PRONE));
    heavy.objective.terms[0].weight = 1e200;
    writeFileSync(file, JSON.stringify(heavy));
    const run = spawnSync(process.execPath, ['bin/pronk.js', 'optimize', file], { encoding: 'utf8', timeout: 60_000 });
    expect(run.status).toBe(2);
    expect(run.stderr).toMatch(/objective\.terms\[0\]\.weight: expected a weight from 0\.000001 to 1000000, found 1e\+200/);
  });
});

// ---------------------------------------------------------------------------------------------
// Architecture: the search in src/core takes its runner as an argument.

describe('src/core/optimize', () => {
  it('imports no host code: no worker threads, no comlink, nothing under src/worker', () => {
    for (const name of readdirSync('src/core/optimize')) {
      const text = readFileSync(join('src/core/optimize', name), 'utf8');
      expect(text, name).not.toMatch(/from ['"](node:worker_threads|node:os|comlink)/);
      expect(text, name).not.toMatch(/import\(?\s*['"][^'"]*\/worker\//);
      expect(text, name).not.toMatch(/from ['"][^'"]*\/worker\//);
    }
  });
});
