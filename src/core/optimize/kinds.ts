// What a policy search means for each model kind: which objective terms and limits apply, which
// scenario numbers may be searched, and how a two-leg robot of a model-mismatch study is drawn and
// built. The single-leg path (study.ts, objectives.ts) is unchanged; this file only adds.
//
// Two-leg model ("model": "biped"), its section the single-support apex (walking) or the flight
// apex (running):
//  - terms: survival and tracking (the section state's height and forward speed against the
//    target, taken at every section the rollouts reach); basin (as pronk basin on two legs: cells
//    are section states with the start's offset and stance leg, in energy mode at the start
//    section's energy with the stance spring's energy; walking heights at most the stance leg's
//    rest length); step_down (as pronk stepdown: from the start section, the drop met by the leg
//    that lands first, over that leg's rest length).
//  - limits: max_leg_force_N bounds each leg's peak force (the kernel's maximum over both legs);
//    max_compression_fraction each leg's largest compression over its rest length (measured as the
//    larger compression of the two over the shorter rest length of that robot: exact for equal
//    legs, never smaller than the true fraction otherwise); leg_angle_range_deg the attack angle at
//    every touchdown of either leg; max_vertical_force_N (two-leg only) the peak of the summed
//    vertical ground force of both legs; max_hip_rate_deg_per_s and stiffness_range_N_per_m the
//    policy (each leg's stiffness: the policy's times its stiffness_scale). friction_coefficient is
//    refused: the two-leg kernel measures |Fx/Fy| of the summed ground force, which in double
//    support (the feet push against each other) is smaller than the friction either foot needs.
//  - free parameters: the policy, the body and each leg's fields (legs.left.stiffness_scale,
//    legs.right.leg_length_m, ...), present in the base scenario.
//  - model mismatch: each robot's mass, then the left leg's stiffness and length, then the right
//    leg's, drawn in that order from the study's seed (five factors a robot), each leg's factors
//    multiplying that leg's stiffness scale and rest length.
//
// Lateral leg-spring model ("model": "lateral"), its section the left touchdown:
//  - terms: recovery (the fraction of random kicks after which the gait recovers, as the Monte
//    Carlo of pronk recover, kick i from stream i of the study's seed).
//  - limits: max_leg_force_N (the kernel's peak leg force over every stance) and
//    max_compression_fraction (the largest compression L0 − r over the leg's rest length), both
//    over the completed strides of every kicked rollout. The others are refused by name (the
//    reasons in LIMIT_REASONS).
//  - free parameters: the touchdown angle to the body axis, the leg stiffness and the attachment
//    point d (LATERAL_PARAMETERS); no model mismatch.

import * as L from '../../../assembly/layout.js';
import type { ModelBlock } from '../engine.js';
import type { InputIssue } from '../errors.js';
import { isBiped, legParameters } from '../models/biped.js';
import { kindOf, type ModelKind } from '../models/kind.js';
import type { Scenario } from '../scenario.js';

/** The model kinds pronk optimize searches. */
export const OPTIMIZE_KINDS: readonly ModelKind[] = ['slip', 'biped', 'lateral'];

/** The numbers of a lateral scenario a search may move: touchdown angle, leg stiffness, attachment point. */
export const LATERAL_PARAMETERS: readonly string[] = ['policy.angle.angle_to_body_deg', 'body.leg_stiffness_N_per_m', 'body.attachment_offset_m'];

/** The first segment of a free parameter's path a kind allows. */
export function parameterRoots(scenario: Scenario): readonly string[] {
  return isBiped(scenario) ? ['policy', 'body', 'legs'] : ['policy', 'body'];
}

/** Term kinds a model kind's search supports. */
export function supportedTerms(kind: ModelKind): readonly string[] {
  return kind === 'slip' || kind === 'biped' ? ['survival', 'tracking', 'basin', 'step_down'] : ['recovery'];
}

const KIND_NAMES: Record<ModelKind, string> = { slip: 'the single-leg model', biped: 'the two-leg model', lateral: 'the lateral leg-spring model' };

/** Limits a model kind's search supports. */
export function supportedLimits(kind: ModelKind): readonly string[] {
  const shared = ['max_leg_force_N', 'max_compression_fraction', 'leg_angle_range_deg', 'max_hip_rate_deg_per_s', 'stiffness_range_N_per_m'];
  if (kind === 'lateral') return ['max_leg_force_N', 'max_compression_fraction'];
  return kind === 'biped' ? [...shared, 'max_vertical_force_N'] : [...shared.slice(0, 1), 'friction_coefficient', ...shared.slice(1)];
}

const LIMIT_REASONS: Record<string, string> = {
  'biped:friction_coefficient':
    'the two-leg kernel measures |Fx/Fy| of the summed ground force, which in double support is smaller than the friction either foot needs',
  'lateral:friction_coefficient': 'the model lies in the horizontal plane: it has no vertical ground force to take |Fx/Fy| of',
  'lateral:max_vertical_force_N': 'the model lies in the horizontal plane: it has no vertical ground force',
  'lateral:leg_angle_range_deg': 'the leg is placed at the policy\'s fixed angle to the body axis, a free parameter bounded by its own lower and upper',
  'lateral:max_hip_rate_deg_per_s': 'the lateral policy has a fixed touchdown angle and no schedule',
  'lateral:stiffness_range_N_per_m': 'the lateral leg stiffness is one constant, a free parameter bounded by its own lower and upper',
  'slip:max_vertical_force_N': 'the peak summed vertical force of two legs; the single-leg model has one leg (use max_leg_force_N)',
};

/**
 * Issues for objective terms and limits that do not apply to the scenario's kind, each naming the
 * field, the kind and what the kind supports.
 */
export function kindIssues(
  scenario: Scenario,
  terms: readonly { kind: string; heights?: { high_m: number } }[],
  constraints: Record<string, unknown>,
): InputIssue[] {
  const kind = studyKindOf(scenario);
  const issues: InputIssue[] = [];
  const terms_ = supportedTerms(kind);
  terms.forEach((term, i) => {
    if (terms_.includes(term.kind)) return;
    issues.push({
      path: `objective.terms[${i}].kind`,
      expected: `a term ${KIND_NAMES[kind]} supports (${terms_.join(', ')})`,
      found: `"${term.kind}"`,
      message: `scenario model "${kind}": the ${term.kind} term is not available for ${KIND_NAMES[kind]} (it supports ${terms_.join(', ')}), found "${term.kind}"`,
    });
  });
  if (isBiped(scenario) && scenario.start.gait === 'walking') {
    // a single-support apex lies at most the stance leg's rest length high (the scenario's own start rule)
    const stance = legParameters(scenario)[scenario.start.leg === 'right' ? 1 : 0].length_m;
    terms.forEach((term, i) => {
      if (term.kind !== 'basin' || !term.heights || term.heights.high_m <= stance) return;
      issues.push({
        path: `objective.terms[${i}].heights.high_m`,
        expected: `a single-support apex height at most the ${scenario.start.leg} stance leg's rest length (${stance} m) for a walking start`,
        found: String(term.heights.high_m),
      });
    });
  }
  const limits = supportedLimits(kind);
  for (const name of Object.keys(constraints)) {
    if (constraints[name] === undefined || limits.includes(name)) continue;
    const reason = LIMIT_REASONS[`${kind}:${name}`];
    issues.push({
      path: `constraints.${name}`,
      expected: `a limit ${KIND_NAMES[kind]} supports (${limits.join(', ')})`,
      found: 'present',
      message: `scenario model "${kind}": the limit ${name} is not available for ${KIND_NAMES[kind]}${reason ? ` (${reason})` : ''}; it supports ${limits.join(', ')}`,
    });
  }
  return issues;
}

/** The kind of a study's scenario (a lateral scenario is held where a Scenario goes: isLateralStudyScenario). */
export function studyKindOf(scenario: { model?: string }): ModelKind {
  return scenario.model === 'lateral' ? 'lateral' : kindOf(scenario);
}

/** Factors a model-mismatch robot draws: 3 for the single-leg model (mass, stiffness, length), 5 for two legs. */
export function factorsPerRobot(scenario: Scenario): number {
  return isBiped(scenario) ? 5 : 3;
}

/**
 * A two-leg model block for one robot: the nominal block with each leg's stiffness scale and rest
 * length multiplied by that robot's factors (robot = [mass, k_left, L_left, k_right, L_right]).
 * The mass factor goes into the rollout input (I_MASS_SCALE), as for the single-leg model.
 */
export function bipedRobotBlock(base: ModelBlock, robot: ArrayLike<number>): ModelBlock {
  const fields = base.fields.slice();
  fields[L.M_BIPED_STIFFNESS_SCALE_0] *= robot[1];
  fields[L.M_BIPED_LENGTH_0] *= robot[2];
  fields[L.M_BIPED_STIFFNESS_SCALE_1] *= robot[3];
  fields[L.M_BIPED_LENGTH_1] *= robot[4];
  return { ...base, fields };
}

/** The shorter rest length of a two-leg robot (robot factors as in bipedRobotBlock), m. */
export function shorterLegM(scenario: Scenario, robot: ArrayLike<number> | null): number {
  if (!isBiped(scenario)) return scenario.body.leg_length_m;
  const [left, right] = legParameters(scenario);
  return Math.min(left.length_m * (robot ? robot[2] : 1), right.length_m * (robot ? robot[4] : 1));
}

/** Each leg's stiffness scale (1 for the single-leg model). */
export function stiffnessScales(scenario: Scenario): number[] {
  return isBiped(scenario) ? legParameters(scenario).map((leg) => leg.stiffness_scale) : [1];
}
