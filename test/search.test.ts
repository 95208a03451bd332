// The policy search end to end: restarts in worker threads, determinism, cancel, the result file.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { optimizeStudy, restartStarts } from '../src/core/optimize/search.js';
import { parseStudy } from '../src/core/optimize/study.js';
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
  it('same study and seed give the same result, restarts included (COBYLA and the stochastic ISRES)', async () => {
    for (const search of [{ method: 'COBYLA', max_evaluations: 25, restarts: 2 }, { method: 'ISRES', max_evaluations: 30, restarts: 2 }]) {
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
