// integrator.apex_accuracy_m on the two-leg model: the parse-time tolerances (accuracy.ts,
// gaitLengthScaleM with the longer leg) give one-stride section heights (the flight apex of a running stride, the
// single-support apex of a walking one) within the requested accuracy of a tight-tolerance run
// (rtol 1e-13) from the same section, on two-leg gaits that were not in the measured set; the
// per-run calibration of `robustness` (accuracy-calibration.ts) does too on rollouts it did not
// see, walking on uneven ground included; outputs state what was used.
import { describe, expect, it } from 'vitest';
import { APEX_ERROR_FACTOR, BIPED_ACCURACY_DEFINITION, BIPED_CALIBRATED_ACCURACY_DEFINITION, gaitLengthScaleM } from '../src/core/accuracy.js';
import { CALIBRATION_MARGIN } from '../src/core/accuracy-calibration.js';
import { bipedReturnMap } from '../src/core/analysis/biped-map.js';
import { CALIBRATION_ROLLOUTS, canonicalRobustnessOptions, robustnessModel, robustnessScenario, terrainRobustness } from '../src/core/analysis/robustness.js';
import { loadEngine } from '../src/core/engine.js';
import { InputError } from '../src/core/errors.js';
import { startInput } from '../src/core/model.js';
import { simulateBiped } from '../src/core/models/biped-simulate.js';
import { accuracyLegLengthM, type BipedScenario } from '../src/core/models/biped.js';
import { parseScenario, type Scenario } from '../src/core/scenario.js';
import { L, oneStrideApexError } from './helpers.js';
import { pronk } from './pronk-cli.js';

type Raw = Record<string, unknown> & { body: Record<string, number> & { leg_length_m: number }; start: Record<string, unknown> };

// Two-leg gaits outside the set measured for the mapping (accuracy.ts): other bodies, unequal
// legs, a retraction policy, damped legs, a hop on both legs from high up, Mars gravity.
const WALKER_40KG: Raw = {
  model: 'biped',
  name: 'invented 40 kg walker, 0.8 m legs, fixed 70 deg',
  body: { mass_kg: 40, leg_length_m: 0.8, leg_stiffness_N_per_m: 14000, gravity_m_per_s2: 9.81 },
  start: { gait: 'walking', apex_height_m: 0.785, forward_speed_m_per_s: 1.0, offset_m: 0, leg: 'left' },
  policy: { angle: { kind: 'fixed', attack_deg: 70 } },
  terrain: { kind: 'flat' },
  strides: 8,
};
const CASES: { name: string; raw: Raw; fixedPoint?: boolean }[] = [
  { name: WALKER_40KG.name as string, raw: WALKER_40KG, fixedPoint: true },
  {
    name: 'invented 120 kg walker on Mars gravity, fixed 71 deg',
    raw: {
      ...WALKER_40KG,
      name: 'invented 120 kg walker on Mars gravity, fixed 71 deg',
      body: { mass_kg: 120, leg_length_m: 1.3, leg_stiffness_N_per_m: 9000, gravity_m_per_s2: 3.71 },
      start: { gait: 'walking', apex_height_m: 1.28, forward_speed_m_per_s: 0.8, offset_m: 0, leg: 'left' },
      policy: { angle: { kind: 'fixed', attack_deg: 71 } },
    },
    fixedPoint: true,
  },
  {
    name: 'invented 15 kg runner, legs of 0.50 and 0.49 m, retraction 64 deg + 60 deg/s',
    raw: {
      model: 'biped',
      body: { mass_kg: 15, leg_length_m: 0.5, leg_stiffness_N_per_m: 7000, gravity_m_per_s2: 9.81 },
      legs: { right: { leg_length_m: 0.49 } },
      start: { gait: 'running', apex_height_m: 0.52, forward_speed_m_per_s: 2.8, leg: 'left' },
      policy: { angle: { kind: 'retraction', attack_at_apex_deg: 64, rate_deg_per_s: 60 } },
      terrain: { kind: 'flat' },
      strides: 8,
    },
  },
  {
    name: 'invented 30 kg runner, damped legs (5 % of critical), fixed 68 deg',
    raw: {
      model: 'biped',
      body: { mass_kg: 30, leg_length_m: 0.7, leg_stiffness_N_per_m: 12000, gravity_m_per_s2: 9.81, leg_damping_N_s_per_m: 60 },
      start: { gait: 'running', apex_height_m: 0.75, forward_speed_m_per_s: 3.5, leg: 'left' },
      policy: { angle: { kind: 'fixed', attack_deg: 68 } },
      terrain: { kind: 'flat' },
      strides: 4,
    },
  },
  {
    name: 'invented 60 kg hopper, both legs together from 1.8 leg lengths',
    raw: {
      model: 'biped',
      body: { mass_kg: 60, leg_length_m: 0.9, leg_stiffness_N_per_m: 40000, gravity_m_per_s2: 9.81 },
      start: { gait: 'running', apex_height_m: 1.62, forward_speed_m_per_s: 0, leg: 'both' },
      policy: { angle: { kind: 'fixed', attack_deg: 90 } },
      terrain: { kind: 'flat' },
      strides: 6,
    },
  },
];

/** The case's start moved onto its walking fixed point (found by the map), when it has one. */
async function onFixedPoint(raw: Raw): Promise<Raw> {
  const map = await bipedReturnMap(parseScenario(raw) as BipedScenario, { iterations: 0 });
  const fp = map.fixed_points.find((f) => f.stable) ?? map.fixed_points[0];
  expect(fp, `${raw.name}: a walking fixed point`).toBeDefined();
  return { ...raw, start: { ...raw.start, apex_height_m: fp!.height_m, forward_speed_m_per_s: fp!.speed_m_per_s, offset_m: fp!.offset_m } };
}

/** Largest one-stride section height error at apex accuracy `accuracy` against rtol 1e-13, each stride rerun alone from its section (flat ground). */
async function oneStrideError(raw: Raw, accuracy: number): Promise<{ error: number; strides: number }> {
  const leg = Math.max(raw.body.leg_length_m, ...Object.values((raw.legs ?? {}) as Record<string, { leg_length_m?: number }>).map((l) => l.leg_length_m ?? 0));
  const tight = parseScenario({ ...raw, integrator: { relative_tolerance: 1e-13, absolute_tolerance: 1e-13 * leg } });
  return oneStrideApexError(tight, parseScenario({ ...raw, integrator: { apex_accuracy_m: accuracy } }));
}

/**
 * Largest first-stride section height error over rollouts [from, to) of a robustness run at the
 * scenario's tolerances against the same rollouts at rtol 1e-13 (each rollout's own ground; the
 * first stride starts from the scenario's start, so no restart is needed).
 */
async function unseenFirstStrides(scenario: Scenario, options: { rollouts: number; sigma_m: number; seed: number }, from: number, to: number) {
  const engine = await loadEngine();
  const o = canonicalRobustnessOptions(scenario, options);
  const leg = accuracyLegLengthM(scenario);
  const tight: Scenario = { ...scenario, integrator: { ...scenario.integrator, relative_tolerance: 1e-13, absolute_tolerance: 1e-13 * leg } };
  const n = to - from;
  const inputs = new Float64Array(n * L.I_SIZE);
  for (let i = 0; i < n; i++) {
    const row = startInput(scenario);
    row[L.I_STREAM] = from + i;
    inputs.set(row, i * L.I_SIZE);
  }
  const a = engine.runBatch({ model: robustnessModel(scenario, o), inputs, strides: 1, records: true });
  const b = engine.runBatch({ model: robustnessModel(tight, o), inputs, strides: 1, records: true });
  let error = 0;
  let strides = 0;
  for (let i = 0; i < n; i++) {
    const x = (a.records as Float64Array)[i * L.R_SIZE + L.R_NEXT_APEX_HEIGHT];
    const y = (b.records as Float64Array)[i * L.R_SIZE + L.R_NEXT_APEX_HEIGHT];
    if (!Number.isFinite(y)) continue; // the tight run fell on this ground: nothing to compare
    strides++;
    error = Math.max(error, Number.isFinite(x) ? Math.abs(x - y) : Infinity);
  }
  return { error, strides };
}

describe('integrator.apex_accuracy_m on the two-leg model', () => {
  for (const { name, raw, fixedPoint } of CASES) {
    it(`meets the requested one-stride section accuracy: ${name}`, async () => {
      const gait = fixedPoint ? await onFixedPoint(raw) : raw;
      const leg = raw.body.leg_length_m;
      for (const relative of [1e-5, 1e-7, 1e-8, 1e-10]) {
        const accuracy = relative * leg;
        const { error, strides } = await oneStrideError(gait, accuracy);
        expect(strides, 'the reference rollout completes strides').toBeGreaterThanOrEqual(2);
        expect(error, `${name} at ${accuracy} m`).toBeLessThanOrEqual(accuracy);
      }
    });
  }

  it('picks rtol = accuracy / (4 (L0 + v^2/g + 2 max(0, h - L0))) with the longer leg, atol = rtol L0, and states them', async () => {
    // the runner: legs of 0.50 and 0.49 m, 0.52 m apex at 2.8 m/s
    const runner = parseScenario({ ...CASES[2].raw, integrator: { apex_accuracy_m: 1e-8 } });
    const scale = gaitLengthScaleM(0.5, 2.8, 0.52, 9.81); // 0.5 + 2.8^2/9.81 + 2 (0.52 - 0.5) m
    expect(scale).toBeCloseTo(0.5 + 7.84 / 9.81 + 0.04, 12);
    expect(runner.integrator.relative_tolerance).toBe(1e-8 / (APEX_ERROR_FACTOR * scale));
    expect(runner.integrator.absolute_tolerance).toBe(runner.integrator.relative_tolerance * 0.5);
    // a longer right leg sets L0
    const longer = parseScenario({ ...CASES[2].raw, legs: { right: { leg_length_m: 0.55 } }, integrator: { apex_accuracy_m: 1e-8 } });
    expect(longer.integrator.absolute_tolerance).toBe(longer.integrator.relative_tolerance * 0.55);
    // a walking start below the leg length: the start height adds nothing
    const walker = parseScenario({ ...WALKER_40KG, integrator: { apex_accuracy_m: 1e-8 } });
    expect(walker.integrator.relative_tolerance).toBe(1e-8 / (APEX_ERROR_FACTOR * (0.8 + 1 / 9.81)));
    const sim = await simulateBiped(walker as BipedScenario);
    expect(sim.integrator).toEqual({
      apex_accuracy_m: 1e-8,
      relative_tolerance: walker.integrator.relative_tolerance,
      absolute_tolerance: walker.integrator.absolute_tolerance,
      definition: BIPED_ACCURACY_DEFINITION,
    });
    // re-parses to itself (result files echo the scenario with its tolerances)
    expect(parseScenario(JSON.parse(JSON.stringify(walker)))).toEqual(walker);
    // absent: no trace in the output
    expect('integrator' in (await simulateBiped(parseScenario(WALKER_40KG) as BipedScenario))).toBe(false);
  });

  it('refuses other tolerances beside it and an accuracy finer than the integrator reaches, naming the field', () => {
    const issuesOf = (integrator: Record<string, number>) => {
      try {
        parseScenario({ ...WALKER_40KG, integrator });
      } catch (e) {
        expect(e).toBeInstanceOf(InputError);
        return (e as InputError).issues;
      }
      return [];
    };
    expect(issuesOf({ apex_accuracy_m: 1e-8, relative_tolerance: 1e-9 }).map((i) => i.path)).toEqual(['integrator.relative_tolerance']);
    const fine = issuesOf({ apex_accuracy_m: 1e-14 });
    expect(fine.map((i) => i.path)).toEqual(['integrator.apex_accuracy_m']);
    expect(fine[0].expected).toMatch(/^at least .* m for these legs and this start/);
  });

  it('the text views of simulate and robustness state it on an accuracy line (both models), and only when asked', async () => {
    const { mkdtempSync, writeFileSync } = await import('node:fs');
    const { join } = await import('node:path');
    const { tmpdir } = await import('node:os');
    const dir = mkdtempSync(join(tmpdir(), 'pronk-accuracy-'));
    const file = (name: string, value: unknown) => {
      writeFileSync(join(dir, name), JSON.stringify(value));
      return join(dir, name);
    };
    const walker = file('walker.json', { ...WALKER_40KG, integrator: { apex_accuracy_m: 1e-8 } });
    const runner = file('runner.json', {
      body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
      start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
      policy: { angle: { kind: 'fixed', attack_deg: 68 } },
      strides: 4,
      integrator: { apex_accuracy_m: 1e-8 },
    });
    const plainRunner = file('plain.json', { body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000 }, start: { apex_height_m: 1, forward_speed_m_per_s: 5 }, policy: { angle: { kind: 'fixed', attack_deg: 68 } }, strides: 4 });
    const walk = parseScenario({ ...WALKER_40KG, integrator: { apex_accuracy_m: 1e-8 } });
    const sig = (x: number) => String(Number(x.toPrecision(2)));
    const sim = await pronk(['simulate', walker, '--strides', '2']);
    expect(sim.code).toBe(0);
    expect(sim.stdout).toContain(`  accuracy  apex 1e-8 m asked: rtol ${sig(walk.integrator.relative_tolerance)}, atol ${sig(walk.integrator.absolute_tolerance)} m\n`);
    for (const f of [walker, runner]) {
      const mc = await pronk(['robustness', f, '--sigma', '0.002', '--rollouts', '20', '--json']);
      const text = await pronk(['robustness', f, '--sigma', '0.002', '--rollouts', '20']);
      const used = JSON.parse(mc.stdout).integrator;
      expect(text.stdout).toContain(
        `  accuracy  apex 1e-8 m asked: rtol ${sig(used.relative_tolerance)}, atol ${sig(used.absolute_tolerance)} m; ` +
          `calibrated on ${used.calibration_strides} strides, largest one-stride error ${sig(used.calibrated_apex_error_m)} m\n`,
      );
    }
    expect((await pronk(['simulate', runner])).stdout).toMatch(/^ {2}accuracy +apex 1e-8 m asked: rtol /m);
    for (const command of ['simulate', 'robustness']) {
      const out = await pronk(command === 'simulate' ? [command, plainRunner] : [command, plainRunner, '--sigma', '0.002', '--rollouts', '8']);
      expect(out.code).toBe(0);
      expect(out.stdout).not.toMatch(/^\s+accuracy /m);
    }
  });

  it('robustness calibrates on its own rollouts, walking on uneven ground, and meets the accuracy on rollouts it did not see', async () => {
    const gait = await onFixedPoint({ ...WALKER_40KG, strides: 10 });
    for (const accuracy of [1e-7, 1e-9]) {
      const s = parseScenario({ ...gait, integrator: { apex_accuracy_m: accuracy } });
      const options = { rollouts: 60, sigma_m: 0.002, seed: 3, terrain: 'random_walk' as const };
      const { scenario, calibration } = await robustnessScenario(s, options);
      expect(calibration, `${accuracy} m`).not.toBeNull();
      // later strides stand on ground that earlier ones landed on: a calibration that restarted
      // them at the wrong height would measure millimetres and keep the parse-time tolerances
      expect(calibration!.calibration_strides).toBeGreaterThan(CALIBRATION_ROLLOUTS);
      expect(calibration!.calibrated_apex_error_m).toBeLessThanOrEqual(accuracy / CALIBRATION_MARGIN);
      expect(scenario.integrator.relative_tolerance).toBeGreaterThan(s.integrator.relative_tolerance);
      expect(scenario.integrator.absolute_tolerance).toBe(scenario.integrator.relative_tolerance * 0.8);
      const unseen = await unseenFirstStrides(scenario, options, CALIBRATION_ROLLOUTS, options.rollouts);
      expect(unseen.strides).toBeGreaterThanOrEqual(40);
      expect(unseen.error, `${accuracy} m at rtol ${scenario.integrator.relative_tolerance}`).toBeLessThanOrEqual(accuracy);
      // the result states them, the same on one worker and two
      const one = await terrainRobustness(s, options, { workers: 1 });
      const two = await terrainRobustness(s, options, { workers: 2 });
      expect(two).toEqual(one);
      expect(one.integrator).toEqual({
        apex_accuracy_m: accuracy,
        relative_tolerance: scenario.integrator.relative_tolerance,
        absolute_tolerance: scenario.integrator.absolute_tolerance,
        calibrated_apex_error_m: calibration!.calibrated_apex_error_m,
        calibration_strides: calibration!.calibration_strides,
        definition: BIPED_CALIBRATED_ACCURACY_DEFINITION,
      });
    }
  });
});
