// A worker thread of a policy search (worker_threads, driven through comlink like the workbench's
// browser workers): it runs restarts (NLopt on the study's training objective) and scoring jobs
// (screening start points, held-out re-scoring) for src/worker/node-optimize.ts. A restart of a
// method that draws random numbers gets a thread that has run no NLopt yet (one seed → one
// result, see nlopt.ts); the other methods and the scoring jobs reuse threads.

import * as Comlink from 'comlink';
import nodeEndpoint from 'comlink/dist/esm/node-adapter.mjs';
import { parentPort, workerData } from 'node:worker_threads';
import { loadEngine } from '../core/engine.js';
import { loadNlopt } from '../core/optimize/nlopt.js';
import { runRestart, type RestartProgress, type RestartResult, type RestartTask } from '../core/optimize/restart.js';
import { runScoreTask, type ScoreResult, type ScoreTask } from '../core/optimize/score.js';
import { SplitEngine } from './batch-helper.js';

const port = parentPort;
if (!port) throw new Error('optimize-worker.js runs only as a worker thread');

// With the runner's shared job count, big batches are split with a helper thread while a core
// would otherwise idle (batch-helper.ts); the numbers are the same.
const activity = (workerData as { activity?: SharedArrayBuffer } | undefined)?.activity;
let split: SplitEngine | undefined;
async function engine(): Promise<SplitEngine | undefined> {
  if (!activity) return undefined;
  split ??= new SplitEngine(await loadEngine(), activity);
  return split;
}

type Callback<P> = ((p: P) => void) & { [Comlink.releaseProxy]?: () => void };

// The caller's progress callback crosses as a proxy: released when the job ends, so no port stays open.
async function withCallback<P, T>(callback: Callback<P> | undefined, body: (report?: (p: P) => void) => Promise<T>): Promise<T> {
  try {
    return await body(callback ? (p) => void callback(p) : undefined);
  } finally {
    callback?.[Comlink.releaseProxy]?.();
  }
}

const api = {
  /** Loads the kernel and NLopt now, so that a thread started ahead of its first job is ready for it. */
  async warm(): Promise<void> {
    await Promise.all([loadEngine(), loadNlopt()]);
  },

  async restart(task: RestartTask, cancel: SharedArrayBuffer, onProgress?: Callback<RestartProgress>): Promise<RestartResult> {
    const flag = new Int32Array(cancel);
    const batches = await engine();
    return withCallback(onProgress, (report) => runRestart(task, { shouldStop: () => Atomics.load(flag, 0) !== 0, onProgress: report, engine: batches }));
  },

  async score(task: ScoreTask, cancel: SharedArrayBuffer, onProgress?: Callback<{ done: number; total: number }>): Promise<ScoreResult> {
    const flag = new Int32Array(cancel);
    const batches = await engine();
    return withCallback(onProgress, (report) =>
      runScoreTask(task, { shouldStop: () => Atomics.load(flag, 0) !== 0, onProgress: report && ((done, total) => report({ done, total })), engine: batches }),
    );
  },
};
export type OptimizeWorkerApi = typeof api;

Comlink.expose(api, nodeEndpoint(port as unknown as Parameters<typeof nodeEndpoint>[0]));
