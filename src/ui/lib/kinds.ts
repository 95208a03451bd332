// The model kinds the workbench edits and shows (src/core/models/kind.ts): which views and
// analyses each kind runs, the one-line reason when a view is not defined for it, and the draft a
// switch of kind starts from. A view that a kind does not run is shown disabled with its reason,
// never run as the single-leg model.

/** The workbench's views, by the name its tabs and state use. */
export type ViewName = 'map' | 'stride' | 'scan' | 'basin' | 'montecarlo' | 'optimize' | 'compare' | 'recover';

export type DraftKind = 'slip' | 'biped' | 'lateral';

export const MODEL_KIND_CHOICES: { value: DraftKind; label: string; title: string }[] = [
  { value: 'slip', label: 'Single leg (runs with flight phases)', title: 'model "slip" (or no "model"): one spring leg on a point mass' },
  { value: 'biped', label: 'Two legs (walks and runs)', title: 'model "biped": two spring legs on a point mass, walking with double support or running' },
  { value: 'lateral', label: 'Lateral leg spring (seen from above)', title: 'model "lateral": a rigid body in the horizontal plane on one spring leg at a time, left and right' },
];

export const KIND_NAMES: Record<DraftKind, string> = { slip: 'single-leg', biped: 'two-leg', lateral: 'lateral' };

/** The kind a draft asks for; an unknown "model" counts as single leg here (the validator says why it is wrong). */
export function draftKind(draft: unknown): DraftKind {
  const model = draft !== null && typeof draft === 'object' ? (draft as Record<string, unknown>).model : undefined;
  return model === 'biped' || model === 'lateral' ? model : 'slip';
}

/** The views each kind runs; the others are disabled with the reason below. */
const SUPPORTED: Record<DraftKind, readonly ViewName[]> = {
  slip: ['map', 'stride', 'scan', 'basin', 'montecarlo', 'optimize', 'compare'],
  biped: ['map', 'stride', 'scan', 'basin', 'montecarlo', 'optimize'],
  lateral: ['map', 'stride', 'scan', 'basin', 'recover', 'optimize'],
};

const VIEW_WORDS: Record<ViewName, string> = {
  map: 'the return map',
  stride: 'the stride view',
  scan: 'stability regions',
  basin: 'the basin',
  montecarlo: 'Monte Carlo on rough ground',
  optimize: 'the optimizer',
  compare: 'the comparison',
  recover: 'kick recovery',
};

/** null when `kind` runs `view`, else the one-line reason it is disabled. */
export function viewUnsupported(kind: DraftKind, view: ViewName): string | null {
  if (SUPPORTED[kind].includes(view)) return null;
  if (view === 'recover') return `${VIEW_WORDS[view]}: in the workbench for the lateral model only (pronk recover also kicks a single-leg runner)`;
  return `${VIEW_WORDS[view]}: not in the workbench for the ${KIND_NAMES[kind]} model yet (it runs ${SUPPORTED[kind].map((v) => VIEW_WORDS[v]).join(', ')} for it)`;
}

type Json = Record<string, unknown>;
const num = (value: unknown, fallback: number) => (typeof value === 'number' && Number.isFinite(value) ? value : fallback);
const obj = (value: unknown): Json => (value !== null && typeof value === 'object' && !Array.isArray(value) ? (value as Json) : {});

/** The fields a kind's draft has at the top level (a switch drops the others, after a question). */
const OWN_FIELDS: Record<DraftKind, readonly string[]> = {
  slip: ['name', 'description', 'body', 'start', 'policy', 'terrain', 'strides', 'integrator'],
  biped: ['model', 'name', 'description', 'body', 'legs', 'start', 'policy', 'terrain', 'strides', 'integrator'],
  lateral: ['model', 'name', 'description', 'body', 'start', 'policy', 'strides', 'integrator'],
};

/**
 * A draft of `kind` made from `draft`: the name, description, strides and integrator kept, the
 * body and leg carried over where the kinds share them (mass, leg length, stiffness), the start
 * and policy from the other kind's numbers where they mean the same, else a sensible start.
 */
export function draftOfKind(kind: DraftKind, draft: Json): Json {
  const body = obj(draft.body);
  const start = obj(draft.start);
  const policy = obj(draft.policy);
  const angle = obj(policy.angle);
  const shared: Json = {};
  for (const key of ['name', 'description', 'strides', 'integrator']) if (draft[key] !== undefined) shared[key] = structuredClone(draft[key]);
  const mass = num(body.mass_kg, 10);
  const length = num(body.leg_length_m, 1);
  const stiffness = num(body.leg_stiffness_N_per_m, 10000);
  const attack = num(angle.attack_deg, num(angle.attack_at_apex_deg, 68));
  if (kind === 'lateral') {
    const { relative_tolerance, absolute_tolerance, max_steps_per_stance } = obj(draft.integrator);
    const integrator = Object.fromEntries(Object.entries({ relative_tolerance, absolute_tolerance, max_steps_per_stance }).filter(([, v]) => v !== undefined));
    if (Object.keys(integrator).length) shared.integrator = integrator;
    else delete shared.integrator;
    return {
      model: 'lateral',
      ...shared,
      body: {
        mass_kg: mass,
        // a uniform slender body of the leg's length about its centre: m L^2 / 12
        moment_of_inertia_kg_m2: num(body.moment_of_inertia_kg_m2, Number(((mass * length * length) / 12).toPrecision(4))),
        leg_length_m: length,
        leg_stiffness_N_per_m: stiffness,
        attachment_offset_m: num(body.attachment_offset_m, Number((-0.15 * length).toPrecision(3))),
        attachment_rate_m_per_s: num(body.attachment_rate_m_per_s, 0),
      },
      start: {
        speed_m_per_s: num(start.speed_m_per_s, num(start.forward_speed_m_per_s, 1)),
        heading_to_body_deg: num(start.heading_to_body_deg, 10),
        angular_velocity_deg_per_s: num(start.angular_velocity_deg_per_s, 0),
      },
      policy: { angle: { kind: 'fixed', angle_to_body_deg: num(angle.angle_to_body_deg, 60) }, stiffness: { kind: 'constant' } },
    };
  }
  const sagittalBody: Json = { mass_kg: mass, leg_length_m: length, leg_stiffness_N_per_m: stiffness };
  for (const key of ['gravity_m_per_s2', 'leg_damping_N_s_per_m']) if (body[key] !== undefined) sagittalBody[key] = body[key];
  const sagittalPolicy = (angle.kind === 'fixed' && typeof angle.attack_deg === 'number') || angle.kind === 'retraction' || angle.kind === 'time_table'
    ? structuredClone(policy)
    : { angle: { kind: 'fixed', attack_deg: attack }, stiffness: { kind: 'constant' } };
  const terrain = draft.terrain !== undefined ? structuredClone(draft.terrain) : { kind: 'flat' };
  const speed = num(start.forward_speed_m_per_s, num(start.speed_m_per_s, 1));
  if (kind === 'biped') {
    return {
      model: 'biped',
      ...shared,
      body: sagittalBody,
      start: {
        gait: 'walking',
        apex_height_m: Number((0.985 * length).toPrecision(4)),
        forward_speed_m_per_s: Math.min(speed, Number(Math.sqrt(9.80665 * length).toPrecision(3))),
        offset_m: 0,
        leg: 'left',
      },
      policy: sagittalPolicy,
      terrain,
    };
  }
  return {
    ...shared,
    body: sagittalBody,
    start: { apex_height_m: num(start.apex_height_m, length), forward_speed_m_per_s: speed },
    policy: sagittalPolicy,
    terrain,
  };
}

/** The fields of `draft` a switch to `kind` loses (top level, and start/body fields by name), for the question. */
export function lostBySwitch(kind: DraftKind, draft: Json): string[] {
  const lost: string[] = [];
  for (const key of Object.keys(draft)) {
    if (key === '$schema') continue;
    if (!OWN_FIELDS[kind].includes(key)) lost.push(key);
  }
  const after = draftOfKind(kind, draft);
  for (const part of ['body', 'start', 'integrator']) {
    const before = obj(draft[part]);
    const next = obj(after[part]);
    for (const key of Object.keys(before)) if (!(key in next)) lost.push(`${part}.${key}`);
  }
  const beforeAngle = obj(obj(draft.policy).angle);
  const afterAngle = obj(obj(after.policy).angle);
  if (beforeAngle.kind !== undefined && JSON.stringify(beforeAngle) !== JSON.stringify(afterAngle)) lost.push('policy.angle');
  return lost;
}
