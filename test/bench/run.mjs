// `npm run bench`: the WASM kernel against the odex JavaScript reference on the
// same strides, each at the tolerance that gives the same apex accuracy, and
// the kernel alone on a Monte Carlo batch over random-walk terrain.
//
// Run after `npm run build` (the npm script does it): imports the compiled
// engine from dist/. With --expose-gc (as `npm run bench` starts it) the heap
// is collected once before the warm-up, never inside the timed section: a
// forced collection makes the next ~0.2 s of odex run 3–4x slower in V8, which
// would flatter the kernel.

import { loadEngine, rolloutInput } from '../../dist/src/core/engine.js';
import * as L from '../../dist/assembly/layout.js';
import { odexStride } from '../reference/odex-stride.mjs';
import { fixedAngleModel } from '../reference/models.mjs';
import { benchBasin } from './basin.mjs';
import { benchBiped } from './biped.mjs';
import { benchMonteCarlo } from './montecarlo.mjs';
import { benchOptimize } from './optimize.mjs';
import { benchLongTasks } from './ui-longtask.mjs';
import { goal, printGoals } from './goals.mjs';
import { buildNative, nativeRun, nativeStrides, processCpu, ROOT } from './native.mjs';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir, loadavg } from 'node:os';
import { join } from 'node:path';

const DEG = Math.PI / 180;
// Human-like body of Seyfarth, Geyer, Günther, Blickhan 2002, J. Biomech. 35(5):649–655.
const BODY = { mass: 80, leg: 1, k: 20_000, g: 9.81 };
const ATTACK_DEG = 68;
const START = { apexHeight: 1.0, speed: 5.0 }; // Seyfarth 2002: 1 m apex at 5 m/s
const SETTLE_STRIDES = 40; // from START onto the stable gait
const STRIDES = 20; // strides per rollout in the timed blocks
const REFERENCE_TOL = { rtol: 1e-13, atol: 1e-15 }; // "very tight" kernel reference
const TARGET_ERROR = 1e-8; // m, one-stride apex height error both paths are tuned to
const TOL_GRID = Array.from({ length: 91 }, (_, i) => 10 ** (-4 - 0.1 * i)); // 1e-4 … 1e-13
const REPS = 9; // timed repetitions per path (median reported)
const BLOCK_SECONDS = 0.5; // target length of one timed block
const TERRAIN = { rollouts: 1000, strides: 20, sigma: 0.01, seed: 1 };

const gc = globalThis.gc ?? (() => {});
const now = () => performance.now() / 1000;

/** Fixed-angle, undamped Seyfarth body at the given tolerances, flat or random-walk ground. */
const modelBlock = (options) => fixedAngleModel(L, BODY, ATTACK_DEG * DEG, options);

/** (rollouts x I_SIZE) inputs, all from one apex state; stream = rollout index. */
function inputs(rollouts, apexHeight, speed) {
  const v = new Float64Array(rollouts * L.I_SIZE);
  for (let r = 0; r < rollouts; r++) v.set(rolloutInput(apexHeight, speed, r), r * L.I_SIZE);
  return v;
}

const field = (records, stride, f) => records[stride * L.R_SIZE + f];

function median(xs) {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

const STATUS_NAMES = Object.entries(L)
  .filter(([name, v]) => name.startsWith('STATUS_') && name !== 'STATUS_COUNT' && typeof v === 'number')
  .reduce((names, [name, v]) => Object.assign(names, { [v]: name.slice(7).toLowerCase() }), {});

/** "ok 130, leg_not_placeable 812, …" over the rollout summaries. */
function statusBreakdown(summaries, rollouts) {
  const counts = new Map();
  for (let r = 0; r < rollouts; r++) {
    const st = summaries[r * L.S_SIZE + L.S_STATUS];
    counts.set(st, (counts.get(st) ?? 0) + 1);
  }
  return [...counts].sort((a, b) => a[0] - b[0]).map(([st, n]) => `${STATUS_NAMES[st] ?? st} ${n}`).join(', ');
}

const exp = (x, d = 2) => x.toExponential(d);
const pad = (s, n) => String(s).padStart(n);
const padEnd = (s, n) => String(s).padEnd(n);

/** One odex stride from an apex state at tolerance tol (rtol = atol = tol). */
function odexOne(apexHeight, speed, tol) {
  return odexStride({ ...BODY, apexHeight, forwardSpeed: speed, attack: ATTACK_DEG * DEG, rtol: tol, atol: tol });
}

/** Kernel: `rollouts` rollouts x STRIDES strides from the start; returns strides done. */
function kernelBlock(engine, model, start, rollouts) {
  const res = engine.runBatch({ model, inputs: inputs(rollouts, start.apexHeight, start.speed), strides: STRIDES });
  if (res.completed !== rollouts) throw new Error(`kernel: ${rollouts - res.completed} rollouts failed in the timed block`);
  return rollouts * STRIDES;
}

/** odex: `rollouts` rollouts x STRIDES strides from the start; returns strides done. */
function odexBlock(start, tol, rollouts) {
  let last = 0;
  for (let r = 0; r < rollouts; r++) {
    let y = start.apexHeight;
    let v = start.speed;
    for (let s = 0; s < STRIDES; s++) {
      const st = odexOne(y, v, tol);
      y = st.nextApexHeight;
      v = st.nextApexSpeed;
    }
    last = y;
  }
  if (!Number.isFinite(last)) throw new Error('odex: the timed block produced a non-finite apex');
  return rollouts * STRIDES;
}

/** Seconds for one call of fn (collections inside it count against it). */
function timed(fn) {
  const t0 = now();
  const n = fn();
  return { seconds: now() - t0, strides: n };
}

/** CPU seconds (user + system, every thread of this process) spent in fn. */
function cpuTimed(fn) {
  const c0 = process.cpuUsage();
  const n = fn();
  const c = process.cpuUsage(c0);
  return { seconds: (c.user + c.system) / 1e6, strides: n };
}

const ROBUSTNESS = { rollouts: 20_000, strides: 20, sigma: 0.002, seed: 1, runs: 3 };
const NATIVE_TARGET = 1.5; // kernel / C strides per CPU-second (issue 14)
const ROBUSTNESS_TARGET = 1.2; // C CPU / whole-process pronk CPU (issue 14)

/**
 * (a) The kernel in-process against the scalar native-C DP5(4) of the same model, each at the
 * loosest tolerance that gives the target apex accuracy, in strides per CPU-second; (b) the whole
 * `pronk robustness` process against the C program doing the same rollouts, in CPU seconds.
 */
async function benchNativeBaseline({ engine, out, start, refApex, refNext, kCal }) {
  out('native C baseline: test/bench/c/slip_dp5.c, the same model with a plain adaptive DP5(4) (standard controller, libm pow)');
  const built = buildNative();
  if (built.skipped) {
    out(`  skipped: ${built.skipped}`);
    goal('(a) kernel vs native C, strides/CPU-s', `>= ${NATIVE_TARGET}x`, `skipped (${built.skipped})`, null);
    goal('(b) pronk robustness process vs C, CPU', `>= ${ROBUSTNESS_TARGET}x`, `skipped (${built.skipped})`, null);
    out();
    return;
  }
  out(`  built with ${built.cc} -O3 (${built.version})`);
  const attack = ATTACK_DEG * DEG;
  const rows = (tol) => refApex.map(([height, speed]) => ({ rtol: tol, atol: tol, height, speed }));
  const tight = nativeStrides(built.exe, BODY, attack, rows(REFERENCE_TOL.rtol).map((r) => ({ ...r, atol: REFERENCE_TOL.atol })));
  const agreement = Math.max(...tight.map((r, s) => Math.abs(r.next - refNext[s])));
  out(`  at the reference tolerance the C code agrees with the kernel's reference to ${exp(agreement, 1)} m in apex height`);
  // Calibration as for the kernel: one process, every tolerance of the grid on the STRIDES strides.
  const all = nativeStrides(built.exe, BODY, attack, TOL_GRID.flatMap(rows));
  const cErrors = TOL_GRID.map((_, i) =>
    Math.max(...refNext.map((next, s) => {
      const got = all[i * STRIDES + s].next;
      return Number.isFinite(got) ? Math.abs(got - next) : Infinity;
    })),
  );
  let ci = TOL_GRID.length - 1;
  for (let i = TOL_GRID.length - 1; i >= 0 && cErrors[i] <= TARGET_ERROR; i--) ci = i;
  const cTol = TOL_GRID[ci];
  const cSteps = all.slice(ci * STRIDES, (ci + 1) * STRIDES);
  const perStride = (xs, f) => xs.reduce((a, r) => a + r[f], 0) / xs.length;
  out(
    `  apex accuracy: C rtol = atol = ${exp(cTol)} gives ${exp(cErrors[ci])} m; kernel rtol = atol = ${exp(kCal.tol)} gives ${exp(kCal.error)} m ` +
      `(target ${exp(TARGET_ERROR, 0)} m, one stride, max over ${STRIDES} strides, vs the kernel at rtol ${exp(REFERENCE_TOL.rtol, 0)})`,
  );

  // Side by side: kernel blocks in this process (process.cpuUsage) and C passes (the C program's own
  // CLOCK_PROCESS_CPUTIME_ID), alternating, medians. Both from the gait on flat ground.
  const kModel = modelBlock({ rtol: kCal.tol, atol: kCal.tol });
  for (let i = 0; i < 5; i++) kernelBlock(engine, kModel, start, 200);
  const kProbe = cpuTimed(() => kernelBlock(engine, kModel, start, 500));
  const kRollouts = Math.max(1, Math.round((BLOCK_SECONDS * kProbe.strides) / kProbe.seconds / STRIDES));
  const cRunAt = (rollouts, reps) =>
    nativeRun(built.exe, BODY, attack, { rtol: cTol, atol: cTol, height: start.apexHeight, speed: start.speed, rollouts, strides: STRIDES, reps });
  const cProbe = cRunAt(2000, 1);
  const cRollouts = Math.max(1, Math.round((BLOCK_SECONDS * 2000) / cProbe.cpu));
  const kRates = [];
  const cRates = [];
  let cLast = cProbe;
  for (let rep = 0; rep < REPS; rep++) {
    const runK = () => {
      const t = cpuTimed(() => kernelBlock(engine, kModel, start, kRollouts));
      kRates.push(t.strides / t.seconds);
    };
    const runC = () => {
      cLast = cRunAt(cRollouts, 1);
      cRates.push(cLast.strides / cLast.cpu);
    };
    if (rep % 2 === 0) {
      runK();
      runC();
    } else {
      runC();
      runK();
    }
  }
  const kSteps = engine.runBatch({ model: kModel, inputs: inputs(1, start.apexHeight, start.speed), strides: STRIDES, records: true });
  let kStepCount = 0;
  let kRejected = 0;
  for (let s = 0; s < STRIDES; s++) {
    kStepCount += field(kSteps.records, s, L.R_STEPS);
    kRejected += field(kSteps.records, s, L.R_REJECTED);
  }
  const kRate = median(kRates);
  const cRate = median(cRates);
  const ratio = kRate / cRate;
  out(`  side by side, CPU time, median of ${REPS} alternating repetitions, ${STRIDES}-stride rollouts from the gait, flat ground:`);
  out(`  ${padEnd('path', 20)}  ${pad('rtol=atol', 9)}  ${pad('apex err (m)', 12)}  ${pad('steps/stride', 12)}  ${pad('rej/stride', 10)}  ${pad('strides/CPU-s', 13)}  ${pad('min', 9)}  ${pad('max', 9)}`);
  const line = (name, tol, err, steps, rej, rates) =>
    out(
      `  ${padEnd(name, 20)}  ${pad(exp(tol, 1), 9)}  ${pad(exp(err), 12)}  ${pad(steps.toFixed(1), 12)}  ${pad(rej.toFixed(2), 10)}  ` +
        `${pad(median(rates).toFixed(0), 13)}  ${pad(Math.min(...rates).toFixed(0), 9)}  ${pad(Math.max(...rates).toFixed(0), 9)}`,
    );
  line('WASM kernel (in-proc)', kCal.tol, kCal.error, kStepCount / STRIDES, kRejected / STRIDES, kRates);
  line(`C ${built.cc} -O3`, cTol, cErrors[ci], perStride(cSteps, 'steps'), cLast.rejected / Math.max(1, cLast.strides), cRates);
  out(`  (C steps/stride: one stride from each reference apex; rej/stride over the last timed pass)`);
  out(`  ratio kernel / C: ${ratio.toFixed(2)}x (target >= ${NATIVE_TARGET}x)`);
  goal(
    '(a) kernel vs native C, strides/CPU-s',
    `>= ${NATIVE_TARGET}x`,
    `${ratio.toFixed(2)}x (${kRate.toFixed(0)} vs ${cRate.toFixed(0)} strides/CPU-s; apex err ${exp(kCal.error, 1)} / ${exp(cErrors[ci], 1)} m at tol ${exp(kCal.tol, 1)} / ${exp(cTol, 1)})`,
    ratio >= NATIVE_TARGET,
  );

  // (b) The whole `pronk robustness` process, one worker, against the C program on the same
  // rollouts (random walk of the same seed and streams), both timed as whole processes.
  const dir = mkdtempSync(join(tmpdir(), 'pronk-bench-'));
  try {
    const scenarioFile = join(dir, 'gait.json');
    writeFileSync(
      scenarioFile,
      JSON.stringify({
        name: 'bench: Seyfarth 2002 body at its fixed-angle gait',
        body: { mass_kg: BODY.mass, leg_length_m: BODY.leg, leg_stiffness_N_per_m: BODY.k, gravity_m_per_s2: BODY.g },
        start: { apex_height_m: start.apexHeight, forward_speed_m_per_s: start.speed },
        policy: { angle: { kind: 'fixed', attack_deg: ATTACK_DEG } },
        terrain: { kind: 'flat' },
        strides: ROBUSTNESS.strides,
        integrator: { relative_tolerance: kCal.tol, absolute_tolerance: kCal.tol },
      }),
    );
    const pronkArgs = [join(ROOT, 'bin', 'pronk.js'), 'robustness', scenarioFile, '--sigma', String(ROBUSTNESS.sigma), '--rollouts', String(ROBUSTNESS.rollouts), '--seed', String(ROBUSTNESS.seed), '--workers', '1', '--json'];
    const cArgs = ['run', BODY.mass, BODY.leg, BODY.k, BODY.g, attack, cTol, cTol, start.apexHeight, start.speed, ROBUSTNESS.rollouts, ROBUSTNESS.strides, ROBUSTNESS.sigma, ROBUSTNESS.seed, 1].map(String);
    const pRuns = [];
    const cRuns = [];
    let pOut;
    let cOut;
    for (let rep = 0; rep < ROBUSTNESS.runs; rep++) {
      const runP = () => {
        const r = processCpu(process.execPath, pronkArgs);
        pOut = JSON.parse(r.stdout);
        pRuns.push(r);
      };
      const runC = () => {
        const r = processCpu(built.exe, cArgs);
        cOut = r.stdout.trim().split(' ').map(Number);
        cRuns.push(r);
      };
      if (rep % 2 === 0) {
        runP();
        runC();
      } else {
        runC();
        runP();
      }
    }
    const pCpu = median(pRuns.map((r) => r.cpu));
    const cCpu = median(cRuns.map((r) => r.cpu));
    const bRatio = cCpu / pCpu;
    out(
      `  whole processes: ${ROBUSTNESS.rollouts} rollouts x ${ROBUSTNESS.strides} strides from the gait, random walk sigma ${ROBUSTNESS.sigma} m, ` +
        `seed ${ROBUSTNESS.seed} (stream = rollout), each at its tolerance above; CPU of the whole process (bash times), median of ${ROBUSTNESS.runs}`,
    );
    out(
      `    pronk robustness --workers 1: ${pCpu.toFixed(2)} s CPU (runs ${pRuns.map((r) => r.cpu.toFixed(2)).join(', ')}; wall ${median(pRuns.map((r) => r.wall)).toFixed(2)} s); ` +
        `${pOut.survived} of ${pOut.rollouts} survived, ${pOut.strides_completed_total} strides`,
    );
    out(
      `    C baseline:                 ${cCpu.toFixed(2)} s CPU (runs ${cRuns.map((r) => r.cpu.toFixed(2)).join(', ')}); ${cOut[2]} of ${ROBUSTNESS.rollouts} survived, ${cOut[1]} strides`,
    );
    out(`    ratio C CPU / pronk CPU: ${bRatio.toFixed(2)}x (target >= ${ROBUSTNESS_TARGET}x)`);
    // What any Node process costs before pronk's first line runs (part of the pronk CPU above).
    const bare = (env) => median(Array.from({ length: 3 }, () => processCpu(process.execPath, ['-e', '0'], { env }).cpu));
    const certs = process.env.NODE_EXTRA_CA_CERTS;
    const withoutCerts = certs ? (() => { const { NODE_EXTRA_CA_CERTS: _, ...env } = process.env; return bare(env); })() : undefined;
    out(
      `    of which Node's own start-up (node -e 0): ${bare(process.env).toFixed(2)} s CPU` +
        (certs ? ` (${withoutCerts.toFixed(2)} s without this environment's NODE_EXTRA_CA_CERTS, which Node parses at every start)` : ''),
    );
    goal(
      '(b) pronk robustness process vs C, CPU',
      `>= ${ROBUSTNESS_TARGET}x`,
      `${bRatio.toFixed(2)}x (whole process ${pCpu.toFixed(2)} s vs C ${cCpu.toFixed(2)} s CPU, ${ROBUSTNESS.rollouts}x${ROBUSTNESS.strides})`,
      bRatio >= ROBUSTNESS_TARGET,
    );
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  out(`  (1-minute load average ${loadavg()[0].toFixed(2)} on a shared machine: compare the ratios, not the absolute rates)`);
  out();
}

async function main() {
  const tStart = now();
  const engine = await loadEngine();
  const out = (s = '') => console.log(s);

  out('Pronk benchmark: WASM kernel vs odex (JS) on the same strides');
  out(`node ${process.version}, ${process.platform}/${process.arch}`);
  out(
    `body: Seyfarth et al. 2002 (m ${BODY.mass} kg, L0 ${BODY.leg} m, k ${BODY.k / 1000} kN/m, g ${BODY.g}), ` +
      `attack ${ATTACK_DEG}°, fixed angle, flat ground`,
  );

  // --- The gait: settle from 1 m / 5 m/s onto the stable fixed point. --------
  const refModel = modelBlock(REFERENCE_TOL);
  const settle = engine.runBatch({ model: refModel, inputs: inputs(1, START.apexHeight, START.speed), strides: SETTLE_STRIDES, records: true });
  if (settle.completed !== 1) throw new Error('the reference gait failed to settle');
  const start = {
    apexHeight: settle.summaries[L.S_FINAL_HEIGHT],
    speed: settle.summaries[L.S_FINAL_SPEED],
  };
  const drift = Math.abs(settle.summaries[L.S_FINAL_HEIGHT] - settle.summaries[L.S_PREVIOUS_HEIGHT]);
  out(
    `gait: ${SETTLE_STRIDES} strides from ${START.apexHeight} m / ${START.speed} m/s settle at apex ` +
      `${start.apexHeight.toFixed(6)} m, ${start.speed.toFixed(6)} m/s (last stride moved it ${exp(drift, 1)} m)`,
  );

  // Reference: the STRIDES strides from the start at the very tight tolerance.
  const ref = engine.runBatch({ model: refModel, inputs: inputs(1, start.apexHeight, start.speed), strides: STRIDES, records: true });
  const refApex = []; // [height, speed] at the start of stride s
  const refNext = []; // next apex height of stride s
  for (let s = 0; s < STRIDES; s++) {
    refApex.push([field(ref.records, s, L.R_APEX_HEIGHT), field(ref.records, s, L.R_APEX_SPEED)]);
    refNext.push(field(ref.records, s, L.R_NEXT_APEX_HEIGHT));
  }
  // Cross-check the reference itself against odex at the same tolerance.
  let refAgreement = 0;
  for (let s = 0; s < STRIDES; s++) {
    const o = odexStride({ ...BODY, apexHeight: refApex[s][0], forwardSpeed: refApex[s][1], attack: ATTACK_DEG * DEG, ...REFERENCE_TOL });
    refAgreement = Math.max(refAgreement, Math.abs(o.nextApexHeight - refNext[s]));
  }
  out(
    `reference: kernel at rtol ${exp(REFERENCE_TOL.rtol, 0)}, atol ${exp(REFERENCE_TOL.atol, 0)}; ` +
      `odex at the same tolerance agrees to ${exp(refAgreement, 1)} m in apex height`,
  );
  out();

  // --- Calibration: loosest tolerance with error <= target here and tighter. --
  // Error = max over the STRIDES reference strides of |next apex − reference|,
  // each stride started from the reference apex (one-stride error, no drift).
  const kernelError = (tol) => {
    const inp = new Float64Array(STRIDES * L.I_SIZE);
    for (let s = 0; s < STRIDES; s++) inp.set(rolloutInput(refApex[s][0], refApex[s][1]), s * L.I_SIZE);
    const res = engine.runBatch({ model: modelBlock({ rtol: tol, atol: tol }), inputs: inp, strides: 1, records: true });
    let e = 0;
    for (let s = 0; s < STRIDES; s++) {
      const got = res.records[s * L.R_SIZE + L.R_NEXT_APEX_HEIGHT];
      e = Math.max(e, Number.isFinite(got) ? Math.abs(got - refNext[s]) : Infinity);
    }
    return e;
  };
  const odexError = (tol) => {
    let e = 0;
    for (let s = 0; s < STRIDES; s++) {
      let got;
      try {
        got = odexOne(refApex[s][0], refApex[s][1], tol).nextApexHeight;
      } catch {
        got = NaN;
      }
      e = Math.max(e, Number.isFinite(got) ? Math.abs(got - refNext[s]) : Infinity);
    }
    return e;
  };
  const calibrate = (errorAt) => {
    const errors = TOL_GRID.map(errorAt);
    let chosen = TOL_GRID.length - 1; // tightest, if nothing looser qualifies
    for (let i = TOL_GRID.length - 1; i >= 0 && errors[i] <= TARGET_ERROR; i--) chosen = i;
    return { tol: TOL_GRID[chosen], error: errors[chosen], errors, index: chosen };
  };
  const kCal = calibrate(kernelError);
  const oCal = calibrate(odexError);
  if (!(kCal.error <= TARGET_ERROR) || !(oCal.error <= TARGET_ERROR)) {
    throw new Error('calibration: a path misses the target error even at the tightest tolerance');
  }

  out(`calibration: one-stride apex height error (max over ${STRIDES} strides) vs tolerance, rtol = atol`);
  out(`  chosen: the loosest tolerance whose error, and every tighter one's, is <= ${exp(TARGET_ERROR, 0)} m`);
  out(`  ${padEnd('tol', 9)}  ${pad('WASM error (m)', 14)}  ${pad('odex error (m)', 14)}`);
  const shown = new Set([0, 10, 20, 30, 40, 50, 60, 70, 80, 90, kCal.index, oCal.index]);
  for (const i of [...shown].sort((a, b) => a - b)) {
    const mark = (cal) => (cal.index === i ? ' <' : '  ');
    out(`  ${padEnd(exp(TOL_GRID[i], 1), 9)}  ${pad(exp(kCal.errors[i]), 14)}${mark(kCal)}${pad(exp(oCal.errors[i]), 14)}${mark(oCal)}`);
  }
  out(`  WASM kernel: rtol = atol = ${exp(kCal.tol)}, apex error ${exp(kCal.error)} m`);
  out(`  odex (JS):   rtol = atol = ${exp(oCal.tol)}, apex error ${exp(oCal.error)} m`);
  out();

  // --- Side by side: warm up, size the blocks, interleave, take medians. ------
  const kModel = modelBlock({ rtol: kCal.tol, atol: kCal.tol });
  gc();
  for (let i = 0; i < 5; i++) kernelBlock(engine, kModel, start, 200);
  for (let i = 0; i < 5; i++) odexBlock(start, oCal.tol, 5);
  const kProbe = timed(() => kernelBlock(engine, kModel, start, 500));
  const oProbe = timed(() => odexBlock(start, oCal.tol, 20));
  const kRollouts = Math.max(1, Math.round((BLOCK_SECONDS * kProbe.strides) / kProbe.seconds / STRIDES));
  const oRollouts = Math.max(1, Math.round((BLOCK_SECONDS * oProbe.strides) / oProbe.seconds / STRIDES));

  const kRates = [];
  const oRates = [];
  for (let rep = 0; rep < REPS; rep++) {
    // Alternate which path goes first, so neither always runs on a warmer machine.
    const runK = () => {
      const t = timed(() => kernelBlock(engine, kModel, start, kRollouts));
      kRates.push(t.strides / t.seconds);
    };
    const runO = () => {
      const t = timed(() => odexBlock(start, oCal.tol, oRollouts));
      oRates.push(t.strides / t.seconds);
    };
    if (rep % 2 === 0) {
      runK();
      runO();
    } else {
      runO();
      runK();
    }
  }
  const kRate = median(kRates);
  const oRate = median(oRates);
  const ratio = kRate / oRate;

  out(`side by side: median of ${REPS} interleaved repetitions after warm-up, ${STRIDES}-stride rollouts from the gait`);
  out(`  ${padEnd('path', 12)}  ${pad('tol', 8)}  ${pad('strides/rep', 11)}  ${pad('strides/s', 11)}  ${pad('min', 11)}  ${pad('max', 11)}`);
  const row = (name, tol, n, rates) =>
    out(
      `  ${padEnd(name, 12)}  ${pad(exp(tol, 1), 8)}  ${pad(n, 11)}  ${pad(median(rates).toFixed(0), 11)}  ` +
        `${pad(Math.min(...rates).toFixed(0), 11)}  ${pad(Math.max(...rates).toFixed(0), 11)}`,
    );
  row('WASM kernel', kCal.tol, kRollouts * STRIDES, kRates);
  row('odex (JS)', oCal.tol, oRollouts * STRIDES, oRates);
  out(`  ratio WASM / odex: ${ratio.toFixed(1)}x (target >= 20x)`);
  out();

  // --- The native-C baseline: calibrated the same way, timed in CPU seconds. -----
  await benchNativeBaseline({ engine, out, start, refApex, refNext, kCal });

  // --- Monte Carlo batch on random-walk terrain (kernel only). ---------------
  const tModel = modelBlock({ rtol: kCal.tol, atol: kCal.tol, terrain: TERRAIN });
  const tInputs = inputs(TERRAIN.rollouts, start.apexHeight, start.speed); // I_STREAM = rollout index
  const terrainRun = () => engine.runBatch({ model: tModel, inputs: tInputs, strides: TERRAIN.strides });
  for (let i = 0; i < 2; i++) terrainRun();
  const tTimes = [];
  let tResult;
  for (let rep = 0; rep < REPS; rep++) {
    const t0 = now();
    tResult = terrainRun();
    tTimes.push(now() - t0);
  }
  let tStrides = 0;
  for (let r = 0; r < TERRAIN.rollouts; r++) tStrides += tResult.summaries[r * L.S_SIZE + L.S_STRIDES_COMPLETED];
  const tWall = median(tTimes);
  const tRate = tStrides / tWall;

  out(
    `random-walk terrain: ${TERRAIN.rollouts} rollouts x ${TERRAIN.strides} strides, sigma ${TERRAIN.sigma} m, ` +
      `seed ${TERRAIN.seed}, stream = rollout index, from the gait, rtol = atol = ${exp(kCal.tol, 1)}`,
  );
  const clearance = start.apexHeight - BODY.leg * Math.sin(ATTACK_DEG * DEG); // apex above the touchdown height
  out(`  (the gait's apex is ${(clearance * 1000).toFixed(1)} mm above its touchdown height: a rise of that much ends a rollout)`);
  out(`  rollouts completing all strides  ${pad(tResult.completed, 10)} of ${TERRAIN.rollouts}`);
  out(`  ended by                         ${statusBreakdown(tResult.summaries, TERRAIN.rollouts)}`);
  out(`  strides completed                ${pad(tStrides, 10)}`);
  out(`  wall time (median of ${REPS})         ${pad((tWall * 1000).toFixed(1), 10)} ms   (min ${(Math.min(...tTimes) * 1000).toFixed(1)}, max ${(Math.max(...tTimes) * 1000).toFixed(1)})`);
  out(`  strides/s                        ${pad(tRate.toFixed(0), 10)}`);
  out();

  out(`bench time ${(now() - tStart).toFixed(1)} s`);
  out(
    `summary: WASM ${kRate.toFixed(0)} vs odex ${oRate.toFixed(0)} strides/s at ${exp(TARGET_ERROR, 0)} m apex accuracy ` +
      `= ${ratio.toFixed(1)}x (target >= 20x: ${ratio >= 20 ? 'met' : 'NOT met'}); terrain batch ${tRate.toFixed(0)} strides/s ` +
      `(${(tWall * 1000).toFixed(1)} ms for ${TERRAIN.rollouts}x${TERRAIN.strides})`,
  );
}

// `node test/bench/run.mjs [kernel] [montecarlo] [optimize] [basin] [ui]` runs only the named
// sections (all of them without arguments); the goals table covers what ran.
const SECTIONS = ['kernel', 'montecarlo', 'optimize', 'basin', 'ui', 'biped'];

async function all() {
  const asked = process.argv.slice(2);
  const unknown = asked.filter((a) => !SECTIONS.includes(a));
  if (unknown.length) throw new Error(`unknown section ${unknown.join(', ')}: expected any of ${SECTIONS.join(', ')}`);
  const run = (name) => asked.length === 0 || asked.includes(name);
  const log = console.log;
  if (run('kernel')) await main();
  if (run('montecarlo')) {
    log();
    log('== Monte Carlo evaluation (one core)');
    await benchMonteCarlo(log);
  }
  if (run('optimize')) {
    log();
    log('== policy search');
    await benchOptimize(log);
  }
  if (run('basin')) {
    log();
    log('== basin of attraction on the worker pool');
    await benchBasin(log);
  }
  if (run('biped')) {
    log();
    log('== two-leg walking stride vs single-leg running stride (one core)');
    await benchBiped(log);
  }
  if (run('ui')) {
    log();
    log('== workbench: main-thread long tasks (headless Chromium)');
    await benchLongTasks(log);
  }
  log();
  log(`== goals (issue 14), measured in this run (1-minute load average ${loadavg()[0].toFixed(2)}; the machine may be shared)`);
  printGoals(log);
}

all().catch((err) => {
  console.error(err instanceof Error ? err.stack ?? err.message : err);
  process.exitCode = 1;
});
