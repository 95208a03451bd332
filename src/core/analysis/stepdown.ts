// `stepdown`: the largest single permanent drop and rise of the ground, met at the first touchdown
// from the scenario's start apex, that the policy survives for N further strides (it completes
// 1 + N strides), to a given resolution.
//
// Survival need not be monotone in the step size (near a threshold the gait can oscillate and fail
// late, and a larger step sometimes lands on a luckier stride), so this reports the FIRST failure
// boundary: sizes k·resolution (k = 0, 1, ...) are scanned on a coarse grid (every grid_m, all
// candidates of both directions in one kernel call, one model block each, since the steps terrain
// lives in the model), then the gap between the last grid survivor and the first grid failure is
// bisected down to one resolution. The result Δ survives and Δ + resolution fails.
//
// Search limits: a rise must stay below the apex clearance (start apex − leg length·sin(attack at
// apex)); at or above it the leg cannot be placed at all (law: the foot would already be below the
// ground at the apex), so the rise grid ends just past it and always holds a failure. Drops are
// searched up to one leg length. The work is bounded by those ranges, not by the resolution: each
// direction's coarse grid holds at most MAX_GRID_POINTS sizes (a range too long for the default
// spacing, e.g. the clearance under a 1e4 m apex, widens that direction's grid, and the result says
// so), and the bisection then takes log2(spacing / resolution) batched calls.

import * as L from '../../../assembly/layout.js';
import { loadEngine, type Engine, type ModelBlock } from '../engine.js';
import { InputError, describeFound, type InputIssue } from '../errors.js';
import { buildModel, landingLegLength, startInput, STATUS_NAMES, STATUS_TEXT } from '../model.js';
import { SAFETY_CAUTION } from '../safety.js';
import { firstTouchdownHeightM, type Scenario } from '../scenario.js';

export interface StepToleranceOptions {
  /** N: strides the policy must survive after the one that meets the step (default 20). */
  after?: number;
  /** Step sizes are multiples of this, m (default 0.001). */
  resolution_m?: number;
  /** Spacing of the coarse scan, m, rounded to a multiple of the resolution (default 0.005). */
  grid_m?: number;
  /** Length of the long run that finds the new fixed point (default 200 strides). */
  settle_strides?: number;
  /** Band about the new fixed point apex that counts as settled, m (default 0.001). */
  settle_band_m?: number;
}

export interface StepToleranceOptionNames {
  after: string;
  resolution_m: string;
  grid_m: string;
  settle_strides: string;
  settle_band_m: string;
}

const DEFAULT_NAMES: StepToleranceOptionNames = {
  after: 'after',
  resolution_m: 'resolution_m',
  grid_m: 'grid_m',
  settle_strides: 'settle_strides',
  settle_band_m: 'settle_band_m',
};

export const DEFAULT_AFTER = 20;
export const DEFAULT_RESOLUTION_M = 0.001;
export const DEFAULT_GRID_M = 0.005;
export const DEFAULT_SETTLE_STRIDES = 200;
export const DEFAULT_SETTLE_BAND_M = 0.001;
/**
 * The most strides after the step a survival may require (`after`). The work is the coarse grid
 * and the bisection (up to 2 x MAX_GRID_POINTS rollouts) times 1 + after strides, and the step
 * answers whether the gait meets its new ground: a gait that recovers settles within tens of
 * strides (`strides_to_settle`), so 1000 is ample, and a slow divergence over thousands of strides
 * is a question for the basin or the Monte Carlo study. Measured on a 2-core machine: the demo with
 * a 1 mm grid at 1000 strides in 4 s (999 999 strides ran past 300 s).
 */
export const MAX_AFTER = 1000;
/**
 * The longest settling run (`settle_strides`): two rollouts with every stride recorded; 100 000
 * strides took 2.2 s and 220 MB on the demo, 1 000 000 would take about 2 GB.
 */
export const MAX_SETTLE_STRIDES = 100_000;
/** The finest resolution is the leg length over this. */
const MAX_LATTICE = 1_000_000;
/** Coarse-grid sizes per direction at most: a longer range widens that direction's grid. */
export const MAX_GRID_POINTS = 2000;
/** The long run's last two apexes must agree this well (m, m/s) for a fixed point. */
const FIXED_POINT_TOLERANCE = 1e-6;

export interface StepFailure {
  /** Stable code (STATUS_NAMES). */
  reason: string;
  detail: string;
  /** 0-based index of the stride that failed (0 = the stride that met the step). */
  failed_stride: number;
}

export interface SettleReport {
  /** Strides of the long run. */
  strides: number;
  /** Strides the long run completed (all of them unless it failed late). */
  strides_completed: number;
  /** The long run's last apex when its last two apexes agree to 1e-6, else null. Absolute heights. */
  new_fixed_point: { apex_height_m: number; forward_speed_m_per_s: number; apex_above_ground_m: number } | null;
  /** Smallest n such that the apex after n strides and every later one is within the band of the new fixed point; null without one. */
  strides_to_settle: number | null;
  band_m: number;
}

export interface StepDirectionResult {
  /** Largest step size survived below the first failure, m (0 when even flat ground fails). */
  max_survived_m: number;
  /** The smallest failing size: max_survived_m + resolution, or null when nothing failed up to the limit. */
  first_failure_m: number | null;
  /** How the rollout just past the threshold failed; null when nothing failed. */
  failure_just_past: StepFailure | null;
  /** Spacing of this direction's coarse grid, m: grid_m, or wider when the range would need more than MAX_GRID_POINTS sizes. */
  grid_m: number;
  /** The largest size searched, m, and why there. */
  search_limit_m: number;
  search_limit_reason: string;
  /** 'first_failure', or 'search_limit' when every size up to the limit survived. */
  bounded_by: 'first_failure' | 'search_limit';
  /** Coarse-grid sizes past the first failure that survive again (survival is not monotone), m. */
  survivors_past_first_failure_m: number[];
  /** Recovery after the largest survived step. */
  settle: SettleReport;
}

export interface StepToleranceResult {
  /** Largest permanent drop survived, m (positive: the size of the drop). */
  max_step_down_m: number;
  /** Largest permanent rise survived, m. */
  max_step_up_m: number;
  strides_after: number;
  resolution_m: number;
  grid_m: number;
  start: { apex_height_m: number; forward_speed_m_per_s: number };
  /** Start apex above the touchdown height on flat ground: no rise at or beyond it can be met. */
  apex_clearance_m: number;
  /** False when the policy does not survive 1 + N strides even without a step. */
  survives_flat: boolean;
  step_down: StepDirectionResult;
  step_up: StepDirectionResult;
  method: string;
  note: string;
  caution: string;
}

interface Canonical {
  after: number;
  resolution: number;
  gridSteps: number; // coarse grid spacing in resolutions
  settleStrides: number;
  settleBand: number;
}

function canonicalOptions(scenario: Scenario, options: StepToleranceOptions, names: StepToleranceOptionNames): Canonical {
  const issues: InputIssue[] = [];
  const check = (ok: boolean, path: string, expected: string, found: unknown) => {
    if (!ok) issues.push({ path, expected, found: describeFound(found) });
  };
  const after = options.after ?? DEFAULT_AFTER;
  const resolution = options.resolution_m ?? DEFAULT_RESOLUTION_M;
  const grid = options.grid_m ?? Math.max(DEFAULT_GRID_M, resolution);
  const settleStrides = options.settle_strides ?? DEFAULT_SETTLE_STRIDES;
  const settleBand = options.settle_band_m ?? DEFAULT_SETTLE_BAND_M;
  const legLength = landingLegLength(scenario);
  // the bounds as the message shows them (6 significant digits), so that a value typed as shown is
  // accepted: never "expected from 4.5e-7 ..., found 4.5e-7" (0.45 / 1e6 is 4.5000000000000003e-7)
  const finest = Number((legLength / MAX_LATTICE).toPrecision(6));
  const coarsest = Number((legLength / 10).toPrecision(6));
  check(Number.isInteger(after) && after >= 1 && after <= MAX_AFTER, names.after, `an integer from 1 to ${MAX_AFTER}`, after);
  const resolutionOk = typeof resolution === 'number' && Number.isFinite(resolution) && resolution >= finest && resolution <= coarsest;
  check(resolutionOk, names.resolution_m, `a step size from ${finest} to ${coarsest} m (leg length / ${MAX_LATTICE} to leg length / 10)`, resolution);
  check(typeof grid === 'number' && Number.isFinite(grid) && (!resolutionOk || grid >= resolution) && grid <= legLength, names.grid_m, `a spacing from the resolution to the leg length (m)`, grid);
  check(
    Number.isInteger(settleStrides) && settleStrides >= 2 && settleStrides <= MAX_SETTLE_STRIDES,
    names.settle_strides,
    `an integer from 2 to ${MAX_SETTLE_STRIDES}`,
    settleStrides,
  );
  check(typeof settleBand === 'number' && Number.isFinite(settleBand) && settleBand > 0, names.settle_band_m, 'a finite number > 0 (m)', settleBand);
  if (issues.length) throw new InputError(issues);
  return { after, resolution, gridSteps: Math.max(1, Math.round(grid / resolution)), settleStrides, settleBand };
}

/** The scenario's model with one permanent step of `groundHeight` (m, signed) at the first touchdown. */
export function stepModel(base: ModelBlock, groundHeight: number): ModelBlock {
  const fields = base.fields.slice();
  fields[L.M_TERRAIN_KIND] = L.TERRAIN_STEPS;
  fields[L.M_STEPS_N] = 1;
  return { ...base, fields, groundHeights: Float64Array.of(groundHeight) };
}

interface Evaluation {
  survived: boolean;
  status: number;
  completed: number;
}

/** See the file comment. */
export async function stepTolerance(
  scenario: Scenario,
  options: StepToleranceOptions = {},
  names: StepToleranceOptionNames = DEFAULT_NAMES,
): Promise<StepToleranceResult> {
  const o = canonicalOptions(scenario, options, names);
  const engine = await loadEngine();
  const base = buildModel(scenario);
  const strides = 1 + o.after;
  const start = scenario.start;
  const input = (model: number) => startInput(scenario, 0, model); // the kind's start section

  // Evaluate signed lattice sizes (k > 0 drop, k < 0 rise, in resolutions) in one kernel call.
  const cache = new Map<number, Evaluation>();
  const evaluate = (ks: number[]) => {
    const todo = [...new Set(ks)].filter((k) => !cache.has(k));
    if (todo.length === 0) return;
    const inputs = new Float64Array(todo.length * L.I_SIZE);
    todo.forEach((_, i) => inputs.set(input(i), i * L.I_SIZE));
    const batch = engine.runBatch({ model: todo.map((k) => stepModel(base, groundAt(k))), inputs, strides });
    todo.forEach((k, i) => {
      const status = batch.summaries[i * L.S_SIZE + L.S_STATUS];
      cache.set(k, { survived: status === L.STATUS_OK, status, completed: batch.summaries[i * L.S_SIZE + L.S_STRIDES_COMPLETED] });
    });
  };
  const groundAt = (k: number) => -sizeOf(k, o); // a drop lowers the ground

  const legLength = landingLegLength(scenario);
  const clearance = start.apex_height_m - firstTouchdownHeightM(legLength, scenario.policy.angle, { kind: 'flat' });
  if (!(clearance > 0)) {
    throw new InputError([
      {
        path: 'start.apex_height_m',
        expected: `an apex above the touchdown height on flat ground (> ${start.apex_height_m - clearance} m): steps are measured from flat ground`,
        found: describeFound(start.apex_height_m),
      },
    ]);
  }
  const downLimit = Math.round(legLength / o.resolution);
  const upLimit = Math.floor(clearance / o.resolution + 1e-9) + 1; // first lattice size above the clearance
  // each direction's spacing, in resolutions: the one asked for, widened to at most MAX_GRID_POINTS sizes
  const spacing = (limit: number) => Math.max(o.gridSteps, Math.ceil(limit / (MAX_GRID_POINTS - 1)));
  const downSpacing = spacing(downLimit);
  const upSpacing = spacing(upLimit);
  if (options.grid_m !== undefined && (downSpacing > o.gridSteps || upSpacing > o.gridSteps)) {
    const [range, need] = upSpacing > o.gridSteps ? [upLimit, upSpacing] : [downLimit, downSpacing];
    throw new InputError([
      {
        path: names.grid_m,
        expected:
          `a spacing of at least ${sizeOf(need, o)} m: the ${upSpacing > o.gridSteps ? 'rise' : 'drop'} search range of ` +
          `${sizeOf(range, o)} m holds at most ${MAX_GRID_POINTS} coarse sizes (leave it out to widen the grid automatically)`,
        found: describeFound(options.grid_m),
      },
    ]);
  }
  const grid = (limit: number, step: number) => {
    const ks: number[] = [];
    for (let k = 0; k < limit; k += step) ks.push(k);
    ks.push(limit);
    return ks;
  };
  const downGrid = grid(downLimit, downSpacing);
  const upGrid = grid(upLimit, upSpacing);
  evaluate([...downGrid, ...upGrid.map((k) => -k)]);

  // First grid failure per direction, then bisect both gaps together (one call per iteration).
  const bracket = (ks: number[], sign: 1 | -1) => {
    const j = ks.findIndex((k) => !cache.get(sign * k)!.survived);
    if (j < 0) return { lo: ks[ks.length - 1], hi: null as number | null, j };
    return { lo: j === 0 ? 0 : ks[j - 1], hi: ks[j], j };
  };
  const down = bracket(downGrid, 1);
  const up = bracket(upGrid, -1);
  const narrow = (b: { lo: number; hi: number | null }) => b.hi !== null && b.hi - b.lo > 1;
  while (narrow(down) || narrow(up)) {
    const mid = (b: { lo: number; hi: number | null }) => Math.floor((b.lo + b.hi!) / 2);
    const ks: number[] = [];
    if (narrow(down)) ks.push(mid(down));
    if (narrow(up)) ks.push(-mid(up));
    evaluate(ks);
    for (const [b, sign] of [[down, 1], [up, -1]] as const) {
      if (!narrow(b)) continue;
      const m = mid(b);
      if (cache.get(sign * m)!.survived) b.lo = m;
      else b.hi = m;
    }
  }
  const survivesFlat = cache.get(0)!.survived;

  // Recovery after the largest survived step of each direction: one long run each, one call.
  const largest = [survivesFlat ? down.lo : 0, survivesFlat ? -up.lo : 0];
  const settleInputs = new Float64Array(2 * L.I_SIZE);
  settleInputs.set(input(0), 0);
  settleInputs.set(input(1), L.I_SIZE);
  const long = engine.runBatch({
    model: largest.map((k) => stepModel(base, groundAt(k))),
    inputs: settleInputs,
    strides: o.settleStrides,
    records: true,
  });

  const direction = (
    b: { lo: number; hi: number | null; j: number },
    ks: number[],
    sign: 1 | -1,
    step: number,
    limit: number,
    limitReason: string,
    longIndex: number,
  ): StepDirectionResult => {
    const failing = b.hi === null ? undefined : cache.get(sign * b.hi)!;
    const maxSurvived = survivesFlat ? b.lo : 0;
    return {
      max_survived_m: sizeOf(maxSurvived, o),
      first_failure_m: b.hi === null ? null : sizeOf(survivesFlat ? b.hi : 0, o),
      failure_just_past: failing
        ? { reason: STATUS_NAMES[failing.status], detail: STATUS_TEXT[failing.status], failed_stride: failing.completed }
        : null,
      grid_m: sizeOf(step, o),
      search_limit_m: sizeOf(limit, o),
      search_limit_reason: limitReason,
      bounded_by: b.hi === null ? 'search_limit' : 'first_failure',
      survivors_past_first_failure_m:
        b.j < 0 ? [] : ks.slice(b.j + 1).filter((k) => cache.get(sign * k)!.survived).map((k) => sizeOf(k, o)),
      settle: settleReport(long, longIndex, o, groundAt(sign * maxSurvived), start.apex_height_m),
    };
  };

  const stepDown = direction(down, downGrid, 1, downSpacing, downLimit, 'one leg length', 0);
  const stepUp = direction(
    up,
    upGrid,
    -1,
    upSpacing,
    upLimit,
    'just above the apex clearance (start apex - leg length x sin(attack at apex)): a higher step cannot be met',
    1,
  );
  return {
    max_step_down_m: stepDown.max_survived_m,
    max_step_up_m: stepUp.max_survived_m,
    strides_after: o.after,
    resolution_m: o.resolution,
    grid_m: sizeOf(o.gridSteps, o),
    start: { apex_height_m: start.apex_height_m, forward_speed_m_per_s: start.forward_speed_m_per_s },
    apex_clearance_m: clearance,
    survives_flat: survivesFlat,
    step_down: stepDown,
    step_up: stepUp,
    method:
      `one permanent step met at the first touchdown from the start apex (the scenario's terrain is replaced); ` +
      `survival = completing 1 + ${o.after} strides; sizes scanned every ${plainMetres(o.gridSteps * o.resolution)} ` +
      widened([['drops', downSpacing], ['rises', upSpacing]], o) +
      `in one batch, then bisected to ${plainMetres(o.resolution)} between the last survivor and the first failure: ` +
      `the answer is the first failure boundary`,
    note:
      `the answer depends on the number of strides required after the step (here ${o.after}); ` +
      'near the threshold the gait can oscillate and fail late, and survival need not be monotone in the step size ' +
      '(a larger step may survive again)',
    caution: SAFETY_CAUTION,
  };
}

function settleReport(
  long: ReturnType<Engine['runBatch']>,
  index: number,
  o: Canonical,
  ground: number,
  startApex: number,
): SettleReport {
  const s = (field: number) => long.summaries[index * L.S_SIZE + field];
  const completed = s(L.S_STRIDES_COMPLETED);
  const finalHeight = s(L.S_FINAL_HEIGHT);
  const finalSpeed = s(L.S_FINAL_SPEED);
  const converged =
    s(L.S_STATUS) === L.STATUS_OK &&
    Math.abs(finalHeight - s(L.S_PREVIOUS_HEIGHT)) <= FIXED_POINT_TOLERANCE &&
    Math.abs(finalSpeed - s(L.S_PREVIOUS_SPEED)) <= FIXED_POINT_TOLERANCE;
  let settle: number | null = null;
  if (converged) {
    // apex after n strides: n = 0 the start, n >= 1 record n - 1's next apex
    const apexAfter = (n: number) =>
      n === 0 ? startApex : long.records![(index * o.settleStrides + n - 1) * L.R_SIZE + L.R_NEXT_APEX_HEIGHT];
    let lastOutside = -1;
    for (let n = 0; n <= completed; n++) if (Math.abs(apexAfter(n) - finalHeight) > o.settleBand) lastOutside = n;
    settle = lastOutside + 1;
  }
  return {
    strides: o.settleStrides,
    strides_completed: completed,
    new_fixed_point: converged
      ? { apex_height_m: finalHeight, forward_speed_m_per_s: finalSpeed, apex_above_ground_m: finalHeight - ground }
      : null,
    strides_to_settle: settle,
    band_m: o.settleBand,
  };
}

// Step size k resolutions, rounded to 12 digits so that 13 x 0.001 reads 0.013 (the simulated size is this number).
function sizeOf(k: number, o: Canonical): number {
  return Number((k * o.resolution).toPrecision(12));
}

// "(rises every 5 m: at most 2000 sizes per direction) ", or nothing when no grid was widened.
function widened(directions: [string, number][], o: Canonical): string {
  const wide = directions.filter(([, step]) => step > o.gridSteps).map(([name, step]) => `${name} every ${plainMetres(step * o.resolution)}`);
  return wide.length ? `(${wide.join(', ')}: at most ${MAX_GRID_POINTS} sizes per direction) ` : '';
}

function plainMetres(m: number): string {
  if (m >= 1) return `${Number(m.toPrecision(6))} m`;
  return m >= 0.01 ? `${Number((m * 100).toPrecision(6))} cm` : `${Number((m * 1000).toPrecision(6))} mm`;
}
