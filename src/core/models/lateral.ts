// The lateral leg-spring scenario ("model": "lateral"): a rigid body running in the horizontal
// plane on one spring leg at a time, left and right alternating with no aerial phase (Schmitt &
// Holmes 2000, Biol. Cybern. 83:501–515 and 517–527). Its schema, bounds and messages, and the
// scenario → kernel model block builder (layout LM_ / LI_ in assembly/layout.ts).
//
// Angles: the touchdown angle is the leg's angle to the body axis, the foot ahead of the
// attachment point and to the side (mirrored left and right). The start is a left touchdown:
// speed, heading of the velocity relative to the body axis (positive to the left, towards the
// left foot), angular velocity (positive counter-clockwise seen from above).

import { z } from 'zod';
import * as L from '../../../assembly/layout.js';
import { InputError } from '../errors.js';
import {
  BOUNDS,
  boundText,
  DEFAULT_ABSOLUTE_TOLERANCE,
  DEFAULT_MAX_STEPS_PER_STANCE,
  DEFAULT_RELATIVE_TOLERANCE,
  MAX_STRIDES,
  type PhysicalBound,
  schemaReference,
} from '../scenario.js';
import { validateWith, valueAt } from '../validation.js';

const DEG = Math.PI / 180;

// Bounds of the lateral fields, beside the shared mass, length and stiffness bounds. The moment of
// inertia spans a milligram body 0.1 mm long (m L^2 = 1e-14) to a thousand-tonne one 100 m long
// (1e10); the offset and its rate are bounded again by the leg length (below).
export const LATERAL_BOUNDS = {
  inertia_kg_m2: { low: 1e-15, high: 1e11, unit: 'kg m^2' },
  offset_m: { low: -100, high: 100, unit: 'm' },
  offset_rate_m_per_s: { low: -1e4, high: 1e4, unit: 'm/s' },
  speed_m_per_s: { low: 0, high: 1e3, unit: 'm/s', lowExclusive: true },
  heading_deg: { low: -90, high: 90, unit: 'deg', lowExclusive: true },
  angular_velocity_deg_per_s: { low: -1e5, high: 1e5, unit: 'deg/s' },
} as const satisfies Record<string, PhysicalBound>;

function rangeText(bound: PhysicalBound, what = 'a number'): string {
  if (!bound.lowExclusive) return boundText(bound, what);
  const open = bound.high === 90 ? ')' : ']';
  return `${what} in (${bound.low}, ${bound.high}${open} (${bound.unit})`;
}

const bounded = (bound: PhysicalBound, what?: string) => {
  const n = z.number({ error: rangeText(bound, what) });
  const low = bound.lowExclusive ? n.gt(bound.low) : n.gte(bound.low);
  return bound.lowExclusive && bound.high === 90 ? low.lt(bound.high) : low.lte(bound.high);
};

function strictObject<Shape extends z.ZodRawShape>(shape: Shape, expected: string) {
  return z.strictObject(shape, { error: (issue) => (issue.code === 'invalid_type' ? expected : undefined) });
}
const fields = (shape: z.ZodRawShape) => `an object with ${Object.keys(shape).join(', ')}`;

const TOUCHDOWN_EXPECTED = 'an angle in (0, 90] (deg from the body axis, the foot ahead)';
const touchdownAngleDeg = z.number({ error: TOUCHDOWN_EXPECTED }).gt(0).lte(90);

const bodyShape = {
  mass_kg: bounded(BOUNDS.mass_kg),
  moment_of_inertia_kg_m2: bounded(LATERAL_BOUNDS.inertia_kg_m2),
  leg_length_m: bounded(BOUNDS.leg_length_m),
  leg_stiffness_N_per_m: bounded(BOUNDS.stiffness_N_per_m),
  attachment_offset_m: bounded(LATERAL_BOUNDS.offset_m).default(0),
  attachment_rate_m_per_s: bounded(LATERAL_BOUNDS.offset_rate_m_per_s).default(0),
};
const startShape = {
  speed_m_per_s: bounded(LATERAL_BOUNDS.speed_m_per_s),
  heading_to_body_deg: bounded(LATERAL_BOUNDS.heading_deg),
  angular_velocity_deg_per_s: bounded(LATERAL_BOUNDS.angular_velocity_deg_per_s).default(0),
};

// The sagittal schedules run on time since the flight apex, which this model has not: only the
// kinds that mean something here are accepted, and the others are refused by name.
const UNSUPPORTED_ANGLE = 'kind fixed (the lateral model has no flight phase: retraction and time_table need one)';
const UNSUPPORTED_STIFFNESS = 'kind constant (the lateral model supports a constant leg stiffness only)';
const angleSchema = z
  .object({ kind: z.string({ error: 'kind fixed' }) }, { error: `an object with kind fixed` })
  .passthrough()
  .superRefine((angle, ctx) => {
    if (angle.kind !== 'fixed') {
      ctx.addIssue({ code: 'custom', path: ['kind'], message: UNSUPPORTED_ANGLE, input: angle.kind });
    }
  })
  .pipe(strictObject({ kind: z.literal('fixed'), angle_to_body_deg: touchdownAngleDeg }, 'an object with kind, angle_to_body_deg'));
const stiffnessSchema = z
  .object({ kind: z.string({ error: 'kind constant' }) }, { error: 'an object with kind constant' })
  .passthrough()
  .superRefine((s, ctx) => {
    if (s.kind !== 'constant') ctx.addIssue({ code: 'custom', path: ['kind'], message: UNSUPPORTED_STIFFNESS, input: s.kind });
  })
  .pipe(strictObject({ kind: z.literal('constant') }, 'an object with kind constant'))
  .default({ kind: 'constant' });
const policyShape = { angle: angleSchema, stiffness: stiffnessSchema };
/** The lateral policy alone (a result file's top-level policy of a lateral study). */
export const lateralPolicySchema = strictObject(policyShape, fields(policyShape));

const integratorShape = {
  relative_tolerance: z.number({ error: 'a number > 0 and < 0.1' }).gt(0).lt(0.1).default(DEFAULT_RELATIVE_TOLERANCE),
  absolute_tolerance: z.number({ error: 'a number > 0 and < 0.1' }).gt(0).lt(0.1).default(DEFAULT_ABSOLUTE_TOLERANCE),
  max_steps_per_stance: z
    .number({ error: 'an integer from 10 to 10000000' })
    .int()
    .gte(10)
    .lte(10_000_000)
    .default(DEFAULT_MAX_STEPS_PER_STANCE),
};

const lateralShape = {
  $schema: schemaReference,
  model: z.literal('lateral', { error: 'the string "lateral"' }),
  name: z.string({ error: 'a string' }).optional(),
  description: z.string({ error: 'a string' }).optional(),
  body: strictObject(bodyShape, fields(bodyShape)),
  start: strictObject(startShape, fields(startShape)),
  policy: strictObject(policyShape, fields(policyShape)),
  strides: z.number({ error: `an integer from 1 to ${MAX_STRIDES}` }).int().gte(1).lte(MAX_STRIDES),
  integrator: strictObject(integratorShape, fields(integratorShape)).prefault({}),
};

export const lateralScenarioSchema = strictObject(lateralShape, `a lateral scenario object with ${Object.keys(lateralShape).filter((k) => k !== '$schema').join(', ')}`).superRefine(
  checkOffsetWithinLeg,
  { when: () => true },
);

export type LateralScenario = Omit<z.output<typeof lateralScenarioSchema>, '$schema'>;

// The attachment point must stay within a leg length of the centre of mass over a stance, so the
// leg's line of action can pass near it; a point far outside is a different machine.
function checkOffsetWithinLeg(value: unknown, ctx: z.RefinementCtx): void {
  const leg = valueAt(value, ['body', 'leg_length_m']);
  const offset = valueAt(value, ['body', 'attachment_offset_m']);
  if (typeof leg !== 'number' || !Number.isFinite(leg) || leg <= 0) return;
  if (typeof offset === 'number' && Number.isFinite(offset) && Math.abs(offset) > leg) {
    ctx.addIssue({
      code: 'custom',
      path: ['body', 'attachment_offset_m'],
      message: `a number from ${-leg} to ${leg} (m; at most the leg length from the centre of mass)`,
      input: offset,
    });
  }
}

export function parseLateralScenario(value: unknown, options: { source?: string } = {}): LateralScenario {
  const result = validateWith(lateralScenarioSchema, value);
  if (!result.success) throw new InputError(result.issues, options);
  const { $schema: _reference, ...scenario } = result.data;
  return scenario;
}

/** The kernel's model block (LM_SIZE), SI and radians. */
export function buildLateralModel(s: LateralScenario): Float64Array {
  const m = new Float64Array(L.LM_SIZE);
  m[L.LM_MASS] = s.body.mass_kg;
  m[L.LM_INERTIA] = s.body.moment_of_inertia_kg_m2;
  m[L.LM_LEG_LENGTH] = s.body.leg_length_m;
  m[L.LM_STIFFNESS] = s.body.leg_stiffness_N_per_m;
  m[L.LM_OFFSET] = s.body.attachment_offset_m;
  m[L.LM_OFFSET_RATE] = s.body.attachment_rate_m_per_s;
  m[L.LM_ANGLE] = s.policy.angle.angle_to_body_deg * DEG;
  m[L.LM_RTOL] = s.integrator.relative_tolerance;
  m[L.LM_ATOL] = s.integrator.absolute_tolerance;
  m[L.LM_MAX_STEPS] = s.integrator.max_steps_per_stance;
  return m;
}

/** A state on the section (a left touchdown), SI and radians. */
export interface SectionState {
  speed: number; // m/s
  delta: number; // rad, velocity heading minus body angle
  omega: number; // rad/s
  heading: number; // rad, absolute velocity heading (neutral)
}

/** A kick: velocity change in the body frame and body-angle / angular-velocity change, at a time of a stride. */
export interface Kick {
  stride: number;
  time_s: number; // after that stride's left touchdown
  forward_m_per_s: number;
  left_m_per_s: number;
  angle_rad: number;
  rate_rad_per_s: number;
}

/** A rollout input row (LI_SIZE) from a section state (the body at the origin), with an optional kick. */
export function lateralInput(state: SectionState, kick?: Kick, model = 0): Float64Array {
  const v = new Float64Array(L.LI_SIZE);
  const theta = state.heading - state.delta;
  v[L.LI_THETA] = theta;
  v[L.LI_VX] = state.speed * Math.cos(state.heading);
  v[L.LI_VY] = state.speed * Math.sin(state.heading);
  v[L.LI_OMEGA] = state.omega;
  v[L.LI_KICK_STRIDE] = kick ? kick.stride : -1;
  if (kick) {
    v[L.LI_KICK_TIME] = kick.time_s;
    v[L.LI_KICK_FORWARD] = kick.forward_m_per_s;
    v[L.LI_KICK_LEFT] = kick.left_m_per_s;
    v[L.LI_KICK_ANGLE] = kick.angle_rad;
    v[L.LI_KICK_RATE] = kick.rate_rad_per_s;
  }
  v[L.LI_MODEL] = model;
  return v;
}

/** The scenario's own start on the section (heading 0: the x axis). */
export function lateralStart(s: LateralScenario): SectionState {
  return {
    speed: s.start.speed_m_per_s,
    delta: s.start.heading_to_body_deg * DEG,
    omega: s.start.angular_velocity_deg_per_s * DEG,
    heading: 0,
  };
}

/** Section state from a world state (theta, vx, vy, omega). */
export function sectionOf(theta: number, vx: number, vy: number, omega: number): SectionState {
  const heading = Math.atan2(vy, vx);
  return { speed: Math.hypot(vx, vy), delta: wrapAngle(heading - theta), omega, heading };
}

/** An angle in (-pi, pi]. */
export function wrapAngle(a: number): number {
  let x = a % (2 * Math.PI);
  if (x > Math.PI) x -= 2 * Math.PI;
  if (x <= -Math.PI) x += 2 * Math.PI;
  return x;
}

/** Kinetic energy on the section (the leg is at rest length at touchdown), J. */
export function sectionEnergy(s: LateralScenario, state: { speed: number; omega: number }): number {
  return 0.5 * s.body.mass_kg * state.speed ** 2 + 0.5 * s.body.moment_of_inertia_kg_m2 * state.omega ** 2;
}
