// The scenario file: its schema (field names and meanings: docs/contract.md), the validator
// that turns any JSON value into a checked, defaults-filled Scenario or an InputError listing every
// problem, and the file reader. Everything downstream (kernel, analyses, CLI, UI) runs unchecked on
// the Scenario this returns.

import { z } from 'zod';
import demo from '../../scenarios/demo.json' with { type: 'json' };
import { InputError, closestName, describeFound, formatPath, type InputIssue } from './errors.js';
import { validateWith, valueAt } from './validation.js';
import { finestApexAccuracyM, gaitLengthScaleM, tolerancesForScale } from './accuracy.js';
import { type ModelKind, modelKindOf, refuseModelKind } from './models/kind.js';
import { accuracyLegLengthM, parseBipedScenario, type BipedLegs, type BipedStartExtras } from './models/biped.js';

export const STANDARD_GRAVITY_M_PER_S2 = 9.80665; // CGPM 1901 conventional value, exact
export const DEFAULT_RELATIVE_TOLERANCE = 1e-10;
export const DEFAULT_ABSOLUTE_TOLERANCE = 1e-12;
export const DEFAULT_MAX_STEPS_PER_STANCE = 100_000;
export const MAX_STRIDES = 1_000_000;

// ---------------------------------------------------------------------------------------------
// Physical bounds. Wide enough for any legged machine from a milligram micro-robot to a
// thousand-tonne walker, on any body from a small asteroid to a star, and narrow enough that every
// derived quantity stays a finite, meaningful double: the energy m g y + m v²/2 (< 1e14 J), the
// spring's ω = sqrt(k/m) (<= 1e9 rad/s), the fall time to touchdown sqrt(2 h / g) (about 6e4 s
// across the whole 2e4 m of heights) and the speed bound E/(m g) of the return map (< 1e11 m).
// A subnormal gravity or a speed of 1e308 is refused here, naming the field, instead of turning
// into NaN or Infinity downstream. Each range is inclusive; the message gives it with the unit
// (DEVELOPERS.md lists them all).

export interface PhysicalBound {
  low: number;
  high: number;
  unit: string;
  /** The low end is excluded (a number > low). */
  lowExclusive?: boolean;
}

export const BOUNDS = {
  mass_kg: { low: 1e-6, high: 1e6, unit: 'kg' },
  leg_length_m: { low: 1e-4, high: 100, unit: 'm' },
  stiffness_N_per_m: { low: 1e-3, high: 1e12, unit: 'N/m' },
  gravity_m_per_s2: { low: 1e-5, high: 1e3, unit: 'm/s^2' },
  damping_N_s_per_m: { low: 0, high: 1e9, unit: 'N s/m' },
  height_m: { low: -1e4, high: 1e4, unit: 'm' },
  forward_speed_m_per_s: { low: 0, high: 1e3, unit: 'm/s' },
  rate_deg_per_s: { low: -1e5, high: 1e5, unit: 'deg/s' },
  time_since_apex_s: { low: 0, high: 1e6, unit: 's' },
  sigma_m: { low: 0, high: 1e3, unit: 'm' },
  apex_accuracy_m: { low: 1e-15, high: 1e3, unit: 'm' },
} as const satisfies Record<string, PhysicalBound>;

/** Most knots in a time table, and most entries in a list of ground heights. */
export const MAX_TABLE_KNOTS = 100_000;

/** `a number from 1e-6 to 1e6 (kg)`: the text of a bound, as a message shows it. */
export function boundText(bound: PhysicalBound, what = 'a number'): string {
  return `${what} from ${showNumber(bound.low)} to ${showNumber(bound.high)} (${bound.unit})`;
}

function showNumber(x: number): string {
  if (x !== 0 && (Math.abs(x) >= 1e4 || Math.abs(x) < 1e-2)) return x.toExponential().replace('e+', 'e');
  return String(x);
}

export const bounded = (bound: PhysicalBound, what?: string) => z.number({ error: boundText(bound, what) }).gte(bound.low).lte(bound.high);

// ---------------------------------------------------------------------------------------------
// Field schemas. Each carries its own "expected" text (with the unit), used for every way the
// field can be wrong: missing, wrong type, non-finite (zod's number rejects NaN and ±Infinity) or
// out of range.

export const integerIn = (low: number, high: number) =>
  z.number({ error: `an integer from ${low} to ${high}` }).int().gte(low).lte(high);
const tolerance = z.number({ error: 'a number > 0 and < 0.1' }).gt(0).lt(0.1);

// Attack angle from the horizontal at touchdown; 90 is a vertical leg.
const ANGLE_EXPECTED = 'an angle in (0, 90] (deg from the horizontal)';
const attackAngleDeg = z.number({ error: ANGLE_EXPECTED }).gt(0).lte(90);

export const text = (what: string) => z.string({ error: what });

// A strict object: an unknown key is an error (reported per key, with a "did you mean").
export function strictObject<Shape extends z.ZodRawShape>(shape: Shape, expected: string) {
  return z.strictObject(shape, { error: (issue) => (issue.code === 'invalid_type' ? expected : undefined) });
}

export function fieldList(shape: z.ZodRawShape): string {
  return Object.keys(shape).filter((name) => name !== '$schema').join(', ');
}

// Knot times of a time table: measured from the flight apex, >= 0, strictly increasing.
const knotTimes = z
  .array(bounded(BOUNDS.time_since_apex_s, 'a time'), {
    error: `a non-empty array of at most ${MAX_TABLE_KNOTS} ${boundText(BOUNDS.time_since_apex_s, 'times')}, strictly increasing`,
  })
  .min(1)
  .max(MAX_TABLE_KNOTS)
  .superRefine((times, ctx) => {
    for (let i = 1; i < times.length; i++) {
      if (!(times[i] > times[i - 1])) {
        ctx.addIssue({
          code: 'custom',
          path: [i],
          message: `a time > ${times[i - 1]} s (knot times must strictly increase)`,
          input: times[i],
        });
      }
    }
  });

const knotValues = (element: z.ZodNumber, what: string) =>
  z.array(element, { error: `a non-empty array of ${what}, one per knot` }).min(1).max(MAX_TABLE_KNOTS);

// Every value column of a table has one entry per knot time. Runs even when some entries are
// malformed, so a short column is reported alongside them.
function checkKnotCounts(columns: readonly string[]) {
  return (table: unknown, ctx: z.RefinementCtx) => {
    if (typeof table !== 'object' || table === null) return;
    const row = table as Record<string, unknown>;
    const times = row.time_since_apex_s;
    if (!Array.isArray(times)) return;
    for (const column of columns) {
      const values = row[column];
      if (Array.isArray(values) && values.length !== times.length) {
        ctx.addIssue({
          code: 'custom',
          path: [column],
          message: `${times.length} value${times.length === 1 ? '' : 's'}, one per time_since_apex_s knot`,
          params: { found: `${values.length} value${values.length === 1 ? '' : 's'}` },
          input: values,
        });
      }
    }
  };
}

const always = { when: () => true };

// ---------------------------------------------------------------------------------------------
// Body, start, policy, terrain, integrator.

const bodyShape = {
  mass_kg: bounded(BOUNDS.mass_kg),
  leg_length_m: bounded(BOUNDS.leg_length_m),
  leg_stiffness_N_per_m: bounded(BOUNDS.stiffness_N_per_m),
  gravity_m_per_s2: bounded(BOUNDS.gravity_m_per_s2).default(STANDARD_GRAVITY_M_PER_S2),
  leg_damping_N_s_per_m: bounded(BOUNDS.damping_N_s_per_m).default(0),
};
export const bodySchema = strictObject(bodyShape, `an object with ${fieldList(bodyShape)}`);

const startShape = {
  apex_height_m: bounded(BOUNDS.height_m),
  forward_speed_m_per_s: bounded(BOUNDS.forward_speed_m_per_s),
};
export const startSchema = strictObject(startShape, `an object with ${fieldList(startShape)}`);

const fixedAngle = strictObject({ kind: z.literal('fixed'), attack_deg: attackAngleDeg }, 'an object');

// attack(t) = attack_at_apex + rate·(t − t_apex), clamped to [min_deg, max_deg]; a positive rate
// steepens the leg (swing-leg retraction).
const retractionAngle = strictObject(
  {
    kind: z.literal('retraction'),
    attack_at_apex_deg: attackAngleDeg,
    rate_deg_per_s: bounded(BOUNDS.rate_deg_per_s),
    min_deg: attackAngleDeg.optional(),
    max_deg: attackAngleDeg.optional(),
  },
  'an object',
).superRefine((angle, ctx) => {
  const { min_deg: low, max_deg: high } = angle as { min_deg?: unknown; max_deg?: unknown };
  if (typeof low === 'number' && typeof high === 'number' && Number.isFinite(low) && Number.isFinite(high) && !(low < high)) {
    ctx.addIssue({ code: 'custom', path: ['max_deg'], message: `an angle > min_deg (${low} deg)`, input: high });
  }
}, always);

// Piecewise linear in the time since apex, held flat past the ends.
const tabulatedAngle = strictObject(
  {
    kind: z.literal('time_table'),
    time_since_apex_s: knotTimes,
    attack_deg: knotValues(attackAngleDeg, `angles in (0, 90] (deg)`),
  },
  'an object',
).superRefine(checkKnotCounts(['attack_deg']), always);

const ANGLE_KINDS = 'an object with kind fixed, retraction or time_table';
export const anglePolicySchema = z.discriminatedUnion('kind', [fixedAngle, retractionAngle, tabulatedAngle], {
  error: (issue) => ((issue.code as string) === 'invalid_type' ? ANGLE_KINDS : undefined),
});

const STIFFNESS_KINDS = 'an object with kind constant, split or time_table';
export const stiffnessPolicySchema = z
  .discriminatedUnion(
    'kind',
    [
      // body.leg_stiffness_N_per_m throughout the stance
      strictObject({ kind: z.literal('constant') }, 'an object'),
      // compression stiffness until maximum compression, extension stiffness after
      strictObject(
        { kind: z.literal('split'), compression_N_per_m: bounded(BOUNDS.stiffness_N_per_m), extension_N_per_m: bounded(BOUNDS.stiffness_N_per_m) },
        'an object',
      ),
      // indexed by the touchdown time measured from the apex
      strictObject(
        {
          kind: z.literal('time_table'),
          time_since_apex_s: knotTimes,
          compression_N_per_m: knotValues(bounded(BOUNDS.stiffness_N_per_m, 'a stiffness'), boundText(BOUNDS.stiffness_N_per_m, 'stiffnesses')),
          extension_N_per_m: knotValues(bounded(BOUNDS.stiffness_N_per_m, 'a stiffness'), boundText(BOUNDS.stiffness_N_per_m, 'stiffnesses')),
        },
        'an object',
      ).superRefine(checkKnotCounts(['compression_N_per_m', 'extension_N_per_m']), always),
    ],
    { error: (issue) => ((issue.code as string) === 'invalid_type' ? STIFFNESS_KINDS : undefined) },
  )
  .default({ kind: 'constant' });

const policyShape = { angle: anglePolicySchema, stiffness: stiffnessPolicySchema };
export const policySchema = strictObject(policyShape, `an object with ${fieldList(policyShape)}`);

const seed = integerIn(0, Number.MAX_SAFE_INTEGER);
const TERRAIN_KINDS = 'an object with kind flat, steps, random_walk or random_heights';
export const terrainSchema = z
  .discriminatedUnion(
    'kind',
    [
      strictObject({ kind: z.literal('flat') }, 'an object'),
      // ground height met at the touchdown of stride i; past the end the last value holds
      strictObject(
        {
          kind: z.literal('steps'),
          ground_heights_m: z
            .array(bounded(BOUNDS.height_m, 'a ground height'), {
              error: `a non-empty array of at most ${MAX_TABLE_KNOTS} ${boundText(BOUNDS.height_m, 'ground heights')}`,
            })
            .min(1)
            .max(MAX_TABLE_KNOTS),
        },
        'an object',
      ),
      // each touchdown's ground height is the previous one plus N(0, sigma), the first included
      strictObject({ kind: z.literal('random_walk'), sigma_m: bounded(BOUNDS.sigma_m), seed }, 'an object'),
      // each touchdown's ground height drawn independently from N(0, sigma)
      strictObject({ kind: z.literal('random_heights'), sigma_m: bounded(BOUNDS.sigma_m), seed }, 'an object'),
    ],
    { error: (issue) => ((issue.code as string) === 'invalid_type' ? TERRAIN_KINDS : undefined) },
  )
  .default({ kind: 'flat' });

const integratorShape = {
  relative_tolerance: tolerance.default(DEFAULT_RELATIVE_TOLERANCE),
  absolute_tolerance: tolerance.default(DEFAULT_ABSOLUTE_TOLERANCE),
  max_steps_per_stance: integerIn(10, 10_000_000).default(DEFAULT_MAX_STEPS_PER_STANCE),
  // optional: the apex height accuracy of one stride, m; the two tolerances then follow from it
  // and the gait (src/core/accuracy.ts) and the parsed scenario states them
  apex_accuracy_m: bounded(BOUNDS.apex_accuracy_m).optional(),
};
export const integratorSchema = strictObject(integratorShape, `an object with ${fieldList(integratorShape)}`).prefault({});

// "$schema": where an editor finds the file's JSON Schema (schemas/scenario.schema.json). It
// belongs to the file, not to the scenario: the validator accepts it and leaves it out.
export const schemaReference = text('a string (the JSON Schema this file follows, for editors)').optional();

const scenarioShape = {
  $schema: schemaReference,
  name: text('a string').optional(),
  description: text('a string').optional(),
  body: bodySchema,
  start: startSchema,
  policy: policySchema,
  terrain: terrainSchema,
  strides: integerIn(1, MAX_STRIDES),
  integrator: integratorSchema,
};

export const scenarioSchema = strictObject(
  scenarioShape,
  `a scenario object with ${fieldList(scenarioShape)}`,
)
  .superRefine(checkStartAboveTouchdown, always)
  .superRefine((value, ctx) => checkDampingRatios(value, ctx, [{ damping: ['body', 'leg_damping_N_s_per_m'] }]), always);

/**
 * A validated scenario. The single-leg model's scenario has no "model" (or "slip"); other kinds
 * (src/core/models/) add their fields here as optional ones, so every analysis keeps one type and
 * narrows by `model` (src/core/models/kind.ts).
 */
export type Scenario = Omit<z.output<typeof scenarioSchema>, '$schema'> & {
  model?: 'slip' | 'biped';
  legs?: BipedLegs;
  start: Partial<BipedStartExtras>;
};
export type Body = z.output<typeof bodySchema>;
export type Start = z.output<typeof startSchema>;
export type AnglePolicy = z.output<typeof anglePolicySchema>;
export type StiffnessPolicy = z.output<typeof stiffnessPolicySchema>;
export type Terrain = z.output<typeof terrainSchema>;
export type IntegratorSettings = z.output<typeof integratorSchema>;

// ---------------------------------------------------------------------------------------------
// Cross-field check: the first flight must reach touchdown, i.e. the start apex lies above the
// height where the leg at its apex attack angle touches the first ground.

// The attack angle the policy commands at the apex (t = 0 since apex).
export function attackAtApexDeg(angle: AnglePolicy): number {
  switch (angle.kind) {
    case 'fixed':
      return angle.attack_deg;
    case 'retraction': {
      const low = angle.min_deg ?? -Infinity;
      const high = angle.max_deg ?? Infinity;
      return Math.min(Math.max(angle.attack_at_apex_deg, low), high);
    }
    case 'time_table':
      // knot times are >= 0, so t = 0 is at or before the first knot, where the table holds flat
      return angle.attack_deg[0];
  }
}

// The ground height met at the first touchdown when it is known in advance (random terrains
// start from the starting ground level, 0).
export function firstGroundHeightM(terrain: Terrain): number {
  return terrain.kind === 'steps' ? terrain.ground_heights_m[0] : 0;
}

// Body height at which the first touchdown happens: ground + L0·sin(attack at apex).
export function firstTouchdownHeightM(legLengthM: number, angle: AnglePolicy, terrain: Terrain): number {
  const attack = (attackAtApexDeg(angle) * Math.PI) / 180;
  return firstGroundHeightM(terrain) + legLengthM * Math.sin(attack);
}

// Runs on the partly parsed value even when other fields failed, re-checking the few fields it
// needs, so this issue is reported together with the others.
function checkStartAboveTouchdown(value: unknown, ctx: z.RefinementCtx): void {
  const legLength = bodyShape.leg_length_m.safeParse(valueAt(value, ['body', 'leg_length_m']));
  const apexHeight = startShape.apex_height_m.safeParse(valueAt(value, ['start', 'apex_height_m']));
  const angle = anglePolicySchema.safeParse(valueAt(value, ['policy', 'angle']));
  const terrain = terrainSchema.safeParse(valueAt(value, ['terrain']));
  if (!legLength.success || !apexHeight.success || !angle.success || !terrain.success) return;
  const touchdownHeight = firstTouchdownHeightM(legLength.data, angle.data, terrain.data);
  if (apexHeight.data > touchdownHeight) return;
  ctx.addIssue({
    code: 'custom',
    path: ['start', 'apex_height_m'],
    message: `> ${showAbove(touchdownHeight, apexHeight.data)} m (ground + leg length * sin(attack at apex))`,
    input: apexHeight.data,
  });
}

// ---------------------------------------------------------------------------------------------
// Cross-field check: a leg's damping ratio c / (2 sqrt(k m)) at most MAX_DAMPING_RATIO.

/**
 * The largest damping ratio c / (2 sqrt(k m)) a leg may have. Past critical damping (1) the stance
 * has a fast mode of rate about 2 zeta omega beside the slow one, and the explicit stepper's steps per
 * stance grow in proportion to zeta (stiffness of the ODE). Measured on a 2-core machine, `pronk map`
 * of the demo (201 samples): 0.24 s undamped, 0.28 s at zeta 10, 0.50 s at 100, 1.35 s at 1000,
 * 5.3 s at 1e4, and 16 to 60 s at the old damping bound (zeta 1e5 and more, every stance at the step
 * limit). A leg at zeta 100 barely rebounds: it is a damper, not a spring leg, so nothing useful is lost.
 */
export const MAX_DAMPING_RATIO = 100;

/** The softest stiffness the stiffness policy can give a leg, and the field that sets it. */
function softestStiffness(value: unknown): { k: number; path: string } | undefined {
  const policy = stiffnessPolicySchema.safeParse(valueAt(value, ['policy', 'stiffness']));
  if (!policy.success) return undefined;
  const p = policy.data;
  if (p.kind === 'constant') {
    const k = bodyShape.leg_stiffness_N_per_m.safeParse(valueAt(value, ['body', 'leg_stiffness_N_per_m']));
    return k.success ? { k: k.data, path: 'body.leg_stiffness_N_per_m' } : undefined;
  }
  const columns =
    p.kind === 'split'
      ? ([['compression_N_per_m', [p.compression_N_per_m]], ['extension_N_per_m', [p.extension_N_per_m]]] as const)
      : ([['compression_N_per_m', p.compression_N_per_m], ['extension_N_per_m', p.extension_N_per_m]] as const);
  let best: { k: number; path: string } | undefined;
  for (const [name, values] of columns) {
    values.forEach((k, i) => {
      if (best === undefined || k < best.k) best = { k, path: `policy.stiffness.${name}${p.kind === 'split' ? '' : `[${i}]`}` };
    });
  }
  return best;
}

/** A leg to check: where its damping is (and, for a two-leg scenario, its stiffness scale). */
export interface DampedLeg {
  /** Path of the damping field that applies (the leg's own, or the body's it inherits). */
  damping: (string | number)[];
  /** Path and value of the leg's stiffness scale, when it has one. */
  scale?: { path: string; value: number };
}

/**
 * Refuses a damping whose ratio c / (2 sqrt(k m)) is above MAX_DAMPING_RATIO with the softest
 * stiffness the policy gives the leg (the largest ratio), naming the damping, the stiffness and
 * the mass, and the ratio found. One issue per damping field (its worst leg).
 */
export function checkDampingRatios(value: unknown, ctx: z.RefinementCtx, legs: readonly DampedLeg[]): void {
  const mass = bodyShape.mass_kg.safeParse(valueAt(value, ['body', 'mass_kg']));
  const softest = softestStiffness(value);
  if (!mass.success || softest === undefined) return;
  const worst = new Map<string, { ratio: number; leg: DampedLeg }>();
  for (const leg of legs) {
    const c = valueAt(value, leg.damping);
    if (typeof c !== 'number' || !(c >= BOUNDS.damping_N_s_per_m.low && c <= BOUNDS.damping_N_s_per_m.high)) continue;
    const k = softest.k * (leg.scale?.value ?? 1);
    const ratio = c / (2 * Math.sqrt(k * mass.data));
    const key = leg.damping.join('.');
    if (ratio > MAX_DAMPING_RATIO && ratio > (worst.get(key)?.ratio ?? 0)) worst.set(key, { ratio, leg });
  }
  for (const { ratio, leg } of worst.values()) {
    const k = softest.k * (leg.scale?.value ?? 1);
    const stiffness = leg.scale
      ? `${softest.path} = ${showNumber(softest.k)} N/m times ${leg.scale.path} = ${showNumber(leg.scale.value)}`
      : `${softest.path} = ${showNumber(softest.k)} N/m`;
    const cMax = Number((MAX_DAMPING_RATIO * 2 * Math.sqrt(k * mass.data)).toPrecision(6));
    ctx.addIssue({
      code: 'custom',
      path: leg.damping as PropertyKey[],
      message:
        `a damping ratio c / (2 sqrt(k m)) of at most ${MAX_DAMPING_RATIO} (a leg far past critical damping is not a spring leg, and its ` +
        `stances take steps in proportion to the ratio): at most ${showNumber(cMax)} N s/m with ${stiffness} and body.mass_kg = ` +
        `${showNumber(mass.data)} kg (the value found is a damping ratio of ${showNumber(Number(ratio.toPrecision(3)))})`,
      input: valueAt(value, leg.damping),
    });
  }
}

// `bound` rounded for display, with enough digits that it still reads as larger than `found`.
function showAbove(bound: number, found: number): string {
  for (let digits = 6; digits < 17; digits++) {
    const shown = Number(bound.toPrecision(digits));
    if (shown > found || shown === bound) return String(shown);
  }
  return String(bound);
}

// ---------------------------------------------------------------------------------------------
// Validation entry points.

// Checks any JSON value against the scenario schema; throws an InputError naming every problem.
export function parseScenario(
  value: unknown,
  options: { source?: string; command?: string; supported?: readonly ModelKind[] } = {},
): Scenario {
  const kind = modelKindOf(value, options.source);
  // the lateral model has its own scenario type (models/lateral.ts): refused here by name
  if (kind === 'lateral') refuseModelKind(options.command ?? 'this command', options.supported ?? ['slip', 'biped'], kind, options.source);
  if (kind === 'biped') {
    const biped = parseBipedScenario(value, options);
    if (biped.integrator.apex_accuracy_m !== undefined) applyApexAccuracy(biped, value, options);
    return biped;
  }
  if (kind === 'slip' && typeof value === 'object' && value !== null && 'model' in value) {
    const { model: _slip, ...rest } = value as Record<string, unknown>;
    value = rest; // "model": "slip" is the default, said out loud; the scenario is the same
  }
  const result = validateWith(scenarioSchema, value);
  if (!result.success) throw new InputError(result.issues, options);
  const { $schema: _reference, ...scenario } = result.data;
  if (scenario.integrator.apex_accuracy_m !== undefined) applyApexAccuracy(scenario, value, options);
  return scenario;
}

// integrator.apex_accuracy_m: the tolerances follow from it and the gait, written into the parsed
// scenario so that everything reading or echoing it uses and states them. Tolerances given beside it
// must be the ones it gives (a scenario echoed by a result file has them); others are refused.
function applyApexAccuracy(scenario: Scenario, value: unknown, options: { source?: string }): void {
  const accuracy = scenario.integrator.apex_accuracy_m as number;
  const { body, start } = scenario;
  const gravity = body.gravity_m_per_s2 ?? STANDARD_GRAVITY_M_PER_S2;
  const biped = scenario.model === 'biped';
  const leg = accuracyLegLengthM(scenario);
  const scale = gaitLengthScaleM(leg, start.forward_speed_m_per_s, start.apex_height_m, gravity);
  const tolerances = tolerancesForScale(accuracy, scale, leg);
  if (!tolerances) {
    const finest = finestApexAccuracyM(scale);
    throw new InputError(
      [
        {
          path: 'integrator.apex_accuracy_m',
          expected: `at least ${showNumber(finest)} m for ${biped ? 'these legs and this start' : 'this leg length and start'} (the finest apex accuracy the integrator reaches)`,
          found: describeFound(accuracy),
        },
      ],
      options,
    );
  }
  const issues: InputIssue[] = [];
  for (const field of ['relative_tolerance', 'absolute_tolerance'] as const) {
    const given = valueAt(value, ['integrator', field]);
    if (given !== undefined && given !== tolerances[field]) {
      issues.push({
        path: `integrator.${field}`,
        expected: `no value beside integrator.apex_accuracy_m (which gives ${tolerances[field]} here), or that value`,
        found: describeFound(given),
      });
    }
  }
  if (issues.length) throw new InputError(issues, options);
  scenario.integrator.relative_tolerance = tolerances.relative_tolerance;
  scenario.integrator.absolute_tolerance = tolerances.absolute_tolerance;
}

// The built-in demo scenario (scenarios/demo.json), validated like any other.
export function demoScenario(): Scenario {
  return parseScenario(demo, { source: 'scenarios/demo.json' });
}

// ---------------------------------------------------------------------------------------------
// Reading scenario files (Node only; fs is loaded on demand so the module also runs in a browser).

export async function readScenarioFile(path: string, options: { command?: string; supported?: readonly ModelKind[] } = {}): Promise<Scenario> {
  return parseScenario(await readScenarioValue(path), { source: path, ...options });
}

/** A scenario file's JSON value, unchecked (a file error or invalid JSON is an InputError). */
export async function readScenarioValue(path: string): Promise<unknown> {
  const { readInputFile } = await import('./input-file.js');
  return readInputFile(path, 'scenario file');
}

// JSON text: parseJson and its helpers live in json-text.ts (re-exported for the readers that
// import them from here).
export { MAX_JSON_DEPTH, locateJsonSyntaxError, parseJson } from './json-text.js';
