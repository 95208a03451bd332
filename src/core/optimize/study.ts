// The study file: what `pronk optimize` searches. A base scenario, the policy or body numbers set
// free within bounds, the objective (a weighted sum of scores, each MAXIMIZED), the limits a
// machine imposes, an optional model mismatch, the search settings, and the training and held-out
// seeds. This file holds the schema, the validator (every problem reported, each naming the field
// path, what was expected and what was found, with a "did you mean" for unknown fields and kinds)
// and the file reader. The evaluator that scores a candidate is in objectives.ts.
//
// The validated Study is plain JSON (numbers, strings, arrays, objects): it survives
// structuredClone / postMessage into a worker and JSON round trips exactly.
//
// Objective terms, each maximized (the weighted sum is `objective`; NLopt minimizes −objective):
//  - survival: R rollouts of S strides from the start apex on random terrain (a random walk of
//    Gaussian steps sigma_m, or independent Gaussian heights), rollout r on terrain stream r of the
//    study's seed (common random numbers). Score = (survived + ½·f)/R, in [0, 1], f the mean
//    fraction of their strides that the fallen rollouts completed (0 when none fell): a tie-break
//    worth less than one survivor, which gives a search a slope where every rollout falls
//    (FALL_TIE_BREAK in objectives.ts).
//  - tracking: the same rollouts; score = −(rms_height / height_scale_m + rms_speed /
//    speed_scale_m_per_s) − fall_penalty · (fell − ½·f) / R, the RMS taken about the target apex over
//    every completed stride of every rollout. The RMS part is capped at fall_penalty (and is
//    fall_penalty when no stride completed), so the score lies in [−2·fall_penalty, 0] and a
//    policy that falls everywhere scores worst. 0 is perfect tracking.
//  - basin: fraction of a grid of start apexes (height × forward speed, or heights at the
//    scenario's energy) attracted to a fixed point on flat ground within `strides` strides (the
//    definition of `pronk basin`), in [0, 1].
//  - step_down: the largest permanent drop met at the first touchdown that the policy survives for
//    `strides_after` further strides (the definition of `pronk stepdown`, first failure boundary),
//    divided by the leg length: in [0, 1].
//
// Fields (SI units in the names; defaults in brackets):
//  scenario | scenario_file    the base scenario inline, or a path relative to the study file
//  free_parameters[]           {path, lower, upper, start?}: a dotted path to a number in the base
//                              scenario's policy or body (table entries as [i]); lower < upper;
//                              start within the bounds [the base scenario's value]
//  objective.terms[]           {kind, weight [1] > 0, ...}:
//    survival, tracking        terrain (random_walk | random_heights), sigma_m, rollouts,
//                              strides [the scenario's]; tracking also height_scale_m,
//                              speed_scale_m_per_s, target_apex_height_m and
//                              target_forward_speed_m_per_s [the start apex], fall_penalty [10]
//    basin                     mode (grid | energy), heights {low_m, high_m, count}, speeds
//                              {low_m_per_s, high_m_per_s, count} (grid only), strides [30],
//                              height_tolerance_m, speed_tolerance_m_per_s [1e-4]
//    step_down                 strides_after [20], resolution_m [0.001], grid_m [0.005]
//  constraints                 any of: max_leg_force_N (peak leg force), friction_coefficient
//                              (peak |Fx/Fy| <= mu), max_compression_fraction (of the leg length),
//                              leg_angle_range_deg {min_deg, max_deg} (attack at every touchdown),
//                              max_hip_rate_deg_per_s (|retraction rate|, or the steepest slope of
//                              an angle table), stiffness_range_N_per_m {min_N_per_m, max_N_per_m}
//                              (every stiffness the policy commands)
//                              two-leg scenarios only: max_vertical_force_N (the peak summed vertical
//                              ground force); which terms and limits each model kind takes: kinds.ts
//  model_mismatch              {distribution: uniform (factor in [1 − f, 1 + f]) | normal (sd f,
//                              truncated at 3 sd), mass_fraction, leg_stiffness_fraction,
//                              leg_length_fraction [0]}: each Monte Carlo rollout's body factors,
//                              drawn once per study from its seed (the same robots for every candidate)
//  search                      method [COBYLA] (METHODS in nlopt.ts), local_method (MLSL, AUGLAG
//                              only), max_evaluations [200], max_time_s [0 = none], xtol_rel [1e-4],
//                              restarts [1], constraint_handling [native if the method takes
//                              constraints (COBYLA, ISRES, AUGLAG), else penalty], penalty_weight
//                              [100], seed (stochastic methods, restart points) [the study's seed]
//  lateral scenarios           one term, recovery {rollouts, kick_stride (2), strides_after (20),
//                              max_left_m_per_s, max_forward_m_per_s, max_angle_deg,
//                              max_rate_deg_per_s}: the kicks pronk recover --rollouts draws
//                              (kinds.ts for the paths and limits it takes)
//  seed                        training terrains and model-mismatch draws
//  holdout                     {seed (not the training seed), rollouts per Monte Carlo term}: re-scoring
//                              on terrains and robots the search never saw
//
// Bounds (the constants below): weights in [1e-6, 1e6], at most 32 terms, fall_penalty <= 1000,
// tracking scales in [1e-9, 1000], targets and basin axes within ±1000 m and up to 1000 m/s, terrain
// sigma <= 10 m, penalty_weight <= 1e6, free parameter bounds within ±1e9, each limit within its
// LIMIT_RANGES, restarts <= 1000, restarts × max_evaluations <= 1e7, max_time_s <= 1e6, and the
// strides of one evaluation bounded (Monte Carlo <= 1e8 training or held out; basin and step-down
// probes <= 1e7). Every score is then finite and of a size NLopt handles.

import { z } from 'zod';
import { METHODS, type MethodName } from './nlopt.js';
import { InputError, closestName, describeFound, formatPath, type InputIssue } from '../errors.js';
import { validateWith } from '../validation.js';
import { BOUNDS, parseScenario, readScenarioFile, schemaReference, type Scenario } from '../scenario.js';
import { landingLegLength } from '../model.js';
import { requireKind } from '../models/kind.js';
import { LATERAL_PARAMETERS, OPTIMIZE_KINDS, kindIssues, parameterRoots } from './kinds.js';
import { type LateralScenario, parseLateralScenario } from '../models/lateral.js';

export const MAX_FREE_PARAMETERS = 64;
export const MAX_TERM_ROLLOUTS = 1_000_000;
export const MAX_TERM_STRIDES = 100_000;
export const MAX_STUDY_BASIN_CELLS = 100_000;

// Bounds on what a study may ask for. Every score is then finite and of a size NLopt handles (its
// COBYLA squares values: an objective near 1e200 makes it fail inside; these keep |objective| below
// about 1e11 and the penalty below about 1e19), and one evaluation's work is bounded.
/** Term weights lie in [MIN_TERM_WEIGHT, MAX_TERM_WEIGHT]: a ratio of 1e12 between terms is plenty. */
export const MIN_TERM_WEIGHT = 1e-6;
export const MAX_TERM_WEIGHT = 1e6;
export const MAX_TERMS = 32;
/** A tracking term's fall_penalty (its score then lies in [−2·fall_penalty, 0]). */
export const MAX_FALL_PENALTY = 1000;
/** Tracking scales (height_scale_m, speed_scale_m_per_s), in their units. */
export const MIN_TRACKING_SCALE = 1e-9;
export const MAX_TRACKING_SCALE = 1000;
/** Targets, basin axes: apex heights within ±MAX_APEX_HEIGHT_M, forward speeds up to MAX_SPEED_M_PER_S:
 *  the scenario's own bounds, since a tracking term's target defaults to the scenario's start. */
export const MAX_APEX_HEIGHT_M = BOUNDS.height_m.high;
export const MAX_SPEED_M_PER_S = BOUNDS.forward_speed_m_per_s.high;
/** Random-terrain sigma of a Monte Carlo term, m. */
export const MAX_TERRAIN_SIGMA_M = 10;
/** The quadratic penalty's weight. */
export const MAX_PENALTY_WEIGHT = 1e6;
/** Free parameter bounds and starts lie within ±MAX_PARAMETER_MAGNITUDE (in the field's unit). */
export const MAX_PARAMETER_MAGNITUDE = 1e9;
/** Strides one evaluation may run in its Monte Carlo terms (Σ rollouts × strides), training or held out. */
export const MAX_EVALUATION_STRIDES = 100_000_000;
/** Strides a basin term (cells × strides) or a step-down term (probes × (1 + strides_after)) may run. */
export const MAX_PROBE_STRIDES = 10_000_000;
/** Evaluations of a whole search: restarts × max_evaluations. */
export const MAX_SEARCH_EVALUATIONS = 10_000_000;
export const MAX_RESTARTS = 1000;
export const MAX_SEARCH_TIME_S = 1_000_000;
/** Limits: each within its range below (units in the field names). */
export const LIMIT_RANGES = {
  max_leg_force_N: [1e-3, 1e9],
  friction_coefficient: [1e-3, 100],
  max_compression_fraction: [1e-6, 1],
  angle_deg: [0.01, 90],
  max_hip_rate_deg_per_s: [1e-3, 1e7],
  stiffness_N_per_m: [1e-3, 1e12],
} as const;
export const DEFAULT_FALL_PENALTY = 10;
export const DEFAULT_BASIN_STRIDES = 30;
export const DEFAULT_BASIN_TOLERANCE = 1e-4;
export const DEFAULT_STEP_STRIDES_AFTER = 20;
export const DEFAULT_STEP_RESOLUTION_M = 0.001;
export const DEFAULT_STEP_GRID_M = 0.005;
export const DEFAULT_MAX_EVALUATIONS = 200;
export const DEFAULT_XTOL_REL = 1e-4;
/**
 * Quadratic penalty weight w: value = −objective + w · Σ max(0, normalized violation)². Objective
 * terms are O(1) (a survival fraction), so a 10 % violation costs 0.01·w = 1, as much as losing
 * every rollout; the penalized optimum may still violate by about (d objective / d violation)/(2w).
 */
export const DEFAULT_PENALTY_WEIGHT = 100;

export type RandomTerrain = 'random_walk' | 'random_heights';
export type TermKind = 'survival' | 'tracking' | 'basin' | 'step_down' | 'recovery';
export const TERM_KINDS: readonly TermKind[] = ['survival', 'tracking', 'basin', 'step_down', 'recovery'];
/** Default of a recovery term: strides run after the kick's stride (pronk recover --strides-after). */
export const DEFAULT_RECOVERY_STRIDES_AFTER = 20;
/** Default of a recovery term: the stride of the kick (pronk recover --kick-stride). */
export const DEFAULT_RECOVERY_KICK_STRIDE = 2;
/** Largest velocity kick a recovery term draws, m/s, and angular-velocity kick, deg/s. */
export const MAX_KICK_SPEED_M_PER_S = 1000;
export const MAX_KICK_RATE_DEG_PER_S = 100_000;

// ---------------------------------------------------------------------------------------------
// Field schemas; each carries its "expected" text (with the unit), used for every way it can fail.

const positive = (unit: string) => z.number({ error: `a number > 0 (${unit})` }).gt(0);
const nonNegative = (unit: string) => z.number({ error: `a number >= 0 (${unit})` }).gte(0);
/** A number in [low, high] (high excluded when `below`), the range and unit in its message. */
const between = (low: number, high: number, unit: string, below = false) => {
  const schema = z.number({ error: `a number from ${low} to ${below ? 'below ' : ''}${high} (${unit})` }).gte(low);
  return below ? schema.lt(high) : schema.lte(high);
};
const integerIn = (low: number, high: number) =>
  z.number({ error: `an integer from ${low} to ${high}` }).int().gte(low).lte(high);
const seedSchema = integerIn(0, Number.MAX_SAFE_INTEGER);
const weight = z
  .number({ error: `a weight from ${MIN_TERM_WEIGHT} to ${MAX_TERM_WEIGHT}` })
  .gte(MIN_TERM_WEIGHT)
  .lte(MAX_TERM_WEIGHT)
  .default(1);
const terrainKind = z.enum(['random_walk', 'random_heights'], { error: 'one of random_walk, random_heights' });
const angleDeg = z
  .number({ error: `an angle from ${LIMIT_RANGES.angle_deg[0]} to ${LIMIT_RANGES.angle_deg[1]} (deg from the horizontal)` })
  .gte(LIMIT_RANGES.angle_deg[0])
  .lte(LIMIT_RANGES.angle_deg[1]);
const parameterValue = between(-MAX_PARAMETER_MAGNITUDE, MAX_PARAMETER_MAGNITUDE, "the field's unit");

function strictObject<Shape extends z.ZodRawShape>(shape: Shape, expected: string) {
  return z.strictObject(shape, { error: (issue) => (issue.code === 'invalid_type' ? expected : undefined) });
}

const fields = (shape: z.ZodRawShape) => Object.keys(shape).filter((name) => name !== '$schema').join(', ');

const freeParameterShape = {
  path: z.string({ error: 'a dotted path into the scenario\'s policy or body, e.g. policy.angle.attack_deg' }),
  lower: parameterValue,
  upper: parameterValue,
  start: parameterValue.optional(),
};
const freeParameterSchema = strictObject(freeParameterShape, `an object with ${fields(freeParameterShape)}`);

// Monte Carlo terms share their terrain fields.
const monteCarloShape = {
  weight,
  terrain: terrainKind,
  sigma_m: between(0, MAX_TERRAIN_SIGMA_M, 'm'),
  rollouts: integerIn(1, MAX_TERM_ROLLOUTS),
  strides: integerIn(1, MAX_TERM_STRIDES).optional(),
};

const survivalTerm = strictObject({ kind: z.literal('survival'), ...monteCarloShape }, 'an object');

const trackingTerm = strictObject(
  {
    kind: z.literal('tracking'),
    ...monteCarloShape,
    target_apex_height_m: between(-MAX_APEX_HEIGHT_M, MAX_APEX_HEIGHT_M, 'm').optional(),
    target_forward_speed_m_per_s: between(0, MAX_SPEED_M_PER_S, 'm/s').optional(),
    height_scale_m: between(MIN_TRACKING_SCALE, MAX_TRACKING_SCALE, 'm'),
    speed_scale_m_per_s: between(MIN_TRACKING_SCALE, MAX_TRACKING_SCALE, 'm/s'),
    fall_penalty: z
      .number({ error: `a number > 0 and <= ${MAX_FALL_PENALTY} (score lost per fraction of rollouts fallen)` })
      .gt(0)
      .lte(MAX_FALL_PENALTY)
      .default(DEFAULT_FALL_PENALTY),
  },
  'an object',
);

const axisCount = integerIn(1, MAX_STUDY_BASIN_CELLS);
const apexHeight = between(-MAX_APEX_HEIGHT_M, MAX_APEX_HEIGHT_M, 'm');
const forwardSpeed = between(0, MAX_SPEED_M_PER_S, 'm/s');
const heightAxisShape = { low_m: apexHeight, high_m: apexHeight, count: axisCount };
const speedAxisShape = { low_m_per_s: forwardSpeed, high_m_per_s: forwardSpeed, count: axisCount };
const basinTerm = strictObject(
  {
    kind: z.literal('basin'),
    weight,
    mode: z.enum(['grid', 'energy'], { error: 'one of grid (heights x speeds), energy (heights at the scenario\'s energy)' }),
    heights: strictObject(heightAxisShape, `an object with ${fields(heightAxisShape)}`),
    // null or absent: none (energy mode)
    speeds: strictObject(speedAxisShape, `an object with ${fields(speedAxisShape)}`).nullable().optional(),
    strides: integerIn(1, MAX_TERM_STRIDES).default(DEFAULT_BASIN_STRIDES),
    height_tolerance_m: positive('m').default(DEFAULT_BASIN_TOLERANCE),
    speed_tolerance_m_per_s: positive('m/s').default(DEFAULT_BASIN_TOLERANCE),
  },
  'an object',
);

const stepDownTerm = strictObject(
  {
    kind: z.literal('step_down'),
    weight,
    strides_after: integerIn(1, MAX_TERM_STRIDES).default(DEFAULT_STEP_STRIDES_AFTER),
    resolution_m: positive('m').default(DEFAULT_STEP_RESOLUTION_M),
    grid_m: positive('m').default(DEFAULT_STEP_GRID_M),
  },
  'an object',
);

// Lateral model: random kicks as pronk recover --rollouts draws them (kick i from stream i).
const recoveryTerm = strictObject(
  {
    kind: z.literal('recovery'),
    weight,
    rollouts: integerIn(1, MAX_TERM_ROLLOUTS),
    kick_stride: integerIn(0, MAX_TERM_STRIDES).default(DEFAULT_RECOVERY_KICK_STRIDE),
    strides_after: integerIn(3, MAX_TERM_STRIDES).default(DEFAULT_RECOVERY_STRIDES_AFTER),
    max_left_m_per_s: between(0, MAX_KICK_SPEED_M_PER_S, 'm/s, the largest sideways velocity kick').default(0),
    max_forward_m_per_s: between(0, MAX_KICK_SPEED_M_PER_S, 'm/s, the largest velocity kick along the body axis').default(0),
    max_angle_deg: between(0, 180, 'deg, the largest body-angle kick').default(0),
    max_rate_deg_per_s: between(0, MAX_KICK_RATE_DEG_PER_S, 'deg/s, the largest angular-velocity kick').default(0),
  },
  'an object',
);

const TERM_EXPECTED = `an object with kind ${TERM_KINDS.join(', ')}`;
const termSchema = z.discriminatedUnion('kind', [survivalTerm, trackingTerm, basinTerm, stepDownTerm, recoveryTerm], {
  error: (issue) => ((issue.code as string) === 'invalid_type' ? TERM_EXPECTED : undefined),
});

const objectiveShape = {
  terms: z.array(termSchema, { error: `an array of 1 to ${MAX_TERMS} objective terms` }).min(1).max(MAX_TERMS),
};
const objectiveSchema = strictObject(objectiveShape, `an object with ${fields(objectiveShape)}`);

const angleRangeShape = { min_deg: angleDeg, max_deg: angleDeg };
const R = LIMIT_RANGES;
const stiffnessLimit = between(R.stiffness_N_per_m[0], R.stiffness_N_per_m[1], 'N/m');
const stiffnessRangeShape = { min_N_per_m: stiffnessLimit, max_N_per_m: stiffnessLimit };
const constraintsShape = {
  max_leg_force_N: between(R.max_leg_force_N[0], R.max_leg_force_N[1], 'N'),
  friction_coefficient: between(R.friction_coefficient[0], R.friction_coefficient[1], 'the friction coefficient mu, |Fx/Fy| <= mu'),
  max_compression_fraction: between(R.max_compression_fraction[0], R.max_compression_fraction[1], 'a fraction of the leg length', true),
  leg_angle_range_deg: strictObject(angleRangeShape, `an object with ${fields(angleRangeShape)}`),
  max_hip_rate_deg_per_s: between(R.max_hip_rate_deg_per_s[0], R.max_hip_rate_deg_per_s[1], 'deg/s'),
  stiffness_range_N_per_m: strictObject(stiffnessRangeShape, `an object with ${fields(stiffnessRangeShape)}`),
  // two-leg model only: the peak of the summed vertical ground force of both legs
  max_vertical_force_N: between(R.max_leg_force_N[0], R.max_leg_force_N[1], 'N'),
};
const constraintsSchema = strictObject(
  Object.fromEntries(Object.entries(constraintsShape).map(([k, v]) => [k, v.optional()])) as {
    [K in keyof typeof constraintsShape]: z.ZodOptional<(typeof constraintsShape)[K]>;
  },
  `an object with any of ${fields(constraintsShape)}`,
);

const mismatchShape = {
  distribution: z.enum(['uniform', 'normal'], {
    error: 'one of uniform (factor in [1 - f, 1 + f]), normal (standard deviation f, truncated at 3 standard deviations)',
  }),
  mass_fraction: nonNegative('fraction of the nominal mass').default(0),
  leg_stiffness_fraction: nonNegative('fraction of the nominal stiffness').default(0),
  leg_length_fraction: nonNegative('fraction of the nominal leg length').default(0),
};
const mismatchSchema = strictObject(mismatchShape, `an object with ${fields(mismatchShape)}`);

const METHOD_NAMES = Object.keys(METHODS) as MethodName[];
const methodSchema = z.enum(METHOD_NAMES as [MethodName, ...MethodName[]], { error: `one of ${METHOD_NAMES.join(', ')}` });
const searchShape = {
  method: methodSchema.default('COBYLA'),
  local_method: methodSchema.optional(),
  max_evaluations: integerIn(1, MAX_SEARCH_EVALUATIONS).default(DEFAULT_MAX_EVALUATIONS),
  max_time_s: between(0, MAX_SEARCH_TIME_S, 's; 0 = no limit').default(0),
  xtol_rel: z.number({ error: 'a number > 0 and < 1' }).gt(0).lt(1).default(DEFAULT_XTOL_REL),
  restarts: integerIn(1, MAX_RESTARTS).default(1),
  constraint_handling: z.enum(['native', 'penalty'], { error: 'one of native, penalty' }).optional(),
  // used with constraint_handling penalty only
  penalty_weight: z
    .number({ error: `a number > 0 and <= ${MAX_PENALTY_WEIGHT} (score per squared normalized violation)` })
    .gt(0)
    .lte(MAX_PENALTY_WEIGHT)
    .optional(),
  seed: seedSchema.optional(),
};
const searchSchema = strictObject(searchShape, `an object with ${fields(searchShape)}`).prefault({});

const holdoutShape = { seed: seedSchema, rollouts: integerIn(1, MAX_TERM_ROLLOUTS) };
const holdoutSchema = strictObject(holdoutShape, `an object with ${fields(holdoutShape)}`);

const studyShape = {
  $schema: schemaReference,
  name: z.string({ error: 'a string' }).optional(),
  description: z.string({ error: 'a string' }).optional(),
  scenario: z.unknown().optional(),
  scenario_file: z.string({ error: 'a path to a scenario file, relative to the study file' }).optional(),
  // provenance, written by the validator with the scenario it read: 'inline' or the scenario_file
  scenario_source: z.string({ error: 'a string' }).optional(),
  free_parameters: z
    .array(freeParameterSchema, { error: 'a non-empty array of free parameters {path, lower, upper, start?}' })
    .min(1)
    .max(MAX_FREE_PARAMETERS),
  objective: objectiveSchema,
  constraints: constraintsSchema.optional(),
  // null or absent: the nominal robot
  model_mismatch: mismatchSchema.nullable().optional(),
  search: searchSchema,
  seed: seedSchema,
  holdout: holdoutSchema,
};
export const studySchema = strictObject(studyShape, `a study object with ${fields(studyShape)}`);

// ---------------------------------------------------------------------------------------------
// The validated study.

export interface FreeParameter {
  /** Canonical dotted path, e.g. policy.angle.attack_deg[3]. */
  path: string;
  lower: number;
  upper: number;
  /** The search's start: given, or the base scenario's value. */
  start: number;
}

export interface SurvivalTerm {
  kind: 'survival';
  weight: number;
  terrain: RandomTerrain;
  sigma_m: number;
  rollouts: number;
  strides: number;
}

export interface TrackingTerm {
  kind: 'tracking';
  weight: number;
  terrain: RandomTerrain;
  sigma_m: number;
  rollouts: number;
  strides: number;
  target_apex_height_m: number;
  target_forward_speed_m_per_s: number;
  height_scale_m: number;
  speed_scale_m_per_s: number;
  fall_penalty: number;
}

export interface BasinTerm {
  kind: 'basin';
  weight: number;
  mode: 'grid' | 'energy';
  heights: { low_m: number; high_m: number; count: number };
  /** null in energy mode. */
  speeds: { low_m_per_s: number; high_m_per_s: number; count: number } | null;
  strides: number;
  height_tolerance_m: number;
  speed_tolerance_m_per_s: number;
}

export interface StepDownTerm {
  kind: 'step_down';
  weight: number;
  strides_after: number;
  resolution_m: number;
  grid_m: number;
}

/** Lateral model: the fraction of random kicks recovered from (pronk recover's Monte Carlo). */
export interface RecoveryTerm {
  kind: 'recovery';
  weight: number;
  rollouts: number;
  kick_stride: number;
  strides_after: number;
  max_left_m_per_s: number;
  max_forward_m_per_s: number;
  max_angle_deg: number;
  max_rate_deg_per_s: number;
}

export type ObjectiveTerm = SurvivalTerm | TrackingTerm | BasinTerm | StepDownTerm | RecoveryTerm;
export type MonteCarloTerm = SurvivalTerm | TrackingTerm;

export interface StudyConstraints {
  max_leg_force_N?: number;
  /** Two-leg model: the peak summed vertical ground force of both legs, N. */
  max_vertical_force_N?: number;
  friction_coefficient?: number;
  max_compression_fraction?: number;
  leg_angle_range_deg?: { min_deg: number; max_deg: number };
  max_hip_rate_deg_per_s?: number;
  stiffness_range_N_per_m?: { min_N_per_m: number; max_N_per_m: number };
}

export interface ModelMismatch {
  distribution: 'uniform' | 'normal';
  mass_fraction: number;
  leg_stiffness_fraction: number;
  leg_length_fraction: number;
}

export interface StudySearch {
  method: MethodName;
  /** For MLSL and AUGLAG; absent otherwise. */
  local_method?: MethodName;
  max_evaluations: number;
  /** 0: no limit. */
  max_time_s: number;
  xtol_rel: number;
  restarts: number;
  /** How constraints are handled (when the study has any): given, or native when the method takes them, else penalty. */
  constraint_handling: 'native' | 'penalty';
  /** The quadratic penalty's weight (used with constraint_handling 'penalty' only). */
  penalty_weight: number;
  /** Seed of the stochastic methods and restart points: default the study's seed. */
  seed: number;
}

export interface Study {
  name?: string;
  description?: string;
  /** The base scenario, validated, defaults filled. */
  scenario: Scenario;
  /** 'inline', or the scenario_file path as written in the study. */
  scenario_source: string;
  free_parameters: FreeParameter[];
  objective: { terms: ObjectiveTerm[] };
  constraints: StudyConstraints;
  model_mismatch: ModelMismatch | null;
  search: StudySearch;
  /** Training terrain streams and model-mismatch draws. */
  seed: number;
  /** Held-out re-scoring: seeds (terrains and robots) the search never sees, rollouts per Monte Carlo term. */
  holdout: { seed: number; rollouts: number };
}

export const isMonteCarloTerm = (term: ObjectiveTerm): term is MonteCarloTerm =>
  term.kind === 'survival' || term.kind === 'tracking';

/** Terms of random rollouts, re-scored on the held-out seed and compared pair by pair. */
export const isRolloutTerm = (term: ObjectiveTerm): term is MonteCarloTerm | RecoveryTerm => isMonteCarloTerm(term) || term.kind === 'recovery';

/** A lateral scenario, held where a study's Scenario goes (its own type: models/lateral.ts). */
export function lateralScenarioOf(scenario: Scenario): LateralScenario | null {
  return (scenario as { model?: string }).model === 'lateral' ? (scenario as unknown as LateralScenario) : null;
}

/** A base scenario of any kind pronk optimize searches: the lateral one by its own validator. */
function parseStudyScenario(value: unknown, options: { source?: string } = {}): Scenario {
  if (typeof value === 'object' && value !== null && (value as { model?: unknown }).model === 'lateral') {
    return parseLateralScenario(value, options) as unknown as Scenario;
  }
  const scenario = parseScenario(value, { command: 'optimize', supported: OPTIMIZE_KINDS, ...options });
  requireKind(scenario, 'optimize', OPTIMIZE_KINDS);
  return scenario;
}

/** The candidate scenario's value validated as its kind (a lateral one held as a Scenario: lateralScenarioOf). */
export function parseCandidateScenario(value: Record<string, unknown>): Scenario {
  return value.model === 'lateral' ? (parseLateralScenario(value) as unknown as Scenario) : parseScenario(value);
}

export const hasConstraints = (constraints: StudyConstraints): boolean =>
  Object.values(constraints).some((value) => value !== undefined);

/** Whether NLopt takes the study's constraints itself (else they are a penalty, or there are none). */
export const usesNativeConstraints = (study: Study): boolean =>
  hasConstraints(study.constraints) && study.search.constraint_handling === 'native';

// ---------------------------------------------------------------------------------------------
// Parameter paths.

export type PathSegment = string | number;

const PATH_PATTERN = /^[A-Za-z_]\w*(?:\s*\.\s*[A-Za-z_]\w*|\s*\[\s*\d+\s*\])*$/;

/** `policy.angle.attack_deg[3]` → ['policy', 'angle', 'attack_deg', 3]; null when malformed. */
export function parseParameterPath(path: string): PathSegment[] | null {
  const trimmed = path.trim();
  if (!PATH_PATTERN.test(trimmed)) return null;
  const segments: PathSegment[] = [];
  for (const match of trimmed.matchAll(/([A-Za-z_]\w*)|\[\s*(\d+)\s*\]/g)) {
    segments.push(match[1] !== undefined ? match[1] : Number(match[2]));
  }
  return segments;
}

/** The number at `segments` in the scenario (an object tree), or a reason why there is none. */
export function numberAtPath(root: unknown, segments: readonly PathSegment[]): { value: number } | { problem: string } {
  let value: unknown = root;
  for (let i = 0; i < segments.length; i++) {
    const segment = segments[i];
    const where = formatPath(segments.slice(0, i)) || 'the scenario';
    if (typeof segment === 'number') {
      if (!Array.isArray(value)) return { problem: `${where} is not a table (no [${segment}])` };
      if (segment >= value.length) {
        return { problem: `${where} has ${value.length} value${value.length === 1 ? '' : 's'}: an index from 0 to ${value.length - 1}` };
      }
      value = value[segment];
      continue;
    }
    if (typeof value !== 'object' || value === null || Array.isArray(value)) {
      return { problem: `${where} is ${describeFound(value)}, which has no field ${segment}` };
    }
    const record = value as Record<string, unknown>;
    if (!Object.prototype.hasOwnProperty.call(record, segment)) {
      const known = Object.keys(record).filter((key) => key !== 'kind');
      const suggestion = closestName(segment, known);
      const kind = typeof record.kind === 'string' ? ` (a ${record.kind} ${formatPath(segments.slice(i - 1, i))} policy)` : '';
      const hint = suggestion ? `; did you mean ${formatPath([...segments.slice(0, i), suggestion])}?` : '';
      return {
        problem: `${where}${kind} has no ${segment}: its fields are ${known.join(', ') || 'none'}${hint} (an optional field must be in the base scenario to be searched)`,
      };
    }
    value = record[segment];
  }
  if (Array.isArray(value)) {
    return { problem: `${formatPath(segments)} is a table of ${value.length} values: give an index, e.g. ${formatPath([...segments, 0])}` };
  }
  if (typeof value !== 'number') return { problem: `${formatPath(segments)} is ${describeFound(value)}, not a number` };
  return { value };
}

/** A deep copy of the scenario (a plain object) with the free parameters set to x. */
export function scenarioValueAt(base: Scenario, parameters: readonly FreeParameter[], x: readonly number[]): Record<string, unknown> {
  const copy = structuredClone(base) as unknown as Record<string, unknown>;
  // With an apex accuracy the tolerances follow from the body and start: re-derived when re-parsed.
  const integrator = copy.integrator as Record<string, unknown> | undefined;
  if (integrator?.apex_accuracy_m !== undefined) {
    delete integrator.relative_tolerance;
    delete integrator.absolute_tolerance;
  }
  parameters.forEach((parameter, i) => {
    const segments = parseParameterPath(parameter.path)!;
    let parent: Record<PathSegment, unknown> = copy;
    for (const segment of segments.slice(0, -1)) parent = parent[segment] as Record<PathSegment, unknown>;
    parent[segments[segments.length - 1]] = x[i];
  });
  return copy;
}

// ---------------------------------------------------------------------------------------------
// Validation.

export interface ParseStudyOptions {
  /** The study file (for messages). */
  source?: string;
  /** The scenario read from scenario_file (readStudyFile passes it). */
  scenarioFromFile?: Scenario;
}

/** Checks any JSON value against the study schema; throws an InputError naming every problem. */
export function parseStudy(value: unknown, options: ParseStudyOptions = {}): Study {
  const parsed = validateWith(studySchema, value);
  const issues: InputIssue[] = [...parsed.issues];

  // The base scenario, whatever else failed (its own problems are reported under `scenario.`).
  const raw = typeof value === 'object' && value !== null ? (value as Record<string, unknown>) : {};
  let scenario: Scenario | undefined;
  const hasInline = raw.scenario !== undefined;
  const hasFile = raw.scenario_file !== undefined;
  if (hasInline && hasFile) {
    issues.push({ path: 'scenario_file', expected: 'either scenario (inline) or scenario_file, not both', found: describeFound(raw.scenario_file) });
  } else if (!hasInline && !hasFile) {
    issues.push({ path: 'scenario', expected: 'a scenario (an inline object) or scenario_file (a path relative to the study file)', found: 'missing' });
  } else if (hasInline) {
    try {
      scenario = parseStudyScenario(raw.scenario);
    } catch (error) {
      if (!(error instanceof InputError)) throw error;
      for (const issue of error.issues) issues.push({ ...issue, path: issue.path ? `scenario.${issue.path}` : 'scenario' });
    }
  } else if (typeof raw.scenario_file === 'string') {
    scenario = options.scenarioFromFile;
    if (!scenario) {
      issues.push({
        path: 'scenario_file',
        expected: 'an inline scenario (a scenario_file is read by readStudyFile, which knows where the study file is)',
        found: describeFound(raw.scenario_file),
      });
    }
  }
  if (!parsed.success || !scenario) throw new InputError(issues, { source: options.source });

  const data = parsed.data;
  const free = checkFreeParameters(data.free_parameters, scenario, issues);
  const terms = data.objective.terms.map((term, i) => completeTerm(term, i, scenario, issues));
  const constraints = (data.constraints ?? {}) as StudyConstraints;
  checkConstraints(constraints, issues);
  // terms and limits the scenario's model kind does not have, by name (kinds.ts)
  issues.push(...kindIssues(scenario, data.objective.terms, constraints as Record<string, unknown>));
  const mismatch = data.model_mismatch ? checkMismatch(data.model_mismatch as ModelMismatch, issues) : null;
  const search = completeSearch(data.search, constraints, data.seed, issues);
  const holdout = data.holdout;
  checkWork(terms, holdout.rollouts, search, issues);
  if (holdout.seed === data.seed) {
    issues.push({
      path: 'holdout.seed',
      expected: `a seed other than the training seed (${data.seed}): held-out scores must come from terrains and robots the search never saw`,
      found: describeFound(holdout.seed),
    });
  }
  if (issues.length) throw new InputError(issues, { source: options.source });
  if (free.some((parameter) => parameter === null)) throw new Error('unreachable: a free parameter failed without an issue');

  const study: Study = {
    ...(data.name !== undefined ? { name: data.name } : {}),
    ...(data.description !== undefined ? { description: data.description } : {}),
    scenario,
    scenario_source: hasInline ? (data.scenario_source ?? 'inline') : (raw.scenario_file as string),
    free_parameters: free as FreeParameter[],
    objective: { terms },
    constraints,
    model_mismatch: mismatch,
    search,
    seed: data.seed,
    holdout,
  };
  // The start point must itself be a valid scenario (e.g. a clamp pair must stay ordered).
  const startIssue = startScenarioIssue(study);
  if (startIssue) throw new InputError([startIssue], { source: options.source });
  return study;
}

type ParsedFree = z.output<typeof freeParameterSchema>;

function checkFreeParameters(list: ParsedFree[], scenario: Scenario, issues: InputIssue[]): (FreeParameter | null)[] {
  const seen = new Map<string, number>();
  return list.map((entry, i) => {
    const at = (field: string) => `free_parameters[${i}].${field}`;
    const segments = parseParameterPath(entry.path);
    const expectedPath = 'a numeric field of the base scenario\'s policy or body, e.g. policy.angle.attack_deg or body.leg_stiffness_N_per_m';
    if (!segments) {
      issues.push({ path: at('path'), expected: `${expectedPath} (names joined by dots, table entries as [i])`, found: describeFound(entry.path) });
      return null;
    }
    const roots = parameterRoots(scenario);
    if (!roots.includes(segments[0] as string)) {
      issues.push({
        path: at('path'),
        expected: roots.length > 2 ? `${expectedPath}, or of a leg (e.g. legs.right.stiffness_scale)` : expectedPath,
        found: `${describeFound(entry.path)} (a path into ${segments[0]}; only ${roots.join(', ').replace(/, ([^,]*)$/, ' and $1')} numbers can be searched)`,
      });
      return null;
    }
    const canonical = formatPath(segments);
    if (lateralScenarioOf(scenario) && !LATERAL_PARAMETERS.includes(canonical)) {
      issues.push({
        path: at('path'),
        expected: `a number the lateral model's search moves: ${LATERAL_PARAMETERS.join(', ')}`,
        found: describeFound(entry.path),
        message: `scenario model "lateral": free parameter ${describeFound(entry.path)} is not searched (the lateral model's search moves ${LATERAL_PARAMETERS.join(', ')})`,
      });
      return null;
    }
    const located = numberAtPath(scenario, segments);
    if ('problem' in located) {
      issues.push({ path: at('path'), expected: expectedPath, found: `${describeFound(entry.path)}: ${located.problem}` });
      return null;
    }
    const previous = seen.get(canonical);
    if (previous !== undefined) {
      issues.push({ path: at('path'), expected: `a path not listed before (free_parameters[${previous}].path is the same)`, found: describeFound(entry.path) });
      return null;
    }
    seen.set(canonical, i);
    const { lower, upper } = entry;
    if (!(lower < upper)) {
      issues.push({
        path: at('upper'),
        expected: `a number > lower (${lower})${lower === upper ? ': the bounds are empty' : ': the bounds are inverted'}`,
        found: describeFound(upper),
      });
      return null;
    }
    let start = entry.start;
    if (start === undefined) {
      start = located.value;
      if (!(start >= lower && start <= upper)) {
        issues.push({
          path: at('start'),
          expected: `a start within [${lower}, ${upper}]: the base scenario's value ${start} lies outside the bounds (give start, or widen the bounds)`,
          found: 'missing',
        });
        return null;
      }
    } else if (!(start >= lower && start <= upper)) {
      issues.push({ path: at('start'), expected: `a start within [${lower}, ${upper}]`, found: describeFound(start) });
      return null;
    }
    return { path: canonical, lower, upper, start };
  });
}

type ParsedTerm = z.output<typeof termSchema>;

function completeTerm(term: ParsedTerm, i: number, scenario: Scenario, issues: InputIssue[]): ObjectiveTerm {
  const at = (field: string) => `objective.terms[${i}].${field}`;
  switch (term.kind) {
    case 'recovery':
      return term;
    case 'survival':
      return { ...term, strides: term.strides ?? scenario.strides };
    case 'tracking':
      return {
        ...term,
        strides: term.strides ?? scenario.strides,
        target_apex_height_m: term.target_apex_height_m ?? scenario.start.apex_height_m,
        target_forward_speed_m_per_s: term.target_forward_speed_m_per_s ?? scenario.start.forward_speed_m_per_s,
      };
    case 'basin': {
      const { heights, speeds } = term;
      const axis = (path: string, low: number, high: number, count: number, unit: string) => {
        if (count === 1 && low !== high) issues.push({ path, expected: `low = high for count 1 (one value), or count >= 2 for a range (${unit})`, found: `${low} to ${high}` });
        if (count > 1 && !(low < high)) issues.push({ path, expected: `low < high for count >= 2 (${unit})`, found: `${low} to ${high}` });
      };
      axis(at('heights'), heights.low_m, heights.high_m, heights.count, 'm');
      if (term.mode === 'grid') {
        if (!speeds) issues.push({ path: at('speeds'), expected: 'a speed axis {low_m_per_s, high_m_per_s, count} in grid mode', found: 'missing' });
        else axis(at('speeds'), speeds.low_m_per_s, speeds.high_m_per_s, speeds.count, 'm/s');
      } else if (speeds) {
        issues.push({ path: at('speeds'), expected: 'no speed axis in energy mode (each speed follows from the scenario\'s energy)', found: describeFound(speeds) });
      }
      const cells = heights.count * (term.mode === 'grid' && speeds ? speeds.count : 1);
      if (cells > MAX_STUDY_BASIN_CELLS) {
        issues.push({ path: at('heights'), expected: `at most ${MAX_STUDY_BASIN_CELLS} cells (heights x speeds) per evaluation`, found: `${cells} cells` });
      } else if (cells * term.strides > MAX_PROBE_STRIDES) {
        issues.push({
          path: at('strides'),
          expected: `at most ${MAX_PROBE_STRIDES} strides per evaluation (cells x strides; this grid has ${cells} cells: strides <= ${Math.floor(MAX_PROBE_STRIDES / cells)})`,
          found: describeFound(term.strides),
        });
      }
      return { ...term, speeds: term.mode === 'grid' ? (speeds ?? null) : null };
    }
    case 'step_down': {
      const leg = landingLegLength(scenario);
      const finest = leg / 1e6;
      if (!(term.resolution_m >= finest && term.resolution_m <= leg / 10)) {
        issues.push({ path: at('resolution_m'), expected: `a step size from ${finest} to ${leg / 10} m (leg length / 1e6 to leg length / 10)`, found: describeFound(term.resolution_m) });
      } else if (!(term.grid_m >= term.resolution_m && term.grid_m <= leg)) {
        issues.push({ path: at('grid_m'), expected: `a spacing from resolution_m (${term.resolution_m} m) to the leg length (${leg} m)`, found: describeFound(term.grid_m) });
      } else {
        const probes = stepDownProbes(leg, term);
        if (probes * (1 + term.strides_after) > MAX_PROBE_STRIDES) {
          issues.push({
            path: at('grid_m'),
            expected: `at most ${MAX_PROBE_STRIDES} strides per evaluation (probes x (1 + strides_after)); a coarser grid_m or fewer strides_after`,
            found: `${describeFound(term.grid_m)} (${probes} probes of ${1 + term.strides_after} strides)`,
          });
        }
      }
      return term;
    }
  }
}

/** Step-down probes of one evaluation at most: the coarse grid up to one leg length, then the bisection. */
export function stepDownProbes(legLength: number, term: { resolution_m: number; grid_m: number }): number {
  const steps = Math.max(1, Math.round(term.grid_m / term.resolution_m));
  return Math.ceil(Math.round(legLength / term.resolution_m) / steps) + 1 + Math.ceil(Math.log2(steps));
}

// The work of one evaluation and of the whole search, bounded (MAX_EVALUATION_STRIDES, MAX_SEARCH_EVALUATIONS).
function checkWork(terms: ObjectiveTerm[], holdoutRollouts: number, search: StudySearch, issues: InputIssue[]): void {
  let training = 0;
  let heldOut = 0;
  terms.forEach((term) => {
    if (!isRolloutTerm(term)) return;
    const strides = term.kind === 'recovery' ? term.kick_stride + 1 + term.strides_after : term.strides;
    training += term.rollouts * strides;
    heldOut += holdoutRollouts * strides;
  });
  if (training > MAX_EVALUATION_STRIDES) {
    issues.push({
      path: 'objective.terms',
      expected: `at most ${MAX_EVALUATION_STRIDES} Monte Carlo strides per evaluation (the sum over survival and tracking terms of rollouts x strides)`,
      found: `${training} strides`,
    });
  }
  if (heldOut > MAX_EVALUATION_STRIDES) {
    issues.push({
      path: 'holdout.rollouts',
      expected: `at most ${MAX_EVALUATION_STRIDES} held-out strides per candidate (holdout.rollouts x the strides of every survival and tracking term)`,
      found: `${describeFound(holdoutRollouts)} (${heldOut} strides)`,
    });
  }
  const budget = search.restarts * search.max_evaluations;
  if (budget > MAX_SEARCH_EVALUATIONS) {
    issues.push({
      path: 'search.max_evaluations',
      expected: `at most ${MAX_SEARCH_EVALUATIONS} evaluations in all (restarts x max_evaluations; ${search.restarts} restarts: max_evaluations <= ${Math.floor(MAX_SEARCH_EVALUATIONS / search.restarts)})`,
      found: describeFound(search.max_evaluations),
    });
  }
}

function checkConstraints(c: StudyConstraints, issues: InputIssue[]): void {
  const angle = c.leg_angle_range_deg;
  if (angle && !(angle.min_deg < angle.max_deg)) {
    issues.push({ path: 'constraints.leg_angle_range_deg.max_deg', expected: `an angle > min_deg (${angle.min_deg} deg)`, found: describeFound(angle.max_deg) });
  }
  const stiffness = c.stiffness_range_N_per_m;
  if (stiffness && !(stiffness.min_N_per_m < stiffness.max_N_per_m)) {
    issues.push({
      path: 'constraints.stiffness_range_N_per_m.max_N_per_m',
      expected: `a stiffness > min_N_per_m (${stiffness.min_N_per_m} N/m)`,
      found: describeFound(stiffness.max_N_per_m),
    });
  }
}

function checkMismatch(m: ModelMismatch, issues: InputIssue[]): ModelMismatch {
  // every drawn factor must stay > 0: 1 − f (uniform) or 1 − 3f (normal, truncated at 3σ)
  const limit = m.distribution === 'uniform' ? 1 : 1 / 3;
  for (const field of ['mass_fraction', 'leg_stiffness_fraction', 'leg_length_fraction'] as const) {
    if (!(m[field] < limit)) {
      issues.push({
        path: `model_mismatch.${field}`,
        expected: `a fraction >= 0 and < ${m.distribution === 'uniform' ? '1' : '1/3'} (${m.distribution}: every drawn factor must stay > 0)`,
        found: describeFound(m[field]),
      });
    }
  }
  return m;
}

type ParsedSearch = z.output<typeof searchSchema>;

function completeSearch(s: ParsedSearch, constraints: StudyConstraints, seed: number, issues: InputIssue[]): StudySearch {
  const info = METHODS[s.method];
  const constrained = hasConstraints(constraints);
  if (info.needsLocal) {
    if (s.local_method === undefined) {
      issues.push({ path: 'search.local_method', expected: `a local method for ${s.method}, e.g. COBYLA or BOBYQA`, found: 'missing' });
    } else {
      const local = METHODS[s.local_method];
      if (local.global || local.needsLocal) {
        issues.push({
          path: 'search.local_method',
          expected: `a local method (${METHOD_NAMES.filter((n) => !METHODS[n].global && !METHODS[n].needsLocal).join(', ')})`,
          found: describeFound(s.local_method),
        });
      }
    }
  } else if (s.local_method !== undefined) {
    issues.push({ path: 'search.local_method', expected: `no local method: only MLSL and AUGLAG take one (method is ${s.method})`, found: describeFound(s.local_method) });
  }
  const handling = s.constraint_handling ?? (info.constraints ? 'native' : 'penalty');
  if (constrained && handling === 'native' && !info.constraints) {
    issues.push({
      path: 'search.constraint_handling',
      expected: `penalty: ${s.method} cannot take constraints natively (COBYLA, ISRES and AUGLAG can)`,
      found: describeFound('native'),
    });
  }
  return {
    method: s.method,
    ...(s.local_method !== undefined ? { local_method: s.local_method } : {}),
    max_evaluations: s.max_evaluations,
    max_time_s: s.max_time_s,
    xtol_rel: s.xtol_rel,
    restarts: s.restarts,
    constraint_handling: handling,
    penalty_weight: s.penalty_weight ?? DEFAULT_PENALTY_WEIGHT,
    seed: s.seed ?? seed,
  };
}

function startScenarioIssue(study: Study): InputIssue | null {
  try {
    parseCandidateScenario(scenarioValueAt(study.scenario, study.free_parameters, study.free_parameters.map((p) => p.start)));
    return null;
  } catch (error) {
    if (!(error instanceof InputError)) throw error;
    const first = error.issues[0];
    return {
      path: 'free_parameters',
      expected: 'start values that give a valid scenario',
      found: `a scenario where ${first.path || 'the scenario'}: ${first.message ?? `expected ${first.expected}, found ${first.found}`}`,
    };
  }
}

// ---------------------------------------------------------------------------------------------
// Reading study files (Node only; fs and path are loaded on demand).

/** Reads and validates a study file; a scenario_file is read relative to the study file's folder. */
export async function readStudyFile(path: string): Promise<Study> {
  const { dirname, resolve } = await import('node:path');
  const { readInputFile } = await import('../input-file.js');
  const value = await readInputFile(path, 'study file');
  const file = typeof value === 'object' && value !== null ? (value as Record<string, unknown>).scenario_file : undefined;
  let scenarioFromFile: Scenario | undefined;
  if (typeof file === 'string' && (value as Record<string, unknown>).scenario === undefined) {
    // the scenario file's own problems are reported against that file
    const scenarioPath = resolve(dirname(path), file);
    const scenarioValue = await readInputFile(scenarioPath, 'scenario file');
    if (typeof scenarioValue === 'object' && scenarioValue !== null && (scenarioValue as { model?: unknown }).model === 'lateral') {
      scenarioFromFile = parseLateralScenario(scenarioValue, { source: scenarioPath }) as unknown as Scenario;
    } else {
      scenarioFromFile = await readScenarioFile(scenarioPath, { command: 'optimize', supported: OPTIMIZE_KINDS });
      requireKind(scenarioFromFile, 'optimize', OPTIMIZE_KINDS, scenarioPath);
    }
  }
  return parseStudy(value, { source: path, scenarioFromFile });
}
