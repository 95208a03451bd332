// A browser module worker holding one engine (the WASM kernel) and the analyses, behind comlink.
// The workbench runs a small pool of these (browser-pool.ts). Analyses that are lists of
// independent rollouts (scan, basin, Monte Carlo) run here a contiguous range at a time, and the
// main thread joins the ranges with the same finisher as `pronk merge`, so a workbench result is
// the CLI's result bit for bit. Everything crossing the boundary is plain data (structured clone).

import * as Comlink from 'comlink';
import { loadEngine, type BatchRequest, type BatchResult } from '../core/engine.js';
import { apexReturnMap, type ReturnMapOptions, type ReturnMapResult } from '../core/analysis/return-map.js';
import { scanShard, type ScanAxis, type ScanOptions, type ScanCell } from '../core/analysis/scan.js';
import { basinRows, type BasinRow, type BasinRunOptions } from '../core/analysis/basin.js';
import { robustnessRows, type RobustnessOptions, type RobustnessRow } from '../core/analysis/robustness.js';
import { stepTolerance, type StepToleranceOptions, type StepToleranceResult } from '../core/analysis/stepdown.js';
import { simulate, type SimulateOptions, type SimulationResult } from '../core/simulate.js';
import { parseScenario, type Scenario } from '../core/scenario.js';
import { bipedReturnMap, type BipedMapOptions, type BipedMapResult } from '../core/analysis/biped-map.js';
import { isBiped, type BipedScenario } from '../core/models/biped.js';
import { simulateBiped, type BipedSimulationResult } from '../core/models/biped-simulate.js';
import { lateralFixedPoints, simulateLateral, type LateralMapResult, type LateralSample, type LateralSimulation } from '../core/analysis/lateral.js';
import { finishRecover, recoverOnce, recoverRows, scenarioGait, type KickSpec, type RandomKickSpec, type RecoverMonteCarloResult, type RecoverTolerances, type RecoveryResult, type RecoveryRow } from '../core/analysis/recover.js';
import { parseLateralScenario, type LateralScenario } from '../core/models/lateral.js';
import {
  finishLateralBasin,
  lateralBasinRows,
  lateralBasinRun,
  type LateralBasinCell,
  type LateralBasinOptions,
  type LateralBasinResult,
  type LateralBasinRun,
} from '../core/analysis/lateral-basin.js';
import { finishLateralScan, lateralScanRows, type LateralScanCell, type LateralScanResult } from '../core/analysis/lateral-scan.js';

/** One kick judged, with the paths with and without it (the workbench's recovery view). */
export interface LateralRecoveryView {
  result: RecoveryResult;
  kicked: LateralSample[];
  unkicked: LateralSample[];
  /** The kick's moment on the runs' clock, s. */
  kick_time_s: number;
}

const DEG = Math.PI / 180;
const lateral = (scenario: unknown): LateralScenario => parseLateralScenario(scenario);
import type { PartialResult, ShardRange, ShardSpec } from '../core/shard.js';

const inWorker = async (req: BatchRequest): Promise<BatchResult> => (await loadEngine()).runBatch(req);

// A worker trusts nothing it is sent: every scenario is validated again here.
const checked = (scenario: unknown): Scenario => parseScenario(scenario);

// The two-leg analyses take a two-leg scenario only (never run another kind as this one).
function checkedBiped(scenario: unknown): BipedScenario {
  const s = checked(scenario);
  if (!isBiped(s)) throw new Error(`a two-leg analysis needs a scenario with "model": "biped", found ${JSON.stringify(s.model ?? 'slip')}`);
  return s;
}

const api = {
  /** Loads the kernel; resolves once the worker can compute. */
  async ready(): Promise<true> {
    await loadEngine();
    return true;
  },

  async simulate(scenario: unknown, options: SimulateOptions = {}): Promise<SimulationResult> {
    return simulate(checked(scenario), options);
  },

  async returnMap(scenario: unknown, options: Omit<ReturnMapOptions, 'runBatch'> = {}): Promise<ReturnMapResult> {
    return apexReturnMap(checked(scenario), { ...options, runBatch: inWorker });
  },

  async scanShard(scenario: unknown, options: ScanOptions, shard: ShardSpec): Promise<PartialResult<ScanCell>> {
    return scanShard(checked(scenario), options, shard, { runBatch: inWorker });
  },

  async basinRows(scenario: unknown, run: BasinRunOptions, range: ShardRange): Promise<BasinRow[]> {
    return basinRows(checked(scenario), run, range, { runBatch: inWorker });
  },

  async robustnessRows(scenario: unknown, options: RobustnessOptions, range: ShardRange): Promise<RobustnessRow[]> {
    return robustnessRows(checked(scenario), options, range, { runBatch: inWorker });
  },

  async simulateBiped(scenario: unknown, options: { strides?: number; traceInterval_s?: number } = {}): Promise<BipedSimulationResult> {
    return simulateBiped(checkedBiped(scenario), options);
  },

  async bipedMap(scenario: unknown, options: Omit<BipedMapOptions, 'runBatch'> = {}): Promise<BipedMapResult> {
    return bipedReturnMap(checkedBiped(scenario), { ...options, runBatch: inWorker });
  },

  async lateralSimulate(scenario: unknown, options: { dt?: number; strides?: number } = {}): Promise<LateralSimulation> {
    return simulateLateral(await loadEngine(), lateral(scenario), options);
  },

  async lateralMap(scenario: unknown): Promise<LateralMapResult> {
    return lateralFixedPoints(await loadEngine(), lateral(scenario));
  },

  /** A kick on the scenario's gait, judged (recoverOnce), and both runs from the gait sampled every `dt`. */
  async lateralRecover(scenario: unknown, spec: KickSpec, options: { stridesAfter?: number; tolerances?: Partial<RecoverTolerances>; dt: number }): Promise<LateralRecoveryView> {
    const engine = await loadEngine();
    const s = lateral(scenario);
    const result = recoverOnce(engine, s, spec, options);
    const { gait: fp } = scenarioGait(engine, s);
    const start = { speed: fp.speed_m_per_s, delta: fp.heading_to_body_deg * DEG, omega: fp.angular_velocity_deg_per_s * DEG, heading: 0 };
    const kick = {
      stride: spec.stride,
      time_s: result.kick.time_s,
      forward_m_per_s: spec.forward_m_per_s,
      left_m_per_s: spec.left_m_per_s,
      angle_rad: spec.angle_deg * DEG,
      rate_rad_per_s: spec.rate_deg_per_s * DEG,
    };
    const kicked = simulateLateral(engine, s, { start, kick, strides: result.strides, dt: options.dt }).samples ?? [];
    const unkicked = simulateLateral(engine, s, { start, strides: result.strides, dt: options.dt }).samples ?? [];
    const strideStart = unkicked.find((p) => p.stride === spec.stride)?.t ?? 0;
    return { result, kicked, unkicked, kick_time_s: strideStart + result.kick.time_s };
  },

  async lateralRecoverRows(scenario: unknown, spec: RandomKickSpec, range: ShardRange, options: { stridesAfter?: number; tolerances?: Partial<RecoverTolerances> }): Promise<RecoveryRow[]> {
    return recoverRows(await loadEngine(), lateral(scenario), spec, range, options);
  },

  async lateralRecoverFinish(scenario: unknown, spec: RandomKickSpec, rows: RecoveryRow[], options: { stridesAfter?: number; tolerances?: Partial<RecoverTolerances> }): Promise<RecoverMonteCarloResult> {
    return finishRecover(await loadEngine(), lateral(scenario), spec, rows, options);
  },

  /** The lateral basin's run with its defaults resolved (the gait's speed sets the default rates). */
  async lateralBasinRun(scenario: unknown, options: LateralBasinOptions): Promise<LateralBasinRun> {
    return lateralBasinRun(await loadEngine(), lateral(scenario), options);
  },

  async lateralBasinRows(scenario: unknown, run: LateralBasinRun, range: ShardRange): Promise<LateralBasinCell[]> {
    return lateralBasinRows(await loadEngine(), lateral(scenario), run, range);
  },

  async lateralBasinFinish(scenario: unknown, run: LateralBasinRun, cells: LateralBasinCell[]): Promise<LateralBasinResult> {
    return finishLateralBasin(await loadEngine(), lateral(scenario), run, cells);
  },

  async lateralScanRows(scenario: unknown, x: ScanAxis, y: ScanAxis, range: ShardRange): Promise<LateralScanCell[]> {
    return lateralScanRows(await loadEngine(), lateral(scenario), x, y, range);
  },

  async lateralScanFinish(x: ScanAxis, y: ScanAxis, cells: LateralScanCell[]): Promise<LateralScanResult> {
    return finishLateralScan(x, y, cells);
  },

  async stepdown(scenario: unknown, options: StepToleranceOptions = {}): Promise<StepToleranceResult> {
    return stepTolerance(checked(scenario), options);
  },

  /** Diagnostics: an uncaught error on the worker's own event loop (the pool must notice and recover). */
  crash(): void {
    setTimeout(() => {
      throw new Error('worker crash requested (diagnostics)');
    }, 0);
  },
};

export type EngineWorkerApi = typeof api;

Comlink.expose(api);
