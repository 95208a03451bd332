// integrator.apex_accuracy_m in `robustness`: the tolerances calibrated on the run's own first
// rollouts (src/core/accuracy-calibration.ts) give one-stride apex heights within the requested
// accuracy of a tight-tolerance run (rtol 1e-13) from the same apex, on strides the calibration did
// not see (later rollouts of the same run), over a seeded set of scenarios: bodies, speeds,
// fixed and retraction policies, damping, Earth and Moon gravity, split stiffness.
import { describe, expect, it } from 'vitest';
import { CALIBRATION_FINE_STEP, CALIBRATION_MARGIN, calibrateTolerances } from '../src/core/accuracy-calibration.js';
import {
  CALIBRATION_ROLLOUTS,
  canonicalRobustnessOptions,
  robustnessModel,
  robustnessScenario,
  terrainRobustness,
} from '../src/core/analysis/robustness.js';
import { loadEngine, rolloutInput, type ModelBlock } from '../src/core/engine.js';
import { parseScenario, type Scenario } from '../src/core/scenario.js';
import { L } from './helpers.js';

/** mulberry32: a small seeded generator (Tommy Ettinger's public-domain PRNG), uniform in [0, 1). */
function random(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

interface Case {
  raw: Record<string, unknown>;
  options: { rollouts: number; sigma_m: number; seed: number; strides: number };
  accuracy: number;
}

/** A seeded scenario: a body from the dimensionless stiffness k L0 / (m g) and Froude number v^2 / (g L0), a policy, damping. */
function randomCase(seed: number): Case {
  const u = random(seed);
  const between = (lo: number, hi: number) => lo + (hi - lo) * u();
  const logBetween = (lo: number, hi: number) => Math.exp(between(Math.log(lo), Math.log(hi)));
  const g = u() < 0.8 ? 9.81 : 1.62; // Earth, Moon
  const mass = logBetween(0.05, 500);
  const leg = logBetween(0.05, 3);
  const kDimless = between(12, 40);
  const froude = between(0.4, 3);
  const k = (kDimless * mass * g) / leg;
  const speed = Math.sqrt(froude * g * leg);
  const attack = between(62, 74);
  const angle =
    u() < 0.5
      ? { kind: 'fixed', attack_deg: attack }
      : { kind: 'retraction', attack_at_apex_deg: attack - between(2, 8), rate_deg_per_s: between(10, 120) * Math.sqrt(g / leg / 9.81) };
  // damping up to 5 % of critical, c = 2 zeta sqrt(k m); sometimes a split stiffness instead
  const damped = u() < 0.3;
  const body: Record<string, number> = { mass_kg: mass, leg_length_m: leg, leg_stiffness_N_per_m: k, gravity_m_per_s2: g };
  if (damped) body.leg_damping_N_s_per_m = 2 * between(0.005, 0.05) * Math.sqrt(k * mass);
  const stiffness = !damped && u() < 0.3 ? { kind: 'split', compression_N_per_m: k, extension_N_per_m: k * between(1.0, 1.08) } : { kind: 'constant' };
  const accuracy = leg * 10 ** between(-9, -6);
  return {
    raw: {
      body,
      start: { apex_height_m: leg * between(1.0, 1.15), forward_speed_m_per_s: speed },
      policy: { angle, stiffness },
      strides: 12,
      integrator: { apex_accuracy_m: accuracy },
    },
    options: { rollouts: 24, sigma_m: leg * between(0.001, 0.02), seed: 1 + Math.floor(u() * 1000), strides: 12 },
    accuracy,
  };
}

function oneStrideModel(model: ModelBlock, ground: number): ModelBlock {
  const fields = model.fields.slice();
  fields[L.M_TERRAIN_KIND] = L.TERRAIN_STEPS;
  fields[L.M_STEPS_N] = 1;
  return { ...model, fields, groundHeights: Float64Array.of(ground) };
}

/**
 * Largest one-stride apex error at the scenario's tolerances over the strides of rollouts
 * [from, to) of the robustness run, each rerun from its apex of a run at rtol 1e-13 on its ground.
 */
async function unseenError(scenario: Scenario, c: Case, from: number, to: number): Promise<{ error: number; strides: number }> {
  const engine = await loadEngine();
  const o = canonicalRobustnessOptions(scenario, c.options);
  const leg = scenario.body.leg_length_m;
  const tight: Scenario = { ...scenario, integrator: { ...scenario.integrator, relative_tolerance: 1e-13, absolute_tolerance: 1e-13 * leg } };
  const n = to - from;
  const inputs = new Float64Array(n * L.I_SIZE);
  for (let i = 0; i < n; i++) inputs.set(rolloutInput(scenario.start.apex_height_m, scenario.start.forward_speed_m_per_s, from + i), i * L.I_SIZE);
  const ref = engine.runBatch({ model: robustnessModel(tight, o), inputs, strides: o.strides, records: true });
  const records = ref.records as Float64Array;
  const strides: number[][] = [];
  for (let i = 0; i < n * o.strides; i++) {
    const at = (f: number) => records[i * L.R_SIZE + f];
    if (at(L.R_STATUS) === L.STATUS_OK && Number.isFinite(at(L.R_NEXT_APEX_HEIGHT))) {
      strides.push([at(L.R_APEX_HEIGHT), at(L.R_APEX_SPEED), at(L.R_GROUND), at(L.R_NEXT_APEX_HEIGHT)]);
    }
  }
  if (strides.length === 0) return { error: 0, strides: 0 };
  const base = robustnessModel(scenario, o);
  const one = new Float64Array(strides.length * L.I_SIZE);
  strides.forEach((st, i) => one.set(rolloutInput(st[0], st[1], 0, i), i * L.I_SIZE));
  const run = engine.runBatch({ model: strides.map((st) => oneStrideModel(base, st[2])), inputs: one, strides: 1, records: true });
  let error = 0;
  strides.forEach((st, i) => {
    const got = (run.records as Float64Array)[i * L.R_SIZE + L.R_NEXT_APEX_HEIGHT];
    error = Math.max(error, Number.isFinite(got) ? Math.abs(got - st[3]) : Infinity);
  });
  return { error, strides: strides.length };
}

describe('integrator.apex_accuracy_m calibrated per run (robustness)', () => {
  it('meets the requested one-stride apex accuracy on strides the calibration did not see, over 120 seeded scenarios', async () => {
    let calibrated = 0;
    let loosened = 0;
    let unseenStrides = 0;
    for (let seed = 1; seed <= 120; seed++) {
      const c = randomCase(seed);
      const parsed = parseScenario(c.raw);
      const { scenario, calibration } = await robustnessScenario(parsed, c.options);
      if (!calibration) {
        // too few strides to calibrate on: the parse-time tolerances hold (test/accuracy.test.ts)
        expect(scenario).toBe(parsed);
        continue;
      }
      calibrated++;
      const rtol = scenario.integrator.relative_tolerance;
      // never tighter than the parse-time mapping, a whole number of steps above it, atol = rtol L0
      const steps = Math.log(rtol / parsed.integrator.relative_tolerance) / Math.log(CALIBRATION_FINE_STEP);
      expect(Math.abs(steps - Math.round(steps)), `seed ${seed}`).toBeLessThan(1e-6);
      expect(steps).toBeGreaterThan(-1e-6);
      if (steps > 0.5) loosened++;
      expect(scenario.integrator.absolute_tolerance).toBe(rtol * parsed.body.leg_length_m);
      expect(calibration.calibrated_apex_error_m).toBeLessThanOrEqual(c.accuracy / CALIBRATION_MARGIN);
      const unseen = await unseenError(scenario, c, CALIBRATION_ROLLOUTS, c.options.rollouts);
      unseenStrides += unseen.strides;
      expect(unseen.error, `seed ${seed}: ${unseen.strides} strides at rtol ${rtol}, accuracy ${c.accuracy} m`).toBeLessThanOrEqual(c.accuracy);
    }
    // not vacuous: most scenarios run enough strides to calibrate, and the calibration loosens
    expect(calibrated).toBeGreaterThanOrEqual(80);
    expect(loosened).toBeGreaterThanOrEqual(60);
    expect(unseenStrides).toBeGreaterThanOrEqual(5000);
  });

  it('the result states the tolerances used and the measured error; the same on every call and whatever the workers', async () => {
    const s = parseScenario({
      body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
      start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
      policy: { angle: { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 50 } },
      strides: 10,
      integrator: { apex_accuracy_m: 1e-8 },
    });
    const options = { rollouts: 40, sigma_m: 0.01, seed: 2 };
    const one = await terrainRobustness(s, options, { workers: 1 });
    const two = await terrainRobustness(s, options, { workers: 2 });
    expect(two).toEqual(one);
    const used = one.integrator!;
    expect(used.apex_accuracy_m).toBe(1e-8);
    expect(used.relative_tolerance).toBeGreaterThan(s.integrator.relative_tolerance); // this gait is far more accurate than the worst
    expect(used.calibrated_apex_error_m).toBeLessThanOrEqual(1e-8 / CALIBRATION_MARGIN);
    expect(used.calibration_strides).toBeGreaterThanOrEqual(2);
    // a direct call (no cache involved in the answer: same inputs, same bytes)
    const engine = await loadEngine();
    const o = canonicalRobustnessOptions(s, options);
    const inputs = new Float64Array(CALIBRATION_ROLLOUTS * L.I_SIZE);
    for (let i = 0; i < CALIBRATION_ROLLOUTS; i++) inputs.set(rolloutInput(1, 5, i), i * L.I_SIZE);
    const direct = calibrateTolerances(engine, s, { model: robustnessModel(s, o), inputs, strides: o.strides, key: 'test' });
    expect(direct?.relative_tolerance).toBe(used.relative_tolerance);
  });

  it('without apex_accuracy_m nothing is calibrated and the result has no integrator object', async () => {
    const s = parseScenario({
      body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
      start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
      policy: { angle: { kind: 'fixed', attack_deg: 68 } },
      strides: 5,
    });
    const { scenario, calibration } = await robustnessScenario(s, { rollouts: 4, sigma_m: 0.002, seed: 1 });
    expect(calibration).toBeNull();
    expect(scenario).toBe(s);
    const r = await terrainRobustness(s, { rollouts: 4, sigma_m: 0.002, seed: 1 }, { workers: 1 });
    expect('integrator' in r).toBe(false);
  });
});
