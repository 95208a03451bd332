// `simulate` for the two-leg model: one rollout from the scenario's start section, stride by
// stride, with each leg's touchdown, liftoff and peak force, the double-support interval, the
// gait each stride showed, and (with a trace interval) both legs' feet and forces. Angles leave
// in degrees; times inside a stride are seconds since that stride's section.

import * as L from '../../../assembly/layout.js';
import { accuracyReport, type AccuracyReport } from '../accuracy.js';
import { loadEngine } from '../engine.js';
import { buildModel, STATUS_NAMES, STATUS_TEXT } from '../model.js';
import { SAFETY_CAUTION } from '../safety.js';
import type { Outcome } from '../simulate.js';
import { type BipedScenario, type Gait, type LegName, type StartLeg, sectionEnergy, sectionInput, startState } from './biped.js';

export interface BipedSection {
  /** "single_support_apex" (walking) or "flight_apex" (running). */
  section: 'single_support_apex' | 'flight_apex';
  height_m: number;
  forward_speed_m_per_s: number;
  /** Body x minus stance foot x (single-support apex), null at a flight apex. */
  offset_m: number | null;
  /** The stance leg (single-support apex) or the leg that lands next (flight apex; "both": together). */
  leg: StartLeg;
  time_s: number;
  x_m: number;
}

export interface PerLeg<T> {
  left: T;
  right: T;
}

export interface BipedStride {
  index: number;
  /**
   * The gait the stride showed: walking (double support, no flight), running (flight, no double
   * support), hopping (both legs land and leave together).
   */
  gait: Gait | 'hopping';
  /** The leg that touched down in the stride ("both": together, a hop on both legs), null when none did. */
  touchdown_leg: StartLeg | null;
  section_to_touchdown_s: number | null;
  attack_deg: number | null;
  ground_height_m: number;
  /** Touchdown and liftoff of each leg in this stride, s since the stride's section (null: none). */
  touchdown_s: PerLeg<number | null>;
  liftoff_s: PerLeg<number | null>;
  /** The double-support interval, s since the section (null: none). */
  double_support: { start_s: number; end_s: number } | null;
  /** Section to next section, s (null on a failing stride that never reached its next section). */
  stride_s: number | null;
  peak_leg_force_N: PerLeg<number>;
  peak_vertical_force_N: number;
  max_compression_m: number;
  peak_friction_ratio: number;
  energy_before_J: number;
  /** Energy at the next section and the damper's work over the stride, J (null on a failing stride). */
  energy_after_J: number | null;
  energy_dissipated_J: number | null;
  integrator_steps: number;
  integrator_rejections: number;
}

export interface BipedTrajectory {
  interval_s: number;
  time_s: number[];
  x_m: number[];
  y_m: number[];
  left: { foot_x_m: number[]; foot_y_m: number[]; leg_force_N: number[] };
  right: { foot_x_m: number[]; foot_y_m: number[]; leg_force_N: number[] };
  /** 'flight', 'single' (one leg on the ground) or 'double' per sample. */
  phase: ('flight' | 'single' | 'double')[];
  stride: number[];
  truncated: boolean;
}

export interface BipedSimulationResult {
  sections: BipedSection[];
  strides: BipedStride[];
  outcome: Outcome;
  /** Mechanical energy at the start section, J (springs included; potential from height 0). */
  energy_J: number;
  trajectory?: BipedTrajectory;
  /** Only when the scenario set integrator.apex_accuracy_m: the accuracy and the tolerances it gave. */
  integrator?: AccuracyReport;
  caution: string;
}

const RAD = 180 / Math.PI;
const legName = (i: number): LegName => (i === 1 ? 'right' : 'left');
const orNull = (v: number): number | null => (Number.isFinite(v) ? v : null);

export async function simulateBiped(
  scenario: BipedScenario,
  options: { strides?: number; traceInterval_s?: number } = {},
): Promise<BipedSimulationResult> {
  const engine = await loadEngine();
  const strides = options.strides ?? scenario.strides;
  const model = buildModel(scenario);
  const start = startState(scenario);
  const input = sectionInput(start);
  let rec: Float64Array;
  let sum: Float64Array;
  let trajectory: BipedTrajectory | undefined;
  if (options.traceInterval_s !== undefined) {
    const t = engine.trace(model, input, strides, options.traceInterval_s);
    rec = t.records;
    sum = t.summary;
    trajectory = columns(t.samples, options.traceInterval_s, t.truncated);
  } else {
    const batch = engine.runBatch({ model, inputs: input, strides, records: true });
    rec = batch.records!;
    sum = batch.summaries;
  }
  const completed = sum[L.S_STRIDES_COMPLETED];
  const status = sum[L.S_STATUS];
  const sections: BipedSection[] = [
    {
      section: start.gait === 'walking' ? 'single_support_apex' : 'flight_apex',
      height_m: start.height_m,
      forward_speed_m_per_s: start.speed_m_per_s,
      offset_m: start.gait === 'walking' ? start.offset_m : null,
      leg: start.leg,
      time_s: 0,
      x_m: 0,
    },
  ];
  const out: BipedStride[] = [];
  const failed = status !== L.STATUS_OK;
  // the completed strides, and the failing one when it got as far as a touchdown
  const shown = Math.min(failed ? completed + 1 : completed, strides);
  for (let s = 0; s < shown; s++) {
    const r = (f: number) => rec[s * L.R_SIZE + f];
    const td0 = r(L.R_TOUCHDOWN_TIME_0);
    const td1 = r(L.R_TOUCHDOWN_TIME_1);
    const landing = Number.isFinite(td0) ? 0 : Number.isFinite(td1) ? 1 : -1;
    if (s >= completed && landing < 0) break;
    const dsStart = r(L.R_DOUBLE_START);
    out.push({
      index: s,
      gait: r(L.R_GAIT) === L.GAIT_RUNNING ? 'running' : r(L.R_GAIT) === L.GAIT_HOPPING ? 'hopping' : 'walking',
      touchdown_leg: landing < 0 ? null : td0 === td1 ? 'both' : legName(landing),
      section_to_touchdown_s: orNull(r(L.R_APEX_TO_TOUCHDOWN)),
      attack_deg: orNull(r(L.R_ATTACK) * RAD),
      ground_height_m: r(L.R_GROUND),
      touchdown_s: { left: orNull(td0), right: orNull(td1) },
      liftoff_s: { left: orNull(r(L.R_LIFTOFF_TIME_0)), right: orNull(r(L.R_LIFTOFF_TIME_1)) },
      double_support: Number.isFinite(dsStart) ? { start_s: dsStart, end_s: r(L.R_DOUBLE_END) } : null,
      stride_s: orNull(r(L.R_STRIDE_TIME)),
      peak_leg_force_N: { left: r(L.R_PEAK_FORCE_0), right: r(L.R_PEAK_FORCE_1) },
      peak_vertical_force_N: r(L.R_PEAK_VERTICAL_FORCE),
      max_compression_m: r(L.R_MAX_COMPRESSION),
      peak_friction_ratio: r(L.R_PEAK_FRICTION),
      energy_before_J: r(L.R_ENERGY_BEFORE),
      energy_after_J: orNull(r(L.R_ENERGY_AFTER)),
      energy_dissipated_J: orNull(r(L.R_DISSIPATED)),
      integrator_steps: r(L.R_STEPS),
      integrator_rejections: r(L.R_REJECTED),
    });
    if (s >= completed) break;
    const kind = r(L.R_NEXT_SECTION_KIND);
    sections.push({
      section: kind === L.SECTION_SINGLE_SUPPORT_APEX ? 'single_support_apex' : 'flight_apex',
      height_m: r(L.R_NEXT_APEX_HEIGHT),
      forward_speed_m_per_s: r(L.R_NEXT_APEX_SPEED),
      offset_m: kind === L.SECTION_SINGLE_SUPPORT_APEX ? r(L.R_NEXT_SECTION_OFFSET) : null,
      leg: r(L.R_NEXT_SECTION_LEG) === 2 ? 'both' : legName(r(L.R_NEXT_SECTION_LEG)),
      time_s: r(L.R_NEXT_APEX_TIME),
      x_m: r(L.R_NEXT_APEX_X),
    });
  }
  return {
    sections,
    strides: out,
    outcome: {
      status: failed ? 'failed' : 'completed',
      strides_completed: completed,
      reason: failed ? STATUS_NAMES[status] : null,
      detail: failed ? STATUS_TEXT[status] : null,
      failed_stride: failed ? completed : null,
    },
    energy_J: sectionEnergy(scenario, start),
    ...(trajectory ? { trajectory } : {}),
    ...accuracyReport(scenario.integrator, null, 'biped'),
    caution: SAFETY_CAUTION,
  };
}

function columns(samples: Float64Array, interval: number, truncated: boolean): BipedTrajectory {
  const n = samples.length / L.T_SIZE;
  const col = (f: number) => Array.from({ length: n }, (_, i) => samples[i * L.T_SIZE + f]);
  return {
    interval_s: interval,
    time_s: col(L.T_TIME),
    x_m: col(L.T_X),
    y_m: col(L.T_Y),
    left: { foot_x_m: col(L.T_FOOT_X), foot_y_m: col(L.T_FOOT_Y), leg_force_N: col(L.T_LEG_FORCE) },
    right: { foot_x_m: col(L.T_FOOT2_X), foot_y_m: col(L.T_FOOT2_Y), leg_force_N: col(L.T_LEG_FORCE2) },
    phase: col(L.T_PHASE).map((p) => (p === L.PHASE_DOUBLE ? 'double' : p === L.PHASE_STANCE ? 'single' : 'flight')),
    stride: col(L.T_STRIDE),
    truncated,
  };
}
