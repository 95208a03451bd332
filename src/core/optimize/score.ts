// The search's scoring jobs besides the restarts: screening candidate start points, and scoring
// one candidate on a set (the held-out re-scoring, with the per-rollout outcomes that the paired
// comparison needs, so that nothing runs twice). Environment-neutral, like restart.ts: a worker
// (Node or browser) calls runScoreTask; the caller owns parallelism, cancellation and progress.

import { loadEngine } from '../engine.js';
import { StudyEvaluator, type BatchEngine, type Evaluation, type RolloutOutcomes, type Screening } from './objectives.js';
import { lateralScenarioOf, parseStudy } from './study.js';

export type ScoreTask =
  /** Screen candidate start points (StudyEvaluator.screen on the 'screening' set). */
  | { kind: 'screen'; study: unknown; points: number[][] }
  /** Evaluate x on a set; `outcomes` also returns which rollouts survived (for a paired comparison). */
  | { kind: 'evaluate'; study: unknown; set: 'training' | 'holdout'; x: number[]; outcomes: boolean };

export type ScoreResult =
  | { kind: 'screen'; screenings: Screening[] }
  | { kind: 'evaluate'; evaluation: Evaluation; outcomes: RolloutOutcomes | null };

export interface ScoreControl {
  /** Polled between candidates and between chunks of rollouts; true ends the job with ScoreCancelled. */
  shouldStop?: () => boolean;
  /** Work done of the job's total: candidates (screen) or rollouts (evaluate). */
  onProgress?: (done: number, total: number) => void;
  /** Runs the batches (default: the kernel in this thread); the same numbers either way. */
  engine?: BatchEngine;
}

export class ScoreCancelled extends Error {
  constructor() {
    super('cancelled');
  }
}

/** The total work of a task in its progress units (candidates, or rollouts of one evaluation). */
export function scoreTaskSize(task: ScoreTask, study: { objective: { terms: readonly { kind: string; rollouts?: number }[] }; holdout: { rollouts: number } }): number {
  if (task.kind === 'screen') return task.points.length;
  // the Monte Carlo rollouts and the nominal gait (StudyEvaluator.rolloutCount)
  let rollouts = 1;
  for (const term of study.objective.terms) {
    if (term.kind === 'survival' || term.kind === 'tracking' || term.kind === 'recovery') rollouts += task.set === 'holdout' ? study.holdout.rollouts : term.rollouts!;
  }
  return rollouts;
}

export async function runScoreTask(task: ScoreTask, control: ScoreControl = {}): Promise<ScoreResult> {
  const study = parseStudy(task.study);
  // a lateral study runs the whole engine in this thread (its kicks are drawn and judged here)
  const engine = lateralScenarioOf(study.scenario) ? await loadEngine() : (control.engine ?? (await loadEngine()));
  const stop = () => {
    if (control.shouldStop?.()) throw new ScoreCancelled();
  };
  if (task.kind === 'screen') {
    const evaluator = new StudyEvaluator(study, engine, 'screening');
    const screenings: Screening[] = [];
    for (const point of task.points) {
      stop();
      screenings.push(evaluator.screen(point));
      control.onProgress?.(screenings.length, task.points.length);
    }
    return { kind: 'screen', screenings };
  }
  const evaluator = new StudyEvaluator(study, engine, task.set);
  stop();
  const evaluation = evaluator.evaluate(task.x, (done, total) => {
    control.onProgress?.(done, total);
    stop();
  });
  const outcomes = task.outcomes ? evaluator.survivalByRollout(task.x) : null;
  return { kind: 'evaluate', evaluation, outcomes };
}
