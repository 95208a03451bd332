// Shared test plumbing: run a scenario object through the validator and the
// kernel, and read stride records by field name.
import * as L from '../assembly/layout.js';
import { loadEngine, rolloutInput, type ModelBlock } from '../src/core/engine.js';
import { buildModel } from '../src/core/model.js';
import { parseScenario, type Scenario } from '../src/core/scenario.js';

export { L };

export interface Run {
  scenario: Scenario;
  status: number;
  completed: number;
  summary: Float64Array;
  /** Field `f` of stride `s`. */
  rec(s: number, f: number): number;
}

/** A scenario object with the given overrides (deep-merged one level). */
export function scenario(over: Record<string, unknown> = {}): Scenario {
  const base: Record<string, any> = {
    body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
    start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
    policy: { angle: { kind: 'fixed', attack_deg: 68 }, stiffness: { kind: 'constant' } },
    terrain: { kind: 'flat' },
    strides: 1,
    integrator: { relative_tolerance: 1e-12, absolute_tolerance: 1e-14 },
  };
  for (const [k, v] of Object.entries(over)) {
    if (v && typeof v === 'object' && !Array.isArray(v) && base[k] && typeof base[k] === 'object') {
      base[k] = { ...base[k], ...(v as object) };
    } else base[k] = v;
  }
  return parseScenario(base);
}

export async function run(s: Scenario, strides = s.strides): Promise<Run> {
  const engine = await loadEngine();
  const b = engine.runBatch({ model: buildModel(s), inputs: rolloutInput(s.start.apex_height_m, s.start.forward_speed_m_per_s), strides, records: true });
  return {
    scenario: s,
    status: b.summaries[L.S_STATUS],
    completed: b.summaries[L.S_STRIDES_COMPLETED],
    summary: b.summaries,
    rec: (st, f) => b.records![st * L.R_SIZE + f],
  };
}

/** Run a hand-made model block (for states the validator would refuse). */
export async function runModel(model: ModelBlock, input: Float64Array, strides: number) {
  const engine = await loadEngine();
  return engine.runBatch({ model, inputs: input, strides, records: true });
}

/** Relative difference |a - b| / |b|. */
export function rel(a: number, b: number): number {
  return Math.abs(a - b) / Math.abs(b);
}

/** Bisection for a sign change of f on [a, b], to machine precision. */
export function bisect(f: (x: number) => number, a: number, b: number): number {
  let fa = f(a);
  for (let i = 0; i < 200; i++) {
    const m = 0.5 * (a + b);
    if (m === a || m === b) break;
    const fm = f(m);
    if (fm === 0) return m;
    if (Math.sign(fm) === Math.sign(fa)) { a = m; fa = fm; } else b = m;
  }
  return 0.5 * (a + b);
}
