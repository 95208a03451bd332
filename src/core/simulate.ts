// `simulate`: one rollout of a scenario, stride by stride, as plain data in the
// contract's shape (docs/contract.md). Angles leave in degrees.

import * as L from '../../assembly/layout.js';
import { loadEngine } from './engine.js';
import { buildModel, startInput, STATUS_NAMES, STATUS_TEXT } from './model.js';
import type { Scenario } from './scenario.js';
import { accuracyReport, type AccuracyReport } from './accuracy.js';
import { SAFETY_CAUTION } from './safety.js';

export interface Apex {
  height_m: number;
  forward_speed_m_per_s: number;
  time_s: number;
  x_m: number;
}

export interface StrideRecord {
  index: number;
  apex_to_touchdown_s: number;
  contact_s: number;
  stride_s: number;
  attack_deg: number;
  ground_height_m: number;
  peak_leg_force_N: number;
  max_compression_m: number;
  peak_friction_ratio: number;
  energy_before_J: number;
  energy_after_J: number;
  energy_dissipated_J: number;
  liftoff_angle_deg: number;
  touchdown_vertical_speed_m_per_s: number;
  liftoff_vertical_speed_m_per_s: number;
  compression_stiffness_N_per_m: number;
  extension_stiffness_N_per_m: number;
  integrator_steps: number;
  integrator_rejections: number;
}

export interface Outcome {
  status: 'completed' | 'failed';
  strides_completed: number;
  /** Stable code of the failure (see STATUS_NAMES), null when completed. */
  reason: string | null;
  /** The failure in words, null when completed. */
  detail: string | null;
  /** Index of the stride that failed, null when completed. */
  failed_stride: number | null;
}

/** Dense samples of one rollout, column by column (for plots and animation). */
export interface Trajectory {
  interval_s: number;
  time_s: number[];
  x_m: number[];
  y_m: number[];
  foot_x_m: number[];
  foot_y_m: number[];
  leg_force_N: number[];
  /** 'flight' or 'stance' per sample. */
  phase: ('flight' | 'stance')[];
  stride: number[];
  /** True when the sample limit was reached before the last stride ended. */
  truncated: boolean;
}

export interface SimulationResult {
  apexes: Apex[];
  strides: StrideRecord[];
  outcome: Outcome;
  /** Mechanical energy at the start apex, J (potential measured from height 0). */
  energy_J: number;
  /** Present when SimulateOptions.traceInterval_s was given. */
  trajectory?: Trajectory;
  /** Only when the scenario set integrator.apex_accuracy_m: the accuracy and the tolerances it gave. */
  integrator?: AccuracyReport;
  caution: string;
}

export interface SimulateOptions {
  /** Override the scenario's stride count. */
  strides?: number;
  /** Also sample the trajectory every this many seconds (plus touchdown and liftoff). */
  traceInterval_s?: number;
}

const RAD = 180 / Math.PI;

export async function simulate(scenario: Scenario, options: SimulateOptions = {}): Promise<SimulationResult> {
  const engine = await loadEngine();
  const strides = options.strides ?? scenario.strides;
  const model = buildModel(scenario);
  let rec: Float64Array;
  let sum: Float64Array;
  let trajectory: Trajectory | undefined;
  if (options.traceInterval_s !== undefined) {
    const t = engine.trace(model, startInput(scenario), strides, options.traceInterval_s);
    rec = t.records;
    sum = t.summary;
    trajectory = columns(t.samples, options.traceInterval_s, t.truncated);
  } else {
    const batch = engine.runBatch({ model, inputs: startInput(scenario), strides, records: true });
    rec = batch.records!;
    sum = batch.summaries;
  }
  const completed = sum[L.S_STRIDES_COMPLETED];
  const status = sum[L.S_STATUS];
  const m = scenario.body.mass_kg;
  const g = scenario.body.gravity_m_per_s2 ?? 9.80665;

  const apexes: Apex[] = [
    {
      height_m: scenario.start.apex_height_m,
      forward_speed_m_per_s: scenario.start.forward_speed_m_per_s,
      time_s: 0,
      x_m: 0,
    },
  ];
  const out: StrideRecord[] = [];
  for (let s = 0; s < completed; s++) {
    const r = (f: number) => rec[s * L.R_SIZE + f];
    out.push({
      index: s,
      apex_to_touchdown_s: r(L.R_APEX_TO_TOUCHDOWN),
      contact_s: r(L.R_CONTACT),
      stride_s: r(L.R_STRIDE_TIME),
      attack_deg: r(L.R_ATTACK) * RAD,
      ground_height_m: r(L.R_GROUND),
      peak_leg_force_N: r(L.R_PEAK_FORCE),
      max_compression_m: r(L.R_MAX_COMPRESSION),
      peak_friction_ratio: r(L.R_PEAK_FRICTION),
      energy_before_J: r(L.R_ENERGY_BEFORE),
      energy_after_J: r(L.R_ENERGY_AFTER),
      energy_dissipated_J: r(L.R_DISSIPATED),
      liftoff_angle_deg: r(L.R_LIFTOFF_ANGLE) * RAD,
      touchdown_vertical_speed_m_per_s: r(L.R_TOUCHDOWN_VY),
      liftoff_vertical_speed_m_per_s: r(L.R_LIFTOFF_VY),
      compression_stiffness_N_per_m: r(L.R_K_COMPRESSION),
      extension_stiffness_N_per_m: r(L.R_K_EXTENSION),
      integrator_steps: r(L.R_STEPS),
      integrator_rejections: r(L.R_REJECTED),
    });
    apexes.push({
      height_m: r(L.R_NEXT_APEX_HEIGHT),
      forward_speed_m_per_s: r(L.R_NEXT_APEX_SPEED),
      time_s: r(L.R_NEXT_APEX_TIME),
      x_m: r(L.R_NEXT_APEX_X),
    });
  }
  const failed = status !== L.STATUS_OK;
  return {
    apexes,
    strides: out,
    outcome: {
      status: failed ? 'failed' : 'completed',
      strides_completed: completed,
      reason: failed ? STATUS_NAMES[status] : null,
      detail: failed ? STATUS_TEXT[status] : null,
      failed_stride: failed ? completed : null,
    },
    energy_J: m * g * scenario.start.apex_height_m + 0.5 * m * scenario.start.forward_speed_m_per_s ** 2,
    ...(trajectory ? { trajectory } : {}),
    ...accuracyReport(scenario.integrator),
    caution: SAFETY_CAUTION,
  };
}

function columns(samples: Float64Array, interval: number, truncated: boolean): Trajectory {
  const n = samples.length / L.T_SIZE;
  const col = (f: number) => Array.from({ length: n }, (_, i) => samples[i * L.T_SIZE + f]);
  return {
    interval_s: interval,
    time_s: col(L.T_TIME),
    x_m: col(L.T_X),
    y_m: col(L.T_Y),
    foot_x_m: col(L.T_FOOT_X),
    foot_y_m: col(L.T_FOOT_Y),
    leg_force_N: col(L.T_LEG_FORCE),
    phase: col(L.T_PHASE).map((p) => (p === L.PHASE_STANCE ? 'stance' : 'flight')),
    stride: col(L.T_STRIDE),
    truncated,
  };
}
