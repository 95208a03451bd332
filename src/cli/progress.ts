// What a command says while it works, the same way in every command: the result goes to stdout and
// nothing else does; status lines ("pronk basin: figure written to basin.svg") and progress go to
// stderr. Progress is one line redrawn in place, only when stderr is a terminal (a log file or a
// pipe gets no progress), at most ten times a second, first drawn once the work has taken a
// quarter of a second (a quick run shows none), and erased when the work ends, so that what stays
// on the terminal is the result and the status lines.

import type { CliIO, OutputStream } from './command.js';

export interface Progress {
  /** Starts a named phase (e.g. "held-out re-scoring"), with its total when it is known, and what it counts when that differs from the start's unit. */
  phase(label: string, total?: number, unit?: string): void;
  /** Work done in the current phase (of `total`, when known), with an optional short detail. */
  update(done: number, total?: number, detail?: string): void;
  /** Erases the line; call once the work has ended, also when it failed. */
  done(): void;
}

export interface ProgressOptions {
  /** What is counted ("rollouts", "evaluations"). */
  unit?: string;
  /** Milliseconds before the first drawing (default 250). */
  delay_ms?: number;
  /** Clock in milliseconds (tests pass their own). */
  now?: () => number;
}

const NO_PROGRESS: Progress = { phase: () => {}, update: () => {}, done: () => {} };

// The progress line currently on each stream, so that a status line can step around it.
const active = new WeakMap<OutputStream, { clear(): void; redraw(): void }>();

/** A progress line for `pronk COMMAND` on the terminal, or nothing when stderr is not one. */
export function startProgress(io: CliIO, command: string, options: ProgressOptions = {}): Progress {
  const stream = io.stderr;
  if (!stream.isTTY || io.env.TERM === 'dumb') return NO_PROGRESS;
  const now = options.now ?? (() => performance.now());
  const delay = options.delay_ms ?? 250;
  let unit = options.unit ?? '';
  const started = now();
  let phaseStarted = started;
  let label = '';
  let total: number | undefined;
  let done = 0;
  let detail = '';
  let lastDrawn = -Infinity;
  let drawn = '';

  const text = (): string => {
    const elapsed = (now() - started) / 1000;
    const parts: string[] = [];
    if (label) parts.push(label);
    if (total !== undefined && total > 0) {
      const fraction = Math.min(1, done / total);
      let counted = `${done} of ${total}${unit ? ` ${unit}` : ''} (${Math.floor(100 * fraction)} %)`;
      const phaseElapsed = (now() - phaseStarted) / 1000;
      if (fraction > 0.02 && fraction < 1 && phaseElapsed > 2) counted += `, about ${seconds(phaseElapsed * (1 / fraction - 1))} left`;
      parts.push(counted);
    } else if (done > 0) {
      parts.push(`${done}${unit ? ` ${unit}` : ''}`);
    }
    if (detail) parts.push(detail);
    parts.push(seconds(elapsed));
    const line = `pronk ${command}: ${parts.join(', ')}`;
    const width = Math.max(20, (stream.columns ?? 80) - 1); // a wrapped line could not be redrawn in place
    return line.length > width ? `${line.slice(0, width - 1)}…` : line;
  };
  const draw = (force: boolean) => {
    const t = now();
    if (t - started < delay) return;
    if (!force && t - lastDrawn < 100) return;
    lastDrawn = t;
    drawn = text();
    stream.write(`\r${drawn}\u001b[K`);
  };
  const clear = () => {
    if (drawn) stream.write('\r\u001b[K');
    drawn = '';
  };
  active.set(stream, { clear, redraw: () => draw(true) });

  return {
    phase(name, phaseTotal, phaseUnit) {
      label = name;
      total = phaseTotal;
      if (phaseUnit !== undefined) unit = phaseUnit;
      done = 0;
      detail = '';
      phaseStarted = now();
      draw(true);
    },
    update(count, countTotal, countDetail) {
      done = count;
      if (countTotal !== undefined) total = countTotal;
      if (countDetail !== undefined) detail = countDetail;
      draw(total !== undefined && done >= total);
    },
    done() {
      clear();
      active.delete(stream);
    },
  };
}

/** One status line on stderr ("pronk COMMAND: MESSAGE"), stepping around a progress line. */
export function status(io: CliIO, command: string, message: string): void {
  const progress = active.get(io.stderr);
  progress?.clear();
  io.stderr.write(`pronk ${command}: ${message}\n`);
  progress?.redraw();
}

function seconds(s: number): string {
  if (s < 60) return `${Math.round(s)} s`;
  const minutes = Math.floor(s / 60);
  return `${minutes} min ${String(Math.round(s - 60 * minutes)).padStart(2, '0')} s`;
}
