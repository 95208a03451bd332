// `pronk merge FILES... [--json] [--out FILE]`: put the partial results of a sharded run back
// together and print the result exactly as the original command prints it on one machine.

import { UsageError } from '../core/errors.js';
import type { Scenario } from '../core/scenario.js';
import type { PartialResult } from '../core/shard.js';
import type { CliIO, Command, ParsedCommandLine } from './command.js';
import { outOption, writeText } from './shard-output.js';
import { PLOT_OPTION, plotOption } from '../core/figures/plot-file.js';
import { checkOutputs, outputRequest, writePlotFile } from './output-files.js';

// Each mergeable command's two views, the same functions the command itself prints with; loaded
// on demand so that merging one command's results never loads the others'.
interface View {
  json: (scenario: Scenario, result: unknown) => string;
  text: (scenario: Scenario, result: unknown) => string;
}
const VIEWS: Record<string, () => Promise<View>> = {
  basin: async () => {
    const { basinJson, renderBasin } = await import('./basin.js');
    return { json: (s, r) => basinJson(r as never, s), text: (s, r) => renderBasin(s, r as never) };
  },
  scan: async () => {
    const { scanJson, renderScan } = await import('./scan.js');
    return { json: (s, r) => scanJson(r as never, s), text: (s, r) => renderScan(s, r as never) };
  },
  robustness: async () => {
    const { robustnessJson, renderRobustness } = await import('./robustness.js');
    return { json: (s, r) => robustnessJson(r as never, s), text: (s, r) => renderRobustness(s, r as never) };
  },
  recover: async () => {
    const { recoverMonteCarloJson, renderMonteCarlo } = await import('./recover.js');
    return { json: (_s, r) => recoverMonteCarloJson(r as never), text: (s, r) => renderMonteCarlo(s as never, r as never) };
  },
};

// A lateral scenario's scan and basin print with the lateral views (src/cli/lateral.ts).
async function lateralView(command: string): Promise<View> {
  const lateral = await import('./lateral.js');
  if (command === 'basin') return { json: (s, r) => lateral.lateralBasinJson(s as never, r as never), text: (s, r) => lateral.renderLateralBasin(s as never, r as never) };
  if (command === 'scan') return { json: (s, r) => lateral.lateralScanJson(s as never, r as never), text: (s, r) => lateral.renderLateralScan(s as never, r as never) };
  if (command === 'robustness') {
    // the Monte Carlo over random kicks of recover --rollouts, under the robustness header
    const { recoverMonteCarloJson, renderMonteCarlo } = await import('./recover.js');
    return { json: (_s, r) => recoverMonteCarloJson(r as never, 'robustness'), text: (s, r) => renderMonteCarlo(s as never, r as never) };
  }
  const load = VIEWS[command];
  if (!load) throw new Error(`no view for the merged command ${command}`);
  return load();
}

export const mergeCommand: Command = {
  name: 'merge',
  summary: 'merge the partial results of a sharded run (--shard I/N) into the one-machine result',
  usage: 'merge FILES... [--json] [--out FILE] [--plot FILE.svg]',
  details: [
    'Each FILE is a partial result written by a command run with --shard I/N --out FILE. All N shards',
    'of one run must be given (in any order), each once, from the same command, scenario, options and',
    'Pronk version. The output is exactly what the command prints when run on one machine.',
  ].join('\n'),
  arguments: [{ name: 'FILES', description: 'the partial results (JSON), one per shard' }],
  options: {
    json: { type: 'boolean', description: 'print the merged result as JSON on stdout (and nothing else there)' },
    out: { type: 'string', valueName: 'FILE', description: 'write the merged output to FILE instead of stdout' },
    plot: PLOT_OPTION,
  },
  maxPositionals: Number.MAX_SAFE_INTEGER,
  run: runMerge,
};

async function runMerge({ values, positionals }: ParsedCommandLine, io: CliIO): Promise<number> {
  if (positionals.length === 0) {
    throw new UsageError(`pronk merge: no FILES given (usage: pronk ${mergeCommand.usage})`);
  }
  const out = outOption(values);
  const plot = await plotOption(values.plot);
  const [outFile, plotFile] = await checkOutputs(
    [outputRequest('--out', out), outputRequest('--plot', plot)],
    positionals.map((path) => ({ path, what: 'the partial result' })),
    { source: 'pronk merge' },
  );
  const parts: { source: string; partial: PartialResult }[] = [];
  for (const file of positionals) parts.push({ source: file, partial: (await readPartialFile(file)) as PartialResult });
  const { mergePartials } = await import('../core/merge.js');
  const merged = await mergePartials(parts);
  const load = Object.hasOwn(VIEWS, merged.command) ? VIEWS[merged.command] : undefined;
  if (!load) throw new Error(`no view for the merged command ${merged.command}`);
  const view = (merged.scenario as { model?: string }).model === 'lateral' ? await lateralView(merged.command) : await load();
  const text = values.json === true ? view.json(merged.scenario, merged.result) : view.text(merged.scenario, merged.result);
  await writeText(io, outFile, text, 'merge');
  if (plotFile !== undefined) await writePlotFile(io, merged.command, plotFile, merged.result, `pronk merge (${merged.command})`);
  return 0;
}

async function readPartialFile(file: string): Promise<unknown> {
  const { readInputFile } = await import('../core/input-file.js');
  return readInputFile(file, 'partial result');
}
