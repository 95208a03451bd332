// `pronk basin [FILE] [--heights lo:hi:n] [--speeds lo:hi:n | --energy] [--strides N] [--tolerance M]
// [--workers N] [--shard I/N --out FILE] [--json]`: the basin of attraction on flat ground.

import { anyScenarioArgument } from './scenario-argument.js';
import type { BasinOptions, BasinResult, BasinRunOptions, GridAxis } from '../core/analysis/basin.js';
import { InputError, describeFound } from '../core/errors.js';
import { jsonText, modelHeader } from '../core/json-output.js';
import { startProgress } from './progress.js';
import { MAX_STRIDES, type Scenario } from '../core/scenario.js';
import { count, fields, fixed, plain, table, wrap, type Column } from './format.js';
import type { CliIO, Command, ParsedCommandLine } from './command.js';
import { SHARD_OPTIONS, makePartial, outOption, shardOption, shardRange, writePartial, writeText } from './shard-output.js';
import { decimalDigits, decimalNumber } from '../core/decimal.js';
import { expectedDecimal, parseIntegerOption } from './options.js';
import { parseWorkers, workerThreads, workersOption } from './workers.js';
import { PLOT_OPTION, plotOption } from '../core/figures/plot-file.js';
import { checkOutputs, outputRequest, scenarioInput, writePlotFile } from './output-files.js';
import { describeAngle, describeStiffness } from './describe.js';

const DEMO_SOURCE = 'scenarios/demo.json';
const SOURCE = 'pronk basin';

export const basinCommand: Command = {
  name: 'basin',
  summary: 'basin of attraction on flat ground over a grid of start apex heights and speeds',
  usage:
    'basin [FILE] [--heights LO:HI:N] [--speeds LO:HI:N | --energy] [--headings LO:HI:N] [--rates LO:HI:N] [--strides N] [--tolerance M] [--workers N] [--shard I/N --out FILE] [--plot FILE.svg] [--json]',
  details: [
    'Each cell of the grid starts at one apex (height, forward speed) and runs N strides on flat ground',
    "(the scenario's terrain is not used). A cell is converged when it completes them all and its",
    'last two apexes agree within the tolerance (it settled on a stable fixed point), wandering when',
    'it survives without settling, and fell otherwise (with the stride and the reason). Cells are',
    'ordered by height, then speed (speed varies fastest). With --energy the basin is 1-D: heights',
    "only, each at the speed that gives the scenario's start energy. Default grid: heights from the",
    'touchdown height to 2 y0 minus it and speeds from 0.5 v0 to 1.5 v0, 41 x 41; with --energy,',
    'heights from the touchdown height to E/(m g), 101 points. Results do not depend on --workers.',
    'A "lateral" scenario: the grid is over errors of the heading to the body axis (--headings, deg) and',
    "of the angular velocity (--rates, deg/s) from its gait's at the left touchdown, at the gait's energy;",
    'converged when the last left touchdown is back on the gait within --tolerance (deg and deg/s, default 0.1).',
  ].join('\n'),
  arguments: [{ name: 'FILE', description: `scenario file (JSON); without it, the built-in demo (${DEMO_SOURCE})` }],
  options: {
    json: { type: 'boolean', description: 'print the result as JSON on stdout (and nothing else there)' },
    heights: { type: 'string', valueName: 'LO:HI:N', description: 'start apex heights: N values from LO to HI m (inclusive)' },
    speeds: { type: 'string', valueName: 'LO:HI:N', description: 'start forward speeds: N values from LO to HI m/s (inclusive)' },
    energy: { type: 'boolean', description: "1-D basin at the scenario's start energy: heights only, speed from energy" },
    headings: { type: 'string', valueName: 'LO:HI:N', description: 'lateral: heading-to-body errors, N values from LO to HI deg (default -30:30:21)' },
    rates: { type: 'string', valueName: 'LO:HI:N', description: 'lateral: angular-velocity errors, N values from LO to HI deg/s (default a quarter of speed / leg length, 21)' },
    strides: { type: 'string', valueName: 'N', description: 'strides per cell (default 30)' },
    tolerance: {
      type: 'string',
      valueName: 'M',
      description: 'converged when the last two apexes differ by at most M m in height and M m/s in speed (default 1e-4)',
    },
    workers: workersOption(),
    ...SHARD_OPTIONS,
    plot: PLOT_OPTION,
  },
  maxPositionals: 1,
  run: runBasin,
};

async function runBasin({ values, positionals }: ParsedCommandLine, io: CliIO): Promise<number> {
  const json = values.json === true;
  const options: BasinOptions = {
    ...(values.heights !== undefined ? { heights: parseAxisOption(values.heights, '--heights', 'm') } : {}),
    ...(values.speeds !== undefined ? { speeds: parseAxisOption(values.speeds, '--speeds', 'm/s', 0) } : {}),
    ...(values.energy === true ? { energy: true } : {}),
  };
  if (options.energy && options.speeds) {
    throw new InputError(
      [{ path: '--speeds', expected: 'no --speeds with --energy (the speed follows from the energy)', found: describeFound(values.speeds) }],
      { source: SOURCE },
    );
  }
  const strides = parseIntegerOption(values.strides, '--strides', 1, MAX_STRIDES, SOURCE);
  if (strides !== undefined) options.strides = strides;
  const tolerance = parseToleranceOption(values.tolerance);
  if (tolerance !== undefined) {
    options.heightTolerance_m = tolerance;
    options.speedTolerance_m_per_s = tolerance;
  }
  const workers = parseWorkers(values, SOURCE);
  const shard = shardOption(values);
  const out = outOption(values);
  const plot = await plotOption(values.plot, { shard: shard !== undefined });
  const file = positionals[0];
  const [outFile, plotFile] = await checkOutputs([outputRequest('--out', out), outputRequest('--plot', plot)], [scenarioInput(file)], { source: SOURCE });

  const any = await anyScenarioArgument(file, io, 'basin');
  if (any.kind === 'lateral') {
    // --workers is accepted and changes nothing (the lateral basin runs in this thread)
    const refused = ['heights', 'speeds', 'energy'].filter((k) => values[k] !== undefined);
    if (refused.length) {
      throw new InputError(
        [{ path: `--${refused[0]}`, expected: 'none with a "lateral" scenario (its basin takes --headings, --rates, --strides, --tolerance, --workers, --shard, --out, --plot, --json)', found: describeFound(values[refused[0]]) }],
        { source: SOURCE },
      );
    }
    const { runLateralBasin } = await import('./lateral.js');
    return runLateralBasin(any.scenario, io, {
      json,
      shard,
      outFile,
      plotFile,
      ...(values.headings !== undefined ? { headings: parseAxisOption(values.headings, '--headings', 'deg') } : {}),
      ...(values.rates !== undefined ? { rates: parseAxisOption(values.rates, '--rates', 'deg/s') } : {}),
      ...(strides !== undefined ? { strides } : {}),
      ...(tolerance !== undefined ? { tolerance } : {}),
    });
  }
  if (values.headings !== undefined || values.rates !== undefined) {
    throw new InputError(
      [{ path: values.headings !== undefined ? '--headings' : '--rates', expected: 'a "lateral" scenario (the option grids its heading and angular velocity)', found: `a "${any.kind}" scenario` }],
      { source: SOURCE },
    );
  }
  const scenario = any.scenario;

  // loaded on demand so that --help and input errors never wait for the WASM engine
  const core = await import('../core/analysis/basin.js');
  let run: BasinRunOptions;
  try {
    run = core.basinRunOptions(scenario, options);
  } catch (error) {
    throw error instanceof InputError ? renameOptionIssues(error) : error;
  }
  const total = core.basinCellCount(run);
  let range = { start: 0, end: total };
  try {
    if (shard) range = shardRange(total, shard);
  } catch (error) {
    throw error instanceof InputError ? new InputError(error.issues, { source: SOURCE }) : error;
  }
  const threads = workerThreads(io, 'basin', workers, { items: range.end - range.start, unit: 'cells' });
  const progress = startProgress(io, 'basin', { unit: 'rollouts' });
  const onProgress = (done: number, cells: number) => progress.update(done, cells);
  const rows = await core.basinRows(scenario, run, range, { workers: threads, onProgress }).finally(progress.done);

  if (shard) {
    const options = run as unknown as Record<string, unknown>;
    const partial = await makePartial({ command: 'basin', scenario, options, spec: shard, range, total, rows });
    await writePartial(io, outFile, partial);
    return 0;
  }
  const result = await core.finishBasin(scenario, run as unknown as Record<string, unknown>, rows);
  await writeText(io, outFile, json ? basinJson(result, scenario) : renderBasin(scenario, result), 'basin');
  if (plotFile !== undefined) await writePlotFile(io, 'basin', plotFile, result);
  return 0;
}

/** The --json text of a basin result (also what `pronk merge --json` prints). */
export function basinJson(result: BasinResult, scenario: Scenario): string {
  return jsonText('basin', result, modelHeader(scenario));
}

// The core names its options by their API names; on the command line they are the flags.
function renameOptionIssues(error: InputError): InputError {
  const flag: Record<string, string> = {
    heights: '--heights',
    speeds: '--speeds',
    strides: '--strides',
    height_tolerance_m: '--tolerance',
    speed_tolerance_m_per_s: '--tolerance',
    'heights × speeds': '--heights × --speeds',
  };
  return new InputError(
    error.issues.map((issue) => ({ ...issue, path: flag[issue.path] ?? issue.path })),
    { source: SOURCE },
  );
}

// ---------------------------------------------------------------------------------------------
// Option values.

/** `lo:hi:n`: n evenly spaced values from lo to hi inclusive. */
export function parseAxisOption(value: string | boolean | undefined, option: string, unit: string, atLeast?: number): GridAxis {
  const text = typeof value === 'string' ? value : '';
  const parts = text.split(':');
  const bad = (expected: string) => new InputError([{ path: option, expected, found: describeFound(value) }], { source: SOURCE });
  const shape = `lo:hi:n (e.g. ${unit === 'm' ? '0.9:1.5:41' : '3:7:41'}), n values from lo to hi ${unit} inclusive`;
  if (parts.length !== 3 || parts.some((part) => part === '')) throw bad(shape);
  const low = decimalNumber(parts[0]);
  const high = decimalNumber(parts[1]);
  const n = decimalDigits(parts[2]);
  if (!Number.isFinite(low) || !Number.isFinite(high)) throw bad(`${shape}, with lo and hi finite numbers written in decimal`);
  if (!Number.isSafeInteger(n)) throw bad(`${shape}, with n a whole number >= 1 in decimal digits`);
  if (n < 1) throw bad(`${shape}, with n >= 1 (n = 0 is an empty grid)`);
  if (low > high) throw bad(`${shape}, with lo <= hi (the range is inverted)`);
  if (atLeast !== undefined && low < atLeast) throw bad(`${shape}, with lo >= ${atLeast} ${unit}`);
  if (n === 1 && low !== high) throw bad(`lo:lo:1 for a single value, or n >= 2 for a range from lo to hi`);
  if (n > 1 && low === high) throw bad(`${shape}, with lo < hi for n >= 2 (or n = 1 for one value)`);
  return { low, high, count: n };
}

function parseToleranceOption(value: string | boolean | undefined): number | undefined {
  if (value === undefined || typeof value === 'boolean') return undefined;
  const tolerance = decimalNumber(value);
  if (!Number.isFinite(tolerance) || !(tolerance > 0)) {
    throw new InputError([{ path: '--tolerance', expected: expectedDecimal('a number > 0 (m in height, m/s in speed)', value), found: describeFound(value) }], { source: SOURCE });
  }
  return tolerance;
}

// ---------------------------------------------------------------------------------------------
// The terminal view.

const TEXT_WIDTH = 96;
const MAX_MAP_COLUMNS = 120; // wider grids are not drawn (--json lists every cell)
const MAX_MAP_ROWS = 200;
const MAX_RUN_ROWS = 60;
const SYMBOL: Record<string, string> = { converged: '#', wandering: '~', fell: '.' };

export function renderBasin(scenario: Scenario, result: BasinResult): string {
  const { body } = scenario;
  const heights = result.heights_m;
  const speeds = result.speeds_m_per_s;
  const grid =
    result.mode === 'grid'
      ? `apex heights ${plain(heights[0])} to ${plain(heights[heights.length - 1])} m (${heights.length}) x ` +
        `speeds ${plain(speeds[0])} to ${plain(speeds[speeds.length - 1])} m/s (${speeds.length}) = ${count(result.counts.cells, 'cell')}`
      : `apex heights ${plain(heights[0])} to ${plain(heights[heights.length - 1])} m (${count(heights.length, 'cell')}), ` +
        `each at the speed of the start energy ${fixed(result.energy_J, 2)} J`;
  const header = [
    scenario.name ?? 'Unnamed scenario',
    fields([
      ['body', `${plain(body.mass_kg)} kg, leg ${plain(body.leg_length_m)} m, gravity ${plain(body.gravity_m_per_s2)} m/s^2` +
        (body.leg_damping_N_s_per_m > 0 ? `, leg damping ${plain(body.leg_damping_N_s_per_m)} N s/m` : '')],
      ['policy', `${describeAngle(scenario.policy.angle)}; ${describeStiffness(scenario.policy.stiffness, scenario)}`],
      ['ground', "flat (a basin ignores the scenario's terrain)"],
      ['grid', grid],
      ['criterion', `${count(result.strides, 'stride')} per cell; converged when the last two apexes agree within ` +
        `${plain(result.tolerance.height_m)} m and ${plain(result.tolerance.forward_speed_m_per_s)} m/s`],
    ]),
  ].join('\n');

  const view = result.mode === 'grid' ? renderMap(result) : renderRuns(result);
  const { counts } = result;
  const reasons = Object.entries(result.fell_by_reason).map(([code, n]) => `${code} ${n}`).join(', ');
  const summary = [
    `Cells: ${counts.cells}; converged ${counts.converged}, wandering ${counts.wandering}, fell ${counts.fell}` +
      (reasons ? ` (${reasons})` : '') + '.',
  ];
  if (result.mode === 'grid') {
    summary.push(
      `Attracted fraction: ${fixed(result.attracted_fraction, 4)}, an area of ${fixed(result.attracted_area_m_m_per_s, 4)} m x m/s ` +
        `of the sampled ${plain(heights[heights.length - 1] - heights[0])} m x ${plain(speeds[speeds.length - 1] - speeds[0])} m/s.`,
    );
  } else {
    summary.push(
      `Attracted fraction: ${fixed(result.attracted_fraction, 4)}, a length of ${fixed(result.attracted_length_m, 4)} m ` +
        `of the sampled ${plain(heights[heights.length - 1] - heights[0])} m.`,
    );
    summary.push(
      result.largest_attracted_apex_height_m === null
        ? 'No start apex converged.'
        : `Attracted start apexes: ${fixed(result.smallest_attracted_apex_height_m, 4)} to ${fixed(result.largest_attracted_apex_height_m, 4)} m (lowest to largest).`,
    );
    for (const [i, point] of (result.fixed_points ?? []).entries()) {
      summary.push(
        `Fixed point ${i + 1}: apex ${fixed(point.apex_height_m, 4)} m at ${fixed(point.forward_speed_m_per_s, 3)} m/s ` +
          `(${count(point.cells, 'cell')} settled there).`,
      );
    }
  }
  const caution = wrap(result.caution, TEXT_WIDTH, 'Caution: ', '  ');
  return [header, '', view, '', ...summary, '', caution, ''].join('\n');
}

// Grid mode: one text row per height (highest on top), one character per speed.
function renderMap(result: BasinResult): string {
  const heights = result.heights_m;
  const speeds = result.speeds_m_per_s;
  if (speeds.length > MAX_MAP_COLUMNS || heights.length > MAX_MAP_ROWS) {
    return `(the ${heights.length} x ${speeds.length} map is too large to draw here; --json lists every cell)`;
  }
  const labels = heights.map((h) => fixed(h, 3));
  const width = Math.max(...labels.map((label) => label.length), 'height m'.length);
  const lines = [
    `Basin map: # converged, ~ wandering, . fell; rows: start apex height, columns: start speed`,
    `${'height m'.padStart(width)}`,
  ];
  for (let ih = heights.length - 1; ih >= 0; ih--) {
    const row = speeds.map((_, iv) => SYMBOL[result.cells[ih * speeds.length + iv].outcome]).join('');
    lines.push(`${labels[ih].padStart(width)} |${row}|`);
  }
  const first = fixed(speeds[0], 2);
  const last = fixed(speeds[speeds.length - 1], 2);
  const gap = Math.max(1, speeds.length + 2 - first.length - last.length);
  lines.push(`${' '.repeat(width + 1)}${first}${' '.repeat(gap)}${last}  speed m/s`);
  return lines.join('\n');
}

// Energy mode: runs of neighbouring heights with the same outcome.
const RUN_COLUMNS: Column[] = [
  { title: 'from', unit: 'm' },
  { title: 'to', unit: 'm' },
  { title: 'cells', unit: '' },
  { title: 'outcome', unit: '', align: 'left' },
];

function renderRuns(result: BasinResult): string {
  const describe = (i: number) => {
    const cell = result.cells[i];
    if (cell.outcome === 'fell') return `fell (${cell.reason})`;
    if (cell.outcome === 'converged' && cell.fixed_point !== null) return `converged to fixed point ${cell.fixed_point + 1}`;
    return cell.outcome;
  };
  const runs: { from: number; to: number; n: number; what: string }[] = [];
  result.cells.forEach((cell, i) => {
    const what = describe(i);
    const last = runs[runs.length - 1];
    if (last && last.what === what) {
      last.to = cell.apex_height_m;
      last.n++;
    } else runs.push({ from: cell.apex_height_m, to: cell.apex_height_m, n: 1, what });
  });
  const rows: (string[] | string)[] = runs
    .slice(0, MAX_RUN_ROWS)
    .map((run) => [fixed(run.from, 4), fixed(run.to, 4), String(run.n), run.what]);
  if (runs.length > MAX_RUN_ROWS) rows.push(`... ${count(runs.length - MAX_RUN_ROWS, 'more run')} (--json lists every cell) ...`);
  return [`Start apex heights by outcome (neighbouring heights with the same outcome grouped):`, table(RUN_COLUMNS, rows)].join('\n');
}
