// The deadbeat table against the simple policies it is meant to beat: the best fixed attack angle
// and the best swing-leg retraction (Seyfarth, Geyer & Herr 2003), on (a) the largest single
// permanent step down and up survived (`stepTolerance`) and (b) Monte Carlo survival on seeded
// random-walk terrain, every policy on the same terrain streams (common random numbers), so the
// survival fractions are paired.
//
// "Best" is one stated criterion, the one (b) measures: the most rollouts surviving every stride
// on the Monte Carlo terrains; ties are broken by the larger mean number of strides completed,
// then by the smaller RMS of the apex height about the target (the start apex). It is found by a
// grid search within the attack range, refined around the best points:
//  - fixed angle: the attack angle, every 0.5 deg, then three zoom levels (0.25, 0.125, 0.0625 deg)
//    around the three best so far;
//  - retraction: (touchdown angle on flat ground, rate), every 1 deg x 1/16 of the rate range, then
//    three zoom levels halving both spacings around the three best; the attack at apex is the
//    touchdown angle minus rate x the flat-ground fall time, and the angle is clamped to the attack
//    range. (On flat ground the touchdown angle is what a fixed angle would be, so rate 0 is the
//    fixed-angle family and the grid covers the region where gaits exist evenly.)
// The grid is screened on the first `screenRollouts` terrain streams; the five best of each family
// are then run on all of them and the best picked there. Choosing the baselines on the same
// streams that score them flatters the baselines (winner's curse): the comparison errs in their
// favour.

import * as L from '../../../assembly/layout.js';
import { loadEngine, rolloutInput, type BatchRequest, type BatchResult, type ModelBlock } from '../engine.js';
import { InputError, describeFound, type InputIssue } from '../errors.js';
import {
  canonicalRobustnessOptions,
  finishRobustness,
  robustnessModel,
  robustnessScenario,
  type CanonicalRobustnessOptions,
  type RobustnessRow,
} from '../analysis/robustness.js';
import { DEFAULT_AFTER, MAX_AFTER, stepTolerance, type StepToleranceOptionNames } from '../analysis/stepdown.js';
import { buildModel, STATUS_NAMES } from '../model.js';
import { SAFETY_CAUTION } from '../safety.js';
import { MODEL_KIND } from '../json-output.js';
import { BOUNDS, boundText, parseScenario, type Scenario } from '../scenario.js';
import { newcombeDifferenceInterval } from '../stats.js';
import { PRONK_VERSION, contentHash } from '../version.js';
import type { DeadbeatOptions, DeadbeatTable } from './deadbeat.js';

export const DEFAULT_COMPARE_SIGMA_M = 0.02;
export const DEFAULT_COMPARE_ROLLOUTS = 500;
export const DEFAULT_COMPARE_SEED = 1;
export const DEFAULT_SCREEN_ROLLOUTS = 100;
/** The deadbeat synthesis's own default attack range (deg). */
export const DEFAULT_ATTACK_RANGE_DEG: [number, number] = [30, 89.5];
/** Default retraction rates, in units of sqrt(g / L0) rad/s (the body's natural angular rate). */
export const DEFAULT_RATE_RANGE_NATURAL: [number, number] = [-1, 3];

const FIXED_COARSE_DEG = 0.5;
const RETRACTION_COARSE_DEG = 1;
const RATE_DIVISIONS = 16;
const ZOOM_LEVELS = 3;
const ZOOM_SEEDS = 3;
const FINALISTS = 5;
/** Rollouts per kernel call at most (keeps the buffers of one batch modest). */
const MAX_BATCH_ROLLOUTS = 200_000;

export interface ComparisonOptions {
  /** Attack angles the baselines may use (deg), 0 < lo < hi <= 90; default 30 to 89.5. */
  attackRange_deg?: [number, number];
  /** Retraction rates searched (deg/s), lo < hi; default -1 to 3 x sqrt(g / L0) rad/s. */
  rateRange_deg_per_s?: [number, number];
  /** Strides to survive after the step (stepTolerance), default 20. */
  after?: number;
  /** Random-walk step standard deviation, m (default 0.02). */
  sigma_m?: number;
  /** Monte Carlo rollouts (default 500). */
  rollouts?: number;
  /** Terrain seed (default 1). */
  seed?: number;
  /** Rollouts (the first terrain streams) that screen the search grid; default min(rollouts, 100). */
  screenRollouts?: number;
  /** Worker threads for Node's pool (default 1: this thread); never changes the result. */
  workers?: number;
  /** Runs a batch instead of Node's worker pool (a browser passes its own pool). */
  runBatch?: (req: BatchRequest) => Promise<BatchResult>;
}

/** Option names as shown in messages (the CLI passes its flags). */
export interface ComparisonOptionNames {
  attack_range_deg: string;
  rate_range_deg_per_s: string;
  after: string;
  sigma_m: string;
  rollouts: string;
  seed: string;
  screen_rollouts: string;
}

const DEFAULT_NAMES: ComparisonOptionNames = {
  attack_range_deg: 'attack_range_deg',
  rate_range_deg_per_s: 'rate_range_deg_per_s',
  after: 'after',
  sigma_m: 'sigma_m',
  rollouts: 'rollouts',
  seed: 'seed',
  screen_rollouts: 'screen_rollouts',
};

export type ComparedPolicyName = 'deadbeat_table' | 'best_fixed_angle' | 'best_retraction';

export interface ComparedPolicy {
  name: ComparedPolicyName;
  description: string;
  /** The policy block: `{ ...scenario, policy }` runs it. */
  policy: Scenario['policy'];
  step_tolerance: {
    max_step_down_m: number;
    max_step_up_m: number;
    /** The smallest failing drop/rise, or null when nothing failed up to the search limit. */
    first_failure_down_m: number | null;
    first_failure_up_m: number | null;
    /** 'first_failure', or 'search_limit' when every size up to the limit survived. */
    down_bounded_by: 'first_failure' | 'search_limit';
    up_bounded_by: 'first_failure' | 'search_limit';
  };
  monte_carlo: {
    rollouts: number;
    survived: number;
    survival: number;
    wilson95: [number, number];
    mean_strides_completed: number;
    apex_height_rms_m: number | null;
    /** Rollouts ended by each failure code (only the codes that occurred). */
    failures: Record<string, number>;
  };
}

/** The deadbeat table against one baseline, rollout by rollout on the same terrain. */
export interface PairedSurvival {
  baseline: ComparedPolicyName;
  both_survived: number;
  deadbeat_only_survived: number;
  baseline_only_survived: number;
  neither_survived: number;
  /** Deadbeat survival minus the baseline's. */
  difference: number;
  /** Newcombe's hybrid score interval (95 %) for the difference; conservative for paired samples. */
  newcombe95: [number, number];
}

export interface SearchReport {
  space: string;
  coarse_grid: string;
  refinement: string;
  screen_rollouts: number;
  /** Distinct candidates run on the screening streams. */
  candidates_screened: number;
  /** Grid points that are not a valid policy (e.g. the leg could not be placed at the apex). */
  candidates_skipped: number;
  finalists: number;
  best: Record<string, number>;
}

export interface DeadbeatComparison {
  criterion: string;
  step_tolerance_method: { strides_after: number; resolution_m: number; method: string };
  monte_carlo_method: {
    terrain: 'random_walk';
    sigma_m: number;
    seed: number;
    rollouts: number;
    strides: number;
    streams: string;
  };
  /** deadbeat_table, best_fixed_angle, best_retraction. */
  policies: ComparedPolicy[];
  paired_survival: PairedSurvival[];
  /** Policy names from best to worst on each measure (ties keep the order of `policies`). */
  ranking: { step_down: ComparedPolicyName[]; step_up: ComparedPolicyName[]; survival: ComparedPolicyName[] };
  search: { fixed_angle: SearchReport; retraction: SearchReport };
  attack_range_deg: [number, number];
  rate_range_deg_per_s: [number, number];
  /** Wall-clock time of the comparison (machine dependent; the only field that is). */
  wall_time_s: number;
  note: string;
}

export const COMPARISON_CRITERION =
  'best = the most Monte Carlo rollouts surviving every stride on the same terrain streams; ties broken by the larger ' +
  'mean strides completed, then by the smaller apex-height RMS about the start apex';

interface Canonical {
  attackRange: [number, number];
  rateRange: [number, number];
  after: number;
  screenRollouts: number;
  mc: CanonicalRobustnessOptions;
}

function canonicalOptions(scenario: Scenario, options: ComparisonOptions, names: ComparisonOptionNames): Canonical {
  const issues: InputIssue[] = [];
  const check = (ok: boolean, path: string, expected: string, found: unknown) => {
    if (!ok) issues.push({ path, expected, found: describeFound(found) });
  };
  const attackRange = options.attackRange_deg ?? DEFAULT_ATTACK_RANGE_DEG;
  const natural = Math.sqrt(scenario.body.gravity_m_per_s2 / scenario.body.leg_length_m) * (180 / Math.PI);
  const rateRange = options.rateRange_deg_per_s ?? [DEFAULT_RATE_RANGE_NATURAL[0] * natural, DEFAULT_RATE_RANGE_NATURAL[1] * natural];
  const after = options.after ?? DEFAULT_AFTER;
  const rollouts = options.rollouts ?? DEFAULT_COMPARE_ROLLOUTS;
  const screen = options.screenRollouts ?? Math.min(rollouts, DEFAULT_SCREEN_ROLLOUTS);
  const pair = (v: unknown): v is [number, number] =>
    Array.isArray(v) && v.length === 2 && v.every((x) => typeof x === 'number' && Number.isFinite(x)) && v[0] < v[1];
  check(pair(attackRange) && attackRange[0] > 0 && attackRange[1] <= 90, names.attack_range_deg, 'angles 0 < lo < hi <= 90 (deg)', attackRange);
  // the scenario's bound on a retraction rate: a rate beyond it makes no valid policy to compare
  const rate = BOUNDS.rate_deg_per_s;
  check(pair(rateRange) && rateRange[0] >= rate.low && rateRange[1] <= rate.high, names.rate_range_deg_per_s, `two rates lo < hi, each ${boundText(rate, 'a rate')}`, rateRange);
  check(Number.isInteger(after) && after >= 1 && after <= MAX_AFTER, names.after, `an integer from 1 to ${MAX_AFTER}`, after);
  const rolloutsOk = Number.isInteger(rollouts) && rollouts >= 1;
  if (rolloutsOk) {
    check(Number.isInteger(screen) && screen >= 1 && screen <= rollouts, names.screen_rollouts, `an integer from 1 to the rollouts (${rollouts})`, screen);
  }
  let mc: CanonicalRobustnessOptions | undefined;
  try {
    mc = canonicalRobustnessOptions(
      scenario,
      { rollouts, sigma_m: options.sigma_m ?? DEFAULT_COMPARE_SIGMA_M, seed: options.seed ?? DEFAULT_COMPARE_SEED, terrain: 'random_walk' },
      {
        rollouts: names.rollouts,
        sigma_m: names.sigma_m,
        seed: names.seed,
        strides: 'strides',
        terrain: 'terrain',
        target_height_m: 'target_height_m',
        target_speed_m_per_s: 'target_speed_m_per_s',
      },
    );
  } catch (error) {
    if (!(error instanceof InputError)) throw error;
    issues.push(...error.issues);
  }
  if (issues.length || !mc) throw new InputError(issues);
  return { attackRange, rateRange, after, screenRollouts: screen, mc };
}

// ---------------------------------------------------------------------------------------------
// Monte Carlo scores of many policies in one batch.

interface Score {
  survived: number;
  meanStrides: number;
  /** Apex-height RMS about the target; Infinity when no stride completed. */
  rms: number;
}

/** a before b: more survivors, then more strides, then the smaller RMS. */
function better(a: Score, b: Score): boolean {
  if (a.survived !== b.survived) return a.survived > b.survived;
  if (a.meanStrides !== b.meanStrides) return a.meanStrides > b.meanStrides;
  return a.rms < b.rms;
}

interface Candidate {
  key: string;
  params: number[];
  scenario: Scenario;
}

class MonteCarlo {
  constructor(
    private readonly mc: CanonicalRobustnessOptions,
    private readonly options: ComparisonOptions,
  ) {}

  /** Rows of rollouts 0..n-1 (terrain streams 0..n-1) for each scenario. */
  async rows(scenarios: Scenario[], n: number): Promise<RobustnessRow[][]> {
    const out: RobustnessRow[][] = [];
    const perBatch = Math.max(1, Math.floor(MAX_BATCH_ROLLOUTS / n));
    for (let first = 0; first < scenarios.length; first += perBatch) {
      const group = scenarios.slice(first, first + perBatch);
      // with integrator.apex_accuracy_m, the tolerances robustness runs (calibrated on its first rollouts)
      const run = await Promise.all(group.map(async (s) => (await robustnessScenario(s, this.mc)).scenario));
      const models: ModelBlock[] = run.map((s) => robustnessModel(s, this.mc));
      const inputs = new Float64Array(group.length * n * L.I_SIZE); // (candidates x n x I_SIZE)
      group.forEach((s, c) => {
        for (let r = 0; r < n; r++) {
          inputs.set(rolloutInput(s.start.apex_height_m, s.start.forward_speed_m_per_s, r, c), (c * n + r) * L.I_SIZE);
        }
      });
      const batch = await this.run({ model: models, inputs, strides: this.mc.strides });
      group.forEach((_, c) => {
        const rows: RobustnessRow[] = [];
        for (let r = 0; r < n; r++) {
          const s = (field: number) => batch.summaries[(c * n + r) * L.S_SIZE + field];
          rows.push({
            status: STATUS_NAMES[s(L.S_STATUS)] ?? `status_${s(L.S_STATUS)}`,
            strides_completed: s(L.S_STRIDES_COMPLETED),
            sum_sq_height_error_m2: s(L.S_SUM_SQ_HEIGHT_ERROR),
            sum_sq_speed_error_m2_per_s2: s(L.S_SUM_SQ_SPEED_ERROR),
          });
        }
        out.push(rows);
      });
    }
    return out;
  }

  private async run(req: BatchRequest): Promise<BatchResult> {
    if (this.options.runBatch) return this.options.runBatch(req);
    const { runBatchParallel } = await import('../../worker/pool.js');
    return runBatchParallel(req, { workers: this.options.workers ?? 1 });
  }
}

function scoreOf(rows: RobustnessRow[]): Score {
  let survived = 0;
  let strides = 0;
  let sumSq = 0;
  for (const row of rows) {
    if (row.status === STATUS_NAMES[L.STATUS_OK]) survived++;
    strides += row.strides_completed;
    sumSq += row.sum_sq_height_error_m2;
  }
  return { survived, meanStrides: strides / rows.length, rms: strides > 0 ? Math.sqrt(sumSq / strides) : Infinity };
}

// ---------------------------------------------------------------------------------------------
// The grid search with zoom levels, one family of policies at a time.

interface Family {
  /** Coarse grid points. */
  coarse: number[][];
  /** Coarse spacing per parameter. */
  spacing: number[];
  lower: number[];
  upper: number[];
  /** The policy's scenario, or null when the point is not a valid policy. */
  make(params: number[]): Scenario | null;
}

interface SearchOutcome {
  best: Candidate;
  screened: number;
  skipped: number;
  finalists: number;
}

async function gridSearch(family: Family, mc: MonteCarlo, screenN: number, fullN: number, rangeName: string): Promise<SearchOutcome> {
  const screened = new Map<string, { candidate: Candidate; score: Score }>();
  const skipped = new Set<string>();
  const keyOf = (p: number[]) => p.map((x) => x.toPrecision(12)).join(',');
  const run = async (points: number[][]) => {
    const fresh = new Map<string, Candidate>();
    for (const params of points) {
      const key = keyOf(params);
      if (screened.has(key) || skipped.has(key) || fresh.has(key)) continue;
      const scenario = family.make(params);
      if (scenario) fresh.set(key, { key, params, scenario });
      else skipped.add(key);
    }
    const list = [...fresh.values()];
    const rows = await mc.rows(list.map((c) => c.scenario), screenN);
    list.forEach((candidate, i) => screened.set(candidate.key, { candidate, score: scoreOf(rows[i]) }));
  };
  // ranked best first; grid order breaks exact ties (the Map keeps insertion order, sort is stable)
  const ranked = () => [...screened.values()].sort((a, b) => (better(a.score, b.score) ? -1 : better(b.score, a.score) ? 1 : 0));

  await run(family.coarse);
  for (let level = 1; level <= ZOOM_LEVELS; level++) {
    const step = family.spacing.map((s) => s / 2 ** level);
    const points: number[][] = [];
    for (const { candidate } of ranked().slice(0, ZOOM_SEEDS)) {
      const offsets = candidate.params.map((_, d) => [-2, -1, 0, 1, 2].map((k) => k * step[d]));
      const around = offsets.reduce<number[][]>((acc, values, d) => acc.flatMap((p) => values.map((v) => [...p, candidate.params[d] + v])), [[]]);
      for (const p of around) if (p.every((x, d) => x >= family.lower[d] && x <= family.upper[d])) points.push(p);
    }
    await run(points);
  }
  if (screened.size === 0) {
    throw new InputError([{ path: rangeName, expected: 'a range holding at least one valid policy', found: 'none' }]);
  }
  const finalists = ranked().slice(0, FINALISTS).map((x) => x.candidate);
  let best = finalists[0];
  if (fullN > screenN) {
    const rows = await mc.rows(finalists.map((c) => c.scenario), fullN);
    let bestScore = scoreOf(rows[0]);
    finalists.forEach((c, i) => {
      const s = scoreOf(rows[i]);
      if (better(s, bestScore)) {
        best = c;
        bestScore = s;
      }
    });
  }
  return { best, screened: screened.size, skipped: skipped.size, finalists: finalists.length };
}

function gridPoints(lo: number, hi: number, step: number): number[] {
  const n = Math.floor((hi - lo) / step + 1e-9);
  const points = Array.from({ length: n + 1 }, (_, i) => lo + i * step);
  if (hi - points[points.length - 1] > 1e-9 * step) points.push(hi);
  return points;
}

// ---------------------------------------------------------------------------------------------
// The comparison.

/** See the file comment. `table` must have been synthesized for `scenario`. */
export async function compareDeadbeat(
  scenario: Scenario,
  table: DeadbeatTable,
  options: ComparisonOptions = {},
  names: ComparisonOptionNames = DEFAULT_NAMES,
): Promise<DeadbeatComparison> {
  const started = performance.now();
  const o = canonicalOptions(scenario, options, names);
  if (table.knots.length === 0) {
    throw new InputError([{ path: 'table', expected: 'a deadbeat table with at least one solved knot', found: 'no knots' }]);
  }
  const withPolicy = (policy: unknown): Scenario | null => {
    try {
      return parseScenario({ ...scenario, policy, terrain: { kind: 'flat' } });
    } catch (error) {
      if (error instanceof InputError) return null;
      throw error;
    }
  };
  const stiffness = scenario.policy.stiffness;
  const [aLo, aHi] = o.attackRange;
  const [wLo, wHi] = o.rateRange;
  const { apex_height_m: y0 } = scenario.start;
  const { leg_length_m: leg, gravity_m_per_s2: g } = scenario.body;

  const fixedFamily: Family = {
    coarse: gridPoints(aLo, aHi, FIXED_COARSE_DEG).map((a) => [a]),
    spacing: [FIXED_COARSE_DEG],
    lower: [aLo],
    upper: [aHi],
    make: ([a]) => withPolicy({ angle: { kind: 'fixed', attack_deg: a }, stiffness }),
  };
  const rateStep = (wHi - wLo) / RATE_DIVISIONS;
  const retractionAtApex = (touchdown: number, rate: number) => {
    // the random walk starts from ground 0: flat-ground fall time to the touchdown height
    const drop = y0 - leg * Math.sin((touchdown * Math.PI) / 180);
    return drop > 0 ? touchdown - rate * Math.sqrt((2 * drop) / g) : NaN;
  };
  const retractionFamily: Family = {
    coarse: gridPoints(aLo, aHi, RETRACTION_COARSE_DEG).flatMap((a) => gridPoints(wLo, wHi, rateStep).map((w) => [a, w])),
    spacing: [RETRACTION_COARSE_DEG, rateStep],
    lower: [aLo, wLo],
    upper: [aHi, wHi],
    make: ([a, w]) => {
      const atApex = retractionAtApex(a, w);
      if (!Number.isFinite(atApex)) return null;
      return withPolicy({ angle: { kind: 'retraction', attack_at_apex_deg: atApex, rate_deg_per_s: w, min_deg: aLo, max_deg: aHi }, stiffness });
    },
  };

  const mc = new MonteCarlo(o.mc, options);
  const fixed = await gridSearch(fixedFamily, mc, o.screenRollouts, o.mc.rollouts, names.attack_range_deg);
  const retraction = await gridSearch(retractionFamily, mc, o.screenRollouts, o.mc.rollouts, `${names.attack_range_deg} and ${names.rate_range_deg_per_s}`);

  const deadbeatScenario = withPolicy(table.policy);
  if (!deadbeatScenario) {
    throw new InputError([
      {
        path: 'table',
        expected: "a table whose attack angle at the apex can be placed from the start apex on flat ground (both measures start there)",
        found: `attack ${round(table.policy.angle.attack_deg[0], 6)} deg at the apex`,
      },
    ]);
  }
  const entries: { name: ComparedPolicyName; scenario: Scenario; description: string }[] = [
    {
      name: 'deadbeat_table',
      scenario: deadbeatScenario,
      description:
        `deadbeat table (${table.mode === 'angle' ? 'attack angle' : 'attack angle and extension stiffness'}), ` +
        `${table.knots.length} knots, solved for ground ${rangeText(table.solved_range_m)}`,
    },
    {
      name: 'best_fixed_angle',
      scenario: fixed.best.scenario,
      description: `fixed attack angle ${round(fixed.best.params[0], 4)} deg`,
    },
    {
      name: 'best_retraction',
      scenario: retraction.best.scenario,
      description:
        `retraction at ${round(retraction.best.params[1], 4)} deg/s from ${round(retractionAtApex(retraction.best.params[0], retraction.best.params[1]), 4)} deg ` +
        `at apex (touchdown at ${round(retraction.best.params[0], 4)} deg on flat ground), clamped to ${aLo}-${aHi} deg`,
    },
  ];

  // Monte Carlo on all streams, every policy in one batch; then the step tolerances.
  const rows = await mc.rows(entries.map((e) => e.scenario), o.mc.rollouts);
  const stepNames: StepToleranceOptionNames = {
    after: names.after,
    resolution_m: 'resolution_m',
    grid_m: 'grid_m',
    settle_strides: 'settle_strides',
    settle_band_m: 'settle_band_m',
  };
  const policies: ComparedPolicy[] = [];
  let resolution = 0;
  let stepMethod = '';
  for (let i = 0; i < entries.length; i++) {
    const e = entries[i];
    const steps = await stepTolerance(e.scenario, { after: o.after }, stepNames);
    resolution = steps.resolution_m;
    stepMethod = steps.method;
    const r = await finishRobustness(e.scenario, o.mc, rows[i]);
    policies.push({
      name: e.name,
      description: e.description,
      policy: e.scenario.policy,
      step_tolerance: {
        max_step_down_m: steps.max_step_down_m,
        max_step_up_m: steps.max_step_up_m,
        first_failure_down_m: steps.step_down.first_failure_m,
        first_failure_up_m: steps.step_up.first_failure_m,
        down_bounded_by: steps.step_down.bounded_by,
        up_bounded_by: steps.step_up.bounded_by,
      },
      monte_carlo: {
        rollouts: r.rollouts,
        survived: r.survived,
        survival: r.survival,
        wilson95: r.wilson95,
        mean_strides_completed: r.mean_strides_completed,
        apex_height_rms_m: r.apex_height_rms_m,
        failures: Object.fromEntries(Object.entries(r.failures).filter(([, n]) => n > 0)),
      },
    });
  }

  const ok = STATUS_NAMES[L.STATUS_OK];
  const paired = [1, 2].map((b): PairedSurvival => {
    const counts = { both: 0, deadbeat: 0, baseline: 0, neither: 0 };
    rows[0].forEach((row, r) => {
      const d = row.status === ok;
      const q = rows[b][r].status === ok;
      if (d && q) counts.both++;
      else if (d) counts.deadbeat++;
      else if (q) counts.baseline++;
      else counts.neither++;
    });
    const n = o.mc.rollouts;
    const sd = policies[0].monte_carlo.survived;
    const sb = policies[b].monte_carlo.survived;
    return {
      baseline: policies[b].name,
      both_survived: counts.both,
      deadbeat_only_survived: counts.deadbeat,
      baseline_only_survived: counts.baseline,
      neither_survived: counts.neither,
      difference: (sd - sb) / n,
      newcombe95: newcombeDifferenceInterval(sd, n, sb, n),
    };
  });

  const rankBy = (value: (p: ComparedPolicy) => number) =>
    policies
      .map((p, i) => ({ p, i }))
      .sort((a, b) => value(b.p) - value(a.p) || a.i - b.i)
      .map(({ p }) => p.name);
  const searchReport = (outcome: SearchOutcome, space: string, coarse: string, best: Record<string, number>): SearchReport => ({
    space,
    coarse_grid: coarse,
    refinement: `${ZOOM_LEVELS} zoom levels, each a 5-point-per-parameter grid at half the previous spacing around the ${ZOOM_SEEDS} best so far`,
    screen_rollouts: o.screenRollouts,
    candidates_screened: outcome.screened,
    candidates_skipped: outcome.skipped,
    finalists: outcome.finalists,
    best,
  });
  const bestRetraction = retraction.best.params;
  return {
    criterion: COMPARISON_CRITERION,
    step_tolerance_method: { strides_after: o.after, resolution_m: resolution, method: stepMethod },
    monte_carlo_method: {
      terrain: 'random_walk',
      sigma_m: o.mc.sigma_m,
      seed: o.mc.seed,
      rollouts: o.mc.rollouts,
      strides: o.mc.strides,
      streams: `rollout r runs on terrain stream r (0 to ${o.mc.rollouts - 1}) for every policy (common random numbers)`,
    },
    policies,
    paired_survival: paired,
    ranking: {
      step_down: rankBy((p) => p.step_tolerance.max_step_down_m),
      step_up: rankBy((p) => p.step_tolerance.max_step_up_m),
      survival: rankBy((p) => p.monte_carlo.survived),
    },
    search: {
      fixed_angle: searchReport(fixed, 'attack angle (deg) within the attack range', `every ${FIXED_COARSE_DEG} deg`, {
        attack_deg: fixed.best.params[0],
      }),
      retraction: searchReport(
        retraction,
        'touchdown angle on flat ground (deg) within the attack range x rate (deg/s) within the rate range; attack at apex = touchdown angle - rate x flat-ground fall time',
        `every ${RETRACTION_COARSE_DEG} deg x every ${round(rateStep, 6)} deg/s (1/${RATE_DIVISIONS} of the rate range)`,
        {
          touchdown_on_flat_deg: bestRetraction[0],
          rate_deg_per_s: bestRetraction[1],
          attack_at_apex_deg: retractionAtApex(bestRetraction[0], bestRetraction[1]),
        },
      ),
    },
    attack_range_deg: [aLo, aHi],
    rate_range_deg_per_s: [wLo, wHi],
    wall_time_s: (performance.now() - started) / 1000,
    note:
      'step tolerance: one permanent step at the first touchdown, the policy must complete 1 + strides_after strides; ' +
      `Monte Carlo: random-walk terrain from the start apex, the scenario's ${o.mc.strides} strides. ` +
      'The baselines were chosen on the same terrain streams that score them, which flatters them (winner\'s curse).',
  };
}

function round(x: number, digits: number): number {
  return Number(x.toPrecision(digits));
}

function rangeText(range: [number, number] | null): string {
  return range === null ? 'nowhere' : `${round(range[0], 6)} to ${round(range[1], 6)} m`;
}

// ---------------------------------------------------------------------------------------------
// The table on permanent steps across its solved range.

export interface TableStepCheck {
  /** Strides run on each step: the one that meets it, then `strides_after`. */
  strides: number;
  strides_after: number;
  /** Ground heights checked: every knot in the solved range and the midpoints between neighbours. */
  ground_heights_checked: number;
  all_survived: boolean;
  /** Steps that failed (at most 20 listed), lowest first. */
  failures: { ground_height_m: number; reason: string; failed_stride: number }[];
  /** Largest |apex − target| after the last stride over the steps that survived, m; null if none did. */
  max_final_apex_error_m: number | null;
  /** The ground height where it happened; null if no step survived. */
  worst_ground_height_m: number | null;
  /** Largest |apex − target| after the first stride (the one that met the step), m; null if none. */
  max_first_apex_error_m: number | null;
  note: string;
}

/**
 * Runs the table on one permanent step at the first touchdown, at every knot of its solved range
 * and half-way between neighbouring knots, for 1 + `after` strides from the target apex. The
 * target after the step is the table's own (absolute height, or height above the ground met).
 * A one-step deadbeat table returns the first apex to its target; whether later strides stay
 * there depends on how the closed loop treats the small errors left (first_apex vs final_apex).
 */
export async function tableStepCheck(scenario: Scenario, table: DeadbeatTable, after: number = DEFAULT_AFTER): Promise<TableStepCheck> {
  if (!(Number.isInteger(after) && after >= 1 && after <= MAX_AFTER)) {
    throw new InputError([{ path: 'after', expected: `an integer from 1 to ${MAX_AFTER}`, found: describeFound(after) }]);
  }
  const strides = 1 + after;
  const range = table.solved_range_m;
  const knots = range ? table.knots.map((k) => k.ground_height_m).filter((h) => h >= range[0] && h <= range[1]).sort((a, b) => a - b) : [];
  const heights: number[] = [];
  knots.forEach((h, i) => {
    heights.push(h);
    if (i + 1 < knots.length) heights.push(0.5 * (h + knots[i + 1]));
  });
  const note =
    'one permanent step at the first touchdown from the target apex; the apex error is about the table\'s target ' +
    `(${table.target.height_reference === 'absolute' ? 'the same absolute apex height' : 'the same height above the ground met'})`;
  if (heights.length === 0) {
    return {
      strides,
      strides_after: after,
      ground_heights_checked: 0,
      all_survived: false,
      failures: [],
      max_final_apex_error_m: null,
      worst_ground_height_m: null,
      max_first_apex_error_m: null,
      note,
    };
  }
  const engine = await loadEngine();
  // validated on the lowest step checked, where the leg is always placeable if anywhere
  const scenarioOf = parseScenario({ ...scenario, policy: table.policy, terrain: { kind: 'steps', ground_heights_m: [heights[0]] }, strides: 1 });
  const base = buildModel(scenarioOf);
  const models = heights.map((h) => {
    const fields = base.fields.slice();
    fields[L.M_TERRAIN_KIND] = L.TERRAIN_STEPS;
    fields[L.M_STEPS_N] = 1;
    return { ...base, fields, groundHeights: Float64Array.of(h) };
  });
  const { apex_height_m: y, forward_speed_m_per_s: v } = scenario.start;
  const inputs = new Float64Array(heights.length * L.I_SIZE); // (heights x I_SIZE)
  heights.forEach((_, i) => inputs.set(rolloutInput(y, v, 0, i), i * L.I_SIZE));
  // the whole run's summaries, and the first stride's record from a run of that stride alone (the
  // same stride: a rollout does not depend on how many strides follow): records of every stride
  // would be heights x strides x R_SIZE values, gigabytes for a long check
  const batch = engine.runBatch({ model: models, inputs, strides });
  const firstStride = engine.runBatch({ model: models, inputs, strides: 1, records: true });
  const failures: TableStepCheck['failures'] = [];
  let worst: number | null = null;
  let worstAt: number | null = null;
  let first: number | null = null;
  heights.forEach((h, i) => {
    const s = (field: number) => batch.summaries[i * L.S_SIZE + field];
    const target = table.target.height_reference === 'absolute' ? table.target.apex_height_m : table.target.apex_height_m + h;
    const completed = s(L.S_STRIDES_COMPLETED);
    if (completed >= 1) {
      const e1 = Math.abs(firstStride.records![i * L.R_SIZE + L.R_NEXT_APEX_HEIGHT] - target);
      first = Math.max(first ?? 0, e1);
    }
    if (s(L.S_STATUS) !== L.STATUS_OK) {
      failures.push({ ground_height_m: h, reason: STATUS_NAMES[s(L.S_STATUS)] ?? `status_${s(L.S_STATUS)}`, failed_stride: completed });
      return;
    }
    const e = Math.abs(s(L.S_FINAL_HEIGHT) - target);
    if (worst === null || e > worst) {
      worst = e;
      worstAt = h;
    }
  });
  return {
    strides,
    strides_after: after,
    ground_heights_checked: heights.length,
    all_survived: failures.length === 0,
    failures: failures.slice(0, 20),
    max_final_apex_error_m: worst,
    worst_ground_height_m: worstAt,
    max_first_apex_error_m: first,
    note,
  };
}

// ---------------------------------------------------------------------------------------------
// The machine's loads along the table, and the result file.

export interface DeadbeatLoads {
  /** [min, max] over the knots of the peak leg force, N. */
  peak_leg_force_N: [number, number];
  /** The same in body weights (m g). */
  peak_leg_force_body_weights: [number, number];
  /** Largest |Fx/Fy| over the knots: the friction coefficient the table needs. */
  peak_friction_ratio: number;
  /** Largest leg compression over the knots, m. */
  max_compression_m: number;
  /** The same as a fraction of the leg length. */
  max_compression_fraction_of_leg: number;
}

/** Loads along the table's knots, or null when it has none. */
export function deadbeatLoads(scenario: Scenario, table: DeadbeatTable): DeadbeatLoads | null {
  if (table.knots.length === 0) return null;
  const weight = scenario.body.mass_kg * scenario.body.gravity_m_per_s2;
  const forces = table.knots.map((k) => k.peak_leg_force_N);
  const lo = Math.min(...forces);
  const hi = Math.max(...forces);
  const compression = Math.max(...table.knots.map((k) => k.max_compression_m));
  return {
    peak_leg_force_N: [lo, hi],
    peak_leg_force_body_weights: [lo / weight, hi / weight],
    peak_friction_ratio: Math.max(...table.knots.map((k) => k.peak_friction_ratio)),
    max_compression_m: compression,
    max_compression_fraction_of_leg: compression / scenario.body.leg_length_m,
  };
}

export const RESULT_FORMAT = 'pronk-result';
export const RESULT_FORMAT_VERSION = 1;

/** The options a deadbeat result was made with, as recorded in its provenance. */
export interface DeadbeatRunOptions {
  synthesis: DeadbeatOptions;
  /** Strides after a step in the step check (and the comparison's step tolerance). */
  after: number;
  comparison: ComparisonOptions | null;
}

export interface DeadbeatResultFile {
  format: typeof RESULT_FORMAT;
  format_version: typeof RESULT_FORMAT_VERSION;
  kind: 'deadbeat';
  /** The model the policy was made for (see json-output.ts). */
  model: typeof MODEL_KIND;
  pronk_version: string;
  /** SHA-256 of the canonical JSON of `scenario`. */
  scenario_sha256: string;
  /** When the result was made (ISO 8601, UTC). */
  created: string;
  options: { synthesis: Record<string, unknown>; after: number; comparison: Record<string, unknown> | null };
  provenance: { pronk_version: string; scenario_sha256: string; date: string; options: DeadbeatResultFile['options'] };
  /** The scenario the table was made for, as validated (defaults filled), running the table. */
  scenario: Scenario;
  /** The scenario's own policy before the table replaced it. */
  base_policy: Scenario['policy'];
  /** The table as a policy block: `{ ...scenario, policy }` runs it (`pronk simulate`). */
  policy: DeadbeatTable['policy'];
  table: Omit<DeadbeatTable, 'policy'>;
  loads: DeadbeatLoads | null;
  /** The table on permanent steps across its solved range (tableStepCheck). */
  step_check: TableStepCheck | null;
  comparison: DeadbeatComparison | null;
  caution: string;
}

/** The result file of a deadbeat run (`pronk deadbeat --out`). */
export async function deadbeatResult(
  scenario: Scenario,
  table: DeadbeatTable,
  analyses: { stepCheck: TableStepCheck | null; comparison: DeadbeatComparison | null },
  options: DeadbeatRunOptions,
  created: Date = new Date(),
): Promise<DeadbeatResultFile> {
  const { policy, ...details } = table;
  // the scenario the table was made for, now running the table (as an optimization result's does)
  const running = { ...scenario, policy } as unknown as Scenario;
  const scenarioSha256 = await contentHash(running);
  const runOptions = {
    synthesis: plainOptions(options.synthesis),
    after: options.after,
    comparison: options.comparison ? plainOptions(options.comparison) : null,
  };
  return {
    format: RESULT_FORMAT,
    format_version: RESULT_FORMAT_VERSION,
    kind: 'deadbeat',
    model: MODEL_KIND,
    pronk_version: PRONK_VERSION,
    scenario_sha256: scenarioSha256,
    created: created.toISOString(),
    options: runOptions,
    // the same provenance block as an optimization result (pronk export reads it)
    provenance: {
      pronk_version: PRONK_VERSION,
      scenario_sha256: scenarioSha256,
      date: created.toISOString(),
      options: runOptions,
    },
    scenario: running,
    base_policy: scenario.policy,
    policy,
    table: details,
    loads: deadbeatLoads(scenario, table),
    step_check: analyses.stepCheck,
    comparison: analyses.comparison,
    caution: SAFETY_CAUTION,
  };
}

// Options as JSON data: functions (a browser's runBatch) and execution details left out.
function plainOptions(options: object): Record<string, unknown> {
  return Object.fromEntries(Object.entries(options).filter(([k, v]) => typeof v !== 'function' && k !== 'workers' && v !== undefined));
}
