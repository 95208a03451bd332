// The two-leg model ("model": "biped"): a point mass on two massless spring legs (Geyer, Seyfarth &
// Blickhan 2006), walking (single and double support) or running (single support and flight).
// Its scenario fields, defaults and messages, the scenario -> model block builder, and the section
// state. The kernel side is assembly/biped.ts.
//
// Fields beyond the single-leg scenario:
//   "model": "biped"
//   "legs": {"left": LEG, "right": LEG}, both optional; LEG = {leg_length_m, stiffness_scale,
//       leg_damping_N_s_per_m}, each optional, defaulting to body.leg_length_m, 1 and
//       body.leg_damping_N_s_per_m: a leg's stiffness is the stiffness policy's times its scale,
//       so a machine with one weaker leg is "right": {"stiffness_scale": 0.8}.
//   "start": {gait, apex_height_m, forward_speed_m_per_s, offset_m, leg}:
//       gait "walking": the single-support apex (the body's highest point with one leg on the
//         ground), at apex_height_m with forward speed forward_speed_m_per_s, offset_m (default 0)
//         the body's horizontal position minus the stance foot's, leg (default "left") the stance
//         leg;
//       gait "running": the flight apex, leg the leg that lands first.
//
// Section state (what the return map, basins and the summaries are taken on): walking, at the
// single-support apex, (height, forward speed, offset, stance leg); running, at the flight apex,
// (height, forward speed, the leg that lands next). Vertical speed is zero on both sections.

import { z } from 'zod';
import * as L from '../../../assembly/layout.js';
import type { ModelBlock } from '../engine.js';
import { rolloutInput } from '../engine.js';
import { InputError } from '../errors.js';
import { validateWith, valueAt } from '../validation.js';
import {
  BOUNDS,
  MAX_STRIDES,
  bodySchema,
  bounded,
  checkDampingRatios,
  type DampedLeg,
  fieldList,
  firstTouchdownHeightM,
  integerIn,
  integratorSchema,
  policySchema,
  schemaReference,
  strictObject,
  terrainSchema,
  text,
  type Scenario,
} from '../scenario.js';

export type Gait = 'walking' | 'running';
export type LegName = 'left' | 'right';
export const LEG_NAMES: readonly LegName[] = ['left', 'right'];

export interface BipedLeg {
  leg_length_m?: number;
  stiffness_scale?: number;
  leg_damping_N_s_per_m?: number;
}
export interface BipedLegs {
  left?: BipedLeg;
  right?: BipedLeg;
}
/** The stance leg at a single-support apex; at a flight apex the leg that lands next, or both (a hop on both legs). */
export type StartLeg = LegName | 'both';

export interface BipedStartExtras {
  gait: Gait;
  offset_m: number;
  leg: StartLeg;
}

/** A validated two-leg scenario. */
export type BipedScenario = Scenario & { model: 'biped'; legs: BipedLegs; start: Scenario['start'] & BipedStartExtras };

export function isBiped(s: Scenario): s is BipedScenario {
  return s.model === 'biped';
}

/** Factor on a leg's stiffness schedule: 1e-3 to 1e3. */
export const STIFFNESS_SCALE_BOUND = { low: 1e-3, high: 1e3, unit: 'factor on the stiffness policy' } as const;

// Built on first use: the shared field schemas live in scenario.ts, which imports this module.
let schema: z.ZodType | undefined;
/** The two-leg scenario's zod schema (its JSON Schema fields are merged into the scenario's). */
export function bipedSchema(): z.ZodType {
  if (schema) return schema;
  const legShape = {
    leg_length_m: bounded(BOUNDS.leg_length_m).optional(),
    stiffness_scale: bounded(STIFFNESS_SCALE_BOUND).optional(),
    leg_damping_N_s_per_m: bounded(BOUNDS.damping_N_s_per_m).optional(),
  };
  const leg = strictObject(legShape, `an object with ${fieldList(legShape)} (each optional)`);
  const legsShape = { left: leg.optional(), right: leg.optional() };
  const startShape = {
    gait: z.enum(['walking', 'running'], { error: 'the gait "walking" (start at the single-support apex) or "running" (start at the flight apex)' }),
    apex_height_m: bounded(BOUNDS.height_m),
    forward_speed_m_per_s: bounded(BOUNDS.forward_speed_m_per_s),
    offset_m: bounded(BOUNDS.height_m, 'a horizontal offset').default(0),
    leg: z.enum(['left', 'right', 'both'], { error: 'the leg "left" or "right" ("both" for a running start: the legs land together)' }).default('left'),
  };
  const shape = {
    $schema: schemaReference,
    model: z.literal('biped'),
    name: text('a string').optional(),
    description: text('a string').optional(),
    body: bodySchema,
    legs: strictObject(legsShape, `an object with ${fieldList(legsShape)} (each optional)`).default({}),
    start: strictObject(startShape, `an object with ${fieldList(startShape)}`),
    policy: policySchema,
    terrain: terrainSchema,
    strides: integerIn(1, MAX_STRIDES),
    integrator: integratorSchema,
  };
  schema = strictObject(shape, `a two-leg scenario object with ${fieldList(shape)}`)
    .superRefine(checkStart, { when: () => true })
    .superRefine((value, ctx) => checkDampingRatios(value, ctx, dampedLegs(value)), { when: () => true });
  return schema;
}

// Each leg's damping (its own, or the body's it inherits) with its stiffness scale, for the
// damping-ratio bound (MAX_DAMPING_RATIO in scenario.ts).
function dampedLegs(value: unknown): DampedLeg[] {
  return (['left', 'right'] as const).map((name) => {
    const own = valueAt(value, ['legs', name, 'leg_damping_N_s_per_m']) !== undefined;
    const scale = numberAt(value, ['legs', name, 'stiffness_scale']);
    return {
      damping: own ? ['legs', name, 'leg_damping_N_s_per_m'] : ['body', 'leg_damping_N_s_per_m'],
      ...(scale === undefined ? {} : { scale: { path: `legs.${name}.stiffness_scale`, value: scale } }),
    };
  });
}

function numberAt(value: unknown, path: (string | number)[]): number | undefined {
  const v = valueAt(value, path);
  return typeof v === 'number' && Number.isFinite(v) ? v : undefined;
}

// The start must be a state of its section: walking, the stance leg no longer than its rest
// length at the single-support apex; running, the flight apex above the first touchdown height.
function checkStart(value: unknown, ctx: z.RefinementCtx): void {
  const gait = valueAt(value, ['start', 'gait']);
  const height = numberAt(value, ['start', 'apex_height_m']);
  const legName = valueAt(value, ['start', 'leg']) === 'right' ? 'right' : 'left';
  if (gait === 'walking' && valueAt(value, ['start', 'leg']) === 'both') {
    ctx.addIssue({
      code: 'custom',
      path: ['start', 'leg'],
      message: 'the stance leg "left" or "right" for a walking start (one leg on the ground at the single-support apex)',
      input: 'both',
    });
    return;
  }
  const bodyLength = numberAt(value, ['body', 'leg_length_m']);
  const length = numberAt(value, ['legs', legName, 'leg_length_m']) ?? bodyLength;
  if (height === undefined || length === undefined) return;
  if (gait === 'walking') {
    const offset = numberAt(value, ['start', 'offset_m']) ?? 0;
    const r = Math.hypot(height, offset);
    if (!(height > 0) || r > length) {
      ctx.addIssue({
        code: 'custom',
        path: ['start', 'apex_height_m'],
        message:
          `a single-support apex the ${legName} leg reaches: height > 0 with sqrt(height^2 + offset^2) <= its rest length ` +
          `${length} m (found height ${height} m, offset ${numberAt(value, ['start', 'offset_m']) ?? 0} m: leg length ${Number(r.toPrecision(6))} m)`,
        input: height,
      });
    }
  } else if (gait === 'running') {
    const angle = policySchema.safeParse(valueAt(value, ['policy'])).data?.angle;
    const terrain = terrainSchema.safeParse(valueAt(value, ['terrain'])).data;
    if (!angle || !terrain) return;
    const touchdown = firstTouchdownHeightM(length, angle, terrain);
    if (!(height > touchdown)) {
      ctx.addIssue({
        code: 'custom',
        path: ['start', 'apex_height_m'],
        message: `> ${Number(touchdown.toPrecision(12))} m (ground + ${legName} leg length * sin(attack at apex)) for a running start`,
        input: height,
      });
    }
  }
}

/** The two-leg scenario's zod schema (for the JSON Schemas of files that hold a scenario). */
export function bipedScenarioSchema(): z.ZodType {
  return bipedSchema();
}

export function parseBipedScenario(value: unknown, options: { source?: string } = {}): BipedScenario {
  const result = validateWith(bipedSchema(), value);
  if (!result.success) throw new InputError(result.issues, options);
  const { $schema: _reference, ...scenario } = result.data as Record<string, unknown>;
  return scenario as unknown as BipedScenario;
}

/** Rest length, stiffness factor and damping of each leg (left, right). */
export function legParameters(s: BipedScenario): { length_m: number; stiffness_scale: number; damping_N_s_per_m: number }[] {
  return LEG_NAMES.map((name) => {
    const leg = s.legs?.[name] ?? {};
    return {
      length_m: leg.leg_length_m ?? s.body.leg_length_m,
      stiffness_scale: leg.stiffness_scale ?? 1,
      damping_N_s_per_m: leg.leg_damping_N_s_per_m ?? s.body.leg_damping_N_s_per_m ?? 0,
    };
  });
}

/** The leg length an apex accuracy's tolerances scale with (accuracy.ts): the two-leg model's longer leg, else the body's. */
export function accuracyLegLengthM(s: Scenario): number {
  return isBiped(s) ? Math.max(...legParameters(s).map((l) => l.length_m)) : s.body.leg_length_m;
}

/** The legs are the same machine part (the one-stride map is then the same map every stride). */
export function legsIdentical(s: BipedScenario): boolean {
  const [a, b] = legParameters(s);
  return a.length_m === b.length_m && a.stiffness_scale === b.stiffness_scale && a.damping_N_s_per_m === b.damping_N_s_per_m;
}

/** Fill the two-leg fields of a model block the single-leg builder has filled. */
export function completeBipedBlock(s: BipedScenario, block: ModelBlock): ModelBlock {
  const f = block.fields;
  const [left, right] = legParameters(s);
  f[L.M_MODEL_KIND] = L.MODEL_BIPED;
  f[L.M_BIPED_LENGTH_0] = left.length_m;
  f[L.M_BIPED_LENGTH_1] = right.length_m;
  f[L.M_BIPED_STIFFNESS_SCALE_0] = left.stiffness_scale;
  f[L.M_BIPED_STIFFNESS_SCALE_1] = right.stiffness_scale;
  f[L.M_BIPED_DAMPING_0] = left.damping_N_s_per_m;
  f[L.M_BIPED_DAMPING_1] = right.damping_N_s_per_m;
  return block;
}

/** A section state of the two-leg model. */
export interface SectionState {
  gait: Gait;
  height_m: number;
  speed_m_per_s: number;
  /** Walking: body x minus stance foot x; running: 0. */
  offset_m: number;
  /** Walking: the stance leg; running: the leg that lands next (or both). */
  leg: StartLeg;
}

/** A rollout input row starting at a section state. */
export function sectionInput(state: SectionState, stream = 0, model = 0): Float64Array {
  const v = rolloutInput(state.height_m, state.speed_m_per_s, stream, model);
  v[L.I_SECTION_KIND] = state.gait === 'walking' ? L.SECTION_SINGLE_SUPPORT_APEX : L.SECTION_FLIGHT_APEX;
  v[L.I_SECTION_OFFSET] = state.gait === 'walking' ? state.offset_m : 0;
  v[L.I_SECTION_LEG] = state.leg === 'right' ? 1 : state.leg === 'both' ? 2 : 0;
  return v;
}

/** The scenario's start as a section state. */
export function startState(s: BipedScenario): SectionState {
  return {
    gait: s.start.gait,
    height_m: s.start.apex_height_m,
    speed_m_per_s: s.start.forward_speed_m_per_s,
    offset_m: s.start.gait === 'walking' ? s.start.offset_m : 0,
    leg: s.start.leg,
  };
}

/**
 * Mechanical energy at a section state on flat ground at height 0, J: m g y + m v^2 / 2, plus the
 * stance leg's spring energy k (L0 - r)^2 / 2 at a single-support apex (r = sqrt(y^2 + offset^2);
 * the stiffness is the stance leg's constant or extension stiffness there).
 */
export function sectionEnergy(s: BipedScenario, state: SectionState): number {
  const m = s.body.mass_kg;
  const g = s.body.gravity_m_per_s2;
  let e = m * g * state.height_m + 0.5 * m * state.speed_m_per_s ** 2;
  if (state.gait === 'walking') {
    const leg = legParameters(s)[state.leg === 'right' ? 1 : 0];
    const k = stanceStiffnessAtSection(s) * leg.stiffness_scale;
    const c = leg.length_m - Math.hypot(state.height_m, state.offset_m);
    e += 0.5 * k * c * c;
  }
  return e;
}

// The stiffness a stance leg has at the single-support apex (after its maximum compression).
function stanceStiffnessAtSection(s: Scenario): number {
  const k = s.policy.stiffness;
  if (k.kind === 'constant') return s.body.leg_stiffness_N_per_m;
  if (k.kind === 'split') return k.extension_N_per_m;
  return k.extension_N_per_m[0];
}

/** Forward speed at a section state of the given energy (NaN where the energy is too low). */
export function speedAtEnergy(s: BipedScenario, energy: number, state: Omit<SectionState, 'speed_m_per_s'>): number {
  const rest = sectionEnergy(s, { ...state, speed_m_per_s: 0 });
  const kinetic = energy - rest;
  return kinetic >= 0 ? Math.sqrt((2 * kinetic) / s.body.mass_kg) : Number.NaN;
}

export const GAIT_NAMES: Record<number, string> = { [L.GAIT_WALKING]: 'walking', [L.GAIT_RUNNING]: 'running', [L.GAIT_HOPPING]: 'hopping' };
