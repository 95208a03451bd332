// `pronk merge`: the partial results of a sharded run (`--shard i/n`) put back together and handed
// to the command's own finisher, the same function a one-machine run ends with, so the merged
// result is exactly the one-machine result.

import { InputError, describeFound, type InputIssue } from './errors.js';
import { modelKindOf } from './models/kind.js';
import { parseLateralScenario } from './models/lateral.js';
import { parseScenario, type Scenario } from './scenario.js';
import { PARTIAL_FORMAT, PARTIAL_FORMAT_VERSION, joinShards, type PartialResult } from './shard.js';
import { contentHash } from './version.js';
import type { RobustnessOptions } from './analysis/robustness.js';

export type Finisher = (scenario: Scenario, options: Record<string, unknown>, rows: unknown[]) => Promise<unknown>;

// The finisher of each command that can be sharded, loaded on demand: the same function the
// command's one-machine run ends with (each takes the validated scenario, the canonical options
// and the rows of every shard in order).
const FINISHERS: Record<string, () => Promise<Finisher>> = {
  basin: async () => (await import('./analysis/basin.js')).finishBasin as Finisher,
  scan: async () => (await import('./analysis/scan.js')).finishScan as unknown as Finisher,
  robustness: async () => (await import('./analysis/robustness.js')).finishRobustness as unknown as Finisher,
  recover: async () => (await import('./analysis/recover.js')).finishRecoverRun as unknown as Finisher,
};

// The number of items (cells, rollouts) the run's options describe, each options check the
// command's own: a partial result's `shard.total` must equal it, so what a file claims is bounded
// by what the command itself accepts (MAX_BASIN_CELLS, MAX_SCAN_CELLS, MAX_ROLLOUTS).
const ITEM_COUNTS: Record<string, (scenario: Scenario, options: Record<string, unknown>) => Promise<number>> = {
  basin: async (_scenario, options) => {
    const { basinCellCount, checkBasinRunOptions } = await import('./analysis/basin.js');
    return basinCellCount(checkBasinRunOptions(options));
  },
  scan: async (_scenario, options) => {
    const { normalizeScanOptions } = await import('./analysis/scan.js');
    const { x, y } = normalizeScanOptions(options);
    return x.n * y.n;
  },
  robustness: async (scenario, options) => {
    const { canonicalRobustnessOptions } = await import('./analysis/robustness.js');
    return canonicalRobustnessOptions(scenario, options as unknown as RobustnessOptions).rollouts;
  },
  recover: async (_scenario, options) => {
    const { checkRecoverRunOptions } = await import('./analysis/recover.js');
    return checkRecoverRunOptions(options).kicks.rollouts;
  },
};

// A lateral scenario's scan and basin have their own finishers and options (analysis/lateral-*.ts).
const LATERAL_FINISHERS: Record<string, () => Promise<Finisher>> = {
  basin: async () => (await import('./analysis/lateral-basin.js')).finishLateralBasinMerge as unknown as Finisher,
  scan: async () => (await import('./analysis/lateral-scan.js')).finishLateralScanMerge as unknown as Finisher,
  recover: FINISHERS.recover,
  // robustness on a lateral scenario is the Monte Carlo over random kicks of recover --rollouts
  robustness: FINISHERS.recover,
};
const LATERAL_ITEM_COUNTS: Record<string, (scenario: Scenario, options: Record<string, unknown>) => Promise<number>> = {
  basin: async (_scenario, options) => {
    const { checkLateralBasinRun, lateralBasinCellCount } = await import('./analysis/lateral-basin.js');
    return lateralBasinCellCount(checkLateralBasinRun(options));
  },
  scan: ITEM_COUNTS.scan,
  recover: ITEM_COUNTS.recover,
  robustness: ITEM_COUNTS.recover,
};

export const MERGEABLE_COMMANDS: readonly string[] = Object.keys(FINISHERS);

export interface MergedResult {
  command: string;
  scenario: Scenario;
  options: Record<string, unknown>;
  /** Exactly what the command returns when run on one machine. */
  result: unknown;
}

/**
 * Merge the partial results of one run: every shard exactly once, all from the same command,
 * scenario, options, shard count and Pronk version. Problems are InputErrors naming the file.
 */
export async function mergePartials(parts: { source: string; partial: PartialResult }[]): Promise<MergedResult> {
  const issues: InputIssue[] = [];
  for (const { source, partial } of parts) issues.push(...partialShapeIssues(source, partial));
  if (issues.length) throw new InputError(issues);

  // The run the first file describes, checked before anything is joined: its command, its
  // scenario and the number of items its options give, which every claim of the files must match.
  const first = parts[0];
  const command = first.partial.command;
  const lateral = modelKindOf(first.partial.scenario) === 'lateral';
  const finishers = lateral ? LATERAL_FINISHERS : FINISHERS;
  const load = Object.hasOwn(finishers, command) ? finishers[command] : undefined;
  if (!load) {
    throw new InputError([
      { path: `${first.source}: command`, expected: `a command that can be merged (${MERGEABLE_COMMANDS.join(', ')})`, found: describeFound(command) },
    ]);
  }
  if ((await contentHash(first.partial.scenario)) !== first.partial.scenario_sha256) {
    throw new InputError([
      { path: `${first.source}: scenario`, expected: `the scenario whose hash is scenario_sha256`, found: 'a scenario with another hash (the file was edited)' },
    ]);
  }
  // a lateral scenario (recover) has its own type and validator
  const raw = first.partial.scenario;
  const scenario =
    modelKindOf(raw) === 'lateral'
      ? (parseLateralScenario(raw, { source: `${first.source}: scenario` }) as unknown as Scenario)
      : parseScenario(raw, { source: `${first.source}: scenario`, command: `merge (${command})` });
  let items: number;
  try {
    items = await (lateral ? LATERAL_ITEM_COUNTS : ITEM_COUNTS)[command](scenario, first.partial.options);
  } catch (error) {
    if (error instanceof InputError) {
      // each field under options, named once (basin's checks already say options.heights, scan's
      // name its flags: --x is the file's options.x)
      const under = (path: string) => {
        const field = path.replace(/^--/, '');
        return field === '' ? 'options' : field.startsWith('options.') ? field : `options.${field}`;
      };
      throw new InputError(
        error.issues.map((issue) => ({ ...issue, path: under(issue.path) })),
        { source: first.source },
      );
    }
    throw error;
  }
  if (first.partial.shard.total !== items) {
    throw new InputError([
      { path: `${first.source}: shard.total`, expected: `${items} (the ${command} run its options describe has ${items} items)`, found: describeFound(first.partial.shard.total) },
    ]);
  }

  let joined: ReturnType<typeof joinShards>;
  try {
    joined = joinShards(parts);
  } catch (error) {
    // A run-wide problem (a shard missing, rows not tiling the run) names no single file: list them.
    if (!(error instanceof InputError)) throw error;
    const given = parts.map(({ source, partial }) => `${source} is ${partial.shard.index}/${partial.shard.count}`).join(', ');
    throw new InputError(error.issues.map((issue) => (issue.path === 'FILES' ? { ...issue, found: `${issue.found} (given: ${given})` } : issue)));
  }
  for (const { source, partial } of parts.slice(1)) {
    if (partial.pronk_version !== first.partial.pronk_version) {
      issues.push({
        path: `${source}: pronk_version`,
        expected: `${first.partial.pronk_version} (as in ${first.source}; every shard must come from one Pronk version)`,
        found: describeFound(partial.pronk_version),
      });
    }
  }
  if (issues.length) throw new InputError(issues);
  const finish = await load();
  let result: unknown;
  try {
    result = await finish(scenario, joined.options, joined.rows);
  } catch (error) {
    if (error instanceof InputError) {
      const files = parts.map((part) => part.source).join(', ');
      throw new InputError(error.issues, { source: `partial results ${files}` });
    }
    throw error;
  }
  return { command: joined.command, scenario, options: joined.options, result };
}

// Enough of the file's structure checked that joinShards can read it safely.
function partialShapeIssues(source: string, partial: unknown): InputIssue[] {
  const p = partial as Partial<PartialResult> | null;
  if (typeof p !== 'object' || p === null || Array.isArray(p) || p.format !== PARTIAL_FORMAT) {
    const format = typeof p === 'object' && p !== null && !Array.isArray(p) ? p.format : undefined;
    return [{
      path: source,
      expected: `a partial result written by --shard (format "${PARTIAL_FORMAT}")`,
      found: format === undefined ? `a file without "format" (${describeFound(partial)})` : `format ${describeFound(format)}`,
    }];
  }
  if (p.format_version !== PARTIAL_FORMAT_VERSION) {
    return [{ path: `${source}: format_version`, expected: String(PARTIAL_FORMAT_VERSION), found: describeFound(p.format_version) }];
  }
  const issues: InputIssue[] = [];
  const need = (ok: boolean, field: string, expected: string, value: unknown) => {
    if (!ok) issues.push({ path: `${source}: ${field}`, expected, found: describeFound(value) });
  };
  const isInteger = (x: unknown): x is number => typeof x === 'number' && Number.isSafeInteger(x);
  need(typeof p.command === 'string', 'command', 'a command name', p.command);
  need(typeof p.pronk_version === 'string', 'pronk_version', 'a version string', p.pronk_version);
  need(typeof p.scenario_sha256 === 'string' && /^[0-9a-f]{64}$/.test(p.scenario_sha256), 'scenario_sha256', 'a SHA-256 in hex', p.scenario_sha256);
  need(typeof p.scenario === 'object' && p.scenario !== null, 'scenario', 'the scenario object', p.scenario);
  need(typeof p.options === 'object' && p.options !== null && !Array.isArray(p.options), 'options', 'an object', p.options);
  need(Array.isArray(p.rows), 'rows', 'an array', p.rows);
  const shard = p.shard as Partial<PartialResult['shard']> | undefined;
  const shardOk =
    typeof shard === 'object' && shard !== null &&
    isInteger(shard.count) && shard.count >= 1 &&
    isInteger(shard.index) && shard.index >= 1 && shard.index <= shard.count &&
    isInteger(shard.total) && shard.total >= 0 &&
    isInteger(shard.start) && isInteger(shard.end) && shard.start >= 0 && shard.start <= shard.end && shard.end <= shard.total;
  need(shardOk, 'shard', '{index, count, start, end, total} with 1 <= index <= count and 0 <= start <= end <= total', shard);
  if (shardOk && shard.count! > Math.max(1, shard.total!)) {
    issues.push({ path: `${source}: shard.count`, expected: `at most ${shard.total} shards (one item each at most: the run has ${shard.total} items)`, found: String(shard.count) });
  }
  return issues;
}
