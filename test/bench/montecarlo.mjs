// Monte Carlo benchmark: one `robustness` evaluation (1,000 rollouts x 20 strides on seeded
// random-walk terrain, the whole analysis: inputs, kernel, finisher) on one core, timed as the
// median of several repetitions after warm-up, at the default integrator tolerance, at the tolerances
// that `integrator.apex_accuracy_m` 1e-8 runs (calibrated on the run's own first rollouts,
// src/core/accuracy-calibration.ts; and the parse-time mapping of src/core/accuracy.ts), and at the
// loosest tolerances that still give 1e-8 m apex accuracy, in two senses:
//  - one stride: each stride of the evaluation restarted from the reference apex, as in
//    test/bench/run.mjs (the integrator's own accuracy);
//  - whole evaluation: every apex of all 20 strides of every rollout against a very tight
//    reference run (errors accumulate: the energy, an eigenvalue-1 direction of the apex map,
//    drifts like a random walk of the per-stride errors), with every rollout's outcome unchanged.
// Target: <= 50 ms of CPU per evaluation (process.cpuUsage; workers 1 runs in this thread).
//
// Imports the compiled code from dist/ (run `npm run build` first). `node test/bench/montecarlo.mjs`
// runs it alone; test/bench/run.mjs calls benchMonteCarlo(log).

import { loadavg } from 'node:os';
import { pathToFileURL } from 'node:url';
import * as L from '../../dist/assembly/layout.js';
import { CALIBRATION_ROLLOUTS, canonicalRobustnessOptions, robustnessModel, robustnessScenario, terrainRobustness } from '../../dist/src/core/analysis/robustness.js';
import { calibrateTolerances } from '../../dist/src/core/accuracy-calibration.js';
import { stepModel } from '../../dist/src/core/analysis/stepdown.js';
import { loadEngine, rolloutInput } from '../../dist/src/core/engine.js';
import { buildModel } from '../../dist/src/core/model.js';
import { parseScenario } from '../../dist/src/core/scenario.js';
import { goal } from './goals.mjs';

// Human-like body of Seyfarth, Geyer, Günther, Blickhan 2002 (J. Biomech. 35(5):649–655) with
// swing-leg retraction as in Seyfarth, Geyer, Herr 2003 (J. Exp. Biol. 206(15):2547–2555):
// 60° at apex, 50 °/s. It survives most of this terrain, so nearly all the strides are integrated.
const SCENARIO = {
  name: 'Seyfarth 2002 body, retraction 60 deg + 50 deg/s',
  body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
  start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
  policy: { angle: { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 50 }, stiffness: { kind: 'constant' } },
  terrain: { kind: 'flat' },
  strides: 20,
};
const OPTIONS = { rollouts: 1000, sigma_m: 0.03, seed: 1, strides: 20, terrain: 'random_walk' };
const DEFAULT_TOL = { rtol: 1e-10, atol: 1e-12 }; // the scenario defaults
const REFERENCE_TOL = { rtol: 1e-13, atol: 1e-15 };
const TARGET_APEX_ERROR = 1e-8; // m
const TOL_GRID = Array.from({ length: 25 }, (_, i) => 10 ** (-6 - 0.25 * i)); // 1e-6 ... 1e-12, rtol = atol
const ONE_STRIDE_ROLLOUTS = 200; // strides of the first 200 rollouts sample the one-stride error
const WARMUP = 3;
const REPS = 11;
const TARGET_MS = 50;

const now = () => performance.now();
const median = (xs) => {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
};
const exp = (x, d = 1) => x.toExponential(d);
const pad = (s, n) => String(s).padStart(n);
const padEnd = (s, n) => String(s).padEnd(n);

function scenarioAt({ rtol, atol }) {
  return parseScenario({ ...SCENARIO, integrator: { relative_tolerance: rtol, absolute_tolerance: atol } });
}

/** Every apex of the evaluation (rollouts x strides, NaN past a failure) and the statuses. */
async function apexes(tol) {
  const engine = await loadEngine();
  const s = scenarioAt(tol);
  const o = canonicalRobustnessOptions(s, OPTIONS);
  const inputs = new Float64Array(o.rollouts * L.I_SIZE);
  for (let r = 0; r < o.rollouts; r++) inputs.set(rolloutInput(s.start.apex_height_m, s.start.forward_speed_m_per_s, r), r * L.I_SIZE);
  const b = engine.runBatch({ model: robustnessModel(s, o), inputs, strides: o.strides, records: true });
  const heights = new Float64Array(o.rollouts * o.strides);
  for (let i = 0; i < heights.length; i++) heights[i] = b.records[i * L.R_SIZE + L.R_NEXT_APEX_HEIGHT];
  const status = Array.from({ length: o.rollouts }, (_, r) => b.summaries[r * L.S_SIZE + L.S_STATUS]);
  return { heights, status, records: b.records };
}

/** The completed strides of the first rollouts of a reference run: start apex, ground, next apex. */
function referenceStrides(ref) {
  const strides = [];
  for (let i = 0; i < ONE_STRIDE_ROLLOUTS * OPTIONS.strides; i++) {
    const at = (f) => ref.records[i * L.R_SIZE + f];
    if (at(L.R_STATUS) === L.STATUS_OK && !Number.isNaN(at(L.R_NEXT_APEX_HEIGHT))) {
      strides.push({ height: at(L.R_APEX_HEIGHT), speed: at(L.R_APEX_SPEED), ground: at(L.R_GROUND), next: at(L.R_NEXT_APEX_HEIGHT) });
    }
  }
  return strides;
}

/** Largest one-stride apex error: each reference stride rerun alone from its reference apex, on its own ground. */
async function oneStrideError(tol, strides) {
  const engine = await loadEngine();
  const base = buildModel(scenarioAt(tol));
  const inputs = new Float64Array(strides.length * L.I_SIZE);
  strides.forEach((st, i) => inputs.set(rolloutInput(st.height, st.speed, 0, i), i * L.I_SIZE));
  const b = engine.runBatch({ model: strides.map((st) => stepModel(base, st.ground)), inputs, strides: 1, records: true });
  let e = 0;
  strides.forEach((st, i) => {
    const got = b.records[i * L.R_SIZE + L.R_NEXT_APEX_HEIGHT];
    e = Math.max(e, Number.isFinite(got) ? Math.abs(got - st.next) : Infinity);
  });
  return e;
}

/** Largest apex height difference from the reference over every stride both runs completed; Infinity if a rollout's outcome differs. */
function apexError(run, ref) {
  let e = 0;
  for (let r = 0; r < ref.status.length; r++) if (run.status[r] !== ref.status[r]) return Infinity;
  for (let i = 0; i < ref.heights.length; i++) {
    const a = run.heights[i];
    const b = ref.heights[i];
    if (Number.isNaN(a) !== Number.isNaN(b)) return Infinity;
    if (!Number.isNaN(a)) e = Math.max(e, Math.abs(a - b));
  }
  return e;
}

/** CPU ms of this process (every thread; workers 1 runs in this thread) per evaluation, and wall ms. */
async function timeEvaluation(tol) {
  const s = tol.accuracy !== undefined ? parseScenario({ ...SCENARIO, integrator: { apex_accuracy_m: tol.accuracy } }) : scenarioAt(tol);
  let result;
  for (let i = 0; i < WARMUP; i++) result = await terrainRobustness(s, OPTIONS, { workers: 1 });
  const ms = [];
  const wall = [];
  for (let i = 0; i < REPS; i++) {
    const c0 = process.cpuUsage();
    const t0 = now();
    result = await terrainRobustness(s, OPTIONS, { workers: 1 });
    wall.push(now() - t0);
    const c = process.cpuUsage(c0);
    ms.push((c.user + c.system) / 1000);
  }
  return { ms, wall, result };
}

export async function benchMonteCarlo(log = console.log) {
  log(`Monte Carlo evaluation: ${OPTIONS.rollouts} rollouts x ${OPTIONS.strides} strides, one core (workers 1), whole robustness analysis`);
  log(
    `  policy: ${SCENARIO.name}; start apex ${SCENARIO.start.apex_height_m} m at ${SCENARIO.start.forward_speed_m_per_s} m/s; ` +
      `terrain ${OPTIONS.terrain}, sigma ${OPTIONS.sigma_m} m, seed ${OPTIONS.seed}, stream = rollout index`,
  );

  // Calibration: for each sense, the loosest rtol = atol whose error, and every tighter one's, is within the target.
  const ref = await apexes(REFERENCE_TOL);
  const strides = referenceStrides(ref);
  const oneStride = [];
  const whole = [];
  for (const tol of TOL_GRID) {
    oneStride.push(await oneStrideError({ rtol: tol, atol: tol }, strides));
    whole.push(apexError(await apexes({ rtol: tol, atol: tol }), ref));
  }
  const loosest = (errors) => {
    let chosen = TOL_GRID.length - 1;
    for (let i = TOL_GRID.length - 1; i >= 0 && errors[i] <= TARGET_APEX_ERROR; i--) chosen = i;
    return chosen;
  };
  const errorsAt = async (tol) => ({ one: await oneStrideError(tol, strides), whole: apexError(await apexes(tol), ref) });
  log(
    `  apex error: largest |apex height - reference| (m), reference rtol ${exp(REFERENCE_TOL.rtol, 0)}, atol ${exp(REFERENCE_TOL.atol, 0)}; ` +
      `one stride: ${strides.length} strides of the first ${ONE_STRIDE_ROLLOUTS} rollouts, each restarted from the reference apex; ` +
      `whole: every apex of the 20-stride rollouts (Infinity if any rollout's outcome changes)`,
  );

  const rows = [];
  const oneIndex = loosest(oneStride);
  const wholeIndex = loosest(whole);
  // The scenario option that asks for the accuracy: the tolerances src/core/accuracy.ts maps it to at
  // parse time, and the ones robustness runs, calibrated on this run's own first rollouts
  // (src/core/accuracy-calibration.ts; once per scenario and terrain options, then cached).
  const askedScenario = parseScenario({ ...SCENARIO, integrator: { apex_accuracy_m: TARGET_APEX_ERROR } });
  const asked = askedScenario.integrator;
  const used = (await robustnessScenario(askedScenario, OPTIONS)).scenario.integrator;
  const engine = await loadEngine();
  const o = canonicalRobustnessOptions(askedScenario, OPTIONS);
  const calibrationInputs = new Float64Array(CALIBRATION_ROLLOUTS * L.I_SIZE);
  for (let r = 0; r < CALIBRATION_ROLLOUTS; r++) calibrationInputs.set(rolloutInput(SCENARIO.start.apex_height_m, SCENARIO.start.forward_speed_m_per_s, r), r * L.I_SIZE);
  const calibrationMs = [];
  for (let i = 0; i < 5; i++) {
    // a fresh cache key each time: the calibration's own cost, uncached
    const c0 = process.cpuUsage();
    calibrateTolerances(engine, askedScenario, { model: robustnessModel(askedScenario, o), inputs: calibrationInputs, strides: o.strides, key: `bench ${i}` });
    const c = process.cpuUsage(c0);
    calibrationMs.push((c.user + c.system) / 1000);
  }
  for (const [name, tol] of [
    ['default', DEFAULT_TOL],
    [`apex_accuracy_m ${exp(TARGET_APEX_ERROR, 0)}`, { rtol: used.relative_tolerance, atol: used.absolute_tolerance, accuracy: TARGET_APEX_ERROR }],
    [`one stride <= ${exp(TARGET_APEX_ERROR, 0)} m`, { rtol: TOL_GRID[oneIndex], atol: TOL_GRID[oneIndex] }],
    [`whole run <= ${exp(TARGET_APEX_ERROR, 0)} m`, { rtol: TOL_GRID[wholeIndex], atol: TOL_GRID[wholeIndex] }],
    ['accuracy.ts mapping', { rtol: asked.relative_tolerance, atol: asked.absolute_tolerance }],
  ]) {
    const error = await errorsAt(tol);
    const { ms, wall, result } = await timeEvaluation(tol);
    if (tol.accuracy !== undefined && result.integrator?.relative_tolerance !== tol.rtol) throw new Error('robustness ran other tolerances than its calibration');
    const integrated = Math.round(result.mean_strides_completed * result.rollouts);
    rows.push({ name, tol, error, ms, wall, strides: integrated, survival: result.survival });
  }
  log('');
  log(
    `  ${padEnd('tolerance', 22)}  ${pad('rtol', 8)}  ${pad('atol', 8)}  ${pad('1-stride err', 12)}  ${pad('whole err', 9)}  ${pad('survival', 8)}  ` +
      `${pad('strides', 7)}  ${pad('CPU ms', 9)}  ${pad('min ms', 7)}  ${pad('max ms', 7)}  ${pad('wall ms', 7)}  ${pad('strides/CPU-s', 13)}  target`,
  );
  for (const r of rows) {
    const med = median(r.ms);
    log(
      `  ${padEnd(r.name, 22)}  ${pad(exp(r.tol.rtol), 8)}  ${pad(exp(r.tol.atol), 8)}  ${pad(exp(r.error.one), 12)}  ${pad(exp(r.error.whole), 9)}  ` +
        `${pad((100 * r.survival).toFixed(1) + ' %', 8)}  ${pad(r.strides, 7)}  ${pad(med.toFixed(1), 9)}  ` +
        `${pad(Math.min(...r.ms).toFixed(1), 7)}  ${pad(Math.max(...r.ms).toFixed(1), 7)}  ${pad(median(r.wall).toFixed(1), 7)}  ` +
        `${pad((r.strides / (med / 1000)).toFixed(0), 13)}  ${med <= TARGET_MS ? 'met' : 'NOT met'} (<= ${TARGET_MS} ms CPU)`,
    );
  }
  log(`  (CPU ms: process.cpuUsage, median of ${REPS} repetitions after ${WARMUP} warm-up runs; strides = strides actually integrated;`);
  log(
    `   apex_accuracy_m: tolerances calibrated on the run's first ${CALIBRATION_ROLLOUTS} rollouts, once per scenario and options (cached), ` +
      `${median(calibrationMs).toFixed(1)} ms CPU uncached (median of ${calibrationMs.length}); accuracy.ts mapping: the parse-time tolerances it starts from;`,
  );
  const goalRow = rows[1];
  goal(
    '(c) Monte Carlo 1000x20, CPU ms at 1e-8 m',
    `<= ${TARGET_MS} ms`,
    `${median(goalRow.ms).toFixed(1)} ms with apex_accuracy_m 1e-8 (calibrated rtol ${exp(goalRow.tol.rtol)}; 1-stride err ${exp(goalRow.error.one)} m; ` +
      `calibration ${median(calibrationMs).toFixed(1)} ms once); ${median(rows[4].ms).toFixed(1)} ms at the parse-time mapping (rtol ${exp(rows[4].tol.rtol)}), ` +
      `${median(rows[2].ms).toFixed(1)} ms at this evaluation's own loosest 1e-8 tolerance, ${median(rows[0].ms).toFixed(1)} ms at the defaults`,
    median(goalRow.ms) <= TARGET_MS,
  );
  log(`   1-minute load average ${loadavg()[0].toFixed(2)}: other work on the machine inflates the times)`);
  return rows.map((r) => ({
    name: r.name,
    rtol: r.tol.rtol,
    atol: r.tol.atol,
    one_stride_apex_error_m: r.error.one,
    whole_run_apex_error_m: r.error.whole,
    median_ms: median(r.ms),
    strides: r.strides,
  }));
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  benchMonteCarlo().catch((err) => {
    console.error(err instanceof Error ? (err.stack ?? err.message) : err);
    process.exitCode = 1;
  });
}
