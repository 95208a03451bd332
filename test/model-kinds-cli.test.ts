// Every analysis command over every model kind, through the built `pronk` (dist/): each either
// gives a result (exit 0, the `--json` header naming the command, the kind and its section, no
// non-finite number, files that validate) or refuses the kind (exit 2, a message naming the kind,
// the command's kinds and the commands that do run it). And each shardable analysis, split in two
// shards and merged, equals its one-machine run byte for byte, for every kind it runs.
// Adding a model kind without fixtures here fails the first test, by name.

import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { afterAll, describe, expect, it } from 'vitest';
import { COMMAND_KINDS, commandsRunning } from '../src/cli/scenario-argument.js';
import { jsonSchema } from '../src/core/json-schemas.js';
import { MODEL_KINDS, type ModelKind } from '../src/core/models/kind.js';

const bin = new URL('../bin/pronk.js', import.meta.url).pathname;
const scenarios = new URL('../scenarios/', import.meta.url).pathname;
const dir = mkdtempSync(join(tmpdir(), 'pronk-kinds-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function pronk(args: string[]) {
  const r = spawnSync(process.execPath, [bin, ...args], { encoding: 'utf8', cwd: dir, env: { ...process.env, PRONK_DEBUG: '' } });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

interface Fixture {
  scenario: string;
  section: string;
  /** Small options per command (the scenario file is added in front). */
  options: Record<string, string[]>;
  /** A small study of this kind (free parameters, one Monte Carlo term). */
  study: Record<string, unknown>;
  /** Shardable commands that run this kind in one process only (no --workers, no --shard). */
  unsharded?: string[];
  /** A command's own scenario file where the kind's demo does not fit it. */
  scenarioFor?: Record<string, string>;
}

// recover on one leg needs a fixed attack angle (the demo retracts): the human-like runner of
// Seyfarth et al. 2002 (80 kg, 1 m, 20 kN/m) at 68 deg, 5 m/s, its stable gait near 1 m
const fixedRunner = join(dir, 'fixed-runner.json');

const tiny = { method: 'COBYLA', max_evaluations: 4, restarts: 1 };
const FIXTURES: Record<ModelKind, Fixture> = {
  slip: {
    scenario: join(scenarios, 'demo.json'),
    section: 'flight_apex',
    options: {
      simulate: ['--strides', '3'],
      map: [],
      scan: ['--x', 'policy.angle.attack_at_apex_deg:60:66:3', '--y', 'body.leg_stiffness_N_per_m:4500:5500:2', '--samples', '10'],
      basin: ['--heights', '0.42:0.5:3', '--speeds', '3.2:3.5:2', '--strides', '10'],
      stepdown: ['--after', '5'],
      robustness: ['--sigma', '0.002', '--rollouts', '12', '--strides', '5'],
      recover: ['--kick-forward', '0.1', '--strides-after', '10'],
      deadbeat: ['--ground=-0.01:0.01'],
    },
    // one kick on one leg (no Monte Carlo, no shards)
    unsharded: ['recover'],
    scenarioFor: { recover: fixedRunner },
    study: {
      free_parameters: [{ path: 'policy.angle.attack_at_apex_deg', lower: 60, upper: 68 }],
      objective: { terms: [{ kind: 'survival', terrain: 'random_walk', sigma_m: 0.005, rollouts: 10, strides: 5 }] },
    },
  },
  biped: {
    scenario: join(scenarios, 'demo-biped.json'),
    section: 'single_support_apex',
    options: {
      simulate: ['--strides', '3'],
      map: [],
      scan: ['--x', 'policy.angle.attack_deg:69:73:3', '--y', 'body.leg_stiffness_N_per_m:10000:13000:2', '--samples', '10'],
      basin: ['--heights', '0.585:0.595:3', '--speeds', '0.85:1.0:2', '--strides', '10'],
      stepdown: ['--after', '5'],
      robustness: ['--sigma', '0.002', '--rollouts', '12', '--strides', '5'],
      recover: ['--kick-forward', '0.05'],
      deadbeat: ['--ground=-0.01:0.01'],
      // a walking start: no fall time bounds the touchdown, so the table's end is given
      export: ['--t-max', '0.6', '--legs', 'per-leg'],
    },
    study: {
      free_parameters: [{ path: 'policy.angle.attack_deg', lower: 68, upper: 74 }],
      objective: { terms: [{ kind: 'survival', terrain: 'random_heights', sigma_m: 0.002, rollouts: 10, strides: 5 }] },
      constraints: { max_vertical_force_N: 2000 },
    },
  },
  lateral: {
    scenario: join(scenarios, 'demo-hexapod.json'),
    section: 'left_touchdown',
    options: {
      simulate: ['--strides', '3'],
      map: [],
      scan: ['--x', 'body.attachment_offset_m:-0.014:-0.01:3', '--y', 'start.speed_m_per_s:1.2:1.4:2'],
      basin: ['--headings=-10:10:3', '--rates=-50:50:2', '--strides', '10'],
      stepdown: ['--after', '5'],
      // no ground: random kicks, the Monte Carlo of recover --rollouts
      robustness: ['--kick-left', '0.05', '--rollouts', '8', '--strides', '10'],
      recover: ['--kick-left', '0.05', '--rollouts', '8', '--strides-after', '10'],
      deadbeat: ['--ground=-0.01:0.01'],
    },
    study: {
      free_parameters: [{ path: 'policy.angle.angle_to_body_deg', lower: 55, upper: 65 }],
      objective: { terms: [{ kind: 'recovery', rollouts: 10, strides_after: 5, max_left_m_per_s: 0.3, max_rate_deg_per_s: 100 }] },
      constraints: { max_leg_force_N: 100, max_compression_fraction: 0.9 },
    },
  },
};

const SCENARIO_COMMANDS = ['simulate', 'map', 'scan', 'basin', 'stepdown', 'robustness', 'recover', 'deadbeat'];
// the commands that take --workers, and those that split into shards (--shard I/N, pronk merge)
const WORKERS = ['scan', 'basin', 'robustness'];
const SHARDABLE = ['scan', 'basin', 'robustness', 'recover'];

writeFileSync(
  fixedRunner,
  JSON.stringify({
    name: 'fixed-angle runner',
    body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
    start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
    policy: { angle: { kind: 'fixed', attack_deg: 68 }, stiffness: { kind: 'constant' } },
    terrain: { kind: 'flat' },
    strides: 10,
  }),
);

// Every number in a parsed JSON value is finite (JSON holds no NaN or Infinity: a parse proves the
// text has none as values; the walk checks what the parse gave).
function expectFinite(text: string): unknown {
  const value = JSON.parse(text);
  const walk = (v: unknown): void => {
    if (typeof v === 'number') expect(Number.isFinite(v)).toBe(true);
    else if (Array.isArray(v)) v.forEach(walk);
    else if (v && typeof v === 'object') Object.values(v).forEach(walk);
  };
  walk(value);
  return value;
}

function expectRefusal(r: ReturnType<typeof pronk>, kind: string, command: string): void {
  expect(r.code, r.stderr).toBe(2);
  expect(r.stdout).toBe('');
  expect(r.stderr).toContain(`scenario model "${kind}": ${command} supports`);
  expect(r.stderr).toContain(`found "${kind}"`);
  const runs = commandsRunning(kind);
  expect(r.stderr).toContain(runs.length ? `pronk ${runs.join(', ')} run a "${kind}" scenario` : `no pronk command runs a "${kind}" scenario`);
  expect(r.stderr).not.toMatch(/internal error|at .*\.js:\d+/);
}

describe('every analysis command over every model kind', () => {
  it('has fixtures for every model kind this build accepts', () => {
    expect(Object.keys(FIXTURES).sort()).toEqual([...MODEL_KINDS].sort());
  });

  for (const kind of MODEL_KINDS) {
    const f = FIXTURES[kind];
    for (const command of SCENARIO_COMMANDS) {
      it(`${command} on a "${kind}" scenario: a result or a refusal by name`, () => {
        const extra = WORKERS.includes(command) && !f.unsharded?.includes(command) ? ['--workers', '1'] : [];
        const r = pronk([command, f.scenarioFor?.[command] ?? f.scenario, ...f.options[command], ...extra, '--json']);
        if (!COMMAND_KINDS[command].includes(kind)) return expectRefusal(r, kind, command);
        expect(r.code, r.stderr).toBe(0);
        const out = expectFinite(r.stdout) as Record<string, unknown>;
        expect(out).toMatchObject({ format: `pronk-${command}`, format_version: 1, model: kind, section: f.section });
        expect(out.caution).toMatch(/not a guarantee/);
      }, 60_000);
    }

    it(`optimize on a "${kind}" study: a schema-valid result file or a refusal by name`, () => {
      const study = join(dir, `study-${kind}.json`);
      const result = join(dir, `result-${kind}.json`);
      writeFileSync(study, JSON.stringify({ scenario_file: f.scenario, ...f.study, search: tiny, seed: 3, holdout: { seed: 4, rollouts: 12 } }));
      const r = pronk(['optimize', study, '--workers', '1', '--out', result]);
      if (!COMMAND_KINDS.optimize.includes(kind)) return expectRefusal(r, kind, 'optimize');
      expect(r.code, r.stderr).toBe(0);
      const text = readFileSync(result, 'utf8');
      const value = expectFinite(text) as Record<string, unknown>;
      expect(value.model).toBe(kind);
      // the result file's JSON Schema (src/core/json-schemas.ts), judged by Ajv, an outside validator
      const validate = new Ajv2020({ strict: true, allErrors: true }).compile(jsonSchema('result'));
      expect(validate(value), JSON.stringify(validate.errors)).toBe(true);
    }, 120_000);

    it(`export of a "${kind}" scenario: policy files or a refusal by name`, () => {
      const out = join(dir, `policy-${kind}.json`);
      const r = pronk(['export', f.scenario, ...(f.options.export ?? []), '--format', 'json', '--out', out, '--json']);
      if (!COMMAND_KINDS.export.includes(kind)) return expectRefusal(r, kind, 'export');
      expect(r.code, r.stderr).toBe(0);
      expect(expectFinite(r.stdout)).toMatchObject({ format: 'pronk-export', model: kind });
      expect(expectFinite(readFileSync(out, 'utf8'))).toMatchObject({ format: 'pronk-policy' });
    }, 60_000);
  }
});

describe('shards and merge over every model kind', () => {
  for (const kind of MODEL_KINDS) {
    const f = FIXTURES[kind];
    for (const command of SHARDABLE) {
      if (!COMMAND_KINDS[command].includes(kind)) continue;
      if (f.unsharded?.includes(command)) {
        it(`${command} on a "${kind}" scenario: --shard refused by name (exit 2), nothing written`, () => {
          const part = join(dir, `${kind}-${command}-refused.json`);
          const r = pronk([command, f.scenarioFor?.[command] ?? f.scenario, ...f.options[command], '--shard', '1/2', '--out', part]);
          expect(r.code, r.stderr).toBe(2);
          expect(r.stderr).toMatch(/--shard/);
          expect(r.stderr).not.toMatch(/internal error/);
          expect(existsSync(part)).toBe(false);
        });
        continue;
      }
      it(`${command} on a "${kind}" scenario: two shards merged = the one-machine run, byte for byte`, () => {
        const args = [command, f.scenarioFor?.[command] ?? f.scenario, ...f.options[command], ...(WORKERS.includes(command) ? ['--workers', '1'] : [])];
        const one = pronk([...args, '--json']);
        expect(one.code, one.stderr).toBe(0);
        const parts = [1, 2].map((i) => join(dir, `${kind}-${command}-part-${i}.json`));
        parts.forEach((part, i) => {
          const r = pronk([...args, '--shard', `${i + 1}/2`, '--out', part]);
          expect(r.code, r.stderr).toBe(0);
        });
        const merged = pronk(['merge', ...parts, '--json']);
        expect(merged.code, merged.stderr).toBe(0);
        expect(merged.stdout).toBe(one.stdout);
        expect(JSON.parse(merged.stdout)).toMatchObject({ model: kind, section: f.section });
      }, 60_000);
    }
  }
});
