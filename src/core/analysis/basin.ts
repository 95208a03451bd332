// `basin`: the basin of attraction of a policy on flat ground. Each cell of a grid of start
// apexes (apex height × forward speed, or apex heights alone at the scenario's energy) runs N
// strides; a cell is `converged` when it completed them all and its last two apexes agree to a
// tolerance (it settled on a fixed point of the apex map), `wandering` when it survived without
// settling, `fell` otherwise (with the stride and the reason).
//
// The work is split in two so that a run can be sharded across machines: `basinRows` runs a
// contiguous range of cells and returns one plain row per cell; `finishBasin` turns all the rows
// into the result. A one-machine run goes through the same finisher, so a merged run cannot
// differ from it.

import * as L from '../../../assembly/layout.js';
import { InputError, describeFound, type InputIssue } from '../errors.js';
import { rolloutInput, type BatchRequest, type BatchResult } from '../engine.js';
import { buildModel, landingLegLength, STATUS_NAMES, STATUS_TEXT } from '../model.js';
import { isBiped, legParameters, sectionEnergy, sectionInput, speedAtEnergy, startState } from '../models/biped.js';
import { SAFETY_CAUTION } from '../safety.js';
import { BOUNDS, MAX_STRIDES, boundText, firstTouchdownHeightM, type Scenario } from '../scenario.js';
import type { ShardRange } from '../shard.js';

export const DEFAULT_BASIN_STRIDES = 30;
export const DEFAULT_BASIN_TOLERANCE = 1e-4; // m in apex height, m/s in forward speed
/** Largest grid accepted: the per-cell output of a bigger one is no longer readable JSON. */
export const MAX_BASIN_CELLS = 1_000_000;
/** Settled apexes closer than this many tolerances are taken to be the same fixed point. */
const SAME_FIXED_POINT_TOLERANCES = 100;

/** Evenly spaced values from low to high inclusive (count 1: low alone, which must equal high). */
export interface GridAxis {
  low: number;
  high: number;
  count: number;
}

export interface BasinOptions {
  /** Start apex heights, m (absolute). Default: see defaultBasinAxes. */
  heights?: GridAxis;
  /** Start forward speeds, m/s (grid mode only). */
  speeds?: GridAxis;
  /** 1-D basin: heights only, each at the speed that gives the scenario's start energy. */
  energy?: boolean;
  /** Strides per cell (default 30). */
  strides?: number;
  /** Largest change of apex height between the last two apexes of a converged cell, m (default 1e-4). */
  heightTolerance_m?: number;
  /** Largest change of forward speed between the last two apexes of a converged cell, m/s (default 1e-4). */
  speedTolerance_m_per_s?: number;
}

/**
 * The options that define a basin run's cells, in the form stored in partial results. Plain JSON;
 * every number survives a JSON round trip exactly.
 */
export interface BasinRunOptions {
  mode: 'grid' | 'energy';
  ground: 'flat';
  heights: { low_m: number; high_m: number; count: number };
  /** null in energy mode. */
  speeds: { low_m_per_s: number; high_m_per_s: number; count: number } | null;
  /** The scenario's start energy in energy mode (potential from height 0), null in grid mode. */
  energy_J: number | null;
  strides: number;
  height_tolerance_m: number;
  speed_tolerance_m_per_s: number;
}

/**
 * What the finisher needs of one cell's rollout (one per cell, in cell order):
 * [status, strides_completed, last apex height m, last apex speed m/s, previous apex height m,
 * previous apex speed m/s]; the speeds are null for a cell whose energy leaves no speed.
 */
export type BasinRow = [number, number, number, number | null, number, number | null];

export type CellOutcome = 'converged' | 'wandering' | 'fell';

export interface BasinCell {
  apex_height_m: number;
  /** The start speed; in energy mode null where the energy is below m·g·height (no speed). */
  forward_speed_m_per_s: number | null;
  outcome: CellOutcome;
  strides_completed: number;
  /** Index of the stride that failed (fell), else null. */
  failed_stride: number | null;
  /** Stable code of the failure (fell), else null. */
  reason: string | null;
  /** The last apex reached (the settled apex of a converged cell); null when there was no speed. */
  last_apex: { height_m: number; forward_speed_m_per_s: number } | null;
  /** Energy mode: index into fixed_points of the apex this cell settled at; else null. */
  fixed_point: number | null;
}

export interface BasinFixedPoint {
  apex_height_m: number;
  forward_speed_m_per_s: number;
  /** Converged cells that settled here. */
  cells: number;
}

export interface BasinResult {
  mode: 'grid' | 'energy';
  /** Always flat: the scenario's terrain is not used for a basin. */
  ground: 'flat';
  strides: number;
  tolerance: { height_m: number; forward_speed_m_per_s: number };
  /** Energy mode: the energy every cell starts with, J; grid mode: null. */
  energy_J: number | null;
  heights_m: number[];
  /** Grid mode: the speed axis; energy mode: empty (each cell's speed follows from the energy). */
  speeds_m_per_s: number[];
  /** How `cells` is ordered. */
  cell_order: string;
  cells: BasinCell[];
  counts: { cells: number; converged: number; wandering: number; fell: number };
  /** Fell cells per failure code, codes in the kernel's order. */
  fell_by_reason: Record<string, number>;
  attracted_fraction: number;
  /** Grid mode: attracted_fraction × the sampled rectangle's area, m × m/s. */
  attracted_area_m_m_per_s?: number;
  /** Energy mode: attracted_fraction × the sampled height range, m. */
  attracted_length_m?: number;
  /** Energy mode: the highest / lowest start apex that converged, or null when none did. */
  largest_attracted_apex_height_m?: number | null;
  smallest_attracted_apex_height_m?: number | null;
  /** Energy mode: the distinct stable fixed points the converged cells settled at, by height. */
  fixed_points?: BasinFixedPoint[];
  caution: string;
}

export interface BasinRunControl {
  /** Worker threads (default: the machine's available parallelism); results do not depend on it. */
  workers?: number;
  /** Called as rollouts finish, with rollouts done and the total. */
  onProgress?: (done: number, total: number) => void;
  signal?: AbortSignal;
  /**
   * The batch runner; default: Node's worker pool (runBatchParallel in src/worker/pool.ts). A
   * browser passes its own pool here. Any runner must return what engine.runBatch would.
   */
  runBatch?: (req: BatchRequest, options: { workers?: number; onProgress?: (done: number, total: number) => void; signal?: AbortSignal }) => Promise<BatchResult>;
}

// ---------------------------------------------------------------------------------------------
// Options.

/** The attack angle's touchdown height on flat ground: the lowest apex from which a stride can start. */
export function flatTouchdownHeightM(scenario: Scenario): number {
  return firstTouchdownHeightM(landingLegLength(scenario), scenario.policy.angle, { kind: 'flat' });
}

/** The start section's energy (two-leg walking: the stance leg's spring included). */
export function startEnergyJ(scenario: Scenario): number {
  if (isBiped(scenario)) return sectionEnergy(scenario, startState(scenario));
  const { mass_kg: m, gravity_m_per_s2: g } = scenario.body;
  const { apex_height_m: y, forward_speed_m_per_s: v } = scenario.start;
  return m * g * y + 0.5 * m * v * v;
}

/**
 * Default grid around the scenario's start. Grid mode: heights from the touchdown height y_td to
 * 2·y0 − y_td and speeds from 0.5·v0 to 1.5·v0 (0 to 1 m/s when v0 = 0), 41 × 41. Energy mode:
 * heights from y_td to E/(m·g) (where the speed reaches zero), 101 points.
 */
export function defaultBasinAxes(scenario: Scenario, energy: boolean): { heights: GridAxis; speeds?: GridAxis } {
  const touchdown = flatTouchdownHeightM(scenario);
  const y0 = scenario.start.apex_height_m;
  // two-leg walking: a single-support apex lies at most a stance leg's length high
  const top = isBiped(scenario) && scenario.start.gait === 'walking' ? startLegLength(scenario) : Infinity;
  if (energy) {
    const { mass_kg: m, gravity_m_per_s2: g } = scenario.body;
    return { heights: { low: touchdown, high: Math.min(startEnergyJ(scenario) / (m * g), top), count: 101 } };
  }
  const v0 = scenario.start.forward_speed_m_per_s;
  return {
    heights: { low: touchdown, high: Math.min(2 * y0 - touchdown, top), count: 41 },
    speeds: v0 > 0 ? { low: 0.5 * v0, high: 1.5 * v0, count: 41 } : { low: 0, high: 1, count: 41 },
  };
}

/** Validate the options and fill the defaults: the canonical options of a run. */
export function basinRunOptions(scenario: Scenario, options: BasinOptions = {}): BasinRunOptions {
  const energy = options.energy === true;
  const issues: InputIssue[] = [];
  if (energy && options.speeds !== undefined) {
    issues.push({ path: 'speeds', expected: 'no speed axis in energy mode (the speed follows from the energy)', found: 'a speed axis' });
  }
  const defaults = defaultBasinAxes(scenario, energy);
  const run: BasinRunOptions = {
    mode: energy ? 'energy' : 'grid',
    ground: 'flat',
    heights: axisToHeights(options.heights ?? defaults.heights),
    speeds: energy ? null : axisToSpeeds(options.speeds ?? defaults.speeds!),
    energy_J: energy ? startEnergyJ(scenario) : null,
    strides: options.strides ?? DEFAULT_BASIN_STRIDES,
    height_tolerance_m: options.heightTolerance_m ?? DEFAULT_BASIN_TOLERANCE,
    speed_tolerance_m_per_s: options.speedTolerance_m_per_s ?? DEFAULT_BASIN_TOLERANCE,
  };
  issues.push(...runOptionIssues(run));
  if (issues.length) throw new InputError(issues);
  return run;
}

const axisToHeights = (a: GridAxis) => ({ low_m: a.low, high_m: a.high, count: a.count });
const axisToSpeeds = (a: GridAxis) => ({ low_m_per_s: a.low, high_m_per_s: a.high, count: a.count });

/** Problems with a grid axis (shared with the CLI's `lo:hi:n` parser). */
export function axisIssues(path: string, low: unknown, high: unknown, count: unknown, unit: string, atLeast?: number): InputIssue[] {
  const found = `${describeFound(low)}:${describeFound(high)}:${describeFound(count)}`;
  const issue = (expected: string): InputIssue[] => [{ path, expected, found }];
  if (typeof count !== 'number' || !Number.isInteger(count) || count < 1) {
    return issue(`lo:hi:n with n an integer >= 1 (an empty grid has no cells)`);
  }
  if (count > MAX_BASIN_CELLS) return issue(`lo:hi:n with n <= ${MAX_BASIN_CELLS}`);
  if (typeof low !== 'number' || typeof high !== 'number' || !Number.isFinite(low) || !Number.isFinite(high)) {
    return issue(`lo:hi:n with finite lo and hi (${unit})`);
  }
  if (atLeast !== undefined && low < atLeast) return issue(`lo:hi:n with lo >= ${atLeast} ${unit}`);
  // the scenario's bounds on a start apex (DEVELOPERS.md, scenario files): beyond them the energy
  // and the stance's time scales leave what the integrator resolves
  const bound = unit === 'm' ? BOUNDS.height_m : BOUNDS.forward_speed_m_per_s;
  if (low < bound.low || high > bound.high) return issue(`lo:hi:n with lo and hi each ${boundText(bound, unit === 'm' ? 'an apex height' : 'a forward speed')}, as a scenario's start`);
  if (low > high) return issue(`lo:hi:n with lo <= hi (${unit}); the range is inverted`);
  if (count === 1 && low !== high) return issue(`lo:hi:1 with lo = hi (one value), or n >= 2 for a range`);
  if (count > 1 && low === high) return issue(`lo:hi:n with lo < hi for n >= 2 values (or n = 1 for one value)`);
  return [];
}

/** Every problem with canonical options (also those read back from a partial result). */
function runOptionIssues(run: BasinRunOptions, prefix = ''): InputIssue[] {
  const issues: InputIssue[] = [];
  const at = (name: string) => `${prefix}${name}`;
  if (run.mode !== 'grid' && run.mode !== 'energy') {
    issues.push({ path: at('mode'), expected: '"grid" or "energy"', found: describeFound(run.mode) });
    return issues;
  }
  if (run.ground !== 'flat') issues.push({ path: at('ground'), expected: '"flat"', found: describeFound(run.ground) });
  const h = run.heights as Partial<BasinRunOptions['heights']> | undefined;
  issues.push(...axisIssues(at('heights'), h?.low_m, h?.high_m, h?.count, 'm'));
  if (run.mode === 'grid') {
    const s = run.speeds as Partial<NonNullable<BasinRunOptions['speeds']>> | null | undefined;
    issues.push(...axisIssues(at('speeds'), s?.low_m_per_s, s?.high_m_per_s, s?.count, 'm/s', 0));
    if (run.energy_J !== null) issues.push({ path: at('energy_J'), expected: 'null in grid mode', found: describeFound(run.energy_J) });
  } else {
    if (run.speeds !== null) issues.push({ path: at('speeds'), expected: 'null in energy mode', found: describeFound(run.speeds) });
    if (typeof run.energy_J !== 'number' || !Number.isFinite(run.energy_J)) {
      issues.push({ path: at('energy_J'), expected: 'a finite energy (J)', found: describeFound(run.energy_J) });
    }
  }
  if (issues.length === 0) {
    const cells = run.heights.count * (run.speeds?.count ?? 1);
    if (cells > MAX_BASIN_CELLS) {
      issues.push({ path: at(run.speeds ? 'heights × speeds' : 'heights'), expected: `at most ${MAX_BASIN_CELLS} cells`, found: `${cells} cells` });
    }
  }
  if (typeof run.strides !== 'number' || !Number.isInteger(run.strides) || run.strides < 1 || run.strides > MAX_STRIDES) {
    issues.push({ path: at('strides'), expected: `an integer from 1 to ${MAX_STRIDES}`, found: describeFound(run.strides) });
  }
  for (const [name, unit] of [['height_tolerance_m', 'm'], ['speed_tolerance_m_per_s', 'm/s']] as const) {
    const value = run[name];
    if (typeof value !== 'number' || !Number.isFinite(value) || !(value > 0)) {
      issues.push({ path: at(name), expected: `a number > 0 (${unit})`, found: describeFound(value) });
    }
  }
  return issues;
}

// ---------------------------------------------------------------------------------------------
// Cells.

export function axisValues(low: number, high: number, count: number): number[] {
  if (count === 1) return [low];
  return Array.from({ length: count }, (_, i) => (i === count - 1 ? high : low + (high - low) * (i / (count - 1))));
}

export function basinHeights(run: BasinRunOptions): number[] {
  return axisValues(run.heights.low_m, run.heights.high_m, run.heights.count);
}

export function basinSpeedAxis(run: BasinRunOptions): number[] {
  return run.speeds ? axisValues(run.speeds.low_m_per_s, run.speeds.high_m_per_s, run.speeds.count) : [];
}

export function basinCellCount(run: BasinRunOptions): number {
  return run.heights.count * (run.speeds?.count ?? 1);
}

/** The start apex of cell `index`: heights outer, speeds inner (index = height index × speeds + speed index). */
function cellStarts(scenario: Scenario, run: BasinRunOptions): { height: number; speed: number | null }[] {
  const heights = basinHeights(run);
  if (run.mode === 'grid') {
    const speeds = basinSpeedAxis(run);
    return heights.flatMap((height) => speeds.map((speed) => ({ height, speed })));
  }
  const { mass_kg: m, gravity_m_per_s2: g } = scenario.body;
  const energy = run.energy_J!;
  if (isBiped(scenario)) {
    // the speed the section state (height, the start's offset and leg) has at this energy
    const st = startState(scenario);
    return heights.map((height) => {
      const speed = speedAtEnergy(scenario, energy, { gait: st.gait, height_m: height, offset_m: st.offset_m, leg: st.leg });
      return { height, speed: Number.isFinite(speed) ? speed : null };
    });
  }
  // v = sqrt(2(E − m g y)/m): kinetic energy is what the potential leaves of E
  return heights.map((height) => {
    const kinetic = energy - m * g * height;
    return { height, speed: kinetic >= 0 ? Math.sqrt((2 * kinetic) / m) : null };
  });
}

/** The scenario's model with flat ground (the basin ignores the scenario's terrain). */
function flatModel(scenario: Scenario) {
  const model = buildModel(scenario);
  const fields = model.fields.slice();
  fields[L.M_TERRAIN_KIND] = L.TERRAIN_FLAT;
  fields[L.M_STEPS_N] = 0;
  fields[L.M_TERRAIN_SIGMA] = 0;
  return { ...model, fields, groundHeights: undefined };
}

const finiteOrNull = (x: number): number | null => (Number.isFinite(x) ? x : null);

/** Run the cells of `range` (default: all) and return one row per cell, in order. */
export async function basinRows(
  scenario: Scenario,
  run: BasinRunOptions,
  range?: ShardRange,
  control: BasinRunControl = {},
): Promise<BasinRow[]> {
  const all = cellStarts(scenario, run);
  const { start, end } = range ?? { start: 0, end: all.length };
  const cells = all.slice(start, end);
  const rows: BasinRow[] = new Array(cells.length);
  const runnable: number[] = []; // positions in `cells` with a start speed
  cells.forEach((cell, i) => {
    if (cell.speed === null) rows[i] = [L.STATUS_LEG_NOT_PLACEABLE, 0, cell.height, null, cell.height, null];
    else runnable.push(i);
  });
  if (runnable.length > 0) {
    const inputs = new Float64Array(runnable.length * L.I_SIZE); // (runnable × I_SIZE)
    const st = isBiped(scenario) ? startState(scenario) : null;
    runnable.forEach((i, r) =>
      inputs.set(
        st // two-leg model: the cell's section state with the start's offset and leg
          ? sectionInput({ ...st, height_m: cells[i].height, speed_m_per_s: cells[i].speed! })
          : rolloutInput(cells[i].height, cells[i].speed!),
        r * L.I_SIZE,
      ),
    );
    const runBatch = control.runBatch ?? (await import('../../worker/pool.js')).runBatchParallel;
    const batch = await runBatch(
      { model: flatModel(scenario), inputs, strides: run.strides },
      { workers: control.workers, onProgress: control.onProgress, signal: control.signal },
    );
    const s = batch.summaries; // (runnable × S_SIZE)
    runnable.forEach((i, r) => {
      const at = r * L.S_SIZE;
      const lastSpeed = finiteOrNull(s[at + L.S_FINAL_SPEED]);
      const previousSpeed = finiteOrNull(s[at + L.S_PREVIOUS_SPEED]);
      rows[i] = [
        s[at + L.S_STATUS],
        s[at + L.S_STRIDES_COMPLETED],
        finiteOrNull(s[at + L.S_FINAL_HEIGHT]) ?? cells[i].height,
        lastSpeed,
        finiteOrNull(s[at + L.S_PREVIOUS_HEIGHT]) ?? cells[i].height,
        previousSpeed,
      ];
    });
  }
  return rows;
}

// ---------------------------------------------------------------------------------------------
// The finisher.

/** Check canonical options read from anywhere (a partial result file included). */
export function checkBasinRunOptions(options: Record<string, unknown>, prefix = 'options.'): BasinRunOptions {
  if (typeof options !== 'object' || options === null || Array.isArray(options)) {
    throw new InputError([{ path: prefix.replace(/\.$/, ''), expected: 'the options of a basin run (an object)', found: describeFound(options) }]);
  }
  const run = options as unknown as BasinRunOptions;
  const issues = runOptionIssues(run, prefix);
  if (issues.length) throw new InputError(issues);
  return run;
}

function checkRows(rows: unknown[], run: BasinRunOptions): BasinRow[] {
  const total = basinCellCount(run);
  if (!Array.isArray(rows)) throw new InputError([{ path: 'rows', expected: 'an array of rows', found: describeFound(rows) }]);
  if (rows.length !== total) {
    throw new InputError([{ path: 'rows', expected: `${total} rows (one per cell)`, found: `${rows.length}` }]);
  }
  const number = (x: unknown) => typeof x === 'number' && Number.isFinite(x);
  const numberOrNull = (x: unknown) => x === null || number(x);
  rows.forEach((row, i) => {
    const r = row as unknown[];
    const ok =
      Array.isArray(r) &&
      r.length === 6 &&
      Number.isInteger(r[0]) && (r[0] as number) >= 0 && (r[0] as number) < L.STATUS_COUNT &&
      Number.isInteger(r[1]) && (r[1] as number) >= 0 && (r[1] as number) <= run.strides &&
      number(r[2]) && numberOrNull(r[3]) && number(r[4]) && numberOrNull(r[5]);
    if (!ok) {
      throw new InputError([
        { path: `rows[${i}]`, expected: '[status, strides completed, last height, last speed, previous height, previous speed]', found: describeFound(row) },
      ]);
    }
  });
  return rows as BasinRow[];
}

/**
 * The basin result from the rows of every cell (in cell order) and the canonical options: exactly
 * what a one-machine run returns, whether the rows came from one run or from merged shards.
 */
export async function finishBasin(scenario: Scenario, options: Record<string, unknown>, rows: unknown[]): Promise<BasinResult> {
  const run = checkBasinRunOptions(options);
  const checked = checkRows(rows, run);
  const starts = cellStarts(scenario, run);
  const tolH = run.height_tolerance_m;
  const tolV = run.speed_tolerance_m_per_s;

  const cells: BasinCell[] = checked.map(([status, completed, lastH, lastV, prevH, prevV], i) => {
    const failed = status !== L.STATUS_OK;
    const settled =
      !failed && lastV !== null && prevV !== null && Math.abs(lastH - prevH) <= tolH && Math.abs(lastV - prevV) <= tolV;
    return {
      apex_height_m: starts[i].height,
      forward_speed_m_per_s: starts[i].speed,
      outcome: failed ? 'fell' : settled ? 'converged' : 'wandering',
      strides_completed: completed,
      failed_stride: failed ? completed : null,
      reason: failed ? STATUS_NAMES[status] : null,
      last_apex: lastV === null ? null : { height_m: lastH, forward_speed_m_per_s: lastV },
      fixed_point: null,
    };
  });

  const counts = { cells: cells.length, converged: 0, wandering: 0, fell: 0 };
  const fellByCode = new Map<number, number>();
  checked.forEach(([status], i) => {
    counts[cells[i].outcome]++;
    if (status !== L.STATUS_OK) fellByCode.set(status, (fellByCode.get(status) ?? 0) + 1);
  });
  const fell_by_reason: Record<string, number> = {};
  for (const code of [...fellByCode.keys()].sort((a, b) => a - b)) fell_by_reason[STATUS_NAMES[code]] = fellByCode.get(code)!;
  const attracted_fraction = counts.converged / counts.cells;

  const heights_m = basinHeights(run);
  const heightRange = run.heights.high_m - run.heights.low_m;
  const result: BasinResult = {
    mode: run.mode,
    ground: 'flat',
    strides: run.strides,
    tolerance: { height_m: tolH, forward_speed_m_per_s: tolV },
    energy_J: run.energy_J,
    heights_m,
    speeds_m_per_s: basinSpeedAxis(run),
    cell_order:
      run.mode === 'grid'
        ? 'row-major by height: cell index = height index × speeds_m_per_s.length + speed index (speed varies fastest)'
        : 'one cell per height, in the order of heights_m',
    cells,
    counts,
    fell_by_reason,
    attracted_fraction,
    caution: SAFETY_CAUTION,
  };
  if (run.mode === 'grid') {
    const speedRange = run.speeds!.high_m_per_s - run.speeds!.low_m_per_s;
    result.attracted_area_m_m_per_s = attracted_fraction * heightRange * speedRange;
  } else {
    result.attracted_length_m = attracted_fraction * heightRange;
    let largest: number | null = null;
    let smallest: number | null = null;
    for (const cell of cells) {
      if (cell.outcome !== 'converged') continue;
      if (largest === null || cell.apex_height_m > largest) largest = cell.apex_height_m;
      if (smallest === null || cell.apex_height_m < smallest) smallest = cell.apex_height_m;
    }
    result.largest_attracted_apex_height_m = largest;
    result.smallest_attracted_apex_height_m = smallest;
    result.fixed_points = groupFixedPoints(cells, checked, tolH);
  }
  return result;
}

// At one energy the stable fixed points of the apex map are isolated: the converged cells' last
// apexes cluster around them (each within about tolerance / (1 − |eigenvalue|) of its point).
// Sort by height and split where consecutive settled heights differ by more than
// SAME_FIXED_POINT_TOLERANCES × tolerance; each cluster is shown by its best-settled member
// (smallest last change of height). Writes each converged cell's `fixed_point` index.
function groupFixedPoints(cells: BasinCell[], rows: BasinRow[], tolH: number): BasinFixedPoint[] {
  const members = cells
    .map((cell, i) => ({ cell, i }))
    .filter(({ cell }) => cell.outcome === 'converged')
    .sort((a, b) => a.cell.last_apex!.height_m - b.cell.last_apex!.height_m || a.i - b.i);
  const groups: (typeof members)[] = [];
  for (const member of members) {
    const group = groups[groups.length - 1];
    const gap = group ? member.cell.last_apex!.height_m - group[group.length - 1].cell.last_apex!.height_m : Infinity;
    if (gap > SAME_FIXED_POINT_TOLERANCES * tolH) groups.push([member]);
    else group.push(member);
  }
  return groups.map((group, index) => {
    let best = group[0];
    const change = (m: (typeof members)[number]) => Math.abs(rows[m.i][2] - rows[m.i][4]);
    for (const member of group) {
      if (change(member) < change(best) || (change(member) === change(best) && member.i < best.i)) best = member;
      member.cell.fixed_point = index;
    }
    return {
      apex_height_m: best.cell.last_apex!.height_m,
      forward_speed_m_per_s: best.cell.last_apex!.forward_speed_m_per_s,
      cells: group.length,
    };
  });
}

/** The basin of attraction in one go: all cells on this machine, then the finisher. */
export async function basinOfAttraction(
  scenario: Scenario,
  options: BasinOptions = {},
  control: BasinRunControl = {},
): Promise<BasinResult> {
  const run = basinRunOptions(scenario, options);
  const rows = await basinRows(scenario, run, undefined, control);
  return finishBasin(scenario, run as unknown as Record<string, unknown>, rows);
}

/** Words for a failure code (for the terminal view). */
export function reasonText(code: string): string {
  const status = Object.entries(STATUS_NAMES).find(([, name]) => name === code)?.[0];
  return status === undefined ? code : STATUS_TEXT[Number(status)];
}

// The stance leg's rest length at a two-leg walking start.
function startLegLength(scenario: Scenario): number {
  if (!isBiped(scenario)) return scenario.body.leg_length_m;
  return legParameters(scenario)[scenario.start.leg === 'right' ? 1 : 0].length_m;
}
