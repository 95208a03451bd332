// A study's policy search, in three labelled phases, wherever it runs: the caller hands in a
// SearchRunner (Node worker threads: src/worker/node-optimize.ts; browser workers:
// src/worker/browser-optimize.ts) and this module only schedules, in an order that never
// changes the result:
//  1. screening: candidate start points (the study's start, then a seeded Halton sequence) get a
//     cheap look (nominal gait, a few training rollouts); restarts start from viable ones;
//  2. search: the restarts, NLopt each, in index order over the runner's slots;
//  3. holdout: the start and the winner re-scored on the held-out seeds, in parallel, and
//     compared rollout by rollout on those same runs.
// Every progress event names its phase and counts; every score is larger-is-better.

import { pairSurvival, SCREENING_ROLLOUTS, type Screening } from './objectives.js';
import {
  assembleResult,
  candidateCount,
  chooseStarts,
  pickBest,
  restartStarts,
  type ChosenStart,
  type OptimizationResult,
  type SearchRecord,
} from './result.js';
import type { RestartProgress, RestartResult, RestartTask } from './restart.js';
import { scoreTaskSize, type ScoreResult, type ScoreTask } from './score.js';
import { isRolloutTerm, type Study } from './study.js';

export type SearchPhase = 'screening' | 'search' | 'holdout';

/** The phases' names as a person reads them. */
export const PHASE_LABELS: Record<SearchPhase, string> = {
  screening: 'screening start points',
  search: 'searching',
  holdout: 're-scoring on held-out seeds',
};

/** The unit of each phase's counts. */
export const PHASE_UNITS: Record<SearchPhase, 'candidates' | 'evaluations' | 'rollouts'> = {
  screening: 'candidates',
  search: 'evaluations',
  holdout: 'rollouts',
};

export interface LiveRestart {
  restart: number;
  evaluations: number;
  /** Best score so far (larger is better); null before its first evaluation. */
  bestScore: number | null;
  x: number[];
  done: boolean;
}

export interface SearchProgress {
  phase: SearchPhase;
  /** PHASE_LABELS[phase]. */
  label: string;
  /** This phase's counts, in PHASE_UNITS[phase]. */
  done: number;
  total: number;
  unit: 'candidates' | 'evaluations' | 'rollouts';
  /** The search's evaluations (all restarts) and their budget; final once the search phase ends. */
  evaluations: number;
  budget: number;
  /** Best score so far over all restarts (larger is better), and where; null before any evaluation. */
  bestScore: number | null;
  x: number[];
  restartsDone: number;
  restarts: number;
  perRestart: LiveRestart[];
}

export interface RunnerControl<P> {
  /** Aborted: stop soon. A restart then resolves with its best point so far; a scoring job may reject. */
  signal: AbortSignal;
  onProgress?: (p: P) => void;
}

/** Where the search's jobs run. Jobs of one search may run at once, up to `concurrency`. */
export interface SearchRunner {
  readonly concurrency: number;
  restart(task: RestartTask, control: RunnerControl<RestartProgress>): Promise<RestartResult>;
  score(task: ScoreTask, control: RunnerControl<{ done: number; total: number }>): Promise<ScoreResult>;
}

export interface SearchOptions {
  onProgress?: (p: SearchProgress) => void;
  /** Stops the search: no new restart begins, running ones end with their best point so far; the held-out re-scoring still runs. */
  signal?: AbortSignal;
  /** Skips (or stops) the held-out re-scoring: the result then carries the training margins, and says so. */
  holdoutSignal?: AbortSignal;
}

export class SearchError extends Error {}

export { restartStarts, pickBest, type OptimizationResult, type RestartSummary } from './result.js';

const now = () => performance.now();

export async function searchStudy(study: Study, runner: SearchRunner, options: SearchOptions = {}): Promise<OptimizationResult> {
  const started = now();
  const studyJson = JSON.parse(JSON.stringify(study)) as unknown;
  const free = study.free_parameters;
  const startPoint = free.map((p) => p.start);
  const restarts = study.search.restarts;
  const budget = restarts * study.search.max_evaluations;
  const never = new AbortController().signal;
  const searchSignal = options.signal ?? never;
  const holdoutSignal = options.holdoutSignal ?? never;
  const slots = Math.max(1, Math.floor(runner.concurrency));

  const live: LiveRestart[] = Array.from({ length: restarts }, (_, restart) => ({ restart, evaluations: 0, bestScore: null, x: startPoint, done: false }));
  let restartsDone = 0;
  // Progress messages travel apart from the jobs' answers and may arrive after them: a report for a
  // phase that has ended, or for a restart that has answered, is dropped.
  let current: SearchPhase | 'finished' = 'screening';
  const emit = (phase: SearchPhase, done: number, total: number) => {
    if (!options.onProgress || phase !== current) return;
    let evaluations = 0;
    let best: LiveRestart | undefined;
    for (const r of live) {
      evaluations += r.evaluations;
      if (r.bestScore !== null && (!best || r.bestScore > best.bestScore!)) best = r;
    }
    options.onProgress({
      phase,
      label: PHASE_LABELS[phase],
      done,
      total,
      unit: PHASE_UNITS[phase],
      evaluations,
      budget,
      bestScore: best?.bestScore ?? null,
      x: best?.x ?? startPoint,
      restartsDone,
      restarts,
      perRestart: live.map((r) => ({ ...r })),
    });
  };

  // 1. Screening: split the candidates over the slots; each keeps its index, so the choice never
  // depends on which part finished first.
  const t0 = now();
  const candidates = restartStarts(startPoint, free.map((p) => p.lower), free.map((p) => p.upper), candidateCount(restarts), study.search.seed);
  const screenings: (Screening | null)[] = candidates.map(() => null);
  let screened = 0;
  emit('screening', 0, candidates.length);
  const parts = Math.min(slots, candidates.length);
  await Promise.all(
    Array.from({ length: parts }, async (_, part) => {
      const first = Math.floor((part * candidates.length) / parts);
      const end = Math.floor(((part + 1) * candidates.length) / parts);
      let before = 0;
      try {
        const result = await runner.score(
          { kind: 'screen', study: studyJson, points: candidates.slice(first, end) },
          {
            signal: searchSignal,
            onProgress: ({ done }) => {
              if (done <= before) return;
              screened += done - before;
              before = done;
              emit('screening', screened, candidates.length);
            },
          },
        );
        if (result.kind === 'screen') {
          result.screenings.forEach((s, i) => (screenings[first + i] = s));
          // a part's last report may still be on its way: count the part whole now
          screened += result.screenings.length - before;
          before = result.screenings.length;
          emit('screening', screened, candidates.length);
        }
      } catch (error) {
        if (!searchSignal.aborted) throw asSearchError('screening', error);
      }
    }),
  );
  const starts = chooseStarts(candidates, screenings, restarts);
  const screeningSeconds = (now() - t0) / 1000;

  // 2. The restarts, in index order over the slots. After a cancel no new restart begins, except
  // restart 0 (the study's start), so that a result always exists.
  const t1 = now();
  const results: RestartResult[] = [];
  let next = 0;
  current = 'search';
  emit('search', 0, budget);
  const runOne = async (chosen: ChosenStart, restart: number) => {
    const r = await runner
      .restart(
        { study: studyJson, restart, x0: chosen.x0 },
        {
          signal: searchSignal,
          onProgress: (p) => {
            const l = live[p.restart];
            if (!l || l.done) return;
            l.evaluations = p.evaluations;
            l.bestScore = p.bestScore;
            l.x = p.x;
            emitSearch();
          },
        },
      )
      .catch((error: unknown) => {
        if (searchSignal.aborted) {
          if (restart !== 0) return null; // cancelled before it could report
          throw error; // the runner's own word for a cancel it could not soften
        }
        throw asSearchError(`restart ${restart}`, error);
      });
    if (!r) return;
    const l = live[restart];
    l.evaluations = r.outcome.evaluations;
    l.bestScore = r.evaluation.score;
    l.x = r.outcome.x;
    l.done = true;
    results.push(r);
    restartsDone++;
    emitSearch();
  };
  const emitSearch = () => emit('search', live.reduce((n, r) => n + r.evaluations, 0), budget);
  await Promise.all(
    Array.from({ length: Math.min(slots, restarts) }, async () => {
      while (next < restarts && (next === 0 || !searchSignal.aborted)) {
        const restart = next++;
        await runOne(starts[restart], restart);
      }
    }),
  );
  const searchSeconds = (now() - t1) / 1000;
  const byIndex = [...results].sort((a, b) => a.restart - b.restart);
  const best = pickBest(byIndex);
  const restart0 = byIndex.find((r) => r.restart === 0)!;

  // 3. Held-out re-scoring of the start and the winner, at once, with the rollout outcomes that
  // the paired comparison uses (the comparison runs nothing more).
  const t2 = now();
  let holdout: SearchRecord['holdout'] = null;
  if (!holdoutSignal.aborted) {
    const same = best.outcome.x.every((v, i) => Object.is(v, startPoint[i]));
    const points = same ? [startPoint] : [startPoint, best.outcome.x];
    const monteCarlo = study.objective.terms.some(isRolloutTerm);
    const tasks: ScoreTask[] = points.map((x) => ({ kind: 'evaluate', study: studyJson, set: 'holdout', x, outcomes: monteCarlo }));
    const sizes = tasks.map((t) => scoreTaskSize(t, study));
    const total = sizes.reduce((a, b) => a + b, 0);
    const done = sizes.map(() => 0);
    current = 'holdout';
    emit('holdout', 0, total);
    try {
      const scored = await Promise.all(
        tasks.map((task, i) =>
          runner.score(task, {
            signal: holdoutSignal,
            onProgress: (p) => {
              if (p.done < done[i]) return;
              done[i] = p.done;
              emit('holdout', done.reduce((a, b) => a + b, 0), total);
            },
          }),
        ),
      );
      const [start, winner] = [scored[0], scored[scored.length - 1]];
      if (start.kind !== 'evaluate' || winner.kind !== 'evaluate') throw new SearchError('held-out re-scoring: a job answered the wrong kind');
      const rescore = (e: typeof start) => ({ set: 'holdout' as const, seed: study.holdout.seed, rollouts_per_term: study.holdout.rollouts, evaluation: e.evaluation });
      holdout = {
        start: rescore(start),
        best: rescore(winner),
        comparison: monteCarlo ? pairSurvival(study.holdout.seed, start.outcomes!, winner.outcomes!) : null,
      };
      emit('holdout', total, total);
      current = 'finished';
    } catch (error) {
      if (!holdoutSignal.aborted) throw asSearchError('held-out re-scoring', error);
    }
  }
  const holdoutSeconds = (now() - t2) / 1000;

  return assembleResult(study, {
    results: byIndex,
    starts,
    screening: {
      candidates: candidates.length,
      screened: screenings.filter((s) => s !== null).length,
      viable: screenings.filter((s) => s?.viable).length,
      rollouts_per_term: SCREENING_ROLLOUTS,
      note:
        'Candidate start points (the study start, then a Halton sequence shifted by the search seed) run the nominal gait on ' +
        `flat ground and the first ${SCREENING_ROLLOUTS} training rollouts of each Monte Carlo term; viable: the nominal gait ` +
        'completes every stride and at least one rollout survives. Restart 0 starts at the study start, the others at viable ' +
        'candidates in sequence order, then at the best-ranked of the rest.',
    },
    trainingStart: restart0.start,
    holdout,
    cancelled: searchSignal.aborted,
    seconds: (now() - started) / 1000,
    phaseSeconds: { screening: screeningSeconds, search: searchSeconds, holdout: holdoutSeconds },
  });
}

function asSearchError(what: string, error: unknown): Error {
  if (error instanceof SearchError) return error;
  return new SearchError(`${what}: ${error instanceof Error ? error.message : String(error)}`);
}
