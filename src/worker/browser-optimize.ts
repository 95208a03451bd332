// A study's policy search in the browser: the same multi-start NLopt as `pronk optimize`
// (src/core/optimize/search.ts), each restart in a fresh module worker (runRestart), at most
// `concurrency` at a time; then the winner is re-scored on the held-out seeds in one more worker
// and the result file is assembled in the shape search.ts writes. Main-thread side: nothing here
// computes more than a few comparisons, so the page stays responsive while the workers search.

import * as Comlink from 'comlink';
import { parseStudy, type Study } from '../core/optimize/study.js';
import { assembleResult, pickBest, restartStarts, type FinalScores } from '../core/optimize/result.js';
import type { OptimizationResult, SearchProgress } from '../core/optimize/search.js';
import type { RestartProgress, RestartResult } from '../core/optimize/restart.js';
import type { OptimizeWorkerApi } from './browser-optimize-worker.js';
import { JobCancelled, WorkerHandle, WorkerLost } from './browser-pool.js';

export function optimizeWorker(): Worker {
  return new Worker(new URL('./browser-optimize-worker.ts', import.meta.url), { type: 'module', name: 'pronk-optimizer' });
}

export interface LiveRestart {
  restart: number;
  evaluations: number;
  best: number;
  x: number[];
  done: boolean;
}

export interface BrowserSearchProgress extends SearchProgress {
  /** Per restart, for the convergence view. */
  perRestart: LiveRestart[];
}

export interface BrowserSearchOptions {
  /** Restarts running at once (default: cores − 1, at least 1). */
  concurrency?: number;
  signal?: AbortSignal;
  onProgress?: (p: BrowserSearchProgress) => void;
  /** Worker factory (tests may pass their own). */
  make?: () => Worker;
}

function cancelBuffer(): SharedArrayBuffer | undefined {
  return typeof SharedArrayBuffer === 'function' && globalThis.crossOriginIsolated ? new SharedArrayBuffer(4) : undefined;
}

async function inWorker<T>(make: () => Worker, body: (api: Comlink.Remote<OptimizeWorkerApi>, handle: WorkerHandle<OptimizeWorkerApi>) => Promise<T>): Promise<T> {
  const handle = new WorkerHandle<OptimizeWorkerApi>(make);
  try {
    return await handle.race(body(handle.api, handle));
  } finally {
    handle.terminate();
  }
}

export async function optimizeInBrowser(studyValue: unknown, options: BrowserSearchOptions = {}): Promise<OptimizationResult> {
  const started = performance.now();
  const study: Study = parseStudy(studyValue);
  const studyJson = JSON.parse(JSON.stringify(study)) as unknown;
  const make = options.make ?? optimizeWorker;
  const free = study.free_parameters;
  const lower = free.map((p) => p.lower);
  const upper = free.map((p) => p.upper);
  const start = free.map((p) => p.start);
  const restarts = study.search.restarts;
  const starts = restartStarts(start, lower, upper, restarts, study.search.seed);
  const cores = typeof navigator !== 'undefined' && navigator.hardwareConcurrency ? navigator.hardwareConcurrency : 2;
  const concurrency = Math.max(1, Math.min(options.concurrency ?? Math.max(1, cores - 1), restarts));

  // Cancel: the shared flag ends every running restart at its next evaluation with its best point.
  // Without cross-origin isolation there is no shared memory: the workers are terminated instead.
  const cancel = cancelBuffer();
  const flag = cancel ? new Int32Array(cancel) : null;
  const running = new Set<WorkerHandle<OptimizeWorkerApi>>();
  let cancelled = options.signal?.aborted ?? false;
  let rejectCancel: (error: Error) => void = () => undefined;
  const cancelledHard = new Promise<never>((_, reject) => {
    rejectCancel = reject;
  });
  cancelledHard.catch(() => undefined);
  const onAbort = () => {
    cancelled = true;
    if (flag) Atomics.store(flag, 0, 1);
    else {
      for (const handle of running) handle.terminate();
      rejectCancel(new JobCancelled());
    }
  };
  if (cancelled) onAbort();
  options.signal?.addEventListener('abort', onAbort);

  const live: LiveRestart[] = starts.map((x, restart) => ({ restart, evaluations: 0, best: Infinity, x, done: false }));
  const budget = restarts * study.search.max_evaluations;
  let restartsDone = 0;
  const report = () => {
    if (!options.onProgress) return;
    let evaluations = 0;
    let best: LiveRestart | undefined;
    for (const r of live) {
      evaluations += r.evaluations;
      if (r.evaluations > 0 && (!best || r.best < best.best)) best = r;
    }
    options.onProgress({
      evaluations,
      budget,
      best: best?.best ?? Infinity,
      x: best?.x ?? start,
      restartsDone,
      restarts,
      perRestart: live.map((r) => ({ ...r })),
    });
  };

  const results: RestartResult[] = [];
  let next = 0;
  try {
    await Promise.race([
      cancelledHard,
      Promise.all(
        Array.from({ length: concurrency }, async () => {
          // after a cancel no further restart begins; the running ones end with their best so far
          while (next < restarts && !cancelled) {
            const restart = next++;
            const task = { study: studyJson, restart, x0: starts[restart], ...(cancel ? { cancel } : {}) };
            const onProgress = Comlink.proxy((p: RestartProgress) => {
              const r = live[p.restart];
              r.evaluations = p.evaluations;
              r.best = p.best;
              r.x = p.x;
              report();
            });
            const result = await inWorker(make, async (api, handle) => {
              running.add(handle);
              try {
                return await api.run(task, onProgress);
              } finally {
                running.delete(handle);
              }
            });
            const r = live[restart];
            r.evaluations = result.outcome.evaluations;
            r.best = result.outcome.value;
            r.x = result.outcome.x;
            r.done = true;
            results.push(result);
            restartsDone++;
            report();
          }
        }),
      ),
    ]);
  } catch (error) {
    if (error instanceof WorkerLost) throw new WorkerLost(`in the optimizer: ${error.message}`);
    throw error;
  } finally {
    options.signal?.removeEventListener('abort', onAbort);
  }
  if (results.length === 0) throw new JobCancelled();
  const best = pickBest(results);
  const scores = await inWorker(make, (api) => api.finish(studyJson, start, best.outcome.x));
  return assembleResult(
    study,
    results,
    {
      start: scores.start,
      holdoutStart: scores.holdoutStart as unknown as FinalScores['holdoutStart'],
      holdoutBest: scores.holdoutBest as unknown as FinalScores['holdoutBest'],
      comparison: scores.comparison,
      scenario: scores.bestScenario as { policy: unknown },
      paths: free.map((p) => p.path),
      lower,
      upper,
      startPoint: start,
    },
    cancelled,
    (performance.now() - started) / 1000,
  );
}
