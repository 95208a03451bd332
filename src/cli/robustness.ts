// `pronk robustness [FILE] --sigma S [--rollouts R] [--seed N] ...`: Monte Carlo survival over
// seeded random terrain, on the worker pool, optionally one shard of it (`--shard i/n`).

import { anyScenarioArgument, scenarioArgument } from './scenario-argument.js';
import { LATERAL_KICK_OPTIONS, parseRandomKicks, runLateralMonteCarlo } from './recover.js';
import { InputError, describeFound } from '../core/errors.js';
import { jsonText, modelHeader } from '../core/json-output.js';
import { startProgress } from './progress.js';
import type {
  CanonicalRobustnessOptions,
  RandomTerrainKind,
  RobustnessOptionNames,
  RobustnessOptions,
  RobustnessResult,
} from '../core/analysis/robustness.js';
import { SAFETY_CAUTION } from '../core/safety.js';
import { BOUNDS, boundText, type Scenario } from '../core/scenario.js';
import { accuracyFields, count, fields, fixed, plain, table, wrap, type Column } from './format.js';
import type { CliIO, Command, ParsedCommandLine } from './command.js';
import { parseIntegerOption, parseNumberOption } from './options.js';
import { parseWorkers, workerThreads, workersOption } from './workers.js';
import { checkShardSize } from '../core/shard.js';
import { SHARD_OPTIONS, makePartial, outOption, shardOption, shardRange, writePartial, writeText } from './shard-output.js';
import { PLOT_OPTION, plotOption } from '../core/figures/plot-file.js';
import { checkOutputs, outputRequest, scenarioInput, writePlotFile } from './output-files.js';
import { describeAngle, describeStiffness } from './describe.js';

const DEMO_SOURCE = 'scenarios/demo.json';
const SOURCE = 'pronk robustness';
export const DEFAULT_ROLLOUTS = 1000;
export const DEFAULT_SEED = 1;
// the bound of `pronk recover --rollouts`
const MAX_LATERAL_ROLLOUTS = 1_000_000;

/** The core's option names as flags, so its messages name what the user typed. */
const FLAG_NAMES: RobustnessOptionNames = {
  rollouts: '--rollouts',
  sigma_m: '--sigma',
  seed: '--seed',
  strides: '--strides',
  terrain: '--terrain',
  target_height_m: '--target-height',
  target_speed_m_per_s: '--target-speed',
};

export const robustnessCommand: Command = {
  name: 'robustness',
  summary: 'Monte Carlo survival on seeded random terrain: survival with its Wilson 95 % interval, failures, apex RMS',
  usage:
    'robustness [FILE] --sigma S [--rollouts R] [--seed N] [--strides N] [--terrain KIND] [--target-height M] [--target-speed V] [--workers N] [--shard I/N] [--out FILE] [--plot FILE.svg] [--json] ' +
    '(lateral FILE: --kick-left V, --kick-forward V, --kick-angle DEG, --kick-rate DEG/S, --kick-stride N instead of the terrain options)',
  details:
    "Runs R rollouts of the scenario's strides from its start apex on random terrain that replaces the scenario's own: " +
    'rollout r runs on terrain stream r of the seed, so the same seed gives the same terrains to every policy compared ' +
    '(common random numbers). The result does not depend on --workers or on how the run is sharded.\n' +
    'A "lateral" scenario has no ground: its disturbances are kicks. robustness then runs the Monte Carlo over random ' +
    'kicks of `pronk recover --rollouts` (the same result, under the pronk-robustness header): each kick size uniform in ' +
    '[-V, V] for the --kick-* options (at least one not 0), at a uniform moment of stride --kick-stride, rollout r from ' +
    'stream r of --seed, --strides strides after the kick (default 30), survival and recovery with Wilson 95 % intervals. ' +
    '--sigma, --terrain, --target-height, --target-speed and --plot are refused; it runs in this process (--workers is checked only).',
  arguments: [{ name: 'FILE', description: `scenario file (JSON); without it, the built-in demo (${DEMO_SOURCE})` }],
  options: {
    json: { type: 'boolean', description: 'print the result as JSON on stdout (and nothing else there)' },
    rollouts: { type: 'string', valueName: 'R', description: `number of rollouts (default ${DEFAULT_ROLLOUTS})` },
    sigma: {
      type: 'string',
      valueName: 'S',
      description: 'terrain standard deviation in metres: the Gaussian step of a random walk, or the height of random heights (required)',
    },
    seed: { type: 'string', valueName: 'N', description: `terrain seed, an integer >= 0 (default ${DEFAULT_SEED})` },
    strides: { type: 'string', valueName: 'N', description: "strides per rollout (default the scenario's \"strides\")" },
    terrain: {
      type: 'string',
      valueName: 'KIND',
      description: 'random_walk (each touchdown the previous height plus N(0, S); default) or random_heights (each drawn afresh from N(0, S))',
    },
    'target-height': {
      type: 'string',
      valueName: 'M',
      description: 'apex height (absolute, m) the apex RMS is taken about (default the start apex)',
    },
    'target-speed': {
      type: 'string',
      valueName: 'V',
      description: 'forward speed (m/s) the speed RMS is taken about (default the start speed)',
    },
    workers: workersOption(),
    ...SHARD_OPTIONS,
    plot: PLOT_OPTION,
    ...LATERAL_KICK_OPTIONS,
  },
  maxPositionals: 1,
  run: runRobustness,
};

async function runRobustness({ values, positionals }: ParsedCommandLine, io: CliIO): Promise<number> {
  const json = values.json === true;
  if (positionals[0] !== undefined && (await isLateralFile(positionals[0]))) return runLateralRobustness({ values, positionals }, io);
  const kickGiven = Object.keys(LATERAL_KICK_OPTIONS).find((name) => values[name] !== undefined);
  if (kickGiven !== undefined) {
    throw new InputError(
      [{ path: `--${kickGiven}`, expected: 'no kick for a single-leg or two-leg scenario (its disturbances are terrain: --sigma, --terrain)', found: describeFound(values[kickGiven]) }],
      { source: SOURCE },
    );
  }
  const options = parseRobustnessFlags(values);
  const workers = parseWorkers(values, SOURCE);
  const spec = shardOption(values);
  const out = outOption(values);
  const plot = await plotOption(values.plot, { shard: spec !== undefined });
  const file = positionals[0];
  const [outFile, plotFile] = await checkOutputs([outputRequest('--out', out), outputRequest('--plot', plot)], [scenarioInput(file)], { source: SOURCE });
  const scenario = await scenarioArgument(file, io, 'robustness');
  const { canonicalRobustnessOptions, robustnessRows, terrainRobustness } = await import('../core/analysis/robustness.js');
  let canonical: CanonicalRobustnessOptions;
  try {
    canonical = canonicalRobustnessOptions(scenario, options, FLAG_NAMES);
  } catch (error) {
    if (error instanceof InputError) throw new InputError(error.issues, { source: SOURCE });
    throw error;
  }
  let range: { start: number; end: number } | undefined;
  try {
    range = spec === undefined ? undefined : shardRange(canonical.rollouts, spec);
    // a row is an object of a status name and three numbers: under 256 bytes of JSON
    if (spec !== undefined && range !== undefined) checkShardSize(canonical.rollouts, spec, range, 256, 'rollouts');
  } catch (error) {
    if (error instanceof InputError) throw new InputError(error.issues, { source: SOURCE });
    throw error;
  }
  const items = range === undefined ? canonical.rollouts : range.end - range.start;
  const threads = workerThreads(io, 'robustness', workers, { items, unit: 'rollouts' });
  const progress = startProgress(io, 'robustness', { unit: 'rollouts' });
  const execution = { workers: threads, onProgress: (done: number, total: number) => progress.update(done, total) };

  if (spec !== undefined && range !== undefined) {
    const rows = await robustnessRows(scenario, canonical, range, execution).finally(progress.done);
    const partial = await makePartial({
      command: 'robustness',
      scenario,
      options: { ...canonical },
      spec,
      range,
      total: canonical.rollouts,
      rows,
    });
    await writePartial(io, outFile, partial);
    return 0;
  }

  const result = await terrainRobustness(scenario, canonical, execution).finally(progress.done);
  const text = json ? robustnessJson(result, scenario) : renderRobustness(scenario, result);
  await writeText(io, outFile, text, 'robustness');
  if (plotFile !== undefined) await writePlotFile(io, 'robustness', plotFile, result);
  return 0;
}

// Whether FILE is a readable "lateral" scenario; anything else (unreadable, another kind) takes
// the single-leg path, which reports it as before.
async function isLateralFile(file: string): Promise<boolean> {
  try {
    const { readScenarioValue } = await import('../core/scenario.js');
    const { modelKindOf } = await import('../core/models/kind.js');
    return modelKindOf(await readScenarioValue(file), file) === 'lateral';
  } catch {
    return false;
  }
}

// robustness on a lateral scenario: the Monte Carlo over random kicks of `pronk recover --rollouts`
async function runLateralRobustness({ values, positionals }: ParsedCommandLine, io: CliIO): Promise<number> {
  const file = positionals[0];
  for (const name of ['sigma', 'terrain', 'target-height', 'target-speed', 'plot']) {
    if (values[name] !== undefined) {
      throw new InputError(
        [
          {
            path: `--${name}`,
            expected: 'no such option for a lateral scenario: the lateral model has no ground, its disturbances are kicks (--kick-left, --kick-forward, --kick-angle, --kick-rate)',
            found: describeFound(values[name]),
          },
        ],
        { source: SOURCE },
      );
    }
  }
  const kicks = parseRandomKicks(values, SOURCE);
  const rollouts = parseIntegerOption(values.rollouts, '--rollouts', 1, MAX_LATERAL_ROLLOUTS, SOURCE) ?? DEFAULT_ROLLOUTS;
  const seed = parseIntegerOption(values.seed, '--seed', 0, Number.MAX_SAFE_INTEGER, SOURCE) ?? DEFAULT_SEED;
  const strides = parseIntegerOption(values.strides, '--strides', 3, 100_000, SOURCE);
  parseWorkers(values, SOURCE);
  const spec = shardOption(values);
  const out = outOption(values);
  const [outFile] = await checkOutputs([outputRequest('--out', out)], [scenarioInput(file)], { source: SOURCE });
  const any = await anyScenarioArgument(file, io, 'robustness');
  if (any.kind !== 'lateral') throw new Error('robustness: the file changed kind while it was read');
  return runLateralMonteCarlo(io, {
    command: 'robustness',
    scenario: any.scenario,
    kicks: {
      stride: kicks.stride,
      max_forward_m_per_s: kicks.forward,
      max_left_m_per_s: kicks.left,
      max_angle_deg: kicks.angle,
      max_rate_deg_per_s: kicks.rate,
      seed,
      rollouts,
    },
    stridesAfter: strides,
    tolerances: {},
    shard: spec,
    outFile,
    json: values.json === true,
  });
}

/** The analysis options from the command line (checked for syntax here, for range by the core). */
export function parseRobustnessFlags(values: ParsedCommandLine['values']): RobustnessOptions {
  const within = (b: { low: number; high: number }) => (v: number) => v >= b.low && v <= b.high;
  const sigma = parseNumberOption(values.sigma, '--sigma', boundText(BOUNDS.sigma_m, 'a standard deviation'), SOURCE, within(BOUNDS.sigma_m));
  if (sigma === undefined) {
    throw new InputError([{ path: '--sigma', expected: 'a terrain standard deviation in metres (required)', found: 'missing' }], { source: SOURCE });
  }
  const terrain = values.terrain;
  if (terrain !== undefined && terrain !== 'random_walk' && terrain !== 'random_heights') {
    throw new InputError([{ path: '--terrain', expected: 'random_walk or random_heights', found: describeFound(terrain) }], { source: SOURCE });
  }
  const targetHeight = parseNumberOption(values['target-height'], '--target-height', boundText(BOUNDS.height_m, 'an apex height'), SOURCE, within(BOUNDS.height_m));
  const targetSpeed = parseNumberOption(
    values['target-speed'],
    '--target-speed',
    boundText(BOUNDS.forward_speed_m_per_s, 'a forward speed'),
    SOURCE,
    within(BOUNDS.forward_speed_m_per_s),
  );
  const strides = parseIntegerOption(values.strides, '--strides', 1, undefined, SOURCE);
  return {
    rollouts: parseIntegerOption(values.rollouts, '--rollouts', 1, undefined, SOURCE) ?? DEFAULT_ROLLOUTS,
    sigma_m: sigma,
    seed: parseIntegerOption(values.seed, '--seed', 0, Number.MAX_SAFE_INTEGER, SOURCE) ?? DEFAULT_SEED,
    ...(strides === undefined ? {} : { strides }),
    ...(terrain === undefined ? {} : { terrain: terrain as RandomTerrainKind }),
    ...(targetHeight === undefined ? {} : { target_height_m: targetHeight }),
    ...(targetSpeed === undefined ? {} : { target_speed_m_per_s: targetSpeed }),
  };
}

// ---------------------------------------------------------------------------------------------
// The two views (also used by `pronk merge`).

/** The --json text. */
export function robustnessJson(result: RobustnessResult, scenario: Scenario): string {
  return jsonText('robustness', result, modelHeader(scenario));
}

const TEXT_WIDTH = 96;
const MAX_STRIDE_ROWS = 25;

export function renderRobustness(scenario: Scenario, r: RobustnessResult): string {
  const pct = (x: number) => `${fixed(100 * x, 1)} %`;
  const terrain =
    r.terrain.kind === 'random_walk'
      ? `random walk, each touchdown the previous height plus N(0, ${plain(r.terrain.sigma_m)} m)`
      : `random heights, each touchdown drawn from N(0, ${plain(r.terrain.sigma_m)} m)`;
  const header = [
    scenario.name ?? 'Unnamed scenario',
    fields([
      ['policy', `${describeAngle(scenario.policy.angle)}; ${describeStiffness(scenario.policy.stiffness, scenario)}`],
      ['terrain', `${terrain}, seed ${r.terrain.seed} (replaces the scenario's terrain; rollout r on stream r)`],
      ['start', `apex ${plain(r.start.apex_height_m)} m at ${plain(r.start.forward_speed_m_per_s)} m/s`],
      ['run', `${count(r.rollouts, 'rollout')} x ${count(r.strides, 'stride')}`],
      ...accuracyFields(r.integrator),
    ]),
  ].join('\n');
  const failures = Object.entries(r.failures).filter(([, n]) => n > 0);
  const summary = fields([
    ['survived', `${r.survived} of ${r.rollouts} = ${pct(r.survival)} (Wilson 95 %: ${pct(r.wilson95[0])} to ${pct(r.wilson95[1])})`],
    ['strides completed', `${fixed(r.mean_strides_completed, 2)} per rollout on average (${r.strides_completed_total} in all)`],
    [
      'apex RMS',
      r.apex_height_rms_m === null
        ? '- (no stride completed)'
        : `height ${fixed(r.apex_height_rms_m * 1000, 2)} mm about ${plain(r.target.apex_height_m)} m, ` +
          `speed ${fixed(r.forward_speed_rms_m_per_s!, 4)} m/s about ${plain(r.target.forward_speed_m_per_s)} m/s`,
    ],
    ['failures', failures.length ? failures.map(([name, n]) => `${name} ${n}`).join(', ') : 'none'],
  ]);
  const columns: Column[] = [
    { title: 'after stride', unit: '', align: 'left' },
    { title: 'running', unit: 'rollouts' },
    { title: 'survival', unit: '%' },
    { title: 'Wilson 95 %', unit: '%', align: 'left' },
  ];
  const shown = strideRowsShown(r.survival_by_stride.length);
  const rows = shown.map((i) => {
    const s = r.survival_by_stride[i];
    return [String(s.stride), String(s.running), fixed(100 * s.survival, 1), `${fixed(100 * s.wilson95[0], 1)} - ${fixed(100 * s.wilson95[1], 1)}`];
  });
  const byStride = table(columns, rows, '  ');
  const lines = [
    header,
    '',
    summary,
    '',
    `Survival after each stride${shown.length < r.survival_by_stride.length ? ' (a selection; --json lists every stride)' : ''}:`,
    byStride,
    '',
    wrap(`Apex RMS: ${r.rms_definition}.`, TEXT_WIDTH, '', '  '),
    '',
    wrap(SAFETY_CAUTION, TEXT_WIDTH, 'Caution: ', '  '),
    '',
  ];
  return lines.join('\n');
}

// Every stride up to MAX_STRIDE_ROWS, else evenly spaced ones, always the first and the last.
function strideRowsShown(n: number): number[] {
  if (n <= MAX_STRIDE_ROWS) return Array.from({ length: n }, (_, i) => i);
  const picked = new Set<number>();
  for (let j = 0; j < MAX_STRIDE_ROWS; j++) picked.add(Math.round((j * (n - 1)) / (MAX_STRIDE_ROWS - 1)));
  return [...picked].sort((a, b) => a - b);
}
