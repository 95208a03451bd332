// Study files: the schema's defaults, files that refer to a scenario file, round trips into a
// worker, and every class of bad study rejected with an InputError naming the field, what was
// expected and what was found.
import { mkdtempSync, mkdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { InputError } from '../src/core/errors.js';
import {
  DEFAULT_PENALTY_WEIGHT,
  parseParameterPath,
  parseStudy,
  readStudyFile,
  scenarioValueAt,
  usesNativeConstraints,
} from '../src/core/optimize/study.js';
import { demoScenario } from '../src/core/scenario.js';

// The human-like body of Seyfarth et al. 2002 (J. Biomech. 35(5):649–655).
const SCENARIO = {
  body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
  start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
  policy: { angle: { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 50, max_deg: 85 }, stiffness: { kind: 'constant' } },
  strides: 20,
};

const STUDY = {
  scenario: SCENARIO,
  free_parameters: [
    { path: 'policy.angle.attack_at_apex_deg', lower: 55, upper: 75 },
    { path: 'policy.angle.rate_deg_per_s', lower: 0, upper: 150, start: 40 },
  ],
  objective: {
    terms: [
      { kind: 'survival', terrain: 'random_walk', sigma_m: 0.01, rollouts: 200 },
      { kind: 'tracking', weight: 0.1, terrain: 'random_heights', sigma_m: 0.005, rollouts: 50, height_scale_m: 0.01, speed_scale_m_per_s: 0.1 },
      { kind: 'basin', weight: 0.5, mode: 'energy', heights: { low_m: 0.95, high_m: 2, count: 21 } },
      { kind: 'step_down', weight: 0.5 },
    ],
  },
  constraints: { max_leg_force_N: 4000, friction_coefficient: 0.8 },
  seed: 1,
  holdout: { seed: 2, rollouts: 1000 },
};

// A copy of `base` with the value at `path` replaced (or removed, for undefined).
function edited(path: (string | number)[], value: unknown, base: unknown = STUDY): Record<string, unknown> {
  const copy = structuredClone(base) as Record<string | number, unknown>;
  let parent = copy;
  for (const key of path.slice(0, -1)) parent = parent[key] as Record<string | number, unknown>;
  const last = path[path.length - 1];
  if (value === undefined) delete parent[last];
  else parent[last] = value;
  return copy as Record<string, unknown>;
}

function issuesOf(value: unknown): InputError {
  let error: unknown;
  try {
    parseStudy(value);
  } catch (caught) {
    error = caught;
  }
  expect(error, 'parseStudy should have thrown').toBeInstanceOf(InputError);
  return error as InputError;
}

// The one line naming `path` (exactly one), in the user's format `path: ...`.
function lineFor(value: unknown, path: string): string {
  const error = issuesOf(value);
  const lines = error.format().split('\n').filter((line) => line.startsWith(`${path}: `));
  expect(lines, `a message for ${path} in:\n${error.format()}`).toHaveLength(1);
  return lines[0];
}

describe('valid studies', () => {
  it('fills the defaults', () => {
    const study = parseStudy(STUDY);
    expect(study.free_parameters).toEqual([
      { path: 'policy.angle.attack_at_apex_deg', lower: 55, upper: 75, start: 60 }, // the base scenario's value
      { path: 'policy.angle.rate_deg_per_s', lower: 0, upper: 150, start: 40 },
    ]);
    const [survival, tracking, basin, step] = study.objective.terms;
    expect(survival).toMatchObject({ weight: 1, strides: 20 });
    expect(tracking).toMatchObject({ strides: 20, target_apex_height_m: 1, target_forward_speed_m_per_s: 5, fall_penalty: 10 });
    expect(basin).toMatchObject({ speeds: null, strides: 30, height_tolerance_m: 1e-4, speed_tolerance_m_per_s: 1e-4 });
    expect(step).toMatchObject({ strides_after: 20, resolution_m: 0.001, grid_m: 0.005 });
    expect(study.search).toEqual({
      method: 'COBYLA',
      max_evaluations: 200,
      max_time_s: 0,
      xtol_rel: 1e-4,
      restarts: 1,
      constraint_handling: 'native', // COBYLA takes constraints
      penalty_weight: DEFAULT_PENALTY_WEIGHT,
      seed: 1, // the study's seed
    });
    expect(usesNativeConstraints(study)).toBe(true);
    expect(study.model_mismatch).toBeNull();
    expect(study.scenario_source).toBe('inline');
    expect(study.scenario.integrator.relative_tolerance).toBe(1e-10); // the scenario's own defaults
  });

  it('a method without native constraints defaults to the penalty', () => {
    const study = parseStudy(edited(['search'], { method: 'BOBYQA' }));
    expect(study.search.constraint_handling).toBe('penalty');
    expect(usesNativeConstraints(study)).toBe(false);
    const auglag = parseStudy(edited(['search'], { method: 'AUGLAG', local_method: 'BOBYQA' }));
    expect(auglag.search).toMatchObject({ method: 'AUGLAG', local_method: 'BOBYQA', constraint_handling: 'native' });
  });

  it('is plain JSON: a JSON round trip (a worker\'s postMessage) re-validates to the same study', () => {
    const study = parseStudy(edited(['model_mismatch'], { distribution: 'normal', mass_fraction: 0.05 }));
    const copy = JSON.parse(JSON.stringify(study));
    expect(copy).toEqual(study);
    expect(parseStudy(copy)).toEqual(study);
    expect(parseStudy(structuredClone(study))).toEqual(study);
  });

  it('a tracking target taken from any valid scenario start re-validates (found by the fuzz suite, seed 7331, case 2235)', () => {
    // the scenario takes apex heights to 1e4 m and speeds to 1e3 m/s; the defaulted target is the
    // start, so the study's target bounds must be at least as wide or a worker refuses the study
    for (const start of [{ apex_height_m: 4500, forward_speed_m_per_s: 3 }, { apex_height_m: 1, forward_speed_m_per_s: 999 }]) {
      const base = edited(['scenario', 'start'], start);
      const study = parseStudy(edited(['objective'], { terms: [{ kind: 'tracking', terrain: 'random_heights', sigma_m: 0.005, rollouts: 4, strides: 4, height_scale_m: 0.01, speed_scale_m_per_s: 0.1 }] }, base));
      const term = study.objective.terms[0] as { target_apex_height_m: number; target_forward_speed_m_per_s: number };
      expect([term.target_apex_height_m, term.target_forward_speed_m_per_s]).toEqual([start.apex_height_m, start.forward_speed_m_per_s]);
      expect(parseStudy(JSON.parse(JSON.stringify(study)))).toEqual(study);
    }
  });

  it('reads a scenario_file relative to the study file, not the working directory', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'pronk-study-'));
    mkdirSync(join(dir, 'robots'));
    mkdirSync(join(dir, 'studies'));
    writeFileSync(join(dir, 'robots', 'human.json'), JSON.stringify(SCENARIO));
    const file = join(dir, 'studies', 'study.json');
    writeFileSync(file, JSON.stringify(edited(['scenario_file'], '../robots/human.json', edited(['scenario'], undefined))));
    const study = await readStudyFile(file);
    expect(study.scenario_source).toBe('../robots/human.json');
    expect(study.scenario.body.mass_kg).toBe(80);
    // a worker re-validates the inline copy and keeps the provenance
    expect(parseStudy(JSON.parse(JSON.stringify(study))).scenario_source).toBe('../robots/human.json');
  });

  it('the demo study parses, on the invented demo robot', async () => {
    const study = await readStudyFile('scenarios/demo-study.json');
    expect(study.scenario).toEqual(demoScenario());
    expect(study.scenario_source).toBe('demo.json');
    expect(study.free_parameters.map((p) => p.start)).toEqual([64, 40, 80]); // scenarios/demo.json
    expect(study.model_mismatch).toMatchObject({ distribution: 'uniform' });
  });

  it('parses parameter paths and sets them in a copy of the scenario', () => {
    expect(parseParameterPath('policy.angle.attack_deg[3]')).toEqual(['policy', 'angle', 'attack_deg', 3]);
    expect(parseParameterPath(' body . leg_stiffness_N_per_m ')).toEqual(['body', 'leg_stiffness_N_per_m']);
    expect(parseParameterPath('policy..angle')).toBeNull();
    expect(parseParameterPath('policy.angle[-1]')).toBeNull();
    const study = parseStudy(STUDY);
    const value = scenarioValueAt(study.scenario, study.free_parameters, [70, 90]) as typeof SCENARIO;
    expect(value.policy.angle).toMatchObject({ attack_at_apex_deg: 70, rate_deg_per_s: 90 });
    expect(study.scenario.policy.angle).toMatchObject({ attack_at_apex_deg: 60 }); // the base is untouched
  });
});

describe('bad studies name the field', () => {
  const freeParameter = (entry: object, base: unknown = STUDY) => edited(['free_parameters', 0], entry, base);

  it('an unknown parameter path, with a did-you-mean', () => {
    const line = lineFor(freeParameter({ path: 'policy.angle.rate_deg_per_sec', lower: 0, upper: 1 }), 'free_parameters[0].path');
    expect(line).toMatch(/expected a numeric field of the base scenario's policy or body/);
    expect(line).toMatch(/did you mean policy\.angle\.rate_deg_per_s\?/);
    // a field of another policy kind
    expect(lineFor(freeParameter({ path: 'policy.angle.attack_deg', lower: 55, upper: 75 }), 'free_parameters[0].path')).toMatch(
      /a retraction angle policy\) has no attack_deg: its fields are attack_at_apex_deg, rate_deg_per_s, max_deg/,
    );
  });

  it.each<[string, RegExp]>([
    ['policy.angle.min_deg', /an optional field must be in the base scenario/],
    ['start.apex_height_m', /only policy and body numbers can be searched/],
    ['policy.angle.kind', /"retraction", not a number/],
    ['policy.angle', /not a number/],
    ['policy.angle.max_deg[0]', /not a table/],
    ['policy..angle', /names joined by dots/],
    ['body.mass', /did you mean body\.mass_kg\?/],
  ])('path %s', (path, pattern) => {
    expect(lineFor(freeParameter({ path, lower: 0, upper: 1 }), 'free_parameters[0].path')).toMatch(pattern);
  });

  it('table paths need an index within the table', () => {
    const tabled = edited(['scenario', 'policy', 'angle'], { kind: 'time_table', time_since_apex_s: [0, 0.1], attack_deg: [60, 66] });
    const free = (path: string) => edited(['free_parameters'], [{ path, lower: 55, upper: 75 }], tabled);
    expect(lineFor(free('policy.angle.attack_deg'), 'free_parameters[0].path')).toMatch(/give an index, e.g\. policy\.angle\.attack_deg\[0\]/);
    expect(lineFor(free('policy.angle.attack_deg[2]'), 'free_parameters[0].path')).toMatch(/has 2 values: an index from 0 to 1/);
    expect(parseStudy(free('policy.angle.attack_deg[1]')).free_parameters[0].start).toBe(66);
  });

  it('the same path twice', () => {
    const twice = edited(['free_parameters', 1], { path: 'policy.angle.attack_at_apex_deg', lower: 56, upper: 70 });
    expect(lineFor(twice, 'free_parameters[1].path')).toMatch(/a path not listed before \(free_parameters\[0\]\.path is the same\)/);
  });

  it('empty, inverted and non-finite bounds', () => {
    expect(lineFor(freeParameter({ path: 'policy.angle.attack_at_apex_deg', lower: 60, upper: 60 }), 'free_parameters[0].upper')).toMatch(
      /expected a number > lower \(60\): the bounds are empty, found 60/,
    );
    expect(lineFor(freeParameter({ path: 'policy.angle.attack_at_apex_deg', lower: 75, upper: 55 }), 'free_parameters[0].upper')).toMatch(/inverted, found 55/);
    // JSON's 1e999 parses to Infinity
    expect(lineFor(freeParameter({ path: 'policy.angle.attack_at_apex_deg', lower: -Infinity, upper: 55 }), 'free_parameters[0].lower')).toMatch(/found -Infinity/);
  });

  it('a start outside the bounds, given or from the base scenario', () => {
    expect(lineFor(freeParameter({ path: 'policy.angle.attack_at_apex_deg', lower: 55, upper: 75, start: 80 }), 'free_parameters[0].start')).toMatch(
      /expected a start within \[55, 75\], found 80/,
    );
    expect(lineFor(freeParameter({ path: 'policy.angle.attack_at_apex_deg', lower: 62, upper: 75 }), 'free_parameters[0].start')).toMatch(
      /the base scenario's value 60 lies outside the bounds \(give start, or widen the bounds\), found missing/,
    );
  });

  it('start values that make an invalid scenario', () => {
    const clamps = edited(['free_parameters'], [{ path: 'policy.angle.max_deg', lower: 50, upper: 89, start: 55 }]);
    // 55 < the attack at apex 60 is allowed (it clamps); with min_deg above it is not
    const both = edited(['scenario', 'policy', 'angle', 'min_deg'], 58, clamps);
    expect(parseStudy(clamps).free_parameters[0].start).toBe(55);
    expect(lineFor(both, 'free_parameters')).toMatch(/start values that give a valid scenario, found a scenario where policy\.angle\.max_deg/);
  });

  it('an unknown algorithm, with a did-you-mean', () => {
    expect(lineFor(edited(['search'], { method: 'COBYLO' }), 'search.method')).toMatch(/expected one of COBYLA, BOBYQA.*found "COBYLO" \(did you mean COBYLA\?\)/);
    expect(lineFor(edited(['search'], { method: 'MLSL', local_method: 'SIMPLEX' }), 'search.local_method')).toMatch(/found "SIMPLEX"/);
  });

  it('a constraint the method cannot take, with native handling', () => {
    const line = lineFor(edited(['search'], { method: 'BOBYQA', constraint_handling: 'native' }), 'search.constraint_handling');
    expect(line).toMatch(/expected penalty: BOBYQA cannot take constraints natively/);
    // without constraints there is nothing to handle
    expect(() => parseStudy(edited(['search'], { method: 'BOBYQA', constraint_handling: 'native' }, edited(['constraints'], undefined)))).not.toThrow();
  });

  it('MLSL and AUGLAG need a local method; other methods take none; the local one must be local', () => {
    expect(lineFor(edited(['search'], { method: 'MLSL', constraint_handling: 'penalty' }), 'search.local_method')).toMatch(/a local method for MLSL.*found missing/);
    expect(lineFor(edited(['search'], { method: 'AUGLAG', local_method: 'DIRECT_L' }), 'search.local_method')).toMatch(/expected a local method \(COBYLA/);
    expect(lineFor(edited(['search'], { method: 'COBYLA', local_method: 'BOBYQA' }), 'search.local_method')).toMatch(/only MLSL and AUGLAG take one/);
  });

  it('a held-out seed equal to the training seed, or none', () => {
    expect(lineFor(edited(['holdout', 'seed'], 1), 'holdout.seed')).toMatch(/a seed other than the training seed \(1\).*found 1/);
    expect(lineFor(edited(['holdout'], undefined), 'holdout')).toMatch(/found missing/);
    expect(lineFor(edited(['holdout', 'rollouts'], 0), 'holdout.rollouts')).toMatch(/an integer from 1/);
  });

  it('an unknown objective kind, with a did-you-mean', () => {
    const line = lineFor(edited(['objective', 'terms', 0, 'kind'], 'survial'), 'objective.terms[0].kind');
    expect(line).toMatch(/expected one of survival, tracking, basin, step_down, recovery, found "survial" \(did you mean survival\?\)/);
    expect(lineFor(edited(['objective', 'terms'], []), 'objective.terms')).toMatch(/an array of 1 to 32 objective terms, found \[\]/);
  });

  it.each([0, -1, '1', null, Infinity, 1e200, 1e-9])('a bad weight: %s', (weight) => {
    expect(lineFor(edited(['objective', 'terms', 1, 'weight'], weight), 'objective.terms[1].weight')).toMatch(/expected a weight from 0\.000001 to 1000000, found/);
  });

  it('unknown fields get a did-you-mean, at any depth', () => {
    const misspelt = edited(['objective', 'terms', 0, 'rollout'], 10, edited(['objective', 'terms', 0, 'rollouts'], undefined));
    expect(lineFor(misspelt, 'objective.terms[0].rollout')).toMatch(/did you mean rollouts\?/);
    expect(lineFor(misspelt, 'objective.terms[0].rollouts')).toMatch(/found missing/);
    expect(lineFor(edited(['constraints', 'max_hip_rate'], 10), 'constraints.max_hip_rate')).toMatch(/did you mean max_hip_rate_deg_per_s\?/);
    expect(lineFor(edited(['sead'], 3, edited(['seed'], undefined)), 'sead')).toMatch(/did you mean seed\?/);
  });

  it('term, constraint and mismatch values', () => {
    expect(lineFor(edited(['objective', 'terms', 0, 'terrain'], 'bumpy'), 'objective.terms[0].terrain')).toMatch(/one of random_walk, random_heights/);
    expect(lineFor(edited(['objective', 'terms', 0, 'sigma_m'], -0.01), 'objective.terms[0].sigma_m')).toMatch(/a number from 0 to 10 \(m\), found -0\.01/);
    expect(lineFor(edited(['objective', 'terms', 1, 'height_scale_m'], undefined), 'objective.terms[1].height_scale_m')).toMatch(/found missing/);
    expect(lineFor(edited(['objective', 'terms', 2, 'speeds'], { low_m_per_s: 4, high_m_per_s: 6, count: 3 }), 'objective.terms[2].speeds')).toMatch(/no speed axis in energy mode/);
    expect(lineFor(edited(['objective', 'terms', 2, 'mode'], 'grid'), 'objective.terms[2].speeds')).toMatch(/a speed axis .* in grid mode/);
    expect(lineFor(edited(['objective', 'terms', 2, 'heights', 'high_m'], 0.9), 'objective.terms[2].heights')).toMatch(/low < high/);
    expect(lineFor(edited(['objective', 'terms', 3, 'resolution_m'], 0.5), 'objective.terms[3].resolution_m')).toMatch(/leg length \/ 10/);
    expect(lineFor(edited(['constraints', 'leg_angle_range_deg'], { min_deg: 70, max_deg: 60 }), 'constraints.leg_angle_range_deg.max_deg')).toMatch(/an angle > min_deg \(70 deg\), found 60/);
    expect(lineFor(edited(['constraints', 'max_compression_fraction'], 1.5), 'constraints.max_compression_fraction')).toMatch(/a number from 0\.000001 to below 1 \(a fraction of the leg length\), found 1\.5/);
    const normal = { distribution: 'normal', leg_stiffness_fraction: 0.4 };
    expect(lineFor(edited(['model_mismatch'], normal), 'model_mismatch.leg_stiffness_fraction')).toMatch(/< 1\/3 \(normal: every drawn factor must stay > 0\), found 0\.4/);
    expect(lineFor(edited(['model_mismatch'], { distribution: 'triangular' }), 'model_mismatch.distribution')).toMatch(/one of uniform/);
  });

  // Every number a study accepts keeps the objective finite and of a size NLopt handles (COBYLA
  // failed inside NLopt on an objective weight of 1e200, measured), and an evaluation's work bounded.
  it.each([
    [['objective', 'terms', 1, 'fall_penalty'], 1e6, 'objective.terms[1].fall_penalty', /a number > 0 and <= 1000/],
    [['objective', 'terms', 1, 'height_scale_m'], 1e-300, 'objective.terms[1].height_scale_m', /a number from 1e-9 to 1000 \(m\), found 1e-300/],
    [['objective', 'terms', 1, 'target_apex_height_m'], 1e300, 'objective.terms[1].target_apex_height_m', /a number from -10000 to 10000 \(m\)/],
    [['objective', 'terms', 0, 'sigma_m'], 1e300, 'objective.terms[0].sigma_m', /a number from 0 to 10 \(m\), found 1e\+300/],
    [['objective', 'terms', 2, 'heights', 'high_m'], 1e308, 'objective.terms[2].heights.high_m', /a number from -10000 to 10000 \(m\)/],
    [['free_parameters', 0, 'upper'], 1e300, 'free_parameters[0].upper', /a number from -1000000000 to 1000000000/],
    [['constraints', 'max_leg_force_N'], 5e-324, 'constraints.max_leg_force_N', /a number from 0\.001 to 1000000000 \(N\), found 5e-324/],
    [['constraints', 'friction_coefficient'], 1e300, 'constraints.friction_coefficient', /a number from 0\.001 to 100/],
    [['constraints', 'leg_angle_range_deg'], { min_deg: 1e-300, max_deg: 80 }, 'constraints.leg_angle_range_deg.min_deg', /an angle from 0\.01 to 90 \(deg from the horizontal\), found 1e-300/],
    [['search'], { penalty_weight: 1e300 }, 'search.penalty_weight', /a number > 0 and <= 1000000/],
    [['search'], { max_time_s: 1e300 }, 'search.max_time_s', /a number from 0 to 1000000/],
    [['search'], { restarts: 1001 }, 'search.restarts', /an integer from 1 to 1000, found 1001/],
    [['search'], { restarts: 1000, max_evaluations: 1e6 }, 'search.max_evaluations', /at most 10000000 evaluations in all \(restarts x max_evaluations; 1000 restarts: max_evaluations <= 10000\), found 1000000/],
    [['objective', 'terms', 0], { kind: 'survival', terrain: 'random_walk', sigma_m: 0.01, rollouts: 1e6, strides: 200 }, 'objective.terms',
      /at most 100000000 Monte Carlo strides per evaluation \(the sum over survival and tracking terms of rollouts x strides\), found 200001000 strides/],
  ] as const)('bounds: %s = %s', (path, value, field, message) => {
    expect(lineFor(edited([...path], value), field)).toMatch(message);
  });

  it('the held-out rollouts of one candidate are bounded too', () => {
    const long = edited(['objective', 'terms', 0, 'strides'], 100, edited(['holdout'], { seed: 2, rollouts: 1e6 }));
    expect(lineFor(long, 'holdout.rollouts')).toMatch(/at most 100000000 held-out strides per candidate .*found 1000000 \(120000000 strides\)/);
  });

  it('an objective weight of 1e200 is refused before NLopt sees it; the largest weights still give a finite objective', () => {
    expect(lineFor(edited(['objective', 'terms', 0, 'weight'], 1e200), 'objective.terms[0].weight')).toMatch(/found 1e\+200/);
    const big = edited(['objective', 'terms', 1, 'fall_penalty'], 1000, edited(['objective', 'terms', 1, 'weight'], 1e6));
    expect(parseStudy(big).objective.terms[1]).toMatchObject({ weight: 1e6, fall_penalty: 1000 });
  });

  it('the work of one step-down and one basin evaluation is bounded', () => {
    // 1 m leg, 1e-6 m grid: about a million probes of 21 strides
    const fine = edited(['objective', 'terms', 3], { kind: 'step_down', resolution_m: 1e-6, grid_m: 1e-6 });
    expect(lineFor(fine, 'objective.terms[3].grid_m')).toMatch(/at most 10000000 strides per evaluation \(probes x \(1 \+ strides_after\)\).*found 0\.000001 \(1000001 probes of 21 strides\)/);
    const basin = edited(['objective', 'terms', 2], { kind: 'basin', mode: 'energy', heights: { low_m: 0.95, high_m: 2, count: 100000 }, strides: 1000 });
    expect(lineFor(basin, 'objective.terms[2].strides')).toMatch(/at most 10000000 strides per evaluation \(cells x strides; this grid has 100000 cells: strides <= 100\), found 1000/);
  });

  it('the scenario: inline problems under scenario., both or neither source', () => {
    expect(lineFor(edited(['scenario', 'body', 'mass_kg'], -80), 'scenario.body.mass_kg')).toMatch(/expected a number from 1e-6 to 1e6 \(kg\), found -80/);
    expect(lineFor(edited(['scenario_file'], 'x.json'), 'scenario_file')).toMatch(/not both/);
    expect(lineFor(edited(['scenario'], undefined), 'scenario')).toMatch(/found missing/);
    // a file path given to parseStudy directly (only readStudyFile knows where the study is)
    expect(lineFor(edited(['scenario_file'], 'x.json', edited(['scenario'], undefined)), 'scenario_file')).toMatch(/readStudyFile/);
  });

  it('every problem at once', () => {
    const many = edited(['seed'], -1, edited(['search'], { method: 'NEWTON' }, edited(['objective', 'terms', 0, 'weight'], 0)));
    const paths = issuesOf(many).issues.map((issue) => issue.path);
    expect(paths).toEqual(expect.arrayContaining(['seed', 'search.method', 'objective.terms[0].weight']));
  });

  it('study files: missing, bad JSON, and a scenario file with its own problem', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'pronk-study-'));
    await expect(readStudyFile(join(dir, 'none.json'))).rejects.toThrow(/none\.json: cannot read the file \(no such file\)/);
    writeFileSync(join(dir, 'bad.json'), '{ "seed": 1, }');
    await expect(readStudyFile(join(dir, 'bad.json'))).rejects.toThrow(/bad\.json: invalid JSON at line 1, column 14: trailing comma/);
    writeFileSync(join(dir, 'robot.json'), JSON.stringify(edited(['body', 'leg_length_m'], 0, SCENARIO)));
    writeFileSync(join(dir, 'study.json'), JSON.stringify(edited(['scenario_file'], 'robot.json', edited(['scenario'], undefined))));
    const error = await readStudyFile(join(dir, 'study.json')).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(InputError);
    expect((error as InputError).format()).toMatch(/robot\.json: body\.leg_length_m: expected a number from 1e-4 to 100 \(m\), found 0/);
  });
});
