// The workbench's analyses on the worker pool. Lists of independent rollouts (scan cells, basin
// cells, Monte Carlo rollouts) are cut into contiguous ranges, run on whichever worker is free, and
// joined in order by the analysis' own finisher (the one `pronk merge` uses), so every number is
// the CLI's for the same scenario and options. The main thread only cuts, joins and finishes.

import { basinCellCount, basinRunOptions, finishBasin, type BasinOptions, type BasinResult, type BasinRow } from '../../core/analysis/basin.js';
import { finishRobustness, canonicalRobustnessOptions, type RobustnessOptions, type RobustnessResult, type RobustnessRow } from '../../core/analysis/robustness.js';
import { finishScan, normalizeScanOptions, checkAxisPath, type ScanOptions, type ScanResult, type ScanCell } from '../../core/analysis/scan.js';
import type { ReturnMapResult } from '../../core/analysis/return-map.js';
import type { BipedMapResult } from '../../core/analysis/biped-map.js';
import type { BipedSimulationResult } from '../../core/models/biped-simulate.js';
import type { StepToleranceResult } from '../../core/analysis/stepdown.js';
import type { Scenario } from '../../core/scenario.js';
import type { SimulationResult } from '../../core/simulate.js';
import { shardRange, type ShardRange } from '../../core/shard.js';
import { pairedDifferenceInterval } from '../../core/optimize/objectives.js';
import { wilsonInterval } from '../../core/stats.js';
import { JobCancelled, type EnginePool } from '../../worker/browser-pool.js';
import type { LateralRecoveryView } from '../../worker/browser-engine-worker.js';
import type { LateralMapResult, LateralSimulation } from '../../core/analysis/lateral.js';
import type { KickSpec, RandomKickSpec, RecoverMonteCarloResult } from '../../core/analysis/recover.js';
import type { LateralScenario } from '../../core/models/lateral.js';
import type { LateralBasinOptions, LateralBasinResult } from '../../core/analysis/lateral-basin.js';
import type { LateralScanResult } from '../../core/analysis/lateral-scan.js';
import { nextTask } from './yield.js';

/** The next task, unless the job was cancelled meanwhile (a cancel between the last part and the finish still cancels). */
async function pause(control: RunControl): Promise<void> {
  await nextTask();
  if (control.signal?.aborted) throw new JobCancelled();
}

export interface RunControl {
  signal?: AbortSignal;
  onProgress?: (done: number, total: number) => void;
}

/** Ranges of about `per` items, at least `minimum` of them when there are enough items. */
export function ranges(total: number, parts: number): ShardRange[] {
  const count = Math.max(1, Math.min(total, parts));
  return Array.from({ length: count }, (_, i) => shardRange(total, { index: i + 1, count }));
}

/** Ranges per worker: enough for smooth progress and quick cancels, few enough to keep batches big. */
const RANGES_PER_WORKER = 6;

export async function runReturnMap(pool: EnginePool, scenario: Scenario, options: { samples: number; iterations: number }, control: RunControl = {}): Promise<ReturnMapResult> {
  return pool.use((api) => api.returnMap(scenario, options), control.signal);
}

/** Simulates the scenario with trajectory samples every `interval_s` (for the stride view). */
export async function runTrace(pool: EnginePool, scenario: Scenario, options: { strides: number; interval_s: number }, control: RunControl = {}): Promise<SimulationResult> {
  return pool.use((api) => api.simulate(scenario, { strides: options.strides, traceInterval_s: options.interval_s }), control.signal);
}

/** The two-leg model's section map (fixed points with all eigenvalues) on one worker. */
export async function runBipedMap(pool: EnginePool, scenario: Scenario, options: { samples: number; iterations: number }, control: RunControl = {}): Promise<BipedMapResult> {
  return pool.use((api) => api.bipedMap(scenario, options), control.signal);
}

/** The two-leg model simulated with both legs' samples every `interval_s` (for the stride view). */
export async function runBipedTrace(pool: EnginePool, scenario: Scenario, options: { strides: number; interval_s: number }, control: RunControl = {}): Promise<BipedSimulationResult> {
  return pool.use((api) => api.simulateBiped(scenario, { strides: options.strides, traceInterval_s: options.interval_s }), control.signal);
}

// ---------------------------------------------------------------------------------------------
// The lateral leg-spring model (core/analysis/lateral.ts, recover.ts), each call on a worker.

export async function runLateralTrace(pool: EnginePool, scenario: LateralScenario, options: { dt: number }, control: RunControl = {}): Promise<LateralSimulation> {
  return pool.use((api) => api.lateralSimulate(scenario, { dt: options.dt }), control.signal);
}

export async function runLateralMap(pool: EnginePool, scenario: LateralScenario, control: RunControl = {}): Promise<LateralMapResult> {
  return pool.use((api) => api.lateralMap(scenario), control.signal);
}

export async function runLateralRecover(pool: EnginePool, scenario: LateralScenario, spec: KickSpec, options: { stridesAfter: number; dt: number }, control: RunControl = {}): Promise<LateralRecoveryView> {
  return pool.use((api) => api.lateralRecover(scenario, spec, options), control.signal);
}

/** Monte Carlo over random kicks: ranges of rollouts on the workers, finished (Wilson intervals) on one of them. */
export async function runLateralRecoverMonteCarlo(pool: EnginePool, scenario: LateralScenario, spec: RandomKickSpec, options: { stridesAfter: number }, control: RunControl = {}): Promise<RecoverMonteCarloResult> {
  const parts = await pool.map(ranges(spec.rollouts, pool.size * RANGES_PER_WORKER), (api, range) => api.lateralRecoverRows(scenario, spec, range, options), control);
  const rows = parts.flat();
  return pool.use((api) => api.lateralRecoverFinish(scenario, spec, rows, options), control.signal);
}

/** The lateral model's basin over heading and angular-velocity errors, its cells in ranges over the pool. */
export async function runLateralBasin(pool: EnginePool, scenario: LateralScenario, options: LateralBasinOptions, control: RunControl = {}): Promise<LateralBasinResult> {
  const run = await pool.use((api) => api.lateralBasinRun(scenario, options), control.signal);
  const parts = await pool.map(ranges(run.headings.count * run.rates.count, pool.size * RANGES_PER_WORKER), (api, range) => api.lateralBasinRows(scenario, run, range), control);
  return pool.use((api) => api.lateralBasinFinish(scenario, run, parts.flat()), control.signal);
}

/** The lateral model's stability regions: each cell's gaits at its own energy, in ranges over the pool. */
export async function runLateralScan(pool: EnginePool, scenario: LateralScenario, options: ScanOptions, control: RunControl = {}): Promise<LateralScanResult> {
  const { x, y } = checkScan(scenario as unknown as Scenario, options);
  const parts = await pool.map(ranges(x.n * y.n, pool.size * RANGES_PER_WORKER), (api, range) => api.lateralScanRows(scenario, x, y, range), control);
  return pool.use((api) => api.lateralScanFinish(x, y, parts.flat()), control.signal);
}

export async function runStepdown(pool: EnginePool, scenario: Scenario, control: RunControl = {}): Promise<StepToleranceResult> {
  return pool.use((api) => api.stepdown(scenario, {}), control.signal);
}

/** Checks scan options against the scenario on this thread (so a bad axis is reported at once). */
export function checkScan(scenario: Scenario, options: ScanOptions): ScanOptions {
  const normalized = normalizeScanOptions(options);
  checkAxisPath(scenario, normalized.x, '--x');
  checkAxisPath(scenario, normalized.y, '--y');
  return normalized;
}

export async function runScan(pool: EnginePool, scenario: Scenario, options: ScanOptions, control: RunControl = {}): Promise<ScanResult> {
  const normalized = checkScan(scenario, options);
  const cells = normalized.x.n * normalized.y.n;
  const count = Math.max(1, Math.min(cells, pool.size * RANGES_PER_WORKER));
  const shards = Array.from({ length: count }, (_, i) => ({ index: i + 1, count }));
  const parts = await pool.map(shards, (api, shard) => api.scanShard(scenario, normalized, shard), control);
  // the last part's message, the finish and the result's first draw: each its own task
  await pause(control);
  const rows: ScanCell[] = parts.flatMap((part) => part.rows);
  const result = finishScan(scenario, normalized, rows);
  await pause(control);
  return result;
}

export async function runBasin(pool: EnginePool, scenario: Scenario, options: BasinOptions, control: RunControl = {}): Promise<BasinResult> {
  const run = basinRunOptions(scenario, options);
  const parts = await pool.map(ranges(basinCellCount(run), pool.size * RANGES_PER_WORKER), (api, range) => api.basinRows(scenario, run, range), control);
  await pause(control);
  const rows: BasinRow[] = parts.flat();
  const result = finishBasin(scenario, run as unknown as Record<string, unknown>, rows);
  await pause(control);
  return result;
}

export interface MonteCarloRun {
  result: RobustnessResult;
  /** Per rollout, in stream order (for paired comparisons). */
  rows: RobustnessRow[];
}

export async function runRobustness(pool: EnginePool, scenario: Scenario, options: RobustnessOptions, control: RunControl = {}): Promise<MonteCarloRun> {
  const canonical = canonicalRobustnessOptions(scenario, options);
  const parts = await pool.map(ranges(canonical.rollouts, pool.size * RANGES_PER_WORKER), (api, range) => api.robustnessRows(scenario, canonical, range), control);
  await pause(control);
  const rows = parts.flat();
  const result = await finishRobustness(scenario, canonical, rows);
  await pause(control);
  return { result, rows };
}

// ---------------------------------------------------------------------------------------------
// Two policies on the same terrain streams.

export interface PairedSurvival {
  rollouts: number;
  baseline: { survived: number; survival: number; wilson95: [number, number] };
  candidate: { survived: number; survival: number; wilson95: [number, number] };
  /** survival(candidate) − survival(baseline). */
  difference: number;
  /** Newcombe 1998 paired interval (method 10) of the difference. */
  paired95: [number, number];
  pairs: { both: number; baseline_only: number; candidate_only: number; neither: number };
}

/** Rollout r of both runs met terrain stream r of one seed: the outcomes are paired. */
export function pairSurvival(baseline: readonly RobustnessRow[], candidate: readonly RobustnessRow[]): PairedSurvival {
  const n = Math.min(baseline.length, candidate.length);
  let both = 0;
  let baseOnly = 0;
  let candOnly = 0;
  for (let r = 0; r < n; r++) {
    const a = baseline[r].status === 'completed';
    const b = candidate[r].status === 'completed';
    if (a && b) both++;
    else if (a) baseOnly++;
    else if (b) candOnly++;
  }
  const neither = n - both - baseOnly - candOnly;
  const sa = both + baseOnly;
  const sb = both + candOnly;
  return {
    rollouts: n,
    baseline: { survived: sa, survival: sa / n, wilson95: wilsonInterval(sa, n) },
    candidate: { survived: sb, survival: sb / n, wilson95: wilsonInterval(sb, n) },
    difference: (sb - sa) / n,
    // pairedDifferenceInterval(both, first only, second only, neither) is first − second
    paired95: pairedDifferenceInterval(both, candOnly, baseOnly, neither),
    pairs: { both, baseline_only: baseOnly, candidate_only: candOnly, neither },
  };
}
