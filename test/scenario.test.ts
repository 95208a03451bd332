// Scenario validation: every class of bad input is rejected with a message naming the field, what
// was expected and what was found (docs/contract.md; the field list is the contract's).

import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { InputError } from '../src/core/errors.js';
import {
  DEFAULT_ABSOLUTE_TOLERANCE,
  DEFAULT_MAX_STEPS_PER_STANCE,
  DEFAULT_RELATIVE_TOLERANCE,
  MAX_DAMPING_RATIO,
  attackAtApexDeg,
  demoScenario,
  locateJsonSyntaxError,
  parseJson,
  parseScenario,
  readScenarioFile,
  scenarioSchema,
} from '../src/core/scenario.js';

// The example scenario of docs/contract.md.
const CONTRACT_EXAMPLE = {
  body: { mass_kg: 80, leg_length_m: 1.0, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
  start: { apex_height_m: 1.0, forward_speed_m_per_s: 5.0 },
  policy: {
    angle: { kind: 'fixed', attack_deg: 68 },
    stiffness: { kind: 'constant' },
  },
  terrain: { kind: 'flat' },
  strides: 20,
};

// A copy of `base` with the value at `path` replaced (or removed, for undefined).
function edited(path: (string | number)[], value: unknown, base: unknown = CONTRACT_EXAMPLE): unknown {
  const copy = structuredClone(base) as Record<string | number, unknown>;
  let parent = copy;
  for (const key of path.slice(0, -1)) parent = parent[key] as Record<string | number, unknown>;
  const last = path[path.length - 1];
  if (value === undefined) delete parent[last];
  else parent[last] = value;
  return copy;
}

// The formatted issue lines of a value that must be rejected.
function issueLines(value: unknown): string[] {
  let error: unknown;
  try {
    parseScenario(value);
  } catch (caught) {
    error = caught;
  }
  expect(error, 'parseScenario should have thrown').toBeInstanceOf(InputError);
  const inputError = error as InputError;
  expect(inputError.message).toBe(inputError.format());
  return inputError.format().split('\n');
}

describe('valid scenarios', () => {
  it('accepts the contract example and fills the defaults', () => {
    const scenario = parseScenario(edited(['body', 'gravity_m_per_s2'], undefined));
    expect(scenario.body.gravity_m_per_s2).toBe(9.80665);
    expect(scenario.body.leg_damping_N_s_per_m).toBe(0);
    expect(scenario.policy.stiffness).toEqual({ kind: 'constant' });
    expect(scenario.integrator).toEqual({
      relative_tolerance: DEFAULT_RELATIVE_TOLERANCE,
      absolute_tolerance: DEFAULT_ABSOLUTE_TOLERANCE,
      max_steps_per_stance: DEFAULT_MAX_STEPS_PER_STANCE,
    });
  });

  it('defaults terrain to flat and stiffness to constant when absent', () => {
    const withoutTerrain = edited(['terrain'], undefined);
    const scenario = parseScenario(edited(['policy', 'stiffness'], undefined, withoutTerrain));
    expect(scenario.terrain).toEqual({ kind: 'flat' });
    expect(scenario.policy.stiffness).toEqual({ kind: 'constant' });
  });

  it('parses the built-in demo scenario', () => {
    const demo = demoScenario();
    expect(demo.name).toMatch(/Tamarack-9/);
    expect(demo.policy.angle.kind).toBe('retraction');
  });

  it('accepts every policy and terrain kind', () => {
    const variants: [(string | number)[], unknown][] = [
      [['policy', 'angle'], { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: -20, min_deg: 50, max_deg: 80 }],
      [['policy', 'angle'], { kind: 'time_table', time_since_apex_s: [0, 0.1, 0.2], attack_deg: [60, 65, 70] }],
      [['policy', 'stiffness'], { kind: 'split', compression_N_per_m: 18000, extension_N_per_m: 22000 }],
      [
        ['policy', 'stiffness'],
        { kind: 'time_table', time_since_apex_s: [0.1], compression_N_per_m: [20000], extension_N_per_m: [21000] },
      ],
      [['terrain'], { kind: 'steps', ground_heights_m: [0, -0.1] }],
      [['terrain'], { kind: 'random_walk', sigma_m: 0.01, seed: 0 }],
      [['terrain'], { kind: 'random_heights', sigma_m: 0, seed: Number.MAX_SAFE_INTEGER }],
      [['integrator'], { relative_tolerance: 1e-8, absolute_tolerance: 1e-9, max_steps_per_stance: 10 }],
      [['name'], 'contract example'],
    ];
    for (const [path, value] of variants) expect(() => parseScenario(edited(path, value))).not.toThrow();
  });

  it('exports the zod schema, which agrees with parseScenario', () => {
    expect(scenarioSchema.safeParse(CONTRACT_EXAMPLE).success).toBe(true);
    expect(scenarioSchema.safeParse(edited(['strides'], 0)).success).toBe(false);
  });
});

describe('missing fields and wrong types', () => {
  it('names each missing required field, and reports them all', () => {
    expect(issueLines({})).toEqual([
      'body: expected an object with mass_kg, leg_length_m, leg_stiffness_N_per_m, gravity_m_per_s2, leg_damping_N_s_per_m, found missing',
      'start: expected an object with apex_height_m, forward_speed_m_per_s, found missing',
      'policy: expected an object with angle, stiffness, found missing',
      'strides: expected an integer from 1 to 1000000, found missing',
    ]);
  });

  it('names a missing nested field', () => {
    expect(issueLines(edited(['body', 'mass_kg'], undefined))).toEqual(['body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found missing']);
    expect(issueLines(edited(['policy', 'angle', 'attack_deg'], undefined))).toContain(
      'policy.angle.attack_deg: expected an angle in (0, 90] (deg from the horizontal), found missing',
    );
  });

  it('rejects a scenario that is not an object', () => {
    expect(issueLines([1, 2])[0]).toMatch(/^expected a scenario object with .*, found \[1,2\]$/);
    expect(issueLines(null)[0]).toMatch(/found null$/);
  });

  it('rejects wrong types with the value found', () => {
    expect(issueLines(edited(['body', 'mass_kg'], '80'))).toEqual(['body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found "80"']);
    expect(issueLines(edited(['body'], 5))[0]).toMatch(/^body: expected an object with mass_kg, .*found 5$/);
    expect(issueLines(edited(['name'], 7))).toEqual(['name: expected a string, found 7']);
    expect(issueLines(edited(['body', 'gravity_m_per_s2'], null))).toEqual([
      'body.gravity_m_per_s2: expected a number from 1e-5 to 1000 (m/s^2), found null',
    ]);
  });

  it('reports every problem at once', () => {
    const value = {
      ...CONTRACT_EXAMPLE,
      body: { mass_kg: -1, leg_length_m: 0, leg_stiffness_N_per_m: 20000 },
      strides: 0,
    };
    expect(issueLines(value)).toEqual([
      'body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found -1',
      'body.leg_length_m: expected a number from 1e-4 to 100 (m), found 0',
      'strides: expected an integer from 1 to 1000000, found 0',
    ]);
  });

  it('never shows a zod dump or a stack trace', () => {
    const text = issueLines({ body: 1, start: [], policy: { angle: { kind: 3 } }, strides: 'x', extra: {} }).join('\n');
    expect(text).not.toMatch(/invalid_type|"code"|ZodError|\bat .*\.(ts|js):\d+/);
  });
});

describe('numbers out of range', () => {
  it.each([
    ['mass_kg', 0, 'body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found 0'],
    ['mass_kg', -9, 'body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found -9'],
    ['leg_length_m', -1, 'body.leg_length_m: expected a number from 1e-4 to 100 (m), found -1'],
    ['leg_length_m', 0, 'body.leg_length_m: expected a number from 1e-4 to 100 (m), found 0'],
    ['leg_stiffness_N_per_m', 0, 'body.leg_stiffness_N_per_m: expected a number from 1e-3 to 1e12 (N/m), found 0'],
    ['leg_stiffness_N_per_m', -5, 'body.leg_stiffness_N_per_m: expected a number from 1e-3 to 1e12 (N/m), found -5'],
    ['gravity_m_per_s2', 0, 'body.gravity_m_per_s2: expected a number from 1e-5 to 1000 (m/s^2), found 0'],
    ['leg_damping_N_s_per_m', -0.1, 'body.leg_damping_N_s_per_m: expected a number from 0 to 1e9 (N s/m), found -0.1'],
  ])('rejects body.%s = %s', (field, value, line) => {
    expect(issueLines(edited(['body', field], value))).toContain(line);
  });

  it.each([0, 95, -5, 90.0001])('rejects attack_deg = %s', (attack) => {
    expect(issueLines(edited(['policy', 'angle', 'attack_deg'], attack))).toEqual([
      `policy.angle.attack_deg: expected an angle in (0, 90] (deg from the horizontal), found ${attack}`,
    ]);
  });

  it('accepts a vertical leg, attack_deg = 90', () => {
    const vertical = edited(['policy', 'angle', 'attack_deg'], 90, edited(['start', 'apex_height_m'], 1.2));
    expect(parseScenario(vertical).policy.angle).toEqual({ kind: 'fixed', attack_deg: 90 });
  });

  it('rejects retraction angles out of (0, 90] and min_deg >= max_deg', () => {
    const retraction = { kind: 'retraction', attack_at_apex_deg: 95, rate_deg_per_s: 10, min_deg: 0, max_deg: 60 };
    expect(issueLines(edited(['policy', 'angle'], retraction))).toEqual([
      'policy.angle.attack_at_apex_deg: expected an angle in (0, 90] (deg from the horizontal), found 95',
      'policy.angle.min_deg: expected an angle in (0, 90] (deg from the horizontal), found 0',
    ]);
    const crossed = { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 10, min_deg: 70, max_deg: 70 };
    expect(issueLines(edited(['policy', 'angle'], crossed))).toEqual([
      'policy.angle.max_deg: expected an angle > min_deg (70 deg), found 70',
    ]);
  });

  it('reports Infinity (JSON 1e999) as Infinity, not null', () => {
    const value = JSON.parse('{"mass_kg": 1e999, "leg_length_m": -1e999, "leg_stiffness_N_per_m": 20000}');
    expect(issueLines(edited(['body'], value))).toEqual([
      'body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found Infinity',
      'body.leg_length_m: expected a number from 1e-4 to 100 (m), found -Infinity',
    ]);
  });

  it('rejects NaN and the string "NaN"', () => {
    expect(issueLines(edited(['start', 'apex_height_m'], 'NaN'))).toEqual([
      'start.apex_height_m: expected a number from -1e4 to 1e4 (m), found "NaN"',
    ]);
    expect(issueLines(edited(['start', 'forward_speed_m_per_s'], Number.NaN))).toEqual([
      'start.forward_speed_m_per_s: expected a number from 0 to 1000 (m/s), found NaN',
    ]);
    expect(issueLines(edited(['policy', 'angle'], { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: Infinity }))).toEqual([
      'policy.angle.rate_deg_per_s: expected a number from -1e5 to 1e5 (deg/s), found Infinity',
    ]);
  });

  it('rejects a negative forward speed', () => {
    expect(issueLines(edited(['start', 'forward_speed_m_per_s'], -1))).toEqual([
      'start.forward_speed_m_per_s: expected a number from 0 to 1000 (m/s), found -1',
    ]);
  });

  it.each([
    [0, '0'],
    [1.5, '1.5'],
    [1_000_001, '1000001'],
    [-3, '-3'],
  ])('rejects strides = %s', (strides, shown) => {
    expect(issueLines(edited(['strides'], strides))).toEqual([`strides: expected an integer from 1 to 1000000, found ${shown}`]);
  });

  it('rejects integrator settings out of range', () => {
    const integrator = { relative_tolerance: 0.1, absolute_tolerance: 0, max_steps_per_stance: 9.5 };
    expect(issueLines(edited(['integrator'], integrator))).toEqual([
      'integrator.relative_tolerance: expected a number > 0 and < 0.1, found 0.1',
      'integrator.absolute_tolerance: expected a number > 0 and < 0.1, found 0',
      'integrator.max_steps_per_stance: expected an integer from 10 to 10000000, found 9.5',
    ]);
  });
});

describe('physical bounds: every number in a stated range, so the physics stays finite', () => {
  // [path, just below, low end, high end, just above, expected text]; the ends are accepted
  const bounds: [(string | number)[], number, number, number, number, string][] = [
    [['body', 'mass_kg'], 9e-7, 1e-6, 1e6, 1.1e6, 'a number from 1e-6 to 1e6 (kg)'],
    [['body', 'leg_length_m'], 9e-5, 1e-4, 100, 101, 'a number from 1e-4 to 100 (m)'],
    [['body', 'leg_stiffness_N_per_m'], 9e-4, 1e-3, 1e12, 1.1e12, 'a number from 1e-3 to 1e12 (N/m)'],
    [['body', 'gravity_m_per_s2'], 5e-324, 1e-5, 1000, 1001, 'a number from 1e-5 to 1000 (m/s^2)'],
    [['body', 'leg_damping_N_s_per_m'], -1e-9, 0, 1e9, 1.1e9, 'a number from 0 to 1e9 (N s/m)'],
    [['start', 'forward_speed_m_per_s'], -1e-9, 0, 1000, 1e308, 'a number from 0 to 1000 (m/s)'],
    [['start', 'apex_height_m'], -2e4, -1e4, 1e4, 1.0001e4, 'a number from -1e4 to 1e4 (m)'],
  ];
  it.each(bounds)('%s: the ends accepted, beyond them refused naming the range and the value', (path, below, low, high, above, text) => {
    const accepted = (value: number) => {
      // a start apex of -1e4 m needs ground below it for the first touchdown
      let base: unknown = CONTRACT_EXAMPLE;
      if (path[1] === 'apex_height_m' && value < 0) base = edited(['terrain'], { kind: 'steps', ground_heights_m: [-1e4] });
      if (path[1] === 'leg_length_m') base = edited(['start', 'apex_height_m'], 1000); // a 100 m leg needs a higher apex
      // 1e9 N s/m is a damping ratio of 0.5 only on the heaviest, stiffest body (MAX_DAMPING_RATIO)
      if (path[1] === 'leg_damping_N_s_per_m') base = edited(['body'], { ...CONTRACT_EXAMPLE.body, mass_kg: 1e6, leg_stiffness_N_per_m: 1e12 });
      return parseScenario(edited(path, value, base));
    };
    if (path[1] !== 'apex_height_m') expect(() => accepted(low)).not.toThrow();
    expect(() => accepted(high)).not.toThrow();
    for (const value of [below, above]) {
      expect(issueLines(edited(path, value))).toContain(`${path.join('.')}: expected ${text}, found ${value}`);
    }
  });

  it('subnormal gravity and a speed of 1e308 are refused at their own fields (not downstream)', () => {
    expect(issueLines(edited(['body', 'gravity_m_per_s2'], 5e-324))).toEqual(['body.gravity_m_per_s2: expected a number from 1e-5 to 1000 (m/s^2), found 5e-324']);
    expect(issueLines(edited(['start', 'forward_speed_m_per_s'], 1e308))).toEqual(['start.forward_speed_m_per_s: expected a number from 0 to 1000 (m/s), found 1e+308']);
  });

  it('policy and terrain numbers: rates, knot times, stiffness values, ground heights, sigma', () => {
    expect(issueLines(edited(['policy', 'angle'], { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 2e5 }))).toEqual([
      'policy.angle.rate_deg_per_s: expected a number from -1e5 to 1e5 (deg/s), found 200000',
    ]);
    expect(issueLines(edited(['policy', 'angle'], { kind: 'time_table', time_since_apex_s: [0, 2e6], attack_deg: [60, 70] }))).toEqual([
      'policy.angle.time_since_apex_s[1]: expected a time from 0 to 1e6 (s), found 2000000',
    ]);
    expect(issueLines(edited(['policy', 'stiffness'], { kind: 'split', compression_N_per_m: 2 ** 53, extension_N_per_m: 1e-46 }))).toEqual([
      'policy.stiffness.compression_N_per_m: expected a number from 1e-3 to 1e12 (N/m), found 9007199254740992',
      'policy.stiffness.extension_N_per_m: expected a number from 1e-3 to 1e12 (N/m), found 1e-46',
    ]);
    expect(issueLines(edited(['terrain'], { kind: 'steps', ground_heights_m: [0, -2e4] }))).toEqual([
      'terrain.ground_heights_m[1]: expected a ground height from -1e4 to 1e4 (m), found -20000',
    ]);
    expect(issueLines(edited(['terrain'], { kind: 'random_walk', sigma_m: 1e4, seed: 1 }))).toEqual([
      'terrain.sigma_m: expected a number from 0 to 1000 (m), found 10000',
    ]);
    const long = Array.from({ length: 100_001 }, (_, i) => i * 1e-3);
    expect(issueLines(edited(['policy', 'angle'], { kind: 'time_table', time_since_apex_s: long, attack_deg: long.map(() => 60) }))).toEqual([
      'policy.angle.time_since_apex_s: expected a non-empty array of at most 100000 times from 0 to 1e6 (s), strictly increasing, found 100001 entries',
      'policy.angle.attack_deg: expected a non-empty array of angles in (0, 90] (deg), one per knot, found 100001 entries',
    ]);
  });

  it('every example scenario of the repository is inside the bounds', () => {
    expect(() => demoScenario()).not.toThrow();
    expect(() => parseScenario(CONTRACT_EXAMPLE)).not.toThrow();
  });
});

describe('tables', () => {
  it('rejects table columns of different lengths', () => {
    const angle = { kind: 'time_table', time_since_apex_s: [0, 0.1, 0.2], attack_deg: [60, 65] };
    expect(issueLines(edited(['policy', 'angle'], angle))).toEqual([
      'policy.angle.attack_deg: expected 3 values, one per time_since_apex_s knot, found 2 values',
    ]);
    const stiffness = { kind: 'time_table', time_since_apex_s: [0.1], compression_N_per_m: [1, 2], extension_N_per_m: [3] };
    expect(issueLines(edited(['policy', 'stiffness'], stiffness))).toEqual([
      'policy.stiffness.compression_N_per_m: expected 1 value, one per time_since_apex_s knot, found 2 values',
    ]);
  });

  it('rejects times that do not strictly increase, naming the index', () => {
    const angle = { kind: 'time_table', time_since_apex_s: [0, 0.1, 0.1, 0.05], attack_deg: [60, 62, 64, 66] };
    expect(issueLines(edited(['policy', 'angle'], angle))).toEqual([
      'policy.angle.time_since_apex_s[2]: expected a time > 0.1 s (knot times must strictly increase), found 0.1',
      'policy.angle.time_since_apex_s[3]: expected a time > 0.1 s (knot times must strictly increase), found 0.05',
    ]);
  });

  it('rejects negative and non-finite times, and bad values by index', () => {
    const angle = { kind: 'time_table', time_since_apex_s: [-0.1, Infinity], attack_deg: [60, 95] };
    expect(issueLines(edited(['policy', 'angle'], angle))).toEqual([
      'policy.angle.time_since_apex_s[0]: expected a time from 0 to 1e6 (s), found -0.1',
      'policy.angle.time_since_apex_s[1]: expected a time from 0 to 1e6 (s), found Infinity',
      'policy.angle.attack_deg[1]: expected an angle in (0, 90] (deg from the horizontal), found 95',
    ]);
    const stiffness = { kind: 'time_table', time_since_apex_s: [0], compression_N_per_m: [0], extension_N_per_m: ['x'] };
    expect(issueLines(edited(['policy', 'stiffness'], stiffness))).toEqual([
      'policy.stiffness.compression_N_per_m[0]: expected a stiffness from 1e-3 to 1e12 (N/m), found 0',
      'policy.stiffness.extension_N_per_m[0]: expected a stiffness from 1e-3 to 1e12 (N/m), found "x"',
    ]);
  });

  it('rejects empty tables and empty step lists', () => {
    const angle = { kind: 'time_table', time_since_apex_s: [], attack_deg: [] };
    expect(issueLines(edited(['policy', 'angle'], angle))).toEqual([
      'policy.angle.time_since_apex_s: expected a non-empty array of at most 100000 times from 0 to 1e6 (s), strictly increasing, found []',
      'policy.angle.attack_deg: expected a non-empty array of angles in (0, 90] (deg), one per knot, found []',
    ]);
    expect(issueLines(edited(['terrain'], { kind: 'steps', ground_heights_m: [] }))).toEqual([
      'terrain.ground_heights_m: expected a non-empty array of at most 100000 ground heights from -1e4 to 1e4 (m), found []',
    ]);
  });

  it('rejects a split stiffness that is not positive', () => {
    expect(issueLines(edited(['policy', 'stiffness'], { kind: 'split', compression_N_per_m: -1, extension_N_per_m: 1 }))).toEqual([
      'policy.stiffness.compression_N_per_m: expected a number from 1e-3 to 1e12 (N/m), found -1',
    ]);
  });
});

describe('kinds and unknown fields', () => {
  it('rejects an unknown angle kind, listing the kinds', () => {
    expect(issueLines(edited(['policy', 'angle', 'kind'], 'fixd'))).toEqual([
      'policy.angle.kind: expected one of fixed, retraction, time_table, found "fixd" (did you mean fixed?)',
    ]);
  });

  it('rejects unknown or missing stiffness and terrain kinds', () => {
    expect(issueLines(edited(['policy', 'stiffness', 'kind'], 'linear'))).toEqual([
      'policy.stiffness.kind: expected one of constant, split, time_table, found "linear"',
    ]);
    expect(issueLines(edited(['terrain'], { sigma_m: 0.01, seed: 1 }))).toEqual([
      'terrain.kind: expected one of flat, steps, random_walk, random_heights, found missing',
    ]);
    expect(issueLines(edited(['terrain'], 'flat'))[0]).toMatch(/^terrain: expected an object with kind flat, steps, .*found "flat"$/);
  });

  it('rejects an unknown field with its full path and a suggestion', () => {
    const value = edited(['body', 'mas_kg'], 80, edited(['body', 'mass_kg'], undefined));
    expect(issueLines(value)).toEqual([
      'body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found missing',
      'body.mas_kg: unknown field (did you mean mass_kg?)',
    ]);
  });

  it('suggests the unit-suffixed name for a bare one', () => {
    const value = edited(['body', 'gravity'], 9.81, edited(['body', 'gravity_m_per_s2'], undefined));
    expect(issueLines(value)).toEqual(['body.gravity: unknown field (did you mean gravity_m_per_s2?)']);
  });

  it('rejects unknown fields at the top level and inside a policy kind', () => {
    expect(issueLines(edited(['stride'], 20))).toEqual(['stride: unknown field']);
    const angle = { kind: 'fixed', attack_deg: 68, rate_deg_per_s: 4 };
    expect(issueLines(edited(['policy', 'angle'], angle))).toEqual(['policy.angle.rate_deg_per_s: unknown field']);
    expect(issueLines(edited(['terrain'], { kind: 'flat', ground_heights_m: [0] }))).toEqual([
      'terrain.ground_heights_m: unknown field',
    ]);
  });
});

describe('random terrain seeds', () => {
  it.each([
    [-1, '-1'],
    [1.5, '1.5'],
    [2 ** 53, '9007199254740992'],
    ['7', '"7"'],
  ])('rejects seed %s', (seed, shown) => {
    for (const kind of ['random_walk', 'random_heights']) {
      expect(issueLines(edited(['terrain'], { kind, sigma_m: 0.01, seed }))).toEqual([
        `terrain.seed: expected an integer from 0 to 9007199254740991, found ${shown}`,
      ]);
    }
  });

  it('rejects a negative sigma', () => {
    expect(issueLines(edited(['terrain'], { kind: 'random_walk', sigma_m: -0.01, seed: 1 }))).toEqual([
      'terrain.sigma_m: expected a number from 0 to 1000 (m), found -0.01',
    ]);
  });
});

describe('start apex above the first touchdown', () => {
  // touchdown when y = ground + L0·sin(attack) (docs/contract.md)
  const threshold = (ground: number, legLength: number, attackDeg: number) => ground + legLength * Math.sin((attackDeg * Math.PI) / 180);

  it('rejects an apex at or below touchdown height for a fixed angle', () => {
    const bound = threshold(0, 1, 68); // 0.927184 m
    expect(issueLines(edited(['start', 'apex_height_m'], 0.9))).toEqual([
      `start.apex_height_m: expected > ${Number(bound.toPrecision(6))} m (ground + leg length * sin(attack at apex)), found 0.9`,
    ]);
    expect(() => parseScenario(edited(['start', 'apex_height_m'], bound + 1e-9))).not.toThrow();
  });

  it('uses the first step height of steps terrain', () => {
    const onStep = edited(['terrain'], { kind: 'steps', ground_heights_m: [0.1, 0] });
    expect(issueLines(onStep)[0]).toMatch(/^start\.apex_height_m: expected > 1\.02718 m .*found 1$/);
    expect(() => parseScenario(edited(['terrain'], { kind: 'steps', ground_heights_m: [-0.1] }, edited(['start', 'apex_height_m'], 0.9)))).not.toThrow();
  });

  it('clamps a retraction policy to [min_deg, max_deg] at the apex', () => {
    const angle = { kind: 'retraction', attack_at_apex_deg: 85, rate_deg_per_s: 30, min_deg: 40, max_deg: 60 };
    const scenario = parseScenario(edited(['policy', 'angle'], angle, edited(['start', 'apex_height_m'], 0.9)));
    expect(attackAtApexDeg(scenario.policy.angle)).toBe(60); // sin 60° = 0.866 < 0.9
    const raised = { ...angle, attack_at_apex_deg: 30, min_deg: 70, max_deg: 80 };
    expect(issueLines(edited(['policy', 'angle'], raised, edited(['start', 'apex_height_m'], 0.9)))[0]).toMatch(
      /^start\.apex_height_m: expected > 0\.939693 m/,
    );
  });

  it('takes a time table value at t = 0 (held flat before the first knot)', () => {
    const angle = { kind: 'time_table', time_since_apex_s: [0.05, 0.2], attack_deg: [80, 40] };
    expect(issueLines(edited(['policy', 'angle'], angle, edited(['start', 'apex_height_m'], 0.95)))[0]).toMatch(
      /^start\.apex_height_m: expected > 0\.984808 m/,
    );
  });

  it('is reported together with unrelated problems', () => {
    const value = edited(['strides'], 0, edited(['start', 'apex_height_m'], 0.5));
    expect(issueLines(value)).toHaveLength(2);
  });

  it('is skipped when the fields it needs are themselves invalid', () => {
    const value = edited(['body', 'leg_length_m'], -1, edited(['start', 'apex_height_m'], 0.5));
    expect(issueLines(value)).toEqual(['body.leg_length_m: expected a number from 1e-4 to 100 (m), found -1']);
  });
});

describe('reading scenario files', () => {
  const directory = mkdtempSync(join(tmpdir(), 'pronk-scenario-'));
  const file = (name: string, text: string) => {
    const path = join(directory, name);
    writeFileSync(path, text);
    return path;
  };

  it('reads a valid file (with a byte order mark)', async () => {
    const path = file('ok.json', `\uFEFF${JSON.stringify(CONTRACT_EXAMPLE)}`);
    expect((await readScenarioFile(path)).strides).toBe(20);
  });

  it('names the file in validation messages', async () => {
    const path = file('bad.json', JSON.stringify(edited(['body', 'mass_kg'], -9)));
    const error = await readScenarioFile(path).catch((caught: unknown) => caught);
    expect(error).toBeInstanceOf(InputError);
    expect((error as InputError).format()).toBe(`${path}: body.mass_kg: expected a number from 1e-6 to 1e6 (kg), found -9`);
  });

  it('reports a missing file', async () => {
    const path = join(directory, 'nope.json');
    await expect(readScenarioFile(path)).rejects.toThrow(`${path}: cannot read the file (no such file)`);
  });

  it('reports invalid JSON with its line and column', async () => {
    const path = file('broken.json', '{\n  "strides": 20,\n  "body": {\n}');
    await expect(readScenarioFile(path)).rejects.toThrow(
      `${path}: invalid JSON at line 4, column 2: unexpected end of input (expected ',' or '}')`,
    );
  });

  it.each([
    ['{"a": 1,}', 'line 1, column 9: trailing comma before "}"'],
    ['[1, 2,\n]', 'line 2, column 1: trailing comma before "]"'],
    ['{"a": tru}', 'line 1, column 10: unexpected "}" (expected true)'],
    ['', 'line 1, column 1: unexpected end of input'],
    ['{"a": 1} x', 'line 1, column 10: unexpected "x" after the end of the JSON value'],
    ["{'a': 1}", `line 1, column 2: unexpected "'" (expected a double-quoted field name)`],
    ['{"a": 01}', `line 1, column 8: unexpected "1" (expected ',' or '}')`],
  ])('locates the syntax error in %j', (text, where) => {
    expect(() => parseJson(text, 'x.json')).toThrow(`x.json: invalid JSON at ${where}`);
  });

  it('finds no syntax error in valid JSON', () => {
    for (const text of ['{}', '[]', ' 0 ', '-1.5e+3', '"\\u00e9\\n"', '{"a": [true, false, null, {"b": "c"}]}', JSON.stringify(CONTRACT_EXAMPLE)]) {
      expect(locateJsonSyntaxError(text)).toBeNull();
    }
  });
});

describe('leg damping ratio at most MAX_DAMPING_RATIO', () => {
  // damping ratio zeta = c / (2 sqrt(k m)) of a mass on a spring and a damper (textbook definition,
  // common practice); the contract example has m = 80 kg, k = 20 kN/m: sqrt(k m) = 1264.91 N s/m
  const critical = 2 * Math.sqrt(20000 * 80); // 2529.82 N s/m, zeta = 1
  it('accepts a ratio of 100 and refuses one above, naming damping, stiffness, mass and the ratio found', () => {
    expect(MAX_DAMPING_RATIO).toBe(100);
    expect(() => parseScenario(edited(['body', 'leg_damping_N_s_per_m'], 100 * critical))).not.toThrow();
    const lines = issueLines(edited(['body', 'leg_damping_N_s_per_m'], 1e9)); // the field's own bound: zeta 3.95e5
    expect(lines).toEqual([
      'body.leg_damping_N_s_per_m: expected a damping ratio c / (2 sqrt(k m)) of at most 100 (a leg far past critical damping is not a ' +
        'spring leg, and its stances take steps in proportion to the ratio): at most 2.52982e5 N s/m with body.leg_stiffness_N_per_m = ' +
        '2e4 N/m and body.mass_kg = 80 kg (the value found is a damping ratio of 3.95e5), found 1000000000',
    ]);
    expect(issueLines(edited(['body', 'leg_damping_N_s_per_m'], 101 * critical))[0]).toMatch(/damping ratio of 101\)/);
  });

  it('uses the softest stiffness the policy sets: split and time-table columns', () => {
    const damped = edited(['body', 'leg_damping_N_s_per_m'], 100 * critical);
    const split = edited(['policy', 'stiffness'], { kind: 'split', compression_N_per_m: 20000, extension_N_per_m: 5000 }, damped);
    // k = 5000: sqrt(20000/5000) = 2 times the ratio of the body's stiffness
    expect(issueLines(split)[0]).toMatch(/with policy\.stiffness\.extension_N_per_m = 5000 N\/m .*ratio of 200\)/);
    const table = edited(['policy', 'stiffness'], { kind: 'time_table', time_since_apex_s: [0, 0.1], compression_N_per_m: [20000, 1250], extension_N_per_m: [20000, 20000] }, damped);
    expect(issueLines(table)[0]).toMatch(/with policy\.stiffness\.compression_N_per_m\[1\] = 1250 N\/m .*ratio of 400\)/);
  });

  it('checks each leg of a two-leg scenario with its own damping and stiffness scale', () => {
    const biped = {
      ...CONTRACT_EXAMPLE,
      model: 'biped',
      body: { ...CONTRACT_EXAMPLE.body, leg_damping_N_s_per_m: 50 },
      start: { gait: 'running', apex_height_m: 1, forward_speed_m_per_s: 5 },
      legs: { right: { stiffness_scale: 0.25, leg_damping_N_s_per_m: 100 * critical } },
    };
    // right leg: k = 0.25 * 20 kN/m, the ratio doubles to 200
    expect(issueLines(biped)).toEqual([
      expect.stringMatching(
        /^legs\.right\.leg_damping_N_s_per_m: expected a damping ratio .* at most 100 .* with body\.leg_stiffness_N_per_m = 2e4 N\/m times legs\.right\.stiffness_scale = 0\.25 and body\.mass_kg = 80 kg \(the value found is a damping ratio of 200\), found 252982/,
      ),
    ]);
    expect(() => parseScenario({ ...biped, legs: { right: { stiffness_scale: 1, leg_damping_N_s_per_m: 100 * critical } } })).not.toThrow();
    // inherited by both legs from the body: one issue, on the body's field
    expect(issueLines({ ...biped, body: { ...biped.body, leg_damping_N_s_per_m: 1e9 }, legs: {} })).toEqual([expect.stringMatching(/^body\.leg_damping_N_s_per_m: expected a damping ratio/)]);
  });
});
