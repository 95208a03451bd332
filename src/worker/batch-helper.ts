// Splitting a search thread's batches with a helper thread, while a core would otherwise idle.
//
// A restart runs NLopt, which calls the objective synchronously: an evaluation's rollouts cannot
// wait for another thread asynchronously. So the search thread hands the second half of each big
// batch to its own helper thread (a message with the models and inputs), runs the first half
// itself, and then blocks on a shared flag (Atomics.wait) until the helper has written its half's
// summaries into shared memory. Rollouts are independent and the kernel is deterministic, so the
// joined summaries are the same bytes as one call's: nothing in a result changes.
//
// A batch is split only while the search has fewer jobs running than threads (the runner keeps the
// count in a shared Int32, `activity`): at the end of a search, when the last restart runs alone,
// or in the held-out re-scoring. A helper that fails, or answers ten times later than the thread's
// own half took (plus 2 s), is abandoned and the half is run here; the result is the same.

import { Worker } from 'node:worker_threads';
import * as L from '../../assembly/layout.js';
import type { BatchRequest, BatchResult, Engine } from '../core/engine.js';
import type { HelperJob } from './batch-helper-worker.js';
import { compiledWorkerUrl } from './paths.js';

/** Batches of fewer rollouts run in one piece (a split costs a message and a wake-up). */
export const MIN_SPLIT_ROLLOUTS = 64;

/** The shared counters a runner keeps: [jobs running, threads]. */
export function activityBuffer(threads: number): SharedArrayBuffer {
  const buffer = new SharedArrayBuffer(8);
  Atomics.store(new Int32Array(buffer), 1, threads);
  return buffer;
}

export class SplitEngine {
  private worker: Worker | null = null;
  private readonly ready = new Int32Array(new SharedArrayBuffer(4));
  private broken = false;
  private readonly activity: Int32Array;
  /** Batches split so far, and halves the helper answered in time (for tests and benchmarks). */
  splits = 0;
  answered = 0;

  constructor(
    private readonly local: Engine,
    activity: SharedArrayBuffer,
    private readonly url: URL = compiledWorkerUrl('batch-helper-worker.js'),
  ) {
    this.activity = new Int32Array(activity);
  }

  /** A core is free: fewer jobs run than the search has threads. */
  private spare(): boolean {
    return Atomics.load(this.activity, 0) < Atomics.load(this.activity, 1);
  }

  /** The helper when it is loaded; started (not waited for) the first time a core is free. */
  private helper(): Worker | null {
    if (this.broken) return null;
    if (!this.worker) {
      this.worker = new Worker(this.url, { workerData: { ready: this.ready.buffer } });
      this.worker.unref();
      this.worker.on('error', () => (this.broken = true));
      this.worker.on('exit', () => (this.broken = true));
    }
    return Atomics.load(this.ready, 0) === 1 ? this.worker : null;
  }

  runBatch(req: BatchRequest): BatchResult {
    const rollouts = req.inputs.length / L.I_SIZE;
    const helper = !req.records && rollouts >= MIN_SPLIT_ROLLOUTS && this.spare() ? this.helper() : null;
    if (!helper) return this.local.runBatch(req);
    const mine = Math.ceil(rollouts / 2);
    const theirs = rollouts - mine;
    const out = new SharedArrayBuffer(theirs * L.S_SIZE * 8);
    const flag = new Int32Array(new SharedArrayBuffer(8));
    const job: HelperJob = { model: req.model, inputs: req.inputs.slice(mine * L.I_SIZE), strides: req.strides, out, flag: flag.buffer as SharedArrayBuffer };
    helper.postMessage(job);
    this.splits++;
    const started = performance.now();
    const first = this.local.runBatch({ ...req, inputs: req.inputs.subarray(0, mine * L.I_SIZE) });
    const deadline = performance.now() + 10 * (performance.now() - started) + 2000;
    while (Atomics.load(flag, 0) === 0) {
      const left = deadline - performance.now();
      if (left <= 0) break;
      Atomics.wait(flag, 0, 0, Math.min(left, 100));
    }
    let second: { summaries: Float64Array; completed: number };
    if (Atomics.load(flag, 0) === 1) {
      second = { summaries: new Float64Array(out), completed: Atomics.load(flag, 1) };
      this.answered++;
    } else {
      this.abandon();
      second = this.local.runBatch({ ...req, inputs: req.inputs.subarray(mine * L.I_SIZE) });
    }
    const summaries = new Float64Array(rollouts * L.S_SIZE);
    summaries.set(first.summaries);
    summaries.set(second.summaries, mine * L.S_SIZE);
    return { rollouts, strides: req.strides, summaries, completed: first.completed + second.completed };
  }

  private abandon(): void {
    this.broken = true;
    const worker = this.worker;
    this.worker = null;
    void worker?.terminate();
  }

  /** Stops the helper (the thread's own exit stops it too). */
  async close(): Promise<void> {
    this.broken = true;
    const worker = this.worker;
    this.worker = null;
    await worker?.terminate();
  }
}
