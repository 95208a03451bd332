// The study evaluator: one candidate x (the free parameters) → its scores, its constraint margins
// and the one number NLopt minimizes. Synchronous, on one Engine, so that it runs inside a worker
// next to NLopt. Deterministic: the terrains and robots are fixed when the evaluator is made
// (common random numbers), so NLopt sees a deterministic function of x and two candidates are
// compared on the same rollouts.
//
// Rollouts of the Monte Carlo terms (survival, tracking): term j's rollout r runs on terrain stream
// offset_j + r (offset_j = the rollouts of the Monte Carlo terms before j) of the training seed, or
// of the held-out seed for the 'holdout' set, with robot offset_j + r of the model-mismatch draws
// made from the same seed. The held-out set uses holdout.rollouts rollouts per term. Basin and
// step-down terms are deterministic probes of the nominal robot on flat ground and are the same in
// both sets.
//
// Constraints measured on rollouts (leg force, friction, compression, touchdown angle) take the
// maxima (and the minimum angle) of the kernel's summaries over the completed strides of every
// Monte Carlo rollout and of the nominal gait (the candidate from its start on flat ground for the
// scenario's `strides`, nominal robot). Basin cells and step-down probes are left out: they start
// from or meet deliberately extreme states, and a limit over them would penalize a larger basin.
// Constraints on the parameters (hip rate, actuator stiffness) read the candidate scenario.

import * as L from '../../../assembly/layout.js';
import { robustnessModel } from '../analysis/robustness.js';
import { stepModel } from '../analysis/stepdown.js';
import { axisValues } from '../analysis/basin.js';
import { rolloutInput, type Engine, type ModelBlock } from '../engine.js';

/** What an evaluator needs of an engine: its batches (a host may split them over threads). */
export type BatchEngine = Pick<Engine, 'runBatch'>;
import { InputError, describeFound } from '../errors.js';
import { buildModel, DEG, landingLegLength, STATUS_NAMES, startInput } from '../model.js';
import { isBiped, sectionEnergy, sectionInput, speedAtEnergy, startState } from '../models/biped.js';
import { bipedRobotBlock, factorsPerRobot, shorterLegM, stiffnessScales } from './kinds.js';
import { recoverRows, type RandomKickSpec } from '../analysis/recover.js';
import type { LateralScenario } from '../models/lateral.js';
import { parseScenario, type Scenario } from '../scenario.js';
import { Z_95, newcombeDifferenceInterval, wilsonInterval } from '../stats.js';
import {
  hasConstraints,
  isMonteCarloTerm,
  lateralScenarioOf,
  parseCandidateScenario,
  type RecoveryTerm,
  scenarioValueAt,
  type BasinTerm,
  type ModelMismatch,
  type MonteCarloTerm,
  type StepDownTerm,
  type Study,
  type TermKind,
} from './study.js';

/**
 * 'training': the search's rollouts. 'holdout': the held-out seed, holdout.rollouts per term.
 * 'screening': the first SCREENING_ROLLOUTS training rollouts of each Monte Carlo term, for the cheap
 * look at candidate start points (screen()).
 */
export type EvaluationSet = 'training' | 'holdout' | 'screening';

/** Rollouts per Monte Carlo term when screening candidate start points. */
export const SCREENING_ROLLOUTS = 16;

/**
 * How much the strides a fallen rollout completed count in a Monte Carlo term's score: the mean
 * fraction of its strides that the fallen rollouts completed, times this, counts as that many
 * survivors. Below 1, so it only breaks ties: it never outweighs one more rollout that survives,
 * and it gives the search a slope on a plateau where every rollout falls (the farther they get
 * before falling, the better).
 */
export const FALL_TIE_BREAK = 0.5;

/**
 * The recovery term's tie-break for faster recovery: the mean over the recovered kicks of
 * 1 − strides_to_recover / (strides_after + 1), times this, counts as that many recovered kicks.
 * Below 1 (as FALL_TIE_BREAK), so it never outweighs one more kick recovered from.
 */
export const RECOVERY_TIE_BREAK = 0.5;

/** A limit violated by more than this many times its own size counts as this much (keeps NLopt's values finite). */
export const MAX_NORMALIZED_VIOLATION = 1e6;

export interface SurvivalDetails {
  rollouts: number;
  survived: number;
  survival: number;
  /** Wilson 1927 score interval at 95 %. */
  wilson95: [number, number];
  mean_strides_completed: number;
  /** Mean over the fallen rollouts of the fraction of their strides they completed; null when none fell (the tie-break, FALL_TIE_BREAK). */
  fallen_stride_fraction: number | null;
  /** Rollouts ended by each failure code (STATUS_NAMES), only codes that occurred. */
  failures: Record<string, number>;
}

export interface TrackingDetails extends SurvivalDetails {
  target: { apex_height_m: number; forward_speed_m_per_s: number };
  /** Over every completed stride of every rollout; null when none completed. */
  apex_height_rms_m: number | null;
  forward_speed_rms_m_per_s: number | null;
  strides_completed_total: number;
  /** rms_height/height_scale + rms_speed/speed_scale, capped at fall_penalty (fall_penalty when nothing completed). */
  tracking_error: number;
  /** fall_penalty × (fell − FALL_TIE_BREAK × fallen_stride_fraction) / rollouts. */
  fall_cost: number;
}

export interface BasinDetails {
  cells: number;
  converged: number;
  attracted_fraction: number;
}

export interface StepDownDetails {
  max_step_down_m: number;
  leg_length_m: number;
  /** False when the policy does not survive 1 + strides_after strides on flat ground (score 0). */
  survives_flat: boolean;
  /** 'first_failure', or 'search_limit' when every drop up to one leg length survived. */
  bounded_by: 'first_failure' | 'search_limit';
}

/** Lateral model: random kicks recovered from (the Monte Carlo of pronk recover). */
export interface RecoveryDetails {
  rollouts: number;
  /** Kicks after which the gait recovered (as pronk recover's `recovered`). */
  recovered: number;
  recovery: number;
  /** Wilson 1927 score interval at 95 %. */
  wilson95: [number, number];
  survived: number;
  /** Median left touchdowns from the kick to recovery over the recovered kicks; null when none recovered. */
  median_strides_to_recover: number | null;
  /** Mean over the recovered kicks of 1 − strides_to_recover / (strides_after + 1); null when none recovered (the tie-break, RECOVERY_TIE_BREAK). */
  speed_fraction: number | null;
  /** Rollouts ended by each failure code (STATUS_NAMES), only codes that occurred. */
  failures: Record<string, number>;
}

export interface TermResult {
  kind: TermKind;
  weight: number;
  /** The term's score (larger is better; see study.ts for each sense and scale). */
  score: number;
  details: SurvivalDetails | TrackingDetails | BasinDetails | StepDownDetails | RecoveryDetails;
}

export interface ConstraintResult {
  /** The study field, e.g. max_leg_force_N or leg_angle_range_deg.min_deg. */
  name: string;
  /** 'upper': value <= limit; 'lower': value >= limit. */
  bound: 'upper' | 'lower';
  measured_on: 'rollouts' | 'parameters';
  /** In the limit's units (N; |Fx/Fy|; fraction of the leg length; deg; deg/s; N/m). null when nothing was measured (no stride completed, no touchdown reached). */
  value: number | null;
  limit: number;
  /** Distance inside the limit, in its units: limit − value (upper) or value − limit (lower); >= 0 is feasible; null with value. */
  margin: number | null;
  /** The margin as a percentage of the limit: 100 · margin / |limit| (negative: violated by that much); null with value. */
  margin_percent: number | null;
  /** The limit with the smallest margin_percent at this point (the first of equals): the one that binds. */
  binding: boolean;
  /** −margin / |limit|, at most MAX_NORMALIZED_VIOLATION: <= 0 is feasible (NLopt's c(x) <= 0); 0 when nothing was measured. */
  normalized: number;
}

export interface Evaluation {
  x: number[];
  /** Free parameter path → value. */
  parameters: Record<string, number>;
  /** The score, LARGER IS BETTER: objective − penalty. What the search maximizes and every view shows. */
  score: number;
  /** NLopt's minimized value: −score (kept for readers of older result files). */
  value: number;
  /** Σ weight × term score (larger is better); for an invalid candidate, 1 below the worst any valid one can score. */
  objective: number;
  /** penalty_weight × Σ max(0, normalized)² under penalty handling, else 0. */
  penalty: number;
  terms: TermResult[];
  /** Empty for an invalid candidate. */
  constraints: ConstraintResult[];
  feasible: boolean;
  /** False when the candidate scenario does not validate (e.g. min_deg >= max_deg after a move), or its score is not finite. */
  valid: boolean;
  message?: string;
}

/** A cheap look at a candidate start point (StudyEvaluator.screen, on the 'screening' set). */
export interface Screening {
  x: number[];
  /** The candidate scenario validates. */
  valid: boolean;
  /** The nominal gait (flat ground, the scenario's strides, nominal robot): strides completed of how many, and how it ended. */
  nominal: { strides_completed: number; strides: number; status: string };
  /** Over the screening rollouts of every Monte Carlo term together (0 and 0 when the study has none). */
  rollouts: number;
  survived: number;
  /** Mean fraction of their strides that the screening rollouts completed (1 when the study has none). */
  stride_fraction: number;
  /**
   * Viable: valid, the nominal gait completes every stride, and (when the study has Monte Carlo
   * terms) at least one screening rollout survives. A search started there has a slope to follow.
   */
  viable: boolean;
  /** Ranks candidates that are not viable: nominal fraction completed + survival + stride fraction (each in [0, 1]); −1 when invalid. */
  rank: number;
}

// ---------------------------------------------------------------------------------------------
// Model mismatch: seeded body factors.

// "mismatch" in ASCII: keeps these draws apart from anything else seeded with the same number.
const MISMATCH_DOMAIN = 0x6d69736d61746368n;
const MASK_64 = (1n << 64n) - 1n;

// Uniform doubles in [0, 1) with 53 random bits from xoshiro128** (Blackman & Vigna 2018,
// "Scrambled linear pseudorandom number generators", reference code xoshiro128starstar.c), its
// 128-bit state filled by SplitMix64 from the seed (Steele, Lea, Flood 2014, OOPSLA; constants as
// in Vigna's splitmix64.c), as the xoshiro authors recommend. Two 32-bit outputs make one double
// (a >>> 5, b >>> 6: the 53-bit construction of Matsumoto & Nishimura's genrand_res53).
function seededUniform(seed: number): () => number {
  let state = (BigInt(seed) ^ MISMATCH_DOMAIN) & MASK_64;
  const splitMix64 = () => {
    state = (state + 0x9e3779b97f4a7c15n) & MASK_64;
    let z = state;
    z = ((z ^ (z >> 30n)) * 0xbf58476d1ce4e5b9n) & MASK_64;
    z = ((z ^ (z >> 27n)) * 0x94d049bb133111ebn) & MASK_64;
    return z ^ (z >> 31n);
  };
  const first = splitMix64();
  const second = splitMix64();
  const s = new Uint32Array([Number(first & 0xffffffffn), Number(first >> 32n), Number(second & 0xffffffffn), Number(second >> 32n)]);
  const rotl = (x: number, k: number) => (x << k) | (x >>> (32 - k));
  const next = () => {
    const result = Math.imul(rotl(Math.imul(s[1], 5), 7), 9) >>> 0;
    const t = s[1] << 9;
    s[2] ^= s[0];
    s[3] ^= s[1];
    s[1] ^= s[2];
    s[0] ^= s[3];
    s[2] ^= t;
    s[3] = rotl(s[3], 11);
    return result;
  };
  return () => ((next() >>> 5) * 67108864 + (next() >>> 6)) / 9007199254740992;
}

/**
 * Body factors for `count` robots, (count × 3): mass, leg stiffness, leg length, in that order per
 * robot, drawn in that order. Uniform: 1 + f·(2u − 1), in [1 − f, 1 + f). Normal: 1 + f·z with z
 * standard normal (Box–Muller) truncated at |z| <= 3 by redrawing. No mismatch: all 1.
 */
export function mismatchFactors(mismatch: ModelMismatch | null, seed: number, count: number): Float64Array {
  return drawFactors(mismatch, seed, count, false);
}

/**
 * Body factors for `count` two-leg robots, (count × 5): mass, left leg stiffness, left leg length,
 * right leg stiffness, right leg length, drawn in that order per robot as mismatchFactors draws
 * (each leg's stiffness and length drawn separately, with the study's fractions).
 */
export function mismatchFactorsPerLeg(mismatch: ModelMismatch | null, seed: number, count: number): Float64Array {
  return drawFactors(mismatch, seed, count, true);
}

function drawFactors(mismatch: ModelMismatch | null, seed: number, count: number, perLeg: boolean): Float64Array {
  const width = perLeg ? 5 : 3;
  const factors = new Float64Array(count * width).fill(1);
  if (!mismatch) return factors;
  const uniform = seededUniform(seed);
  let spare: number | null = null;
  const gaussian = () => {
    if (spare !== null) {
      const z = spare;
      spare = null;
      return z;
    }
    const u1 = 1 - uniform(); // (0, 1]
    const u2 = uniform();
    const radius = Math.sqrt(-2 * Math.log(u1));
    spare = radius * Math.sin(2 * Math.PI * u2);
    return radius * Math.cos(2 * Math.PI * u2);
  };
  const truncated = () => {
    for (;;) {
      const z = gaussian();
      if (Math.abs(z) <= 3) return z;
    }
  };
  const leg = [mismatch.leg_stiffness_fraction, mismatch.leg_length_fraction];
  const fractions = perLeg ? [mismatch.mass_fraction, ...leg, ...leg] : [mismatch.mass_fraction, ...leg];
  for (let i = 0; i < count; i++) {
    for (let k = 0; k < width; k++) {
      const draw = mismatch.distribution === 'uniform' ? 2 * uniform() - 1 : truncated();
      factors[i * width + k] = 1 + fractions[k] * draw;
    }
  }
  return factors;
}

// ---------------------------------------------------------------------------------------------
// Paired difference of proportions.

/**
 * 95 % interval for p1 − p2 from paired binary outcomes (the same rollouts run by two policies):
 * `both` succeeded under both, `onlyFirst` / `onlySecond` under one, `neither` under none. Newcombe's
 * hybrid score method for paired data (R. G. Newcombe 1998, "Improved confidence intervals for the
 * difference between binomial proportions based on paired data", Stat. Med. 17:2635–2650, method
 * 10; formula from memory): the two Wilson intervals combined with the phi correlation of the 2×2
 * table, phi's numerator reduced by n/2 towards 0 when positive. With phi = 0 it is the
 * independent-samples interval (newcombeDifferenceInterval).
 */
export function pairedDifferenceInterval(
  both: number,
  onlyFirst: number,
  onlySecond: number,
  neither: number,
  z: number = Z_95,
): [number, number] {
  const n = both + onlyFirst + onlySecond + neither;
  for (const [name, count] of [['both', both], ['onlyFirst', onlyFirst], ['onlySecond', onlySecond], ['neither', neither]] as const) {
    if (!(Number.isSafeInteger(count) && count >= 0)) throw new InputError([{ path: name, expected: 'a count: an integer >= 0', found: describeFound(count) }]);
  }
  if (n < 1) throw new InputError([{ path: 'both + onlyFirst + onlySecond + neither', expected: 'at least one pair', found: '0' }]);
  const s1 = both + onlyFirst;
  const s2 = both + onlySecond;
  const p1 = s1 / n;
  const p2 = s2 / n;
  const [l1, u1] = wilsonInterval(s1, n, z);
  const [l2, u2] = wilsonInterval(s2, n, z);
  const marginals = s1 * (n - s1) * s2 * (n - s2);
  const cross = both * neither - onlyFirst * onlySecond;
  const numerator = cross > 0 ? Math.max(cross - n / 2, 0) : cross;
  const phi = marginals > 0 ? numerator / Math.sqrt(marginals) : 0;
  const d = p1 - p2;
  const below = Math.sqrt(Math.max(0, (p1 - l1) ** 2 - 2 * phi * (p1 - l1) * (u2 - p2) + (u2 - p2) ** 2));
  const above = Math.sqrt(Math.max(0, (u1 - p1) ** 2 - 2 * phi * (u1 - p1) * (p2 - l2) + (p2 - l2) ** 2));
  return [Math.max(-1, d - below), Math.min(1, d + above)];
}

// ---------------------------------------------------------------------------------------------
// The evaluator.

interface MonteCarloPlan {
  term: number; // index into study.objective.terms
  rollouts: number;
  streamStart: number;
}

// Rollouts that share a stride count run in one kernel call, each picking its model by I_MODEL.
interface BatchGroup {
  strides: number;
  members: { plan: MonteCarloPlan | null; first: number; count: number }[]; // plan null: the nominal gait
  inputs: Float64Array; // (rollouts × I_SIZE), built once
  legFactors: Float64Array; // (rollouts), the leg-length factor of each rollout
  // two-leg model: each rollout's robot factors (rollouts × 5: mass, k and L of the left leg, of
  // the right) and its own model block (I_MODEL = the rollout's index in the group); null otherwise
  robots: Float64Array | null;
}

interface Memo {
  x: number[];
  evaluation: Evaluation;
  survived: Map<number, Uint8Array>; // term index → (rollouts) 1 = completed every stride
}

// A candidate with no scores: worse than any valid one without a constraint violation.
const INVALID_MARGIN = 1;
// Rollouts per kernel call when an evaluation reports its progress.
const PROGRESS_CHUNK_ROLLOUTS = 250;

export class StudyEvaluator {
  readonly dimension: number;
  readonly lower: number[];
  readonly upper: number[];
  readonly start: number[];
  readonly paths: string[];
  readonly set: EvaluationSet;
  /** The seed of this set's terrains and robots. */
  readonly seed: number;
  /** Rollouts per Monte Carlo term in this set. */
  readonly rolloutsPerTerm: (number | null)[];
  readonly constraintHandling: 'native' | 'penalty' | 'none';
  /** Names of the constraints, in the order of Evaluation.constraints and constraintFunctions(). */
  readonly constraintNames: string[];
  /** An invalid candidate's objective: the worst weighted sum any valid candidate can score, minus 1. */
  readonly invalidObjective: number;
  /** An invalid candidate's value: −invalidObjective, plus the penalty of every constraint violated by 1 (penalty handling). */
  readonly invalidValue: number;

  private readonly groups: BatchGroup[];
  private memo: Memo | null = null;
  /** Lateral model: each recovery term's first kick stream (offset by the terms before it). */
  private readonly kickStreams: number[] = [];

  constructor(
    readonly study: Study,
    private readonly engine: BatchEngine,
    set: EvaluationSet = 'training',
  ) {
    const free = study.free_parameters;
    this.dimension = free.length;
    this.lower = free.map((p) => p.lower);
    this.upper = free.map((p) => p.upper);
    this.start = free.map((p) => p.start);
    this.paths = free.map((p) => p.path);
    this.set = set;
    const terms = study.objective.terms;
    this.seed = set === 'holdout' ? study.holdout.seed : study.seed;
    this.constraintHandling = hasConstraints(study.constraints) ? study.search.constraint_handling : 'none';
    this.constraintNames = constraintNames(study);

    // Streams and robots, fixed for every candidate.
    const plans: MonteCarloPlan[] = [];
    let streams = 0;
    if (lateralScenarioOf(study.scenario)) {
      // lateral: recovery terms only (kinds.ts); kick r of term j from stream offset_j + r
      let kicks = 0;
      this.rolloutsPerTerm = terms.map((term) => {
        if (term.kind !== 'recovery') return null;
        const span = set === 'holdout' ? study.holdout.rollouts : term.rollouts;
        this.kickStreams.push(kicks);
        kicks += span;
        return set === 'screening' ? Math.min(term.rollouts, SCREENING_ROLLOUTS) : span;
      });
      this.groups = [];
      this.invalidObjective = -INVALID_MARGIN;
      this.invalidValue = INVALID_MARGIN + (this.constraintHandling === 'penalty' ? study.search.penalty_weight * this.constraintNames.length * INVALID_MARGIN ** 2 : 0);
      return;
    }
    this.rolloutsPerTerm = terms.map((term, i) => {
      if (!isMonteCarloTerm(term)) return null;
      // screening runs the first rollouts of each term's training streams (and robots)
      const span = set === 'holdout' ? study.holdout.rollouts : term.rollouts;
      const rollouts = set === 'screening' ? Math.min(term.rollouts, SCREENING_ROLLOUTS) : span;
      plans.push({ term: i, rollouts, streamStart: streams });
      streams += span;
      return rollouts;
    });
    const biped = isBiped(study.scenario);
    const width = factorsPerRobot(study.scenario);
    const robots = biped ? mismatchFactorsPerLeg(study.model_mismatch, this.seed, streams) : mismatchFactors(study.model_mismatch, this.seed, streams);
    const byStrides = new Map<number, { plan: MonteCarloPlan | null }[]>();
    const join = (strides: number, plan: MonteCarloPlan | null) => {
      const list = byStrides.get(strides) ?? [];
      list.push({ plan });
      byStrides.set(strides, list);
    };
    for (const plan of plans) join((terms[plan.term] as MonteCarloTerm).strides, plan);
    join(study.scenario.strides, null);
    const { apex_height_m: y0, forward_speed_m_per_s: v0 } = study.scenario.start;
    this.groups = [...byStrides.entries()].map(([strides, list]) => {
      const total = list.reduce((sum, m) => sum + (m.plan ? m.plan.rollouts : 1), 0);
      const inputs = new Float64Array(total * L.I_SIZE);
      const legFactors = new Float64Array(total).fill(1);
      const groupRobots = biped ? new Float64Array(total * width).fill(1) : null;
      let at = 0;
      const members = list.map(({ plan }, model) => {
        const count = plan ? plan.rollouts : 1;
        for (let r = 0; r < count; r++) {
          const stream = plan ? plan.streamStart + r : 0;
          if (groupRobots) {
            // two legs: the robot's leg factors go into its own model block (bipedRobotBlock)
            const row = startInput(study.scenario, stream);
            row[L.I_MODEL] = at + r;
            if (plan) {
              const robot = robots.subarray(stream * width, (stream + 1) * width);
              groupRobots.set(robot, (at + r) * width);
              row[L.I_MASS_SCALE] = robot[0];
            }
            inputs.set(row, (at + r) * L.I_SIZE);
            continue;
          }
          const row = rolloutInput(y0, v0, stream, model);
          if (plan) {
            const robot = (plan.streamStart + r) * 3;
            row[L.I_MASS_SCALE] = robots[robot];
            row[L.I_STIFFNESS_SCALE] = robots[robot + 1];
            row[L.I_LEG_SCALE] = robots[robot + 2];
            legFactors[at + r] = robots[robot + 2];
          }
          inputs.set(row, (at + r) * L.I_SIZE);
        }
        const member = { plan, first: at, count };
        at += count;
        return member;
      });
      return { strides, members, inputs, legFactors, robots: groupRobots };
    });

    // scores are >= 0 except tracking's, >= −2·fall_penalty
    const worst = terms.reduce((sum, term) => sum + term.weight * (term.kind === 'tracking' ? -2 * term.fall_penalty : 0), 0);
    const penaltyAll = this.constraintHandling === 'penalty' ? study.search.penalty_weight * this.constraintNames.length * INVALID_MARGIN ** 2 : 0;
    this.invalidObjective = worst - INVALID_MARGIN;
    this.invalidValue = -this.invalidObjective + penaltyAll;
  }

  /** The candidate scenario: the base scenario with the free parameters set to x, validated (throws an InputError). */
  scenarioAt(x: readonly number[]): Scenario {
    this.checkLength(x);
    return parseCandidateScenario(scenarioValueAt(this.study.scenario, this.study.free_parameters, x));
  }

  /**
   * Scores, constraints and NLopt's value at x. The same x gives the identical Evaluation (the last
   * one is memoized: treat it as read-only). onRollouts, when given, hears how many of the Monte
   * Carlo and nominal rollouts (rolloutCount) are done; they then run in chunks (the same numbers).
   */
  evaluate(x: readonly number[], onRollouts?: (done: number, total: number) => void): Evaluation {
    return this.run(x, onRollouts).evaluation;
  }

  /** The rollouts one evaluation runs in its Monte Carlo terms and nominal gait (the unit of evaluate's progress). */
  get rolloutCount(): number {
    if (lateralScenarioOf(this.study.scenario)) return this.rolloutsPerTerm.reduce((n: number, r) => n + (r ?? 0), 0);
    return this.groups.reduce((n, g) => n + g.inputs.length / L.I_SIZE, 0);
  }

  /** A cheap look at x for choosing start points: valid, nominal gait, screening rollouts (use a 'screening' evaluator). */
  screen(xIn: readonly number[]): Screening {
    this.checkLength(xIn);
    const x = Array.from(xIn);
    const nominalStrides = this.study.scenario.strides;
    let scenario: Scenario;
    try {
      if (!x.every(Number.isFinite)) throw new InputError([{ path: 'x', expected: 'finite parameter values', found: describeFound(x) }]);
      scenario = this.scenarioAt(x);
    } catch (error) {
      if (!(error instanceof InputError)) throw error;
      return { x, valid: false, nominal: { strides_completed: 0, strides: nominalStrides, status: 'invalid' }, rollouts: 0, survived: 0, stride_fraction: 0, viable: false, rank: -1 };
    }
    const lateral = lateralScenarioOf(scenario);
    if (lateral) {
      // the nominal gait: the periodic gait the kicks start from (none: every kick is refused)
      const run = this.runLateral(lateral);
      if ('failure' in run) {
        return { x, valid: true, nominal: { strides_completed: 0, strides: nominalStrides, status: 'no_gait' }, rollouts: 0, survived: 0, stride_fraction: 0, viable: false, rank: 0 };
      }
      let rollouts = 0;
      let recovered = 0;
      for (const term of run.terms) {
        const d = term.result.details as RecoveryDetails;
        rollouts += d.rollouts;
        recovered += d.recovered;
      }
      const fraction = rollouts > 0 ? recovered / rollouts : 1;
      return {
        x,
        valid: true,
        nominal: { strides_completed: nominalStrides, strides: nominalStrides, status: 'completed' },
        rollouts,
        survived: recovered,
        stride_fraction: fraction,
        viable: rollouts === 0 || recovered > 0,
        rank: 1 + 2 * fraction,
      };
    }
    const runs = this.runGroups(scenario);
    let rollouts = 0;
    let survived = 0;
    let fraction = 0;
    for (const term of runs.monteCarlo) {
      const d = term.result.details as SurvivalDetails;
      const strides = (this.study.objective.terms[term.term] as MonteCarloTerm).strides;
      rollouts += d.rollouts;
      survived += d.survived;
      fraction += (d.mean_strides_completed / strides) * d.rollouts;
    }
    const nominal = runs.nominal;
    const strideFraction = rollouts > 0 ? fraction / rollouts : 1;
    const survival = rollouts > 0 ? survived / rollouts : 1;
    const nominalDone = nominal.strides_completed === nominalStrides;
    return {
      x,
      valid: true,
      nominal: { strides_completed: nominal.strides_completed, strides: nominalStrides, status: nominal.status },
      rollouts,
      survived,
      stride_fraction: strideFraction,
      viable: nominalDone && (rollouts === 0 || survived > 0),
      rank: nominal.strides_completed / nominalStrides + survival + strideFraction,
    };
  }

  /** NLopt's objective: evaluate(x).value. */
  objectiveFunction(): (x: number[]) => number {
    return (x) => this.evaluate(x).value;
  }

  /**
   * NLopt-style c(x) <= 0, one per constraint (the normalized values), reusing the evaluation of
   * the same x (the last x is memoized). Empty unless constraint handling is 'native'; an invalid
   * candidate gives +1 for every constraint.
   */
  constraintFunctions(): ((x: number[]) => number)[] {
    if (this.constraintHandling !== 'native') return [];
    return this.constraintNames.map((_, k) => (x: number[]) => {
      const evaluation = this.evaluate(x);
      return evaluation.valid ? evaluation.constraints[k].normalized : INVALID_MARGIN;
    });
  }

  /** Per Monte Carlo term, which rollouts completed every stride (1) at x: the pairs of comparePolicies. */
  survivalByRollout(x: readonly number[]): { term: number; kind: TermKind; survived: Uint8Array }[] {
    const memo = this.run(x);
    return [...memo.survived.entries()]
      .sort(([a], [b]) => a - b)
      .map(([term, survived]) => ({ term, kind: this.study.objective.terms[term].kind, survived }));
  }

  private checkLength(x: readonly number[]): void {
    if (x.length !== this.dimension) throw new Error(`a candidate has ${this.dimension} values (free_parameters), found ${x.length}`);
  }

  private run(xIn: readonly number[], onRollouts?: (done: number, total: number) => void): Memo {
    this.checkLength(xIn);
    const x = Array.from(xIn);
    const memo = this.memo;
    if (memo && memo.x.every((v, i) => Object.is(v, x[i]))) {
      if (onRollouts) onRollouts(this.rolloutCount, this.rolloutCount);
      return memo;
    }
    const parameters: Record<string, number> = {};
    this.paths.forEach((path, i) => (parameters[path] = x[i]));
    let scenario: Scenario;
    try {
      if (!x.every(Number.isFinite)) throw new InputError([{ path: 'x', expected: 'finite parameter values', found: describeFound(x) }]);
      scenario = this.scenarioAt(x);
    } catch (error) {
      if (!(error instanceof InputError)) throw error;
      return this.remember(x, new Map(), this.invalidEvaluation(x, parameters, `invalid candidate: ${error.message}`));
    }

    const lateral = lateralScenarioOf(scenario);
    if (lateral) return this.runLateralCandidate(x, parameters, lateral, onRollouts);
    const terms = this.study.objective.terms;
    const results: (TermResult | null)[] = terms.map(() => null);
    const runs = this.runGroups(scenario, onRollouts);
    const survived = new Map<number, Uint8Array>();
    for (const term of runs.monteCarlo) {
      results[term.term] = term.result;
      survived.set(term.term, term.survived);
    }
    const extremes = runs.extremes;
    terms.forEach((term, i) => {
      if (term.kind === 'basin') results[i] = this.basin(scenario, term);
      else if (term.kind === 'step_down') results[i] = this.stepDown(scenario, term);
    });

    return this.rememberScored(x, parameters, scenario, results as TermResult[], extremes, survived);
  }

  /** The candidate's evaluation from its terms and the extremes of its rollouts: objective, constraints, penalty, feasibility. */
  private rememberScored(x: number[], parameters: Record<string, number>, scenario: Scenario, terms: TermResult[], extremes: Extremes, survived: Map<number, Uint8Array>): Memo {
    const objective = terms.reduce((sum, t) => sum + t.weight * t.score, 0);
    const constraints = measureConstraints(this.study, scenario, extremes);
    const penalty =
      this.constraintHandling === 'penalty'
        ? this.study.search.penalty_weight * constraints.reduce((sum, c) => sum + Math.max(0, c.normalized) ** 2, 0)
        : 0;
    const feasible = constraints.every((c) => c.margin === null || c.margin >= 0);
    const value = -objective + penalty;
    // The study's bounds keep every score finite; should one not be, the candidate is a status, never an abort.
    if (!Number.isFinite(value) || terms.some((t) => !Number.isFinite(t.score))) {
      return this.remember(x, new Map(), this.invalidEvaluation(x, parameters, 'numerical failure: a score is not finite at this candidate'));
    }
    return this.remember(x, survived, { x, parameters, score: objective - penalty, value, objective, penalty, terms, constraints, feasible, valid: true });
  }

  private invalidEvaluation(x: number[], parameters: Record<string, number>, message: string): Evaluation {
    return {
      x,
      parameters,
      score: -this.invalidValue,
      value: this.invalidValue,
      objective: this.invalidObjective,
      penalty: this.invalidValue + this.invalidObjective,
      terms: [],
      constraints: [],
      feasible: false,
      valid: false,
      message,
    };
  }

  // The Monte Carlo rollouts and the nominal gait of a candidate, in one kernel call per stride
  // count (in chunks when someone listens to the progress: rollouts are independent, so the
  // numbers are the same).
  private runGroups(scenario: Scenario, onRollouts?: (done: number, total: number) => void) {
    const terms = this.study.objective.terms;
    const extremes = new Extremes();
    const monteCarlo: { term: number; result: TermResult; survived: Uint8Array }[] = [];
    let nominal = { strides_completed: 0, status: 'not run' };
    const total = this.rolloutCount;
    let done = 0;
    for (const group of this.groups) {
      let models = group.members.map(({ plan }) => (plan ? monteCarloModel(scenario, terms[plan.term] as MonteCarloTerm, this.seed) : flatModel(scenario)));
      const robots = group.robots;
      if (robots) {
        // two legs: one block per rollout, its member's block with that robot's legs
        const perRollout: ModelBlock[] = [];
        for (const [m, member] of group.members.entries()) {
          for (let r = member.first; r < member.first + member.count; r++) perRollout.push(bipedRobotBlock(models[m], robots.subarray(r * 5, r * 5 + 5)));
        }
        models = perRollout;
      }
      const rollouts = group.inputs.length / L.I_SIZE;
      let s: Float64Array; // (rollouts × S_SIZE)
      if (!onRollouts) {
        s = this.engine.runBatch({ model: models, inputs: group.inputs, strides: group.strides }).summaries;
      } else {
        s = new Float64Array(rollouts * L.S_SIZE);
        for (let first = 0; first < rollouts; first += PROGRESS_CHUNK_ROLLOUTS) {
          const end = Math.min(rollouts, first + PROGRESS_CHUNK_ROLLOUTS);
          const part = this.engine.runBatch({ model: models, inputs: group.inputs.subarray(first * L.I_SIZE, end * L.I_SIZE), strides: group.strides });
          s.set(part.summaries, first * L.S_SIZE);
          done += end - first;
          onRollouts(done, total);
        }
      }
      for (const member of group.members) {
        for (let r = member.first; r < member.first + member.count; r++) {
          const legLength = robots ? shorterLegM(scenario, robots.subarray(r * 5, r * 5 + 5)) : scenario.body.leg_length_m * group.legFactors[r];
          extremes.add(s, r, legLength);
        }
        if (!member.plan) {
          const at = member.first * L.S_SIZE;
          nominal = { strides_completed: s[at + L.S_STRIDES_COMPLETED], status: s[at + L.S_STATUS] === L.STATUS_OK ? 'completed' : (STATUS_NAMES[s[at + L.S_STATUS]] ?? `status_${s[at + L.S_STATUS]}`) };
          continue;
        }
        const term = terms[member.plan.term] as MonteCarloTerm;
        const flags = new Uint8Array(member.count);
        for (let r = 0; r < member.count; r++) flags[r] = s[(member.first + r) * L.S_SIZE + L.S_STATUS] === L.STATUS_OK ? 1 : 0;
        monteCarlo.push({ term: member.plan.term, result: monteCarloResult(term, s, member.first, member.count), survived: flags });
      }
    }
    monteCarlo.sort((a, b) => a.term - b.term);
    return { extremes, monteCarlo, nominal };
  }

  // Lateral model: every recovery term as the Monte Carlo of pronk recover (recoverRows), on this
  // set's seed; the limits over the completed strides of every kicked rollout.
  private runLateralCandidate(x: number[], parameters: Record<string, number>, scenario: LateralScenario, onRollouts?: (done: number, total: number) => void): Memo {
    const run = this.runLateral(scenario, onRollouts);
    if ('failure' in run) return this.remember(x, new Map(), this.invalidEvaluation(x, parameters, `invalid candidate: ${run.failure}`));
    const survived = new Map(run.terms.map((t) => [t.term, t.recovered] as const));
    return this.rememberScored(x, parameters, scenario as unknown as Scenario, run.terms.map((t) => t.result), run.extremes, survived);
  }

  private runLateral(
    scenario: LateralScenario,
    onRollouts?: (done: number, total: number) => void,
  ): { failure: string } | { terms: { term: number; result: TermResult; recovered: Uint8Array }[]; extremes: Extremes } {
    const engine = this.engine as Engine;
    if (typeof engine.runLateral !== 'function') throw new Error('a lateral study needs the whole engine (runLateral), not a batch runner');
    const extremes = new Extremes();
    const terms: { term: number; result: TermResult; recovered: Uint8Array }[] = [];
    const total = this.rolloutCount;
    let done = 0;
    let k = 0;
    for (const [i, term] of this.study.objective.terms.entries()) {
      if (term.kind !== 'recovery') continue;
      const rollouts = this.rolloutsPerTerm[i]!;
      const first = this.kickStreams[k++];
      const spec = recoverySpec(term, this.seed, rollouts);
      let rows: ReturnType<typeof recoverRows>;
      try {
        rows = recoverRows(
          engine,
          scenario,
          spec,
          { start: first, end: first + rollouts },
          { stridesAfter: term.strides_after },
          onRollouts && ((n) => onRollouts(done + n, total)),
          (records, summaries, count, strides) => extremes.addLateral(records, summaries, count, strides, scenario.body.leg_length_m),
        );
      } catch (error) {
        // no periodic gait at this candidate: nothing to kick (a status, never an abort)
        if (error instanceof InputError) return { failure: error.message };
        throw error;
      }
      done += rollouts;
      terms.push({ term: i, result: recoveryResult(term, rows), recovered: Uint8Array.from(rows, (r) => r[1]) });
    }
    return { terms, extremes };
  }

  private remember(x: number[], survived: Map<number, Uint8Array>, evaluation: Evaluation): Memo {
    this.memo = { x, evaluation, survived };
    return this.memo;
  }

  // Attracted fraction of the grid, on flat ground (the definition of `pronk basin`).
  private basin(scenario: Scenario, term: BasinTerm): TermResult {
    const heights = axisValues(term.heights.low_m, term.heights.high_m, term.heights.count);
    const starts: { height: number; speed: number }[] = [];
    let cells = 0;
    if (term.mode === 'grid') {
      const speeds = axisValues(term.speeds!.low_m_per_s, term.speeds!.high_m_per_s, term.speeds!.count);
      for (const height of heights) for (const speed of speeds) starts.push({ height, speed });
      cells = starts.length;
    } else if (isBiped(scenario)) {
      // two legs: the speed the section state (height, the start's offset and leg) has at the
      // start section's energy, springs included (as pronk basin)
      const st = startState(scenario);
      const energy = sectionEnergy(scenario, st);
      cells = heights.length;
      for (const height of heights) {
        const speed = speedAtEnergy(scenario, energy, { gait: st.gait, height_m: height, offset_m: st.offset_m, leg: st.leg });
        if (Number.isFinite(speed)) starts.push({ height, speed }); // a cell without speed is not attracted
      }
    } else {
      // at the start's energy: v = sqrt(2(E − m g y)/m) = sqrt(v0² + 2 g (y0 − y))
      const g = scenario.body.gravity_m_per_s2;
      const { apex_height_m: y0, forward_speed_m_per_s: v0 } = scenario.start;
      cells = heights.length;
      for (const height of heights) {
        const squared = v0 * v0 + 2 * g * (y0 - height);
        if (squared >= 0) starts.push({ height, speed: Math.sqrt(squared) }); // a cell without speed is not attracted
      }
    }
    let converged = 0;
    if (starts.length > 0) {
      const inputs = new Float64Array(starts.length * L.I_SIZE);
      const st = isBiped(scenario) ? startState(scenario) : null;
      starts.forEach((cell, i) =>
        inputs.set(
          st // two legs: the cell's section state with the start's offset and leg (as pronk basin)
            ? sectionInput({ ...st, height_m: cell.height, speed_m_per_s: cell.speed })
            : rolloutInput(cell.height, cell.speed),
          i * L.I_SIZE,
        ),
      );
      const s = this.engine.runBatch({ model: flatModel(scenario), inputs, strides: term.strides }).summaries;
      for (let i = 0; i < starts.length; i++) {
        const at = i * L.S_SIZE;
        if (
          s[at + L.S_STATUS] === L.STATUS_OK &&
          Math.abs(s[at + L.S_FINAL_HEIGHT] - s[at + L.S_PREVIOUS_HEIGHT]) <= term.height_tolerance_m &&
          Math.abs(s[at + L.S_FINAL_SPEED] - s[at + L.S_PREVIOUS_SPEED]) <= term.speed_tolerance_m_per_s
        ) {
          converged++;
        }
      }
    }
    const attracted = converged / cells;
    return { kind: 'basin', weight: term.weight, score: attracted, details: { cells, converged, attracted_fraction: attracted } };
  }

  // The largest permanent drop survived for strides_after more strides, first failure boundary
  // (the definition of `pronk stepdown`): a coarse scan in one call, then bisection.
  private stepDown(scenario: Scenario, term: StepDownTerm): TermResult {
    const base = buildModel(scenario);
    const leg = landingLegLength(scenario);
    const resolution = term.resolution_m;
    const gridSteps = Math.max(1, Math.round(term.grid_m / resolution));
    const limit = Math.round(leg / resolution);
    const strides = 1 + term.strides_after;
    const size = (k: number) => Number((k * resolution).toPrecision(12));
    const { apex_height_m: y0, forward_speed_m_per_s: v0 } = scenario.start;
    const cache = new Map<number, boolean>();
    const survives = (ks: number[]) => {
      const todo = [...new Set(ks)].filter((k) => !cache.has(k));
      if (todo.length === 0) return;
      const inputs = new Float64Array(todo.length * L.I_SIZE);
      todo.forEach((_, i) => inputs.set(startInput(scenario, 0, i), i * L.I_SIZE)); // the kind's start section
      const s = this.engine.runBatch({ model: todo.map((k) => stepModel(base, -size(k))), inputs, strides }).summaries;
      todo.forEach((k, i) => cache.set(k, s[i * L.S_SIZE + L.S_STATUS] === L.STATUS_OK));
    };
    const grid: number[] = [];
    for (let k = 0; k < limit; k += gridSteps) grid.push(k);
    grid.push(limit);
    survives(grid);
    const j = grid.findIndex((k) => !cache.get(k));
    let lo = j < 0 ? limit : j === 0 ? 0 : grid[j - 1];
    let hi = j < 0 ? null : grid[j];
    while (hi !== null && hi - lo > 1) {
      const mid = Math.floor((lo + hi) / 2);
      survives([mid]);
      if (cache.get(mid)) lo = mid;
      else hi = mid;
    }
    const survivesFlat = cache.get(0)!;
    const drop = survivesFlat ? size(lo) : 0;
    return {
      kind: 'step_down',
      weight: term.weight,
      score: drop / leg,
      details: { max_step_down_m: drop, leg_length_m: leg, survives_flat: survivesFlat, bounded_by: hi === null ? 'search_limit' : 'first_failure' },
    };
  }
}

function monteCarloModel(scenario: Scenario, term: MonteCarloTerm, seed: number): ModelBlock {
  return robustnessModel(scenario, {
    rollouts: term.rollouts,
    sigma_m: term.sigma_m,
    seed,
    strides: term.strides,
    terrain: term.terrain,
    target_height_m: term.kind === 'tracking' ? term.target_apex_height_m : scenario.start.apex_height_m,
    target_speed_m_per_s: term.kind === 'tracking' ? term.target_forward_speed_m_per_s : scenario.start.forward_speed_m_per_s,
  });
}

/** A recovery term's kicks as pronk recover --rollouts draws them, from stream 0 of `seed` on. */
export function recoverySpec(term: RecoveryTerm, seed: number, rollouts: number): RandomKickSpec {
  return {
    stride: term.kick_stride,
    max_forward_m_per_s: term.max_forward_m_per_s,
    max_left_m_per_s: term.max_left_m_per_s,
    max_angle_deg: term.max_angle_deg,
    max_rate_deg_per_s: term.max_rate_deg_per_s,
    seed,
    rollouts,
  };
}

function recoveryResult(term: RecoveryTerm, rows: ReturnType<typeof recoverRows>): TermResult {
  const n = rows.length;
  const done = rows.filter((r) => r[1] === 1);
  const strides = done.map((r) => r[2] as number).sort((a, b) => a - b);
  const speed = done.length > 0 ? strides.reduce((sum, k) => sum + (1 - k / (term.strides_after + 1)), 0) / done.length : null;
  const failures: Record<string, number> = {};
  for (const r of rows) {
    if (r[0] === 1) continue;
    const name = STATUS_NAMES[r[5]] ?? `status_${r[5]}`;
    failures[name] = (failures[name] ?? 0) + 1;
  }
  // recovered kicks, plus the tie-break for faster recovery (RECOVERY_TIE_BREAK < 1: worth less than one more)
  const credited = done.length + RECOVERY_TIE_BREAK * (speed ?? 0);
  const details: RecoveryDetails = {
    rollouts: n,
    recovered: done.length,
    recovery: done.length / n,
    wilson95: wilsonInterval(done.length, n),
    survived: rows.filter((r) => r[0] === 1).length,
    // nearest rank (common practice)
    median_strides_to_recover: strides.length ? strides[Math.ceil(0.5 * strides.length) - 1] : null,
    speed_fraction: speed,
    failures,
  };
  return { kind: 'recovery', weight: term.weight, score: credited / n, details };
}

/** The scenario's model on flat ground. */
function flatModel(scenario: Scenario): ModelBlock {
  const model = buildModel(scenario);
  const fields = model.fields.slice();
  fields[L.M_TERRAIN_KIND] = L.TERRAIN_FLAT;
  fields[L.M_STEPS_N] = 0;
  fields[L.M_TERRAIN_SIGMA] = 0;
  return { ...model, fields, groundHeights: undefined };
}

function monteCarloResult(term: MonteCarloTerm, s: Float64Array, first: number, count: number): TermResult {
  let survived = 0;
  let completedTotal = 0;
  let fallenCompleted = 0;
  let sumSqHeight = 0;
  let sumSqSpeed = 0;
  const failures: Record<string, number> = {};
  for (let r = first; r < first + count; r++) {
    const at = r * L.S_SIZE;
    const status = s[at + L.S_STATUS];
    if (status === L.STATUS_OK) survived++;
    else {
      const name = STATUS_NAMES[status] ?? `status_${status}`;
      failures[name] = (failures[name] ?? 0) + 1;
      fallenCompleted += s[at + L.S_STRIDES_COMPLETED];
    }
    completedTotal += s[at + L.S_STRIDES_COMPLETED];
    sumSqHeight += s[at + L.S_SUM_SQ_HEIGHT_ERROR];
    sumSqSpeed += s[at + L.S_SUM_SQ_SPEED_ERROR];
  }
  const fell = count - survived;
  const fallenFraction = fell > 0 ? fallenCompleted / (fell * term.strides) : null;
  // survivors, plus the tie-break of the fallen (FALL_TIE_BREAK < 1: worth less than one survivor)
  const credited = survived + FALL_TIE_BREAK * (fallenFraction ?? 0);
  const survival: SurvivalDetails = {
    rollouts: count,
    survived,
    survival: survived / count,
    wilson95: wilsonInterval(survived, count),
    mean_strides_completed: completedTotal / count,
    fallen_stride_fraction: fallenFraction,
    failures,
  };
  if (term.kind === 'survival') return { kind: 'survival', weight: term.weight, score: credited / count, details: survival };
  const rmsHeight = completedTotal > 0 ? Math.sqrt(sumSqHeight / completedTotal) : null;
  const rmsSpeed = completedTotal > 0 ? Math.sqrt(sumSqSpeed / completedTotal) : null;
  const error =
    rmsHeight === null || rmsSpeed === null
      ? term.fall_penalty
      : Math.min(term.fall_penalty, rmsHeight / term.height_scale_m + rmsSpeed / term.speed_scale_m_per_s);
  const fallCost = (term.fall_penalty * (count - credited)) / count;
  const details: TrackingDetails = {
    ...survival,
    target: { apex_height_m: term.target_apex_height_m, forward_speed_m_per_s: term.target_forward_speed_m_per_s },
    apex_height_rms_m: rmsHeight,
    forward_speed_rms_m_per_s: rmsSpeed,
    strides_completed_total: completedTotal,
    tracking_error: error,
    fall_cost: fallCost,
  };
  return { kind: 'tracking', weight: term.weight, score: -(error + fallCost), details };
}

// Maxima over completed strides (and the touchdown angle range over touchdowns reached) of many
// rollouts' summaries.
class Extremes {
  peakForce = -Infinity;
  friction = -Infinity;
  compressionFraction = -Infinity;
  minAttack = Infinity;
  maxAttack = -Infinity;
  verticalForce = -Infinity;
  completed = 0;

  /** Lateral model: the peak leg force and compression over the completed strides of a kernel call's rollouts (stride records). */
  addLateral(records: Float64Array, summaries: Float64Array, rollouts: number, strides: number, legLength: number): void {
    for (let r = 0; r < rollouts; r++) {
      const completed = summaries[r * L.LS_SIZE + L.LS_STRIDES_COMPLETED];
      this.completed += completed;
      for (let k = 0; k < completed; k++) {
        const at = (r * strides + k) * L.LR_SIZE;
        this.peakForce = Math.max(this.peakForce, records[at + L.LR_PEAK_FORCE]);
        this.compressionFraction = Math.max(this.compressionFraction, records[at + L.LR_MAX_COMPRESSION] / legLength);
      }
    }
  }

  add(s: Float64Array, r: number, legLength: number): void {
    const at = r * L.S_SIZE;
    // the kernel's maxima start at 0 and cover completed strides only
    if (s[at + L.S_STRIDES_COMPLETED] > 0) {
      this.completed += s[at + L.S_STRIDES_COMPLETED];
      this.peakForce = Math.max(this.peakForce, s[at + L.S_MAX_PEAK_FORCE]);
      this.friction = Math.max(this.friction, s[at + L.S_MAX_FRICTION]);
      this.compressionFraction = Math.max(this.compressionFraction, s[at + L.S_MAX_COMPRESSION] / legLength);
      // the peak summed vertical ground force: two-leg model only (NaN for one leg, never read there)
      this.verticalForce = Math.max(this.verticalForce, s[at + L.S_MAX_VERTICAL_FORCE]);
    }
    // infinite when no touchdown was reached
    if (Number.isFinite(s[at + L.S_MIN_ATTACK])) this.minAttack = Math.min(this.minAttack, s[at + L.S_MIN_ATTACK]);
    if (Number.isFinite(s[at + L.S_MAX_ATTACK])) this.maxAttack = Math.max(this.maxAttack, s[at + L.S_MAX_ATTACK]);
  }
}

function constraintNames(study: Study): string[] {
  const c = study.constraints;
  const names: string[] = [];
  if (c.max_leg_force_N !== undefined) names.push('max_leg_force_N');
  if (c.max_vertical_force_N !== undefined) names.push('max_vertical_force_N');
  if (c.friction_coefficient !== undefined) names.push('friction_coefficient');
  if (c.max_compression_fraction !== undefined) names.push('max_compression_fraction');
  if (c.leg_angle_range_deg !== undefined) names.push('leg_angle_range_deg.min_deg', 'leg_angle_range_deg.max_deg');
  if (c.max_hip_rate_deg_per_s !== undefined) names.push('max_hip_rate_deg_per_s');
  if (c.stiffness_range_N_per_m !== undefined) names.push('stiffness_range_N_per_m.min_N_per_m', 'stiffness_range_N_per_m.max_N_per_m');
  return names;
}

function measureConstraints(study: Study, scenario: Scenario, e: Extremes): ConstraintResult[] {
  const c = study.constraints;
  if (!hasConstraints(c)) return [];
  const out: ConstraintResult[] = [];
  const add = (name: string, bound: 'upper' | 'lower', measured_on: 'rollouts' | 'parameters', value: number | null, limit: number) => {
    const margin = value === null ? null : bound === 'upper' ? limit - value : value - limit;
    const normalized = margin === null ? 0 : Math.min(MAX_NORMALIZED_VIOLATION, -margin / Math.abs(limit));
    out.push({
      name,
      bound,
      measured_on,
      value,
      limit,
      margin,
      margin_percent: margin === null ? null : (100 * margin) / Math.abs(limit),
      binding: false,
      normalized: Number.isNaN(normalized) ? MAX_NORMALIZED_VIOLATION : normalized,
    });
  };
  const stridesDone = e.completed > 0;
  const touched = Number.isFinite(e.minAttack);
  if (c.max_leg_force_N !== undefined) add('max_leg_force_N', 'upper', 'rollouts', stridesDone ? e.peakForce : null, c.max_leg_force_N);
  if (c.max_vertical_force_N !== undefined) {
    add('max_vertical_force_N', 'upper', 'rollouts', stridesDone ? e.verticalForce : null, c.max_vertical_force_N);
  }
  if (c.friction_coefficient !== undefined) add('friction_coefficient', 'upper', 'rollouts', stridesDone ? e.friction : null, c.friction_coefficient);
  if (c.max_compression_fraction !== undefined) {
    add('max_compression_fraction', 'upper', 'rollouts', stridesDone ? e.compressionFraction : null, c.max_compression_fraction);
  }
  if (c.leg_angle_range_deg !== undefined) {
    add('leg_angle_range_deg.min_deg', 'lower', 'rollouts', touched ? e.minAttack / DEG : null, c.leg_angle_range_deg.min_deg);
    add('leg_angle_range_deg.max_deg', 'upper', 'rollouts', touched ? e.maxAttack / DEG : null, c.leg_angle_range_deg.max_deg);
  }
  if (c.max_hip_rate_deg_per_s !== undefined) add('max_hip_rate_deg_per_s', 'upper', 'parameters', hipRateDegPerS(scenario), c.max_hip_rate_deg_per_s);
  if (c.stiffness_range_N_per_m !== undefined) {
    const values = stiffnessValues(scenario);
    add('stiffness_range_N_per_m.min_N_per_m', 'lower', 'parameters', Math.min(...values), c.stiffness_range_N_per_m.min_N_per_m);
    add('stiffness_range_N_per_m.max_N_per_m', 'upper', 'parameters', Math.max(...values), c.stiffness_range_N_per_m.max_N_per_m);
  }
  markBinding(out);
  return out;
}

/** Marks the limit with the smallest margin as a percentage of the limit (the first of equals); none when nothing was measured. */
export function markBinding(constraints: ConstraintResult[]): void {
  let binding: ConstraintResult | null = null;
  for (const c of constraints) {
    c.binding = false;
    if (c.margin_percent !== null && (binding === null || c.margin_percent < binding.margin_percent!)) binding = c;
  }
  if (binding) binding.binding = true;
}

/** The largest |rate| the touchdown-angle schedule commands in flight, deg/s (0 for a fixed angle). */
export function hipRateDegPerS(scenario: Scenario): number {
  const angle = scenario.policy.angle;
  switch (angle.kind) {
    case 'fixed':
      return 0;
    case 'retraction':
      return Math.abs(angle.rate_deg_per_s);
    case 'time_table': {
      let rate = 0;
      for (let i = 1; i < angle.attack_deg.length; i++) {
        const slope = (angle.attack_deg[i] - angle.attack_deg[i - 1]) / (angle.time_since_apex_s[i] - angle.time_since_apex_s[i - 1]);
        rate = Math.max(rate, Math.abs(slope));
      }
      return rate;
    }
  }
}

/** Every leg stiffness the policy commands, N/m (nominal robot; two legs: each leg's, its stiffness scale applied). */
export function stiffnessValues(scenario: Scenario): number[] {
  const scales = stiffnessScales(scenario);
  const policy = policyStiffnessValues(scenario);
  return scales.length === 1 && scales[0] === 1 ? policy : scales.flatMap((scale) => policy.map((k) => k * scale));
}

function policyStiffnessValues(scenario: Scenario): number[] {
  const stiffness = scenario.policy.stiffness;
  switch (stiffness.kind) {
    case 'constant':
      return [scenario.body.leg_stiffness_N_per_m];
    case 'split':
      return [stiffness.compression_N_per_m, stiffness.extension_N_per_m];
    case 'time_table':
      return [...stiffness.compression_N_per_m, ...stiffness.extension_N_per_m];
  }
}

// ---------------------------------------------------------------------------------------------
// Held-out re-scoring and comparison.

export interface Rescore {
  set: 'holdout';
  seed: number;
  rollouts_per_term: number;
  evaluation: Evaluation;
}

/** The candidate's scores (Wilson intervals on survival) and constraint margins on the held-out seeds. */
export function rescore(study: Study, engine: Engine, x: readonly number[]): Rescore {
  const evaluator = new StudyEvaluator(study, engine, 'holdout');
  return { set: 'holdout', seed: evaluator.seed, rollouts_per_term: study.holdout.rollouts, evaluation: evaluator.evaluate(x) };
}

export interface SurvivalComparison {
  /** Index of the Monte Carlo term (objective.terms). */
  term: number;
  kind: TermKind;
  rollouts: number;
  a: { survived: number; survival: number; wilson95: [number, number] };
  b: { survived: number; survival: number; wilson95: [number, number] };
  /** survival(a) − survival(b). */
  difference: number;
  /** Newcombe 1998 (independent samples, method 10): conservative here, the samples are paired. */
  newcombe95: [number, number];
  /** Newcombe 1998 paired method 10 (same terrain streams and robots for both). */
  paired95: [number, number];
  /** Rollouts survived by both, by a only, by b only, by neither. */
  pairs: { both: number; a_only: number; b_only: number; neither: number };
}

export interface PolicyComparison {
  seed: number;
  comparisons: SurvivalComparison[];
  note: string;
}

/**
 * Survival of candidates xA and xB on the held-out seeds, per Monte Carlo term, with intervals
 * of the difference. xB may be a candidate of another study (studyB) with the same rollouts:
 * the same Monte Carlo terms (terrain, sigma, strides), start, holdout and model mismatch.
 */
export function comparePolicies(
  study: Study,
  engine: Engine,
  xA: readonly number[],
  xB: readonly number[],
  options: { studyB?: Study } = {},
): PolicyComparison {
  const studyB = options.studyB ?? study;
  if (studyB !== study) checkSameRollouts(study, studyB);
  const a = new StudyEvaluator(study, engine, 'holdout');
  const b = studyB === study ? a : new StudyEvaluator(studyB, engine, 'holdout');
  const outcomesA = a.survivalByRollout(xA).map((o) => ({ ...o, survived: o.survived.slice() }));
  const outcomesB = b.survivalByRollout(xB);
  return pairSurvival(a.seed, outcomesA, outcomesB);
}

/** Which rollouts of each Monte Carlo term a candidate survived (StudyEvaluator.survivalByRollout). */
export type RolloutOutcomes = { term: number; kind: TermKind; survived: Uint8Array }[];

/**
 * The comparison of comparePolicies from outcomes already run: candidate A's and B's survival on the
 * same rollouts (the held-out re-scoring's own, so nothing runs twice).
 */
export function pairSurvival(seed: number, outcomesA: RolloutOutcomes, outcomesB: RolloutOutcomes): PolicyComparison {
  if (outcomesA.length === 0) {
    throw new InputError([{ path: 'objective.terms', expected: 'a survival or tracking term to compare survival on', found: 'no Monte Carlo term' }]);
  }
  const comparisons = outcomesA.map((oa, i) => {
    const ob = outcomesB[i];
    const n = oa.survived.length;
    if (!ob || ob.term !== oa.term || ob.survived.length !== n) throw new Error('pairSurvival: the two candidates ran different rollouts');
    let both = 0;
    let aOnly = 0;
    let bOnly = 0;
    for (let r = 0; r < n; r++) {
      if (oa.survived[r] && ob.survived[r]) both++;
      else if (oa.survived[r]) aOnly++;
      else if (ob.survived[r]) bOnly++;
    }
    const neither = n - both - aOnly - bOnly;
    const sa = both + aOnly;
    const sb = both + bOnly;
    return {
      term: oa.term,
      kind: oa.kind,
      rollouts: n,
      a: { survived: sa, survival: sa / n, wilson95: wilsonInterval(sa, n) },
      b: { survived: sb, survival: sb / n, wilson95: wilsonInterval(sb, n) },
      difference: (sa - sb) / n,
      newcombe95: newcombeDifferenceInterval(sa, n, sb, n),
      paired95: pairedDifferenceInterval(both, aOnly, bOnly, neither),
      pairs: { both, a_only: aOnly, b_only: bOnly, neither },
    };
  });
  return {
    seed,
    comparisons,
    note:
      'held-out seed: both candidates ran the same terrain streams and robots, so the outcomes are paired; ' +
      'newcombe95 treats them as independent (conservative), paired95 uses the correlation of the pairs',
  };
}

function checkSameRollouts(a: Study, b: Study): void {
  const signature = (s: Study) =>
    JSON.stringify({
      terms: s.objective.terms.filter(isMonteCarloTerm).map((t) => [t.kind, t.terrain, t.sigma_m, t.strides]),
      start: s.scenario.start,
      holdout: s.holdout,
      mismatch: s.model_mismatch,
    });
  if (signature(a) !== signature(b)) {
    throw new InputError([
      {
        path: 'studyB',
        expected: 'a study with the same Monte Carlo terms (kind, terrain, sigma_m, strides), start, holdout and model_mismatch',
        found: 'a study whose rollouts differ',
      },
    ]);
  }
}
