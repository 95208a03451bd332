// A study's policy search in Node: the environment-neutral search (src/core/optimize/search.ts)
// over worker threads (optimize-worker.ts, through comlink). At most `workers` jobs run at once;
// threads are kept between jobs (each spends about a second loading its modules), except that a
// restart of a method that draws random numbers gets a thread that has run no NLopt yet, which
// retires after it (one seed → one result: see nlopt.ts). Cancel is an Int32 on a
// SharedArrayBuffer per job, polled at every evaluation and between chunks of rollouts.

import * as Comlink from 'comlink';
import nodeEndpoint from 'comlink/dist/esm/node-adapter.mjs';
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import { drawsRandomNumbers } from '../core/optimize/nlopt.js';
import type { RestartProgress, RestartResult, RestartTask } from '../core/optimize/restart.js';
import type { ScoreResult, ScoreTask } from '../core/optimize/score.js';
import { searchStudy, SearchError, type OptimizationResult, type RunnerControl, type SearchOptions, type SearchRunner } from '../core/optimize/search.js';
import type { Study } from '../core/optimize/study.js';
import type { OptimizeWorkerApi } from './optimize-worker.js';
import { activityBuffer } from './batch-helper.js';
import { compiledWorkerUrl } from './paths.js';

export { SearchError, type OptimizationResult, type SearchProgress, type SearchOptions } from '../core/optimize/search.js';

export interface NodeSearchOptions extends SearchOptions {
  /** Worker threads (default: defaultWorkers; never more than the useful number). */
  workers?: number;
  /**
   * Let a thread split its batches with a helper thread while fewer jobs run than there are
   * threads (default true with 2 or more threads; see batch-helper.ts). Never changes the result.
   */
  splitBatches?: boolean;
}

/** Restarts a thread runs before it is replaced (nlopt-js leaks a little per run). */
const RUNS_PER_THREAD = 32;

/** The useful number of threads: restarts run in parallel, and the held-out re-scoring runs two candidates at once. */
export function usefulWorkers(study: Study): number {
  return Math.max(2, study.search.restarts);
}

/**
 * Threads by default: one per restart, up to twice the cores. Restarts cannot be split, and they
 * differ in length: three restarts on two cores in two threads leave one core idle while the
 * last one runs alone; in three threads the cores share all three to the end.
 */
export function defaultWorkers(study: Study, cores: number = availableParallelism()): number {
  return Math.min(usefulWorkers(study), 2 * Math.max(1, cores));
}

/** Runs a study's search on worker threads and returns the result file. */
export async function optimizeStudy(study: Study, options: NodeSearchOptions = {}): Promise<OptimizationResult> {
  const workers = Math.max(1, Math.min(options.workers ?? defaultWorkers(study), usefulWorkers(study)));
  const split = (options.splitBatches ?? true) && workers >= 2;
  const runner = new NodeSearchRunner(workers, drawsRandomNumbers(study.search.method, study.search.local_method), split);
  runner.warm();
  try {
    return await searchStudy(study, runner, options);
  } finally {
    await runner.close();
  }
}

class Thread {
  readonly worker: Worker;
  readonly api: Comlink.Remote<OptimizeWorkerApi>;
  /** Rejects when the thread fails or exits. */
  readonly died: Promise<never>;
  nloptRuns = 0;
  closed = false;

  constructor(url: URL, activity: SharedArrayBuffer | undefined) {
    this.worker = new Worker(url, { workerData: { activity } });
    this.api = Comlink.wrap<OptimizeWorkerApi>(nodeEndpoint(this.worker as unknown as Parameters<typeof nodeEndpoint>[0]));
    this.died = new Promise<never>((_, reject) => {
      this.worker.once('error', (e) => reject(new SearchError(`a search worker failed: ${e.message}`)));
      this.worker.once('exit', (code) => reject(new SearchError(`a search worker exited (code ${code})`)));
    });
    this.died.catch(() => undefined);
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    this.api[Comlink.releaseProxy]();
    await this.worker.terminate();
  }
}

export class NodeSearchRunner implements SearchRunner {
  private readonly url = compiledWorkerUrl('optimize-worker.js');
  private readonly idle: Thread[] = [];
  private readonly all = new Set<Thread>();
  private running = 0;
  private readonly waiting: (() => void)[] = [];
  /** [jobs running, threads], shared with the threads when they may split batches. */
  private readonly activity: SharedArrayBuffer | undefined;

  constructor(
    readonly concurrency: number,
    /** The study's method draws random numbers: each restart needs a thread that has run no NLopt. */
    private readonly needsFreshModule: boolean,
    splitBatches = false,
  ) {
    this.activity = splitBatches ? activityBuffer(concurrency) : undefined;
  }

  restart(task: RestartTask, control: RunnerControl<RestartProgress>): Promise<RestartResult> {
    return this.job(this.needsFreshModule, control.signal, (thread, cancel) => {
      thread.nloptRuns++;
      return thread.api.restart(task, cancel, control.onProgress && Comlink.proxy(control.onProgress));
    });
  }

  score(task: ScoreTask, control: RunnerControl<{ done: number; total: number }>): Promise<ScoreResult> {
    return this.job(false, control.signal, (thread, cancel): Promise<ScoreResult> => thread.api.score(task, cancel, control.onProgress && Comlink.proxy(control.onProgress)));
  }

  /**
   * Starts every thread now: each spends about a second loading its modules, which then overlaps
   * the first jobs instead of delaying a later one (the held-out re-scoring's second candidate).
   */
  warm(): void {
    while (this.all.size < this.concurrency) {
      const thread = new Thread(this.url, this.activity);
      this.all.add(thread);
      this.idle.push(thread);
      // loading NLopt does not run it: the thread stays pristine for a stochastic restart
      Promise.race([thread.api.warm(), thread.died]).catch(() => undefined);
    }
  }

  async close(): Promise<void> {
    const all = [...this.all];
    this.all.clear();
    this.idle.length = 0;
    await Promise.all(all.map((t) => t.close()));
  }

  // One job on a thread, at most `concurrency` at once; the thread goes back to the idle list
  // unless it must retire (it ran a stochastic restart, ran many, or failed).
  private async job<T>(pristine: boolean, signal: AbortSignal, body: (thread: Thread, cancel: SharedArrayBuffer) => Promise<T>): Promise<T> {
    await this.slot();
    const cancel = new SharedArrayBuffer(4);
    const flag = new Int32Array(cancel);
    const onAbort = () => Atomics.store(flag, 0, 1);
    if (signal.aborted) onAbort();
    signal.addEventListener('abort', onAbort);
    const thread = this.take(pristine);
    let healthy = false;
    try {
      const result = await Promise.race([body(thread, cancel), thread.died]);
      healthy = true;
      return result;
    } finally {
      signal.removeEventListener('abort', onAbort);
      this.give(thread, healthy);
      this.running--;
      this.publish();
      this.waiting.shift()?.();
    }
  }

  private async slot(): Promise<void> {
    while (this.running >= this.concurrency) await new Promise<void>((resolve) => this.waiting.push(resolve));
    this.running++;
    this.publish();
  }

  private publish(): void {
    if (this.activity) Atomics.store(new Int32Array(this.activity), 0, this.running);
  }

  private take(pristine: boolean): Thread {
    const at = this.idle.findIndex((t) => !pristine || t.nloptRuns === 0);
    if (at >= 0) return this.idle.splice(at, 1)[0];
    const thread = new Thread(this.url, this.activity);
    this.all.add(thread);
    return thread;
  }

  private give(thread: Thread, healthy: boolean): void {
    const retire = !healthy || (this.needsFreshModule && thread.nloptRuns > 0) || thread.nloptRuns >= RUNS_PER_THREAD;
    if (!retire) {
      this.idle.push(thread);
      return;
    }
    this.all.delete(thread);
    void thread.close();
  }
}
