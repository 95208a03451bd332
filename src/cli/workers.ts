// `--workers N`, the same for every command that runs on worker threads (basin, scan, robustness,
// deadbeat --compare, optimize): the option, its range, and the cap at the useful number of
// threads. A thread beyond the cores only competes for them, and one beyond the work items has
// nothing to do; each costs its start-up and its own copy of the engine (about 8 MB). So a run
// uses at most min(cores, work items) threads — optimize at most twice the cores, see
// src/worker/node-optimize.ts — and says so on stderr when --workers asked for more. The result
// never depends on the number of threads.

import { availableParallelism } from 'node:os';
import { count } from './format.js';
import type { CliIO, OptionSpec, ParsedCommandLine } from './command.js';
import { parseIntegerOption } from './options.js';
import { status } from './progress.js';

/** The largest --workers accepted (it is then capped at the useful number). */
export const MAX_WORKERS_OPTION = 1024;

/** The option as every such command lists it; `defaults` says what runs without it. */
export function workersOption(defaults = 'the available cores, at most one per work item'): OptionSpec {
  return { type: 'string', valueName: 'N', description: `worker threads (default: ${defaults}); never changes the result` };
}

/** `--workers`: an integer from 1 to MAX_WORKERS_OPTION, or undefined when absent. */
export function parseWorkers(values: ParsedCommandLine['values'], source: string): number | undefined {
  return parseIntegerOption(values.workers, '--workers', 1, MAX_WORKERS_OPTION, source);
}

export interface UsefulWork {
  /** The work items that can run at once (rollouts, cells, restarts). */
  items: number;
  /** Their name, plural: 'rollouts'. */
  unit: string;
  /** The threads the machine runs at once (default: its available parallelism). */
  cores?: number;
  /** How many threads per core are useful (optimize: 2). */
  perCore?: number;
}

/**
 * The threads to run: `requested` (default: every useful one) capped at min(cores × perCore,
 * items), at least 1. A request above the cap is said in a status line naming both numbers.
 */
export function workerThreads(io: CliIO, command: string, requested: number | undefined, work: UsefulWork): number {
  const cores = Math.max(1, work.cores ?? availableParallelism());
  const perCore = work.perCore ?? 1;
  const byCores = cores * perCore;
  const items = Math.max(1, work.items);
  const cap = Math.min(byCores, items);
  if (requested === undefined) return cap;
  if (requested <= cap) return requested;
  const why =
    items <= byCores
      ? `${count(work.items, work.unit.replace(/s$/, ''), work.unit)} to run`
      : `${count(cores, 'core')} available${perCore > 1 ? `, ${perCore} threads per core at most` : ''}`;
  status(io, command, `--workers ${requested} capped at ${cap} (${why}; more threads would only wait)`);
  return cap;
}
