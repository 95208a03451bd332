// Scenario (file units: SI, degrees) -> kernel model block (SI, radians).
// The one place where degrees become radians on the way in.

import * as L from '../../assembly/layout.js';
import type { ModelBlock } from './engine.js';
import { rolloutInput } from './engine.js';
import type { Scenario } from './scenario.js';
import { completeBipedBlock, isBiped, legParameters, sectionInput, startState } from './models/biped.js';
import {
  DEFAULT_ABSOLUTE_TOLERANCE,
  DEFAULT_MAX_STEPS_PER_STANCE,
  DEFAULT_RELATIVE_TOLERANCE,
} from './scenario.js';

export const DEG = Math.PI / 180;
/** No clamp: a value the kernel treats as unbounded. */
const UNBOUNDED = 1e300;

export function buildModel(s: Scenario): ModelBlock {
  const block = buildSingleLegBlock(s);
  return isBiped(s) ? completeBipedBlock(s, block) : block;
}

// The fields every kind shares (body, policy, terrain, integrator), as the single-leg model reads them.
function buildSingleLegBlock(s: Scenario): ModelBlock {
  const f = new Float64Array(L.M_SIZE);
  const block: ModelBlock = { fields: f };
  f[L.M_MASS] = s.body.mass_kg;
  f[L.M_LEG_LENGTH] = s.body.leg_length_m;
  f[L.M_STIFFNESS] = s.body.leg_stiffness_N_per_m;
  f[L.M_GRAVITY] = s.body.gravity_m_per_s2 ?? 9.80665;
  f[L.M_DAMPING] = s.body.leg_damping_N_s_per_m ?? 0;

  const angle = s.policy.angle;
  f[L.M_ANGLE_MIN] = -UNBOUNDED;
  f[L.M_ANGLE_MAX] = UNBOUNDED;
  switch (angle.kind) {
    case 'fixed':
      f[L.M_ANGLE_KIND] = L.ANGLE_FIXED;
      f[L.M_ATTACK] = angle.attack_deg * DEG;
      break;
    case 'retraction':
      f[L.M_ANGLE_KIND] = L.ANGLE_RETRACTION;
      f[L.M_ATTACK] = angle.attack_at_apex_deg * DEG;
      f[L.M_RETRACTION_RATE] = angle.rate_deg_per_s * DEG;
      if (angle.min_deg !== undefined) f[L.M_ANGLE_MIN] = angle.min_deg * DEG;
      if (angle.max_deg !== undefined) f[L.M_ANGLE_MAX] = angle.max_deg * DEG;
      break;
    case 'time_table':
      f[L.M_ANGLE_KIND] = L.ANGLE_TIME_TABLE;
      f[L.M_ANGLE_TABLE_N] = angle.time_since_apex_s.length;
      block.angleTimes = Float64Array.from(angle.time_since_apex_s);
      block.angleValues = Float64Array.from(angle.attack_deg, (a) => a * DEG);
      break;
  }

  const stiffness = s.policy.stiffness ?? { kind: 'constant' as const };
  switch (stiffness.kind) {
    case 'constant':
      f[L.M_STIFFNESS_KIND] = L.STIFFNESS_CONSTANT;
      break;
    case 'split':
      f[L.M_STIFFNESS_KIND] = L.STIFFNESS_SPLIT;
      f[L.M_K_COMPRESSION] = stiffness.compression_N_per_m;
      f[L.M_K_EXTENSION] = stiffness.extension_N_per_m;
      break;
    case 'time_table':
      f[L.M_STIFFNESS_KIND] = L.STIFFNESS_TIME_TABLE;
      f[L.M_STIFFNESS_TABLE_N] = stiffness.time_since_apex_s.length;
      block.stiffnessTimes = Float64Array.from(stiffness.time_since_apex_s);
      block.stiffnessCompression = Float64Array.from(stiffness.compression_N_per_m);
      block.stiffnessExtension = Float64Array.from(stiffness.extension_N_per_m);
      break;
  }

  const terrain = s.terrain ?? { kind: 'flat' as const };
  switch (terrain.kind) {
    case 'flat':
      f[L.M_TERRAIN_KIND] = L.TERRAIN_FLAT;
      break;
    case 'steps':
      f[L.M_TERRAIN_KIND] = L.TERRAIN_STEPS;
      f[L.M_STEPS_N] = terrain.ground_heights_m.length;
      block.groundHeights = Float64Array.from(terrain.ground_heights_m);
      break;
    case 'random_walk':
      f[L.M_TERRAIN_KIND] = L.TERRAIN_RANDOM_WALK;
      f[L.M_TERRAIN_SIGMA] = terrain.sigma_m;
      f[L.M_TERRAIN_SEED] = terrain.seed;
      break;
    case 'random_heights':
      f[L.M_TERRAIN_KIND] = L.TERRAIN_INDEPENDENT;
      f[L.M_TERRAIN_SIGMA] = terrain.sigma_m;
      f[L.M_TERRAIN_SEED] = terrain.seed;
      break;
  }

  f[L.M_RTOL] = s.integrator?.relative_tolerance ?? DEFAULT_RELATIVE_TOLERANCE;
  f[L.M_ATOL] = s.integrator?.absolute_tolerance ?? DEFAULT_ABSOLUTE_TOLERANCE;
  f[L.M_MAX_STEPS] = s.integrator?.max_steps_per_stance ?? DEFAULT_MAX_STEPS_PER_STANCE;
  f[L.M_TARGET_HEIGHT] = s.start.apex_height_m;
  f[L.M_TARGET_SPEED] = s.start.forward_speed_m_per_s;
  return block;
}

/** The scenario's own start as a rollout input row (terrain stream 0, model block 0 by default). */
export function startInput(s: Scenario, stream = 0, model = 0): Float64Array {
  if (isBiped(s)) return sectionInput(startState(s), stream, model);
  return rolloutInput(s.start.apex_height_m, s.start.forward_speed_m_per_s, stream, model);
}

/** Stable machine-readable names of the kernel's status codes. */
export const STATUS_NAMES: Record<number, string> = {
  [L.STATUS_OK]: 'completed',
  [L.STATUS_BODY_HIT_GROUND]: 'body_hit_ground',
  [L.STATUS_FELL_BACKWARD]: 'fell_backward',
  [L.STATUS_NO_LIFTOFF]: 'no_liftoff',
  [L.STATUS_NO_APEX]: 'no_apex',
  [L.STATUS_LEG_NOT_PLACEABLE]: 'leg_not_placeable',
  [L.STATUS_STEP_UNDERFLOW]: 'step_size_underflow',
  [L.STATUS_NON_FINITE]: 'non_finite_state',
  [L.STATUS_STEP_LIMIT]: 'step_limit',
  [L.STATUS_ATTACK_OUT_OF_RANGE]: 'attack_out_of_range',
  [L.STATUS_GAIT_CHANGED]: 'gait_changed',
  [L.STATUS_STALLED]: 'stalled',
  [L.STATUS_NO_SECTION]: 'no_section',
  // lateral leg-spring model
  [L.STATUS_STALLED_FORWARD]: 'stalled_forward',
  [L.STATUS_LEG_UNLOADED]: 'leg_unloaded',
};

/** What each failure means, in words for a report. */
export const STATUS_TEXT: Record<number, string> = {
  [L.STATUS_OK]: 'all strides completed',
  [L.STATUS_BODY_HIT_GROUND]: 'the body touched the ground',
  [L.STATUS_FELL_BACKWARD]: 'forward speed fell below zero in stance (fell backward)',
  [L.STATUS_NO_LIFTOFF]: 'the stance did not end in a liftoff',
  [L.STATUS_NO_APEX]: 'the body left the ground still descending (no apex)',
  [L.STATUS_LEG_NOT_PLACEABLE]: 'the apex was below the touchdown height (the leg cannot be placed)',
  [L.STATUS_STEP_UNDERFLOW]: 'numeric trouble: integrator step size underflow',
  [L.STATUS_NON_FINITE]: 'numeric trouble: the state became non-finite',
  [L.STATUS_STEP_LIMIT]: 'numeric trouble: step limit reached (the integrator in one stance, or the touchdown search)',
  [L.STATUS_ATTACK_OUT_OF_RANGE]:
    'the commanded leg angle left (0, 90] deg before touchdown (a retraction without a clamp on that side: add max_deg or min_deg)',
  [L.STATUS_GAIT_CHANGED]:
    'the gait changed: a walking stride left the ground (flight), or a running stride landed its second leg (double support)',
  [L.STATUS_STALLED]: 'stalled in double support (forward speed reached zero, or no leg lifted off)',
  [L.STATUS_NO_SECTION]:
    'no section: the swing leg touched down a second time before the body reached its single-support apex',
  [L.STATUS_STALLED_FORWARD]: 'the velocity along the body axis fell to zero (the body stalled or turned sideways)',
  [L.STATUS_LEG_UNLOADED]: 'at a touchdown the body was already moving away from the new foot (the leg cannot load)',
};

/**
 * Rest length of the leg that lands first from the scenario's start: the single leg; with two legs
 * the swing leg of a walking start, or the leg (the first, for "both") that lands from a flight apex.
 */
export function landingLegLength(s: Scenario): number {
  if (!isBiped(s)) return s.body.leg_length_m;
  const legs = legParameters(s);
  const start = s.start.leg;
  if (s.start.gait === 'walking') return legs[start === 'right' ? 0 : 1].length_m;
  return legs[start === 'right' ? 1 : 0].length_m;
}
