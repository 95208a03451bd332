// A fresh result file whose winner moved away from the study's start: its provenance hash is the
// hash of the scenario the file holds, so pronk export finds the file unedited (it warned "the
// file was edited" for every such result while the hash was the start scenario's). Editing the
// file afterwards is still noticed.

import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { pronk } from './pronk-cli.js';
import { closeWorkerPool } from '../src/worker/pool.js';

const root = join(import.meta.dirname, '..');
const folder = mkdtempSync(join(tmpdir(), 'pronk-provenance-'));
afterAll(async () => {
  rmSync(folder, { recursive: true, force: true });
  await closeWorkerPool();
});

describe('the provenance hash of an optimization result', () => {
  it('is the hash of the winning scenario the file holds: export finds a fresh file unedited, an edited one edited', async () => {
    writeFileSync(join(folder, 'demo.json'), readFileSync(join(root, 'scenarios', 'demo.json')));
    const study = {
      scenario_file: 'demo.json',
      free_parameters: [{ path: 'policy.angle.attack_at_apex_deg', lower: 58, upper: 72 }],
      objective: { terms: [{ kind: 'survival', terrain: 'random_walk', sigma_m: 0.02, rollouts: 20, strides: 10 }] },
      search: { method: 'COBYLA', max_evaluations: 15, restarts: 1 },
      seed: 1,
      holdout: { seed: 2, rollouts: 40 },
    };
    writeFileSync(join(folder, 'study.json'), JSON.stringify(study));
    const run = await pronk(['optimize', join(folder, 'study.json'), '--workers', '1', '--out', join(folder, 'result.json')]);
    expect(run.code, run.stderr).toBe(0);
    const result = JSON.parse(readFileSync(join(folder, 'result.json'), 'utf8'));
    // the winner moved away from the demo's 64 deg, so the file's scenario is not the study's start
    expect(result.scenario.policy.angle.attack_at_apex_deg).not.toBe(64);
    const fresh = await pronk(['export', join(folder, 'result.json'), '--format', 'json', '--out', join(folder, 'p.json'), '--json']);
    expect(fresh.code, fresh.stderr).toBe(0);
    expect(JSON.parse(fresh.stdout).source.scenario_sha256_matches).toBe(true);
    expect(fresh.stdout + fresh.stderr).not.toMatch(/was edited/);
    // an edit to the scenario after the run is noticed
    result.scenario.policy.angle.attack_at_apex_deg += 1;
    writeFileSync(join(folder, 'edited.json'), JSON.stringify(result));
    const edited = await pronk(['export', join(folder, 'edited.json'), '--format', 'json', '--out', join(folder, 'q.json'), '--json']);
    expect(edited.code, edited.stderr).toBe(0);
    expect(JSON.parse(edited.stdout).source.scenario_sha256_matches).toBe(false);
  }, 120_000);
});
