// Policy search over lateral scenarios (src/core/optimize/kinds.ts, study.ts, objectives.ts): the
// recovery term is pronk recover's Monte Carlo over random kicks, the limits are measured on the
// kicked rollouts' strides, the terms, limits and paths the kind does not take are refused by name,
// and a small search is the same file on one and on two workers and validates against its schema.

import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { afterAll, describe, expect, it } from 'vitest';
import { loadEngine } from '../src/core/engine.js';
import { InputError } from '../src/core/errors.js';
import { jsonSchema } from '../src/core/json-schemas.js';
import { type RecoveryDetails, StudyEvaluator } from '../src/core/optimize/objectives.js';
import { parseStudy, scenarioValueAt } from '../src/core/optimize/study.js';

const bin = new URL('../bin/pronk.js', import.meta.url).pathname;
const read = (path: string) => JSON.parse(readFileSync(new URL(`../${path}`, import.meta.url), 'utf8'));
const hexapod = read('scenarios/demo-hexapod.json');
const slip = read('scenarios/demo.json');
const dir = mkdtempSync(join(tmpdir(), 'pronk-lateral-study-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function pronk(args: string[]) {
  const r = spawnSync(process.execPath, [bin, ...args], { encoding: 'utf8', cwd: dir, env: { ...process.env, PRONK_DEBUG: '' } });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

const KICKS = { max_left_m_per_s: 0.5, max_forward_m_per_s: 0.2, max_angle_deg: 8, max_rate_deg_per_s: 150 };

function study(overrides: Record<string, unknown> = {}, scenario: unknown = hexapod) {
  return {
    scenario,
    free_parameters: [
      { path: 'policy.angle.angle_to_body_deg', lower: 54, upper: 66 },
      { path: 'body.leg_stiffness_N_per_m', lower: 450, upper: 800 },
      { path: 'body.attachment_offset_m', lower: -0.03, upper: 0 },
    ],
    objective: { terms: [{ kind: 'recovery', rollouts: 24, kick_stride: 1, strides_after: 8, ...KICKS }] },
    seed: 11,
    holdout: { seed: 12, rollouts: 30 },
    ...overrides,
  };
}

function issuesOf(value: unknown): { path: string; message?: string; expected: string; found: string }[] {
  try {
    parseStudy(value);
  } catch (error) {
    if (error instanceof InputError) return error.issues as { path: string; message?: string; expected: string; found: string }[];
    throw error;
  }
  return [];
}

describe('lateral studies: validation', () => {
  it('accepts the recovery term, the three lateral parameters and the two limits it measures', () => {
    const s = parseStudy(study({ constraints: { max_leg_force_N: 40, max_compression_fraction: 0.7 } }));
    expect(s.scenario.model).toBe('lateral');
    expect(s.free_parameters.map((p) => [p.path, p.start])).toEqual([
      ['policy.angle.angle_to_body_deg', 57],
      ['body.leg_stiffness_N_per_m', 600],
      ['body.attachment_offset_m', -0.012],
    ]);
    expect(s.objective.terms[0]).toMatchObject({ kind: 'recovery', rollouts: 24, kick_stride: 1, strides_after: 8 });
  });

  it('refuses terms, limits and paths the lateral search does not take, by name', () => {
    const terms = issuesOf(study({ objective: { terms: [{ kind: 'survival', terrain: 'random_walk', sigma_m: 0.002, rollouts: 5 }] } }));
    expect(terms.find((i) => i.path === 'objective.terms[0].kind')?.message).toMatch(/scenario model "lateral": the survival term is not available .*supports recovery/);
    for (const [limit, value, reason] of [
      ['friction_coefficient', 0.8, /no vertical ground force/],
      ['leg_angle_range_deg', { min_deg: 50, max_deg: 70 }, /fixed angle to the body axis/],
      ['max_hip_rate_deg_per_s', 100, /no schedule/],
      ['stiffness_range_N_per_m', { min_N_per_m: 400, max_N_per_m: 900 }, /one constant/],
      ['max_vertical_force_N', 30, /no vertical ground force/],
    ] as const) {
      const issue = issuesOf(study({ constraints: { [limit]: value } })).find((i) => i.path === `constraints.${limit}`);
      expect(issue?.message, limit).toMatch(new RegExp(`the limit ${limit} is not available for the lateral leg-spring model`));
      expect(issue?.message, limit).toMatch(reason);
      expect(issue?.message, limit).toMatch(/supports max_leg_force_N, max_compression_fraction/);
    }
    const paths = issuesOf(study({ free_parameters: [{ path: 'body.mass_kg', lower: 0.5, upper: 1.5 }] }));
    expect(paths.find((i) => i.path === 'free_parameters[0].path')?.message).toMatch(
      /scenario model "lateral": free parameter "body.mass_kg" is not searched .*policy.angle.angle_to_body_deg, body.leg_stiffness_N_per_m, body.attachment_offset_m/,
    );
    // the recovery term is the lateral model's: a single-leg study refuses it by name
    const single = issuesOf({
      scenario: slip,
      free_parameters: [{ path: 'policy.angle.attack_deg', lower: 60, upper: 75, start: 68 }],
      objective: { terms: [{ kind: 'recovery', rollouts: 5, ...KICKS }] },
      seed: 1,
      holdout: { seed: 2, rollouts: 5 },
    });
    expect(single.find((i) => i.path === 'objective.terms[0].kind')?.message).toMatch(/the recovery term is not available for the single-leg model/);
  });
});

describe('lateral studies: the recovery objective', () => {
  it('equals the recovered fraction of `pronk recover --rollouts` for the same kicks and parameters, and repeats exactly', async () => {
    const engine = await loadEngine();
    const s = parseStudy(study());
    const x = [60, 520, -0.02];
    const evaluation = new StudyEvaluator(s, engine, 'training').evaluate(x);
    expect(evaluation.valid, evaluation.message).toBe(true);
    const details = evaluation.terms[0].details as RecoveryDetails;
    // the same candidate as a scenario file, kicked by pronk recover with the study's seed
    const file = join(dir, 'candidate.json');
    writeFileSync(file, JSON.stringify(scenarioValueAt(s.scenario, s.free_parameters, x)));
    const r = pronk([
      'recover', file, '--rollouts', '24', '--seed', '11', '--kick-stride', '1', '--strides-after', '8',
      '--kick-left', '0.5', '--kick-forward', '0.2', '--kick-angle', '8', '--kick-rate', '150', '--json',
    ]);
    expect(r.code, r.stderr).toBe(0);
    const mc = JSON.parse(r.stdout);
    expect(details.rollouts).toBe(mc.rollouts);
    expect(details.recovered).toBe(mc.recovered);
    expect(details.survived).toBe(mc.survived);
    expect(details.recovery).toBe(mc.recovery);
    expect(details.wilson95).toEqual(mc.recovery_interval_95);
    expect(details.median_strides_to_recover).toBe(mc.strides_to_recover.median);
    // the score is the recovered fraction plus a tie-break worth less than one more kick
    expect(evaluation.score).toBeGreaterThanOrEqual(details.recovery);
    expect(evaluation.score).toBeLessThan(details.recovery + 1 / details.rollouts);
    // deterministic: a fresh evaluator at the same point gives the same numbers (common random numbers)
    expect(new StudyEvaluator(s, engine, 'training').evaluate(x)).toEqual(evaluation);
    // the held-out set draws other kicks: its rollouts come from the held-out seed
    const held = new StudyEvaluator(s, engine, 'holdout').evaluate(x);
    expect((held.terms[0].details as RecoveryDetails).rollouts).toBe(30);
  }, 60_000);

  it('measures the limits on the kicked strides: the peak force is the stiffness times the largest compression (Hooke)', async () => {
    const engine = await loadEngine();
    const s = parseStudy(study({ constraints: { max_leg_force_N: 40, max_compression_fraction: 0.7 } }));
    const x = [58, 600, -0.015];
    const e = new StudyEvaluator(s, engine, 'training').evaluate(x);
    const force = e.constraints.find((c) => c.name === 'max_leg_force_N')!.value!;
    const compression = e.constraints.find((c) => c.name === 'max_compression_fraction')!.value!;
    expect(compression).toBeGreaterThan(0);
    expect(compression).toBeLessThan(1);
    // a linear spring's force is k·(L0 − r) (Hooke's law), largest where the compression is: both
    // maxima are over the same strides, so they agree to rounding
    expect(force).toBeCloseTo(600 * compression * hexapod.body.leg_length_m, 9);
  }, 60_000);

  it('a candidate without a periodic gait is an invalid candidate with a message, never an abort', async () => {
    const engine = await loadEngine();
    const s = parseStudy(study({ free_parameters: [{ path: 'policy.angle.angle_to_body_deg', lower: 45, upper: 66 }] }));
    // measured: at 50 deg the demo body has no gait at its start speed (pronk recover refuses it)
    const e = new StudyEvaluator(s, engine, 'training').evaluate([50]);
    expect(e.valid).toBe(false);
    expect(e.message).toMatch(/no periodic gait/);
    expect(Number.isFinite(e.value)).toBe(true);
  }, 60_000);
});

describe('pronk optimize on a lateral study', () => {
  it('writes the same result file on 1 and 2 workers (timings aside), valid against the result schema', () => {
    const file = join(dir, 'study.json');
    writeFileSync(
      file,
      JSON.stringify(
        study({
          objective: { terms: [{ kind: 'recovery', rollouts: 12, kick_stride: 1, strides_after: 6, ...KICKS }] },
          constraints: { max_leg_force_N: 40, max_compression_fraction: 0.7 },
          search: { method: 'COBYLA', max_evaluations: 6, restarts: 2 },
          holdout: { seed: 12, rollouts: 20 },
        }),
      ),
    );
    const texts = [1, 2].map((workers) => {
      const out = join(dir, `result-${workers}.json`);
      const r = pronk(['optimize', file, '--workers', String(workers), '--out', out]);
      expect(r.code, r.stderr).toBe(0);
      return readFileSync(out, 'utf8');
    });
    const withoutTimings = (text: string) => {
      const r = JSON.parse(text);
      for (const x of r.restarts) delete x.seconds;
      delete r.provenance.seconds;
      delete r.provenance.phase_seconds;
      delete r.provenance.date;
      return JSON.stringify(r, null, 2);
    };
    expect(withoutTimings(texts[1])).toBe(withoutTimings(texts[0]));
    const value = JSON.parse(texts[0]);
    expect(value.model).toBe('lateral');
    expect(value.summary.holdout_survival).toHaveLength(1);
    const h = value.summary.holdout_survival[0];
    expect(h.kind).toBe('recovery');
    expect(h.gain_paired95[0]).toBeLessThanOrEqual(h.gain);
    expect(h.gain_paired95[1]).toBeGreaterThanOrEqual(h.gain);
    expect(value.caution).toMatch(/not a guarantee/);
    // the result file's JSON Schema, judged by Ajv (an outside validator)
    const validate = new Ajv2020({ strict: true, allErrors: true }).compile(jsonSchema('result'));
    expect(validate(value), JSON.stringify(validate.errors)).toBe(true);
    // pronk export does not read a lateral study's result file yet: refused by name, nothing written
    const policy = join(dir, 'policy.json');
    const e = pronk(['export', join(dir, 'result-1.json'), '--format', 'json', '--out', policy]);
    expect(e.code).toBe(2);
    expect(e.stderr).toMatch(/a result file of a lateral study/);
    expect(existsSync(policy)).toBe(false);
  }, 180_000);
});
