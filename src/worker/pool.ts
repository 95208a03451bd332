// Node's worker pool for batches (worker_threads): the rollouts of one batch are
// cut into contiguous chunks, run on whichever worker is free, and put back in
// order. Rollouts are independent and the kernel is deterministic, so the result
// is bit-identical for any number of workers (and to an in-process run).
//
// Node only. The browser workbench has its own comlink pool over the same engine.

import { availableParallelism } from 'node:os';
// node:worker_threads is loaded when a pool is first made: a one-worker batch runs in this thread
import type { Worker } from 'node:worker_threads';
import * as L from '../../assembly/layout.js';
import { loadEngine, type BatchRequest, type BatchResult } from '../core/engine.js';
import { CancelledError, eachInTurn } from '../core/in-turn.js';
import { compiledWorkerUrl } from './paths.js';

export interface ParallelOptions {
  /** Worker threads; 1 runs in this thread. Default: the machine's available parallelism. */
  workers?: number;
  /** Rollouts per chunk; default: shrinking chunks (see chunkPlan), at least 1. */
  chunkRollouts?: number;
  /** Called after each chunk with rollouts done and total. */
  onProgress?: (done: number, total: number) => void;
  /** Stops dispatching further chunks; the promise rejects with CancelledError. */
  signal?: AbortSignal;
}

export { CancelledError };

export class WorkerError extends Error {}

export function defaultWorkers(): number {
  return Math.max(1, availableParallelism());
}

export interface Chunk {
  start: number;
  end: number;
}

interface ChunkReply {
  id: number;
  summaries?: Float64Array;
  records?: Float64Array;
  completed?: number;
  error?: string;
}

/**
 * The chunks of a batch, in order. Given a size, equal chunks of it. By default guided
 * self-scheduling (Polychronopoulos and Kuck 1987, with a divisor of 4 per worker): each chunk
 * is the rest over 4 × workers, never below the rest of the batch over 64 × workers, so the
 * first chunks are big (few messages) and the last are small: rollouts differ in cost (a fall
 * ends early), and equal chunks of 1/8 per worker left one worker idle for up to a chunk's time
 * at the end. The first chunk is at most 1/8 of the batch on 2 workers, so a cancel still
 * lands within about that. Chunking never changes a result: rollouts are independent.
 */
export function chunkPlan(rollouts: number, workers: number, size?: number): Chunk[] {
  const chunks: Chunk[] = [];
  if (size !== undefined) {
    const per = Math.max(1, Math.floor(size));
    for (let start = 0; start < rollouts; start += per) chunks.push({ start, end: Math.min(rollouts, start + per) });
    return chunks;
  }
  const w = Math.max(1, workers);
  const smallest = Math.max(1, Math.ceil(rollouts / (64 * w)));
  for (let start = 0; start < rollouts; ) {
    const per = Math.max(smallest, Math.ceil((rollouts - start) / (4 * w)));
    const end = Math.min(rollouts, start + per);
    chunks.push({ start, end });
    start = end;
  }
  return chunks;
}

/** runBatch over a pool of workers (or in this thread when workers <= 1). */
export async function runBatchParallel(req: BatchRequest, options: ParallelOptions = {}): Promise<BatchResult> {
  const rollouts = req.inputs.length / L.I_SIZE;
  const workers = Math.max(1, Math.floor(options.workers ?? defaultWorkers()));
  const chunks = chunkPlan(rollouts, workers, options.chunkRollouts);

  const summaries = new Float64Array(rollouts * L.S_SIZE);
  const records = req.records ? new Float64Array(rollouts * req.strides * L.R_SIZE) : undefined;
  let completed = 0;
  let done = 0;
  const place = (chunk: Chunk, reply: { summaries: Float64Array; records?: Float64Array; completed: number }) => {
    // (a chunk run in this thread wrote its summaries in place already)
    if (reply.summaries.buffer !== summaries.buffer) summaries.set(reply.summaries, chunk.start * L.S_SIZE);
    if (records && reply.records) records.set(reply.records, chunk.start * req.strides * L.R_SIZE);
    completed += reply.completed;
    done += chunk.end - chunk.start;
    options.onProgress?.(done, rollouts);
  };
  const sub = (chunk: Chunk): BatchRequest => ({
    ...req,
    inputs: req.inputs.subarray(chunk.start * L.I_SIZE, chunk.end * L.I_SIZE),
  });

  if (workers <= 1 || chunks.length <= 1) {
    const engine = await loadEngine();
    // each chunk's summaries straight into the batch's array (a fresh array per chunk, then a
    // copy, cost about 9 ms of page faults for 20,000 rollouts on this project's test machine)
    await eachInTurn(chunks, options.signal, (chunk) => place(chunk, engine.runBatch(sub(chunk), { summaries, offset: chunk.start * L.S_SIZE })));
    return { rollouts, strides: req.strides, summaries, records, completed };
  }

  const pool = await workerPool(Math.min(workers, chunks.length));
  let next = 0;
  await Promise.all(
    pool.slice(0, Math.min(pool.length, chunks.length)).map(async (w) => {
      while (next < chunks.length) {
        if (options.signal?.aborted) throw new CancelledError();
        const chunk = chunks[next++];
        // slice, not subarray: a cloned view would carry its whole buffer to the worker
        const reply = await w.run({ ...req, inputs: req.inputs.slice(chunk.start * L.I_SIZE, chunk.end * L.I_SIZE) });
        place(chunk, reply);
      }
    }),
  );
  return { rollouts, strides: req.strides, summaries, records, completed };
}

// ---------------------------------------------------------------------------------------------
// The pool itself: long-lived workers, each with its own engine; held (ref'd) only while busy so
// that an idle pool never keeps the process alive.

class PoolWorker {
  private worker: Worker;
  private pending = new Map<number, { resolve: (r: ChunkReply) => void; reject: (e: Error) => void }>();
  private nextId = 0;
  dead = false;

  constructor(WorkerThread: typeof Worker, url: URL) {
    this.worker = new WorkerThread(url);
    this.worker.unref();
    this.worker.on('message', (reply: ChunkReply) => {
      const p = this.pending.get(reply.id);
      if (!p) return;
      this.pending.delete(reply.id);
      if (this.pending.size === 0) this.worker.unref();
      if (reply.error !== undefined) p.reject(new WorkerError(reply.error));
      else p.resolve(reply);
    });
    const fail = (why: string) => {
      this.dead = true;
      for (const p of this.pending.values()) p.reject(new WorkerError(why));
      this.pending.clear();
    };
    this.worker.on('error', (e) => fail(`a worker failed: ${e.message}`));
    this.worker.on('exit', (code) => fail(`a worker exited (code ${code})`));
  }

  run(req: BatchRequest): Promise<{ summaries: Float64Array; records?: Float64Array; completed: number }> {
    if (this.dead) return Promise.reject(new WorkerError('a worker is no longer running'));
    const id = this.nextId++;
    this.worker.ref();
    return new Promise((resolve, reject) => {
      this.pending.set(id, {
        resolve: (r) => resolve({ summaries: r.summaries!, records: r.records, completed: r.completed! }),
        reject,
      });
      this.worker.postMessage({ id, req });
    });
  }

  terminate(): Promise<number> {
    this.dead = true;
    return this.worker.terminate();
  }
}

let pool: PoolWorker[] = [];

async function workerPool(size: number): Promise<PoolWorker[]> {
  const { Worker: WorkerThread } = await import('node:worker_threads'); // before the pool is read: no await after
  pool = pool.filter((w) => !w.dead);
  const url = compiledWorkerUrl('node-batch-worker.js');
  while (pool.length < size) pool.push(new PoolWorker(WorkerThread, url));
  return pool.slice(0, size);
}

/** Stop every pooled worker (tests and long sessions). */
export async function closeWorkerPool(): Promise<void> {
  const all = pool;
  pool = [];
  await Promise.all(all.map((w) => w.terminate()));
}
