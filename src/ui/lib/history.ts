// Undo and redo of the drafts: every change to the scenario or the study (a keystroke, a kind
// switched, a file opened, the demo loaded, a point loaded from a map) is undoable. A run of
// keystrokes in one field is one step; so is everything one action changes at once. The history
// is plain JSON, saved with the drafts so that a reload keeps it.

export interface Drafts {
  scenario: Record<string, unknown>;
  study: Record<string, unknown>;
}

export interface Step {
  /** The drafts before the change. */
  drafts: Drafts;
  /** What the change was, for the Undo button's title ("Undo: Mass"). */
  label: string;
  at: number;
}

export interface HistoryState {
  past: Step[];
  future: Step[];
}

/** Steps kept each way: drafts are a few kB, so this stays well inside a browser's storage. */
export const HISTORY_LIMIT = 100;
/** Keystrokes in one field closer than this together make one step, ms. */
export const COALESCE_MS = 1500;

export class History {
  past: Step[] = [];
  future: Step[] = [];
  private lastKey: string | null = null;
  private lastAt = 0;

  constructor(saved?: HistoryState | null) {
    if (saved && Array.isArray(saved.past) && Array.isArray(saved.future)) {
      this.past = saved.past.filter(valid).slice(-HISTORY_LIMIT);
      this.future = saved.future.filter(valid).slice(-HISTORY_LIMIT);
    }
  }

  /**
   * Records `before` as the state to go back to for a change called `label`. With a `key` (a
   * field's path), a change to the same field soon after the last one joins that step.
   */
  record(before: Drafts, label: string, key: string | null = null, now = Date.now()): boolean {
    const joins = key !== null && key === this.lastKey && now - this.lastAt < COALESCE_MS && this.past.length > 0;
    this.lastKey = key;
    this.lastAt = now;
    this.future = [];
    if (joins) return false;
    this.past.push({ drafts: before, label, at: now });
    if (this.past.length > HISTORY_LIMIT) this.past.splice(0, this.past.length - HISTORY_LIMIT);
    return true;
  }

  /** The drafts to show after an undo (and `current` kept for redo), or null when there is nothing to undo. */
  undo(current: Drafts, now = Date.now()): Step | null {
    const step = this.past.pop();
    if (!step) return null;
    this.future.push({ drafts: current, label: step.label, at: now });
    this.lastKey = null;
    return step;
  }

  redo(current: Drafts, now = Date.now()): Step | null {
    const step = this.future.pop();
    if (!step) return null;
    this.past.push({ drafts: current, label: step.label, at: now });
    this.lastKey = null;
    return step;
  }

  /** Ends the current run of keystrokes (the next change is a step of its own). */
  seal(): void {
    this.lastKey = null;
  }

  toJSON(): HistoryState {
    return { past: this.past, future: this.future };
  }
}

function valid(step: unknown): step is Step {
  const s = step as Step;
  return !!s && typeof s === 'object' && typeof s.label === 'string' && !!s.drafts && typeof s.drafts.scenario === 'object' && typeof s.drafts.study === 'object';
}
