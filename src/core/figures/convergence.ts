// Figure 6: optimizer convergence — the best SCORE so far (larger is better, the sign convention of
// every Pronk view) against the evaluation count, one line per restart (the result file's
// `restarts[].trace`, src/core/optimize/result.ts). Traces of older result files carry NLopt's
// minimized `best` instead: drawn as −best, the same score. A logarithmic scale when every value is
// > 0 and they span more than two decades.
//
// Series ids: restart-<restart> (data [evaluation, best score]); the best restart drawn thicker.

import type { LineSeriesOption } from 'echarts';
import { InputError, describeFound } from '../errors.js';
import { PALETTE, baseOption, frameOf, header, num, seriesColor, seriesDash, tooltip, valueXAxis, valueYAxis, type FigureOption, type Frame } from './theme.js';

/** A trace point: best_score (larger is better), or an older file's minimized best. */
export type ConvergencePoint = { evaluation: number; best_score: number } | { evaluation: number; best: number };

/** What the figure needs of a restart (RestartSummary has it). */
export interface ConvergenceRestart {
  restart: number;
  trace: readonly ConvergencePoint[];
}

export interface ConvergenceFigureOptions {
  /** The restart that won (OptimizationResult.best_restart), drawn thicker. */
  bestRestart?: number;
  title?: string;
  frame?: Frame;
}

/** The best score so far at a trace point (larger is better). */
export function bestScoreOf(p: ConvergencePoint): number {
  return 'best_score' in p ? p.best_score : -p.best;
}

export function convergenceFigure(restarts: readonly ConvergenceRestart[], options: ConvergenceFigureOptions = {}): FigureOption {
  if (!(restarts?.length > 0)) {
    throw new InputError([{ path: 'restarts', expected: 'at least one restart with a trace', found: describeFound(restarts) }]);
  }
  // non-finite values (a failed evaluation before any finite one) leave a gap, never a NaN point
  const points = restarts.map((r) =>
    r.trace.map((p) => [p.evaluation, bestScoreOf(p)] as [number, number]).filter((p) => Number.isFinite(p[1])),
  );
  const values = points.flat().map((p) => p[1]);
  const low = values.length ? Math.min(...values) : 1;
  const high = values.length ? Math.max(...values) : 1;
  const log = values.length > 0 && low > 0 && high / low > 100;
  const series: LineSeriesOption[] = restarts.map((r, i) => {
    const best = r.restart === options.bestRestart;
    return {
      id: `restart-${r.restart}`,
      name: `restart ${r.restart}${best ? ' (best)' : ''}`,
      type: 'line',
      step: 'end',
      data: points[i],
      symbol: 'none',
      lineStyle: { width: best ? 3.5 : 1.8, type: seriesDash(i), color: seriesColor(i) },
      itemStyle: { color: seriesColor(i) },
      z: best ? 4 : 2,
      tooltip: { valueFormatter: (v) => num(v as number, 6) },
    };
  });
  const evaluations = restarts.reduce((n, r) => n + r.trace.length, 0);
  const winner = restarts.find((r) => r.restart === options.bestRestart);
  const finalBest = (r: ConvergenceRestart) => points[restarts.indexOf(r)].at(-1)?.[1];
  const subtitle =
    `${restarts.length} restart${restarts.length === 1 ? '' : 's'}, ${evaluations} traced evaluations; the score is maximized (larger is better)` +
    (winner ? `\nbest: restart ${winner.restart}, score ${num(finalBest(winner), 6)}` : '') +
    (log ? ' (logarithmic scale)' : '');
  const head = header(frameOf(options.frame), options.title ?? 'Optimizer convergence', subtitle, series.map((s) => String(s.name)));
  return {
    ...baseOption(`Optimizer convergence over ${restarts.length} restarts.`),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    tooltip: tooltip(),
    grid: { left: 110, right: 48, top: head.top, bottom: 72 },
    xAxis: valueXAxis('evaluation', { min: 0, minInterval: 1 }),
    yAxis: valueYAxis('best score so far (larger is better)', log ? { type: 'log', splitLine: { show: true, lineStyle: { color: PALETTE.grid } } } : { scale: true }),
    series,
  };
}
