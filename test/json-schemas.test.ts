// The JSON Schemas of scenario, study and result files (src/core/json-schemas.ts, written to
// schemas/ by the build): valid draft 2020-12 schemas, the built files current, and agreeing with
// Pronk's own validators. The outside check is Ajv (npm `ajv`, its draft 2020-12 build), a
// general-purpose JSON Schema validator; every file below is judged by both.

import { readFileSync } from 'node:fs';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { describe, expect, it } from 'vitest';
import { parseResult } from '../src/core/export/input.js';
import { JSON_SCHEMA_NAMES, jsonSchema, jsonSchemaFile, jsonSchemaText, type JsonSchemaName } from '../src/core/json-schemas.js';
import { parseStudy } from '../src/core/optimize/study.js';
import { parseScenario } from '../src/core/scenario.js';
import { contentHash, PRONK_VERSION } from '../src/core/version.js';

const root = new URL('../', import.meta.url);
const readJson = (path: string) => JSON.parse(readFileSync(new URL(path, root), 'utf8'));

const ajv = new Ajv2020({ strict: true, allErrors: true });
const validators = Object.fromEntries(JSON_SCHEMA_NAMES.map((name) => [name, ajv.compile(jsonSchema(name))])) as Record<
  JsonSchemaName,
  ReturnType<typeof ajv.compile>
>;
const schemaAccepts = (name: JsonSchemaName, value: unknown) => validators[name](value) === true;

async function pronkAccepts(name: JsonSchemaName, value: unknown): Promise<boolean> {
  try {
    if (name === 'scenario') parseScenario(value);
    else if (name === 'study') parseStudy(value);
    else await parseResult(value, 'result.json');
    return true;
  } catch (error) {
    if ((error as Error).name !== 'InputError' && !(error as { issues?: unknown }).issues) throw error;
    return false;
  }
}

// A copy of `base` with the value at `path` replaced (or removed, for undefined).
function edited(base: unknown, path: (string | number)[], value: unknown): unknown {
  const copy = structuredClone(base) as Record<string | number, unknown>;
  let parent = copy;
  for (const key of path.slice(0, -1)) parent = parent[key] as Record<string | number, unknown>;
  const last = path[path.length - 1];
  if (value === undefined) delete parent[last];
  else parent[last] = value;
  return copy;
}

const demo = readJson('scenarios/demo.json');
const demoStudy = readJson('scenarios/demo-study.json');
// The study with its scenario inline (the validator reads scenario_file only through readStudyFile).
const inlineStudy = (() => {
  const { scenario_file: _file, ...rest } = demoStudy;
  return { ...rest, scenario: demo };
})();

describe('the schema files', () => {
  for (const name of JSON_SCHEMA_NAMES) {
    it(`${jsonSchemaFile(name)} is what the build writes from the current validators`, () => {
      expect(readFileSync(new URL(jsonSchemaFile(name), root), 'utf8'), 'run `npm run build`').toBe(jsonSchemaText(name));
    });
    it(`${name}: a valid draft 2020-12 schema (Ajv's meta-schema check, strict mode)`, () => {
      const schema = jsonSchema(name);
      expect(schema.$schema).toBe('https://json-schema.org/draft/2020-12/schema');
      expect(ajv.validateSchema(schema)).toBe(true);
      expect(typeof schema.title).toBe('string');
    });
  }
  it('fields carry the validator\'s "expected" text, with the unit, as their description', () => {
    const scenario = jsonSchema('scenario') as { properties: { body: { properties: Record<string, { description?: string }> } } };
    expect(scenario.properties.body.properties.mass_kg.description).toBe('a number from 1e-6 to 1e6 (kg)');
  });
  it('the package ships the schemas (package.json files and exports)', () => {
    const pkg = readJson('package.json');
    expect(pkg.files).toContain('schemas');
    expect(pkg.exports['./schemas/*']).toBe('./schemas/*');
  });
});

describe('scenario files: the schema and the validator agree', () => {
  const good: [string, unknown][] = [
    ['the demo', demo],
    ['the demo with "$schema"', { $schema: '../schemas/scenario.schema.json', ...demo }],
    ['a fixed angle on flat ground, defaults left out', edited(edited(demo, ['terrain'], undefined), ['policy'], { angle: { kind: 'fixed', attack_deg: 68 } })],
    ['a time-table angle and a time-table stiffness', edited(demo, ['policy'], {
      angle: { kind: 'time_table', time_since_apex_s: [0, 0.1, 0.2], attack_deg: [70, 68, 66] },
      stiffness: { kind: 'time_table', time_since_apex_s: [0, 0.3], compression_N_per_m: [5000, 5200], extension_N_per_m: [5100, 5300] },
    })],
  ];
  for (const [what, value] of good) {
    it(`accepts ${what}`, async () => {
      expect(schemaAccepts('scenario', value), JSON.stringify(validators.scenario.errors)).toBe(true);
      expect(await pronkAccepts('scenario', value)).toBe(true);
    });
  }
  it('"$schema" belongs to the file: the validated scenario leaves it out', () => {
    expect(parseScenario({ $schema: 'x.json', ...demo })).toEqual(parseScenario(demo));
  });

  const bad: [string, unknown][] = [
    ['not an object', [demo]],
    ['no body', edited(demo, ['body'], undefined)],
    ['a negative mass', edited(demo, ['body', 'mass_kg'], -9)],
    ['a mass given as text', edited(demo, ['body', 'mass_kg'], '9 kg')],
    ['a misspelt field', edited(edited(demo, ['body', 'mass_kg'], undefined), ['body', 'mass_kgs'], 9)],
    ['an unknown top-level field', { ...demo, gravity: 9.81 }],
    ['an attack angle past vertical', edited(demo, ['policy', 'angle'], { kind: 'fixed', attack_deg: 95 })],
    ['an unknown angle kind', edited(demo, ['policy', 'angle', 'kind'], 'retract')],
    ['a retraction without its rate', edited(demo, ['policy', 'angle', 'rate_deg_per_s'], undefined)],
    ['zero strides', edited(demo, ['strides'], 0)],
    ['a fractional stride count', edited(demo, ['strides'], 2.5)],
    ['a random walk without a seed', edited(demo, ['terrain'], { kind: 'random_walk', sigma_m: 0.01 })],
    ['a negative seed', edited(demo, ['terrain'], { kind: 'random_walk', sigma_m: 0.01, seed: -1 })],
    ['an empty step list', edited(demo, ['terrain'], { kind: 'steps', ground_heights_m: [] })],
    ['a relative tolerance of 0.5', edited(demo, ['integrator'], { relative_tolerance: 0.5 })],
    ['a "$schema" that is not text', { $schema: 2020, ...demo }],
  ];
  for (const [what, value] of bad) {
    it(`refuses ${what}`, async () => {
      expect(schemaAccepts('scenario', value)).toBe(false);
      expect(await pronkAccepts('scenario', value)).toBe(false);
    });
  }

  // What a JSON Schema cannot say: checks across fields. The schema lets these through; pronk
  // refuses them with a message naming the field (the schema module's comment says so).
  const crossField: [string, unknown][] = [
    ['a table column shorter than its knot times', edited(demo, ['policy', 'angle'], { kind: 'time_table', time_since_apex_s: [0, 0.1], attack_deg: [70] })],
    ['knot times that go back', edited(demo, ['policy', 'angle'], { kind: 'time_table', time_since_apex_s: [0.1, 0], attack_deg: [70, 68] })],
    ['a start apex below the first touchdown', edited(demo, ['start', 'apex_height_m'], 0.1)],
  ];
  for (const [what, value] of crossField) {
    it(`only the validator refuses ${what}`, async () => {
      expect(schemaAccepts('scenario', value)).toBe(true);
      expect(await pronkAccepts('scenario', value)).toBe(false);
    });
  }
});

describe('study files: the schema and the validator agree', () => {
  it('the schema accepts the demo study as written (scenario_file)', () => {
    expect(schemaAccepts('study', demoStudy), JSON.stringify(validators.study.errors)).toBe(true);
    expect(schemaAccepts('study', { $schema: '../schemas/study.schema.json', ...demoStudy })).toBe(true);
  });
  it('both accept the demo study with its scenario inline, and with "$schema" in both', async () => {
    expect(schemaAccepts('study', inlineStudy)).toBe(true);
    expect(await pronkAccepts('study', inlineStudy)).toBe(true);
    const marked = { $schema: 'study.schema.json', ...inlineStudy, scenario: { $schema: 'scenario.schema.json', ...demo } };
    expect(schemaAccepts('study', marked)).toBe(true);
    expect(await pronkAccepts('study', marked)).toBe(true);
  });

  const bad: [string, unknown][] = [
    ['an unknown search method', edited(inlineStudy, ['search', 'method'], 'SIMPLEX')],
    ['no free parameters', edited(inlineStudy, ['free_parameters'], [])],
    ['a free parameter without bounds', edited(inlineStudy, ['free_parameters', 0, 'upper'], undefined)],
    ['an objective term of an unknown kind', edited(inlineStudy, ['objective', 'terms', 0, 'kind'], 'survive')],
    ['a survival term without its rollouts', edited(inlineStudy, ['objective', 'terms', 0, 'rollouts'], undefined)],
    ['a friction coefficient of zero', edited(inlineStudy, ['constraints', 'friction_coefficient'], 0)],
    ['no hold-out', edited(inlineStudy, ['holdout'], undefined)],
    ['a misspelt field', { ...inlineStudy, restart: 3 }],
    ['a bad field in the inline scenario', edited(inlineStudy, ['scenario', 'body', 'mass_kg'], 0)],
  ];
  for (const [what, value] of bad) {
    it(`refuses ${what}`, async () => {
      expect(schemaAccepts('study', value)).toBe(false);
      expect(await pronkAccepts('study', value)).toBe(false);
    });
  }
  it('only the validator refuses a hold-out seed equal to the training seed (a check across fields)', async () => {
    const same = edited(inlineStudy, ['holdout', 'seed'], inlineStudy.seed);
    expect(schemaAccepts('study', same)).toBe(true);
    expect(await pronkAccepts('study', same)).toBe(false);
  });
});

describe('result files: the schema and the export reader agree', async () => {
  const scenario = parseScenario(demo);
  const result = {
    format: 'pronk-result',
    format_version: 1,
    kind: 'optimization',
    scenario,
    policy: scenario.policy,
    constraints: [{ name: 'max_leg_force_N', value: 700, limit: 900, margin: 200 }],
    provenance: { pronk_version: PRONK_VERSION, scenario_sha256: await contentHash(scenario), date: '2026-12-01T00:00:00.000Z' },
    scores: { anything: 'the writers add more fields' },
  };
  it('both accept a result file', async () => {
    expect(schemaAccepts('result', result), JSON.stringify(validators.result.errors)).toBe(true);
    expect(await pronkAccepts('result', result)).toBe(true);
  });
  it('both accept a result whose constraint was not measured (null value and margin, as pronk optimize writes it)', async () => {
    const unmeasured = edited(edited(result, ['constraints', 0, 'value'], null), ['constraints', 0, 'margin'], null);
    expect(schemaAccepts('result', unmeasured), JSON.stringify(validators.result.errors)).toBe(true);
    expect(await pronkAccepts('result', unmeasured)).toBe(true);
  });
  const bad: [string, unknown][] = [
    ['another format', edited(result, ['format'], 'pronk-results')],
    ['a newer format version', edited(result, ['format_version'], 2)],
    ['an unknown kind', edited(result, ['kind'], 'basin')],
    ['a constraint margin given as text', edited(result, ['constraints', 0, 'margin'], 'none')],
    ['a policy of an unknown angle kind', edited(result, ['policy', 'angle', 'kind'], 'spline')],
    ['a scenario without a body', edited(result, ['scenario', 'body'], undefined)],
    ['a provenance hash that is not SHA-256', edited(result, ['provenance', 'scenario_sha256'], 'abc')],
  ];
  for (const [what, value] of bad) {
    it(`refuses ${what}`, async () => {
      expect(schemaAccepts('result', value)).toBe(false);
      expect(await pronkAccepts('result', value)).toBe(false);
    });
  }
});
