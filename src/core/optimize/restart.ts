// One restart of a study's search: NLopt on the study's training objective from one start
// point. Runs wherever it is called (a Node worker thread, a browser worker); the caller owns
// parallelism, cancellation (shouldStop) and progress.

import { loadEngine } from '../engine.js';
import { minimize, type Outcome } from './nlopt.js';
import { StudyEvaluator, type Evaluation } from './objectives.js';
import { parseStudy, usesNativeConstraints } from './study.js';

export interface RestartTask {
  /** The study, as validated JSON (re-validated here: a worker trusts nothing it is sent). */
  study: unknown;
  restart: number;
  x0: number[];
  /** Int32Array(1) on this buffer: non-zero asks the run to stop. */
  cancel: SharedArrayBuffer;
}

export interface RestartProgress {
  restart: number;
  evaluations: number;
  best: number;
  x: number[];
}

export interface RestartResult {
  restart: number;
  x0: number[];
  outcome: Outcome;
  /** The training evaluation at the best point found. */
  evaluation: Evaluation;
  seconds: number;
}

export interface RestartControl {
  shouldStop?: () => boolean;
  onProgress?: (p: RestartProgress) => void;
}

export async function runRestart(task: RestartTask, control: RestartControl = {}): Promise<RestartResult> {
  const started = performance.now();
  const study = parseStudy(task.study);
  const engine = await loadEngine();
  const evaluator = new StudyEvaluator(study, engine, 'training');
  const native = usesNativeConstraints(study);
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
      seed: study.search.seed + 7919 * task.restart,
    },
    {
      shouldStop: control.shouldStop,
      onProgress: control.onProgress && ((p) => control.onProgress!({ restart: task.restart, ...p })),
    },
  );
  return {
    restart: task.restart,
    x0: task.x0,
    outcome,
    evaluation: evaluator.evaluate(outcome.x),
    seconds: (performance.now() - started) / 1000,
  };
}
