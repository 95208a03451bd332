// The policy sampled onto a grid for export, with the interpolation error of the table against
// the continuous policy.
//
// What is tabulated: the functions the firmware evaluates, each on the time since the flight apex
// (the one clock the robot can run without knowing the ground): the attack angle commanded as
// time passes, and, when the policy schedules the stiffness, the compression and extension
// stiffness as functions of the touchdown time since apex. Every current policy kind is
// piecewise linear in that time (a retraction is linear, then clamped; a time table is
// piecewise linear and held flat past its ends), so the table is exact when its grid holds the
// policy's breakpoints (mode 'breakpoints', the default); a strictly uniform grid (mode
// 'uniform') trades that for evenly spaced points and has a real interpolation error at the
// breakpoints it misses.
//
// The grid is a list of axes and every table is stored row-major over them; Pronk's policies
// need one axis (time since apex). A state-indexed table (apex height × speed) would add a second
// axis here; the emitters check that there is exactly one.

import { InputError } from '../errors.js';
import type { AnglePolicy, Scenario, StiffnessPolicy } from '../scenario.js';
import { attackAtApexDeg, firstGroundHeightM } from '../scenario.js';
import { isBiped, LEG_NAMES, legParameters, type LegName } from '../models/biped.js';
import { lookupFloat32, type Float32Table } from './lookup.js';

export const DEG = Math.PI / 180;
/** Most grid points a table may have (a float32 table of 65536 points is 256 KiB of flash). */
export const MAX_POINTS = 65536;
/** Evenly spaced times of the dense interpolation check, at least (plus every grid point, cell midpoint and breakpoint). */
export const DENSE_CHECK_POINTS = 20000;

export type Policy = Scenario['policy'];

export type TableName = 'attack' | 'compression' | 'extension';

/** Two-leg exports: one table set shared by both legs, or one per leg. */
export type LegTables = 'shared' | 'per_leg';

/** One tabulated function of the grid's axes. */
export interface TableSpec {
  name: TableName;
  /** Per-leg tables of a two-leg export: the leg this table drives (absent: every leg). */
  leg?: LegName;
  /**
   * Column name in the JSON and CSV files (float64, file units): attack_deg, compression_N_per_m,
   * extension_N_per_m; per leg with the leg in front (left_attack_deg, right_extension_N_per_m, ...).
   */
  column: string;
  /** Unit of `column` and of the interpolation error. */
  unit: 'deg' | 'N/m';
  /** The continuous policy at a point of the grid's axes, in `unit`. */
  evaluate(point: readonly number[]): number;
  /** Float32 C value from a file-unit value (degrees become radians). */
  toFloat32(value: number): number;
  /** File-unit value of a float32 C value. */
  fromFloat32(value: number): number;
}

export interface GridAxis {
  name: 'time_since_apex_s';
  unit: 's';
  /** (points) float64, strictly increasing, also strictly increasing after rounding to float32. */
  points: number[];
}

// ---------------------------------------------------------------------------------------------
// The continuous policy, as the kernel evaluates it (assembly/policy.ts), in file units.

/** Piecewise-linear lookup held flat past both ends (assembly/policy.ts `interpolate`). */
export function interpolateHeld(times: readonly number[], values: readonly number[], t: number): number {
  const n = times.length;
  if (t <= times[0]) return values[0];
  if (t >= times[n - 1]) return values[n - 1];
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (times[mid] <= t) lo = mid;
    else hi = mid;
  }
  const w = (t - times[lo]) / (times[hi] - times[lo]);
  return values[lo] + w * (values[hi] - values[lo]);
}

/** Attack angle commanded at time t since apex, deg from the horizontal. */
export function attackDegAt(angle: AnglePolicy, t: number): number {
  switch (angle.kind) {
    case 'fixed':
      return angle.attack_deg;
    case 'retraction': {
      let a = angle.attack_at_apex_deg + angle.rate_deg_per_s * t;
      if (angle.min_deg !== undefined && a < angle.min_deg) a = angle.min_deg;
      if (angle.max_deg !== undefined && a > angle.max_deg) a = angle.max_deg;
      return a;
    }
    case 'time_table':
      return interpolateHeld(angle.time_since_apex_s, angle.attack_deg, t);
  }
}

/** Compression and extension stiffness chosen at a touchdown t after the apex, N/m. */
export function stiffnessAt(stiffness: StiffnessPolicy, bodyStiffness: number, t: number): { compression: number; extension: number } {
  switch (stiffness.kind) {
    case 'constant':
      return { compression: bodyStiffness, extension: bodyStiffness };
    case 'split':
      return { compression: stiffness.compression_N_per_m, extension: stiffness.extension_N_per_m };
    case 'time_table':
      return {
        compression: interpolateHeld(stiffness.time_since_apex_s, stiffness.compression_N_per_m, t),
        extension: interpolateHeld(stiffness.time_since_apex_s, stiffness.extension_N_per_m, t),
      };
  }
}

/** Times > 0 where the angle schedule's slope may change (retraction clamps, table knots). */
export function angleBreakpoints(angle: AnglePolicy): number[] {
  if (angle.kind === 'fixed') return [];
  if (angle.kind === 'time_table') return angle.time_since_apex_s.filter((t) => Number.isFinite(t) && t > 0);
  const w = angle.rate_deg_per_s;
  if (w === 0) return [];
  return [angle.min_deg, angle.max_deg]
    .filter((a): a is number => a !== undefined)
    .map((a) => (a - angle.attack_at_apex_deg) / w)
    .filter((t) => Number.isFinite(t) && t > 0)
    .sort((a, b) => a - b);
}

/** Times > 0 where the stiffness schedule's slope may change (its knots). */
export function stiffnessBreakpoints(stiffness: StiffnessPolicy): number[] {
  return stiffness.kind === 'time_table' ? stiffness.time_since_apex_s.filter((t) => Number.isFinite(t) && t > 0) : [];
}

/** The policy's breakpoints, sorted, without duplicates. */
export function policyBreakpoints(policy: Policy): number[] {
  return [...new Set([...angleBreakpoints(policy.angle), ...stiffnessBreakpoints(policy.stiffness)])].sort((a, b) => a - b);
}

/** A table's name in the float32 (C) tables: the attack angle in radians (attack_rad, left_attack_rad), else its column. */
export function float32Column(spec: TableSpec): string {
  return spec.name === 'attack' ? `${spec.leg ? `${spec.leg}_` : ''}attack_rad` : spec.column;
}

/**
 * The tables a policy exports: the attack angle always, the two stiffnesses when scheduled. A
 * two-leg scenario with `legs` 'per_leg': that set for each leg in turn (left, then right), each
 * leg's stiffness the policy's times its stiffness_scale; 'shared' (or one leg): one set.
 */
export function tableSpecs(scenario: Scenario, policy: Policy, legs: LegTables = 'shared'): TableSpec[] {
  if (legs === 'per_leg' && isBiped(scenario)) {
    const params = legParameters(scenario);
    return LEG_NAMES.flatMap((leg, i) =>
      sharedTableSpecs(scenario, policy, params[i].stiffness_scale).map((spec) => ({ ...spec, leg, column: `${leg}_${spec.column}` })),
    );
  }
  return sharedTableSpecs(scenario, policy, 1);
}

function sharedTableSpecs(scenario: Scenario, policy: Policy, stiffnessScale: number): TableSpec[] {
  const specs: TableSpec[] = [
    {
      name: 'attack',
      column: 'attack_deg',
      unit: 'deg',
      evaluate: ([t]) => attackDegAt(policy.angle, t),
      toFloat32: (deg) => Math.fround(deg * DEG),
      fromFloat32: (rad) => rad / DEG,
    },
  ];
  if (policy.stiffness.kind === 'time_table') {
    const k = scenario.body.leg_stiffness_N_per_m;
    const same = { toFloat32: (v: number) => Math.fround(v), fromFloat32: (v: number) => v };
    specs.push(
      {
        name: 'compression',
        column: 'compression_N_per_m',
        unit: 'N/m',
        evaluate: ([t]) => stiffnessAt(policy.stiffness, k, t).compression * stiffnessScale,
        ...same,
      },
      {
        name: 'extension',
        column: 'extension_N_per_m',
        unit: 'N/m',
        evaluate: ([t]) => stiffnessAt(policy.stiffness, k, t).extension * stiffnessScale,
        ...same,
      },
    );
  }
  return specs;
}

// ---------------------------------------------------------------------------------------------
// The time range: 0 to t_max.

export interface TimeRange {
  t_max_s: number;
  /** How t_max was chosen, in words. */
  source: string;
}

/**
 * The latest touchdown from the start apex onto ground one leg length below the first ground
 * height (the largest drop the step-down analysis searches), under the policy's own angle
 * schedule: the first root of y0 − g t²/2 = (h0 − L0) + L0 sin(attack(t)). For a fixed angle
 * that is sqrt(2 (y0 − h0 + L0 − L0 sin a) / g) (law: free fall from rest at the apex).
 */
export function latestTouchdownS(scenario: Scenario, angle: AnglePolicy): number {
  const { leg_length_m: leg, gravity_m_per_s2: g } = scenario.body;
  const y0 = scenario.start.apex_height_m;
  const ground = firstGroundHeightM(scenario.terrain) - leg;
  const gap = (t: number) => y0 - 0.5 * g * t * t - ground - leg * Math.sin(attackDegAt(angle, t) * DEG);
  // gap(0) > leg > 0 (the start apex is above the first touchdown height); gap(upper) <= 0
  // since sin >= -1.
  const upper = Math.sqrt((2 * (y0 - ground + leg)) / g);
  const samples = 4096;
  let a = 0;
  for (let i = 1; i <= samples; i++) {
    const b = (upper * i) / samples;
    if (gap(b) <= 0) {
      // bisection to adjacent doubles: the first sign change lies in [a, b]
      let lo = a;
      let hi = b;
      for (let k = 0; k < 200; k++) {
        const mid = 0.5 * (lo + hi);
        if (mid === lo || mid === hi) break;
        if (gap(mid) > 0) lo = mid;
        else hi = mid;
      }
      return hi;
    }
    a = b;
  }
  return upper; // a schedule the gap cannot be evaluated on (non-finite angles): the bound
}

/** First time > 0 at which a retraction leaves (0°, 90°] unclamped, or Infinity. */
export function leavesAttackRangeS(angle: AnglePolicy): number {
  if (angle.kind !== 'retraction' || angle.rate_deg_per_s === 0) return Infinity;
  const w = angle.rate_deg_per_s;
  if (w > 0 && angle.max_deg !== undefined) return Infinity; // held at max_deg <= 90
  if (w < 0 && angle.min_deg !== undefined) return Infinity; // held at min_deg > 0
  const t = ((w > 0 ? 90 : 0) - attackAtApexDeg(angle)) / w;
  return Number.isFinite(t) && t > 0 ? t : Infinity;
}

/** The largest double below x > 0. */
function previousDouble(x: number): number {
  const view = new DataView(new ArrayBuffer(8));
  view.setFloat64(0, x);
  view.setBigUint64(0, view.getBigUint64(0) - 1n);
  return view.getFloat64(0);
}

/**
 * t_max: for an angle time table, its last knot (past it the policy holds flat, as the lookup
 * clamps); for a fixed or retraction angle, the latest touchdown from the start apex onto ground
 * a leg length below the first ground (`latestTouchdownS`), cut where a retraction leaves
 * (0°, 90°]; then the larger of that and a stiffness table's last knot.
 */
export function defaultTimeRange(scenario: Scenario, policy: Policy): TimeRange {
  const parts: TimeRange[] = [];
  const angle = policy.angle;
  const lastKnot = (times: number[]) => times[times.length - 1];
  if (angle.kind === 'time_table' && lastKnot(angle.time_since_apex_s) > 0) {
    parts.push({ t_max_s: lastKnot(angle.time_since_apex_s), source: "the angle table's last knot" });
  } else {
    // two legs running: the flight from the flight apex, with the longer leg (the later touchdown)
    const fall = isBiped(scenario)
      ? { ...scenario, body: { ...scenario.body, leg_length_m: Math.max(...legParameters(scenario).map((leg) => leg.length_m)) } }
      : scenario;
    const touchdown = latestTouchdownS(fall, angle);
    const leaves = leavesAttackRangeS(angle);
    // at the cut a rising retraction is at 90 deg: step back past any rounding that puts it above
    let cut = leaves;
    while (cut > 0 && attackDegAt(angle, cut) > 90) cut = previousDouble(cut);
    parts.push(
      leaves < touchdown
        ? { t_max_s: cut, source: 'where the retraction leaves the attack range (0, 90] deg' }
        : {
            t_max_s: touchdown,
            source: 'the latest touchdown from the start apex onto ground one leg length below the first ground height',
          },
    );
  }
  const stiffness = policy.stiffness;
  if (stiffness.kind === 'time_table' && lastKnot(stiffness.time_since_apex_s) > parts[0].t_max_s) {
    parts.push({ t_max_s: lastKnot(stiffness.time_since_apex_s), source: "the stiffness table's last knot" });
  }
  return parts[parts.length - 1];
}

// ---------------------------------------------------------------------------------------------
// Grids.

export type GridMode = 'breakpoints' | 'uniform';

// Priority of a candidate point when two round to the same float32: ends, then policy knots,
// then evenly spaced points.
const ENDPOINT = 2;
const KNOT = 1;
const EVEN = 0;

/**
 * The time axis: `evenPoints` evenly spaced points over [0, tMax] and, in mode 'breakpoints',
 * the policy's breakpoints inside (0, tMax) too. Points that round to the same float32 are
 * merged (keeping an end, then a knot), so the float32 axis of the C table strictly increases.
 */
export function timeAxis(breakpoints: readonly number[], tMax: number, evenPoints: number, mode: GridMode): GridAxis {
  const candidates: { t: number; priority: number }[] = [];
  for (let i = 0; i < evenPoints; i++) {
    const end = i === 0 || i === evenPoints - 1;
    const t = i === 0 ? 0 : i === evenPoints - 1 ? tMax : (tMax * i) / (evenPoints - 1);
    candidates.push({ t, priority: end ? ENDPOINT : EVEN });
  }
  if (mode === 'breakpoints') {
    for (const t of breakpoints) if (t > 0 && t < tMax) candidates.push({ t, priority: KNOT });
  }
  candidates.sort((a, b) => a.t - b.t || b.priority - a.priority);
  const kept: { t: number; priority: number }[] = [];
  for (const c of candidates) {
    const previous = kept[kept.length - 1];
    if (previous && Math.fround(previous.t) === Math.fround(c.t)) {
      if (c.priority > previous.priority) kept[kept.length - 1] = c;
      continue;
    }
    kept.push(c);
  }
  return { name: 'time_since_apex_s', unit: 's', points: kept.map((c) => c.t) };
}

/** Every table's float64 values on the grid, row-major over the axes. */
export function sampleTables(specs: readonly TableSpec[], axes: readonly GridAxis[]): number[][] {
  const points = gridPoints(axes);
  return specs.map((spec) => points.map((point) => spec.evaluate(point)));
}

// The grid's points in row-major order (the last axis fastest).
function gridPoints(axes: readonly GridAxis[]): number[][] {
  let points: number[][] = [[]];
  for (const axis of axes) points = points.flatMap((p) => axis.points.map((x) => [...p, x]));
  return points;
}

// ---------------------------------------------------------------------------------------------
// Interpolation error against the continuous policy.

export interface InterpolationError {
  /** Largest |table − policy| found, in the table's unit (deg or N/m). */
  max_abs: number;
  /** Where: time since apex, s. */
  at_time_since_apex_s: number;
}

/**
 * The dense check: every grid point, every cell midpoint, every policy breakpoint in range and
 * at least DENSE_CHECK_POINTS evenly spaced times. For a piecewise-linear policy the float64
 * difference is piecewise linear with its corners at grid points and breakpoints, so its
 * maximum is found exactly; the float32 lookup adds rounding, which the evenly spaced times
 * sample.
 */
export function checkTimes(axis: GridAxis, breakpoints: readonly number[]): number[] {
  const p = axis.points;
  const tMax = p[p.length - 1];
  const times = [...p];
  for (let i = 0; i + 1 < p.length; i++) times.push(0.5 * (p[i] + p[i + 1]));
  for (const t of breakpoints) if (t >= 0 && t <= tMax) times.push(t);
  const m = Math.max(DENSE_CHECK_POINTS, 8 * (p.length - 1));
  for (let i = 0; i <= m; i++) times.push((tMax * i) / m);
  return times.sort((a, b) => a - b);
}

function worst(errors: Iterable<[number, number]>): InterpolationError {
  let best: InterpolationError = { max_abs: 0, at_time_since_apex_s: 0 };
  for (const [t, e] of errors) {
    // a NaN error is the worst of all (and the first one found is kept)
    const worse = Number.isNaN(e) ? !Number.isNaN(best.max_abs) : e > best.max_abs;
    if (worse) best = { max_abs: e, at_time_since_apex_s: t };
  }
  return best;
}

/** Interpolation error of the float64 table (linear in float64, held flat past the ends). */
export function float64Error(spec: TableSpec, axis: GridAxis, values: readonly number[], times: readonly number[]): InterpolationError {
  return worst(times.map((t): [number, number] => [t, Math.abs(interpolateHeld(axis.points, values, t) - spec.evaluate([t]))]));
}

/** Interpolation error of the float32 lookup (lookup.ts) at the float32 roundings of the check times. */
export function float32Error(spec: TableSpec, table: Float32Table, times: readonly number[]): InterpolationError {
  return worst(
    times.map((time): [number, number] => {
      const t = Math.fround(time);
      const value = spec.fromFloat32(lookupFloat32(table, t).value);
      return [t, Math.abs(value - spec.evaluate([t]))];
    }),
  );
}

// ---------------------------------------------------------------------------------------------
// Choosing the grid: a number of evenly spaced points, or the fewest that meet an error bound.

export type GridRequest =
  | { by: 'points'; points: number }
  | { by: 'max_error'; max_error_deg: number; max_error_N_per_m: number };

export interface ChosenGrid {
  axes: GridAxis[];
  mode: GridMode;
  /** The evenly spaced points asked for or found (before the breakpoints are merged in). */
  even_points: number;
  t_max_s: number;
  t_max_source: string;
  /** (tables) float64 values, row-major over the axes. */
  values: number[][];
  /** The policy's breakpoints in (0, t_max), s. */
  breakpoints: number[];
  /** With max_error: how the count was found; null with a count asked for. */
  search: string | null;
}

export interface GridOptionNames {
  points: string;
  max_error: string;
  max_stiffness_error: string;
}

/**
 * The grid for a request. With `max_error`, the fewest evenly spaced points whose float64 table
 * is within the bound for every table (deg for the angle, N/m for the stiffnesses): doubling from
 * 2 to a passing count, then bisection between the last failing and the first passing count.
 * The error of an even grid need not fall monotonically with its size, so "fewest" is the fewest
 * on that path: the count found passes and one fewer does not.
 */
export function chooseGrid(
  specs: readonly TableSpec[],
  policy: Policy,
  range: TimeRange,
  mode: GridMode,
  request: GridRequest,
  names: GridOptionNames = { points: 'points', max_error: 'max_error', max_stiffness_error: 'max_stiffness_error' },
): ChosenGrid {
  const tMax = range.t_max_s;
  const breakpoints = policyBreakpoints(policy).filter((t) => t < tMax);
  const build = (count: number) => {
    const axis = timeAxis(breakpoints, tMax, count, mode);
    return { axis, values: sampleTables(specs, [axis]) };
  };
  const errorsAt = (count: number) => {
    const { axis, values } = build(count);
    const times = checkTimes(axis, breakpoints);
    return specs.map((spec, i) => float64Error(spec, axis, values[i], times));
  };
  const result = (count: number, search: string | null): ChosenGrid => {
    const { axis, values } = build(count);
    return { axes: [axis], mode, even_points: count, t_max_s: tMax, t_max_source: range.source, values, breakpoints, search };
  };
  if (request.by === 'points') {
    const chosen = result(request.points, null);
    const total = chosen.axes[0].points.length;
    if (total > MAX_POINTS) {
      throw new InputError([
        {
          path: names.points,
          expected: `a count that keeps the grid within ${MAX_POINTS} points with the policy's ${breakpoints.length} breakpoints`,
          found: `${request.points} (${total} points in all)`,
        },
      ]);
    }
    return chosen;
  }

  const bound = (spec: TableSpec) => (spec.unit === 'deg' ? request.max_error_deg : request.max_error_N_per_m);
  // true when every error is within its bound; null when some error is not finite (no grid helps)
  const passes = (count: number): boolean | null => {
    const errors = errorsAt(count);
    if (errors.some((e) => !Number.isFinite(e.max_abs))) return null;
    return errors.every((e, i) => e.max_abs <= bound(specs[i]));
  };
  let lo = 1; // a count known to fail: one point is no grid
  let hi = 2;
  for (;;) {
    const ok = passes(hi);
    if (ok === null) return result(2, 'stopped at 2 points: the policy is not finite on the grid');
    if (ok) break;
    if (hi >= MAX_POINTS) {
      const errors = errorsAt(MAX_POINTS);
      const shown = errors.map((e, i) => `${specs[i].name} ${e.max_abs.toPrecision(3)} ${specs[i].unit}`).join(', ');
      const stiff = specs.some((s) => s.unit === 'N/m');
      throw new InputError([
        {
          path: stiff ? `${names.max_error} / ${names.max_stiffness_error}` : names.max_error,
          expected: `a bound that a grid of at most ${MAX_POINTS} points meets (at ${MAX_POINTS} points: ${shown})`,
          found: `${request.max_error_deg} deg${stiff ? `, ${request.max_error_N_per_m} N/m` : ''}`,
        },
      ]);
    }
    lo = hi;
    hi = Math.min(MAX_POINTS, 2 * hi);
  }
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (passes(mid)) hi = mid;
    else lo = mid;
  }
  return result(hi, lo >= 2 ? `doubling, then bisection: ${hi} evenly spaced points pass, ${lo} do not` : `2 evenly spaced points (the fewest) pass`);
}
