// Policy search timings: objective evaluations per second for a 1,000-rollout survival
// objective (in one thread), and the wall time of a full two-parameter retraction search
// (COBYLA, restarts over the worker pool) on the human-like body of Seyfarth et al. 2002.
import { availableParallelism, loadavg } from 'node:os';
import { pathToFileURL } from 'node:url';
import { loadEngine } from '../../dist/src/core/engine.js';
import { StudyEvaluator } from '../../dist/src/core/optimize/objectives.js';
import { optimizeStudy } from '../../dist/src/worker/node-optimize.js';
import { parseStudy } from '../../dist/src/core/optimize/study.js';
import { join } from 'node:path';
import { goal } from './goals.mjs';
import { processCpu, ROOT } from './native.mjs';

const DEMO_TARGET_S = 15; // issue 14: 2 idle cores

const median = (xs) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

function study(rollouts, search) {
  return parseStudy({
    name: 'bench: retraction for random terrain',
    scenario: {
      body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
      start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
      policy: { angle: { kind: 'retraction', attack_at_apex_deg: 62, rate_deg_per_s: 40 }, stiffness: { kind: 'constant' } },
      terrain: { kind: 'flat' },
      strides: 20,
      integrator: { relative_tolerance: 3e-8, absolute_tolerance: 3e-8 },
    },
    free_parameters: [
      { path: 'policy.angle.attack_at_apex_deg', lower: 55, upper: 75 },
      { path: 'policy.angle.rate_deg_per_s', lower: 0, upper: 150 },
    ],
    objective: { terms: [{ kind: 'survival', terrain: 'random_walk', sigma_m: 0.05, rollouts }] },
    constraints: { max_leg_force_N: 5000, friction_coefficient: 1.0 },
    search,
    seed: 1,
    holdout: { seed: 2, rollouts: 1000 },
  });
}

export async function benchOptimize(log = console.log) {
  const engine = await loadEngine();
  const s = study(1000, { method: 'COBYLA', max_evaluations: 60, restarts: 2 });
  const evaluator = new StudyEvaluator(s, engine, 'training');
  const points = Array.from({ length: 12 }, (_, i) => [58 + i, 20 + 8 * i]);
  for (const x of points.slice(0, 2)) evaluator.evaluate(x); // warm-up
  const times = [];
  let strides = 0;
  for (let rep = 0; rep < 3; rep++) {
    for (const x of points) {
      const t0 = performance.now();
      const e = evaluator.evaluate([x[0] + rep * 0.01, x[1]]);
      times.push(performance.now() - t0);
      strides += e.terms[0].details.mean_strides_completed * 1000;
    }
  }
  const perEval = median(times);
  log(`load average ${loadavg().map((x) => x.toFixed(2)).join(' ')} on ${availableParallelism()} cores`);
  log(`survival objective, 1000 rollouts x 20 strides, rtol 3e-8 (one thread):`);
  log(`  median ${perEval.toFixed(1)} ms per evaluation = ${(1000 / perEval).toFixed(1)} evaluations/s ` +
    `(${(strides / (times.reduce((a, b) => a + b, 0) / 1000)).toFixed(0)} strides/s)`);

  const t0 = performance.now();
  const r = await optimizeStudy(s, { workers: availableParallelism() });
  const wall = (performance.now() - t0) / 1000;
  const best = r.parameters.map((p) => `${p.path.split('.').pop()} ${p.value.toFixed(2)}`).join(', ');
  log(`full 2-parameter retraction search: COBYLA, 2 restarts x <= 60 evaluations of 1000 rollouts, on ${availableParallelism()} workers,`);
  log(`  then held-out re-scoring: ${wall.toFixed(1)} s wall (target < 30 s), ${r.provenance.evaluations} evaluations; best ${best}`);

  // Cancel latency: how long from abort to the search returning (held-out re-scoring excluded).
  const controller = new AbortController();
  let abortedAt = 0;
  const long = study(200, { method: 'SUBPLEX', max_evaluations: 1_000_000, restarts: 1 });
  const stopped = optimizeStudy({ ...long, holdout: { seed: 2, rollouts: 1 } }, {
    workers: 1,
    signal: controller.signal,
    onProgress: (p) => {
      if (p.evaluations >= 10 && !abortedAt) {
        abortedAt = performance.now();
        controller.abort();
      }
    },
  });
  const out = await stopped;
  const restartSeconds = out.restarts[0].seconds;
  log(`cancel: a search stopped after ${out.restarts[0].evaluations} evaluations; ` +
    `${(performance.now() - abortedAt).toFixed(0)} ms from abort to result (one evaluation of 200 rollouts ` +
    `is ~${((restartSeconds * 1000) / Math.max(1, out.restarts[0].evaluations)).toFixed(0)} ms; target: stops within 200 ms)`);
  // The demo study as a user runs it: the whole `pronk optimize` process, wall time.
  const demo = processCpu(process.execPath, [join(ROOT, 'bin', 'pronk.js'), 'optimize', join(ROOT, 'scenarios', 'demo-study.json'), '--json']);
  log(
    `pronk optimize scenarios/demo-study.json (whole process, ${availableParallelism()} cores): ${demo.wall.toFixed(1)} s wall, ` +
      `${demo.cpu.toFixed(1)} s CPU; load average ${loadavg()[0].toFixed(2)}`,
  );
  goal(
    '(d) pronk optimize demo study, wall',
    `<= ${DEMO_TARGET_S} s`,
    `${demo.wall.toFixed(1)} s whole process (${demo.cpu.toFixed(1)} s CPU on ${availableParallelism()} cores)`,
    demo.wall <= DEMO_TARGET_S,
  );
  return { perEval, wall, demoWall: demo.wall };
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  benchOptimize().catch((e) => {
    console.error(e);
    process.exitCode = 1;
  });
}
