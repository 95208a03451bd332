// Work done in this thread a piece at a time, in order, with the next macrotask between pieces so
// that a cancel (an AbortSignal set by a message, a key or a signal handler) gets in. Node's worker
// pool runs a batch this way when it has one thread (src/worker/pool.ts), and a one-thread
// robustness run tallies its rollouts this way (analysis/robustness.ts).

/** The work was stopped by its AbortSignal between two pieces. */
export class CancelledError extends Error {
  constructor() {
    super('cancelled');
  }
}

const nextMacrotask = () => new Promise<void>((resolve) => (typeof setImmediate === 'function' ? setImmediate(resolve) : setTimeout(resolve, 0)));

/** `each` over the pieces in order; throws CancelledError when `signal` is aborted before a piece. */
export async function eachInTurn<T>(pieces: readonly T[], signal: AbortSignal | undefined, each: (piece: T) => void): Promise<void> {
  for (let i = 0; i < pieces.length; i++) {
    if (signal?.aborted) throw new CancelledError();
    each(pieces[i]);
    if (i + 1 < pieces.length) await nextMacrotask();
  }
}
