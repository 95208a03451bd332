// Shared test plumbing: run a scenario object through the validator and the
// kernel, and read stride records by field name.
import * as L from '../assembly/layout.js';
import { loadEngine, rolloutInput, type ModelBlock } from '../src/core/engine.js';
import { buildModel, startInput } from '../src/core/model.js';
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

/**
 * The largest one-stride apex height error of `asked` (the two-leg model: section height) against
 * `tight`: each stride that a rollout of `tight` from its start completes, rerun alone at `asked`'s
 * tolerances from that stride's apex (two-leg: its section), on flat ground, its next apex height
 * compared with `tight`'s. `strides`: how many were compared.
 */
export async function oneStrideApexError(tight: Scenario, asked: Scenario): Promise<{ error: number; strides: number }> {
  const engine = await loadEngine();
  const ref = engine.runBatch({ model: buildModel(tight), inputs: startInput(tight), strides: tight.strides, records: true });
  const n = ref.summaries[L.S_STRIDES_COMPLETED];
  const records = ref.records as Float64Array;
  const at = (s: number, f: number) => records[s * L.R_SIZE + f];
  const inputs = new Float64Array(n * L.I_SIZE);
  for (let s = 0; s < n; s++) {
    const row = startInput(tight);
    row[L.I_APEX_HEIGHT] = at(s, L.R_APEX_HEIGHT);
    row[L.I_FORWARD_SPEED] = at(s, L.R_APEX_SPEED);
    if (tight.model === 'biped') {
      row[L.I_SECTION_KIND] = at(s, L.R_SECTION_KIND);
      row[L.I_SECTION_OFFSET] = at(s, L.R_SECTION_KIND) === L.SECTION_SINGLE_SUPPORT_APEX ? at(s, L.R_SECTION_OFFSET) : 0;
      row[L.I_SECTION_LEG] = at(s, L.R_SECTION_LEG);
    }
    inputs.set(row, s * L.I_SIZE);
  }
  const run = engine.runBatch({ model: buildModel(asked), inputs, strides: 1, records: true });
  let error = 0;
  for (let s = 0; s < n; s++) {
    const got = (run.records as Float64Array)[s * L.R_SIZE + L.R_NEXT_APEX_HEIGHT];
    error = Math.max(error, Number.isFinite(got) ? Math.abs(got - at(s, L.R_NEXT_APEX_HEIGHT)) : Infinity);
  }
  return { error, strides: n };
}
