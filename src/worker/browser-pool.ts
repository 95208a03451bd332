// The workbench's pool of browser module workers, each holding an engine (browser-engine-worker.ts)
// behind comlink. Jobs take a free worker, or wait for one; a cancelled job's worker is
// terminated and replaced (a kernel batch cannot be interrupted), and a worker that dies (an
// `error` event: a failed load, an uncaught error) fails only the call it was running, is
// replaced, and is reported through onEvent. Main-thread side; Vite bundles the worker.

import * as Comlink from 'comlink';
import type { EngineWorkerApi } from './browser-engine-worker.js';

export class JobCancelled extends Error {
  constructor() {
    super('cancelled');
    this.name = 'JobCancelled';
  }
}

export class WorkerLost extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'WorkerLost';
  }
}

export interface PoolEvent {
  kind: 'worker-died' | 'worker-restarted' | 'worker-failed-to-start';
  slot: number;
  message: string;
}

/** One worker and its comlink proxy; `died` rejects when the worker reports an error. */
export class WorkerHandle<Api> {
  readonly worker: Worker;
  readonly api: Comlink.Remote<Api>;
  readonly died: Promise<never>;
  private terminated = false;

  constructor(make: () => Worker) {
    this.worker = make();
    this.api = Comlink.wrap<Api>(this.worker);
    this.died = new Promise<never>((_, reject) => {
      const fail = (why: string) => {
        if (this.terminated) return;
        reject(new WorkerLost(why));
      };
      this.worker.addEventListener('error', (event) => {
        event.preventDefault();
        fail(event.message || 'it could not load, or failed without a message');
      });
      this.worker.addEventListener('messageerror', () => fail('the worker sent a message that could not be read'));
    });
    this.died.catch(() => undefined); // observed by whoever races it
  }

  /** Runs `call`, rejecting with WorkerLost if the worker dies first. */
  race<T>(call: Promise<T>): Promise<T> {
    return Promise.race([call, this.died]);
  }

  terminate(): void {
    if (this.terminated) return;
    this.terminated = true;
    this.api[Comlink.releaseProxy]();
    this.worker.terminate();
  }
}

/** Runs `fn` with `signal`: rejects with JobCancelled on abort and calls `onAbort` first. */
function abortable<T>(run: Promise<T>, signal: AbortSignal | undefined, onAbort: () => void): Promise<T> {
  if (!signal) return run;
  if (signal.aborted) {
    onAbort();
    return Promise.reject(new JobCancelled());
  }
  return new Promise<T>((resolve, reject) => {
    const abort = () => {
      onAbort();
      reject(new JobCancelled());
    };
    signal.addEventListener('abort', abort, { once: true });
    run.then(
      (value) => {
        signal.removeEventListener('abort', abort);
        resolve(value);
      },
      (error) => {
        signal.removeEventListener('abort', abort);
        reject(error);
      },
    );
  });
}

interface Slot {
  index: number;
  handle: WorkerHandle<EngineWorkerApi>;
  ready: Promise<void>;
  busy: boolean;
  /** The worker loaded its engine and answered. */
  answered: boolean;
  /** Workers in a row in this slot that died before ever answering: stop replacing after a few. */
  failedStarts: number;
}

export interface MapOptions {
  signal?: AbortSignal;
  /** Called after each item with items done and the total. */
  onProgress?: (done: number, total: number) => void;
}

const MAX_FAILED_STARTS = 3;

export function engineWorker(): Worker {
  return new Worker(new URL('./browser-engine-worker.ts', import.meta.url), { type: 'module', name: 'pronk-engine' });
}

export class EnginePool {
  readonly size: number;
  private readonly slots: Slot[] = [];
  private readonly waiting: ((slot: Slot) => void)[] = [];
  private broken: string | null = null;
  private disposed = false;

  constructor(
    size: number,
    private readonly make: () => Worker = engineWorker,
    private readonly onEvent: (event: PoolEvent) => void = () => undefined,
  ) {
    this.size = Math.max(1, Math.floor(size));
    for (let i = 0; i < this.size; i++) this.slots.push(this.spawn(i, 0));
  }

  private spawn(index: number, failedStarts: number): Slot {
    const handle = new WorkerHandle<EngineWorkerApi>(this.make);
    const slot: Slot = { index, handle, busy: false, answered: false, failedStarts, ready: Promise.resolve() };
    slot.ready = handle.race(handle.api.ready()).then(
      () => {
        slot.answered = true;
      },
      (error: unknown) => {
        if (!this.disposed) {
          const message = error instanceof Error ? error.message : String(error);
          this.onEvent({ kind: 'worker-failed-to-start', slot: index, message });
        }
        throw error;
      },
    );
    slot.ready.catch(() => undefined);
    // A death while idle is noticed here too, so the next job gets a live worker.
    handle.died.catch((error: Error) => {
      if (this.disposed || this.slots[index] !== slot) return;
      if (!slot.busy) this.replace(slot, error.message);
    });
    return slot;
  }

  /** Terminates the slot's worker and starts a fresh one in its place. */
  private replace(slot: Slot, why: string | null): void {
    slot.handle.terminate();
    if (this.disposed) return;
    const failedStarts = slot.answered ? 0 : why === null ? slot.failedStarts : slot.failedStarts + 1;
    if (why !== null) this.onEvent({ kind: 'worker-died', slot: slot.index, message: why });
    if (failedStarts >= MAX_FAILED_STARTS) {
      this.broken = `the compute workers could not start (${why ?? 'unknown reason'}); reload the page`;
      return;
    }
    const fresh = this.spawn(slot.index, failedStarts);
    this.slots[slot.index] = fresh;
    if (why !== null) this.onEvent({ kind: 'worker-restarted', slot: slot.index, message: `worker ${slot.index + 1} was restarted` });
    this.release(fresh);
  }

  private acquire(): Promise<Slot> {
    if (this.broken) return Promise.reject(new WorkerLost(this.broken));
    const free = this.slots.find((s) => !s.busy);
    if (free) {
      free.busy = true;
      return Promise.resolve(free);
    }
    return new Promise((resolve) => this.waiting.push(resolve));
  }

  private release(slot: Slot): void {
    const next = this.waiting.shift();
    if (next) {
      slot.busy = true;
      next(slot);
    } else {
      slot.busy = false;
    }
  }

  /** Runs `task` on a free worker. */
  async use<T>(task: (api: Comlink.Remote<EngineWorkerApi>) => Promise<T>, signal?: AbortSignal): Promise<T> {
    if (signal?.aborted) throw new JobCancelled();
    const slot = await this.acquire();
    if (signal?.aborted) {
      this.release(slot);
      throw new JobCancelled();
    }
    const handle = slot.handle;
    let replaced = false;
    try {
      const run = (async () => {
        await slot.ready;
        return handle.race(task(handle.api));
      })();
      return await abortable(run, signal, () => {
        replaced = true;
        this.replace(slot, null);
      });
    } catch (error) {
      if (error instanceof WorkerLost && !replaced) {
        replaced = true;
        this.replace(slot, error.message);
      }
      throw error;
    } finally {
      if (!replaced) this.release(slot);
    }
  }

  /**
   * Runs `task` for every item on all workers at once; results in item order. A lost worker
   * costs one retry of its item on a fresh worker; a second loss fails the whole map.
   */
  async map<I, T>(items: readonly I[], task: (api: Comlink.Remote<EngineWorkerApi>, item: I) => Promise<T>, options: MapOptions = {}): Promise<T[]> {
    const results = new Array<T>(items.length);
    let next = 0;
    let done = 0;
    const controller = new AbortController();
    const stop = () => controller.abort();
    options.signal?.addEventListener('abort', stop, { once: true });
    if (options.signal?.aborted) stop();
    try {
      const lanes = Array.from({ length: Math.min(this.size, items.length) }, async () => {
        while (next < items.length) {
          const i = next++;
          let attempt = 0;
          for (;;) {
            try {
              results[i] = await this.use((api) => task(api, items[i]), controller.signal);
              break;
            } catch (error) {
              if (error instanceof WorkerLost && attempt === 0 && !this.broken) {
                attempt++;
                continue;
              }
              throw error;
            }
          }
          done++;
          options.onProgress?.(done, items.length);
        }
      });
      await Promise.all(lanes.map((lane) => lane.catch((error) => {
        stop(); // one failure ends the other lanes' work too
        throw error;
      })));
      return results;
    } finally {
      options.signal?.removeEventListener('abort', stop);
    }
  }

  /** Diagnostics: makes one worker fail with an uncaught error. */
  crash(slot = 0): void {
    void this.slots[slot % this.size].handle.api.crash();
  }

  dispose(): void {
    this.disposed = true;
    for (const slot of this.slots) slot.handle.terminate();
  }
}
