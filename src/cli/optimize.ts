// `pronk optimize STUDY [--json] [--out RESULT] [--workers N]`: NLopt search over a study's free
// parameters (multi-start over worker threads), held-out re-scoring, and the result file.

import { writeFile } from 'node:fs/promises';
import { InputError, describeFound } from '../core/errors.js';
import type { Evaluation } from '../core/optimize/objectives.js';
import type { OptimizationResult, SearchProgress } from '../core/optimize/search.js';
import { readStudyFile, type Study } from '../core/optimize/study.js';
import { PLOT_OPTION, plotOption, writePlot } from '../core/figures/plot-file.js';
import { SAFETY_CAUTION } from '../core/safety.js';
import { startProgress, status } from './progress.js';
import { fixed, plain, table, wrap, type Column } from './format.js';
import type { CliIO, Command, ParsedCommandLine } from './main.js';

const SOURCE = 'pronk optimize';

export const optimizeCommand: Command = {
  name: 'optimize',
  summary: "NLopt search over a study's free policy parameters, re-scored on held-out seeds; writes a result file",
  usage: 'optimize STUDY [--json] [--out RESULT] [--workers N] [--plot FILE.svg]',
  details:
    'The study names a base scenario, the free parameters with their bounds, the objective terms, the machine\'s ' +
    'limits, the NLopt method and budget, the training seed and the held-out seed. Each restart runs in a worker ' +
    'thread of its own (the same study and seed give the same result). Ctrl-C stops the search and reports the best ' +
    'point found so far, marked cancelled.',
  arguments: [{ name: 'STUDY', description: 'study file (JSON)' }],
  options: {
    json: { type: 'boolean', description: 'print the result as JSON on stdout (and nothing else there)' },
    out: { type: 'string', valueName: 'RESULT', description: 'also write the result file (JSON) to RESULT, for pronk export' },
    workers: { type: 'string', valueName: 'N', description: 'worker threads for restarts (default: all cores); never changes the result' },
    plot: { ...PLOT_OPTION, description: "also draw the search's convergence (best objective per restart) as an SVG file of 1280 x 800 px" },
  },
  maxPositionals: 1,
  run: runOptimize,
};

async function runOptimize({ values, positionals }: ParsedCommandLine, io: CliIO): Promise<number> {
  const json = values.json === true;
  const file = positionals[0];
  if (file === undefined) {
    throw new InputError([{ path: 'STUDY', expected: 'a study file (JSON)', found: 'missing' }], { source: SOURCE });
  }
  const workers = parseWorkers(values.workers);
  const out = typeof values.out === 'string' ? values.out : undefined;
  if (out !== undefined && out.trim() === '') {
    throw new InputError([{ path: '--out', expected: 'a file path', found: '""' }], { source: SOURCE });
  }
  const plot = await plotOption(values.plot, { out });
  const study = await readStudyFile(file);
  const { optimizeStudy } = await import('../core/optimize/search.js');
  const controller = new AbortController();
  const onSigint = () => {
    status(io, 'optimize', 'stopping (the best point so far will be reported)');
    controller.abort();
  };
  process.once('SIGINT', onSigint);
  const progress = startProgress(io, 'optimize', { unit: 'evaluations' });
  let result: OptimizationResult;
  try {
    result = await optimizeStudy(study, { workers, signal: controller.signal, onProgress: (p) => progress.update(p.evaluations, p.budget, searchDetail(p)) });
  } finally {
    process.off('SIGINT', onSigint);
    progress.done();
  }
  const text = `${JSON.stringify(result, null, 2)}\n`;
  if (out !== undefined) {
    try {
      await writeFile(out, text);
    } catch (error) {
      throw new InputError(
        [{ path: '--out', expected: 'a writable file path', found: `${JSON.stringify(out)} (${(error as Error).message})` }],
        { source: SOURCE },
      );
    }
    status(io, 'optimize', `result written to ${out}`);
  }
  io.stdout.write(json ? text : renderOptimization(study, result));
  if (plot !== undefined) await writePlot(io.stderr, 'optimize', plot, result);
  return 0;
}

function parseWorkers(value: string | boolean | undefined): number | undefined {
  if (value === undefined || typeof value === 'boolean') return undefined;
  const n = Number(value);
  if (!/^\s*\d+\s*$/.test(value) || n < 1 || n > 1024) {
    throw new InputError([{ path: '--workers', expected: 'an integer from 1 to 1024', found: describeFound(value) }], { source: SOURCE });
  }
  return n;
}

// The progress line's detail: restarts finished and the best point so far.
function searchDetail(p: SearchProgress): string {
  const point = p.x.map((v) => fixed(v, 3)).join(', ');
  const best = Number.isFinite(p.best) ? fixed(p.best, 5) : '-';
  return `restarts ${p.restartsDone}/${p.restarts} done, best ${best} at (${point})`;
}

const pct = (x: number) => `${fixed(100 * x, 1)} %`;

interface Scored {
  survival?: number;
  wilson95?: [number, number];
}

/** The terminal view of a result. */
export function renderOptimization(study: Study, r: OptimizationResult): string {
  const lines: string[] = [];
  lines.push(study.name ?? 'Policy search');
  lines.push(
    `  search   ${r.provenance.method}${r.provenance.local_method ? ` with ${r.provenance.local_method}` : ''}, ` +
      `${r.provenance.budget.restarts} restart(s) x ${r.provenance.budget.max_evaluations} evaluations, ` +
      `constraints ${r.provenance.constraint_handling}, seed ${r.provenance.seed}, held-out seed ${r.provenance.holdout_seed}`,
  );
  lines.push(`  ran      ${r.provenance.evaluations} evaluations in ${fixed(r.provenance.seconds, 1)} s${r.cancelled ? ' (cancelled: best point so far)' : ''}`);
  lines.push('');
  const paramColumns: Column[] = [
    { title: 'parameter', unit: '(scenario path)', align: 'left' },
    { title: 'start', unit: "(field's unit)" },
    { title: 'best', unit: "(field's unit)" },
    { title: 'bounds', unit: '' },
  ];
  lines.push(
    table(
      paramColumns,
      r.parameters.map((p) => [p.path, fixed(p.start, 4), fixed(p.value, 4), `[${plain(p.lower)}, ${plain(p.upper)}]`]),
    ),
  );
  lines.push('');
  const t = r.scores.training;
  lines.push(`Objective (training seeds, larger is better): start ${fixed(t.start.objective, 5)} -> best ${fixed(t.best.objective, 5)}`);
  for (const term of t.best.terms) {
    const before = t.start.terms.find((x) => x.kind === term.kind);
    lines.push(`  ${term.kind} (weight ${plain(term.weight)}): ${before ? fixed(before.score, 5) : '-'} -> ${fixed(term.score, 5)}`);
  }
  const holdout = r.scores.holdout as unknown as {
    start: { evaluation: Evaluation };
    best: { evaluation: Evaluation };
    comparison: { comparisons: { kind: string; a: Scored; b: Scored; difference: number; paired95?: [number, number]; newcombe95: [number, number] }[] };
  };
  for (const c of holdout.comparison.comparisons) {
    const band = (x: Scored) => (x.wilson95 ? ` [${pct(x.wilson95[0])}, ${pct(x.wilson95[1])}]` : '');
    const interval = c.paired95 ?? c.newcombe95;
    lines.push(
      `Held-out survival, ${c.kind} term (seeds the search never saw): start ${pct(c.a.survival!)}${band(c.a)} -> best ` +
        `${pct(c.b.survival!)}${band(c.b)}; gain ${pct(-c.difference)} [${pct(-interval[1])}, ${pct(-interval[0])}]` +
        `${c.paired95 ? ' (paired 95 %)' : ' (Newcombe 95 %)'}`,
    );
  }
  lines.push('');
  const trainingMargins = new Map(t.best.constraints.map((c) => [c.name, c]));
  if (r.constraints.length) {
    const cc: Column[] = [
      { title: 'constraint', unit: '(study field)', align: 'left' },
      { title: 'limit', unit: "(limit's unit)" },
      { title: 'training', unit: 'value' },
      { title: 'margin', unit: 'training' },
      { title: 'held-out', unit: 'value' },
      { title: 'margin', unit: 'held-out' },
    ];
    lines.push(
      table(
        cc,
        r.constraints.map((c) => {
          const tr = trainingMargins.get(c.name);
          const mark = (m: number | null | undefined) => (m === null || m === undefined ? '-' : `${fixed(m, 4)}${m < 0 ? ' !' : ''}`);
          return [c.name, plain(c.limit), tr?.value == null ? '-' : fixed(tr.value, 4), mark(tr?.margin), c.value === null ? '-' : fixed(c.value, 4), mark(c.margin)];
        }),
      ),
    );
    if (r.constraints.some((c) => c.margin !== null && c.margin < 0)) {
      lines.push(
        wrap(
          'Warning: a limit is exceeded on the held-out seeds (marked !): more rollouts meet rarer terrain than the search saw. ' +
            'Tighten the limit in the study, add training rollouts, or accept the margin knowingly; pronk export refuses a ' +
            'policy with a negative margin unless forced.',
          100,
          '',
          '  ',
        ),
      );
    }
    lines.push('');
  }
  const rc: Column[] = [
    { title: 'restart', unit: '', align: 'left' },
    { title: 'evaluations', unit: 'count' },
    { title: 'stopped', unit: 'reason' },
    { title: 'objective', unit: 'training' },
    { title: 'feasible', unit: 'training' },
  ];
  lines.push(
    table(
      rc,
      r.restarts.map((x) => [
        `${x.restart}${x.restart === r.best_restart ? ' (best)' : ''}`,
        String(x.evaluations),
        x.reason,
        fixed(x.objective, 5),
        x.feasible ? 'yes' : 'no',
      ]),
    ),
  );
  lines.push('');
  lines.push(wrap(`Caution: ${SAFETY_CAUTION}`, 100, '', '  '));
  return `${lines.join('\n')}\n`;
}
