// `pronk scan [FILE] --x PATH:LO:HI:N --y PATH:LO:HI:N [--samples N] [--workers N]
// [--shard I/N --out FILE] [--json]`: where in a plane of two parameters the return map has a
// stable fixed point (a stability-region map).

import { anyScenarioArgument } from './scenario-argument.js';
import type { ScanOptions, ScanResult } from '../core/analysis/scan.js';
import { InputError, UsageError } from '../core/errors.js';
import { jsonText, modelHeader } from '../core/json-output.js';
import { startProgress } from './progress.js';
import { type Scenario } from '../core/scenario.js';
import { SAFETY_CAUTION } from '../core/safety.js';
import { fields, fixed, plain, wrap } from './format.js';
import type { CliIO, Command, ParsedCommandLine } from './command.js';
import { parseIntegerOption } from './options.js';
import { parseWorkers, workerThreads, workersOption } from './workers.js';
import { checkShardSize } from '../core/shard.js';
import { SHARD_OPTIONS, outOption, shardOption, shardRange, writePartial, writeText } from './shard-output.js';
import { PLOT_OPTION, plotOption } from '../core/figures/plot-file.js';
import { checkOutputs, outputRequest, scenarioInput, writePlotFile } from './output-files.js';
import { describeAngle, describeStiffness } from './describe.js';

const DEMO_SOURCE = 'scenarios/demo.json';
const SOURCE = 'pronk scan';
const TEXT_WIDTH = 96;

export const scanCommand: Command = {
  name: 'scan',
  summary: 'stability-region map: fixed points of the return map over a grid of two scenario parameters',
  usage: 'scan [FILE] --x PATH:LO:HI:N --y PATH:LO:HI:N [--samples N] [--workers N] [--shard I/N --out FILE] [--plot FILE.svg] [--json]',
  details: [
    'PATH is a dotted path to a numeric field of the scenario, e.g. policy.angle.attack_deg,',
    'body.leg_stiffness_N_per_m, policy.angle.rate_deg_per_s; N values from LO to HI (inclusive; N = 1',
    "gives LO alone); the two PATHs must differ. Every cell runs the return map (as 'pronk map' does on the",
    "scenario with that cell's two values) at that cell's own start energy, on flat ground, and is none (no",
    'fixed point), unstable (fixed points, none with |slope| < 1) or stable (with the stable fixed point\'s',
    'height and slope). Cells are listed row-major, y outer: cells[iy * nx + ix]. Results do not depend on',
    '--workers; shards merge with pronk merge. A "lateral" scenario: each cell\'s periodic gaits at its own',
    "start energy (as 'pronk map' finds them), none, unstable, neutral or stable by the most stable gait.",
  ].join('\n'),
  arguments: [{ name: 'FILE', description: `scenario file (JSON); without it, the built-in demo (${DEMO_SOURCE})` }],
  options: {
    json: { type: 'boolean', description: 'print the result as JSON on stdout (and nothing else there)' },
    x: { type: 'string', valueName: 'PATH:LO:HI:N', description: 'first parameter (columns): N values of the field PATH from LO to HI' },
    y: { type: 'string', valueName: 'PATH:LO:HI:N', description: 'second parameter (rows): N values of the field PATH from LO to HI' },
    samples: { type: 'string', valueName: 'N', description: "samples of each cell's map (default 201)" },
    workers: workersOption(),
    ...SHARD_OPTIONS,
    plot: PLOT_OPTION,
  },
  maxPositionals: 1,
  run: runScan,
};

async function runScan({ values, positionals }: ParsedCommandLine, io: CliIO): Promise<number> {
  const json = values.json === true;
  for (const option of ['x', 'y'] as const) {
    if (typeof values[option] !== 'string') {
      throw new UsageError(`pronk scan: --${option} PATH:LO:HI:N is required (usage: pronk ${scanCommand.usage})`);
    }
  }
  const samples = parseIntegerOption(values.samples, '--samples', 2, 100_000, SOURCE);
  const workers = parseWorkers(values, SOURCE);
  const shard = withSource(() => shardOption(values));
  const out = withSource(() => outOption(values));
  const plot = await withSourceAsync(() => plotOption(values.plot, { shard: shard !== undefined }));
  const core = await import('../core/analysis/scan.js');
  const options: ScanOptions = withSource(() =>
    core.normalizeScanOptions({ x: values.x, y: values.y, ...(samples === undefined ? {} : { samples }) }),
  );

  const file = positionals[0];
  const [outFile, plotFile] = await checkOutputs([outputRequest('--out', out), outputRequest('--plot', plot)], [scenarioInput(file)], { source: SOURCE });
  const any = await anyScenarioArgument(file, io, 'scan');
  if (any.kind === 'lateral') {
    // --workers is accepted and changes nothing (the lateral scan runs in this thread)
    const refused = ['samples'].filter((k) => values[k] !== undefined);
    if (refused.length) {
      throw new InputError(
        [{ path: `--${refused[0]}`, expected: 'none with a "lateral" scenario (its scan takes --x, --y, --workers, --shard, --out, --plot, --json)', found: String(values[refused[0]]) }],
        { source: SOURCE },
      );
    }
    const { runLateralScan } = await import('./lateral.js');
    return withSourceAsync(() => runLateralScan(any.scenario, io, { json, options, shard, outFile, plotFile }));
  }
  const scenario = any.scenario;

  // loaded on demand so that --help and input errors never wait for the WASM engine
  const { runBatchParallel } = await import('../worker/pool.js');
  // the sampling batch, most of the work, runs every cell's samples at once
  const cells = options.x.n * options.y.n;
  const range = shard ? withSource(() => shardRange(cells, shard)) : { start: 0, end: cells };
  // a cell's row is about 400 to 600 bytes of JSON, more with several fixed points
  if (shard) withSource(() => checkShardSize(cells, shard, range, 1024, 'cells'));
  const threads = workerThreads(io, 'scan', workers, { items: (range.end - range.start) * options.samples, unit: 'rollouts' });
  // A scan runs several batches (the sampled maps, then the fixed points' polish and slopes): the
  // progress shows the batch under way; the first, the sampling, is most of the work.
  const progress = startProgress(io, 'scan', { unit: 'rollouts' });
  const onProgress = (done: number, total: number) => progress.update(done, total);
  const run = { runBatch: (req: Parameters<typeof runBatchParallel>[0]) => runBatchParallel(req, { workers: threads, onProgress }) };
  if (shard) {
    const partial = await withSourceAsync(() => core.scanShard(scenario, options, shard, run)).finally(progress.done);
    await writePartial(io, outFile, partial);
    return 0;
  }
  const result = await withSourceAsync(() => core.scan(scenario, options, run)).finally(progress.done);
  await writeText(io, outFile, json ? scanJson(result, scenario) : renderScan(scenario, result), 'scan');
  if (plotFile !== undefined) await withSourceAsync(() => writePlotFile(io, 'scan', plotFile, result));
  return 0;
}

function withSource<T>(f: () => T): T {
  try {
    return f();
  } catch (error) {
    if (error instanceof InputError && error.source === undefined) throw new InputError(error.issues, { source: SOURCE });
    throw error;
  }
}

async function withSourceAsync<T>(f: () => Promise<T>): Promise<T> {
  try {
    return await f();
  } catch (error) {
    if (error instanceof InputError && error.source === undefined) throw new InputError(error.issues, { source: SOURCE });
    throw error;
  }
}

/** The --json text of a scan result (also what `pronk merge --json` prints). */
export function scanJson(result: ScanResult, scenario: Scenario): string {
  return jsonText('scan', result, modelHeader(scenario));
}

// ---------------------------------------------------------------------------------------------
// The terminal view: the stability map as characters, then the stable cells' fixed points.

const MAX_MAP_COLUMNS = 120; // wider grids are not drawn (--json lists every cell)
const MAX_MAP_ROWS = 200;
const MAX_LISTED = 40;
const SYMBOL: Record<string, string> = { stable: '#', unstable: 'o', none: '.' };

export function renderScan(scenario: Scenario, result: ScanResult): string {
  const nx = result.x.values.length;
  const ny = result.y.values.length;
  const lines: string[] = [
    scenario.name ?? 'Unnamed scenario',
    fields([
      ['policy', `${describeAngle(scenario.policy.angle)}; ${describeStiffness(scenario.policy.stiffness, scenario)}`],
      [
        'energy',
        result.cell_energy_range_J[0] === result.cell_energy_range_J[1]
          ? `${fixed(result.energy_J, 3)} J in every cell (the scenario's start), flat ground at 0 m`
          : `each cell's own start energy, ${fixed(result.cell_energy_range_J[0], 3)} to ${fixed(result.cell_energy_range_J[1], 3)} J ` +
            `(the scenario's: ${fixed(result.energy_J, 3)} J), flat ground at 0 m`,
      ],
      ['x', `${result.x.path}: ${nx} values from ${plain(result.x.values[0])} to ${plain(result.x.values[nx - 1])}`],
      ['y', `${result.y.path}: ${ny} values from ${plain(result.y.values[0])} to ${plain(result.y.values[ny - 1])}`],
      ['cells', `${result.counts.stable} stable, ${result.counts.unstable} unstable only, ${result.counts.none} without a fixed point`],
    ]),
    '',
  ];
  if (nx <= MAX_MAP_COLUMNS && ny <= MAX_MAP_ROWS) {
    const labels = result.y.values.map((v) => plain(v));
    const width = Math.max(...labels.map((l) => l.length));
    lines.push(`Stability map (# stable, o unstable only, . no fixed point); rows ${result.y.path}, columns ${result.x.path}:`);
    for (let iy = ny - 1; iy >= 0; iy--) {
      let row = '';
      for (let ix = 0; ix < nx; ix++) row += SYMBOL[result.cells[iy * nx + ix].class];
      lines.push(`  ${labels[iy].padStart(width)} |${row}`);
    }
    lines.push(`  ${' '.repeat(width)} +${'-'.repeat(nx)}`, `  ${' '.repeat(width)}  ${plain(result.x.values[0])} .. ${plain(result.x.values[nx - 1])}`);
  } else {
    lines.push(`(the ${nx} x ${ny} grid is too large to draw; --json lists every cell)`);
  }
  const stable = result.cells.filter((c) => c.class === 'stable');
  if (stable.length) {
    lines.push('', 'Stable cells (x, y: fixed point height, slope):');
    for (const c of stable.slice(0, MAX_LISTED)) {
      const measure =
        c.stable_slope === null && c.stable_spectral_radius != null
          ? `largest |eigenvalue| ${fixed(c.stable_spectral_radius, 4)}`
          : `slope ${fixed(c.stable_slope, 4)}`;
      lines.push(`  ${plain(c.x)}, ${plain(c.y)}: ${fixed(c.stable_apex_height_m, 6)} m, ${measure}`);
    }
    if (stable.length > MAX_LISTED) lines.push(`  ... ${stable.length - MAX_LISTED} more (--json lists every cell)`);
  }
  lines.push('', wrap(`Note: ${result.stability_note}.`, TEXT_WIDTH), '', wrap(SAFETY_CAUTION, TEXT_WIDTH, 'Caution: ', '  '), '');
  return lines.join('\n');
}
