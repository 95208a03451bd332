// `pronk deadbeat [FILE] --ground LO:HI [--mode M] [--knots N] [--tolerance M] [--attack-range LO:HI]
// [--compare [--sigma S] [--rollouts R] [--seed N] [--after N] [--rate-range LO:HI] [--workers N]] [--json] [--out RESULT]`:
// a one-step deadbeat table on time since apex (src/core/synthesis/deadbeat.ts), optionally
// compared with the best fixed-angle and retraction policies (src/core/synthesis/compare.ts).

import { scenarioArgument } from './scenario-argument.js';
import type { ComparisonOptionNames, ComparisonOptions, DeadbeatComparison, DeadbeatLoads, TableStepCheck } from '../core/synthesis/compare.js';
import type { DeadbeatMode, DeadbeatOptions, DeadbeatTable, DeadbeatTarget } from '../core/synthesis/deadbeat.js';
import { DEADBEAT_MAX_KNOTS, DEADBEAT_MAX_ROUNDS, TOLERANCE_NOISE_FACTOR } from '../core/synthesis/deadbeat.js';
import { InputError, describeFound } from '../core/errors.js';
import { SAFETY_CAUTION } from '../core/safety.js';
import { jsonText } from '../core/json-output.js';
import { startProgress, type Progress } from './progress.js';
import type { Scenario } from '../core/scenario.js';
import { MAX_AFTER } from '../core/analysis/stepdown.js';
import { count, fields, fixed, plain, table, wrap, type Column } from './format.js';
import type { CliIO, Command, ParsedCommandLine } from './command.js';
import { decimalNumber } from '../core/decimal.js';
import { parseIntegerOption, parseNumberOption } from './options.js';
import { writeText } from './shard-output.js';
import { parseWorkers, workerThreads, workersOption } from './workers.js';
import { checkOutputs, outputRequest, scenarioInput, type CheckedOutput } from './output-files.js';
import { describeStiffness } from './describe.js';

const DEMO_SOURCE = 'scenarios/demo.json';
const SOURCE = 'pronk deadbeat';
const TEXT_WIDTH = 96;
export const DEFAULT_KNOTS = 41;
export const DEFAULT_TOLERANCE_M = 1e-6;
export const MAX_KNOTS = 2000;
/** The options that only mean something with --compare. */
const COMPARE_ONLY = ['sigma', 'rollouts', 'seed', 'rate-range', 'workers'] as const;
export const DEFAULT_AFTER_STRIDES = 20;

const COMPARE_FLAGS: ComparisonOptionNames = {
  attack_range_deg: '--attack-range',
  rate_range_deg_per_s: '--rate-range',
  after: '--after',
  sigma_m: '--sigma',
  rollouts: '--rollouts',
  seed: '--seed',
  screen_rollouts: 'screen_rollouts',
};
const SYNTHESIS_FLAGS: Record<string, string> = {
  ground_range_m: '--ground',
  knots: '--knots',
  mode: '--mode',
  target: '--target',
  attack_range_deg: '--attack-range',
  tolerance_m: '--tolerance',
};

export const deadbeatCommand: Command = {
  name: 'deadbeat',
  summary: 'one-step deadbeat table of attack angle (and extension stiffness) on time since apex, for unknown ground height',
  usage:
    'deadbeat [FILE] --ground LO:HI [--mode angle|angle_and_stiffness] [--target absolute|above_ground_met] [--knots N] ' +
    '[--tolerance M] [--attack-range LO:HI] [--after N] ' +
    '[--compare [--sigma S] [--rollouts R] [--seed N] [--rate-range LO:HI] [--workers N]] [--json] [--out RESULT]',
  details: [
    "From the scenario's start apex (the target), the fall time to touchdown maps one-to-one onto the ground height met",
    '(Ernst, Geyer & Blickhan 2009; Wu & Geyer 2013). For each ground height in LO:HI the attack angle (and with',
    'angle_and_stiffness the extension stiffness) that brings the body back to the target apex on the next stride is',
    'solved; the table of (touchdown time, attack) then runs without knowing the ground. Mode angle returns the next apex',
    'to the same absolute height (and so, with a conservative leg, the same speed): it holds only while every touchdown',
    "stays within LO:HI of the start's ground, so it does not follow a slope or stairs. angle_and_stiffness returns it,",
    'by default (--target above_ground_met), to the same height above the ground met at the same speed, the spring adding',
    'or removing m g h: stride after stride it holds the apex above the ground of the last touchdown while each step',
    'between touchdowns stays within LO:HI (slopes, stairs); --target absolute holds the absolute height and the speed.',
    'The report and --json (validity) say what the table holds and where it stops being valid. Knots are added until',
    'the apex error half-way between knots is within --tolerance. A range starting below zero needs "=": --ground=-0.3:0.05.',
    '',
    '--compare adds the best fixed attack angle and the best swing-leg retraction (a grid search within the attack and',
    'rate ranges: the most rollouts surviving on the Monte Carlo terrain, ties broken by mean strides completed, then by',
    "apex RMS) and compares the three on the largest single step down and up survived and on Monte Carlo survival over",
    "random-walk terrain, every policy on the same terrain streams. The Monte Carlo runs the scenario's strides.",
    '',
    '--out writes a result file (format pronk-result, kind deadbeat): the scenario, the table as a policy block (the',
    'scenario with that policy runs in `pronk simulate`), the table, loads, the comparison and provenance.',
  ].join('\n'),
  arguments: [{ name: 'FILE', description: `scenario file (JSON); without it, the built-in demo (${DEMO_SOURCE})` }],
  options: {
    json: { type: 'boolean', description: 'print the result as JSON on stdout (and nothing else there)' },
    ground: {
      type: 'string',
      valueName: 'LO:HI',
      description: 'ground heights met at the next touchdown to solve for, m (absolute), LO < HI (required)',
    },
    mode: {
      type: 'string',
      valueName: 'MODE',
      description: 'angle (next apex at the same absolute height; default) or angle_and_stiffness (same height above the ground met, same speed)',
    },
    target: {
      type: 'string',
      valueName: 'REF',
      description:
        'the next apex height measured from: absolute (the start\'s ground; mode angle\'s only target) or above_ground_met ' +
        '(the ground of the last touchdown; the default of angle_and_stiffness)',
    },
    knots: { type: 'string', valueName: 'N', description: `ground heights solved first, evenly spaced, >= 2 (default ${DEFAULT_KNOTS})` },
    tolerance: {
      type: 'string',
      valueName: 'M',
      description:
        `largest apex error allowed half-way between knots, m (default ${DEFAULT_TOLERANCE_M}); from ${TOLERANCE_NOISE_FACTOR} x the ` +
        `integrator's accuracy at the apex to the leg length; knots are added for at most ${DEADBEAT_MAX_ROUNDS} rounds, up to ${DEADBEAT_MAX_KNOTS} knots`,
    },
    'attack-range': {
      type: 'string',
      valueName: 'LO:HI',
      description: 'attack angles searched by the table and by the comparison, deg, 0 < LO < HI <= 90 (default 30:89.5)',
    },
    compare: { type: 'boolean', description: 'compare the table with the best fixed angle and the best retraction policy' },
    sigma: { type: 'string', valueName: 'S', description: 'with --compare: random-walk step standard deviation, m (default 0.02)' },
    rollouts: { type: 'string', valueName: 'R', description: 'with --compare: Monte Carlo rollouts (default 500)' },
    seed: { type: 'string', valueName: 'N', description: 'with --compare: terrain seed, an integer >= 0 (default 1)' },
    after: {
      type: 'string',
      valueName: 'N',
      description: `strides to survive after a permanent step, in the step check and the comparison, 1 to ${MAX_AFTER} (default 20)`,
    },
    'rate-range': {
      type: 'string',
      valueName: 'LO:HI',
      description: 'with --compare: retraction rates searched, deg/s (default -1:3 x sqrt(g/L0) rad/s)',
    },
    workers: { ...workersOption('the available cores'), description: `with --compare: ${workersOption('the available cores').description}` },
    out: { type: 'string', valueName: 'RESULT', description: 'also write a result file (JSON, format pronk-result) to RESULT' },
  },
  maxPositionals: 1,
  run: runDeadbeat,
};

interface Flags {
  synthesis: DeadbeatOptions;
  after: number;
  comparison: ComparisonOptions | null;
  workers: number | undefined;
  out: string | undefined;
}

export function parseDeadbeatFlags(values: ParsedCommandLine['values']): Flags {
  const ground = parseRangeOption(values.ground, '--ground', 'two heights LO:HI in metres with LO < HI (e.g. --ground=-0.3:0.05)');
  if (ground === undefined) {
    throw new InputError([{ path: '--ground', expected: 'ground heights LO:HI in metres (required), e.g. --ground=-0.3:0.05', found: 'missing' }], {
      source: SOURCE,
    });
  }
  const mode = values.mode;
  if (mode !== undefined && mode !== 'angle' && mode !== 'angle_and_stiffness') {
    throw new InputError([{ path: '--mode', expected: 'angle or angle_and_stiffness', found: describeFound(mode) }], { source: SOURCE });
  }
  const target = values.target;
  if (target !== undefined && target !== 'absolute' && target !== 'above_ground_met') {
    throw new InputError([{ path: '--target', expected: 'absolute or above_ground_met', found: describeFound(target) }], { source: SOURCE });
  }
  if (target === 'above_ground_met' && (mode ?? 'angle') === 'angle') {
    throw new InputError(
      [
        {
          path: '--target',
          expected:
            'absolute with --mode angle (an attack angle alone cannot add or remove the energy m g h a height above the ground met needs: use --mode angle_and_stiffness)',
          found: describeFound(target),
        },
      ],
      { source: SOURCE },
    );
  }
  const knots = parseIntegerOption(values.knots, '--knots', 2, MAX_KNOTS, SOURCE);
  const tolerance = parseNumberOption(values.tolerance, '--tolerance', 'a length > 0 (m)', SOURCE, (v) => v > 0);
  const attackRange = parseRangeOption(values['attack-range'], '--attack-range', 'two angles LO:HI in degrees with 0 < LO < HI <= 90', (lo, hi) => lo > 0 && hi <= 90);
  const compare = values.compare === true;
  if (!compare) {
    const stray = COMPARE_ONLY.find((name) => values[name] !== undefined);
    if (stray) {
      throw new InputError([{ path: `--${stray}`, expected: '--compare alongside it (it sets up the comparison)', found: `--${stray} without --compare` }], {
        source: SOURCE,
      });
    }
  }
  const sigma = parseNumberOption(values.sigma, '--sigma', 'a finite number >= 0 (m)', SOURCE, (v) => v >= 0);
  const rollouts = parseIntegerOption(values.rollouts, '--rollouts', 1, 10_000_000, SOURCE);
  const seed = parseIntegerOption(values.seed, '--seed', 0, Number.MAX_SAFE_INTEGER, SOURCE);
  const after = parseIntegerOption(values.after, '--after', 1, MAX_AFTER, SOURCE);
  const rateRange = parseRangeOption(values['rate-range'], '--rate-range', 'two rates LO:HI in deg/s with LO < HI (e.g. --rate-range=-100:300)');
  const workers = parseWorkers(values, SOURCE);
  const out = values.out;
  if (out !== undefined && (typeof out !== 'string' || out.trim() === '')) {
    throw new InputError([{ path: '--out', expected: 'a file name', found: describeFound(out) }], { source: SOURCE });
  }
  const synthesis: DeadbeatOptions = {
    groundRange_m: ground,
    mode: (mode as DeadbeatMode | undefined) ?? 'angle',
    ...(target === undefined ? {} : { target: target as DeadbeatTarget }),
    knots: knots ?? DEFAULT_KNOTS,
    tolerance_m: tolerance ?? DEFAULT_TOLERANCE_M,
    ...(attackRange === undefined ? {} : { attackRange_deg: attackRange }),
  };
  const comparison: ComparisonOptions | null = compare
    ? {
        ...(attackRange === undefined ? {} : { attackRange_deg: attackRange }),
        ...(rateRange === undefined ? {} : { rateRange_deg_per_s: rateRange }),
        ...(sigma === undefined ? {} : { sigma_m: sigma }),
        ...(rollouts === undefined ? {} : { rollouts }),
        ...(seed === undefined ? {} : { seed }),
        ...(after === undefined ? {} : { after }),
      }
    : null;
  return { synthesis, after: after ?? DEFAULT_AFTER_STRIDES, comparison, workers, out: out as string | undefined };
}

/** "lo:hi" as two finite numbers with lo < hi (and `ok`), or undefined when absent. */
export function parseRangeOption(
  value: string | boolean | undefined,
  flag: string,
  expected: string,
  ok: (lo: number, hi: number) => boolean = () => true,
): [number, number] | undefined {
  if (value === undefined) return undefined;
  const parts = typeof value === 'string' ? value.split(':') : [];
  const numbers = parts.map(decimalNumber);
  const good = numbers.length === 2 && numbers.every(Number.isFinite) && numbers[0] < numbers[1] && ok(numbers[0], numbers[1]);
  if (!good) throw new InputError([{ path: flag, expected, found: describeFound(value) }], { source: SOURCE });
  return [numbers[0], numbers[1]];
}

// The core's option names become the flags the user typed.
function asFlags(error: unknown): unknown {
  if (!(error instanceof InputError)) return error;
  return new InputError(
    error.issues.map((issue) => ({ ...issue, path: SYNTHESIS_FLAGS[issue.path] ?? issue.path })),
    { source: SOURCE },
  );
}

async function runDeadbeat({ values, positionals }: ParsedCommandLine, io: CliIO): Promise<number> {
  const json = values.json === true;
  const flags = parseDeadbeatFlags(values);
  const file = positionals[0];
  const [outFile] = await checkOutputs([outputRequest('--out', flags.out)], [scenarioInput(file)], { source: SOURCE });
  const scenario = await scenarioArgument(file, io, 'deadbeat');
  const progress = startProgress(io, 'deadbeat', { unit: 'rollouts' });
  try {
    return await deadbeatWithProgress(scenario, flags, outFile, json, io, progress);
  } finally {
    progress.done();
  }
}

async function deadbeatWithProgress(
  scenario: Scenario,
  flags: Flags,
  outFile: CheckedOutput | undefined,
  json: boolean,
  io: CliIO,
  progress: Progress,
): Promise<number> {
  // loaded on demand so that --help and input errors never wait for the WASM engine
  const { synthesizeDeadbeat } = await import('../core/synthesis/deadbeat.js');
  const { compareDeadbeat, deadbeatLoads, deadbeatResult, tableStepCheck } = await import('../core/synthesis/compare.js');
  const { PRONK_VERSION, contentHash } = await import('../core/version.js');
  let deadbeat: DeadbeatTable;
  progress.phase('solving the table');
  try {
    deadbeat = await synthesizeDeadbeat(scenario, flags.synthesis);
  } catch (error) {
    throw asFlags(error);
  }
  if (flags.out !== undefined && deadbeat.knots.length === 0) {
    throw new InputError(
      [{ path: '--ground', expected: 'a ground range where at least one knot is solved (a result file needs a policy)', found: 'no knot solved' }],
      { source: SOURCE },
    );
  }
  progress.phase('checking the table on steps');
  const stepCheck = deadbeat.knots.length ? await tableStepCheck(scenario, deadbeat, flags.after) : null;
  let comparison: DeadbeatComparison | null = null;
  let comparisonSkipped: string | null = null;
  if (flags.comparison) {
    if (deadbeat.knots.length === 0) {
      comparisonSkipped = 'no knot was solved, so there is no table to compare';
    } else {
      const { runBatchParallel } = await import('../worker/pool.js');
      // the screening runs every candidate policy of a grid at once: more items than any core count
      const workers = workerThreads(io, 'deadbeat', flags.workers, { items: Number.POSITIVE_INFINITY, unit: 'rollouts' });
      progress.phase('comparing with the best fixed angle and retraction');
      const onProgress = (done: number, total: number) => progress.update(done, total);
      const runBatch = (req: Parameters<typeof runBatchParallel>[0]) => runBatchParallel(req, { workers, onProgress });
      try {
        comparison = await compareDeadbeat(scenario, deadbeat, { ...flags.comparison, workers, runBatch }, COMPARE_FLAGS);
      } catch (error) {
        if (error instanceof InputError) throw new InputError(error.issues, { source: SOURCE });
        throw error;
      }
    }
  }
  const loads = deadbeatLoads(scenario, deadbeat);
  const options = { synthesis: flags.synthesis, after: flags.after, comparison: flags.comparison };
  if (flags.out !== undefined) {
    const result = await deadbeatResult(scenario, deadbeat, { stepCheck, comparison }, options);
    await writeText(io, outFile, `${JSON.stringify(result, null, 2)}\n`, 'deadbeat');
  }
  if (json) {
    const output = {
      ...deadbeat,
      loads,
      step_check: stepCheck,
      comparison,
      ...(comparisonSkipped ? { comparison_skipped: comparisonSkipped } : {}),
      pronk_version: PRONK_VERSION,
      scenario_sha256: await contentHash(scenario),
      options,
      caution: SAFETY_CAUTION,
    };
    io.stdout.write(jsonText('deadbeat', output));
  } else {
    io.stdout.write(renderDeadbeat(scenario, deadbeat, { loads, stepCheck, comparison }, { options: flags.synthesis, out: flags.out, comparisonSkipped }));
  }
  return 0;
}

// ---------------------------------------------------------------------------------------------
// The terminal view.

const MAX_KNOT_ROWS = 30;
const mm = (m: number) => fixed(m * 1000, 1);
const pct = (x: number) => fixed(100 * x, 1);
const sci = (x: number | null) => (x === null ? '-' : x === 0 ? '0' : x.toExponential(1));

export function renderDeadbeat(
  scenario: Scenario,
  t: DeadbeatTable,
  analyses: { loads: DeadbeatLoads | null; stepCheck: TableStepCheck | null; comparison: DeadbeatComparison | null },
  extra: { options: DeadbeatOptions; out?: string; comparisonSkipped?: string | null },
): string {
  const { body } = scenario;
  const { loads, stepCheck, comparison } = analyses;
  const weight = body.mass_kg * body.gravity_m_per_s2;
  const withStiffness = t.mode === 'angle_and_stiffness';
  const target =
    t.target.height_reference === 'absolute'
      ? `next apex at ${plain(t.target.apex_height_m)} m (absolute)` +
        (withStiffness ? ` at ${plain(t.target.forward_speed_m_per_s)} m/s` : ` and so ${plain(t.target.forward_speed_m_per_s)} m/s`)
      : `next apex ${plain(t.target.apex_height_m)} m above the ground met, at ${plain(t.target.forward_speed_m_per_s)} m/s`;
  const solved =
    t.solved_range_m === null
      ? 'nowhere'
      : `${plain(t.solved_range_m[0])} to ${plain(t.solved_range_m[1])} m` +
        (t.solved_range_m[0] <= 0 && t.solved_range_m[1] >= 0
          ? ` (steps down to ${mm(-t.solved_range_m[0])} mm, up to ${mm(t.solved_range_m[1])} mm)`
          : '');
  const header = [
    scenario.name ?? 'Unnamed scenario',
    fields([
      ['body', `${plain(body.mass_kg)} kg, leg ${plain(body.leg_length_m)} m, ${describeStiffness(scenario.policy.stiffness, scenario)}`],
      ['target', target],
      [
        'mode',
        withStiffness
          ? 'attack angle and extension stiffness (switched at maximum compression), by touchdown time'
          : 'attack angle by time since apex (the leg stiffness as in the scenario)',
      ],
      ['ground', `asked ${plain(t.ground_range_m[0])} to ${plain(t.ground_range_m[1])} m; solved ${solved}`],
      [
        'knots',
        `${t.knots.length} (${extra.options.knots ?? DEFAULT_KNOTS} evenly spaced first, more where the error half-way between knots ` +
          `exceeded ${plain(extra.options.tolerance_m ?? DEFAULT_TOLERANCE_M)} m)` +
          refinementNote(t.refinement),
      ],
      [
        'residual',
        `apex error at the knots at most ${sci(t.max_abs_residual_at_knots_m)} m, half-way between knots at most ` +
          `${sci(t.max_abs_residual_between_knots_m)} m${withStiffness ? ' (height or speed in m/s, whichever is larger)' : ''}`,
      ],
      ...(loads
        ? ([
            [
              'loads',
              `peak leg force ${fixed(loads.peak_leg_force_N[0], 0)} to ${fixed(loads.peak_leg_force_N[1], 0)} N ` +
                `(${fixed(loads.peak_leg_force_body_weights[0], 2)} to ${fixed(loads.peak_leg_force_body_weights[1], 2)} body weights)`,
            ],
            ['', `peak friction ratio |Fx/Fy| ${fixed(loads.peak_friction_ratio, 3)} (the friction coefficient the table needs)`],
            ['', `max compression ${mm(loads.max_compression_m)} mm (${pct(loads.max_compression_fraction_of_leg)} % of the leg)`],
          ] as [string, string][])
        : []),
    ]),
  ].join('\n');

  const unsolved = t.unsolved.length
    ? ['Unsolved ground heights:', ...t.unsolved.map((u) => wrap(`${plain(u.from_m)} to ${plain(u.to_m)} m: ${u.reason}`, TEXT_WIDTH, '  ', '    '))]
    : ['Every ground height asked was solved.'];

  const columns: Column[] = [
    { title: 'ground', unit: 'm' },
    { title: 'touchdown', unit: 'ms after apex' },
    { title: 'attack', unit: 'deg' },
    ...(withStiffness ? [{ title: 'extension', unit: 'N/m' }] : []),
    { title: 'next apex', unit: 'm' },
    { title: 'residual', unit: 'm' },
    { title: 'peak force', unit: 'N' },
    { title: '', unit: 'x weight' },
    { title: 'friction', unit: '|Fx/Fy|' },
    { title: 'compression', unit: '% leg' },
  ];
  const rowOf = (k: DeadbeatTable['knots'][number]) => [
    fixed(k.ground_height_m, 4),
    fixed(k.time_since_apex_s * 1000, 2),
    fixed(k.attack_deg, 3),
    ...(withStiffness ? [fixed(k.extension_N_per_m, 0)] : []),
    fixed(k.next_apex_height_m, 6),
    sci(k.residual_height_m),
    fixed(k.peak_leg_force_N, 0),
    fixed(k.peak_leg_force_N / weight, 2),
    fixed(k.peak_friction_ratio, 3),
    pct(k.max_compression_m / body.leg_length_m),
  ];
  const shown = rowsShown(t.knots.length);
  const knotTable = t.knots.length
    ? [
        `The table (${shown.length < t.knots.length ? `${shown.length} of ${count(t.knots.length, 'knot')}; --json lists them all` : 'every knot'}), in touchdown time:`,
        table(columns, shown.map((i) => rowOf(t.knots[i])), '  '),
      ]
    : ['No knot was solved: there is no table.'];

  const validity = [
    wrap(`The table holds ${t.validity.holds}.`, TEXT_WIDTH),
    wrap(`It is valid while ${t.validity.valid_while}; ${t.validity.beyond}.`, TEXT_WIDTH),
  ];
  const parts = [header, '', ...validity, '', ...unsolved, '', ...knotTable, ''];
  if (stepCheck) parts.push(renderStepCheck(stepCheck), '');
  if (comparison) parts.push(renderComparison(comparison), '');
  if (extra.comparisonSkipped) parts.push(`Comparison skipped: ${extra.comparisonSkipped}.`, '');
  parts.push(wrap(SAFETY_CAUTION, TEXT_WIDTH, 'Caution: ', '  '), '');
  return parts.join('\n');
}

// Why the knot refinement stopped, when it was not because the tolerance was met.
function refinementNote(r: DeadbeatTable['refinement']): string {
  switch (r.stopped_by) {
    case 'tolerance_met':
      return '';
    case 'knot_cap':
      return `; stopped at the cap of ${r.max_knots} knots before the tolerance was met`;
    case 'round_cap':
      return `; stopped after the cap of ${r.max_rounds} refinement rounds before the tolerance was met`;
    case 'too_few_knots':
      return '; fewer than 2 knots solved, nothing to refine';
  }
}

function renderStepCheck(c: TableStepCheck): string {
  const survived = c.all_survived
    ? `the table survived all ${c.ground_heights_checked} permanent steps across its solved range (every knot and every midpoint) for ${count(c.strides, 'stride')}`
    : `${c.failures.length < 20 ? c.failures.length : 'at least 20'} of ${c.ground_heights_checked} permanent steps across the solved range failed within ${count(c.strides, 'stride')} ` +
      `(${c.failures
        .slice(0, 3)
        .map((f) => `${plain(f.ground_height_m)} m: ${f.reason} at stride ${f.failed_stride}`)
        .join('; ')}${c.failures.length > 3 ? '; ...' : ''})`;
  const drift =
    c.max_final_apex_error_m === null
      ? ''
      : ` Apex error about the target after the first stride at most ${sci(c.max_first_apex_error_m)} m, after the last at most ` +
        `${sci(c.max_final_apex_error_m)} m (at ground ${plain(c.worst_ground_height_m!)} m)` +
        (c.max_final_apex_error_m > 100 * Math.max(c.max_first_apex_error_m ?? 0, 1e-9)
          ? ': the closed loop does not hold the target on a persistent step (small errors grow from stride to stride).'
          : '.');
  return wrap(`Step check: ${survived}.${drift}`, TEXT_WIDTH, '', '  ');
}

function renderComparison(c: DeadbeatComparison): string {
  const label: Record<string, string> = {
    deadbeat_table: 'deadbeat table',
    best_fixed_angle: 'best fixed angle',
    best_retraction: 'best retraction',
  };
  const columns: Column[] = [
    { title: 'policy', unit: '', align: 'left' },
    { title: 'step down', unit: 'mm' },
    { title: 'step up', unit: 'mm' },
    { title: 'survived', unit: 'rollouts' },
    { title: 'survival', unit: '%' },
    { title: 'Wilson 95 %', unit: '%', align: 'left' },
    { title: 'strides', unit: 'mean' },
  ];
  const limit = (m: number, by: string) => `${by === 'search_limit' ? '>= ' : ''}${mm(m)}`;
  const rows = c.policies.map((p) => [
    label[p.name],
    limit(p.step_tolerance.max_step_down_m, p.step_tolerance.down_bounded_by),
    limit(p.step_tolerance.max_step_up_m, p.step_tolerance.up_bounded_by),
    `${p.monte_carlo.survived}/${p.monte_carlo.rollouts}`,
    pct(p.monte_carlo.survival),
    `${pct(p.monte_carlo.wilson95[0])} - ${pct(p.monte_carlo.wilson95[1])}`,
    fixed(p.monte_carlo.mean_strides_completed, 2),
  ]);
  const m = c.monte_carlo_method;
  const lines = [
    'Comparison',
    fields([
      ['steps', `one permanent step at the first touchdown, then ${count(c.step_tolerance_method.strides_after, 'stride')} to survive, to ${mm(c.step_tolerance_method.resolution_m)} mm`],
      ['terrain', `random walk, N(0, ${plain(m.sigma_m)} m) per touchdown, seed ${m.seed}: ${count(m.rollouts, 'rollout')} x ${count(m.strides, 'stride')}, the same streams for every policy`],
    ]),
    '',
    table(columns, rows, '  '),
    '',
    ...c.policies.map((p) => wrap(`${label[p.name]}: ${p.description}`, TEXT_WIDTH, '  ', '    ')),
    '',
    ...c.paired_survival.map((d) =>
      wrap(
        `deadbeat minus ${label[d.baseline]}: survival ${d.difference >= 0 ? '+' : ''}${pct(d.difference)} points ` +
          `(Newcombe 95 %: ${pct(d.newcombe95[0])} to ${pct(d.newcombe95[1])}); on the same terrains the table alone survived ` +
          `${d.deadbeat_only_survived}, the ${label[d.baseline]} alone ${d.baseline_only_survived}`,
        TEXT_WIDTH,
        '  ',
        '    ',
      ),
    ),
    '',
    wrap(`Best means: ${c.criterion.replace(/^best = /, '')}.`, TEXT_WIDTH, '  ', '    '),
    wrap(
      `Search: fixed angle ${c.search.fixed_angle.coarse_grid} in ${plain(c.attack_range_deg[0])}-${plain(c.attack_range_deg[1])} deg, ` +
        `retraction ${c.search.retraction.coarse_grid} in ${fixed(c.rate_range_deg_per_s[0], 1)} to ${fixed(c.rate_range_deg_per_s[1], 1)} deg/s, ` +
        `each refined (${c.search.fixed_angle.refinement}); ${c.search.fixed_angle.candidates_screened + c.search.retraction.candidates_screened} candidates ` +
        `screened on ${count(c.search.fixed_angle.screen_rollouts, 'stream')}, the ${c.search.fixed_angle.finalists} best of each on all. ` +
        `Took ${fixed(c.wall_time_s, 1)} s.`,
      TEXT_WIDTH,
      '  ',
      '    ',
    ),
    wrap(`Note: ${c.note}`, TEXT_WIDTH, '  ', '    '),
  ];
  return lines.join('\n');
}

// Every knot up to MAX_KNOT_ROWS, else evenly spaced ones, always the first and the last.
function rowsShown(n: number): number[] {
  if (n <= MAX_KNOT_ROWS) return Array.from({ length: n }, (_, i) => i);
  const picked = new Set<number>();
  for (let j = 0; j < MAX_KNOT_ROWS; j++) picked.add(Math.round((j * (n - 1)) / (MAX_KNOT_ROWS - 1)));
  return [...picked].sort((a, b) => a - b);
}
