// Giving the main thread back between pieces of work that would together be one long task (a
// result's finish, its figure's first draw): the browser handles input and paints in between.

interface Scheduler {
  yield?: () => Promise<void>;
}

/** Resolves in a later task (scheduler.yield where the browser has it: the continuation goes before other queued work). */
export function nextTask(): Promise<void> {
  const scheduler = (globalThis as { scheduler?: Scheduler }).scheduler;
  if (typeof scheduler?.yield === 'function') return scheduler.yield();
  return new Promise((resolve) => setTimeout(resolve, 0));
}

interface IdleWindow {
  requestIdleCallback?: (callback: () => void, options?: { timeout: number }) => number;
}

/** Runs `run` in an idle moment (requestIdleCallback, at most `timeout` ms away; a short timer where the browser has none). */
export function whenIdle(run: () => void, timeout: number): void {
  const idle = (globalThis as IdleWindow).requestIdleCallback;
  if (idle) idle(run, { timeout });
  else setTimeout(run, 50);
}
