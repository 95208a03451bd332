// The parts of a policy search that do not depend on where it runs (Node worker threads or
// browser workers): the candidate start points and the choice among them, the choice of the
// winner, the words for why a restart stopped, and the result file.
//
// Sign convention: a SCORE is larger-is-better everywhere it is shown or stored (objective −
// penalty). NLopt minimizes value = −score; `value` fields are kept for readers of older files.

import { modelHeader } from '../json-output.js';
import type { ModelKind } from '../models/kind.js';
import { SAFETY_CAUTION } from '../safety.js';
import { contentHash, PRONK_VERSION } from '../version.js';
import type { Outcome, StopReason } from './nlopt.js';
import { markBinding, type ConstraintResult, type Evaluation, type PolicyComparison, type Rescore, type Screening } from './objectives.js';
import type { RestartResult } from './restart.js';
import { parseCandidateScenario, scenarioValueAt, usesNativeConstraints, type Study, type TermKind } from './study.js';

/** One point of a restart's convergence trace, in scores (larger is better). */
export interface ScoreTracePoint {
  evaluation: number;
  /** The score at this evaluation. */
  score: number;
  /** The best score so far (feasible points first, as the search ranks them). */
  best_score: number;
}

/** Where a restart started. */
export type StartOrigin = 'study start' | 'screened: viable' | 'screened: best of the rest';

export interface RestartSummary {
  restart: number;
  x0: number[];
  start_origin: StartOrigin;
  /** The screening of x0 (null when it was not screened, e.g. a search cancelled before screening ended). */
  screening: Screening | null;
  x: number[];
  /** The training score at x (larger is better). */
  score: number;
  /** The training score at x0. */
  start_score: number;
  /** NLopt's minimized value at x: −score. */
  value: number;
  objective: number;
  feasible: boolean;
  evaluations: number;
  reason: StopReason;
  /** Why the restart stopped, in words (with the budget, the tolerance, a plateau, the gain). */
  stopped_because: string;
  /** Every evaluation of the restart scored the same: it sat on a plateau with no direction to follow. */
  plateau: boolean;
  reproducible: boolean;
  seconds: number;
  trace: ScoreTracePoint[];
}

export interface HoldoutSurvival {
  /** Index of the Monte Carlo term (objective.terms). */
  term: number;
  kind: TermKind;
  rollouts: number;
  /** Held-out survival of the study's start and of the best point, fractions. */
  start: number;
  best: number;
  /** best − start (larger is better), and its paired 95 % interval (Newcombe 1998, method 10) and the independent one. */
  gain: number;
  gain_paired95: [number, number];
  gain_newcombe95: [number, number];
}

/** The numbers a reader looks at first, every score larger-is-better. */
export interface ResultSummary {
  score_sense: 'larger is better';
  training_score: { start: number; best: number };
  /** null when the held-out re-scoring was skipped. */
  holdout_score: { start: number; best: number } | null;
  holdout_survival: HoldoutSurvival[];
  /** The limit with the least margin as a percentage of the limit, on the set `constraints` holds. */
  binding_limit: { name: string; margin_percent: number; set: 'holdout' | 'training' } | null;
  restarts: { planned: number; run: number; on_plateau: number; improved: number };
}

export interface ScreeningSummary {
  /** Candidate start points screened, the study's start (candidate 0) included. */
  candidates: number;
  screened: number;
  viable: number;
  /** Screening rollouts per Monte Carlo term. */
  rollouts_per_term: number;
  /** What screening is, in words. */
  note: string;
}

export interface OptimizationResult {
  format: 'pronk-result';
  format_version: 1;
  kind: 'optimization';
  /** The model the policy was made for (see json-output.ts). */
  model: ModelKind;
  /** The base scenario with the best parameters set (runs in `pronk simulate`). */
  scenario: unknown;
  policy: unknown;
  parameters: { path: string; value: number; start: number; lower: number; upper: number }[];
  cancelled: boolean;
  summary: ResultSummary;
  scores: {
    training: { start: Evaluation; best: Evaluation };
    /** null parts when the held-out re-scoring was skipped (a second cancel). */
    holdout: { start: Rescore | null; best: Rescore | null; comparison: PolicyComparison | null; skipped: boolean };
  };
  /**
   * The limits at the best point, measured on the HELD-OUT seeds (more rollouts meet rarer
   * terrain than the search saw): what pronk export checks. The training margins are in
   * scores.training.best.constraints. When the held-out re-scoring was skipped, the training
   * margins, and constraints_set says so.
   */
  constraints: ConstraintResult[];
  constraints_set: 'holdout' | 'training';
  screening: ScreeningSummary;
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
    /** Wall time of each phase, s. */
    phase_seconds: { screening: number; search: number; holdout: number };
    date: string;
  };
  caution: string;
}

// ---------------------------------------------------------------------------------------------
// Start points.

/** Candidate points: the study's own start first, then a shifted Halton sequence inside the bounds. */
export function restartStarts(start: number[], lower: number[], upper: number[], count: number, seed: number): number[][] {
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
  for (let r = 1; r < count; r++) {
    out.push(start.map((_, d) => lower[d] + (((halton(r, primes[d % primes.length]) + shift(d)) % 1) * (upper[d] - lower[d]))));
  }
  return out;
}

/** Candidates screened per restart after the first (at least MIN_SCREENED_CANDIDATES, at most MAX_SCREENED_CANDIDATES). */
export const CANDIDATES_PER_RESTART = 8;
export const MIN_SCREENED_CANDIDATES = 16;
export const MAX_SCREENED_CANDIDATES = 4096;

/** How many candidate start points a search screens (the study's start included). */
export function candidateCount(restarts: number): number {
  if (restarts <= 1) return 1;
  return 1 + Math.min(MAX_SCREENED_CANDIDATES, Math.max(MIN_SCREENED_CANDIDATES, CANDIDATES_PER_RESTART * (restarts - 1)));
}

export interface ChosenStart {
  x0: number[];
  /** Index into the candidates. */
  candidate: number;
  origin: StartOrigin;
  screening: Screening | null;
}

/**
 * Start points for the restarts, from the screened candidates (screenings[i] of candidates[i], null
 * when not screened): restart 0 starts at the study's own start (candidate 0); the others at the
 * viable candidates in sequence order (a space-filling spread), then, if too few are viable, at
 * the best-ranked of the rest (ties to the earlier candidate). Deterministic: the candidates come
 * from the seed, and the order never depends on which screening finished first.
 */
export function chooseStarts(candidates: number[][], screenings: readonly (Screening | null)[], restarts: number): ChosenStart[] {
  const chosen: ChosenStart[] = [{ x0: candidates[0], candidate: 0, origin: 'study start', screening: screenings[0] ?? null }];
  const rest = candidates.map((_, i) => i).slice(1);
  const viable = rest.filter((i) => screenings[i]?.viable);
  const others = rest
    .filter((i) => !screenings[i]?.viable)
    .sort((a, b) => (screenings[b]?.rank ?? -1) - (screenings[a]?.rank ?? -1) || a - b);
  for (const i of viable) if (chosen.length < restarts) chosen.push({ x0: candidates[i], candidate: i, origin: 'screened: viable', screening: screenings[i] });
  for (const i of others) if (chosen.length < restarts) chosen.push({ x0: candidates[i], candidate: i, origin: 'screened: best of the rest', screening: screenings[i] ?? null });
  return chosen;
}

// ---------------------------------------------------------------------------------------------
// The winner.

/**
 * The winner, taken over the restarts in INDEX order (never the order they finished): feasible
 * first, then the highest training score (NLopt's lowest value); a tie goes to the lower restart
 * index. The same restarts give the same winner on any number of workers.
 */
export function pickBest(results: readonly RestartResult[]): RestartResult {
  if (results.length === 0) throw new Error('pickBest: no restart ran');
  const ordered = [...results].sort((a, b) => a.restart - b.restart);
  let best = ordered[0];
  for (const r of ordered) {
    const a = r.evaluation;
    const b = best.evaluation;
    if ((a.feasible && !b.feasible) || (a.feasible === b.feasible && a.score > b.score)) best = r;
  }
  return best;
}

// ---------------------------------------------------------------------------------------------
// Why a restart stopped.

const shown = (v: number) => Number(v.toPrecision(6)).toString();

/** Why a restart stopped, in words, from what its NLopt run reported. */
export function stoppedBecause(outcome: Outcome, study: Study, startScore: number, bestScore: number): string {
  const n = outcome.evaluations;
  const evaluations = `${n} evaluation${n === 1 ? '' : 's'}`;
  let why: string;
  switch (outcome.reason) {
    case 'converged':
      why = `converged: NLopt's steps shrank below the relative tolerance on the parameters (xtol_rel ${shown(study.search.xtol_rel)}) after ${evaluations}`;
      break;
    case 'max_evaluations':
      why = `used its whole budget of ${evaluations}`;
      break;
    case 'max_time':
      why = `reached the time limit (max_time_s ${shown(study.search.max_time_s)}) after ${evaluations}`;
      break;
    case 'stop_value':
      why = `reached the stop value after ${evaluations}`;
      break;
    case 'cancelled':
      why = n === 0 ? 'cancelled before its first evaluation; the start point is kept' : `cancelled after ${evaluations}; the best point so far is kept`;
      break;
    case 'method_failed':
      why = `stopped by NLopt's ${study.search.method} itself after ${evaluations} (its progress limited by round-off, or a failure of the method); the best point so far is kept`;
      break;
  }
  if (outcome.flat) {
    return `${why}, on a plateau: every evaluation scored the same (${shown(-outcome.firstValue!)}), so no direction improved the score`;
  }
  if (n === 0) return why;
  const gain = bestScore > startScore ? `score ${shown(startScore)} -> ${shown(bestScore)} (best found at evaluation ${outcome.bestAt})` : `no point scored better than the start (${shown(startScore)})`;
  return `${why}; ${gain}`;
}

// ---------------------------------------------------------------------------------------------
// The result file.

export interface SearchRecord {
  /** The restarts that ran, any order. */
  results: readonly RestartResult[];
  /** The chosen starts, by restart index (for the start origins and screenings). */
  starts: readonly ChosenStart[];
  screening: ScreeningSummary;
  /** Training evaluation of the study's start point. */
  trainingStart: Evaluation;
  /** Held-out scores of the start and the best point and their paired comparison; null when skipped. */
  holdout: { start: Rescore; best: Rescore; comparison: PolicyComparison | null } | null;
  cancelled: boolean;
  seconds: number;
  phaseSeconds: { screening: number; search: number; holdout: number };
}

/** The result file of a finished (or cancelled) search. */
export async function assembleResult(study: Study, record: SearchRecord): Promise<OptimizationResult> {
  const results = [...record.results].sort((a, b) => a.restart - b.restart);
  const best = pickBest(results);
  const free = study.free_parameters;
  // the policy, the parameters and best_restart all come from this one winner
  const scenario = parseCandidateScenario(scenarioValueAt(study.scenario, free, best.outcome.x));
  const evaluations = results.reduce((n, r) => n + r.outcome.evaluations, 0);
  const holdout = record.holdout;
  const constraints = structuredClone(holdout ? holdout.best.evaluation.constraints : best.evaluation.constraints);
  markBinding(constraints);
  const binding = constraints.find((c) => c.binding);
  const restarts = results.map((r): RestartSummary => {
    const start = record.starts[r.restart];
    return {
      restart: r.restart,
      x0: r.x0,
      start_origin: start?.origin ?? 'study start',
      screening: start?.screening ?? null,
      x: r.outcome.x,
      score: r.evaluation.score,
      start_score: r.start.score,
      value: r.evaluation.value,
      objective: r.evaluation.objective,
      feasible: r.evaluation.feasible,
      evaluations: r.outcome.evaluations,
      reason: r.outcome.reason,
      stopped_because: stoppedBecause(r.outcome, study, r.start.score, r.evaluation.score),
      plateau: r.outcome.flat,
      reproducible: r.outcome.reproducible,
      seconds: r.seconds,
      trace: r.outcome.trace.map((p) => ({ evaluation: p.evaluation, score: -p.value, best_score: -p.best })),
    };
  });
  const comparisons = holdout?.comparison?.comparisons ?? [];
  return {
    format: 'pronk-result',
    format_version: 1,
    kind: 'optimization',
    model: modelHeader(study.scenario).model,
    scenario,
    policy: scenario.policy,
    parameters: free.map((p, i) => ({ path: p.path, value: best.outcome.x[i], start: p.start, lower: p.lower, upper: p.upper })),
    cancelled: record.cancelled,
    summary: {
      score_sense: 'larger is better',
      training_score: { start: record.trainingStart.score, best: best.evaluation.score },
      holdout_score: holdout ? { start: holdout.start.evaluation.score, best: holdout.best.evaluation.score } : null,
      // comparePolicies(start, best): a is the start, b the best; the gain is b − a
      holdout_survival: comparisons.map((c) => ({
        term: c.term,
        kind: c.kind,
        rollouts: c.rollouts,
        start: c.a.survival,
        best: c.b.survival,
        gain: -c.difference,
        gain_paired95: [-c.paired95[1], -c.paired95[0]],
        gain_newcombe95: [-c.newcombe95[1], -c.newcombe95[0]],
      })),
      binding_limit: binding ? { name: binding.name, margin_percent: binding.margin_percent!, set: holdout ? 'holdout' : 'training' } : null,
      restarts: {
        planned: study.search.restarts,
        run: results.length,
        on_plateau: restarts.filter((r) => r.plateau).length,
        improved: restarts.filter((r) => r.score > r.start_score).length,
      },
    },
    scores: {
      training: { start: record.trainingStart, best: best.evaluation },
      holdout: holdout
        ? { start: holdout.start, best: holdout.best, comparison: holdout.comparison, skipped: false }
        : { start: null, best: null, comparison: null, skipped: true },
    },
    constraints,
    constraints_set: holdout ? 'holdout' : 'training',
    screening: record.screening,
    restarts,
    best_restart: best.restart,
    provenance: {
      pronk_version: PRONK_VERSION,
      study_sha256: await contentHash(study),
      // the hash of the scenario this file holds (the winner), which pronk export checks the file against
      scenario_sha256: await contentHash(scenario),
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
      seconds: record.seconds,
      phase_seconds: record.phaseSeconds,
      date: new Date().toISOString(),
    },
    caution: SAFETY_CAUTION,
  };
}
