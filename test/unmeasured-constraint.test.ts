// A policy that completes no stride on the held-out terrain: pronk optimize writes its constraint
// as not measured (value and margin null, objectives.ts), the file is a valid result file (the
// JSON Schema Pronk ships accepts it), and pronk export refuses it by the constraint's name, with
// or without --force, writing nothing (docs/contract.md).

import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { afterAll, describe, expect, it } from 'vitest';
import { pronk } from './pronk-cli.js';
import { closeWorkerPool } from '../src/worker/pool.js';

const root = join(import.meta.dirname, '..');
const folder = mkdtempSync(join(tmpdir(), 'pronk-unmeasured-'));
afterAll(async () => {
  rmSync(folder, { recursive: true, force: true });
  await closeWorkerPool();
});

describe('a result whose held-out rollouts completed no stride', () => {
  it('optimize writes null, the result schema accepts the file, export refuses it by name even with --force', async () => {
    // the demo robot standing still at the apex: with no forward speed every stride ends with the
    // body moving backwards, so no rollout completes a stride (law: no forward speed, no running stride)
    const scenario = JSON.parse(readFileSync(join(root, 'scenarios', 'demo.json'), 'utf8'));
    scenario.start.forward_speed_m_per_s = 0;
    writeFileSync(join(folder, 'still.json'), JSON.stringify(scenario));
    const study = {
      scenario_file: 'still.json',
      free_parameters: [{ path: 'policy.angle.attack_at_apex_deg', lower: 55, upper: 75 }],
      objective: { terms: [{ kind: 'survival', terrain: 'random_walk', sigma_m: 0.01, rollouts: 4, strides: 3 }] },
      constraints: { max_leg_force_N: 900 },
      search: { max_evaluations: 5 },
      seed: 1,
      holdout: { seed: 2, rollouts: 4 },
    };
    writeFileSync(join(folder, 'study.json'), JSON.stringify(study));
    const result = join(folder, 'result.json');
    const optimize = await pronk(['optimize', join(folder, 'study.json'), '--out', result, '--workers', '1']);
    expect(optimize.code, optimize.stderr).toBe(0);
    const written = JSON.parse(readFileSync(result, 'utf8'));
    expect(written.constraints).toEqual([expect.objectContaining({ name: 'max_leg_force_N', value: null, margin: null, limit: 900 })]);

    const ajv = new Ajv2020({ strict: false });
    const valid = ajv.compile(JSON.parse(readFileSync(join(root, 'schemas', 'result.schema.json'), 'utf8')));
    expect(valid(written), JSON.stringify(valid.errors)).toBe(true);

    const policy = join(folder, 'policy.json');
    for (const force of [[], ['--force']]) {
      const run = await pronk(['export', result, '--format', 'json', '--out', policy, ...force]);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain(
        'result.json: constraints[0]: constraint "max_leg_force_N" was not measured (value null): no held-out stride completed, so nothing ' +
          'shows the policy holds its limit; a policy that never completes a stride is not exported (--force does not write it)',
      );
      expect(run.stderr).not.toMatch(/not a valid result file|must be number/);
      expect(existsSync(policy)).toBe(false);
    }
  });
});
