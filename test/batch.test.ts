// The batch entry point: layout (rollout, stride, field), independence of rollouts,
// body scale factors, and stiffness schedules looked up at touchdown.
import { describe, expect, it } from 'vitest';
import { L, run, scenario } from './helpers.js';
import { loadEngine, rolloutInput } from '../src/core/engine.js';
import { buildModel } from '../src/core/model.js';

describe('runBatch', () => {
  it('rollout r, stride s, field f sits at (r * strides + s) * R_SIZE + f, and equals the rollout run alone', async () => {
    const engine = await loadEngine();
    const s = scenario({ terrain: { kind: 'random_walk', sigma_m: 0.005, seed: 3 }, strides: 6 });
    const model = buildModel(s);
    const starts = [[1, 5], [1.05, 4.8], [0.98, 5.2]];
    const inputs = new Float64Array(starts.flatMap(([y, v], r) => [...rolloutInput(y, v, r)]));
    const all = engine.runBatch({ model, inputs, strides: 6, records: true });
    for (const [r, [y, v]] of starts.entries()) {
      const one = engine.runBatch({ model, inputs: rolloutInput(y, v, r), strides: 6, records: true });
      for (let st = 0; st < 6; st++) {
        for (const f of [L.R_APEX_HEIGHT, L.R_CONTACT, L.R_GROUND, L.R_NEXT_APEX_HEIGHT, L.R_PEAK_FORCE]) {
          expect(all.records![(r * 6 + st) * L.R_SIZE + f]).toBe(one.records![st * L.R_SIZE + f]);
        }
      }
      for (let f = 0; f < L.S_SIZE; f++) expect(all.summaries[r * L.S_SIZE + f]).toBe(one.summaries[f]);
    }
  });

  it('several models in one call: each rollout runs the model its I_MODEL picks', async () => {
    const engine = await loadEngine();
    const models = [66, 68, 70].map((a) => buildModel(scenario({ policy: { angle: { kind: 'fixed', attack_deg: a } }, strides: 4 })));
    const inputs = new Float64Array([2, 0, 1, 2].flatMap((m, r) => [...rolloutInput(1, 5, r, m)]));
    const all = engine.runBatch({ model: models, inputs, strides: 4, records: true });
    [2, 0, 1, 2].forEach((m, r) => {
      const one = engine.runBatch({ model: models[m], inputs: rolloutInput(1, 5, r), strides: 4, records: true });
      for (let f = 0; f < L.S_SIZE; f++) expect(all.summaries[r * L.S_SIZE + f]).toBe(one.summaries[f]);
    });
    expect(() => engine.runBatch({ model: models, inputs: rolloutInput(1, 5, 0, 3), strides: 1 })).toThrow(/picks model 3/);
  });

  it('summaries without records carry the same final apex as the records', async () => {
    const engine = await loadEngine();
    const model = buildModel(scenario({ strides: 10 }));
    const a = engine.runBatch({ model, inputs: rolloutInput(1, 5), strides: 10, records: true });
    const b = engine.runBatch({ model, inputs: rolloutInput(1, 5), strides: 10 });
    expect(b.records).toBeUndefined();
    expect(b.summaries[L.S_FINAL_HEIGHT]).toBe(a.records![9 * L.R_SIZE + L.R_NEXT_APEX_HEIGHT]);
    expect(b.summaries[L.S_PREVIOUS_HEIGHT]).toBe(a.records![9 * L.R_SIZE + L.R_APEX_HEIGHT]);
    let maxForce = 0;
    for (let st = 0; st < 10; st++) maxForce = Math.max(maxForce, a.records![st * L.R_SIZE + L.R_PEAK_FORCE]);
    expect(b.summaries[L.S_MAX_PEAK_FORCE]).toBe(maxForce);
  });

  it('body scale factors match a scenario with the scaled body (model mismatch)', async () => {
    const engine = await loadEngine();
    const nominal = scenario({ strides: 3 });
    const input = rolloutInput(1, 5);
    input[L.I_MASS_SCALE] = 1.1;
    input[L.I_STIFFNESS_SCALE] = 1.05;
    input[L.I_LEG_SCALE] = 0.98;
    const scaled = engine.runBatch({ model: buildModel(nominal), inputs: input, strides: 3, records: true });
    const direct = await run(scenario({ body: { mass_kg: 88, leg_stiffness_N_per_m: 21000, leg_length_m: 0.98 }, strides: 3 }));
    expect(direct.completed).toBe(3);
    expect(scaled.summaries[L.S_STRIDES_COMPLETED]).toBe(3);
    for (let st = 0; st < 3; st++) {
      expect(scaled.records![st * L.R_SIZE + L.R_NEXT_APEX_HEIGHT]).toBeCloseTo(direct.rec(st, L.R_NEXT_APEX_HEIGHT), 12);
    }
  });

  it('stiffness time table: both stiffnesses are looked up at the touchdown time since apex', async () => {
    const times = [0.1, 0.2];
    const kc = [18000, 22000];
    const ke = [19000, 25000];
    const r = await run(scenario({ start: { apex_height_m: 1.1, forward_speed_m_per_s: 5 }, policy: { angle: { kind: 'fixed', attack_deg: 68 }, stiffness: { kind: 'time_table', time_since_apex_s: times, compression_N_per_m: kc, extension_N_per_m: ke } } }));
    const t = r.rec(0, L.R_APEX_TO_TOUCHDOWN);
    expect(t).toBeGreaterThan(0.1);
    expect(t).toBeLessThan(0.2);
    const w = (t - 0.1) / 0.1; // piecewise linear between the knots
    expect(r.rec(0, L.R_K_COMPRESSION)).toBeCloseTo(kc[0] + w * (kc[1] - kc[0]), 8);
    expect(r.rec(0, L.R_K_EXTENSION)).toBeCloseTo(ke[0] + w * (ke[1] - ke[0]), 8);
    // and the energy change is the split-spring work (law, as in the split test)
    const delta = r.rec(0, L.R_MAX_COMPRESSION);
    const dE = r.rec(0, L.R_ENERGY_AFTER) - r.rec(0, L.R_ENERGY_BEFORE);
    const expected = 0.5 * (r.rec(0, L.R_K_EXTENSION) - r.rec(0, L.R_K_COMPRESSION)) * delta * delta;
    expect(Math.abs(dE - expected) / Math.abs(expected)).toBeLessThan(1e-9);
  });

  it('per-touchdown steps: the ground under touchdown i is ground_heights_m[i], the last value holding', async () => {
    const r = await run(scenario({ terrain: { kind: 'steps', ground_heights_m: [0, -0.02, -0.01] }, strides: 5 }));
    expect(r.completed).toBe(5);
    expect([0, 1, 2, 3, 4].map((s) => r.rec(s, L.R_GROUND))).toEqual([0, -0.02, -0.01, -0.01, -0.01]);
    // energy is measured from height 0, so it is conserved across steps too (law)
    expect(Math.abs(r.rec(4, L.R_ENERGY_AFTER) / r.rec(0, L.R_ENERGY_BEFORE) - 1)).toBeLessThan(1e-9);
  });
});
