// A study's policy search in the browser: the same search as `pronk optimize`
// (src/core/optimize/search.ts) over module workers (browser-optimize-worker.ts), at most
// `concurrency` jobs at a time. Workers are kept between jobs, except that a restart of a method
// that draws random numbers gets a worker that has run no NLopt yet (one seed → one result, as in
// Node). Main-thread side: nothing here computes more than a few comparisons, so the page stays
// responsive while the workers search.

import * as Comlink from 'comlink';
import { drawsRandomNumbers } from '../core/optimize/nlopt.js';
import type { RestartProgress, RestartResult, RestartTask } from '../core/optimize/restart.js';
import type { ScoreResult, ScoreTask } from '../core/optimize/score.js';
import { searchStudy, type OptimizationResult, type RunnerControl, type SearchProgress, type SearchRunner } from '../core/optimize/search.js';
import { parseStudy, type Study } from '../core/optimize/study.js';
import type { OptimizeWorkerApi } from './browser-optimize-worker.js';
import { JobCancelled, WorkerHandle, WorkerLost } from './browser-pool.js';

export type { LiveRestart } from '../core/optimize/search.js';

export function optimizeWorker(): Worker {
  return new Worker(new URL('./browser-optimize-worker.ts', import.meta.url), { type: 'module', name: 'pronk-optimizer' });
}

/** The search's progress (phase, counts, best score, per restart). */
export type BrowserSearchProgress = SearchProgress;

export interface BrowserSearchOptions {
  /** Jobs running at once (default: cores − 1, at least 1). */
  concurrency?: number;
  /** Stops the search; the best point so far is kept and re-scored on the held-out seeds. */
  signal?: AbortSignal;
  /** Skips the held-out re-scoring (the result then carries the training margins). */
  holdoutSignal?: AbortSignal;
  onProgress?: (p: BrowserSearchProgress) => void;
  /** Worker factory (tests may pass their own). */
  make?: () => Worker;
}

/** Restarts a worker runs before it is replaced (nlopt-js leaks a little per run). */
const RUNS_PER_WORKER = 32;

interface Slot {
  handle: WorkerHandle<OptimizeWorkerApi>;
  nloptRuns: number;
}

// Without cross-origin isolation there is no shared memory: a cancelled job's worker is then
// terminated instead (the job is lost, and a search without any restart result is JobCancelled).
function cancelBuffer(): SharedArrayBuffer | undefined {
  return typeof SharedArrayBuffer === 'function' && globalThis.crossOriginIsolated ? new SharedArrayBuffer(4) : undefined;
}

class BrowserSearchRunner implements SearchRunner {
  private readonly idle: Slot[] = [];
  private readonly all = new Set<Slot>();
  private running = 0;
  private readonly waiting: (() => void)[] = [];

  constructor(
    readonly concurrency: number,
    private readonly make: () => Worker,
    private readonly needsFreshModule: boolean,
  ) {}

  restart(task: RestartTask, control: RunnerControl<RestartProgress>): Promise<RestartResult> {
    return this.job(this.needsFreshModule, control.signal, (slot, cancel) => {
      slot.nloptRuns++;
      return slot.handle.api.restart(task, cancel, control.onProgress && Comlink.proxy(control.onProgress));
    });
  }

  score(task: ScoreTask, control: RunnerControl<{ done: number; total: number }>): Promise<ScoreResult> {
    return this.job(false, control.signal, (slot, cancel): Promise<ScoreResult> => slot.handle.api.score(task, cancel, control.onProgress && Comlink.proxy(control.onProgress)));
  }

  /** Starts every worker now, so that loading its modules overlaps the first jobs. */
  warm(): void {
    while (this.all.size < this.concurrency) {
      const slot: Slot = { handle: new WorkerHandle<OptimizeWorkerApi>(this.make), nloptRuns: 0 };
      this.all.add(slot);
      this.idle.push(slot);
      slot.handle.race(slot.handle.api.warm()).catch(() => undefined);
    }
  }

  close(): void {
    for (const slot of this.all) slot.handle.terminate();
    this.all.clear();
    this.idle.length = 0;
  }

  private async job<T>(pristine: boolean, signal: AbortSignal, body: (slot: Slot, cancel: SharedArrayBuffer | undefined) => Promise<T>): Promise<T> {
    while (this.running >= this.concurrency) await new Promise<void>((resolve) => this.waiting.push(resolve));
    this.running++;
    const cancel = cancelBuffer();
    const flag = cancel ? new Int32Array(cancel) : null;
    const at = this.idle.findIndex((s) => !pristine || s.nloptRuns === 0);
    const slot = at >= 0 ? this.idle.splice(at, 1)[0] : { handle: new WorkerHandle<OptimizeWorkerApi>(this.make), nloptRuns: 0 };
    this.all.add(slot);
    let lost: (error: Error) => void = () => undefined;
    const terminated = new Promise<never>((_, reject) => (lost = reject));
    terminated.catch(() => undefined);
    const onAbort = () => {
      if (flag) Atomics.store(flag, 0, 1);
      else {
        slot.handle.terminate();
        lost(new JobCancelled());
      }
    };
    if (signal.aborted) onAbort();
    signal.addEventListener('abort', onAbort);
    let healthy = false;
    try {
      const result = await Promise.race([slot.handle.race(body(slot, cancel)), terminated]);
      healthy = true;
      return result;
    } catch (error) {
      if (error instanceof WorkerLost) throw new WorkerLost(`in the optimizer: ${error.message}`);
      throw error;
    } finally {
      signal.removeEventListener('abort', onAbort);
      const retire = !healthy || (this.needsFreshModule && slot.nloptRuns > 0) || slot.nloptRuns >= RUNS_PER_WORKER;
      if (retire) {
        this.all.delete(slot);
        slot.handle.terminate();
      } else {
        this.idle.push(slot);
      }
      this.running--;
      this.waiting.shift()?.();
    }
  }
}

export async function optimizeInBrowser(studyValue: unknown, options: BrowserSearchOptions = {}): Promise<OptimizationResult> {
  const study: Study = parseStudy(studyValue);
  const cores = typeof navigator !== 'undefined' && navigator.hardwareConcurrency ? navigator.hardwareConcurrency : 2;
  const useful = Math.max(2, study.search.restarts);
  const concurrency = Math.max(1, Math.min(options.concurrency ?? Math.max(1, cores - 1), useful));
  const runner = new BrowserSearchRunner(concurrency, options.make ?? optimizeWorker, drawsRandomNumbers(study.search.method, study.search.local_method));
  runner.warm();
  try {
    return await searchStudy(study, runner, { signal: options.signal, holdoutSignal: options.holdoutSignal, onProgress: options.onProgress });
  } finally {
    runner.close();
  }
}
