// The fuzz cases: a seeded generator of command lines and input files for every `pronk` command.
// Each case is a command line whose file arguments are names in the case's own folder (`@name`),
// the files written there first (scenario, study, result and partial files, valid or broken),
// optional setup command lines (a sharded run before a merge, a search before an export), and the
// names the case may write (its --out and --plot). Workloads stay small (a few strides, small
// grids, a few rollouts) so that a few hundred cases run in CI in well under three minutes;
// values are drawn to reach the edges: physically extreme but valid bodies, numbers at and past
// every bound, wrong types, missing and unknown fields, malformed JSON, odd paths.

import bipedRun from '../../scenarios/demo-biped-run.json' with { type: 'json' };
import bipedWalk from '../../scenarios/demo-biped.json' with { type: 'json' };

/** A small seeded generator (mulberry32; common practice for reproducible test data). */
export class Random {
  private state: number;
  constructor(seed: number) {
    this.state = seed >>> 0;
  }
  next(): number {
    this.state = (this.state + 0x6d2b79f5) >>> 0;
    let t = this.state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  }
  int(low: number, high: number): number {
    return low + Math.floor(this.next() * (high - low + 1));
  }
  chance(p: number): boolean {
    return this.next() < p;
  }
  pick<T>(items: readonly T[]): T {
    return items[Math.floor(this.next() * items.length)];
  }
  /** Uniform in [low, high]. */
  uniform(low: number, high: number): number {
    return low + (high - low) * this.next();
  }
  /** Log-uniform in [low, high] (both > 0): reaches every decade of a wide range. */
  logUniform(low: number, high: number): number {
    return Math.exp(Math.log(low) + (Math.log(high) - Math.log(low)) * this.next());
  }
}

export interface FuzzFile {
  name: string;
  /** The file's text; absent for a directory or a symbolic link. */
  text?: string;
  /** A symbolic link to this name (in the same folder; it may not exist). */
  linkTo?: string;
  directory?: boolean;
}

export interface FuzzCase {
  id: number;
  command: string;
  /** What was varied, for the report: 'valid', 'scenario: wrong type', 'option: --samples'. */
  variant: string;
  files: FuzzFile[];
  /** Command lines run first, in order (each judged like the case itself). */
  setup: string[][];
  args: string[];
  /** Names the setup and the case may create in the folder. */
  outputs: string[];
  /** A file the setup wrote, tampered with (tamper(seed, text)) before the case runs. */
  tamper?: { file: string; seed: number };
}

export const COMMANDS = ['simulate', 'map', 'scan', 'basin', 'stepdown', 'robustness', 'recover', 'optimize', 'deadbeat', 'export', 'merge'] as const;

// ---------------------------------------------------------------------------------------------
// Scenarios.

type Json = null | boolean | number | string | Json[] | { [key: string]: Json };

// The two-leg model's demo gaits (walking and running), slightly varied: every command must run
// them or refuse them by name.
function bipedScenario(random: Random): Record<string, Json> {
  const scenario = structuredClone(random.chance(0.5) ? bipedWalk : bipedRun) as Record<string, Json>;
  const angle = (scenario.policy as Record<string, Json>).angle as Record<string, Json>;
  if (typeof angle.attack_deg === 'number') angle.attack_deg += random.uniform(-0.5, 0.5);
  scenario.strides = random.int(1, 8);
  // an apex accuracy instead of tolerances, now and then one finer than the integrator reaches
  if (random.chance(0.25)) scenario.integrator = { apex_accuracy_m: random.pick([1e-3, 1e-8, 1e-11, 1e-14]) };
  return scenario;
}

// Bodies and gaits known to hop (Seyfarth et al. 2002's human-like body; the demo's invented
// monopod), scaled by dynamic similarity (common practice: lengths by s, times by √s, so speeds by
// √s and stiffness per mass by 1/s), which keeps the gait while reaching tiny and huge machines.
function gaitScenario(random: Random, command: string): Record<string, Json> {
  if (random.chance(0.12)) return bipedScenario(random);
  const base = random.pick([
    { mass: 80, leg: 1, k: 20000, apex: 1, speed: 5, attack: 68, retraction: { attack: 62, rate: 50 } },
    { mass: 9, leg: 0.45, k: 5000, apex: 0.45, speed: 3.35, attack: 66, retraction: { attack: 64, rate: 40 } },
  ]);
  const scale = random.chance(0.25) ? random.logUniform(1e-3, 50) : 1;
  const massScale = random.chance(0.25) ? random.logUniform(1e-5, 1e4) : 1;
  const gravityScale = random.chance(0.15) ? random.logUniform(1e-3, 50) : 1;
  const g = 9.81 * gravityScale;
  const mass = base.mass * massScale;
  // k/m scales with g/L to keep the dimensionless stiffness
  const k = (base.k / base.mass) * mass * gravityScale / scale;
  const speed = base.speed * Math.sqrt(scale * gravityScale);
  const body: Record<string, Json> = { mass_kg: mass, leg_length_m: base.leg * scale, leg_stiffness_N_per_m: k, gravity_m_per_s2: g };
  if (random.chance(0.15)) body.leg_damping_N_s_per_m = random.pick([0, 0.01, 1]) * Math.sqrt(k * mass);
  const angleKind = random.pick(['fixed', 'retraction', 'retraction', 'time_table']);
  let angle: Json;
  if (angleKind === 'fixed') angle = { kind: 'fixed', attack_deg: base.attack + random.uniform(-3, 3) };
  else if (angleKind === 'retraction') {
    angle = { kind: 'retraction', attack_at_apex_deg: base.retraction.attack, rate_deg_per_s: base.retraction.rate / Math.sqrt(scale / gravityScale) };
    if (random.chance(0.5)) angle.max_deg = random.pick([80, 85, 90]);
    if (random.chance(0.3)) angle.min_deg = random.pick([30, 50]);
    if (random.chance(0.1)) angle.rate_deg_per_s = random.pick([-1e5, 1e5, 0, 5000]); // fast schedules at the bound
  } else {
    const t = Math.sqrt(scale / gravityScale);
    angle = { kind: 'time_table', time_since_apex_s: [0, 0.1 * t, 0.2 * t, 0.4 * t], attack_deg: [70, 69, 67.5, 66] };
  }
  const stiffnessKind = random.pick(['constant', 'constant', 'split', 'time_table']);
  let stiffness: Json;
  if (stiffnessKind === 'constant') stiffness = { kind: 'constant' };
  else if (stiffnessKind === 'split') stiffness = { kind: 'split', compression_N_per_m: k, extension_N_per_m: k * random.uniform(0.95, 1.1) };
  else {
    const t = Math.sqrt(scale / gravityScale);
    stiffness = { kind: 'time_table', time_since_apex_s: [0, 0.2 * t, 0.4 * t], compression_N_per_m: [k, k * 1.02, k * 1.05], extension_N_per_m: [k, k * 1.03, k * 1.06] };
  }
  const terrainKind = random.pick(['flat', 'flat', 'steps', 'random_walk', 'random_heights']);
  let terrain: Json;
  if (terrainKind === 'flat') terrain = { kind: 'flat' };
  else if (terrainKind === 'steps') terrain = { kind: 'steps', ground_heights_m: [0, -0.02 * scale, 0.01 * scale, 0] };
  else terrain = { kind: terrainKind, sigma_m: random.pick([0, 0.005, 0.01, 1e3]) * scale, seed: random.pick([0, 1, 20261201, 9007199254740991]) };
  const scenario: Record<string, Json> = {
    body,
    start: { apex_height_m: base.apex * scale, forward_speed_m_per_s: speed },
    policy: { angle, stiffness },
    terrain,
    strides: random.int(1, 12),
  };
  // one field at an end of its accepted range (BOUNDS in src/core/scenario.ts): valid, but as far
  // from a hopping robot as the validator lets it be
  if (random.chance(0.15)) {
    const [section, field, low, high] = random.pick(EDGE_FIELDS);
    (scenario[section] as Record<string, Json>)[field] = random.chance(0.5) ? low : high;
  }
  // a start far above the leg (a long fall: the step-down search and the return map's range are bounded by the physics)
  if (random.chance(0.04)) (scenario.start as Record<string, Json>).apex_height_m = random.pick([100, 1e4]) * base.leg * scale;
  if (random.chance(0.5)) scenario.integrator = { relative_tolerance: random.pick([1e-8, 1e-10, 1e-6]), absolute_tolerance: random.pick([1e-10, 1e-12]) * scale };
  else if (random.chance(0.15)) scenario.integrator = { apex_accuracy_m: random.pick([1e-3, 1e-8, 1e-11, 1e-14]) * scale };
  if (random.chance(0.2)) scenario.name = random.pick(['Fennick-2 on the Orlov quarry ramp', 'ünïcode ☃ robot', '']);
  if (random.chance(0.05)) scenario.$schema = 'https://example.invalid/scenario.schema.json';
  return scenario;
}

// The scenario fields with a physical range, and its ends (BOUNDS in src/core/scenario.ts, README).
const EDGE_FIELDS: [string, string, number, number][] = [
  ['body', 'mass_kg', 1e-6, 1e6],
  ['body', 'leg_length_m', 1e-4, 100],
  ['body', 'leg_stiffness_N_per_m', 1e-3, 1e12],
  ['body', 'gravity_m_per_s2', 1e-5, 1e3],
  ['body', 'leg_damping_N_s_per_m', 0, 1e9],
  ['start', 'apex_height_m', -1e4, 1e4],
  ['start', 'forward_speed_m_per_s', 0, 1e3],
];

// Values past every kind of edge: the extremes of a double, zero and negative zero, tiny and huge,
// off-by-one integers.
const EXTREME_NUMBERS = [0, -0, -1, 1e308, -1e308, 5e-324, 1e-300, 2 ** 53 + 2, 1e15, 0.5, 91, 1e12 + 1];
const WRONG_TYPES: Json[] = ['12', true, null, [], {}, [1, 2], 'NaN', ''];

interface LeafPath {
  path: (string | number)[];
  value: Json;
}

function leaves(value: Json, path: (string | number)[] = [], out: LeafPath[] = []): LeafPath[] {
  if (Array.isArray(value)) value.forEach((item, i) => leaves(item, [...path, i], out));
  else if (value !== null && typeof value === 'object') for (const [key, item] of Object.entries(value)) leaves(item, [...path, key], out);
  else out.push({ path, value });
  return out;
}

function containers(value: Json, path: (string | number)[] = [], out: (string | number)[][] = []): (string | number)[][] {
  if (value !== null && typeof value === 'object') {
    out.push(path);
    if (Array.isArray(value)) value.forEach((item, i) => containers(item, [...path, i], out));
    else for (const [key, item] of Object.entries(value)) containers(item, [...path, key], out);
  }
  return out;
}

function at(root: Json, path: (string | number)[]): Json {
  let node: Json = root;
  for (const key of path) node = (node as Record<string | number, Json>)[key];
  return node;
}

/** A structural change of a JSON document (a copy); the variant names what changed. */
export function mutateJson(random: Random, document: Json): { value: Json; variant: string } {
  const value = structuredClone(document);
  const all = leaves(value);
  const kind = random.pick(['extreme number', 'wrong type', 'missing field', 'unknown field', 'extreme number', 'kind swapped']);
  if (kind === 'extreme number' || kind === 'wrong type') {
    const numeric = all.filter((leaf) => typeof leaf.value === 'number');
    const leaf = random.pick(numeric.length && kind === 'extreme number' ? numeric : all);
    if (!leaf || leaf.path.length === 0) return { value, variant: 'unchanged' };
    const parent = at(value, leaf.path.slice(0, -1)) as Record<string | number, Json>;
    parent[leaf.path[leaf.path.length - 1]] = kind === 'extreme number' ? random.pick(EXTREME_NUMBERS) : random.pick(WRONG_TYPES);
    return { value, variant: `${kind} at ${leaf.path.join('.')}` };
  }
  if (kind === 'missing field' || kind === 'unknown field') {
    const objects = containers(value).filter((path) => {
      const node = at(value, path);
      return node !== null && typeof node === 'object' && !Array.isArray(node);
    });
    const path = random.pick(objects);
    const node = at(value, path) as Record<string, Json>;
    const keys = Object.keys(node);
    if (kind === 'missing field' && keys.length) {
      const key = random.pick(keys);
      delete node[key];
      return { value, variant: `missing ${[...path, key].join('.')}` };
    }
    node[random.pick(['mass', 'strides_', 'atack_deg', 'extra'])] = 1;
    return { value, variant: `unknown field in ${path.join('.') || 'top level'}` };
  }
  const kinds = leaves(value).filter((leaf) => leaf.path[leaf.path.length - 1] === 'kind');
  if (!kinds.length) return { value, variant: 'unchanged' };
  const leaf = random.pick(kinds);
  const parent = at(value, leaf.path.slice(0, -1)) as Record<string, Json>;
  parent.kind = random.pick(['fixed', 'retraction', 'time_table', 'constant', 'split', 'flat', 'steps', 'random_walk', 'survival', 'basin', 'teleport']);
  return { value, variant: `kind swapped at ${leaf.path.join('.')}` };
}

/** The text of a JSON document, sometimes broken. */
export function jsonTextOf(random: Random, value: Json, broken: boolean): { text: string; variant: string } {
  const text = JSON.stringify(value, null, random.chance(0.5) ? 2 : undefined);
  if (!broken) return { text: random.chance(0.05) ? `\ufeff${text}` : text, variant: 'valid' };
  const kind = random.pick(['truncated', 'trailing comma', 'NaN literal', 'single quotes', 'empty', 'not an object', 'deep nesting', 'binary', 'duplicate key']);
  switch (kind) {
    case 'truncated':
      return { text: text.slice(0, random.int(0, Math.max(0, text.length - 1))), variant: 'malformed: truncated' };
    case 'trailing comma':
      return { text: text.replace(/}\s*$/, ',}'), variant: 'malformed: trailing comma' };
    case 'NaN literal':
      return { text: text.replace(/(-?\d+(\.\d+)?(e[+-]?\d+)?)/i, 'NaN'), variant: 'malformed: NaN literal' };
    case 'single quotes':
      return { text: text.replace(/"/g, "'"), variant: 'malformed: single quotes' };
    case 'empty':
      return { text: random.pick(['', ' \n', '\ufeff']), variant: 'malformed: empty' };
    case 'not an object':
      return { text: random.pick(['[]', '42', '"scenario"', 'null', 'true', '[{}]']), variant: 'not an object' };
    case 'deep nesting':
      return { text: `${'['.repeat(100_000)}${']'.repeat(random.chance(0.5) ? 100_000 : 0)}`, variant: 'malformed: deep nesting' };
    case 'binary':
      return { text: '\u0000\u0001\u00ff\ud800garbage', variant: 'malformed: binary' };
    default:
      return { text: text.replace(/^\{/, '{"strides": 3, "strides": 4, '), variant: 'duplicate key' };
  }
}

// ---------------------------------------------------------------------------------------------
// Options.

// An option's value pool: cheap valid values and values past its edges (never a valid value that
// makes the run long: those belong in a benchmark).
type OptionPool = { valid: string[]; bad: string[] };

const INTEGER_BAD = ['0', '-1', '1.5', 'abc', '', ' ', '1e3', '99999999999999999999', 'NaN', 'Infinity', '0x10', '--'];
const NUMBER_BAD = ['abc', '', 'NaN', 'Infinity', '-Infinity', '1e309', '--1', '1,5', '0x10', '1_000', ' 5'];

const POOLS: Record<string, OptionPool> = {
  strides: { valid: ['1', '3', '8'], bad: [...INTEGER_BAD, '1000001'] },
  'trace-interval': { valid: ['0.01', '0.05', '10'], bad: [...NUMBER_BAD, '0', '1e-6', '11', '-0.01'] },
  samples: { valid: ['2', '11', '21'], bad: [...INTEGER_BAD, '1', '100001', '1000000'] },
  iterations: { valid: ['0', '3'], bad: ['-1', 'x', '1e9', '1000001'] },
  heights: { valid: ['0.9:1.3:3', '1:1:1', '0.4:0.6:2'], bad: ['1:0.9:3', '1:2', '1:2:0', 'a:b:3', '1:2:1', '1:1:2', '0:1e308:2', '1:2:1000001', '1:2:2.5', ':::'] },
  speeds: { valid: ['3:5:2', '4:4:1', '2.5:4:3'], bad: ['-1:2:2', '5:3:2', '1:2:-2', 'x', '0:1e400:2'] },
  tolerance: { valid: ['1e-4', '1e-3'], bad: [...NUMBER_BAD, '0', '-1', '1e-300'] },
  x: {
    valid: ['policy.angle.attack_at_apex_deg:60:66:2', 'policy.angle.attack_deg:60:70:3', 'start.forward_speed_m_per_s:3:5:2', 'body.mass_kg:10:20:2'],
    bad: ['policy.angle.bogus:1:2:2', 'body.mass_kg:2:1:2', 'body.mass_kg:1:2:0', 'nonsense', 'start.apex_height_m:1:2:1000001', 'body.mass_kg:-5:1e300:2', 'body:1:2:2', 'strides:1:2:2'],
  },
  y: {
    valid: ['policy.angle.rate_deg_per_s:20:60:2', 'body.leg_stiffness_N_per_m:15000:25000:2', 'start.apex_height_m:0.9:1.1:2'],
    bad: ['policy.angle.rate_deg_per_s', 'x:1:2:2', 'body.gravity_m_per_s2:0:1:2', 'body.leg_stiffness_N_per_m:1:2:1.5'],
  },
  workers: { valid: ['1', '2', '1024'], bad: ['0', '-2', '1025', 'all', '2.5'] },
  shard: { valid: ['1/2', '2/2', '1/1', '3/4'], bad: ['0/2', '3/2', '1/0', '1/1000000000000', '1', 'a/b', '-1/2', '1/99999999999999999999'] },
  after: { valid: ['2', '5'], bad: [...INTEGER_BAD, '1001', '999999'] },
  resolution: { valid: ['0.01', '0.02'], bad: [...NUMBER_BAD, '0', '-0.01', '5e-324'] },
  grid: { valid: ['0.05', '0.1'], bad: [...NUMBER_BAD, '0', '-1', '1e-300'] },
  'settle-strides': { valid: ['2', '4'], bad: ['1', '0', 'x', '100001', '1000001'] },
  'settle-band': { valid: ['0.001', '0.01'], bad: ['0', '-1', 'x', 'Infinity'] },
  sigma: { valid: ['0', '0.005', '0.01', '1000'], bad: [...NUMBER_BAD, '-0.01', '1e308'] },
  rollouts: { valid: ['1', '4', '9'], bad: [...INTEGER_BAD, '10000001'] },
  seed: { valid: ['0', '7', '9007199254740991'], bad: ['-1', '9007199254740992', 'x', '1.5', '1e20'] },
  terrain: { valid: ['random_walk', 'random_heights'], bad: ['flat', 'steps', '', 'RANDOM_WALK'] },
  'target-height': { valid: ['1', '0.45', '-3'], bad: NUMBER_BAD },
  'target-speed': { valid: ['5', '0'], bad: NUMBER_BAD },
  ground: { valid: ['-0.02:0.01', '-0.05:0.02', '0:0.01', '-1e4:1e4'], bad: ['0.01:-0.02', 'x', '-1e308:1e308', '1:1', '-100:100', ':'] },
  mode: { valid: ['angle', 'angle_and_stiffness'], bad: ['stiffness', '', 'ANGLE'] },
  target: { valid: ['absolute', 'above_ground_met'], bad: ['relative', ''] },
  knots: { valid: ['2', '3', '5'], bad: ['1', '0', 'x', '1e9', '100000000'] },
  'attack-range': { valid: ['40:85', '50:80'], bad: ['0:90', '80:40', '10:91', 'x:y', '-5:5'] },
  'rate-range': { valid: ['0:100', '-50:50'], bad: ['100:0', 'x', '1e400:1e401'] },
  'strides-after': { valid: ['3', '4', '6'], bad: [...INTEGER_BAD, '1000001'] },
  'kick-forward': { valid: ['0.1', '-0.2', '0.05'], bad: [...NUMBER_BAD, '1e308'] },
  'kick-up': { valid: ['0', '0.05', '-0.05'], bad: [...NUMBER_BAD, '-1e308'] },
  'kick-stride': { valid: ['0', '1', '2'], bad: ['-1', 'x', '1.5', '1000001'] },
  'kick-at': { valid: ['0.2', '0.5', '0.9'], bad: ['-0.1', '1.5', 'x', 'NaN'] },
  'speed-tol': { valid: ['0.01', '0.1'], bad: ['0', '-1', 'x', '1e308'] },
  'height-tol': { valid: ['0.001', '0.01'], bad: ['0', '-1', 'x', 'Infinity'] },
  format: { valid: ['c', 'json', 'csv'], bad: ['C', 'yaml', ''] },
  points: { valid: ['2', '17', '33'], bad: ['1', '0', 'x', '100000000000'] },
  'max-error': { valid: ['0.01', '0.5'], bad: ['0', '-1', 'x', '1e-300'] },
  'max-stiffness-error': { valid: ['100', '10'], bad: ['0', '-5', 'x'] },
  't-max': { valid: ['0.5', '1'], bad: ['0', '-1', '1e9', 'x', '1e-12'] },
  prefix: { valid: ['robot', 'tamarack_9', 'p'], bad: ['9robot', 'a-b', '', 'int', 'x'.repeat(200)] },
};

/** `--name value` or a broken form of it. */
function option(random: Random, name: string, bad: boolean): string[] {
  const pool = POOLS[name];
  if (!bad || !pool) return pool ? [`--${name}=${random.pick(pool.valid)}`] : [`--${name}`];
  const value = random.pick(pool.bad);
  if (random.chance(0.1)) return [`--${name}`]; // the value missing
  return [`--${name}=${value}`];
}

// ---------------------------------------------------------------------------------------------
// Studies and results.

function smallStudy(random: Random, scenarioFile: string | null, scenario: Record<string, Json>): Record<string, Json> {
  const angle = (scenario.policy as Record<string, Json>).angle as Record<string, Json>;
  const path = angle.kind === 'fixed' ? 'policy.angle.attack_deg' : angle.kind === 'retraction' ? 'policy.angle.attack_at_apex_deg' : 'policy.angle.attack_deg[0]';
  const termKind = random.pick(['survival', 'tracking', 'survival', 'basin', 'step_down']);
  let term: Record<string, Json>;
  if (termKind === 'survival') term = { kind: 'survival', terrain: 'random_walk', sigma_m: 0.01, rollouts: random.int(1, 6), strides: random.int(1, 6) };
  else if (termKind === 'tracking') {
    term = { kind: 'tracking', terrain: 'random_heights', sigma_m: 0.005, rollouts: random.int(1, 4), strides: 4, height_scale_m: 0.01, speed_scale_m_per_s: 0.1 };
  } else if (termKind === 'basin') term = { kind: 'basin', mode: 'grid', heights: { low_m: 0.9, high_m: 1.1, count: 2 }, speeds: { low_m_per_s: 4, high_m_per_s: 5, count: 2 }, strides: 4 };
  else term = { kind: 'step_down', strides_after: 4, resolution_m: 0.02, grid_m: 0.1 };
  const study: Record<string, Json> = {
    free_parameters: [{ path, lower: 58, upper: 72 }],
    objective: { terms: [term] },
    search: { method: random.pick(['COBYLA', 'COBYLA', 'BOBYQA', 'NELDER_MEAD', 'SUBPLEX', 'CRS2_LM', 'ISRES', 'PRAXIS']), max_evaluations: random.int(3, 8), restarts: random.int(1, 2) },
    seed: random.int(0, 100),
    holdout: { seed: 1000 + random.int(0, 100), rollouts: random.int(1, 6) },
  };
  if (random.chance(0.5)) study.constraints = { max_leg_force_N: random.pick([900, 1e6, 1]), friction_coefficient: 0.8 };
  if (random.chance(0.2)) study.model_mismatch = { distribution: random.pick(['uniform', 'normal']), mass_fraction: 0.05, leg_stiffness_fraction: 0.1, leg_length_fraction: 0.01 };
  if (scenarioFile === null) study.scenario = scenario;
  else study.scenario_file = scenarioFile;
  return study;
}

// ---------------------------------------------------------------------------------------------
// Cases.

/** How often each command is drawn: the costly ones (threads, searches) less often. */
const WEIGHTS: Record<(typeof COMMANDS)[number], number> = {
  simulate: 14,
  map: 12,
  scan: 9,
  basin: 10,
  stepdown: 7,
  robustness: 10,
  recover: 7,
  optimize: 5,
  deadbeat: 7,
  export: 10,
  merge: 9,
};

function pickCommand(random: Random): (typeof COMMANDS)[number] {
  const total = Object.values(WEIGHTS).reduce((a, b) => a + b, 0);
  let r = random.next() * total;
  for (const command of COMMANDS) {
    r -= WEIGHTS[command];
    if (r < 0) return command;
  }
  return 'simulate';
}

/** Each command's options: which it takes, which a valid run needs. */
const COMMAND_OPTIONS: Record<string, { required: string[]; optional: string[] }> = {
  simulate: { required: [], optional: ['strides', 'trace-interval'] },
  map: { required: [], optional: ['samples', 'iterations'] },
  scan: { required: ['x', 'y', 'samples'], optional: ['workers'] },
  basin: { required: ['heights', 'speeds', 'strides'], optional: ['tolerance', 'workers'] },
  stepdown: { required: ['grid', 'resolution', 'after'], optional: ['settle-strides', 'settle-band'] },
  robustness: { required: ['sigma', 'rollouts', 'strides'], optional: ['seed', 'terrain', 'target-height', 'target-speed', 'workers'] },
  recover: { required: ['strides-after', 'kick-forward'], optional: ['kick-up', 'kick-stride', 'kick-at', 'speed-tol', 'height-tol'] },
  deadbeat: { required: ['ground', 'knots'], optional: ['mode', 'target', 'tolerance', 'attack-range', 'after'] },
  export: { required: ['format'], optional: ['points', 'max-error', 'max-stiffness-error', 't-max', 'prefix'] },
};

// Where the case's main input lives: an ordinary name, or an odd one reaching the same file.
function oddPath(random: Random, files: FuzzFile[], name: string): { arg: string; variant: string } {
  const kind = random.chance(0.7) ? 'plain' : random.pick(['symlink', 'symlink', 'spaces', 'spaces', 'dangling', 'directory', 'missing', 'loop']);
  switch (kind) {
    case 'symlink':
      files.push({ name: 'link to input.json', linkTo: name });
      return { arg: '@link to input.json', variant: 'path: symbolic link' };
    case 'spaces': {
      const file = files.find((f) => f.name === name);
      files.push({ name: 'ünï côde – input.json', text: file?.text ?? '' });
      return { arg: '@ünï côde – input.json', variant: 'path: spaces and unicode' };
    }
    case 'dangling':
      files.push({ name: 'dangling.json', linkTo: 'nowhere.json' });
      return { arg: '@dangling.json', variant: 'path: dangling link' };
    case 'directory':
      files.push({ name: 'folder.json', directory: true });
      return { arg: '@folder.json', variant: 'path: a directory' };
    case 'missing':
      return { arg: '@missing.json', variant: 'path: missing file' };
    case 'loop':
      files.push({ name: 'loop-a.json', linkTo: 'loop-b.json' }, { name: 'loop-b.json', linkTo: 'loop-a.json' });
      return { arg: '@loop-a.json', variant: 'path: loop of links' };
    default:
      return { arg: `@${name}`, variant: '' };
  }
}

// A scenario file, valid or not: returns the variant.
function scenarioFile(random: Random, files: FuzzFile[], name: string, scenario: Record<string, Json>, breakChance: number): string {
  let value: Json = scenario;
  let variant = 'valid scenario';
  const roll = random.next();
  if (roll < breakChance * 0.6) {
    const mutated = mutateJson(random, scenario);
    value = mutated.value;
    variant = `scenario: ${mutated.variant}`;
  }
  const broken = roll >= breakChance * 0.6 && roll < breakChance;
  const text = jsonTextOf(random, value, broken);
  files.push({ name, text: text.text });
  return broken ? `scenario: ${text.variant}` : variant;
}

/** The case of number `id` from `seed`: the same pair always gives the same case. */
export function generateCase(seed: number, id: number): FuzzCase {
  const random = new Random((seed * 0x9e3779b1) ^ (id * 0x85ebca77));
  const command = pickCommand(random);
  const files: FuzzFile[] = [];
  const setup: string[][] = [];
  const outputs: string[] = [];
  const variants: string[] = [];
  const scenario = gaitScenario(random, command);
  if (command === 'recover' && scenario.model === undefined && random.chance(0.8)) {
    // a single leg recovers on a conservative leg at a fixed attack angle: mostly those
    const policy = scenario.policy as Record<string, Json>;
    const angle = policy.angle as Record<string, Json>;
    policy.angle = { kind: 'fixed', attack_deg: angle.kind === 'fixed' ? angle.attack_deg : 68 };
    policy.stiffness = { kind: 'constant' };
    delete (scenario.body as Record<string, Json>).leg_damping_N_s_per_m;
  }
  // half the cases break one thing, so both outcomes are reached
  const breakInput = random.chance(0.22);
  const breakOption = !breakInput && random.chance(0.25);
  const args: string[] = [command];

  if (command === 'optimize') {
    const inlineScenario = random.chance(0.5);
    if (!inlineScenario) files.push({ name: 'robot.json', text: JSON.stringify(scenario) });
    const study = smallStudy(random, inlineScenario ? null : 'robot.json', scenario);
    let value: Json = study;
    let variant = 'valid study';
    if (breakInput && random.chance(0.7)) {
      const mutated = mutateJson(random, study);
      value = mutated.value;
      variant = `study: ${mutated.variant}`;
    }
    const text = jsonTextOf(random, value, breakInput && variant === 'valid study');
    files.push({ name: 'study.json', text: text.text });
    variants.push(text.variant === 'valid' ? variant : `study: ${text.variant}`);
    args.push('@study.json', '--workers=1');
    if (random.chance(0.6)) {
      args.push('--out=@result.json');
      outputs.push('result.json');
    }
    if (random.chance(0.5)) args.push('--json');
    if (breakOption) {
      args.push(...option(random, 'workers', true));
      variants.push('option: --workers');
    }
    return { id, command, variant: variants.join('; '), files, setup, args, outputs };
  }

  if (command === 'merge') {
    // a sharded run first (valid), then the partials merged, one perhaps tampered with
    files.push({ name: 'robot.json', text: JSON.stringify({ ...scenario, strides: Math.min(Number(scenario.strides), 6) }) });
    const source = random.pick(['basin', 'scan', 'robustness']);
    const count = random.int(1, 3);
    const base: string[] =
      source === 'basin'
        ? ['basin', '@robot.json', '--heights=0.9:1.2:2', '--speeds=3:5:2', '--strides=4', '--workers=1']
        : source === 'scan'
          ? ['scan', '@robot.json', `--x=${scenarioAxis(scenario)}`, '--y=start.forward_speed_m_per_s:3:5:2', '--samples=11', '--workers=1']
          : ['robustness', '@robot.json', '--sigma=0.01', '--rollouts=6', '--strides=4', '--workers=1'];
    const parts: string[] = [];
    for (let i = 1; i <= count; i++) {
      setup.push([...base, `--shard=${i}/${count}`, `--out=@part-${i}.json`]);
      outputs.push(`part-${i}.json`);
      parts.push(`@part-${i}.json`);
    }
    let variant = `valid ${source} partials`;
    let tampering: FuzzCase['tamper'];
    if (breakInput) {
      // the tampering is applied by the runner after the setup (it needs the files written)
      variant = `tampered ${source} partial`;
      tampering = { file: 'part-1.json', seed: random.int(0, 1_000_000) };
    } else if (random.chance(0.15)) {
      parts.pop();
      variant = parts.length ? `${source} partials, one missing` : 'no partials';
    } else if (random.chance(0.1)) {
      parts.push(parts[0]);
      variant = `${source} partials, one twice`;
    }
    args.push(...parts);
    if (random.chance(0.5)) args.push('--json');
    if (random.chance(0.3)) {
      args.push('--out=@merged.txt');
      outputs.push('merged.txt');
    }
    if (random.chance(0.15)) {
      args.push('--plot=@merged.svg');
      outputs.push('merged.svg');
    }
    if (breakOption) {
      args.push(random.pick(['--bogus', '--out', '--plot=@figure.png', '--json=1']));
      variant += '; option: broken';
    }
    return { id, command, variant, files, setup, args, outputs, tamper: tampering };
  }

  if (command === 'export') {
    const fromResult = random.chance(0.5);
    let tampering: FuzzCase['tamper'];
    let inputName = 'robot.json';
    let variant: string;
    if (fromResult) {
      // a result file made by deadbeat (quick), then exported
      files.push({ name: 'robot.json', text: JSON.stringify(scenario) });
      setup.push(['deadbeat', '@robot.json', '--ground=-0.02:0.01', '--knots=3', '--out=@result.json']);
      outputs.push('result.json');
      inputName = 'result.json';
      variant = breakInput ? 'tampered result file' : 'result file';
      if (breakInput) tampering = { file: 'result.json', seed: random.int(0, 1_000_000) };
    } else variant = scenarioFile(random, files, 'robot.json', scenario, breakInput ? 1 : 0);
    const path = oddPath(random, files, inputName);
    args.push(path.arg);
    if (path.variant) variant += `; ${path.variant}`;
    const format = random.pick(['c', 'json', 'csv']);
    const out = format === 'c' ? 'policy.h' : format === 'json' ? 'policy.json' : 'policy.csv';
    args.push(`--format=${format}`, `--out=@${out}`);
    outputs.push(out, ...(format === 'c' ? ['policy.c'] : []));
    const sampling = random.pick(['default', 'points', 'max-error']);
    if (sampling !== 'default') {
      args.push(...option(random, sampling, false));
      if (sampling === 'max-error' && random.chance(0.4)) args.push(...option(random, 'max-stiffness-error', false));
      if (random.chance(0.3)) args.push('--uniform');
    }
    if (random.chance(0.25)) args.push(...option(random, 't-max', false));
    if (format === 'c' && random.chance(0.3)) args.push(...option(random, 'prefix', false));
    if (random.chance(0.2)) args.push('--force');
    if (random.chance(0.5)) args.push('--json');
    if (breakOption) {
      const name = random.pick([...COMMAND_OPTIONS.export.required, ...COMMAND_OPTIONS.export.optional]);
      args.push(...option(random, name, true));
      variant += `; option: --${name}`;
    }
    return { id, command, variant, files, setup, args, outputs, tamper: tampering };
  }

  // the scenario commands
  const variant = scenarioFile(random, files, 'robot.json', scenario, breakInput ? 1 : 0);
  variants.push(variant);
  if (random.chance(0.05) && !breakInput) {
    variants.push('the demo scenario');
  } else {
    const path = oddPath(random, files, 'robot.json');
    args.push(path.arg);
    if (path.variant) variants.push(path.variant);
  }
  const spec = COMMAND_OPTIONS[command];
  for (const name of spec.required) {
    let values = option(random, name, false);
    if (command === 'scan' && name === 'x') values = [`--x=${scenarioAxis(scenario)}`];
    if (command === 'stepdown' && (name === 'grid' || name === 'resolution')) {
      // both relative to the leg (the command's own ranges): a coarse search keeps the case cheap
      const leg = Number((scenario.body as Record<string, Json>).leg_length_m);
      values = [`--${name}=${leg * (name === 'grid' ? random.pick([0.05, 0.1]) : random.pick([0.01, 0.02]))}`];
    }
    if (command === 'scan' && name === 'y') values = [`--y=${random.pick(['body.leg_stiffness_N_per_m:15000:25000:2', 'start.apex_height_m:0.9:1.1:2', 'start.forward_speed_m_per_s:3:5:2', 'body.mass_kg:50:90:2'])}`];
    args.push(...values);
  }
  for (const name of spec.optional) if (random.chance(0.3)) args.push(...option(random, name, false));
  if (command === 'deadbeat' && random.chance(0.2)) args.push('--compare', '--rollouts=4', '--sigma=0.005', '--rate-range=0:100', '--workers=1');
  if ((command === 'basin' || command === 'scan' || command === 'robustness' || (command === 'recover' && args.some((a) => a.startsWith('--rollouts')))) && random.chance(0.2)) {
    args.push(`--shard=${random.pick(POOLS.shard.valid)}`, '--out=@partial.json');
    outputs.push('partial.json');
  } else if ((command === 'basin' || command === 'scan' || command === 'robustness') && random.chance(0.15)) {
    args.push('--out=@result.txt');
    outputs.push('result.txt');
  }
  if ((command === 'map' || command === 'scan' || command === 'basin' || command === 'robustness') && random.chance(0.1) && !args.some((a) => a.startsWith('--shard'))) {
    args.push('--plot=@figure.svg');
    outputs.push('figure.svg');
  }
  if (command === 'deadbeat' && random.chance(0.3)) {
    args.push('--out=@deadbeat.json');
    outputs.push('deadbeat.json');
  }
  if (command === 'map' && random.chance(0.2)) args.push('--approx');
  if (random.chance(0.6)) args.push('--json');
  if (breakOption) {
    const choices = [...spec.required, ...spec.optional, ...(command === 'basin' || command === 'scan' || command === 'robustness' || command === 'recover' ? ['shard'] : [])];
    const name = random.chance(0.1) ? 'bogus' : random.pick(choices);
    if (name === 'bogus') {
      args.push(random.pick(['--bogus', '--strides', '-x', '--json=yes', '--shard=1/2', '--energy']));
      variants.push('option: unknown or misplaced');
    } else {
      // replace the option's value with a broken one
      const at = args.findIndex((a) => a === `--${name}` || a.startsWith(`--${name}=`));
      const broken = option(random, name, true);
      if (at >= 0) args.splice(at, 1, ...broken);
      else args.push(...broken, ...(name === 'shard' && !args.some((a) => a.startsWith('--out')) ? ['--out=@partial.json'] : []));
      if (name === 'shard') outputs.push('partial.json');
      variants.push(`option: --${name}`);
    }
  }
  return { id, command, variant: variants.join('; '), files, setup, args, outputs };
}

// An x axis of the scan that exists in this scenario's angle policy.
function scenarioAxis(scenario: Record<string, Json>): string {
  const angle = (scenario.policy as Record<string, Json>).angle as Record<string, Json>;
  if (angle.kind === 'fixed') return 'policy.angle.attack_deg:60:70:2';
  if (angle.kind === 'retraction') return 'policy.angle.attack_at_apex_deg:58:66:2';
  return 'policy.angle.attack_deg[0]:66:72:2';
}

/** A tampering of a written JSON file (a partial or a result), chosen by `seed`. */
export function tamper(seed: number, text: string): { text: string; variant: string } {
  const random = new Random(seed);
  let value: Json;
  try {
    value = JSON.parse(text) as Json;
  } catch {
    return { text, variant: 'unparsable' };
  }
  const roll = random.next();
  if (roll < 0.25 && value && typeof value === 'object' && !Array.isArray(value) && value.shard && typeof value.shard === 'object') {
    const shard = value.shard as Record<string, Json>;
    const field = random.pick(['count', 'total', 'start', 'end', 'index']);
    shard[field] = random.pick([1e15, -1, 0, 2 ** 53, 1.5, '3', null, 1e308]);
    return { text: JSON.stringify(value), variant: `shard.${field}` };
  }
  if (roll < 0.35 && value && typeof value === 'object' && !Array.isArray(value) && Array.isArray(value.rows)) {
    const rows = value.rows as Json[];
    const kind = random.pick(['drop', 'duplicate', 'garbage']);
    if (kind === 'drop') rows.pop();
    else if (kind === 'duplicate' && rows.length) rows.push(rows[0]);
    else if (rows.length) rows[random.int(0, rows.length - 1)] = random.pick([null, 'x', [1e308, 1e308], { status: 'completed' }]);
    return { text: JSON.stringify(value), variant: `rows ${kind}` };
  }
  if (roll < 0.85) {
    const mutated = mutateJson(random, value);
    return { text: JSON.stringify(mutated.value), variant: mutated.variant };
  }
  const broken = jsonTextOf(random, value, true);
  return { text: broken.text, variant: broken.variant };
}
