// runBatch steps single-leg rollouts four (or two) at a time (f64x2 steps, two lanes each, the
// rest of each rollout by the one-rollout code). The check value of every comparison here is the
// kernel's own one-lane path (batchLanes(1): one rollout after the other): WebAssembly has no
// fused multiply-add, so the same IEEE operations in the same order round the same in an f64x2
// lane as in scalar f64 (WebAssembly SIMD specification, f64x2 arithmetic is lane-wise IEEE 754),
// and every record and summary must be the same bytes, whatever the pairing, the number of
// rollouts, the records option or the number of workers.
import { afterAll, describe, expect, it } from 'vitest';
import { L, scenario } from './helpers.js';
import { loadEngine, rolloutInput, type BatchRequest, type BatchResult, type Engine } from '../src/core/engine.js';
import { buildModel, startInput } from '../src/core/model.js';
import { type BipedScenario, sectionInput } from '../src/core/models/biped.js';
import { parseScenario } from '../src/core/scenario.js';
import { closeWorkerPool, runBatchParallel } from '../src/worker/pool.js';
import { readFileSync } from 'node:fs';
// @ts-expect-error: a plain .mjs script without types
import { laneStepSource } from '../scripts/gen-lane-step.mjs';

const ANGLES = [
  { kind: 'fixed', attack_deg: 68 },
  { kind: 'retraction', attack_at_apex_deg: 62, rate_deg_per_s: 50 }, // no clamp
  { kind: 'retraction', attack_at_apex_deg: 66, rate_deg_per_s: 30, min_deg: 55, max_deg: 80 },
  { kind: 'retraction', attack_at_apex_deg: 75, rate_deg_per_s: -40, min_deg: 60 }, // protraction, clamped
  { kind: 'time_table', time_since_apex_s: [0, 0.1, 0.2, 0.4], attack_deg: [70, 69, 67.5, 66] },
];
const STIFFNESSES = [
  { kind: 'constant' },
  { kind: 'split', compression_N_per_m: 20000, extension_N_per_m: 20400 },
  {
    kind: 'time_table',
    time_since_apex_s: [0, 0.2, 0.4],
    compression_N_per_m: [19000, 20000, 21000],
    extension_N_per_m: [19500, 20500, 21500],
  },
];
const TERRAINS = [
  { kind: 'flat' },
  { kind: 'steps', ground_heights_m: [0, -0.02, -0.02, 0.01, 0] },
  { kind: 'random_walk', sigma_m: 0.01, seed: 3 },
  { kind: 'random_heights', sigma_m: 0.02, seed: 7 },
];
const DAMPINGS = [0, 60];
const TOLERANCES = [
  { relative_tolerance: 1e-10, absolute_tolerance: 1e-12 },
  { relative_tolerance: 3e-8, absolute_tolerance: 3e-8 },
];

/** Every angle, stiffness, terrain kind, with and without damping, at two tolerances (alternating). */
function allModels() {
  const models = [];
  let i = 0;
  for (const angle of ANGLES) {
    for (const stiffness of STIFFNESSES) {
      for (const terrain of TERRAINS) {
        for (const damping of DAMPINGS) {
          models.push(
            buildModel(
              scenario({
                body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81, leg_damping_N_s_per_m: damping },
                policy: { angle, stiffness },
                terrain,
                integrator: TOLERANCES[i++ % 2],
              }),
            ),
          );
        }
      }
    }
  }
  return models;
}

/** A deterministic spread of starts (some fail at once or later), body scales and model picks. */
function inputsFor(rollouts: number, models: number, seed: number): Float64Array {
  let s = seed;
  // a linear congruential generator (the C standard's example rand(), ISO/IEC 9899 7.22.2.2)
  const rnd = () => {
    s = (s * 1103515245 + 12345) % 2147483648;
    return s / 2147483648;
  };
  const v = new Float64Array(rollouts * L.I_SIZE);
  for (let r = 0; r < rollouts; r++) {
    const row = rolloutInput(0.9 + 0.2 * rnd(), 3.5 + 3 * rnd(), Math.floor(rnd() * 50), Math.floor(rnd() * models));
    if (rnd() < 0.3) {
      row[L.I_MASS_SCALE] = 0.9 + 0.2 * rnd();
      row[L.I_STIFFNESS_SCALE] = 0.9 + 0.2 * rnd();
      row[L.I_LEG_SCALE] = 0.95 + 0.1 * rnd();
    }
    v.set(row, r * L.I_SIZE);
  }
  return v;
}

const laneControl = (engine: Engine) => engine.kernel;

function lanes(engine: Engine, n: number) {
  laneControl(engine).batchLanes(n);
}

function runWith(engine: Engine, n: number, req: BatchRequest): BatchResult {
  lanes(engine, n);
  try {
    return engine.runBatch(req);
  } finally {
    lanes(engine, 4);
  }
}

const bytes = (a: Float64Array | undefined) => (a ? Buffer.from(a.buffer, a.byteOffset, a.byteLength) : undefined);

function expectSameBytes(got: BatchResult, want: BatchResult) {
  expect(got.completed).toBe(want.completed);
  expect(bytes(got.summaries)!.equals(bytes(want.summaries)!)).toBe(true);
  if (want.records) expect(bytes(got.records)!.equals(bytes(want.records)!)).toBe(true);
}

afterAll(() => closeWorkerPool());

/** Every batch size, with and without records: two and four lanes give the one-lane bytes. */
async function expectSameAtEverySize(models: BatchRequest['model'], make: (rollouts: number) => Float64Array, sizes: number[], strides: number) {
  const engine = await loadEngine();
  for (const rollouts of sizes) {
    for (const records of [true, false]) {
      const req = { model: models, inputs: make(rollouts), strides, records };
      const one = runWith(engine, 1, req);
      expectSameBytes(runWith(engine, 2, req), one);
      expectSameBytes(runWith(engine, 4, req), one);
    }
  }
}

/** The picked rollouts of a four-lane batch give the bytes each gives alone. */
async function expectOwnBytes(models: BatchRequest['model'], inputs: Float64Array, picks: number[], strides: number) {
  const engine = await loadEngine();
  const all = runWith(engine, 4, { model: models, inputs, strides, records: true });
  for (const r of picks) {
    const alone = runWith(engine, 1, { model: models, inputs: inputs.slice(r * L.I_SIZE, (r + 1) * L.I_SIZE), strides, records: true });
    expect(bytes(all.summaries.subarray(r * L.S_SIZE, (r + 1) * L.S_SIZE))!.equals(bytes(alone.summaries)!)).toBe(true);
    const n = strides * L.R_SIZE;
    expect(bytes(all.records!.subarray(r * n, (r + 1) * n))!.equals(bytes(alone.records)!)).toBe(true);
  }
}

describe('runBatch in two and four lanes', () => {
  it('assembly/rk/dopri5x2.ts is what scripts/gen-lane-step.mjs writes', () => {
    expect(readFileSync(new URL('../assembly/rk/dopri5x2.ts', import.meta.url), 'utf8')).toBe(laneStepSource());
  });

  const models = allModels();

  it('every policy, stiffness and terrain kind, damped or not: the same bytes as one rollout after the other', async () => {
    const engine = await loadEngine();
    const req = { model: models, inputs: inputsFor(3 * models.length, models.length, 1), strides: 8, records: true };
    const one = runWith(engine, 1, req);
    expect(laneControl(engine).batchPairedSteps()).toBe(0);
    for (const n of [2, 4]) {
      const many = runWith(engine, n, req);
      // the steps were taken together (about 20 per stride; n lanes per step)
      expect(laneControl(engine).batchPairedSteps()).toBeGreaterThan((10 * 3 * models.length) / n);
      expectSameBytes(many, one);
    }
    // The comparison means something: rollouts of every model ran, most of them every stride,
    // and some ended early (so a lane took over the next rollout mid-batch).
    const statuses = new Set<number>();
    let strides = 0;
    for (let r = 0; r < 3 * models.length; r++) {
      statuses.add(one.summaries[r * L.S_SIZE + L.S_STATUS]);
      strides += one.summaries[r * L.S_SIZE + L.S_STRIDES_COMPLETED];
    }
    expect(one.completed).toBeGreaterThan(models.length / 2);
    expect(one.completed).toBeLessThan(3 * models.length);
    expect(statuses.size).toBeGreaterThan(2);
    expect(strides).toBeGreaterThan(2 * 3 * models.length);
  });

  it('any number of rollouts, with or without records: the same bytes', async () => {
    await expectSameAtEverySize(models, (rollouts) => inputsFor(rollouts, models.length, 7 + rollouts), [1, 2, 3, 5, 16, 41], 12);
  });

  it('a rollout paired with different partners gives the same bytes (its own result, alone or in any batch)', async () => {
    await expectOwnBytes(models, inputsFor(24, models.length, 99), [0, 5, 11, 23], 6);
  });

  it('step limits, body contact and other failures end a lane as they end a lone rollout', async () => {
    const engine = await loadEngine();
    const tight = buildModel(scenario({ integrator: { relative_tolerance: 1e-12, absolute_tolerance: 1e-14, max_steps_per_stance: 12 } }));
    const soft = buildModel(scenario({ body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 3000, gravity_m_per_s2: 9.81 } }));
    const req = { model: [tight, soft, models[0]], inputs: inputsFor(30, 3, 5), strides: 5, records: true };
    const one = runWith(engine, 1, req);
    expectSameBytes(runWith(engine, 2, req), one);
    expectSameBytes(runWith(engine, 4, req), one);
    const statuses = new Set(Array.from({ length: 30 }, (_, r) => one.summaries[r * L.S_SIZE + L.S_STATUS]));
    expect(statuses.has(L.STATUS_STEP_LIMIT)).toBe(true);
  });

  it('a batch with two-leg rollouts runs one rollout after the other: the same bytes, single-leg ones included', async () => {
    const engine = await loadEngine();
    const walker = parseScenario({
      model: 'biped',
      body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
      start: { gait: 'walking', apex_height_m: 0.98, forward_speed_m_per_s: 1.2 },
      policy: { angle: { kind: 'fixed', attack_deg: 70 } },
      terrain: { kind: 'random_walk', sigma_m: 0.005, seed: 2 },
      strides: 4,
    });
    const two = [buildModel(walker), models[0], models[9]];
    const rows = [0, 1, 2, 0, 1, 2, 1, 0].map((m, r) => (m === 0 ? startInput(walker, r, 0) : rolloutInput(1, 5, r, m)));
    const inputs = new Float64Array(rows.flatMap((row) => [...row]));
    const req = { model: two, inputs, strides: 4, records: true };
    const one = runWith(engine, 1, req);
    const four = runWith(engine, 4, req);
    expect(laneControl(engine).batchPairedSteps()).toBe(0);
    expectSameBytes(four, one);
    // and each single-leg rollout there is the one the lanes give in a single-leg batch
    const slipOnly = runWith(engine, 4, { model: two, inputs: new Float64Array([...rows[1], ...rows[2], ...rows[4], ...rows[5]]), strides: 4 });
    [1, 2, 4, 5].forEach((r, i) => {
      expect(bytes(slipOnly.summaries.subarray(i * L.S_SIZE, (i + 1) * L.S_SIZE))!.equals(bytes(one.summaries.subarray(r * L.S_SIZE, (r + 1) * L.S_SIZE))!)).toBe(true);
    });
  });

  it('on 1, 2 and 4 workers: the same bytes as one lane in this thread', async () => {
    const engine = await loadEngine();
    const req = { model: models, inputs: inputsFor(150, models.length, 3), strides: 6, records: true };
    const one = runWith(engine, 1, req);
    for (const workers of [1, 2, 4]) {
      const got = await runBatchParallel(req, { workers, chunkRollouts: 13 });
      expectSameBytes(got, one);
    }
  });
});

// The two-leg model in lanes (assembly/biped.ts runBipedBatch; walking steps with undamped legs
// in the f64x2 lanes of assembly/rk/biped-x2.ts, everything else by the one-rollout code): the
// check value is again the kernel's own one-lane path, byte for byte.
const BIPED_ANGLES = [
  { kind: 'fixed', attack_deg: 70 },
  { kind: 'retraction', attack_at_apex_deg: 68, rate_deg_per_s: 20, min_deg: 60, max_deg: 75 },
  { kind: 'time_table', time_since_apex_s: [0, 0.2, 0.4], attack_deg: [70, 69.5, 69] },
];
const BIPED_STIFFNESSES = [{ kind: 'constant' }, { kind: 'split', compression_N_per_m: 20000, extension_N_per_m: 20400 }];
const BIPED_TERRAINS = [
  { kind: 'flat' },
  { kind: 'random_heights', sigma_m: 0.005, seed: 7 },
  { kind: 'random_walk', sigma_m: 0.003, seed: 3 },
];

/** Every angle kind, two stiffness kinds, three terrains, damped or not; unequal legs and two tolerances alternating. */
function bipedModels() {
  const models = [];
  let k = 0;
  for (const angle of BIPED_ANGLES) {
    for (const stiffness of BIPED_STIFFNESSES) {
      for (const terrain of BIPED_TERRAINS) {
        for (const damping of [0, 30]) {
          const s = parseScenario({
            model: 'biped',
            body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81, leg_damping_N_s_per_m: damping },
            legs: k % 3 === 1 ? { right: { leg_length_m: 1.01, stiffness_scale: 0.95 } } : {},
            start: { gait: 'walking', apex_height_m: 0.98, forward_speed_m_per_s: 1.2 },
            policy: { angle, stiffness },
            terrain,
            strides: 10,
            integrator: TOLERANCES[k++ % 2],
          }) as BipedScenario;
          models.push(buildModel(s));
        }
      }
    }
  }
  return models;
}

/** Walking starts about the walking fixed point and running starts (either leg or both), some body scales. */
function bipedInputs(rollouts: number, models: number, seed: number): Float64Array {
  let s = seed;
  // the C standard's example rand() (ISO/IEC 9899 7.22.2.2), as inputsFor
  const rnd = () => {
    s = (s * 1103515245 + 12345) % 2147483648;
    return s / 2147483648;
  };
  const v = new Float64Array(rollouts * L.I_SIZE);
  for (let r = 0; r < rollouts; r++) {
    const model = Math.floor(rnd() * models);
    const row =
      rnd() < 0.6
        ? sectionInput({ gait: 'walking', height_m: 0.975 + 0.01 * rnd(), speed_m_per_s: 1.05 + 0.3 * rnd(), offset_m: -0.02 + 0.04 * rnd(), leg: rnd() < 0.5 ? 'left' : 'right' }, r % 5, model)
        : sectionInput({ gait: 'running', height_m: 0.95 + 0.1 * rnd(), speed_m_per_s: 3 + 3 * rnd(), offset_m: 0, leg: (['left', 'right', 'both'] as const)[Math.floor(rnd() * 3)] }, r % 5, model);
    if (rnd() < 0.3) {
      row[L.I_MASS_SCALE] = 0.95 + 0.1 * rnd();
      row[L.I_STIFFNESS_SCALE] = 0.95 + 0.1 * rnd();
      row[L.I_LEG_SCALE] = 0.98 + 0.04 * rnd();
    }
    v.set(row, r * L.I_SIZE);
  }
  return v;
}

describe('two-leg rollouts in two and four lanes', () => {
  const models = bipedModels();

  it('walking and running, every angle kind, damped or not: the same bytes as one rollout after the other', async () => {
    const engine = await loadEngine();
    const rollouts = 4 * models.length;
    const req = { model: models, inputs: bipedInputs(rollouts, models.length, 12345), strides: 12, records: true };
    const one = runWith(engine, 1, req);
    expect(laneControl(engine).batchPairedSteps()).toBe(0);
    for (const n of [2, 4]) {
      const many = runWith(engine, n, req);
      // walking steps of undamped legs were taken in lanes (a walking stride takes about 180 steps)
      expect(laneControl(engine).batchPairedSteps()).toBeGreaterThan((20 * 180) / n);
      expectSameBytes(many, one);
    }
    // The comparison means something: both gaits ran, rollouts ended at many different strides
    // with several statuses, and some completed every stride.
    const gaits = new Set<number>();
    for (let i = 0; i < rollouts * 12; i++) if (one.records![i * L.R_SIZE + L.R_STATUS] === L.STATUS_OK) gaits.add(one.records![i * L.R_SIZE + L.R_GAIT]);
    expect(gaits.has(L.GAIT_WALKING) && gaits.has(L.GAIT_RUNNING)).toBe(true);
    const statuses = new Set<number>();
    const ends = new Set<number>();
    for (let r = 0; r < rollouts; r++) {
      statuses.add(one.summaries[r * L.S_SIZE + L.S_STATUS]);
      ends.add(one.summaries[r * L.S_SIZE + L.S_STRIDES_COMPLETED]);
    }
    expect(statuses.size).toBeGreaterThan(2);
    expect(ends.size).toBeGreaterThan(6);
    expect(one.completed).toBeGreaterThan(rollouts / 10);
    expect(one.completed).toBeLessThan(rollouts);
  });

  it('any number of rollouts, with or without records: the same bytes', async () => {
    await expectSameAtEverySize(models, (rollouts) => bipedInputs(rollouts, models.length, 31 + rollouts), [1, 2, 3, 5, 9], 8);
  });

  it('a two-leg rollout gives its own bytes alone or with any partners', async () => {
    await expectOwnBytes(models, bipedInputs(20, models.length, 77), [0, 7, 13, 19], 6);
  });

  it('step limits end a lane as they end a lone rollout', async () => {
    const engine = await loadEngine();
    const tight = buildModel(
      parseScenario({
        model: 'biped',
        body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
        start: { gait: 'walking', apex_height_m: 0.98, forward_speed_m_per_s: 1.2 },
        policy: { angle: { kind: 'fixed', attack_deg: 70 } },
        terrain: { kind: 'flat' },
        strides: 5,
        integrator: { relative_tolerance: 1e-12, absolute_tolerance: 1e-14, max_steps_per_stance: 150 },
      }),
    );
    const req = { model: [tight, models[0]], inputs: bipedInputs(12, 2, 5), strides: 5, records: true };
    const one = runWith(engine, 1, req);
    expectSameBytes(runWith(engine, 2, req), one);
    expectSameBytes(runWith(engine, 4, req), one);
    const statuses = new Set(Array.from({ length: 12 }, (_, r) => one.summaries[r * L.S_SIZE + L.S_STATUS]));
    expect(statuses.has(L.STATUS_STEP_LIMIT)).toBe(true);
  });
});

