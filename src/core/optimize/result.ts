// The parts of a policy search that do not depend on where it runs (Node worker threads or
// browser workers): the restarts' start points, the choice of the winner, and the result file.

import { MODEL_KIND } from '../json-output.js';
import { SAFETY_CAUTION } from '../safety.js';
import { contentHash, PRONK_VERSION } from '../version.js';
import type { StopReason, TracePoint } from './nlopt.js';
import type { Evaluation } from './objectives.js';
import type { RestartResult } from './restart.js';
import { usesNativeConstraints, type Study } from './study.js';

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
  /** The model the policy was made for (see json-output.ts). */
  model: typeof MODEL_KIND;
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

/** The winner: feasible first, then the lowest value; ties go to the earlier restart. */
export function pickBest(results: readonly RestartResult[]): RestartResult {
  let best = results[0];
  for (const r of results) {
    const a = r.evaluation;
    const b = best.evaluation;
    if ((a.feasible && !b.feasible) || (a.feasible === b.feasible && a.value < b.value)) best = r;
  }
  return best;
}

export interface FinalScores {
  /** Training evaluation of the study's start point. */
  start: Evaluation;
  /** rescore() of the start point and of the winner, and comparePolicies(start, winner). */
  holdoutStart: { evaluation: Evaluation } & Record<string, unknown>;
  holdoutBest: { evaluation: Evaluation } & Record<string, unknown>;
  comparison: unknown;
  /** The base scenario with the winner's parameters. */
  scenario: { policy: unknown };
  paths: string[];
  lower: number[];
  upper: number[];
  startPoint: number[];
}

/** The result file of a finished (or cancelled) search. */
export async function assembleResult(
  study: Study,
  unordered: readonly RestartResult[],
  scores: FinalScores,
  cancelled: boolean,
  seconds: number,
): Promise<OptimizationResult> {
  const results = [...unordered].sort((a, b) => a.restart - b.restart);
  const best = pickBest(results);
  const evaluations = results.reduce((n, r) => n + r.outcome.evaluations, 0);
  return {
    format: 'pronk-result',
    format_version: 1,
    kind: 'optimization',
    model: MODEL_KIND,
    scenario: scores.scenario,
    policy: scores.scenario.policy,
    parameters: scores.paths.map((path, i) => ({
      path,
      value: best.outcome.x[i],
      start: scores.startPoint[i],
      lower: scores.lower[i],
      upper: scores.upper[i],
    })),
    cancelled,
    scores: {
      training: { start: scores.start, best: best.evaluation },
      holdout: { start: scores.holdoutStart, best: scores.holdoutBest, comparison: scores.comparison },
    },
    constraints: scores.holdoutBest.evaluation.constraints,
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
        max_time_s: study.search.max_time_s || null,
        xtol_rel: study.search.xtol_rel,
        restarts: study.search.restarts,
      },
      evaluations,
      seconds,
      date: new Date().toISOString(),
    },
    caution: SAFETY_CAUTION,
  };
}
