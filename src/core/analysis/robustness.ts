// `robustness`: Monte Carlo over random terrain. R rollouts of S strides from the scenario's start
// apex, rollout r on terrain stream r of one seed (common random numbers: the same seed gives the
// same R terrains to every policy compared, so comparisons and an optimizer's objective are
// deterministic). The scenario's own terrain is replaced.
//
// The work splits into per-rollout rows (what `--shard i/n` writes) and a finisher that turns the
// rows of all rollouts into the statistics; a one-machine run goes through the same finisher, so a
// run joined from shards is bit-identical to it.

import * as L from '../../../assembly/layout.js';
import { type BatchRequest, type BatchResult, type ModelBlock, loadEngine } from '../engine.js';
import { InputError, describeFound, type InputIssue } from '../errors.js';
import { eachInTurn } from '../in-turn.js';
import { accuracyReport, type AccuracyReport } from '../accuracy.js';
import { calibratedScenario, type CalibrationRollouts } from '../accuracy-calibration.js';
import { buildModel, startInput, STATUS_NAMES } from '../model.js';
import { kindOf } from '../models/kind.js';
import { SAFETY_CAUTION } from '../safety.js';
import { BOUNDS, MAX_STRIDES, boundText, type Scenario } from '../scenario.js';
import type { ShardRange } from '../shard.js';
import { wilsonInterval } from '../stats.js';

export type RandomTerrainKind = 'random_walk' | 'random_heights';
export const RANDOM_TERRAIN_KINDS: readonly RandomTerrainKind[] = ['random_walk', 'random_heights'];

/** Rollouts per run at most: keeps the input and summary buffers of one batch modest. */
export const MAX_ROLLOUTS = 10_000_000;

export interface RobustnessOptions {
  rollouts: number;
  /** Terrain standard deviation, m: the Gaussian step (random walk) or the height (random heights). */
  sigma_m: number;
  /** Terrain seed, a safe integer >= 0. */
  seed: number;
  /** Strides per rollout; default the scenario's `strides`. */
  strides?: number;
  /** Default 'random_walk'. */
  terrain?: RandomTerrainKind;
  /** Apex height the RMS is taken about (absolute, m); default the scenario's start apex. */
  target_height_m?: number;
  /** Forward speed the RMS is taken about, m/s; default the scenario's start speed. */
  target_speed_m_per_s?: number;
}

/** Everything that defines the list of rollouts and their statistics, defaults filled. */
export interface CanonicalRobustnessOptions {
  rollouts: number;
  sigma_m: number;
  seed: number;
  strides: number;
  terrain: RandomTerrainKind;
  target_height_m: number;
  target_speed_m_per_s: number;
}

/** How the run is spread over threads; never changes the result. */
export interface RobustnessExecution {
  /** Worker threads for Node's pool (default 1: this thread). */
  workers?: number;
  /** Runs the batch instead of Node's worker pool (the browser workbench passes its own pool). */
  runBatch?: (req: BatchRequest) => Promise<BatchResult>;
  onProgress?: (done: number, total: number) => void;
  signal?: AbortSignal;
}

/** One rollout, as much as the finisher needs (numbers survive JSON exactly). */
export interface RobustnessRow {
  /** STATUS_NAMES code of the rollout: 'completed' or the failure. */
  status: string;
  strides_completed: number;
  /** Sum over completed strides of (apex height − target)², m². */
  sum_sq_height_error_m2: number;
  /** Sum over completed strides of (apex speed − target)², (m/s)². */
  sum_sq_speed_error_m2_per_s2: number;
}

export interface SurvivalAfterStride {
  /** 0-based stride index. */
  stride: number;
  /** Rollouts still running after this stride (they completed stride + 1 strides or more). */
  running: number;
  survival: number;
  wilson95: [number, number];
}

export interface RobustnessResult {
  rollouts: number;
  /** Rollouts that completed every stride. */
  survived: number;
  survival: number;
  /** Wilson 1927 score interval at 95 % for the survival fraction. */
  wilson95: [number, number];
  mean_strides_completed: number;
  strides: number;
  terrain: { kind: RandomTerrainKind; sigma_m: number; seed: number; streams: string };
  start: { apex_height_m: number; forward_speed_m_per_s: number; gait?: string; offset_m?: number; leg?: string };
  target: { apex_height_m: number; forward_speed_m_per_s: number };
  /** Only when the scenario set integrator.apex_accuracy_m: the accuracy and the tolerances it gave. */
  integrator?: AccuracyReport;
  /** Strides completed over all rollouts: the samples of the two RMS values. */
  strides_completed_total: number;
  /** sqrt(Σ (apex height − target)² / strides_completed_total) over all completed strides; null if none. */
  apex_height_rms_m: number | null;
  /** The same for the apex forward speed; null if no stride completed. */
  forward_speed_rms_m_per_s: number | null;
  rms_definition: string;
  /** Rollouts ended by each failure code (STATUS_NAMES), zeros included. */
  failures: Record<string, number>;
  survival_by_stride: SurvivalAfterStride[];
  note: string;
  caution: string;
}

/** Option names as shown in messages (the CLI passes its flags). */
export interface RobustnessOptionNames {
  rollouts: string;
  sigma_m: string;
  seed: string;
  strides: string;
  terrain: string;
  target_height_m: string;
  target_speed_m_per_s: string;
}

const DEFAULT_NAMES: RobustnessOptionNames = {
  rollouts: 'rollouts',
  sigma_m: 'sigma_m',
  seed: 'seed',
  strides: 'strides',
  terrain: 'terrain',
  target_height_m: 'target_height_m',
  target_speed_m_per_s: 'target_speed_m_per_s',
};

export const RMS_DEFINITION =
  'over every completed stride of every rollout, sqrt(sum of (apex after the stride - target)^2 / strides completed); ' +
  'apex heights are absolute, so on a random walk the RMS includes the ground drifting away from the target';

/** Check the options and fill the defaults; every problem is reported, each naming the option. */
export function canonicalRobustnessOptions(
  scenario: Scenario,
  options: RobustnessOptions,
  names: RobustnessOptionNames = DEFAULT_NAMES,
): CanonicalRobustnessOptions {
  const issues: InputIssue[] = [];
  const check = (ok: boolean, path: string, expected: string, found: unknown) => {
    if (!ok) issues.push({ path, expected, found: describeFound(found) });
  };
  const { rollouts, sigma_m, seed } = options;
  const strides = options.strides ?? scenario.strides;
  const terrain = options.terrain ?? 'random_walk';
  const targetHeight = options.target_height_m ?? scenario.start.apex_height_m;
  const targetSpeed = options.target_speed_m_per_s ?? scenario.start.forward_speed_m_per_s;
  check(Number.isInteger(rollouts) && rollouts >= 1 && rollouts <= MAX_ROLLOUTS, names.rollouts, `a positive integer no larger than ${MAX_ROLLOUTS}`, rollouts);
  // the scenario's own bounds: a target or a sigma outside them makes every error sum overflow, and
  // the message would blame the sums instead of the option
  const within = (x: unknown, b: { low: number; high: number }) => typeof x === 'number' && x >= b.low && x <= b.high;
  check(within(sigma_m, BOUNDS.sigma_m), names.sigma_m, boundText(BOUNDS.sigma_m, 'a standard deviation'), sigma_m);
  check(Number.isSafeInteger(seed) && seed >= 0, names.seed, `an integer from 0 to ${Number.MAX_SAFE_INTEGER}`, seed);
  check(Number.isInteger(strides) && strides >= 1 && strides <= MAX_STRIDES, names.strides, `a positive integer no larger than ${MAX_STRIDES}`, strides);
  check(RANDOM_TERRAIN_KINDS.includes(terrain), names.terrain, `one of ${RANDOM_TERRAIN_KINDS.join(', ')}`, terrain);
  check(within(targetHeight, BOUNDS.height_m), names.target_height_m, boundText(BOUNDS.height_m, 'an apex height'), targetHeight);
  check(within(targetSpeed, BOUNDS.forward_speed_m_per_s), names.target_speed_m_per_s, boundText(BOUNDS.forward_speed_m_per_s, 'a forward speed'), targetSpeed);
  if (issues.length) throw new InputError(issues);
  return {
    rollouts,
    sigma_m,
    seed,
    strides,
    terrain,
    target_height_m: targetHeight,
    target_speed_m_per_s: targetSpeed,
  };
}

/** The scenario's model on the random terrain of the options, RMS about their target. */
export function robustnessModel(scenario: Scenario, options: CanonicalRobustnessOptions): ModelBlock {
  const base = buildModel(scenario);
  const model: ModelBlock = { ...base, fields: base.fields.slice(), groundHeights: undefined };
  const f = model.fields;
  f[L.M_TERRAIN_KIND] = options.terrain === 'random_walk' ? L.TERRAIN_RANDOM_WALK : L.TERRAIN_INDEPENDENT;
  f[L.M_TERRAIN_SIGMA] = options.sigma_m;
  f[L.M_TERRAIN_SEED] = options.seed;
  f[L.M_STEPS_N] = 0;
  f[L.M_TARGET_HEIGHT] = options.target_height_m;
  f[L.M_TARGET_SPEED] = options.target_speed_m_per_s;
  return model;
}

/** Rollouts of the run (streams 0, 1, ...) that an apex accuracy is calibrated on (accuracy-calibration.ts). */
export const CALIBRATION_ROLLOUTS = 4;

/** The calibration of integrator.apex_accuracy_m on the first rollouts of this run, whatever shard runs. */
function robustnessCalibration(scenario: Scenario, options: CanonicalRobustnessOptions): CalibrationRollouts {
  const n = Math.min(CALIBRATION_ROLLOUTS, options.rollouts);
  const inputs = new Float64Array(n * L.I_SIZE);
  const row = startInput(scenario);
  for (let i = 0; i < n; i++) {
    row[L.I_STREAM] = i;
    inputs.set(row, i * L.I_SIZE);
  }
  return { model: robustnessModel(scenario, options), inputs, strides: options.strides, key: 'robustness' };
}

/**
 * The scenario the rollouts run: with integrator.apex_accuracy_m, its tolerances calibrated on the
 * run's own first rollouts (accuracy-calibration.ts); otherwise the scenario itself.
 */
export async function robustnessScenario(scenario: Scenario, options: RobustnessOptions) {
  const canonical = canonicalRobustnessOptions(scenario, options);
  return calibratedScenario(scenario, (s) => robustnessCalibration(s, canonical));
}

/** Rows of rollouts [range.start, range.end) (all of them by default); rollout r runs on stream r. */
export async function robustnessRows(
  given: Scenario,
  options: RobustnessOptions,
  range?: ShardRange,
  execution: RobustnessExecution = {},
): Promise<RobustnessRow[]> {
  const summaries = await robustnessSummaries(given, options, range, execution);
  return rowsOf(summaries, summaries.length / L.S_SIZE);
}

/**
 * The kernel's summaries (count x S_SIZE, S_* in layout.ts) of rollouts [range.start, range.end),
 * what robustnessRows makes rows of: finishRobustness takes them as they are, so a run on one
 * machine makes no object per rollout (20,000 of them, with their numbers boxed, cost about 20 ms
 * of allocation and garbage collection in a one-shot `pronk robustness`).
 */
export async function robustnessSummaries(
  given: Scenario,
  options: RobustnessOptions,
  range?: ShardRange,
  execution: RobustnessExecution = {},
): Promise<Float64Array> {
  const canonical = canonicalRobustnessOptions(given, options);
  const start = range?.start ?? 0;
  const end = range?.end ?? canonical.rollouts;
  const count = end - start;
  if (count <= 0) return new Float64Array(0);
  const { scenario } = await robustnessScenario(given, options);
  const inputs = inputsOf(scenario, start, count);
  const req: BatchRequest = { model: robustnessModel(scenario, canonical), inputs, strides: canonical.strides };
  let batch: BatchResult;
  if (execution.runBatch) {
    batch = await execution.runBatch(req);
  } else {
    // loaded on demand: Node's pool pulls in node:worker_threads
    const { runBatchParallel } = await import('../../worker/pool.js');
    batch = await runBatchParallel(req, { workers: execution.workers ?? 1, onProgress: execution.onProgress, signal: execution.signal });
  }
  return batch.summaries;
}

// The per-rollout loops live in plain (not async) functions: V8 replaces a long-running loop by
// optimized code on the fly (on-stack replacement) there, not inside an async function, where
// 20,000 rows ran in the interpreter (about 40 ms of a one-shot `pronk robustness`).

/** (count x I_SIZE) inputs of rollouts start, start + 1, ...: the kind's start section, stream = global rollout index. */
function inputsOf(scenario: Scenario, start: number, count: number): Float64Array {
  const inputs = new Float64Array(count * L.I_SIZE);
  fillInputs(inputs, startInput(scenario), start, count);
  return inputs;
}

/** Rows 0 .. count - 1 of `inputs`: `row` (a start input) with streams start, start + 1, ... */
function fillInputs(inputs: Float64Array, row: Float64Array, start: number, count: number): void {
  for (let i = 0; i < count; i++) {
    row[L.I_STREAM] = start + i;
    inputs.set(row, i * L.I_SIZE);
  }
}

/** The rows of `count` rollout summaries (count x S_SIZE). */
function rowsOf(summaries: Float64Array, count: number): RobustnessRow[] {
  const rows: RobustnessRow[] = new Array(count);
  for (let i = 0, at = 0; i < count; i++, at += L.S_SIZE) {
    const status = summaries[at + L.S_STATUS];
    rows[i] = {
      status: STATUS_NAMES[status] ?? `status_${status}`,
      strides_completed: summaries[at + L.S_STRIDES_COMPLETED],
      sum_sq_height_error_m2: summaries[at + L.S_SUM_SQ_HEIGHT_ERROR],
      sum_sq_speed_error_m2_per_s2: summaries[at + L.S_SUM_SQ_SPEED_ERROR],
    };
  }
  return rows;
}

/** The finisher's sums, added rollout by rollout in rollout order (rows, summaries, or a run's chunks as they come). */
interface Tally {
  survived: number;
  stridesTotal: number;
  sumSqHeight: number;
  sumSqSpeed: number;
  /** Failures by status name, every status the kind can report (0 when none). */
  failures: Record<string, number>;
  /** (strides) rollouts that completed exactly s + 1 strides, made cumulative by resultOf. */
  runningAfter: number[];
}

function emptyTally(scenario: Scenario, strides: number): Tally {
  const failures: Record<string, number> = {};
  // the statuses the scenario's model kind can report
  const statuses = kindOf(scenario) === 'biped' ? L.STATUS_COUNT_BIPED : L.STATUS_COUNT_SLIP;
  for (let code = 0; code < statuses; code++) if (code !== L.STATUS_OK) failures[STATUS_NAMES[code]] = 0;
  return { survived: 0, stridesTotal: 0, sumSqHeight: 0, sumSqSpeed: 0, failures, runningAfter: new Array<number>(strides).fill(0) };
}

/**
 * Adds rows (from files or a run) or a run's own summaries (count x S_SIZE) to the tally, in
 * order: the same sums either way.
 */
function addToTally(t: Tally, rows: readonly RobustnessRow[] | Float64Array): void {
  const completedName = STATUS_NAMES[L.STATUS_OK];
  const add = (status: string, strides: number, height: number, speed: number) => {
    if (status === completedName) t.survived++;
    else t.failures[status]++;
    t.stridesTotal += strides;
    t.sumSqHeight += height;
    t.sumSqSpeed += speed;
    if (strides > 0) t.runningAfter[strides - 1]++;
  };
  if (rows instanceof Float64Array) {
    for (let at = 0; at < rows.length; at += L.S_SIZE) {
      const code = rows[at + L.S_STATUS];
      add(STATUS_NAMES[code] ?? `status_${code}`, rows[at + L.S_STRIDES_COMPLETED], rows[at + L.S_SUM_SQ_HEIGHT_ERROR], rows[at + L.S_SUM_SQ_SPEED_ERROR]);
    }
  } else {
    for (const row of rows) add(row.status, row.strides_completed, row.sum_sq_height_error_m2, row.sum_sq_speed_error_m2_per_s2);
  }
}

/**
 * The statistics of a full list of rollout rows (from one run, or joined from shards in order),
 * or of a whole run's summaries (robustnessSummaries). Async so that callers treat every finisher alike.
 */
export async function finishRobustness(
  scenario: Scenario,
  options: RobustnessOptions,
  rows: readonly RobustnessRow[] | Float64Array,
): Promise<RobustnessResult> {
  const o = canonicalRobustnessOptions(scenario, options);
  if (rows instanceof Float64Array) {
    if (rows.length !== o.rollouts * L.S_SIZE) throw new Error(`finishRobustness: ${rows.length / L.S_SIZE} rollout summaries for ${o.rollouts} rollouts`);
  } else {
    checkRows(rows, o);
  }
  const t = emptyTally(scenario, o.strides);
  addToTally(t, rows);
  return resultOf(scenario, options, o, t);
}

/** The statistics of a whole run's tally. */
async function resultOf(scenario: Scenario, options: RobustnessOptions, o: CanonicalRobustnessOptions, t: Tally): Promise<RobustnessResult> {
  const { survived, stridesTotal, sumSqHeight, sumSqSpeed, failures } = t;
  const runningAfter = t.runningAfter;
  // cumulative from the last stride back: running after stride s = completed more than s strides
  for (let s = o.strides - 2; s >= 0; s--) runningAfter[s] += runningAfter[s + 1];
  const n = o.rollouts;
  return {
    rollouts: n,
    survived,
    survival: survived / n,
    wilson95: wilsonInterval(survived, n),
    mean_strides_completed: stridesTotal / n,
    strides: o.strides,
    terrain: {
      kind: o.terrain,
      sigma_m: o.sigma_m,
      seed: o.seed,
      streams: `rollout r runs on terrain stream r (0 to ${n - 1}) of this seed, replacing the scenario's terrain`,
    },
    // the start section: a flight apex, or with the two-leg model walking a single-support apex
    // (the `--json` header's section), with its offset and stance leg
    start: {
      apex_height_m: scenario.start.apex_height_m,
      forward_speed_m_per_s: scenario.start.forward_speed_m_per_s,
      ...(kindOf(scenario) === 'biped' ? { gait: scenario.start.gait, offset_m: scenario.start.offset_m, leg: scenario.start.leg } : {}),
    },
    target: { apex_height_m: o.target_height_m, forward_speed_m_per_s: o.target_speed_m_per_s },
    ...accuracyReport(scenario.integrator, (await robustnessScenario(scenario, options)).calibration, kindOf(scenario) === 'biped' ? 'biped' : 'slip'),
    strides_completed_total: stridesTotal,
    apex_height_rms_m: stridesTotal > 0 ? Math.sqrt(sumSqHeight / stridesTotal) : null,
    forward_speed_rms_m_per_s: stridesTotal > 0 ? Math.sqrt(sumSqSpeed / stridesTotal) : null,
    rms_definition: RMS_DEFINITION,
    failures,
    survival_by_stride: runningAfter.map((running, stride) => ({
      stride,
      running,
      survival: running / n,
      wilson95: wilsonInterval(running, n),
    })),
    note:
      `${o.terrain === 'random_walk' ? 'random walk: each touchdown height is the previous one plus N(0, sigma)' : 'random heights: each touchdown height drawn afresh from N(0, sigma)'}` +
      ', the first touchdown included; the scenario\'s own terrain is replaced. The same seed gives the same terrains to every policy (common random numbers).',
    caution: SAFETY_CAUTION,
  };
}

/**
 * R rollouts x S strides on seeded random terrain; see the file comment. In this thread (no
 * worker threads, no batch runner given) the rollouts run in chunks of CHUNK_ROLLOUTS, each
 * tallied as it comes, in rollout order: the same sums as a tally of the whole run's summaries,
 * without the whole run's inputs and summaries in memory (for 20,000 rollouts, 5 MB of fresh
 * arrays whose page faults cost about 20 ms of a one-shot `pronk robustness`; 10 million rollouts
 * would need 2.6 GB).
 */
export async function terrainRobustness(
  scenario: Scenario,
  options: RobustnessOptions,
  execution: RobustnessExecution = {},
): Promise<RobustnessResult> {
  if (execution.runBatch || (execution.workers ?? 1) > 1) {
    return finishRobustness(scenario, options, await robustnessSummaries(scenario, options, undefined, execution));
  }
  const o = canonicalRobustnessOptions(scenario, options);
  const { scenario: run } = await robustnessScenario(scenario, options);
  const model = robustnessModel(run, o);
  const engine = await loadEngine();
  const t = emptyTally(scenario, o.strides);
  const size = Math.min(CHUNK_ROLLOUTS, o.rollouts);
  const inputs = new Float64Array(size * L.I_SIZE);
  const summaries = new Float64Array(size * L.S_SIZE);
  const row = startInput(run); // each rollout's row differs only in its stream
  const starts = Array.from({ length: Math.ceil(o.rollouts / size) }, (_, i) => i * size);
  await eachInTurn(starts, execution.signal, (start) => {
    const count = Math.min(size, o.rollouts - start);
    fillInputs(inputs, row, start, count);
    const batch = engine.runBatch({ model, inputs: inputs.subarray(0, count * L.I_SIZE), strides: o.strides }, { summaries, offset: 0 });
    addToTally(t, batch.summaries);
    execution.onProgress?.(start + count, o.rollouts);
  });
  return resultOf(scenario, options, o, t);
}

/** Rollouts a run in this thread takes at a time (terrainRobustness). */
export const CHUNK_ROLLOUTS = 1024;

// Rows may come from files (joined shards): check them before trusting them.
function checkRows(rows: readonly RobustnessRow[], o: CanonicalRobustnessOptions): void {
  if (!Array.isArray(rows) || rows.length !== o.rollouts) {
    throw new InputError([{ path: 'rows', expected: `${o.rollouts} rollout rows (--rollouts)`, found: Array.isArray(rows) ? `${rows.length} rows` : describeFound(rows) }]);
  }
  const known = new Set(Object.values(STATUS_NAMES));
  const completed = STATUS_NAMES[L.STATUS_OK];
  const issues: InputIssue[] = [];
  const bad = (i: number, field: string, expected: string, found: unknown) =>
    issues.push({ path: `rows[${i}].${field}`, expected, found: describeFound(found) });
  const fine = (v: unknown) => typeof v === 'number' && Number.isFinite(v) && v >= 0;
  // a plain loop that allocates nothing for a good row: a run's own 20,000 rows pass through here
  for (let i = 0; i < rows.length; i++) {
    const row = rows[i];
    if (typeof row !== 'object' || row === null) {
      issues.push({ path: `rows[${i}]`, expected: 'a rollout row object', found: describeFound(row) });
      continue;
    }
    if (!known.has(row.status)) bad(i, 'status', `one of ${[...known].join(', ')}`, row.status);
    const k = row.strides_completed;
    if (!(Number.isInteger(k) && k >= 0 && k <= o.strides)) bad(i, 'strides_completed', `an integer from 0 to ${o.strides}`, k);
    else if ((row.status === completed) !== (k === o.strides)) bad(i, 'strides_completed', `${o.strides} exactly when the status is completed`, k);
    if (!fine(row.sum_sq_height_error_m2)) bad(i, 'sum_sq_height_error_m2', 'a finite number >= 0', row.sum_sq_height_error_m2);
    if (!fine(row.sum_sq_speed_error_m2_per_s2)) bad(i, 'sum_sq_speed_error_m2_per_s2', 'a finite number >= 0', row.sum_sq_speed_error_m2_per_s2);
  }
  if (issues.length) throw new InputError(issues.slice(0, 20));
}
