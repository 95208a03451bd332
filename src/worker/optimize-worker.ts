// One restart of a policy search, in a worker thread of its own (worker_threads, driven
// through comlink like the workbench's browser workers). A fresh worker per restart gives
// each run a fresh NLopt module, so a seeded stochastic method gives one result per seed,
// and no run inherits another's random stream or leaked state.

import * as Comlink from 'comlink';
import nodeEndpoint from 'comlink/dist/esm/node-adapter.mjs';
import { parentPort } from 'node:worker_threads';
import { runRestart, type RestartTask, type RestartProgress } from '../core/optimize/restart.js';

const port = parentPort;
if (!port) throw new Error('optimize-worker.js runs only as a worker thread');

const api = {
  run(task: RestartTask, onProgress: (p: RestartProgress) => void) {
    const cancel = new Int32Array(task.cancel);
    return runRestart(task, { shouldStop: () => Atomics.load(cancel, 0) !== 0, onProgress });
  },
};
export type OptimizeWorkerApi = typeof api;

Comlink.expose(api, nodeEndpoint(port as unknown as Parameters<typeof nodeEndpoint>[0]));
