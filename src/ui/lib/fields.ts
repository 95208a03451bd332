// What the editors show: every field's path in the file, its label and its unit, and the kinds
// of each policy, terrain and objective term with the values a switch of kind starts from. Paths
// and units follow docs/contract.md; nothing here checks values (the validators do).

import { getAt } from './draft.js';
import { parameterName } from '../../core/figures/labels.js';
import { LATERAL_PARAMETERS } from '../../core/optimize/kinds.js';
import { draftKind } from './kinds.js';
import {
  DEFAULT_ABSOLUTE_TOLERANCE,
  DEFAULT_MAX_STEPS_PER_STANCE,
  DEFAULT_RELATIVE_TOLERANCE,
  STANDARD_GRAVITY_M_PER_S2,
} from '../../core/scenario.js';
import {
  DEFAULT_BASIN_STRIDES,
  DEFAULT_FALL_PENALTY,
  DEFAULT_RECOVERY_KICK_STRIDE,
  DEFAULT_RECOVERY_STRIDES_AFTER,
  DEFAULT_STEP_STRIDES_AFTER,
  DEFAULT_XTOL_REL,
} from '../../core/optimize/study.js';

export interface FieldDef {
  /** Path relative to the section's root (the scenario, or the study). */
  path: string;
  label: string;
  /** Shown beside the input; '' for a pure number (a count, a seed, a fraction). */
  unit: string;
  hint?: string;
  /** Empty is allowed (the field is left out of the file). */
  optional?: boolean;
}

/** A scenario field with the label and unit every view uses for it (core/figures/labels.ts). */
function scenarioField(path: string, extra: Partial<FieldDef> = {}, base = ''): FieldDef {
  const name = parameterName(base ? `${base}.${path}` : path);
  return { path, label: name.label, unit: name.unit, ...extra };
}

export const BODY_FIELDS: FieldDef[] = [
  scenarioField('body.mass_kg'),
  scenarioField('body.leg_length_m'),
  scenarioField('body.leg_stiffness_N_per_m'),
  scenarioField('body.gravity_m_per_s2', { optional: true, hint: `empty: ${STANDARD_GRAVITY_M_PER_S2}` }),
  scenarioField('body.leg_damping_N_s_per_m', { optional: true, hint: 'empty: 0' }),
];

export const START_FIELDS: FieldDef[] = [
  scenarioField('start.apex_height_m', { hint: 'absolute, above the starting ground' }),
  scenarioField('start.forward_speed_m_per_s'),
  scenarioField('strides'),
];

// The two-leg model (src/core/models/biped.ts): per-leg parts (each empty: the body's value) and
// the section the run starts on.
export const BIPED_LEG_FIELDS = (leg: 'left' | 'right'): FieldDef[] => [
  scenarioField(`legs.${leg}.leg_length_m`, { optional: true, hint: "empty: the body's" }),
  scenarioField(`legs.${leg}.stiffness_scale`, { optional: true, hint: 'empty: 1' }),
  scenarioField(`legs.${leg}.leg_damping_N_s_per_m`, { optional: true, hint: "empty: the body's" }),
];

export const BIPED_START_FIELDS: FieldDef[] = [
  scenarioField('start.apex_height_m', { hint: 'walking: highest point in single support; running: flight apex' }),
  scenarioField('start.forward_speed_m_per_s'),
  scenarioField('start.offset_m', { optional: true, hint: 'empty: 0' }),
];

export const GAIT_CHOICES = [
  { value: 'walking', label: 'Walking (start at the single-support apex)' },
  { value: 'running', label: 'Running (start at the flight apex)' },
];

export const LEG_CHOICES = [
  { value: 'left', label: 'Left' },
  { value: 'right', label: 'Right' },
  { value: 'both', label: 'Both (running: land together)' },
];

// The lateral leg-spring model (src/core/models/lateral.ts), seen from above.
export const LATERAL_BODY_FIELDS: FieldDef[] = [
  scenarioField('body.mass_kg'),
  scenarioField('body.moment_of_inertia_kg_m2', { hint: 'about the centre of mass, vertical axis' }),
  scenarioField('body.leg_length_m'),
  scenarioField('body.leg_stiffness_N_per_m'),
  scenarioField('body.attachment_offset_m', { optional: true, hint: 'empty: 0; ahead of the centre of mass > 0, behind < 0' }),
  scenarioField('body.attachment_rate_m_per_s', { optional: true, hint: 'empty: 0; d moves along the body axis during stance' }),
];

export const LATERAL_START_FIELDS: FieldDef[] = [
  scenarioField('start.speed_m_per_s', { hint: 'at a left touchdown' }),
  scenarioField('start.heading_to_body_deg', { hint: 'velocity relative to the body axis, > 0 to the left' }),
  scenarioField('start.angular_velocity_deg_per_s', { optional: true, hint: 'empty: 0; > 0 counter-clockwise from above' }),
  scenarioField('strides'),
];

export const LATERAL_POLICY_FIELDS: FieldDef[] = [scenarioField('policy.angle.angle_to_body_deg', { hint: 'foot ahead of the attachment, mirrored left and right' })];

export const INTEGRATOR_FIELDS: FieldDef[] = [
  scenarioField('integrator.relative_tolerance', { optional: true, hint: `empty: ${DEFAULT_RELATIVE_TOLERANCE}` }),
  scenarioField('integrator.absolute_tolerance', { optional: true, hint: `empty: ${DEFAULT_ABSOLUTE_TOLERANCE}` }),
  scenarioField('integrator.max_steps_per_stance', { optional: true, hint: `empty: ${DEFAULT_MAX_STEPS_PER_STANCE}` }),
];

// The single-leg and two-leg models: an apex accuracy instead of the two tolerances (src/core/accuracy.ts).
export const ACCURACY_FIELD: FieldDef = scenarioField('integrator.apex_accuracy_m', {
  optional: true,
  hint: "one stride's apex height against a tight run: the tolerances follow from it (leave them empty)",
});

export interface TableColumn {
  key: string;
  label: string;
  unit: string;
}

export interface KindDef {
  kind: string;
  label: string;
  fields: FieldDef[];
  /** A table of knots: columns (each an array field of the same length). */
  table?: TableColumn[];
}

export const ANGLE_KINDS: KindDef[] = [
  { kind: 'fixed', label: 'Fixed angle', fields: [scenarioField('attack_deg', {}, 'policy.angle')] },
  {
    kind: 'retraction',
    label: 'Swing-leg retraction',
    fields: [
      scenarioField('attack_at_apex_deg', {}, 'policy.angle'),
      scenarioField('rate_deg_per_s', { hint: '> 0 steepens the leg' }, 'policy.angle'),
      scenarioField('min_deg', { optional: true, hint: 'empty: none' }, 'policy.angle'),
      scenarioField('max_deg', { optional: true, hint: 'empty: none' }, 'policy.angle'),
    ],
  },
  {
    kind: 'time_table',
    label: 'Table on time since apex',
    fields: [],
    table: [
      { key: 'time_since_apex_s', label: 'Time since apex', unit: 's' },
      { key: 'attack_deg', label: 'Attack angle', unit: '°' },
    ],
  },
];

export const STIFFNESS_KINDS: KindDef[] = [
  { kind: 'constant', label: 'Constant (body stiffness)', fields: [] },
  {
    kind: 'split',
    label: 'Split at maximum compression',
    fields: [scenarioField('compression_N_per_m', {}, 'policy.stiffness'), scenarioField('extension_N_per_m', {}, 'policy.stiffness')],
  },
  {
    kind: 'time_table',
    label: 'Table on touchdown time since apex',
    fields: [],
    table: [
      { key: 'time_since_apex_s', label: 'Touchdown time since apex', unit: 's' },
      { key: 'compression_N_per_m', label: 'Compression', unit: 'N/m' },
      { key: 'extension_N_per_m', label: 'Extension', unit: 'N/m' },
    ],
  },
];

export const TERRAIN_KINDS: KindDef[] = [
  { kind: 'flat', label: 'Flat', fields: [] },
  {
    kind: 'steps',
    label: 'Steps (height per touchdown)',
    fields: [],
    table: [{ key: 'ground_heights_m', label: 'Ground height at touchdown', unit: 'm' }],
  },
  {
    kind: 'random_walk',
    label: 'Random walk',
    fields: [
      { path: 'sigma_m', label: 'Step standard deviation', unit: 'm' },
      { path: 'seed', label: 'Seed', unit: '' },
    ],
  },
  {
    kind: 'random_heights',
    label: 'Random heights',
    fields: [
      { path: 'sigma_m', label: 'Height standard deviation', unit: 'm' },
      { path: 'seed', label: 'Seed', unit: '' },
    ],
  },
];

const num = (value: unknown, fallback: number) => (typeof value === 'number' && Number.isFinite(value) ? value : fallback);

/** The attack angle a policy commands at the apex, read loosely from a draft (for kind switches). */
function apexAttack(angle: unknown): number {
  const a = (angle ?? {}) as Record<string, unknown>;
  if (a.kind === 'fixed') return num(a.attack_deg, 65);
  if (a.kind === 'retraction') return num(a.attack_at_apex_deg, 65);
  if (a.kind === 'time_table' && Array.isArray(a.attack_deg)) return num(a.attack_deg[0], 65);
  return 65;
}

/** A new angle policy of `kind`, starting from the current one's apex angle. */
export function angleOfKind(kind: string, current: unknown): Record<string, unknown> {
  const a = apexAttack(current);
  switch (kind) {
    case 'fixed':
      return { kind, attack_deg: a };
    case 'retraction':
      return { kind, attack_at_apex_deg: a, rate_deg_per_s: 0 };
    default:
      return { kind: 'time_table', time_since_apex_s: [0, 0.2], attack_deg: [a, a] };
  }
}

/** A new stiffness policy of `kind`, starting from the body's stiffness. */
export function stiffnessOfKind(kind: string, scenario: unknown): Record<string, unknown> {
  const k = num(getAt(scenario, 'body.leg_stiffness_N_per_m'), 5000);
  switch (kind) {
    case 'constant':
      return { kind };
    case 'split':
      return { kind, compression_N_per_m: k, extension_N_per_m: k };
    default:
      return { kind: 'time_table', time_since_apex_s: [0, 0.2], compression_N_per_m: [k, k], extension_N_per_m: [k, k] };
  }
}

export function terrainOfKind(kind: string, current: unknown): Record<string, unknown> {
  const t = (current ?? {}) as Record<string, unknown>;
  const sigma = num(t.sigma_m, 0.005);
  const seed = num(t.seed, 1);
  switch (kind) {
    case 'flat':
      return { kind };
    case 'steps':
      return { kind, ground_heights_m: [0, -0.02] };
    default:
      return { kind, sigma_m: sigma, seed };
  }
}

// ---------------------------------------------------------------------------------------------
// The study (src/core/optimize/study.ts): limits, search, held-out seeds, objective terms.

export const LIMIT_FIELDS: FieldDef[] = [
  { path: 'constraints.max_leg_force_N', label: 'Peak leg force', unit: 'N', optional: true, hint: 'empty: no limit' },
  { path: 'constraints.max_vertical_force_N', label: 'Peak vertical force, both legs', unit: 'N', optional: true, hint: 'two-leg scenarios only; empty: no limit' },
  { path: 'constraints.friction_coefficient', label: 'Friction coefficient μ', unit: '|Fx/Fy|', optional: true, hint: 'empty: no limit' },
  { path: 'constraints.max_compression_fraction', label: 'Leg compression', unit: '× L₀', optional: true, hint: 'fraction of the rest length' },
  { path: 'constraints.leg_angle_range_deg.min_deg', label: 'Touchdown angle, lowest', unit: '°', optional: true },
  { path: 'constraints.leg_angle_range_deg.max_deg', label: 'Touchdown angle, steepest', unit: '°', optional: true },
  { path: 'constraints.max_hip_rate_deg_per_s', label: 'Hip (retraction) rate', unit: '°/s', optional: true, hint: 'empty: no limit' },
  { path: 'constraints.stiffness_range_N_per_m.min_N_per_m', label: 'Actuator stiffness, lowest', unit: 'N/m', optional: true },
  { path: 'constraints.stiffness_range_N_per_m.max_N_per_m', label: 'Actuator stiffness, highest', unit: 'N/m', optional: true },
];

export const SEARCH_FIELDS: FieldDef[] = [
  { path: 'search.max_evaluations', label: 'Evaluations per restart', unit: '' },
  { path: 'search.restarts', label: 'Restarts', unit: '' },
  { path: 'search.xtol_rel', label: 'x tolerance (relative)', unit: '', optional: true, hint: `empty: ${DEFAULT_XTOL_REL}` },
  { path: 'search.max_time_s', label: 'Time limit per restart', unit: 's', optional: true, hint: 'empty or 0: none' },
  { path: 'seed', label: 'Training seed', unit: '' },
  { path: 'holdout.seed', label: 'Held-out seed', unit: '' },
  { path: 'holdout.rollouts', label: 'Held-out rollouts per term', unit: '' },
];

export const MISMATCH_FIELDS: FieldDef[] = [
  { path: 'model_mismatch.mass_fraction', label: 'Mass spread', unit: '× m', optional: true },
  { path: 'model_mismatch.leg_stiffness_fraction', label: 'Stiffness spread', unit: '× k', optional: true },
  { path: 'model_mismatch.leg_length_fraction', label: 'Leg length spread', unit: '× L₀', optional: true },
];

// The fields every Monte Carlo term has (the study schema's monteCarloShape).
const MONTE_CARLO_FIELDS = [
  { path: 'weight', label: 'Weight', unit: '' },
  { path: 'sigma_m', label: 'Terrain σ', unit: 'm' },
  { path: 'rollouts', label: 'Rollouts', unit: '' },
  { path: 'strides', label: 'Strides', unit: '', optional: true, hint: "empty: the scenario's" },
];

export const TERM_KINDS: KindDef[] = [
  {
    kind: 'survival',
    label: 'Survival on rough ground',
    fields: MONTE_CARLO_FIELDS,
  },
  {
    kind: 'tracking',
    label: 'Apex tracking',
    fields: [
      ...MONTE_CARLO_FIELDS,
      { path: 'height_scale_m', label: 'Height error scale', unit: 'm' },
      { path: 'speed_scale_m_per_s', label: 'Speed error scale', unit: 'm/s' },
      { path: 'fall_penalty', label: 'Fall penalty', unit: '', optional: true, hint: `empty: ${DEFAULT_FALL_PENALTY}` },
    ],
  },
  {
    kind: 'basin',
    label: 'Basin of attraction',
    fields: [
      { path: 'weight', label: 'Weight', unit: '' },
      { path: 'heights.low_m', label: 'Apex heights from', unit: 'm' },
      { path: 'heights.high_m', label: 'Apex heights to', unit: 'm' },
      { path: 'heights.count', label: 'Height points', unit: '' },
      { path: 'speeds.low_m_per_s', label: 'Speeds from', unit: 'm/s', optional: true },
      { path: 'speeds.high_m_per_s', label: 'Speeds to', unit: 'm/s', optional: true },
      { path: 'speeds.count', label: 'Speed points', unit: '', optional: true },
      { path: 'strides', label: 'Strides per cell', unit: '', optional: true, hint: `empty: ${DEFAULT_BASIN_STRIDES}` },
    ],
  },
  {
    kind: 'step_down',
    label: 'Step-down tolerance',
    fields: [
      { path: 'weight', label: 'Weight', unit: '' },
      { path: 'strides_after', label: 'Strides after the step', unit: '', optional: true, hint: `empty: ${DEFAULT_STEP_STRIDES_AFTER}` },
    ],
  },
  {
    // the lateral model's one term: random kicks as pronk recover --rollouts draws them
    kind: 'recovery',
    label: 'Kick recovery',
    fields: [
      { path: 'weight', label: 'Weight', unit: '' },
      { path: 'rollouts', label: 'Kicks', unit: '' },
      { path: 'kick_stride', label: 'Kicked stride', unit: '', optional: true, hint: `empty: ${DEFAULT_RECOVERY_KICK_STRIDE}` },
      { path: 'strides_after', label: 'Strides after the kick', unit: '', optional: true, hint: `empty: ${DEFAULT_RECOVERY_STRIDES_AFTER}` },
      { path: 'max_left_m_per_s', label: 'Sideways kick, up to', unit: 'm/s', optional: true, hint: 'empty: 0' },
      { path: 'max_forward_m_per_s', label: 'Forward kick, up to', unit: 'm/s', optional: true, hint: 'empty: 0' },
      { path: 'max_angle_deg', label: 'Body-angle kick, up to', unit: '°', optional: true, hint: 'empty: 0' },
      { path: 'max_rate_deg_per_s', label: 'Turn-rate kick, up to', unit: '°/s', optional: true, hint: 'empty: 0' },
    ],
  },
];

export function termOfKind(kind: string, current: unknown, scenario: unknown): Record<string, unknown> {
  const t = (current ?? {}) as Record<string, unknown>;
  const weight = num(t.weight, 1);
  switch (kind) {
    case 'survival':
      return { kind, weight, terrain: 'random_walk', sigma_m: num(t.sigma_m, 0.01), rollouts: num(t.rollouts, 100) };
    case 'tracking':
      return {
        kind, weight, terrain: 'random_heights', sigma_m: num(t.sigma_m, 0.005), rollouts: num(t.rollouts, 50),
        height_scale_m: 0.01, speed_scale_m_per_s: 0.1,
      };
    case 'basin': {
      const y = num(getAt(scenario, 'start.apex_height_m'), 1);
      const v = num(getAt(scenario, 'start.forward_speed_m_per_s'), 3);
      return {
        kind, weight, mode: 'grid',
        heights: { low_m: Number((0.9 * y).toPrecision(3)), high_m: Number((1.3 * y).toPrecision(3)), count: 9 },
        speeds: { low_m_per_s: Number((0.8 * v).toPrecision(3)), high_m_per_s: Number((1.2 * v).toPrecision(3)), count: 9 },
      };
    }
    case 'recovery':
      return { kind, weight, rollouts: num(t.rollouts, 100), kick_stride: DEFAULT_RECOVERY_KICK_STRIDE, strides_after: DEFAULT_RECOVERY_STRIDES_AFTER, max_left_m_per_s: 0.3 };
    default:
      return { kind: 'step_down', weight };
  }
}

/**
 * The numbers of a scenario draft a study may set free: the policy and body, a two-leg robot's
 * legs too, of a lateral scenario only the three its search moves (core/optimize/kinds.ts).
 */
export function searchablePaths(scenario: unknown): string[] {
  const out: string[] = [];
  const walk = (node: unknown, path: string) => {
    if (typeof node === 'number') out.push(path);
    else if (Array.isArray(node)) node.forEach((v, i) => walk(v, `${path}[${i}]`));
    else if (node !== null && typeof node === 'object') {
      for (const [k, v] of Object.entries(node)) walk(v, path ? `${path}.${k}` : k);
    }
  };
  const s = (scenario ?? {}) as Record<string, unknown>;
  const kind = draftKind(scenario);
  walk(s.policy, 'policy');
  walk(s.body, 'body');
  if (kind === 'biped') walk(s.legs, 'legs');
  return kind === 'lateral' ? out.filter((p) => LATERAL_PARAMETERS.includes(p)) : out;
}

/** Numeric fields anywhere in a scenario (for the two axes of a stability scan). */
export function numericPaths(scenario: unknown): string[] {
  const out: string[] = [];
  const walk = (node: unknown, path: string) => {
    if (typeof node === 'number') out.push(path);
    else if (Array.isArray(node)) node.forEach((v, i) => walk(v, `${path}[${i}]`));
    else if (node !== null && typeof node === 'object') {
      for (const [k, v] of Object.entries(node)) walk(v, path ? `${path}.${k}` : k);
    }
  };
  walk(scenario, '');
  return out.filter((p) => !p.startsWith('integrator.') && p !== 'strides' && !p.endsWith('.seed'));
}

export { unitOfPath } from '../../core/figures/labels.js';
