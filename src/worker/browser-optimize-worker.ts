// A browser module worker of a study's search: restarts (runRestart: NLopt on the study's training
// objective) and scoring jobs (screening start points, held-out re-scoring), for
// browser-optimize.ts, as optimize-worker.ts does in Node. Cancel: the caller sets the Int32 on the
// job's SharedArrayBuffer; a restart then ends at its next evaluation with reason 'cancelled' and
// its best point so far, a scoring job with ScoreCancelled.

import './browser-atob-shim.js';
import * as Comlink from 'comlink';
import { loadEngine } from '../core/engine.js';
import { loadNlopt } from '../core/optimize/nlopt.js';
import { runRestart, type RestartProgress, type RestartResult, type RestartTask } from '../core/optimize/restart.js';
import { runScoreTask, type ScoreResult, type ScoreTask } from '../core/optimize/score.js';

/** Progress is sent at most this often (ms), and always for the last report. */
const PROGRESS_INTERVAL_MS = 100;

type Callback<P> = ((p: P) => void) & { [Comlink.releaseProxy]?: () => void };

// Sends progress at most every PROGRESS_INTERVAL_MS, the last one always; releases the proxy at the end.
async function throttled<P, T>(callback: Callback<P> | undefined, body: (report?: (p: P) => void) => Promise<T>): Promise<T> {
  let last = 0;
  let pending: P | null = null;
  const report = (p: P) => {
    pending = p;
    const now = performance.now();
    if (now - last < PROGRESS_INTERVAL_MS) return;
    last = now;
    pending = null;
    void callback?.(p);
  };
  try {
    const result = await body(callback ? report : undefined);
    if (pending !== null) void callback?.(pending);
    return result;
  } finally {
    callback?.[Comlink.releaseProxy]?.();
  }
}

const flagOf = (cancel?: SharedArrayBuffer) => (cancel ? new Int32Array(cancel) : null);

const api = {
  /** Loads the kernel and NLopt now, so that a worker started ahead of its first job is ready for it. */
  async warm(): Promise<void> {
    await Promise.all([loadEngine(), loadNlopt()]);
  },

  restart(task: RestartTask, cancel: SharedArrayBuffer | undefined, onProgress?: Callback<RestartProgress>): Promise<RestartResult> {
    const flag = flagOf(cancel);
    return throttled(onProgress, (report) => runRestart(task, { shouldStop: () => flag !== null && Atomics.load(flag, 0) !== 0, onProgress: report }));
  },

  score(task: ScoreTask, cancel: SharedArrayBuffer | undefined, onProgress?: Callback<{ done: number; total: number }>): Promise<ScoreResult> {
    const flag = flagOf(cancel);
    return throttled(onProgress, (report) =>
      runScoreTask(task, { shouldStop: () => flag !== null && Atomics.load(flag, 0) !== 0, onProgress: report && ((done, total) => report({ done, total })) }),
    );
  },
};

export type OptimizeWorkerApi = typeof api;

Comlink.expose(api);
