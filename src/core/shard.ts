// Splitting a list of independent rollouts into shards (`--shard i/n`) and putting
// the pieces back. A shard is a contiguous range of the full, deterministic list
// of rollouts; merged in order, the rows are exactly those of one run, so every
// statistic computed from them afterwards is bit-identical.

import { InputError } from './errors.js';

export interface ShardSpec {
  /** 1-based shard number, as typed on the command line (`--shard 2/8`). */
  index: number;
  count: number;
}

export interface ShardRange {
  start: number;
  end: number; // exclusive
}

/** Parse `i/n` (1 <= i <= n). */
export function parseShard(text: string, option = '--shard'): ShardSpec {
  const m = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(text);
  const index = m ? Number(m[1]) : NaN;
  const count = m ? Number(m[2]) : NaN;
  if (!m || !(count >= 1) || !(index >= 1) || index > count || !Number.isSafeInteger(count)) {
    throw new InputError([{ path: option, expected: 'i/n with 1 <= i <= n, e.g. 3/8', found: JSON.stringify(text) }]);
  }
  return { index, count };
}

/**
 * The rollouts of shard `spec` among `total`: contiguous, sizes differing by at most one. More
 * shards than items would leave empty shards (and a merge that has to account for each of them),
 * so it is refused, naming both numbers.
 */
export function shardRange(total: number, spec: ShardSpec, option = '--shard'): ShardRange {
  if (spec.count > Math.max(1, total)) {
    throw new InputError([
      {
        path: option,
        expected: `at most ${total} shards (one item each at most: the run has ${total} ${total === 1 ? 'item' : 'items'})`,
        found: `${spec.count} shards (${spec.index}/${spec.count})`,
      },
    ]);
  }
  const i = spec.index - 1;
  const base = Math.floor(total / spec.count);
  const extra = total % spec.count;
  const start = i * base + Math.min(i, extra);
  return { start, end: start + base + (i < extra ? 1 : 0) };
}

/**
 * The most bytes a partial result may hold (src/core/input-file.ts reads them back up to this;
 * kept here so that this module needs no other). A shard whose rows could outgrow it is refused
 * before it runs, with the number of shards that would fit.
 */
export const PARTIAL_BYTES_LIMIT = 500 * 1024 * 1024;

/**
 * Refuses shard `spec` of `range` when `bytesPerItem` (an upper bound of one row's JSON) times its
 * items could pass PARTIAL_BYTES_LIMIT, naming the shards that would fit.
 */
export function checkShardSize(total: number, spec: ShardSpec, range: ShardRange, bytesPerItem: number, unit: string, option = '--shard'): void {
  const perShard = Math.floor(PARTIAL_BYTES_LIMIT / bytesPerItem);
  const items = range.end - range.start;
  if (items <= perShard) return;
  const needed = Math.ceil(total / perShard);
  throw new InputError([
    {
      path: option,
      expected: `shards of at most ${perShard} ${unit} (a partial result is read back up to 500 MiB, at most ${bytesPerItem} bytes per item): at least ${needed} shards of this run`,
      found: `${items} ${unit} in shard ${spec.index}/${spec.count}`,
    },
  ]);
}

// ---------------------------------------------------------------------------------------------
// Partial results: what `--shard i/n` writes and `pronk merge` reads.

export const PARTIAL_FORMAT = 'pronk-partial';
export const PARTIAL_FORMAT_VERSION = 1;

export interface PartialResult<Row = unknown> {
  format: typeof PARTIAL_FORMAT;
  format_version: number;
  /** The command that made it: 'basin', 'scan', 'robustness'. */
  command: string;
  pronk_version: string;
  /** contentHash of the validated scenario: every shard of one run must agree. */
  scenario_sha256: string;
  /** The validated scenario itself, so that merging needs no other file. */
  scenario: unknown;
  /** The options that define the full list of rollouts (grid, seeds, counts): must agree too. */
  options: Record<string, unknown>;
  shard: { index: number; count: number; start: number; end: number; total: number };
  /** One entry per item of the shard's range, in order; numbers survive JSON exactly. */
  rows: Row[];
}

const MISSING_SHARDS_LISTED = 20;

/**
 * Put shards back together: checks that they come from one run (command, scenario, options,
 * shard count), that each shard is there exactly once and that the ranges tile the whole list;
 * returns the rows of all shards in order. Problems are InputErrors naming the file.
 */
export function joinShards<Row>(parts: { source: string; partial: PartialResult<Row> }[]): {
  command: string;
  scenario: unknown;
  options: Record<string, unknown>;
  rows: Row[];
} {
  if (parts.length === 0) throw new InputError([{ path: 'FILES', expected: 'one or more partial results', found: 'none' }]);
  const issues: { path: string; expected: string; found: string }[] = [];
  for (const { source, partial } of parts) {
    if (partial?.format !== PARTIAL_FORMAT) {
      issues.push({ path: source, expected: `a partial result (format "${PARTIAL_FORMAT}")`, found: JSON.stringify(partial?.format ?? null) });
    } else if (partial.format_version !== PARTIAL_FORMAT_VERSION) {
      issues.push({ path: source, expected: `format_version ${PARTIAL_FORMAT_VERSION}`, found: String(partial.format_version) });
    }
  }
  if (issues.length) throw new InputError(issues);
  const first = parts[0].partial;
  const key = (p: PartialResult<Row>) => [p.command, p.scenario_sha256, JSON.stringify(p.options), p.shard.count, p.shard.total].join('|');
  for (const { source, partial } of parts.slice(1)) {
    if (key(partial) !== key(first)) {
      issues.push({
        path: source,
        expected: `a shard of the same run as ${parts[0].source} (command ${first.command}, same scenario, options and shard count)`,
        found: `command ${partial.command}, scenario ${partial.scenario_sha256.slice(0, 12)}, ${partial.shard.count} shards`,
      });
    }
  }
  const { count, total } = first.shard;
  if (!(Number.isSafeInteger(count) && count >= 1 && count <= Math.max(1, total))) {
    issues.push({ path: parts[0].source, expected: `at most ${total} shards (one item each at most)`, found: `${count} shards` });
  }
  for (const { source, partial } of parts) {
    if (!(Number.isSafeInteger(partial.shard.index) && partial.shard.index >= 1 && partial.shard.index <= count)) {
      issues.push({ path: source, expected: `a shard number from 1 to ${count}`, found: String(partial.shard.index) });
    }
  }
  if (issues.length) throw new InputError(issues);
  const byIndex = new Map<number, { source: string; partial: PartialResult<Row> }>();
  for (const part of parts) {
    const seen = byIndex.get(part.partial.shard.index);
    if (seen) issues.push({ path: part.source, expected: `shard ${part.partial.shard.index} once`, found: `also in ${seen.source}` });
    byIndex.set(part.partial.shard.index, part);
  }
  // O(files given), whatever count a file claims: the first missing shards are found within
  // (files + listed) steps, and the number missing is the count less the distinct shards given
  const missing: number[] = [];
  for (let i = 1; i <= first.shard.count && missing.length < MISSING_SHARDS_LISTED; i++) if (!byIndex.has(i)) missing.push(i);
  const missingCount = first.shard.count - byIndex.size;
  if (missingCount) {
    const listed = missingCount > missing.length ? `${missing.join(', ')}, … (${missingCount} in all)` : missing.join(', ');
    issues.push({ path: 'FILES', expected: `all ${first.shard.count} shards`, found: `shard ${listed} missing` });
  }
  if (issues.length) throw new InputError(issues);
  const rows: Row[] = [];
  let at = 0;
  for (let i = 1; i <= first.shard.count; i++) {
    const { source, partial } = byIndex.get(i)!;
    if (partial.shard.start !== at || partial.rows.length !== partial.shard.end - partial.shard.start) {
      throw new InputError([{ path: source, expected: `rows ${at} onward`, found: `rows ${partial.shard.start} to ${partial.shard.end} holding ${partial.rows.length}` }]);
    }
    for (const row of partial.rows) rows.push(row); // not push(...rows): a spread of 10⁵ rows overflows the stack
    at = partial.shard.end;
  }
  if (at !== first.shard.total) {
    throw new InputError([{ path: 'FILES', expected: `${first.shard.total} rows in all`, found: String(at) }]);
  }
  return { command: first.command, scenario: first.scenario, options: first.options, rows };
}
