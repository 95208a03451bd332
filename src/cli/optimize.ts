// `pronk optimize STUDY [--json] [--out RESULT] [--workers N]`: NLopt search over a study's free
// parameters (multi-start over worker threads), held-out re-scoring, and the result file.

import { InputError } from '../core/errors.js';
import type { OptimizationResult, SearchProgress } from '../core/optimize/search.js';
import { readStudyFile, type Study } from '../core/optimize/study.js';
import { PLOT_OPTION, plotOption } from '../core/figures/plot-file.js';
import { checkOutputs, outputRequest, writeOutput, writePlotFile } from './output-files.js';
import { SAFETY_CAUTION } from '../core/safety.js';
import { fixed, plain, table, wrap, type Column } from './format.js';
import { startProgress, status } from './progress.js';
import { parseWorkers, workerThreads, workersOption } from './workers.js';
import type { CliIO, Command, ParsedCommandLine } from './command.js';

const SOURCE = 'pronk optimize';

export const optimizeCommand: Command = {
  name: 'optimize',
  summary: "NLopt search over a study's free policy parameters, re-scored on held-out seeds; writes a result file",
  usage: 'optimize STUDY [--json] [--out RESULT] [--workers N] [--plot FILE.svg]',
  details:
    'The study names a base scenario, the free parameters with their bounds, the objective terms, the machine\'s ' +
    'limits, the NLopt method and budget, the training seed and the held-out seed. Each restart runs in a worker ' +
    'thread; the same study and seed give the same result on any number of threads. Three phases: candidate start points ' +
    'are screened, the restarts search, and the start and the best point are re-scored on the held-out seeds. Every score ' +
    'is larger-is-better. Ctrl-C stops the search, writes the result with the best point so far (marked cancelled) and ' +
    'exits 130; a second Ctrl-C also skips the held-out re-scoring.',
  arguments: [{ name: 'STUDY', description: 'study file (JSON)' }],
  options: {
    json: { type: 'boolean', description: 'print the result as JSON on stdout (and nothing else there)' },
    out: { type: 'string', valueName: 'RESULT', description: 'also write the result file (JSON) to RESULT, for pronk export' },
    workers: workersOption('one per restart, at least 2, at most twice the cores'),
    plot: { ...PLOT_OPTION, description: "also draw the search's convergence (best score so far per restart, larger is better) as an SVG file of 1280 x 800 px" },
  },
  maxPositionals: 1,
  run: runOptimize,
};

/** The exit code of a search stopped by Ctrl-C (128 + SIGINT), after its result file is written. */
export const EXIT_CANCELLED = 130;

async function runOptimize({ values, positionals }: ParsedCommandLine, io: CliIO): Promise<number> {
  const json = values.json === true;
  const file = positionals[0];
  if (file === undefined) {
    throw new InputError([{ path: 'STUDY', expected: 'a study file (JSON)', found: 'missing' }], { source: SOURCE });
  }
  const workers = parseWorkers(values, SOURCE);
  const out = typeof values.out === 'string' ? values.out : undefined;
  if (out !== undefined && out.trim() === '') {
    throw new InputError([{ path: '--out', expected: 'a file path', found: '""' }], { source: SOURCE });
  }
  const plot = await plotOption(values.plot);
  const study = await readStudyFile(file);
  // the study and the scenario file it names are inputs: no output may replace them
  const { dirname, resolve } = await import('node:path');
  const [outFile, plotFile] = await checkOutputs(
    [outputRequest('--out', out), outputRequest('--plot', plot)],
    [
      { path: file, what: 'the study file' },
      study.scenario_source === 'inline' ? undefined : { path: resolve(dirname(file), study.scenario_source), what: "the study's scenario file" },
    ],
    { source: SOURCE },
  );
    const { optimizeStudy, usefulWorkers } = await import('../worker/node-optimize.js');
  // restarts differ in length, so up to two threads per core keep the cores busy to the end
  const threads = workerThreads(io, 'optimize', workers, { items: usefulWorkers(study), unit: 'restarts', perCore: 2 });
  // Ctrl-C once: stop the search and keep the best point; twice: skip the held-out re-scoring too;
  // three times: leave at once, without a result.
  const stopSearch = new AbortController();
  const skipHoldout = new AbortController();
  let interrupts = 0;
  const onSigint = () => {
    interrupts++;
    if (interrupts === 1) {
      status(io, 'optimize', 'stopping the search; the best point so far will be re-scored and written (Ctrl-C again skips the held-out re-scoring)');
      stopSearch.abort();
    } else if (interrupts === 2) {
      status(io, 'optimize', 'skipping the held-out re-scoring; the result carries the training margins (Ctrl-C again leaves without a result)');
      skipHoldout.abort();
    } else {
      status(io, 'optimize', 'stopped without writing a result');
      process.exit(EXIT_CANCELLED);
    }
  };
  process.on('SIGINT', onSigint);
  status(
    io,
    'optimize',
    `${study.search.method}, ${study.search.restarts} restart(s) x ${study.search.max_evaluations} evaluations on ` +
      `${threads} worker thread(s); Ctrl-C stops the search and keeps the best point so far`,
  );
  const progress = startProgress(io, 'optimize');
  let phase = '';
  const onProgress = (p: SearchProgress) => {
    if (p.phase !== phase) {
      phase = p.phase;
      progress.phase(p.label, p.total, p.unit);
    }
    progress.update(p.done, p.total, searchDetail(p));
  };
  let result: OptimizationResult;
  try {
    result = await optimizeStudy(study, { workers: threads, signal: stopSearch.signal, holdoutSignal: skipHoldout.signal, onProgress });
  } finally {
    process.off('SIGINT', onSigint);
    progress.done();
  }
  const text = `${JSON.stringify(result, null, 2)}\n`;
  if (outFile !== undefined) {
    await writeOutput(outFile, text, { source: SOURCE });
    status(io, 'optimize', `result written to ${outFile.path}${result.cancelled ? ' (marked cancelled)' : ''}`);
  }
  io.stdout.write(json ? text : renderOptimization(study, result));
  if (plotFile !== undefined) await writePlotFile(io, 'optimize', plotFile, result);
  return result.cancelled ? EXIT_CANCELLED : 0;
}

// The progress line's detail in the search phase: restarts finished and the best score so far
// (larger is better). The held-out phase re-scores on other seeds: no training score there.
function searchDetail(p: SearchProgress): string {
  if (p.phase !== 'search') return '';
  const best = p.bestScore === null ? '' : `, best score ${fixed(p.bestScore, 5)} at (${p.x.map((v) => fixed(v, 3)).join(', ')})`;
  return `restarts ${p.restartsDone}/${p.restarts} done${best}`;
}

const pct = (x: number) => `${fixed(100 * x, 1)} %`;
const signedPct = (x: number) => `${x > 0 ? '+' : ''}${fixed(100 * x, 1)} %`;

/** The terminal view of a result. Every score is larger-is-better. */
export function renderOptimization(study: Study, r: OptimizationResult): string {
  const lines: string[] = [];
  const p = r.provenance;
  lines.push(study.name ?? 'Policy search');
  lines.push(
    `  search   ${p.method}${p.local_method ? ` with ${p.local_method}` : ''}, ` +
      `${p.budget.restarts} restart(s) x ${p.budget.max_evaluations} evaluations, ` +
      `constraints ${p.constraint_handling}, seed ${p.seed}, held-out seed ${p.holdout_seed}`,
  );
  const phases = p.phase_seconds
    ? ` (screening ${fixed(p.phase_seconds.screening, 1)} s, search ${fixed(p.phase_seconds.search, 1)} s, held-out ${fixed(p.phase_seconds.holdout, 1)} s)`
    : '';
  lines.push(`  ran      ${p.evaluations} evaluations in ${fixed(p.seconds, 1)} s${phases}${r.cancelled ? '; CANCELLED: the best point found so far' : ''}`);
  const sc = r.screening;
  lines.push(
    `  starts   ${sc.screened} of ${sc.candidates} candidate start points screened, ${sc.viable} viable; ` +
      r.restarts.map((x) => `restart ${x.restart}: ${x.start_origin}`).join(', '),
  );
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
      r.parameters.map((q) => [q.path, fixed(q.start, 4), fixed(q.value, 4), `[${plain(q.lower)}, ${plain(q.upper)}]`]),
    ),
  );
  lines.push('');
  const t = r.scores.training;
  const penalty = t.best.penalty !== 0 || t.start.penalty !== 0 ? '; the objective minus the limits\' penalty' : '';
  lines.push(`Score (larger is better${penalty}) on the training seeds: start ${fixed(r.summary.training_score.start, 5)} -> best ${fixed(r.summary.training_score.best, 5)}`);
  for (const term of t.best.terms) {
    const before = t.start.terms.find((x) => x.kind === term.kind);
    lines.push(`  ${term.kind} (weight ${plain(term.weight)}): ${before ? fixed(before.score, 5) : '-'} -> ${fixed(term.score, 5)}`);
  }
  const hs = r.summary.holdout_score;
  if (hs) lines.push(`  on the held-out seeds: start ${fixed(hs.start, 5)} -> best ${fixed(hs.best, 5)}`);
  else lines.push('  on the held-out seeds: not re-scored (skipped by a second Ctrl-C)');
  const comparisons = r.scores.holdout.comparison?.comparisons ?? [];
  for (const h of r.summary.holdout_survival) {
    const c = comparisons.find((x) => x.term === h.term);
    const band = (w?: [number, number]) => (w ? ` [${pct(w[0])}, ${pct(w[1])}]` : '');
    lines.push(
      `Held-out ${h.kind === 'recovery' ? 'recovery (kicks recovered from)' : 'survival'}, ${h.kind} term (${h.rollouts} rollouts on seeds the search never saw): start ${pct(h.start)}${band(c?.a.wilson95)} -> best ` +
        `${pct(h.best)}${band(c?.b.wilson95)}; gain ${signedPct(h.gain)} [${signedPct(h.gain_paired95[0])}, ${signedPct(h.gain_paired95[1])}] (paired 95 %)`,
    );
  }
  lines.push('');
  if (r.constraints.length) {
    const training = new Map(t.best.constraints.map((c) => [c.name, c]));
    const heldOut = r.constraints_set === 'holdout';
    const cc: Column[] = [
      { title: 'limit', unit: '(study field)', align: 'left' },
      { title: 'bound', unit: "(limit's unit)" },
      { title: 'training', unit: 'value' },
      { title: 'margin', unit: '% of limit' },
      ...(heldOut ? [{ title: 'held-out', unit: 'value' }, { title: 'margin', unit: '% of limit' }] : []),
      { title: '', unit: '', align: 'left' },
    ];
    const percent = (m: number | null | undefined) => (m === null || m === undefined ? '-' : `${fixed(m, 1)}${m < 0 ? ' !' : ''}`);
    lines.push(`Limits at the best point: margin as % of the limit (negative: exceeded, marked !); the binding limit${heldOut ? ' (held-out seeds)' : ' (training seeds)'} is marked`);
    lines.push(
      table(
        cc,
        r.constraints.map((c) => {
          const tr = training.get(c.name);
          const bound = `${c.bound === 'upper' ? '<=' : '>='} ${plain(c.limit)}`;
          const row = [c.name, bound, tr?.value == null ? '-' : fixed(tr.value, 4), percent(tr?.margin_percent)];
          if (heldOut) row.push(c.value === null ? '-' : fixed(c.value, 4), percent(c.margin_percent));
          row.push(c.binding ? '<- binding' : '');
          return row;
        }),
      ),
    );
    if (r.constraints.some((c) => c.margin !== null && c.margin < 0)) {
      lines.push(
        wrap(
          `Warning: a limit is exceeded${heldOut ? ' on the held-out seeds (marked !): more rollouts meet rarer terrain than the search saw' : ' (marked !)'}. ` +
            'Tighten the limit in the study, add training rollouts, or accept the margin knowingly; pronk export refuses a ' +
            'policy with a negative margin unless forced.',
          100,
          '',
          '  ',
        ),
      );
    }
    if (!heldOut) lines.push('  (the held-out re-scoring was skipped: these margins are on the training seeds only)');
    lines.push('');
  }
  const rc: Column[] = [
    { title: 'restart', unit: '', align: 'left' },
    { title: 'evaluations', unit: 'count' },
    { title: 'score', unit: 'start' },
    { title: 'score', unit: 'best' },
    { title: 'feasible', unit: 'training' },
  ];
  lines.push(
    table(
      rc,
      r.restarts.map((x) => [
        `${x.restart}${x.restart === r.best_restart ? ' (best)' : ''}`,
        String(x.evaluations),
        fixed(x.start_score, 5),
        fixed(x.score, 5),
        x.feasible ? 'yes' : 'no',
      ]),
    ),
  );
  for (const x of r.restarts) lines.push(wrap(`restart ${x.restart} ${x.stopped_because}.`, 100, '  ', '    '));
  lines.push('');
  lines.push(wrap(`Caution: ${SAFETY_CAUTION}`, 100, '', '  '));
  return `${lines.join('\n')}\n`;
}
