// Policy search over two-leg scenarios (src/core/optimize/kinds.ts, study.ts, objectives.ts): the
// terms and limits a two-leg study may name, model mismatch drawn per leg, the limits measured on
// the rollouts, and a small search end to end.

import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import * as L from '../assembly/layout.js';
import { basinOfAttraction } from '../src/core/analysis/basin.js';
import { stepTolerance } from '../src/core/analysis/stepdown.js';
import { loadEngine } from '../src/core/engine.js';
import { InputError } from '../src/core/errors.js';
import { buildModel, startInput } from '../src/core/model.js';
import { bipedRobotBlock } from '../src/core/optimize/kinds.js';
import { mismatchFactors, mismatchFactorsPerLeg, StudyEvaluator, stiffnessValues } from '../src/core/optimize/objectives.js';
import { parseStudy } from '../src/core/optimize/study.js';
import { parseScenario } from '../src/core/scenario.js';
import { optimizeStudy } from '../src/worker/node-optimize.js';

const read = (path: string) => JSON.parse(readFileSync(new URL(`../${path}`, import.meta.url), 'utf8'));
const walker = read('scenarios/demo-biped.json');
const runner = read('scenarios/demo.json');

function study(overrides: Record<string, unknown> = {}, scenario: unknown = walker) {
  return {
    scenario,
    free_parameters: [{ path: 'policy.angle.attack_deg', lower: 66, upper: 78 }],
    objective: { terms: [{ kind: 'survival', terrain: 'random_heights', sigma_m: 0.004, rollouts: 40, strides: 10 }] },
    seed: 7,
    holdout: { seed: 8, rollouts: 60 },
    ...overrides,
  };
}

function issuesOf(value: unknown): { path: string; message?: string; expected: string }[] {
  try {
    parseStudy(value);
  } catch (error) {
    if (error instanceof InputError) return error.issues as { path: string; message?: string; expected: string }[];
    throw error;
  }
  return [];
}

describe('two-leg studies: validation', () => {
  it('accepts survival and tracking terms, the shared limits, max_vertical_force_N and leg paths', () => {
    const s = parseStudy(
      study({
        scenario: { ...walker, legs: { right: { stiffness_scale: 0.9 } } },
        free_parameters: [
          { path: 'policy.angle.attack_deg', lower: 66, upper: 78 },
          { path: 'legs.right.stiffness_scale', lower: 0.5, upper: 1.5 },
        ],
        constraints: { max_leg_force_N: 800, max_vertical_force_N: 900, max_compression_fraction: 0.2, leg_angle_range_deg: { min_deg: 60, max_deg: 80 } },
      }),
    );
    expect(s.scenario.model).toBe('biped');
    expect(s.free_parameters.map((p) => [p.path, p.start])).toEqual([
      ['policy.angle.attack_deg', 71],
      ['legs.right.stiffness_scale', 0.9],
    ]);
  });

  it('refuses the friction limit by name with the limits the kind supports, and walking basin heights above the stance leg', () => {
    const issues = issuesOf(
      study({
        objective: {
          terms: [
            { kind: 'survival', terrain: 'random_heights', sigma_m: 0.004, rollouts: 40 },
            { kind: 'basin', mode: 'energy', heights: { low_m: 0.58, high_m: 0.61, count: 3 } },
            { kind: 'step_down' },
          ],
        },
        constraints: { friction_coefficient: 0.8 },
      }),
    );
    const byPath = Object.fromEntries(issues.map((i) => [i.path, i.message ?? i.expected]));
    expect(byPath['constraints.friction_coefficient']).toMatch(
      /scenario model "biped": the limit friction_coefficient .*double support.*; it supports max_leg_force_N, .*max_vertical_force_N/,
    );
    expect(byPath['objective.terms[1].heights.high_m']).toMatch(/at most the left stance leg's rest length \(0.6 m\)/);
    expect(issues).toHaveLength(2);
  });

  it('refuses max_vertical_force_N and leg paths on a single-leg scenario', () => {
    const issues = issuesOf(
      study({ constraints: { max_vertical_force_N: 900 }, free_parameters: [{ path: 'legs.left.stiffness_scale', lower: 0.5, upper: 2 }] }, runner),
    );
    const byPath = Object.fromEntries(issues.map((i) => [i.path, i.message ?? i.expected]));
    expect(byPath['constraints.max_vertical_force_N']).toMatch(/scenario model "slip": the limit max_vertical_force_N .*single-leg/);
    expect(issues.find((i) => i.path === 'free_parameters[0].path')).toBeTruthy();
  });
});

describe('two-leg studies: model mismatch per leg', () => {
  const mismatch = { distribution: 'uniform' as const, mass_fraction: 0.05, leg_stiffness_fraction: 0.1, leg_length_fraction: 0.02 };

  it('draws mass, then each leg\'s stiffness and length, in range; the mass stream starts as the single-leg one', () => {
    const n = 2000;
    const f = mismatchFactorsPerLeg(mismatch, 11, n);
    expect(f.length).toBe(5 * n);
    // the first robot's mass factor is the first draw of the same seeded stream
    expect(f[0]).toBe(mismatchFactors(mismatch, 11, 1)[0]);
    const fractions = [0.05, 0.1, 0.02, 0.1, 0.02];
    for (let k = 0; k < 5; k++) {
      const column = Array.from({ length: n }, (_, i) => f[i * 5 + k]);
      // uniform on [1 - f, 1 + f): every draw inside, mean 1 within 4 standard errors
      // (sd of a uniform on a width 2f interval is 2f/sqrt(12): a textbook formula)
      for (const v of column) expect(Math.abs(v - 1)).toBeLessThanOrEqual(fractions[k]);
      const mean = column.reduce((a, b) => a + b, 0) / n;
      expect(Math.abs(mean - 1)).toBeLessThan((4 * (2 * fractions[k])) / Math.sqrt(12 * n));
    }
    // the two legs are drawn separately: their stiffness factors are not the same numbers
    let same = 0;
    for (let i = 0; i < n; i++) if (f[i * 5 + 1] === f[i * 5 + 3]) same++;
    expect(same).toBe(0);
  });

  it('a robot block scales exactly the leg it names (same strides as the scenario with that leg changed)', async () => {
    const engine = await loadEngine();
    const base = parseScenario(walker);
    const run = (model: ReturnType<typeof buildModel>) => engine.runBatch({ model, inputs: startInput(base), strides: 8, records: true }).records!;
    // right leg 8 % stiffer and 1 % longer, by the robot factors and by the scenario's own leg fields
    const byRobot = run(bipedRobotBlock(buildModel(base), [1, 1, 1, 1.08, 1.01]));
    const byScenario = run(buildModel(parseScenario({ ...walker, legs: { right: { stiffness_scale: 1.08, leg_length_m: 0.6 * 1.01 } } })));
    expect(byRobot).toEqual(byScenario);
    // and the change matters (a different walk from the nominal robot's)
    expect(run(buildModel(base))[L.R_NEXT_APEX_HEIGHT + L.R_SIZE]).not.toBe(byRobot[L.R_NEXT_APEX_HEIGHT + L.R_SIZE]);
  });
});

describe('two-leg studies: basin and step_down terms', () => {
  const inProcess = async (req: Parameters<Awaited<ReturnType<typeof loadEngine>>['runBatch']>[0]) => (await loadEngine()).runBatch(req);

  it('basin equals `pronk basin` on the two-leg walker (grid and energy modes)', async () => {
    const engine = await loadEngine();
    const grid = { heights: { low_m: 0.585, high_m: 0.598, count: 5 }, speeds: { low_m_per_s: 0.8, high_m_per_s: 1.05, count: 4 }, strides: 60 };
    const energy = { heights: { low_m: 0.57, high_m: 0.6, count: 12 }, strides: 60, height_tolerance_m: 1e-3, speed_tolerance_m_per_s: 1e-3 };
    const s = parseStudy(study({ objective: { terms: [{ kind: 'basin', mode: 'grid', ...grid }, { kind: 'basin', mode: 'energy', weight: 2, ...energy }] } }));
    const evaluator = new StudyEvaluator(s, engine);
    const e = evaluator.evaluate([71]);
    const scenario = evaluator.scenarioAt([71]);
    const control = { runBatch: inProcess };
    const axis = (a: { low_m?: number; high_m?: number; low_m_per_s?: number; high_m_per_s?: number; count: number }) => ({
      low: (a.low_m ?? a.low_m_per_s)!,
      high: (a.high_m ?? a.high_m_per_s)!,
      count: a.count,
    });
    const g = await basinOfAttraction(scenario, { heights: axis(grid.heights), speeds: axis(grid.speeds), strides: 60 }, control);
    const en = await basinOfAttraction(
      scenario,
      { heights: axis(energy.heights), energy: true, strides: 60, heightTolerance_m: 1e-3, speedTolerance_m_per_s: 1e-3 },
      control,
    );
    expect(e.terms[0].score).toBe(g.attracted_fraction);
    expect(e.terms[1].score).toBe(en.attracted_fraction);
    // the demo walker's fixed point is stable (|lambda| 0.90, scenarios/demo-biped.json): some cells settle
    expect(en.attracted_fraction).toBeGreaterThan(0);
    expect(g.attracted_fraction).toBeGreaterThan(0);
    expect(e.objective).toBeCloseTo(g.attracted_fraction + 2 * en.attracted_fraction, 12);
  }, 60_000);

  it('step_down equals `pronk stepdown` on the two-leg walker, over the landing leg\'s length', async () => {
    const engine = await loadEngine();
    const s = parseStudy(study({ objective: { terms: [{ kind: 'step_down', strides_after: 10 }] } }));
    const evaluator = new StudyEvaluator(s, engine);
    for (const x of [[71], [73]]) {
      const e = evaluator.evaluate(x);
      const reference = await stepTolerance(evaluator.scenarioAt(x), { after: 10 });
      expect(e.terms[0].details).toMatchObject({ max_step_down_m: reference.max_step_down_m, survives_flat: reference.survives_flat });
      expect(e.terms[0].score).toBe(reference.max_step_down_m / 0.6);
      // the walker survives some drop at its own angle, so the comparison means something
      if (x[0] === 71) expect(reference.max_step_down_m).toBeGreaterThan(0);
    }
  }, 60_000);
});

describe('two-leg studies: evaluation', () => {
  it('measures the limits on the rollouts: the peak vertical force is at least the weight, each leg within it', async () => {
    const engine = await loadEngine();
    const s = parseStudy(
      study({
        constraints: { max_leg_force_N: 2000, max_vertical_force_N: 2000, max_compression_fraction: 0.5, stiffness_range_N_per_m: { min_N_per_m: 1000, max_N_per_m: 50000 } },
        model_mismatch: { distribution: 'uniform', mass_fraction: 0.05, leg_stiffness_fraction: 0.05, leg_length_fraction: 0.005 },
      }),
    );
    const evaluator = new StudyEvaluator(s, engine);
    const e = evaluator.evaluate([71]);
    expect(e.valid).toBe(true);
    const value = (name: string) => e.constraints.find((c) => c.name === name)!.value!;
    // over a whole walking stride the mean vertical ground force equals the weight (momentum
    // balance: the body returns to the same vertical speed, 0, at each section), so its peak is at
    // least m g; with the 5 % lighter robots at least 0.95 m g
    expect(value('max_vertical_force_N')).toBeGreaterThan(0.95 * 28 * 9.80665);
    // one leg's vertical force is at most its leg force, and at most the summed vertical force in single support
    expect(value('max_leg_force_N')).toBeGreaterThan(0.95 * 28 * 9.80665);
    expect(value('max_compression_fraction')).toBeGreaterThan(0);
    expect(value('max_compression_fraction')).toBeLessThan(0.5);
    // deterministic (common random numbers): the same x gives the same evaluation on a fresh evaluator
    const again = new StudyEvaluator(s, engine).evaluate([71]);
    expect(again.score).toBe(e.score);
    expect(again.constraints).toEqual(e.constraints);
  });

  it('each leg\'s stiffness is checked against the stiffness range (the policy\'s times the leg\'s scale)', () => {
    const scenario = parseScenario({ ...walker, legs: { right: { stiffness_scale: 0.5 } } });
    expect(stiffnessValues(scenario).sort((a, b) => a - b)).toEqual([5850, 11700]);
    // the single-leg scenario keeps its one stiffness
    expect(stiffnessValues(parseScenario(runner))).toEqual([runner.body.leg_stiffness_N_per_m]);
  });

  it('a small search runs end to end: result model "biped", finite scores, the held-out paired comparison', async () => {
    const s = parseStudy(
      study({
        constraints: { max_vertical_force_N: 1500 },
        search: { method: 'COBYLA', max_evaluations: 8, restarts: 1 },
      }),
    );
    const r = await optimizeStudy(s, { workers: 1 });
    expect(r.model).toBe('biped');
    expect(Number.isFinite(r.summary.training_score.best)).toBe(true);
    expect(r.summary.training_score.best).toBeGreaterThanOrEqual(r.summary.training_score.start);
    expect(r.summary.holdout_survival).toHaveLength(1);
    const [low, high] = r.summary.holdout_survival[0].gain_paired95;
    expect(low).toBeLessThanOrEqual(r.summary.holdout_survival[0].gain);
    expect(high).toBeGreaterThanOrEqual(r.summary.holdout_survival[0].gain);
    expect(r.constraints.map((c) => c.name)).toEqual(['max_vertical_force_N']);
  }, 60_000);
});
