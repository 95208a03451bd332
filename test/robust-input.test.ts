// Whatever the scenario, the validator either accepts it or throws an InputError naming a field,
// and an accepted scenario always simulates to finite numbers (a fall is a status, never a NaN).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { InputError } from '../src/core/errors.js';
import { demoScenario, parseScenario, type Scenario } from '../src/core/scenario.js';
import { simulate } from '../src/core/simulate.js';

const repoRoot = join(dirname(fileURLToPath(import.meta.url)), '..');

// Small deterministic generator (mulberry32, common practice for test data).
function rng(seed: number) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = Math.imul(a ^ (a >>> 15), 1 | a);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const weird = [0, -1, 1e-9, 1e9, 1e300, -1e300, Infinity, NaN, '5', null, [], {}, true, 0.5, 90, 91, 1e-300];

function mutate(value: any, r: () => number): any {
  const copy = structuredClone(value);
  const paths: (string | number)[][] = [];
  const walk = (v: any, path: (string | number)[]) => {
    paths.push(path);
    if (v && typeof v === 'object') for (const k of Object.keys(v)) walk(v[k], [...path, Array.isArray(v) ? Number(k) : k]);
  };
  walk(copy, []);
  const path = paths[1 + Math.floor(r() * (paths.length - 1))];
  let parent = copy;
  for (const key of path.slice(0, -1)) parent = parent[key];
  const last = path[path.length - 1];
  const roll = r();
  if (roll < 0.15) delete parent[last];
  else if (roll < 0.3 && typeof parent[last] === 'number') parent[last] *= 0.5 + 1.5 * r();
  else parent[last] = weird[Math.floor(r() * weird.length)];
  return copy;
}

function allFinite(v: unknown): boolean {
  if (typeof v === 'number') return Number.isFinite(v);
  if (Array.isArray(v)) return v.every(allFinite);
  if (v && typeof v === 'object') return Object.values(v).every(allFinite);
  return true;
}

describe('mutated scenarios', () => {
  it('400 mutations of the demo: InputError naming a field, or a finite simulation', async () => {
    const base = JSON.parse(JSON.stringify(demoScenario()));
    const r = rng(20261201);
    let accepted = 0;
    for (let i = 0; i < 400; i++) {
      let candidate = mutate(base, r);
      if (r() < 0.3) candidate = mutate(candidate, r);
      let scenario: Scenario;
      try {
        scenario = parseScenario(candidate);
      } catch (error) {
        expect(error).toBeInstanceOf(InputError);
        const issues = (error as InputError).issues;
        expect(issues.length).toBeGreaterThan(0);
        for (const issue of issues) expect(issue.path.length).toBeGreaterThan(0);
        continue;
      }
      accepted++;
      const result = await simulate(scenario, { strides: Math.min(scenario.strides, 30) });
      const { caution: _c, ...numbers } = result;
      expect(allFinite(numbers.apexes)).toBe(true);
      expect(allFinite(numbers.strides)).toBe(true);
      expect(['completed', 'failed']).toContain(result.outcome.status);
    }
    expect(accepted).toBeGreaterThan(40); // the generator also exercises the simulator
  });
});

describe('scenarios at the corners of the physical bounds (DEVELOPERS.md, scenario files)', () => {
  const at = (body: object, start: object, angle: object = { kind: 'fixed', attack_deg: 60 }, terrain: object = { kind: 'flat' }) =>
    parseScenario({ body, start, policy: { angle }, terrain, strides: 3 });
  const corners = {
    'a 1 mg robot on a 0.1 mm leg with the stiffest spring (ω = 1e9 rad/s)': at(
      { mass_kg: 1e-6, leg_length_m: 1e-4, leg_stiffness_N_per_m: 1e12 },
      { apex_height_m: 1.5e-4, forward_speed_m_per_s: 0.01 },
    ),
    'a 1000 t machine on a 100 m leg with the softest spring, at 1000 m/s², 1000 m/s': at(
      { mass_kg: 1e6, leg_length_m: 100, leg_stiffness_N_per_m: 1e-3, gravity_m_per_s2: 1000 },
      { apex_height_m: 150, forward_speed_m_per_s: 1000 },
    ),
    'the weakest gravity, the highest apex and the fastest speed': at(
      { mass_kg: 1, leg_length_m: 0.1, leg_stiffness_N_per_m: 1, gravity_m_per_s2: 1e-5 },
      { apex_height_m: 1e4, forward_speed_m_per_s: 1000 },
    ),
    // 2 N s/m = 100 x 2 sqrt(100 N/m x 1e-6 kg): the largest damping ratio accepted (MAX_DAMPING_RATIO)
    'the strongest damping on the lightest body': at(
      { mass_kg: 1e-6, leg_length_m: 1, leg_stiffness_N_per_m: 100, leg_damping_N_s_per_m: 2 },
      { apex_height_m: 1.2, forward_speed_m_per_s: 1 },
    ),
    'the fastest retraction, and the lowest ground': at(
      { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000 },
      { apex_height_m: -9998, forward_speed_m_per_s: 5 },
      { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 1e5 },
      { kind: 'steps', ground_heights_m: [-1e4] },
    ),
  };

  it.each(Object.entries(corners))('%s: simulate and map give finite numbers (a fall is a status)', async (_name, scenario) => {
    const { apexReturnMap } = await import('../src/core/analysis/return-map.js');
    const result = await simulate(scenario, { strides: 3 });
    expect(allFinite(result.apexes)).toBe(true);
    expect(allFinite(result.strides)).toBe(true);
    const map = await apexReturnMap(scenario, { samples: 11, iterations: 2 });
    expect(Number.isFinite(map.energy_J)).toBe(true);
    expect(allFinite(map.domain)).toBe(true);
    for (const sample of map.samples) {
      expect(Number.isFinite(sample.apex_height_m)).toBe(true);
      expect(Number.isFinite(sample.forward_speed_m_per_s)).toBe(true);
    }
    expect(allFinite(map.fixed_points)).toBe(true);
  });
});

// ---------------------------------------------------------------------------------------------
// Messages: every refusal names the field or option, what was expected and what was found; never
// the validator library's own text, never a message blaming an internal quantity.

describe('messages name the field, what was expected and what was found', () => {
  // zod's own phrases (its default messages), which say nothing a user can act on
  const RAW = /Invalid input|nonoptional|received undefined|Invalid option|Too (big|small)|expected (string|number|object|array), received/;

  function issuesOf(f: () => unknown): InputError['issues'] {
    try {
      f();
    } catch (error) {
      expect(error).toBeInstanceOf(InputError);
      return (error as InputError).issues;
    }
    return [];
  }
  async function issuesOfAsync(f: () => Promise<unknown>): Promise<InputError['issues']> {
    try {
      await f();
    } catch (error) {
      expect(error).toBeInstanceOf(InputError);
      return (error as InputError).issues;
    }
    return [];
  }
  function expectClear(issues: InputError['issues'], label: string) {
    for (const issue of issues) {
      const text = new InputError([issue]).format();
      expect(text, label).not.toMatch(RAW);
      if (issue.message === undefined) {
        expect(issue.expected.trim().length, `${label}: ${text}`).toBeGreaterThan(0);
        expect(issue.found.trim().length, `${label}: ${text}`).toBeGreaterThan(0);
        expect(issue.expected.trim(), `${label}: ${text}`).not.toBe(issue.found.trim()); // never "expected 10, found 10"
      }
    }
  }

  it('300 mutated result files and 300 mutated studies: each problem in words of its own', async () => {
    const { parseResult } = await import('../src/core/export/input.js');
    const { parseStudy } = await import('../src/core/optimize/study.js');
    const { contentHash } = await import('../src/core/version.js');
    const scenario = JSON.parse(JSON.stringify(demoScenario()));
    const result = {
      format: 'pronk-result',
      format_version: 1,
      kind: 'deadbeat',
      scenario,
      policy: scenario.policy,
      constraints: [{ name: 'peak_leg_force_N', value: 100, limit: 200, margin: 100 }],
      provenance: { pronk_version: '0.1.0', scenario_sha256: await contentHash(scenario), date: '2026-01-01T00:00:00Z' },
    };
    const study = {
      scenario,
      free_parameters: [{ path: 'policy.angle.rate_deg_per_s', lower: 0, upper: 80 }],
      objective: { terms: [{ kind: 'survival', terrain: 'random_walk', sigma_m: 0.005, rollouts: 10, strides: 5 }] },
      constraints: { max_leg_force_N: 2000, leg_angle_range_deg: { min_deg: 40, max_deg: 85 } },
      search: { method: 'COBYLA', max_evaluations: 6, restarts: 1 },
      seed: 1,
      holdout: { seed: 2, rollouts: 20 },
    };
    const r = rng(20261202);
    let refused = 0;
    for (let i = 0; i < 300; i++) {
      const bad = mutate(result, r);
      const issues = await issuesOfAsync(() => parseResult(bad, 'r.json'));
      refused += issues.length > 0 ? 1 : 0;
      expectClear(issues, `result ${i}`);
      const badStudy = mutate(study, r);
      const studyIssues = issuesOf(() => parseStudy(badStudy));
      refused += studyIssues.length > 0 ? 1 : 0;
      expectClear(studyIssues, `study ${i}`);
    }
    expect(refused).toBeGreaterThan(300); // the mutations do reach the validators
  });

  it('a result file without its scenario or policy says which and what it should hold', async () => {
    const { parseResult } = await import('../src/core/export/input.js');
    const issues = await issuesOfAsync(() => parseResult({ format: 'pronk-result', format_version: 1, kind: 'deadbeat' }, 'r.json'));
    expect(issues.map((i) => new InputError([i]).format())).toEqual([
      'scenario: expected the scenario the policy was made for (an object with body, start, policy, ...), found missing',
      'policy: expected the policy to export (an object with angle and stiffness), found missing',
    ]);
  });

  it('options outside the physical bounds blame the option, not a quantity computed from it', async () => {
    const { canonicalRobustnessOptions } = await import('../src/core/analysis/robustness.js');
    const { basinRunOptions } = await import('../src/core/analysis/basin.js');
    const { synthesizeDeadbeat } = await import('../src/core/synthesis/deadbeat.js');
    const demo = demoScenario();
    const robustness = (over: object) =>
      issuesOf(() => canonicalRobustnessOptions(demo, { rollouts: 2, sigma_m: 0.01, seed: 1, ...over })).map((i) => new InputError([i]).format());
    // a target of 1e308 m once failed as "rows[0].sum_sq_height_error_m2: expected a finite number >= 0, found Infinity"
    expect(robustness({ target_height_m: 1e308 })).toEqual(['target_height_m: expected an apex height from -1e4 to 1e4 (m), found 1e+308']);
    expect(robustness({ target_speed_m_per_s: 1e308 })).toEqual(['target_speed_m_per_s: expected a forward speed from 0 to 1000 (m/s), found 1e+308']);
    expect(robustness({ sigma_m: 1e308 })).toEqual(['sigma_m: expected a standard deviation from 0 to 1000 (m), found 1e+308']);
    // a basin at 1e308 m/s once ran, every such cell "fell" with step_size_underflow
    expect(issuesOf(() => basinRunOptions(demo, { speeds: { low: 0, high: 1e308, count: 2 } })).map((i) => new InputError([i]).format())).toEqual([
      "speeds: expected lo:hi:n with lo and hi each a forward speed from 0 to 1000 (m/s), as a scenario's start, found 0:1e+308:2",
    ]);
    // a deadbeat ground range of +-1e308 m once reported "NaN to 1e+308 m" as unsolved
    const ground = await issuesOfAsync(() => synthesizeDeadbeat(demo, { groundRange_m: [-1e308, 1e308] }));
    expect(ground.map((i) => new InputError([i]).format())).toEqual([
      'ground_range_m: expected two heights [lo, hi] with lo < hi, each a height from -1e4 to 1e4 (m), found [-1e+308,1e+308]',
    ]);
  });

  it('a bound shown in a message is accepted when typed as shown', async () => {
    const { stepTolerance } = await import('../src/core/analysis/stepdown.js');
    const demo = demoScenario(); // leg 0.45 m: the finest resolution 0.45 / 1e6 = 4.5000000000000003e-7 m in float64
    const issues = await issuesOfAsync(() => stepTolerance(demo, { resolution_m: 1e-300 }));
    expect(new InputError(issues).format()).toBe('resolution_m: expected a step size from 4.5e-7 to 0.045 m (leg length / 1000000 to leg length / 10), found 1e-300');
    // 4.5e-7 as typed is accepted (it once was refused: below 4.5000000000000003e-7)
    const accepted = await issuesOfAsync(() => stepTolerance(demo, { resolution_m: 4.5e-7, grid_m: 0.45, after: 1 }).then(() => undefined));
    expect(accepted).toEqual([]);
  }, 120_000);
});

describe.skipIf(!existsSync(join(repoRoot, 'dist', 'src', 'cli', 'main.js')))('command-line options outside the physical bounds name the option (built CLI)', () => {
  const pronk = (...args: string[]) => spawnSync(process.execPath, [join(repoRoot, 'bin', 'pronk.js'), ...args], { encoding: 'utf8', env: { ...process.env, PRONK_DEBUG: '' } });

  it.each([
    // a rate range of +-1e308 deg/s once blamed --attack-range ("a range holding at least one valid policy, found none")
    [
      ['deadbeat', '--ground=-0.01:0.01', '--knots', '3', '--compare', '--rollouts', '4', '--rate-range=-1e308:1e308'],
      'pronk deadbeat: --rate-range: expected two rates lo < hi, each a rate from -1e5 to 1e5 (deg/s), found [-1e+308,1e+308]',
    ],
    [['robustness', '--sigma', '0.01', '--target-height', '1e308'], 'pronk robustness: --target-height: expected an apex height from -1e4 to 1e4 (m), found "1e308"'],
    [['basin', '--speeds', '0:1e308:2'], "pronk basin: --speeds: expected lo:hi:n with lo and hi each a forward speed from 0 to 1000 (m/s), as a scenario's start, found 0:1e+308:2"],
  ])('%j', (args, message) => {
    const r = pronk(...(args as string[]));
    expect(r.status, r.stderr).toBe(2);
    expect(r.stderr.split('\n').filter((line) => !line.includes('built-in demo'))).toEqual([message, '']);
  });

  it('an edited option in a partial result is named as the file holds it: options.FIELD, once', () => {
    const dir = mkdtempSync(join(tmpdir(), 'pronk-partial-options-'));
    try {
      const runs: [string, string[], (options: Record<string, any>) => void, string][] = [
        ['basin', ['--heights', '0.45:0.5:2', '--speeds', '1.8:2:2', '--strides', '3'], (o) => (o.heights.low_m = 1e300), 'options.heights: expected lo:hi:n with lo <= hi (m)'],
        ['robustness', ['--sigma', '0.01', '--rollouts', '4', '--strides', '3'], (o) => (o.rollouts = 2.5), 'options.rollouts: expected a positive integer'],
        ['scan', ['--x', 'policy.angle.attack_at_apex_deg:62:64:2', '--y', 'policy.angle.rate_deg_per_s:30:40:2', '--samples', '21'], (o) => (o.x = 'bogus'), 'options.x: expected PATH:lo:hi:n'],
      ];
      for (const [command, args, edit, message] of runs) {
        const part = join(dir, `${command}.json`);
        expect(pronk(command, ...args, '--workers', '1', '--shard', '1/2', '--out', part).status).toBe(0);
        const partial = JSON.parse(readFileSync(part, 'utf8'));
        edit(partial.options);
        writeFileSync(part, JSON.stringify(partial));
        const r = pronk('merge', part);
        expect(r.status).toBe(2);
        expect(r.stderr).toContain(`${part}: ${message}`);
      }
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }, 60_000);
});

describe('the engine never hands the kernel an allocation past 32 bits', () => {
  it('a batch whose stride records exceed 4 GiB is an EngineError before any work, and the engine still runs after it', async () => {
    const { EngineError, loadEngine, rolloutInput } = await import('../src/core/engine.js');
    const { buildModel } = await import('../src/core/model.js');
    const engine = await loadEngine();
    const model = buildModel(demoScenario());
    // 11 rollouts x 1e6 strides x 50 values x 8 bytes = 4.4e9 bytes > 2^32: once wrapped to 0.1 GB,
    // which the kernel then wrote past (memory access out of bounds)
    const inputs = new Float64Array(Array.from({ length: 11 }, (_, r) => [...rolloutInput(0.45, 3.35, r)]).flat());
    expect(() => engine.runBatch({ model, inputs, strides: 1_000_000, records: true })).toThrow(EngineError);
    const after = engine.runBatch({ model, inputs: rolloutInput(0.45, 3.35, 0), strides: 2, records: true });
    expect(after.completed).toBe(1);
  });
});
