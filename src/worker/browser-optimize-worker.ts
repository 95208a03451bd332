// A browser module worker for one restart of a study's search (runRestart: NLopt on the study's
// training objective), and for the held-out re-scoring of the winner. The workbench starts a fresh
// one per restart, as the Node search does, so every restart's stochastic stream is its own.
// Cancel: the caller sets the Int32 on the task's SharedArrayBuffer; the run ends at the next
// evaluation with reason 'cancelled' and its best point so far.

import './browser-atob-shim.js';
import * as Comlink from 'comlink';
import { loadEngine } from '../core/engine.js';
import { comparePolicies, rescore, StudyEvaluator, type Evaluation, type PolicyComparison, type Rescore } from '../core/optimize/objectives.js';
import { runRestart, type RestartProgress, type RestartResult, type RestartTask } from '../core/optimize/restart.js';
import { parseStudy } from '../core/optimize/study.js';

/** Progress is sent at most this often (ms), and always for the last evaluation. */
const PROGRESS_INTERVAL_MS = 100;

export interface FinishedScores {
  start: Evaluation;
  holdoutStart: Rescore | null;
  holdoutBest: Rescore | null;
  comparison: PolicyComparison | null;
  /** The base scenario with the best parameters set. */
  bestScenario: unknown;
}

const api = {
  async run(task: Omit<RestartTask, 'cancel'> & { cancel?: SharedArrayBuffer }, onProgress?: (p: RestartProgress) => void): Promise<RestartResult> {
    const flag = task.cancel ? new Int32Array(task.cancel) : null;
    let last = 0;
    let pending: RestartProgress | null = null;
    const send = (p: RestartProgress) => {
      pending = p;
      const now = performance.now();
      if (now - last < PROGRESS_INTERVAL_MS) return;
      last = now;
      pending = null;
      void onProgress?.(p);
    };
    const result = await runRestart(task as RestartTask, {
      shouldStop: () => flag !== null && Atomics.load(flag, 0) !== 0,
      onProgress: onProgress ? send : undefined,
    });
    if (pending) void onProgress?.(pending);
    return result;
  },

  /** The start point's training scores and both candidates' held-out scores and paired comparison. */
  async finish(studyJson: unknown, start: number[], best: number[]): Promise<FinishedScores> {
    const study = parseStudy(studyJson);
    const engine = await loadEngine();
    const training = new StudyEvaluator(study, engine, 'training');
    const holdout = study.holdout !== null;
    const monteCarlo = study.objective.terms.some((t) => t.kind === 'survival' || t.kind === 'tracking');
    return {
      start: training.evaluate(start),
      holdoutStart: holdout ? rescore(study, engine, start) : null,
      holdoutBest: holdout ? rescore(study, engine, best) : null,
      comparison: holdout && monteCarlo ? comparePolicies(study, engine, start, best) : null,
      bestScenario: training.scenarioAt(best),
    };
  },
};

export type OptimizeWorkerApi = typeof api;

Comlink.expose(api);
