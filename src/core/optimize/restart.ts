// One restart of a study's search: NLopt on the study's training objective from one start
// point. Runs wherever it is called (a Node worker thread, a browser worker); the caller owns
// parallelism, cancellation (shouldStop) and progress. Progress speaks in scores (larger is
// better); NLopt's minimized values stay inside nlopt.ts and the Outcome.

import { loadEngine } from '../engine.js';
import { minimize, seedToClock, type Outcome } from './nlopt.js';
import { StudyEvaluator, type BatchEngine, type Evaluation } from './objectives.js';
import { lateralScenarioOf, parseStudy, usesNativeConstraints } from './study.js';

export interface RestartTask {
  /** The study, as validated JSON (re-validated here: a worker trusts nothing it is sent). */
  study: unknown;
  restart: number;
  x0: number[];
}

export interface RestartProgress {
  restart: number;
  evaluations: number;
  /** The best score so far (larger is better; feasible points first, as the search ranks them). */
  bestScore: number;
  x: number[];
}

export interface RestartResult {
  restart: number;
  x0: number[];
  outcome: Outcome;
  /** The training evaluation at the start point x0. */
  start: Evaluation;
  /** The training evaluation at the best point found. */
  evaluation: Evaluation;
  seconds: number;
}

export interface RestartControl {
  shouldStop?: () => boolean;
  /** Runs the evaluations' batches (default: the kernel in this thread); the same numbers either way. */
  engine?: BatchEngine;
  onProgress?: (p: RestartProgress) => void;
}

/** The seed of restart r's stochastic method: the search seed moved by a fixed stride per restart (seed mod 2^31 is what NLopt sees). */
export function restartSeed(searchSeed: number, restart: number): number {
  return seedToClock(searchSeed) + 7919 * restart;
}

export async function runRestart(task: RestartTask, control: RestartControl = {}): Promise<RestartResult> {
  const started = performance.now();
  const study = parseStudy(task.study);
  // a lateral study runs the whole engine in this thread (its kicks are drawn and judged here)
  const engine = lateralScenarioOf(study.scenario) ? await loadEngine() : (control.engine ?? (await loadEngine()));
  const evaluator = new StudyEvaluator(study, engine, 'training');
  const native = usesNativeConstraints(study);
  // the start point first: its scores go in the result, and NLopt's first evaluation (at x0) reuses them
  const start = evaluator.evaluate(task.x0);
  const outcome = await minimize(
    {
      method: study.search.method,
      localMethod: study.search.local_method,
      lower: evaluator.lower,
      upper: evaluator.upper,
      x0: task.x0,
      objective: (x) => evaluator.evaluate(x).value,
      constraints: native ? evaluator.constraintFunctions() : undefined,
      maxEvaluations: study.search.max_evaluations,
      maxTime_s: study.search.max_time_s,
      xtolRel: study.search.xtol_rel,
      seed: restartSeed(study.search.seed, task.restart),
    },
    {
      shouldStop: control.shouldStop,
      onProgress:
        control.onProgress &&
        ((p) => control.onProgress!({ restart: task.restart, evaluations: p.evaluations, bestScore: -p.best, x: p.x })),
    },
  );
  return {
    restart: task.restart,
    x0: task.x0,
    outcome,
    start,
    evaluation: evaluator.evaluate(outcome.x),
    seconds: (performance.now() - started) / 1000,
  };
}
