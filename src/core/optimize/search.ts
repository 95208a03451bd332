// A study's policy search: multi-start NLopt, each restart in a fresh worker thread
// (Node), spread over the cores; then the winner is re-scored on held-out seeds it never
// saw and compared with the start policy. The result is plain data (the result file).

import * as Comlink from 'comlink';
import nodeEndpoint from 'comlink/dist/esm/node-adapter.mjs';
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import { loadEngine } from '../engine.js';
import { SAFETY_CAUTION } from '../safety.js';
import { contentHash, PRONK_VERSION } from '../version.js';
import type { StopReason, TracePoint } from './nlopt.js';
import { comparePolicies, rescore, StudyEvaluator, type Evaluation } from './objectives.js';
import type { RestartProgress, RestartResult, RestartTask } from './restart.js';
import { usesNativeConstraints, type Study } from './study.js';
import { compiledWorkerUrl } from '../../worker/paths.js';
import type { OptimizeWorkerApi } from '../../worker/optimize-worker.js';

export interface SearchProgress {
  /** Evaluations done, all restarts together. */
  evaluations: number;
  /** Evaluation budget, all restarts together. */
  budget: number;
  /** Best (lowest) objective value to minimize seen so far, and where. */
  best: number;
  x: number[];
  restartsDone: number;
  restarts: number;
}

export interface SearchOptions {
  workers?: number;
  onProgress?: (p: SearchProgress) => void;
  signal?: AbortSignal;
}

export class SearchError extends Error {}

export interface RestartSummary {
  restart: number;
  x0: number[];
  x: number[];
  value: number;
  objective: number;
  feasible: boolean;
  evaluations: number;
  reason: StopReason;
  reproducible: boolean;
  seconds: number;
  trace: TracePoint[];
}

export interface OptimizationResult {
  format: 'pronk-result';
  format_version: 1;
  kind: 'optimization';
  /** The base scenario with the best parameters set (runs in `pronk simulate`). */
  scenario: unknown;
  policy: unknown;
  parameters: { path: string; value: number; start: number; lower: number; upper: number }[];
  cancelled: boolean;
  scores: {
    training: { start: Evaluation; best: Evaluation };
    holdout: { start: unknown; best: unknown; comparison: unknown };
  };
  /**
   * The limits at the best point, measured on the HELD-OUT seeds (more rollouts meet rarer
   * terrain than the search saw): what pronk export checks. The training margins are in
   * scores.training.best.constraints.
   */
  constraints: Evaluation['constraints'];
  restarts: RestartSummary[];
  best_restart: number;
  provenance: {
    pronk_version: string;
    study_sha256: string;
    scenario_sha256: string;
    seed: number;
    holdout_seed: number;
    method: string;
    local_method: string | null;
    constraint_handling: 'native' | 'penalty';
    budget: { max_evaluations: number; max_time_s: number | null; xtol_rel: number; restarts: number };
    evaluations: number;
    seconds: number;
    date: string;
  };
  caution: string;
}

/** Start points: the study's own for restart 0, then a shifted Halton sequence inside the bounds. */
export function restartStarts(start: number[], lower: number[], upper: number[], restarts: number, seed: number): number[][] {
  const primes = [2, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37, 41, 43, 47, 53, 59, 61, 67, 71];
  const halton = (i: number, b: number) => {
    let f = 1;
    let r = 0;
    for (let k = i; k > 0; k = Math.floor(k / b)) {
      f /= b;
      r += f * (k % b);
    }
    return r;
  };
  // Cranley–Patterson rotation by the seed's golden-ratio sequence: a different set per seed.
  const shift = (d: number) => ((seed + 1) * 0.6180339887498949 * (d + 1)) % 1;
  const out = [start.slice()];
  for (let r = 1; r < restarts; r++) {
    out.push(start.map((_, d) => lower[d] + (((halton(r, primes[d % primes.length]) + shift(d)) % 1) * (upper[d] - lower[d]))));
  }
  return out;
}

export async function optimizeStudy(study: Study, options: SearchOptions = {}): Promise<OptimizationResult> {
  const started = performance.now();
  const engine = await loadEngine();
  const training = new StudyEvaluator(study, engine, 'training');
  const restarts = study.search.restarts;
  const starts = restartStarts(training.start, training.lower, training.upper, restarts, study.search.seed);
  const cancel = new SharedArrayBuffer(4);
  const flag = new Int32Array(cancel);
  const onAbort = () => Atomics.store(flag, 0, 1);
  if (options.signal?.aborted) onAbort();
  options.signal?.addEventListener('abort', onAbort);

  const workers = Math.max(1, Math.min(options.workers ?? availableParallelism(), restarts));
  const perRestart = new Map<number, RestartProgress>();
  let done = 0;
  const report = () => {
    if (!options.onProgress) return;
    let evaluations = 0;
    let best: RestartProgress | undefined;
    for (const p of perRestart.values()) {
      evaluations += p.evaluations;
      if (!best || p.best < best.best) best = p;
    }
    options.onProgress({
      evaluations,
      budget: restarts * study.search.max_evaluations,
      best: best?.best ?? Infinity,
      x: best?.x ?? training.start,
      restartsDone: done,
      restarts,
    });
  };

  const studyJson = JSON.parse(JSON.stringify(study)) as unknown;
  const results: RestartResult[] = [];
  let next = 0;
  const url = compiledWorkerUrl('optimize-worker.js');
  try {
    await Promise.all(
      Array.from({ length: workers }, async () => {
        while (next < restarts) {
          const restart = next++;
          const task: RestartTask = { study: studyJson, restart, x0: starts[restart], cancel };
          results.push(await runInWorker(url, task, (p) => {
            perRestart.set(p.restart, p);
            report();
          }));
          done++;
          report();
        }
      }),
    );
  } finally {
    options.signal?.removeEventListener('abort', onAbort);
  }
  results.sort((a, b) => a.restart - b.restart);

  // The winner: feasible first, then the lowest value; ties go to the earlier restart.
  let best = results[0];
  for (const r of results) {
    const a = r.evaluation;
    const b = best.evaluation;
    if ((a.feasible && !b.feasible) || (a.feasible === b.feasible && a.value < b.value)) best = r;
  }
  const startEvaluation = training.evaluate(training.start);
  const holdoutStart = rescore(study, engine, training.start);
  const holdoutBest = rescore(study, engine, best.outcome.x);
  const comparison = comparePolicies(study, engine, training.start, best.outcome.x);
  const bestScenario = training.scenarioAt(best.outcome.x);
  const evaluations = results.reduce((n, r) => n + r.outcome.evaluations, 0);
  return {
    format: 'pronk-result',
    format_version: 1,
    kind: 'optimization',
    scenario: bestScenario,
    policy: bestScenario.policy,
    parameters: training.paths.map((path, i) => ({
      path,
      value: best.outcome.x[i],
      start: training.start[i],
      lower: training.lower[i],
      upper: training.upper[i],
    })),
    cancelled: Atomics.load(flag, 0) !== 0,
    scores: {
      training: { start: startEvaluation, best: best.evaluation },
      holdout: { start: holdoutStart, best: holdoutBest, comparison },
    },
    constraints: holdoutBest.evaluation.constraints,
    restarts: results.map((r) => ({
      restart: r.restart,
      x0: r.x0,
      x: r.outcome.x,
      value: r.evaluation.value,
      objective: r.evaluation.objective,
      feasible: r.evaluation.feasible,
      evaluations: r.outcome.evaluations,
      reason: r.outcome.reason,
      reproducible: r.outcome.reproducible,
      seconds: r.seconds,
      trace: r.outcome.trace,
    })),
    best_restart: best.restart,
    provenance: {
      pronk_version: PRONK_VERSION,
      study_sha256: await contentHash(study),
      scenario_sha256: await contentHash(study.scenario),
      seed: study.seed,
      holdout_seed: study.holdout.seed,
      method: study.search.method,
      local_method: study.search.local_method ?? null,
      constraint_handling: usesNativeConstraints(study) ? 'native' : 'penalty',
      budget: {
        max_evaluations: study.search.max_evaluations,
        max_time_s: study.search.max_time_s ?? null,
        xtol_rel: study.search.xtol_rel,
        restarts,
      },
      evaluations,
      seconds: (performance.now() - started) / 1000,
      date: new Date().toISOString(),
    },
    caution: SAFETY_CAUTION,
  };
}

// One restart in a fresh worker, ended when it answers; a worker that dies is an error.
async function runInWorker(url: URL, task: RestartTask, onProgress: (p: RestartProgress) => void): Promise<RestartResult> {
  const worker = new Worker(url);
  const api = Comlink.wrap<OptimizeWorkerApi>(nodeEndpoint(worker as unknown as Parameters<typeof nodeEndpoint>[0]));
  try {
    const died = new Promise<never>((_, reject) => {
      worker.once('error', (e) => reject(new SearchError(`restart ${task.restart}: the worker failed: ${e.message}`)));
      worker.once('exit', (code) => reject(new SearchError(`restart ${task.restart}: the worker exited (code ${code})`)));
    });
    return await Promise.race([api.run(task, Comlink.proxy(onProgress)) as Promise<RestartResult>, died]);
  } catch (error) {
    if (error instanceof SearchError) throw error;
    throw new SearchError(`restart ${task.restart}: ${error instanceof Error ? error.message : String(error)}`);
  } finally {
    api[Comlink.releaseProxy]();
    await worker.terminate();
  }
}
