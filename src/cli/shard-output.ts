// Writing what a command run with `--shard i/n` produces: a PartialResult (src/core/shard.ts) as
// JSON, to `--out FILE` or, without it, to stdout. `pronk merge` reads these files back. Shared by
// every command that can be sharded (basin, scan, robustness).

import { InputError } from '../core/errors.js';
import { checkOutputs, writeOutput, type CheckedOutput } from './output-files.js';
import { status } from './progress.js';
import {
  PARTIAL_FORMAT,
  PARTIAL_FORMAT_VERSION,
  parseShard,
  shardRange,
  type PartialResult,
  type ShardRange,
  type ShardSpec,
} from '../core/shard.js';
import { PRONK_VERSION, contentHash } from '../core/version.js';
import type { CliIO, OptionSpec, ParsedCommandLine } from './command.js';

/** The two options a shardable command adds to its own. */
export const SHARD_OPTIONS: Record<string, OptionSpec> = {
  shard: {
    type: 'string',
    valueName: 'I/N',
    description: 'run only shard I of N (a contiguous part of the work) and write a partial result for `pronk merge`',
  },
  out: {
    type: 'string',
    valueName: 'FILE',
    description: 'write the output to FILE instead of stdout (with --shard: the partial result)',
  },
};

/** The `--shard` option parsed, or undefined when absent. */
export function shardOption(values: ParsedCommandLine['values']): ShardSpec | undefined {
  const text = values.shard;
  if (text === undefined) return undefined;
  if (typeof text !== 'string') {
    throw new InputError([{ path: '--shard', expected: 'i/n with 1 <= i <= n, e.g. 3/8', found: 'no value' }]);
  }
  return parseShard(text, '--shard');
}

/** The `--out` option: a non-empty file name, or undefined when absent. */
export function outOption(values: ParsedCommandLine['values']): string | undefined {
  const out = values.out;
  if (out === undefined) return undefined;
  if (typeof out !== 'string' || out.trim() === '') {
    throw new InputError([{ path: '--out', expected: 'a file name', found: JSON.stringify(out ?? '') }]);
  }
  return out;
}

/**
 * A PartialResult for shard `spec` of a run over `total` items, stamped with Pronk's version and
 * the scenario's content hash. `rows` must be exactly the rows of `range` (shardRange(total, spec)).
 */
export async function makePartial<Row>(args: {
  command: string;
  scenario: unknown;
  options: Record<string, unknown>;
  spec: ShardSpec;
  range: ShardRange;
  total: number;
  rows: Row[];
}): Promise<PartialResult<Row>> {
  const { command, scenario, options, spec, range, total, rows } = args;
  if (rows.length !== range.end - range.start) {
    throw new Error(`shard ${spec.index}/${spec.count} holds ${rows.length} rows, expected ${range.end - range.start}`);
  }
  return {
    format: PARTIAL_FORMAT,
    format_version: PARTIAL_FORMAT_VERSION,
    command,
    pronk_version: PRONK_VERSION,
    scenario_sha256: await contentHash(scenario),
    scenario,
    options,
    shard: { index: spec.index, count: spec.count, start: range.start, end: range.end, total },
    rows,
  };
}

export { shardRange };

/**
 * Write a partial result as JSON to the checked `--out` file (with a one-line note on stderr) or,
 * without one, to stdout.
 */
export async function writePartial(io: CliIO, out: CheckedOutput | undefined, partial: PartialResult): Promise<void> {
  const text = `${JSON.stringify(partial)}\n`;
  await writeText(io, out, text);
  if (out !== undefined) {
    const { index, count, start, end, total } = partial.shard;
    status(io, partial.command, `shard ${index}/${count} (items ${start} to ${end - 1} of ${total}) written to ${out.path}`);
  }
}

/**
 * Write `text` to the file `out` (through a temporary file and a rename: src/cli/output-files.ts),
 * or to stdout when `out` is undefined; with `command`, a file written is said in a status line on
 * stderr. `out` is an output checked before the work began; a plain path is checked now (as the
 * --out of a command with no inputs).
 */
export async function writeText(io: CliIO, out: CheckedOutput | string | undefined, text: string, command?: string): Promise<void> {
  if (out === undefined) {
    io.stdout.write(text);
    return;
  }
  const [output] = typeof out === 'string' ? await checkOutputs([{ option: '--out', path: out }], []) : [out];
  await writeOutput(output!, text);
  if (command !== undefined) status(io, command, `result written to ${output!.path}`);
}
