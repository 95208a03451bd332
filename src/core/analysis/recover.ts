// Impulse recovery for the lateral leg-spring model: run the scenario's periodic gait, kick it at
// a chosen moment of a chosen stride (a velocity impulse in the body frame, a body-angle or an
// angular-velocity kick), and measure how it comes back.
//
// What "back" can mean. A velocity impulse changes the energy, which the model conserves, so the
// body can at best settle on the periodic gait of the new energy, never on the original one; and
// the dynamics do not depend on the absolute heading, so a heading error is never corrected: the
// turn it leaves is permanent (the heading lost). Recovery is therefore measured against the gait
// of the energy after the kick, on the quantities that do return: the speed, the heading rate (the
// turn of the velocity per second over a stride, 0 on a periodic gait) and the body angle to the
// velocity (the heading to the body axis at the left touchdown). The result says when the
// original gait is out of reach and how large the permanent turn is.
//
// Monte Carlo over random kicks uses common random numbers: rollout i draws its kick from stream i
// of the seed (counter-based, assembly/rng.ts), so two policies see the same kicks.

import * as L from '../../../assembly/layout.js';
import type { Engine } from '../engine.js';
import { InputError } from '../errors.js';
import { STATUS_NAMES, STATUS_TEXT } from '../model.js';
import { buildLateralModel, type Kick, type LateralScenario, lateralInput, type SectionState, sectionOf, wrapAngle } from '../models/lateral.js';
import { wilsonInterval } from '../stats.js';
import { gaitNear, type LateralFixedPoint, lateralFixedPoints, requireFixedAttachment, strides as runStrides } from './lateral.js';

const DEG = Math.PI / 180;

export interface KickSpec {
  /** Stride (0-based) in which the kick lands. */
  stride: number;
  /** When, in that stride: a fraction of the gait's stride period, or seconds after its left touchdown. */
  fraction?: number;
  seconds?: number;
  forward_m_per_s: number;
  left_m_per_s: number;
  angle_deg: number;
  rate_deg_per_s: number;
}

export interface RecoverTolerances {
  speed_m_per_s: number;
  heading_rate_deg_per_s: number;
  body_angle_deg: number;
}

export interface GaitSummary {
  energy_J: number;
  speed_m_per_s: number;
  heading_to_body_deg: number;
  angular_velocity_deg_per_s: number;
  stride_time_s: number;
}

export interface RecoveryStride {
  stride: number;
  time_s: number;
  speed_m_per_s: number;
  heading_to_body_deg: number;
  angular_velocity_deg_per_s: number;
  heading_deg: number;
  /** Turn of the velocity heading over the stride that follows, per second. */
  heading_rate_deg_per_s: number | null;
  within_tolerance: boolean | null;
}

export interface RecoveryOutcome {
  survived: boolean;
  status: string;
  reason: string | null;
  strides_completed: number;
  kick_applied: boolean;
  kick_time_s: number;
  energy_before_J: number;
  energy_after_J: number | null;
  /** The gait the body can settle on: the one at the energy after the kick (null: none found). */
  target_gait: GaitSummary | null;
  /** Whether the original gait can be reached again (only when the kick left the energy unchanged). */
  original_gait_reachable: boolean;
  recovered: boolean;
  /** Left touchdowns after the kick until every later one is within the tolerances. */
  strides_to_recover: number | null;
  time_to_recover_s: number | null;
  /** Permanent turn: direction of travel over the last stride minus that of the gait, deg. */
  heading_lost_deg: number | null;
}

export interface RecoveryResult {
  gait: GaitSummary & { stability: string; reduced_eigenvalue_moduli: number[] };
  kick: KickSpec & { time_s: number };
  tolerances: RecoverTolerances;
  strides: number;
  outcome: RecoveryOutcome;
  per_stride: RecoveryStride[];
  notes: string[];
}

export const DEFAULT_STRIDES_AFTER = 30;

export function defaultTolerances(gait: GaitSummary): RecoverTolerances {
  return {
    speed_m_per_s: 0.01 * gait.speed_m_per_s, // 1 % of the gait's speed
    heading_rate_deg_per_s: 1,
    body_angle_deg: 0.5,
  };
}

/** The scenario's gait: the periodic gait at its energy nearest its start, stable ones first. */
export function scenarioGait(engine: Engine, s: LateralScenario, command = 'recover'): { gait: LateralFixedPoint; all: LateralFixedPoint[] } {
  requireFixedAttachment(s, command);
  const map = lateralFixedPoints(engine, s);
  if (map.fixed_points.length === 0) {
    throw new InputError([
      {
        path: 'start.speed_m_per_s',
        expected: 'a speed with a periodic gait',
        found: String(s.start.speed_m_per_s),
        message: `no periodic gait at the start energy (${s.start.speed_m_per_s} m/s): nothing to kick; run pronk map for the minimum speed`,
      },
    ]);
  }
  const d0 = s.start.heading_to_body_deg;
  const w0 = s.start.angular_velocity_deg_per_s;
  const ranked = [...map.fixed_points].sort(
    (a, b) =>
      Number(b.stable) - Number(a.stable) ||
      Math.hypot(a.heading_to_body_deg - d0, (a.angular_velocity_deg_per_s - w0) / 100) -
        Math.hypot(b.heading_to_body_deg - d0, (b.angular_velocity_deg_per_s - w0) / 100),
  );
  return { gait: ranked[0], all: map.fixed_points };
}

function gaitState(g: { speed_m_per_s: number; heading_to_body_deg: number; angular_velocity_deg_per_s: number }): SectionState {
  return { speed: g.speed_m_per_s, delta: g.heading_to_body_deg * DEG, omega: g.angular_velocity_deg_per_s * DEG, heading: 0 };
}

function energyOf(s: LateralScenario, st: SectionState): number {
  return 0.5 * s.body.mass_kg * st.speed ** 2 + 0.5 * s.body.moment_of_inertia_kg_m2 * st.omega ** 2;
}

function summary(s: LateralScenario, st: SectionState, strideTime: number): GaitSummary {
  return {
    energy_J: energyOf(s, st),
    speed_m_per_s: st.speed,
    heading_to_body_deg: st.delta / DEG,
    angular_velocity_deg_per_s: st.omega / DEG,
    stride_time_s: strideTime,
  };
}

export function kickOf(spec: KickSpec, strideTime: number): Kick {
  const time = spec.seconds ?? (spec.fraction ?? 0) * strideTime;
  return {
    stride: spec.stride,
    time_s: time,
    forward_m_per_s: spec.forward_m_per_s,
    left_m_per_s: spec.left_m_per_s,
    angle_rad: spec.angle_deg * DEG,
    rate_rad_per_s: spec.rate_deg_per_s * DEG,
  };
}

/** Judge one kicked rollout from its records (strides x LR_SIZE) and summary (LS_SIZE). */
export function judgeRecovery(
  engine: Engine,
  s: LateralScenario,
  gait: SectionState,
  gaitDirection: number,
  kick: Kick,
  records: Float64Array,
  summaryRow: Float64Array,
  n: number,
  tol: RecoverTolerances,
): { outcome: RecoveryOutcome; perStride: RecoveryStride[] } {
  const status = summaryRow[L.LS_STATUS];
  const completed = summaryRow[L.LS_STRIDES_COMPLETED];
  const rec = (k: number, f: number) => records[k * L.LR_SIZE + f];
  const perStride: RecoveryStride[] = [];
  const sections: (SectionState & { t: number })[] = [];
  for (let k = 0; k <= n; k++) {
    // section k: left touchdown k (the last one is the end of stride n-1)
    if (k < n && Number.isFinite(rec(k, L.LR_VX))) {
      sections.push({ ...sectionOf(rec(k, L.LR_THETA), rec(k, L.LR_VX), rec(k, L.LR_VY), rec(k, L.LR_OMEGA)), t: rec(k, L.LR_TIME) });
    } else if (k === n && k > 0 && Number.isFinite(rec(k - 1, L.LR_END_VX))) {
      sections.push({
        ...sectionOf(rec(k - 1, L.LR_END_THETA), rec(k - 1, L.LR_END_VX), rec(k - 1, L.LR_END_VY), rec(k - 1, L.LR_END_OMEGA)),
        t: rec(k - 1, L.LR_END_TIME),
      });
    } else break;
  }
  const kickApplied = summaryRow[L.LS_KICKED] === 1;
  const kickTime = kickApplied && kick.stride < sections.length ? sections[kick.stride].t + kick.time_s : Number.NaN;
  const energyBefore = energyOf(s, gait);
  const after = sections[kick.stride + 1];
  const energyAfter = after ? energyOf(s, after) : null;
  const unchanged = energyAfter !== null && Math.abs(energyAfter - energyBefore) <= 1e-9 * energyBefore;
  let target: SectionState | undefined;
  if (energyAfter !== null) target = unchanged ? gait : gaitNear(engine, s, energyAfter, { delta: gait.delta, omega: gait.omega });
  let targetStrideTime = Number.NaN;
  if (target) {
    const [one] = runStrides(engine, buildLateralModel(s), [target]);
    targetStrideTime = one.strideTime;
  }
  let firstGood: number | null = null;
  for (let k = 0; k < sections.length; k++) {
    const sec = sections[k];
    const next = sections[k + 1];
    const rate = next ? wrapAngle(next.heading - sec.heading) / (next.t - sec.t) : null;
    let within: boolean | null = null;
    if (k > kick.stride && target && rate !== null) {
      within =
        Math.abs(sec.speed - target.speed) <= tol.speed_m_per_s &&
        Math.abs(rate) / DEG <= tol.heading_rate_deg_per_s &&
        Math.abs(wrapAngle(sec.delta - target.delta)) / DEG <= tol.body_angle_deg;
      if (within && firstGood === null) firstGood = k;
      if (!within) firstGood = null;
    }
    perStride.push({
      stride: k,
      time_s: sec.t,
      speed_m_per_s: sec.speed,
      heading_to_body_deg: sec.delta / DEG,
      angular_velocity_deg_per_s: sec.omega / DEG,
      heading_deg: sec.heading / DEG,
      heading_rate_deg_per_s: rate === null ? null : rate / DEG,
      within_tolerance: within,
    });
  }
  const survived = status === L.STATUS_OK;
  // a recovery needs the tolerances held to the end, over at least three left touchdowns
  const judged = perStride.filter((p) => p.within_tolerance !== null).length;
  const lastJudged = perStride.reduce((m, p) => (p.within_tolerance !== null ? p.stride : m), -1);
  const recovered = survived && kickApplied && firstGood !== null && lastJudged - firstGood >= 2 && judged > 0;
  let headingLost: number | null = null;
  if (sections.length >= 2) {
    const a = sections.length - 2;
    const b = sections.length - 1;
    const dx = (b === n ? rec(n - 1, L.LR_END_X) : rec(b, L.LR_X)) - rec(a, L.LR_X);
    const dy = (b === n ? rec(n - 1, L.LR_END_Y) : rec(b, L.LR_Y)) - rec(a, L.LR_Y);
    headingLost = wrapAngle(Math.atan2(dy, dx) - gaitDirection) / DEG;
  }
  return {
    perStride,
    outcome: {
      survived,
      status: STATUS_NAMES[status] ?? `status_${status}`,
      reason: survived ? null : (STATUS_TEXT[status] ?? null),
      strides_completed: completed,
      kick_applied: kickApplied,
      kick_time_s: kickTime,
      energy_before_J: energyBefore,
      energy_after_J: energyAfter,
      target_gait: target ? summary(s, target, targetStrideTime) : null,
      original_gait_reachable: unchanged,
      recovered,
      strides_to_recover: recovered && firstGood !== null ? firstGood - kick.stride : null,
      time_to_recover_s: recovered && firstGood !== null ? sections[firstGood].t - kickTime : null,
      heading_lost_deg: survived ? headingLost : null,
    },
  };
}

/** Direction of travel over one stride of the gait (its mean heading), rad. */
function gaitDirectionOf(engine: Engine, s: LateralScenario, gait: SectionState): { direction: number; strideTime: number } {
  const [one] = runStrides(engine, buildLateralModel(s), [gait]);
  const r = one.record;
  return { direction: Math.atan2(r[L.LR_END_Y] - r[L.LR_Y], r[L.LR_END_X] - r[L.LR_X]), strideTime: one.strideTime };
}

export function checkKick(spec: KickSpec, strides: number): void {
  if (spec.stride >= strides) {
    throw new InputError([
      { path: '--kick-stride', expected: `a stride index below the strides run (${strides})`, found: String(spec.stride) },
    ]);
  }
}

/** One kick, judged. */
export function recoverOnce(
  engine: Engine,
  s: LateralScenario,
  spec: KickSpec,
  options: { stridesAfter?: number; tolerances?: Partial<RecoverTolerances> } = {},
): RecoveryResult {
  const { gait: fp } = scenarioGait(engine, s);
  const gait = gaitState(fp);
  const { direction, strideTime } = gaitDirectionOf(engine, s, gait);
  const g = summary(s, gait, strideTime);
  const tol = { ...defaultTolerances(g), ...options.tolerances };
  const n = spec.stride + 1 + (options.stridesAfter ?? DEFAULT_STRIDES_AFTER);
  checkKick(spec, n);
  const kick = kickOf(spec, strideTime);
  const r = engine.runLateral([buildLateralModel(s)], lateralInput(gait, kick), n, true);
  const { outcome, perStride } = judgeRecovery(engine, s, gait, direction, kick, r.records as Float64Array, r.summaries, n, tol);
  return {
    gait: { ...g, stability: fp.stability, reduced_eigenvalue_moduli: fp.reduced_eigenvalues.map((z) => z.modulus) },
    kick: { ...spec, time_s: kick.time_s },
    tolerances: tol,
    strides: n,
    outcome,
    per_stride: perStride,
    notes: recoveryNotes(outcome, tol, fp.stability),
  };
}

export function recoveryNotes(o: RecoveryOutcome, tol: RecoverTolerances, stability: string): string[] {
  const notes: string[] = [];
  if (!o.kick_applied) notes.push('The kick was never applied: the run failed before it, or its moment lies past the end of its stride.');
  if (o.energy_after_J !== null && !o.original_gait_reachable) {
    const change = o.energy_after_J - o.energy_before_J;
    notes.push(
      `The kick changed the energy by ${change.toPrecision(3)} J (${((100 * change) / o.energy_before_J).toPrecision(3)} %). ` +
        'The model conserves energy, so the original gait cannot be reached again: the body can at best settle on the gait of the new energy' +
        (o.target_gait ? ` (${o.target_gait.speed_m_per_s.toPrecision(6)} m/s), against which recovery is measured.` : ', and no gait was found at that energy.'),
    );
  }
  if (o.survived && o.heading_lost_deg !== null) {
    notes.push(
      `The absolute heading is neutral (the dynamics do not depend on it), so nothing turns the body back: a permanent turn of ${o.heading_lost_deg.toFixed(3)} deg remains (the heading lost).`,
    );
  }
  if (!o.survived) notes.push(`The run failed: ${o.reason ?? o.status}.`);
  else if (!o.recovered && o.kick_applied) {
    notes.push(
      `Not recovered within the strides run: the speed (within ${tol.speed_m_per_s.toPrecision(3)} m/s), heading rate (${tol.heading_rate_deg_per_s} deg/s) and body angle (${tol.body_angle_deg} deg) did not all stay within tolerance to the end` +
        (stability !== 'stable' ? `; the gait itself is ${stability}.` : '.'),
    );
  }
  return notes;
}

// ---------------------------------------------------------------------------------------------
// Monte Carlo over random kicks.

export interface RandomKickSpec {
  stride: number;
  /** Largest |velocity change| along and across the body axis, m/s (uniform in [-max, max]). */
  max_forward_m_per_s: number;
  max_left_m_per_s: number;
  max_angle_deg: number;
  max_rate_deg_per_s: number;
  /** Timing: uniform over [0, 1) of the gait's stride period. */
  seed: number;
  rollouts: number;
}

/** Kick i of a Monte Carlo run: draws 0..4 of stream i (common random numbers). */
export function randomKick(engine: Engine, spec: RandomKickSpec, i: number): KickSpec {
  const u = (c: number) => engine.uniform(spec.seed, i, c);
  return {
    stride: spec.stride,
    fraction: u(0),
    forward_m_per_s: spec.max_forward_m_per_s * (2 * u(1) - 1),
    left_m_per_s: spec.max_left_m_per_s * (2 * u(2) - 1),
    angle_deg: spec.max_angle_deg * (2 * u(3) - 1),
    rate_deg_per_s: spec.max_rate_deg_per_s * (2 * u(4) - 1),
  };
}

/** One Monte Carlo row: what the finisher needs of rollout i. */
export type RecoveryRow = [survived: 0 | 1, recovered: 0 | 1, strides: number | null, time: number | null, headingLost: number | null, status: number];

export interface RecoverMonteCarloResult {
  scenario: LateralScenario;
  gait: RecoveryResult['gait'];
  kicks: RandomKickSpec;
  tolerances: RecoverTolerances;
  strides: number;
  rollouts: number;
  survived: number;
  survival: number;
  survival_interval_95: [number, number];
  recovered: number;
  recovery: number;
  recovery_interval_95: [number, number];
  strides_to_recover: { median: number | null; p90: number | null; max: number | null };
  time_to_recover_s: { median: number | null; p90: number | null; max: number | null };
  heading_lost_deg: { median_abs: number | null; p90_abs: number | null; max_abs: number | null };
  failures: Record<string, number>;
  notes: string[];
}

export function recoverRows(
  engine: Engine,
  s: LateralScenario,
  spec: RandomKickSpec,
  range: { start: number; end: number },
  options: { stridesAfter?: number; tolerances?: Partial<RecoverTolerances> } = {},
  onProgress?: (done: number) => void,
  /** Hears every kernel call's stride records (rollouts x strides x LR_SIZE) and summaries, e.g. for limits on the peak leg force. */
  onBatch?: (records: Float64Array, summaries: Float64Array, rollouts: number, strides: number) => void,
): RecoveryRow[] {
  const { gait: fp } = scenarioGait(engine, s);
  const gait = gaitState(fp);
  const { direction, strideTime } = gaitDirectionOf(engine, s, gait);
  const tol = { ...defaultTolerances(summary(s, gait, strideTime)), ...options.tolerances };
  const n = spec.stride + 1 + (options.stridesAfter ?? DEFAULT_STRIDES_AFTER);
  const model = buildLateralModel(s);
  const rows: RecoveryRow[] = [];
  // rollouts per kernel call: at most 64, and at most about 160 MB of stride records
  const CHUNK = Math.max(1, Math.min(64, Math.floor(2e7 / (n * L.LR_SIZE))));
  for (let a = range.start; a < range.end; a += CHUNK) {
    const b = Math.min(range.end, a + CHUNK);
    const kicks: Kick[] = [];
    const inputs = new Float64Array((b - a) * L.LI_SIZE);
    for (let i = a; i < b; i++) {
      const k = kickOf(randomKick(engine, spec, i), strideTime);
      kicks.push(k);
      inputs.set(lateralInput(gait, k), (i - a) * L.LI_SIZE);
    }
    const r = engine.runLateral([model], inputs, n, true);
    const records = r.records as Float64Array;
    onBatch?.(records, r.summaries, b - a, n);
    for (let i = a; i < b; i++) {
      const j = i - a;
      const { outcome } = judgeRecovery(
        engine,
        s,
        gait,
        direction,
        kicks[j],
        records.subarray(j * n * L.LR_SIZE, (j + 1) * n * L.LR_SIZE),
        r.summaries.subarray(j * L.LS_SIZE, (j + 1) * L.LS_SIZE),
        n,
        tol,
      );
      rows.push([
        outcome.survived ? 1 : 0,
        outcome.recovered ? 1 : 0,
        outcome.strides_to_recover,
        outcome.time_to_recover_s,
        outcome.heading_lost_deg,
        r.summaries[j * L.LS_SIZE + L.LS_STATUS],
      ]);
    }
    onProgress?.(b - range.start);
  }
  return rows;
}

function quantile(sorted: number[], q: number): number | null {
  if (sorted.length === 0) return null;
  // nearest rank (common practice)
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil(q * sorted.length) - 1))];
}

export function finishRecover(
  engine: Engine,
  s: LateralScenario,
  spec: RandomKickSpec,
  rows: readonly RecoveryRow[],
  options: { stridesAfter?: number; tolerances?: Partial<RecoverTolerances> } = {},
): RecoverMonteCarloResult {
  const { gait: fp } = scenarioGait(engine, s);
  const gait = gaitState(fp);
  const { strideTime } = gaitDirectionOf(engine, s, gait);
  const g = summary(s, gait, strideTime);
  const tol = { ...defaultTolerances(g), ...options.tolerances };
  const n = rows.length;
  const survived = rows.filter((r) => r[0] === 1).length;
  const recovered = rows.filter((r) => r[1] === 1).length;
  const sortedOf = (k: 2 | 3) => rows.filter((r) => r[1] === 1).map((r) => r[k] as number).sort((a, b) => a - b);
  const st = sortedOf(2);
  const tt = sortedOf(3);
  const hl = rows.filter((r) => r[0] === 1 && r[4] !== null).map((r) => Math.abs(r[4] as number)).sort((a, b) => a - b);
  const failures: Record<string, number> = {};
  for (const r of rows) if (r[0] === 0) failures[STATUS_NAMES[r[5]] ?? `status_${r[5]}`] = (failures[STATUS_NAMES[r[5]] ?? `status_${r[5]}`] ?? 0) + 1;
  const stridesRun = spec.stride + 1 + (options.stridesAfter ?? DEFAULT_STRIDES_AFTER);
  return {
    scenario: s,
    gait: { ...g, stability: fp.stability, reduced_eigenvalue_moduli: fp.reduced_eigenvalues.map((z) => z.modulus) },
    kicks: spec,
    tolerances: tol,
    strides: stridesRun,
    rollouts: n,
    survived,
    survival: survived / n,
    survival_interval_95: wilsonInterval(survived, n),
    recovered,
    recovery: recovered / n,
    recovery_interval_95: wilsonInterval(recovered, n),
    strides_to_recover: { median: quantile(st, 0.5), p90: quantile(st, 0.9), max: st.length ? st[st.length - 1] : null },
    time_to_recover_s: { median: quantile(tt, 0.5), p90: quantile(tt, 0.9), max: tt.length ? tt[tt.length - 1] : null },
    heading_lost_deg: { median_abs: quantile(hl, 0.5), p90_abs: quantile(hl, 0.9), max_abs: hl.length ? hl[hl.length - 1] : null },
    failures,
    notes: [
      'Recovery is measured against the gait of the energy each kick leaves (a velocity kick changes the energy, which the model conserves: the original gait is out of reach).',
      'The absolute heading is neutral: every heading lost is a permanent turn.',
      `Kick i draws its timing and sizes from stream i of seed ${spec.seed} (common random numbers: another policy run with the same seed sees the same kicks).`,
    ],
  };
}

// ---------------------------------------------------------------------------------------------
// Sharding: the options that define a Monte Carlo run (every shard of one run must agree on
// them), checked when a partial result is merged, and the finisher `pronk merge` calls.

export interface RecoverRunOptions {
  kicks: RandomKickSpec;
  strides_after: number;
  tolerances: Partial<RecoverTolerances>;
}

export const MAX_RECOVER_ROLLOUTS = 1_000_000;

/** A run's options as stored in a partial result, checked (an InputError naming the field). */
export function checkRecoverRunOptions(options: unknown): RecoverRunOptions {
  const o = (options ?? {}) as Record<string, unknown>;
  const k = (o.kicks ?? {}) as Record<string, unknown>;
  const issues: { path: string; expected: string; found: string }[] = [];
  const num = (v: unknown, path: string, low: number, high: number, integer = false) => {
    if (typeof v !== 'number' || !Number.isFinite(v) || v < low || v > high || (integer && !Number.isInteger(v))) {
      issues.push({ path, expected: `${integer ? 'an integer' : 'a number'} from ${low} to ${high}`, found: JSON.stringify(v) ?? 'missing' });
    }
    return v as number;
  };
  const kicks: RandomKickSpec = {
    stride: num(k.stride, 'kicks.stride', 0, 100_000, true),
    max_forward_m_per_s: num(k.max_forward_m_per_s, 'kicks.max_forward_m_per_s', 0, 1e3),
    max_left_m_per_s: num(k.max_left_m_per_s, 'kicks.max_left_m_per_s', 0, 1e3),
    max_angle_deg: num(k.max_angle_deg, 'kicks.max_angle_deg', 0, 180),
    max_rate_deg_per_s: num(k.max_rate_deg_per_s, 'kicks.max_rate_deg_per_s', 0, 1e5),
    seed: num(k.seed, 'kicks.seed', 0, Number.MAX_SAFE_INTEGER, true),
    rollouts: num(k.rollouts, 'kicks.rollouts', 1, MAX_RECOVER_ROLLOUTS, true),
  };
  const stridesAfter = num(o.strides_after, 'strides_after', 3, 100_000, true);
  const t = (o.tolerances ?? {}) as Record<string, unknown>;
  const tolerances: Partial<RecoverTolerances> = {};
  if (t.speed_m_per_s !== undefined) tolerances.speed_m_per_s = num(t.speed_m_per_s, 'tolerances.speed_m_per_s', 0, 1e3);
  if (t.heading_rate_deg_per_s !== undefined) tolerances.heading_rate_deg_per_s = num(t.heading_rate_deg_per_s, 'tolerances.heading_rate_deg_per_s', 0, 1e5);
  if (t.body_angle_deg !== undefined) tolerances.body_angle_deg = num(t.body_angle_deg, 'tolerances.body_angle_deg', 0, 180);
  if (issues.length) throw new InputError(issues);
  return { kicks, strides_after: stridesAfter, tolerances };
}

/** The finisher of a merged run: the same numbers a one-machine run gives. */
export async function finishRecoverRun(scenario: LateralScenario, options: unknown, rows: readonly RecoveryRow[]): Promise<RecoverMonteCarloResult> {
  const run = checkRecoverRunOptions(options);
  const { loadEngine } = await import('../engine.js');
  const engine = await loadEngine();
  return finishRecover(engine, scenario, run.kicks, rows, { stridesAfter: run.strides_after, tolerances: run.tolerances });
}
