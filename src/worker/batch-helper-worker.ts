// A helper thread of a search thread (src/worker/batch-helper.ts): runs the second part of a
// batch that the search thread split, writes its summaries into the shared buffer it was sent and
// wakes the waiting thread. Nothing else: no NLopt, no study.

import { parentPort, workerData } from 'node:worker_threads';
import { loadEngine, type BatchRequest } from '../core/engine.js';

const port = parentPort;
if (!port) throw new Error('batch-helper-worker.js runs only as a worker thread');

export interface HelperJob {
  model: BatchRequest['model'];
  inputs: Float64Array;
  strides: number;
  /** (rollouts x S_SIZE) f64 for the summaries. */
  out: SharedArrayBuffer;
  /** Int32 [state, completed]: state 0 running, 1 done, 2 failed. */
  flag: SharedArrayBuffer;
}

/** Int32 [ready]: set to 1 once the engine is loaded. */
const ready = new Int32Array((workerData as { ready: SharedArrayBuffer }).ready);
const engine = await loadEngine();
Atomics.store(ready, 0, 1);

port.on('message', (job: HelperJob) => {
  const flag = new Int32Array(job.flag);
  try {
    const r = engine.runBatch({ model: job.model, inputs: job.inputs, strides: job.strides });
    new Float64Array(job.out).set(r.summaries);
    Atomics.store(flag, 1, r.completed);
    Atomics.store(flag, 0, 1);
  } catch {
    Atomics.store(flag, 0, 2);
  }
  Atomics.notify(flag, 0);
});
