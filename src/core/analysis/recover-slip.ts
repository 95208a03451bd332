// Impulse recovery for the single-leg model: run the apex map's stable gait on flat ground, kick
// it in flight (a forward and a vertical velocity change at a moment between an apex and the next
// touchdown), and measure how the apexes come back.
//
// In flight the body moves on a parabola (law: ballistic flight), so after a kick at time tau past
// apex (h, v) it follows the parabola of the new velocity, whose vertex is a virtual apex
// (h', v + dv_forward) with h' = y + vy^2 / (2 g), y = h - g tau^2 / 2, vy = -g tau + dv_up: with a
// fixed attack angle the touchdown depends only on that parabola, so the run goes on from the
// virtual apex exactly. A schedule in time since apex would not (the kick moves the apex it counts
// from), so those are refused. A kick changes the energy, which a conservative leg keeps: the
// apexes can at best settle on the gait of the new energy, and the output says so.

import * as L from '../../../assembly/layout.js';
import { type Engine, rolloutInput } from '../engine.js';
import { InputError } from '../errors.js';
import { STATUS_NAMES, STATUS_TEXT } from '../model.js';
import type { Scenario } from '../scenario.js';
import { apexReturnMap, conservesEnergy, type FixedPointOut, mapModel } from './return-map.js';

export interface SlipKickSpec {
  /** The kick lands in the flight after apex `stride` (0-based). */
  stride: number;
  /** A fraction of the gait's apex-to-touchdown time, or seconds after the apex. */
  fraction?: number;
  seconds?: number;
  forward_m_per_s: number;
  up_m_per_s: number;
}

export interface SlipTolerances {
  height_m: number;
  speed_m_per_s: number;
}

export interface SlipGait {
  apex_height_m: number;
  forward_speed_m_per_s: number;
  energy_J: number;
  stride_time_s: number;
  apex_to_touchdown_s: number;
  slope: number;
}

export interface SlipRecoveryRow {
  apex: number;
  /** Seconds from the kick (negative before it). */
  time_from_kick_s: number;
  apex_height_m: number;
  forward_speed_m_per_s: number;
  within_tolerance: boolean | null;
}

export interface SlipRecoveryResult {
  gait: SlipGait;
  kick: SlipKickSpec & { time_s: number };
  tolerances: SlipTolerances;
  outcome: {
    survived: boolean;
    status: string;
    reason: string | null;
    energy_before_J: number;
    energy_after_J: number;
    target_gait: { apex_height_m: number; forward_speed_m_per_s: number; stable: boolean } | null;
    original_gait_reachable: boolean;
    recovered: boolean;
    strides_to_recover: number | null;
    time_to_recover_s: number | null;
  };
  per_apex: SlipRecoveryRow[];
  notes: string[];
}

/** What a single-leg scenario needs for recover: a fixed attack angle and a conservative leg. */
export function checkSlipRecoverable(s: Scenario): void {
  const issues = [];
  if (s.policy.angle.kind !== 'fixed') {
    issues.push({
      path: 'policy.angle.kind',
      expected: 'fixed',
      found: JSON.stringify(s.policy.angle.kind),
      message: `expected fixed for recover (a kick in flight moves the apex that a ${s.policy.angle.kind} schedule counts time from), found "${s.policy.angle.kind}"`,
    });
  }
  if (!conservesEnergy(s)) {
    issues.push({
      path: s.body.leg_damping_N_s_per_m > 0 ? 'body.leg_damping_N_s_per_m' : 'policy.stiffness',
      expected: 'a conservative leg',
      found: 'one that changes the energy every stride',
      message: 'expected a conservative leg for recover (no damping, equal compression and extension stiffness): recovery is measured against the gait of the energy a kick leaves',
    });
  }
  if (issues.length) throw new InputError(issues);
}

function gaitNearest(points: readonly FixedPointOut[], h: number, v: number, stableFirst: boolean): FixedPointOut | undefined {
  return [...points].sort(
    (a, b) =>
      (stableFirst ? Number(b.stable) - Number(a.stable) : 0) ||
      Math.hypot(a.apex_height_m - h, a.forward_speed_m_per_s - v) - Math.hypot(b.apex_height_m - h, b.forward_speed_m_per_s - v),
  )[0];
}

async function fixedPointsAt(s: Scenario, h: number, v: number): Promise<FixedPointOut[]> {
  const map = await apexReturnMap({ ...s, start: { ...s.start, apex_height_m: h, forward_speed_m_per_s: v } }, { iterations: 0 });
  return map.fixed_points;
}

export async function recoverSlipOnce(
  engine: Engine,
  s: Scenario,
  spec: SlipKickSpec,
  options: { stridesAfter?: number; tolerances?: Partial<SlipTolerances> } = {},
): Promise<SlipRecoveryResult> {
  checkSlipRecoverable(s);
  const { mass_kg: m, gravity_m_per_s2: g } = s.body;
  const points = await fixedPointsAt(s, s.start.apex_height_m, s.start.forward_speed_m_per_s);
  const fp = gaitNearest(points, s.start.apex_height_m, s.start.forward_speed_m_per_s, true);
  if (!fp) {
    throw new InputError([
      {
        path: 'start',
        expected: 'a start energy with a periodic gait',
        found: 'none',
        message: 'no periodic gait at the start energy: nothing to kick; run pronk map for the fixed points',
      },
    ]);
  }
  const model = mapModel(s);
  const n0 = spec.stride;
  const first = engine.runBatch({ model, inputs: rolloutInput(fp.apex_height_m, fp.forward_speed_m_per_s), strides: n0 + 1, records: true });
  const rec = (k: number, f: number) => (first.records as Float64Array)[k * L.R_SIZE + f];
  const gait: SlipGait = {
    apex_height_m: fp.apex_height_m,
    forward_speed_m_per_s: fp.forward_speed_m_per_s,
    energy_J: m * g * fp.apex_height_m + 0.5 * m * fp.forward_speed_m_per_s ** 2,
    stride_time_s: rec(0, L.R_STRIDE_TIME),
    apex_to_touchdown_s: rec(0, L.R_APEX_TO_TOUCHDOWN),
    slope: fp.slope,
  };
  const tau = spec.seconds ?? (spec.fraction ?? 0) * gait.apex_to_touchdown_s;
  // the apex the kick follows, and the time left to touchdown after it
  const h = rec(n0, L.R_APEX_HEIGHT);
  const v = rec(n0, L.R_APEX_SPEED);
  const tApex = rec(n0, L.R_APEX_TIME);
  const descent = rec(n0, L.R_APEX_TO_TOUCHDOWN);
  if (!(tau < descent)) {
    throw new InputError([
      {
        path: '--kick-after',
        expected: `a moment in flight, before the touchdown ${descent.toPrecision(6)} s after the apex (a single-leg kick lands in flight)`,
        found: `${tau} s`,
      },
    ]);
  }
  const tol: SlipTolerances = {
    height_m: 1e-3 * s.body.leg_length_m,
    speed_m_per_s: 0.01 * gait.forward_speed_m_per_s,
    ...options.tolerances,
  };
  // law (ballistic flight): the parabola after the kick and its vertex
  const y = h - 0.5 * g * tau * tau;
  const vy = -g * tau + spec.up_m_per_s;
  const vx = v + spec.forward_m_per_s;
  const hv = y + (vy * vy) / (2 * g);
  const energyAfter = m * g * hv + 0.5 * m * vx * vx;
  const n = options.stridesAfter ?? 30;
  const perApex: SlipRecoveryRow[] = [];
  for (let k = 0; k <= n0; k++) {
    perApex.push({ apex: k, time_from_kick_s: rec(k, L.R_APEX_TIME) - (tApex + tau), apex_height_m: rec(k, L.R_APEX_HEIGHT), forward_speed_m_per_s: rec(k, L.R_APEX_SPEED), within_tolerance: null });
  }
  const notes: string[] = [];
  const unchanged = Math.abs(energyAfter - gait.energy_J) <= 1e-9 * gait.energy_J;
  const base = {
    energy_before_J: gait.energy_J,
    energy_after_J: energyAfter,
    original_gait_reachable: unchanged,
  };
  const kick = { ...spec, time_s: tau };
  if (!(vx >= 0)) {
    notes.push('The kick reversed the forward speed: the runner falls backward.');
    return {
      gait,
      kick,
      tolerances: tol,
      outcome: { survived: false, status: STATUS_NAMES[L.STATUS_FELL_BACKWARD], reason: STATUS_TEXT[L.STATUS_FELL_BACKWARD], ...base, target_gait: null, recovered: false, strides_to_recover: null, time_to_recover_s: null },
      per_apex: perApex,
      notes,
    };
  }
  // the run after the kick starts at the virtual apex, vy / g after the kick
  const second = engine.runBatch({ model, inputs: rolloutInput(hv, vx), strides: n, records: true });
  const rec2 = (k: number, f: number) => (second.records as Float64Array)[k * L.R_SIZE + f];
  const status = second.summaries[L.S_STATUS];
  const targets = unchanged ? points : await fixedPointsAt(s, hv, vx);
  const target = gaitNearest(targets, fp.apex_height_m, fp.forward_speed_m_per_s, false);
  const offset = vy / g; // virtual apex time after the kick (negative: before it)
  let firstGood: number | null = null;
  const rows: SlipRecoveryRow[] = [];
  for (let k = 1; k <= n; k++) {
    // apex k of the second run (k = 0 is the virtual apex)
    const hh = rec2(k - 1, L.R_NEXT_APEX_HEIGHT);
    if (!Number.isFinite(hh)) break;
    const vv = rec2(k - 1, L.R_NEXT_APEX_SPEED);
    const within = target ? Math.abs(hh - target.apex_height_m) <= tol.height_m && Math.abs(vv - target.forward_speed_m_per_s) <= tol.speed_m_per_s : null;
    if (within && firstGood === null) firstGood = k;
    if (within === false) firstGood = null;
    rows.push({ apex: n0 + k, time_from_kick_s: rec2(k - 1, L.R_NEXT_APEX_TIME) + offset, apex_height_m: hh, forward_speed_m_per_s: vv, within_tolerance: within });
  }
  perApex.push(...rows);
  const survived = status === L.STATUS_OK;
  const recovered = survived && firstGood !== null && n - firstGood >= 2;
  if (!unchanged) {
    const change = energyAfter - gait.energy_J;
    notes.push(
      `The kick changed the energy by ${change.toPrecision(3)} J (${((100 * change) / gait.energy_J).toPrecision(3)} %). The leg conserves energy, so the original gait cannot be reached again: the apexes can at best settle on the gait of the new energy` +
        (target ? ` (${target.apex_height_m.toPrecision(6)} m at ${target.forward_speed_m_per_s.toPrecision(6)} m/s), against which recovery is measured.` : ', and the map finds no gait at that energy.'),
    );
  }
  if (target && !target.stable) notes.push('The gait of the new energy is unstable: the apexes cannot settle on it.');
  if (!survived) notes.push(`The run failed: ${STATUS_TEXT[status] ?? STATUS_NAMES[status]}.`);
  return {
    gait,
    kick,
    tolerances: tol,
    outcome: {
      survived,
      status: STATUS_NAMES[status] ?? `status_${status}`,
      reason: survived ? null : (STATUS_TEXT[status] ?? null),
      ...base,
      target_gait: target ? { apex_height_m: target.apex_height_m, forward_speed_m_per_s: target.forward_speed_m_per_s, stable: target.stable } : null,
      recovered,
      strides_to_recover: recovered && firstGood !== null ? firstGood : null,
      time_to_recover_s: recovered && firstGood !== null ? rows[firstGood - 1].time_from_kick_s : null,
    },
    per_apex: perApex,
    notes,
  };
}
