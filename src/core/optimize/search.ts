// A study's policy search: multi-start NLopt, each restart in a fresh worker thread
// (Node), spread over the cores; then the winner is re-scored on held-out seeds it never
// saw and compared with the start policy. The result is plain data (the result file).

import * as Comlink from 'comlink';
import nodeEndpoint from 'comlink/dist/esm/node-adapter.mjs';
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import { loadEngine } from '../engine.js';
import { comparePolicies, rescore, StudyEvaluator } from './objectives.js';
import { assembleResult, pickBest, restartStarts, type FinalScores, type OptimizationResult } from './result.js';
import type { RestartProgress, RestartResult, RestartTask } from './restart.js';
import { isMonteCarloTerm, type Study } from './study.js';
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

export { restartStarts, type OptimizationResult, type RestartSummary } from './result.js';

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
  const best = pickBest(results);
  return assembleResult(
    study,
    results,
    {
      start: training.evaluate(training.start),
      holdoutStart: rescore(study, engine, training.start) as unknown as FinalScoresHoldout,
      holdoutBest: rescore(study, engine, best.outcome.x) as unknown as FinalScoresHoldout,
      // a paired survival comparison needs Monte Carlo terms (survival, tracking)
      comparison: study.objective.terms.some(isMonteCarloTerm) ? comparePolicies(study, engine, training.start, best.outcome.x) : null,
      scenario: training.scenarioAt(best.outcome.x),
      paths: training.paths,
      lower: training.lower,
      upper: training.upper,
      startPoint: training.start,
    },
    Atomics.load(flag, 0) !== 0,
    (performance.now() - started) / 1000,
  );
}

type FinalScoresHoldout = FinalScores['holdoutBest'];

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
