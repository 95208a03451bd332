// Basin of attraction of a lateral gait: a grid of perturbations of the heading to the body axis
// and of the angular velocity at the left touchdown, all at the gait's energy (the speed follows
// from it), each run for N strides. Energy is conserved and the absolute heading is neutral, so
// "attracted" means back on the same gait in (heading to the body axis, angular velocity); the
// heading each cell ends on is reported as its permanent turn.

import * as L from '../../../assembly/layout.js';
import type { Engine } from '../engine.js';
import { InputError } from '../errors.js';
import { STATUS_NAMES } from '../model.js';
import { buildLateralModel, type LateralScenario, lateralInput, type SectionState, sectionOf, wrapAngle } from '../models/lateral.js';
import { speedAtEnergy } from './lateral.js';
import { scenarioGait } from './recover.js';

const DEG = Math.PI / 180;

export interface LateralAxis {
  low: number;
  high: number;
  count: number;
}

export interface LateralBasinOptions {
  /** Heading-to-body errors from the gait's, deg. */
  headings?: LateralAxis;
  /** Angular-velocity errors from the gait's, deg/s. */
  rates?: LateralAxis;
  strides?: number;
  /** Converged when the last left touchdown is within this of the gait in heading to the body (deg) and angular velocity (deg/s). */
  tolerance?: number;
}

export type LateralBasinOutcome = 'converged' | 'wandering' | 'fell' | 'no_speed';

export interface LateralBasinCell {
  heading_error_deg: number;
  rate_error_deg_per_s: number;
  outcome: LateralBasinOutcome;
  /** Failure status, when it fell. */
  reason: string | null;
  /** Heading at the last left touchdown reached minus the gait's, deg (the permanent turn when converged). */
  turn_deg: number | null;
}

export interface LateralBasinResult {
  gait: { speed_m_per_s: number; heading_to_body_deg: number; angular_velocity_deg_per_s: number; energy_J: number; stability: string };
  headings_deg: number[];
  rates_deg_per_s: number[];
  strides: number;
  tolerance: number;
  /** Row by row: heading error outer, angular-velocity error inner (fastest). */
  cells: LateralBasinCell[];
  counts: Record<LateralBasinOutcome, number>;
  attracted_fraction: number;
}

function axisValues(a: LateralAxis): number[] {
  if (a.count === 1) return [a.low];
  return Array.from({ length: a.count }, (_, i) => a.low + ((a.high - a.low) * i) / (a.count - 1));
}

/** Everything that defines a basin's list of cells, defaults resolved (what every shard must agree on). */
export interface LateralBasinRun {
  headings: LateralAxis;
  rates: LateralAxis;
  strides: number;
  tolerance: number;
}

interface Setup {
  gait: LateralBasinResult['gait'];
  run: LateralBasinRun;
  headings: number[];
  rates: number[];
}

function setup(engine: Engine, s: LateralScenario, options: LateralBasinOptions): Setup {
  const { gait } = scenarioGait(engine, s, 'basin');
  const d0 = gait.heading_to_body_deg;
  const w0 = gait.angular_velocity_deg_per_s;
  const energy = 0.5 * s.body.mass_kg * gait.speed_m_per_s ** 2 + 0.5 * s.body.moment_of_inertia_kg_m2 * (w0 * DEG) ** 2;
  // default: ±30 deg of heading, and ± a quarter of v/L0 in angular velocity (a rotation of a
  // quarter radian per leg length travelled), 21 x 21
  const rateSpan = (0.25 * gait.speed_m_per_s) / s.body.leg_length_m / DEG;
  const run: LateralBasinRun = {
    headings: options.headings ?? { low: -30, high: 30, count: 21 },
    rates: options.rates ?? { low: -rateSpan, high: rateSpan, count: 21 },
    strides: options.strides ?? 30,
    tolerance: options.tolerance ?? 0.1,
  };
  const headings = axisValues(run.headings);
  const rates = axisValues(run.rates);
  if (headings.some((h) => Math.abs(d0 + h) >= 90)) {
    throw new InputError([
      {
        path: '--headings',
        expected: `heading errors that keep the heading to the body axis inside (-90, 90) deg (the gait's is ${d0.toPrecision(6)} deg)`,
        found: `${headings[0]} to ${headings[headings.length - 1]}`,
      },
    ]);
  }
  return {
    gait: { speed_m_per_s: gait.speed_m_per_s, heading_to_body_deg: d0, angular_velocity_deg_per_s: w0, energy_J: energy, stability: gait.stability },
    run,
    headings,
    rates,
  };
}

/** The run's options with its defaults resolved (the gait's energy and speed set the default rates). */
export function lateralBasinRun(engine: Engine, s: LateralScenario, options: LateralBasinOptions = {}): LateralBasinRun {
  return setup(engine, s, options).run;
}

export function lateralBasinCellCount(run: LateralBasinRun): number {
  return run.headings.count * run.rates.count;
}

/** The cells of `range` (heading error outer, angular-velocity error inner). */
export function lateralBasinRows(engine: Engine, s: LateralScenario, run: LateralBasinRun, range: { start: number; end: number }): LateralBasinCell[] {
  const { gait, headings, rates } = setup(engine, s, run);
  const d0 = gait.heading_to_body_deg;
  const w0 = gait.angular_velocity_deg_per_s;
  const model = buildLateralModel(s);
  const cells: LateralBasinCell[] = [];
  const states: (SectionState | null)[] = [];
  for (let i = range.start; i < range.end; i++) {
    const omega = (w0 + rates[i % rates.length]) * DEG;
    const speed = speedAtEnergy(s, gait.energy_J, omega);
    states.push(Number.isFinite(speed) ? { speed, delta: (d0 + headings[Math.floor(i / rates.length)]) * DEG, omega, heading: 0 } : null);
  }
  const runnable = states.filter((x): x is SectionState => x !== null);
  const inputs = new Float64Array(runnable.length * L.LI_SIZE);
  runnable.forEach((st, i) => inputs.set(lateralInput(st), i * L.LI_SIZE));
  const r = runnable.length ? engine.runLateral([model], inputs, run.strides) : undefined;
  let j = 0;
  states.forEach((st, k) => {
    const i = range.start + k;
    const h = headings[Math.floor(i / rates.length)];
    const w = rates[i % rates.length];
    if (st === null || !r) {
      cells.push({ heading_error_deg: h, rate_error_deg_per_s: w, outcome: 'no_speed', reason: null, turn_deg: null });
      return;
    }
    const sum = r.summaries.subarray(j * L.LS_SIZE, (j + 1) * L.LS_SIZE);
    j++;
    const status = sum[L.LS_STATUS];
    const fin = sectionOf(sum[L.LS_THETA], sum[L.LS_VX], sum[L.LS_VY], sum[L.LS_OMEGA]);
    let outcome: LateralBasinOutcome;
    if (status !== L.STATUS_OK) outcome = 'fell';
    else if (Math.abs(wrapAngle(fin.delta - d0 * DEG)) / DEG <= run.tolerance && Math.abs(fin.omega / DEG - w0) <= run.tolerance) outcome = 'converged';
    else outcome = 'wandering';
    cells.push({
      heading_error_deg: h,
      rate_error_deg_per_s: w,
      outcome,
      reason: status === L.STATUS_OK ? null : (STATUS_NAMES[status] ?? `status_${status}`),
      turn_deg: sum[L.LS_STRIDES_COMPLETED] > 0 ? wrapAngle(fin.heading) / DEG : null,
    });
  });
  return cells;
}

/** The result from every cell's row, in order (the one-machine run and a merge both end here). */
export function finishLateralBasin(engine: Engine, s: LateralScenario, run: LateralBasinRun, cells: readonly LateralBasinCell[]): LateralBasinResult {
  const { gait, headings, rates } = setup(engine, s, run);
  if (cells.length !== headings.length * rates.length) {
    throw new InputError([{ path: 'rows', expected: `${headings.length * rates.length} cells`, found: `${cells.length}` }]);
  }
  const counts: Record<LateralBasinOutcome, number> = { converged: 0, wandering: 0, fell: 0, no_speed: 0 };
  for (const c of cells) counts[c.outcome]++;
  return {
    gait,
    headings_deg: headings,
    rates_deg_per_s: rates,
    strides: run.strides,
    tolerance: run.tolerance,
    cells: [...cells],
    counts,
    attracted_fraction: counts.converged / cells.length,
  };
}

export function lateralBasin(engine: Engine, s: LateralScenario, options: LateralBasinOptions = {}): LateralBasinResult {
  const run = lateralBasinRun(engine, s, options);
  return finishLateralBasin(engine, s, run, lateralBasinRows(engine, s, run, { start: 0, end: lateralBasinCellCount(run) }));
}

/** `pronk merge`'s finisher: the options as a partial result holds them. */
export async function finishLateralBasinMerge(s: LateralScenario, options: unknown, rows: readonly unknown[]): Promise<LateralBasinResult> {
  const { loadEngine } = await import('../engine.js');
  return finishLateralBasin(await loadEngine(), s, checkLateralBasinRun(options), rows as LateralBasinCell[]);
}

/** A partial result's options, checked (an InputError naming the field). */
export function checkLateralBasinRun(options: unknown): LateralBasinRun {
  const o = (options ?? {}) as Record<string, unknown>;
  const issues: { path: string; expected: string; found: string }[] = [];
  const axis = (v: unknown, path: string): LateralAxis => {
    const a = (v ?? {}) as Record<string, unknown>;
    const ok =
      typeof a.low === 'number' && Number.isFinite(a.low) && typeof a.high === 'number' && Number.isFinite(a.high) && a.low <= a.high &&
      typeof a.count === 'number' && Number.isInteger(a.count) && a.count >= 1 && a.count <= 1_000_000;
    if (!ok) issues.push({ path, expected: '{low, high, count} with low <= high and count an integer from 1 to 1000000', found: JSON.stringify(v) ?? 'missing' });
    return a as unknown as LateralAxis;
  };
  const run = { headings: axis(o.headings, 'headings'), rates: axis(o.rates, 'rates'), strides: o.strides as number, tolerance: o.tolerance as number };
  if (!(Number.isInteger(run.strides) && run.strides >= 1 && run.strides <= 1_000_000)) issues.push({ path: 'strides', expected: 'an integer from 1 to 1000000', found: JSON.stringify(o.strides) ?? 'missing' });
  if (!(typeof run.tolerance === 'number' && run.tolerance > 0 && Number.isFinite(run.tolerance))) issues.push({ path: 'tolerance', expected: 'a number > 0', found: JSON.stringify(o.tolerance) ?? 'missing' });
  if (!issues.length && run.headings.count * run.rates.count > 1_000_000) issues.push({ path: 'headings × rates', expected: 'at most 1000000 cells', found: String(run.headings.count * run.rates.count) });
  if (issues.length) throw new InputError(issues);
  return run;
}
