// Two-leg benchmark: the cost of a walking stride of the two-leg model (single support, double
// support, single support, section to section) against a running stride of the single-leg model,
// both on the kernel in this thread, at the default integrator tolerance, each in a batch of 200
// rollouts as the kernel runs batches (single-leg: four lanes; two-leg: two lane pairs, walking
// steps in f64x2 lanes). Target: a walking stride costs at most 2.5 times a running single-leg
// stride. Printed beside it: the step counts' ratio and the cost per step, and the walker at
// integrator.apex_accuracy_m 1e-8 m (tolerances calibrated as robustness calibrates them) against
// the defaults.
//
// Walking: the human-like body of Geyer, Seyfarth & Blickhan 2006 (80 kg, 1 m, 20 kN/m) at a
// fixed 70 deg attack on its stable walking fixed point (found by the map first). Running: the
// same body on one leg at 68 deg, 1 m apex at 5 m/s (Seyfarth et al. 2002). Imports the compiled
// code from dist/ (run `npm run build` first). `node test/bench/biped.mjs` runs it alone;
// test/bench/run.mjs calls benchBiped(log).

import { pathToFileURL } from 'node:url';
import * as L from '../../dist/assembly/layout.js';
import { bipedReturnMap } from '../../dist/src/core/analysis/biped-map.js';
import { robustnessScenario } from '../../dist/src/core/analysis/robustness.js';
import { loadEngine } from '../../dist/src/core/engine.js';
import { buildModel, startInput } from '../../dist/src/core/model.js';
import { sectionInput } from '../../dist/src/core/models/biped.js';
import { parseScenario } from '../../dist/src/core/scenario.js';
import { goal } from './goals.mjs';

const BODY = { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 };
const ROLLOUTS = 200;
const STRIDES = 20;
const REPS = 15;
const TARGET_RATIO = 2.5;

const median = (xs) => {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
};

function repeated(input, rollouts) {
  const v = new Float64Array(rollouts * L.I_SIZE);
  for (let r = 0; r < rollouts; r++) v.set(input, r * L.I_SIZE);
  return v;
}

// CPU seconds of one batch (process.cpuUsage: other work on a shared machine inflates wall time
// far more than CPU time).
function cpuSeconds(run) {
  const c0 = process.cpuUsage();
  const out = run();
  const c1 = process.cpuUsage(c0);
  return { seconds: (c1.user + c1.system) / 1e6, out };
}

function completedStrides(b) {
  let strides = 0;
  for (let r = 0; r < ROLLOUTS; r++) strides += b.summaries[r * L.S_SIZE + L.S_STRIDES_COMPLETED];
  return strides;
}

// Accepted integration steps per completed stride (the summaries' step counts).
function stepsPerStride(b) {
  let steps = 0;
  for (let r = 0; r < ROLLOUTS; r++) steps += b.summaries[r * L.S_SIZE + L.S_STEPS];
  return steps / completedStrides(b);
}

/**
 * CPU seconds per completed stride of each path, timed in alternation (walk, run, walk, ...) so
 * that both see the same machine; the ratio is the median of the per-repetition ratios.
 */
function timeBoth(engine, walk, run) {
  const walkInputs = repeated(walk.input, ROLLOUTS);
  const runInputs = repeated(run.input, ROLLOUTS);
  const batch = (m, inputs) => () => engine.runBatch({ model: m, inputs, strides: STRIDES });
  batch(walk.model, walkInputs)(); // warm-up
  batch(run.model, runInputs)();
  const w = [];
  const r = [];
  const ratios = [];
  let walkStrides = 0;
  let runStrides = 0;
  let walkSteps = 0;
  let runSteps = 0;
  for (let rep = 0; rep < REPS; rep++) {
    const a = cpuSeconds(batch(walk.model, walkInputs));
    const b = cpuSeconds(batch(run.model, runInputs));
    walkStrides = completedStrides(a.out);
    runStrides = completedStrides(b.out);
    walkSteps = stepsPerStride(a.out);
    runSteps = stepsPerStride(b.out);
    w.push(a.seconds / walkStrides);
    r.push(b.seconds / runStrides);
    ratios.push(a.seconds / walkStrides / (b.seconds / runStrides));
  }
  return { walk: median(w), run: median(r), ratio: median(ratios), walkStrides, runStrides, walkSteps, runSteps };
}

export async function benchBiped(log = console.log) {
  const engine = await loadEngine();
  const walkerRaw = {
    model: 'biped',
    body: BODY,
    start: { gait: 'walking', apex_height_m: 0.98, forward_speed_m_per_s: 1.2 },
    policy: { angle: { kind: 'fixed', attack_deg: 70 } },
    terrain: { kind: 'flat' },
    strides: STRIDES,
  };
  const walker = parseScenario(walkerRaw);
  const map = await bipedReturnMap(walker, { iterations: 0 });
  const fp = map.fixed_points.find((f) => f.stable);
  if (!fp) throw new Error('no stable walking fixed point for the benchmark body');
  const walkInput = sectionInput({ gait: 'walking', height_m: fp.height_m, speed_m_per_s: fp.speed_m_per_s, offset_m: fp.offset_m, leg: 'left' });
  const runner = parseScenario({
    body: BODY,
    start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
    policy: { angle: { kind: 'fixed', attack_deg: 68 } },
    terrain: { kind: 'flat' },
    strides: STRIDES,
  });
  const t = timeBoth(engine, { model: buildModel(walker), input: walkInput }, { model: buildModel(runner), input: startInput(runner) });
  const ratio = t.ratio;
  log(`   walking stride (two legs, ${fp.speed_m_per_s.toFixed(3)} m/s fixed point): ${(t.walk * 1e6).toFixed(2)} us CPU (${t.walkStrides} strides a batch, ${t.walkSteps.toFixed(1)} steps a stride)`);
  log(`   running stride (one leg, 5 m/s):                     ${(t.run * 1e6).toFixed(2)} us CPU (${t.runStrides} strides a batch, ${t.runSteps.toFixed(1)} steps a stride)`);
  log(`   ratio walking / running: ${ratio.toFixed(2)}x (median over ${REPS} alternating repetitions)`);
  log(`   steps: walking ${(t.walkSteps / t.runSteps).toFixed(2)}x running's at the same tolerance; per step ${((t.walk / t.walkSteps / (t.run / t.runSteps))).toFixed(2)}x`);
  goal('(g) two-leg walking stride vs single-leg running stride', `<= ${TARGET_RATIO}x`, `${ratio.toFixed(2)}x`, ratio <= TARGET_RATIO);

  // Tolerance that follows accuracy on the walker: integrator.apex_accuracy_m 1e-8 m, calibrated
  // on the run's own first rollouts as robustness does (accuracy-calibration.ts), against the defaults.
  const asked = parseScenario({ ...walkerRaw, start: { ...walkerRaw.start, apex_height_m: fp.height_m, forward_speed_m_per_s: fp.speed_m_per_s, offset_m: fp.offset_m }, integrator: { apex_accuracy_m: 1e-8 } });
  const { scenario: calibrated, calibration } = await robustnessScenario(asked, { rollouts: ROLLOUTS, sigma_m: 0.002, seed: 1, strides: STRIDES });
  const c = timeBoth(engine, { model: buildModel(walker), input: walkInput }, { model: buildModel(calibrated), input: walkInput });
  log(
    `   walking at apex_accuracy_m 1e-8 (calibrated rtol ${calibrated.integrator.relative_tolerance.toPrecision(2)}, one-stride error ${calibration ? calibration.calibrated_apex_error_m.toExponential(1) : '-'} m): ` +
      `${(c.run * 1e6).toFixed(2)} us CPU a stride (${c.runSteps.toFixed(1)} steps), ${c.ratio.toFixed(2)}x faster than at the defaults`,
  );
  return { walking_stride_s: t.walk, running_stride_s: t.run, ratio, accuracy_speedup: c.ratio };
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const { printGoals } = await import('./goals.mjs');
  benchBiped()
    .then(() => printGoals())
    .catch((err) => {
      console.error(err instanceof Error ? (err.stack ?? err.message) : err);
      process.exitCode = 1;
    });
}
