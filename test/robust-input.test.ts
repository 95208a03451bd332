// Whatever the scenario, the validator either accepts it or throws an InputError naming a field,
// and an accepted scenario always simulates to finite numbers (a fall is a status, never a NaN).
import { describe, expect, it } from 'vitest';
import { InputError } from '../src/core/errors.js';
import { demoScenario, parseScenario, type Scenario } from '../src/core/scenario.js';
import { simulate } from '../src/core/simulate.js';

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
    'the strongest damping on the lightest body': at(
      { mass_kg: 1e-6, leg_length_m: 1, leg_stiffness_N_per_m: 100, leg_damping_N_s_per_m: 1e9 },
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
