// Basin benchmark: a 100 x 100 basin grid x 30 strides around a retraction gait's fixed point,
// timed on 1 worker and on 2 workers side by side in one run (interleaved repetitions), with the
// speed-up. The verdict takes each worker count's fastest repetition: another process on the
// machine only ever adds time, and it costs a 2-worker run more than a 1-worker run (which keeps
// a core free for it), so the fastest repetitions estimate the speed-up on 2 idle cores best; the
// ratio of medians is printed beside it. Imports the compiled modules from dist/ (run `npm run build` first; `npm run
// bench` does). Run alone with `node test/bench/basin.mjs`, or call benchBasin(log).

import { basinOfAttraction } from '../../dist/src/core/analysis/basin.js';
import { loadEngine, rolloutInput } from '../../dist/src/core/engine.js';
import * as L from '../../dist/assembly/layout.js';
import { buildModel } from '../../dist/src/core/model.js';
import { parseScenario } from '../../dist/src/core/scenario.js';
import { closeWorkerPool } from '../../dist/src/worker/pool.js';
import { goal } from './goals.mjs';

// Human-like body of Seyfarth, Geyer, Herr 2003 (J. Exp. Biol. 206(15):2547–2555) with swing-leg
// retraction at 50 deg/s from 62 deg at apex: a policy with a sizable basin at 5 m/s.
const SCENARIO = {
  name: 'Seyfarth 2003 body, retraction 50 deg/s',
  body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
  start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
  policy: { angle: { kind: 'retraction', attack_at_apex_deg: 62, rate_deg_per_s: 50 } },
  terrain: { kind: 'flat' },
  strides: 30,
};
const CELLS_PER_AXIS = 100;
const STRIDES = 30;
const HALF_HEIGHT_M = 0.3; // grid half-widths about the fixed point
const HALF_SPEED_M_PER_S = 1.5;
const REPS = 7; // timed repetitions per worker count (fastest and median reported)
const TARGET_SPEEDUP = 1.8;

const now = () => performance.now() / 1000;

function median(xs) {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

export async function benchBasin(log = console.log) {
  const tStart = now();
  const scenario = parseScenario(SCENARIO);

  // The gait's fixed point: 200 strides from the start settle on it.
  const engine = await loadEngine();
  const settle = engine.runBatch({ model: buildModel(scenario), inputs: rolloutInput(1, 5), strides: 200 });
  const fixedHeight = settle.summaries[L.S_FINAL_HEIGHT];
  const fixedSpeed = settle.summaries[L.S_FINAL_SPEED];

  const options = {
    heights: { low: fixedHeight - HALF_HEIGHT_M, high: fixedHeight + HALF_HEIGHT_M, count: CELLS_PER_AXIS },
    speeds: { low: fixedSpeed - HALF_SPEED_M_PER_S, high: fixedSpeed + HALF_SPEED_M_PER_S, count: CELLS_PER_AXIS },
    strides: STRIDES,
  };
  log('basin benchmark: the same basin on 1 and on 2 workers, side by side');
  log(
    `  ${SCENARIO.name}; grid ${CELLS_PER_AXIS} x ${CELLS_PER_AXIS} about the fixed point ` +
      `(${fixedHeight.toFixed(4)} m, ${fixedSpeed.toFixed(3)} m/s) +- ${HALF_HEIGHT_M} m, +- ${HALF_SPEED_M_PER_S} m/s; ` +
      `${STRIDES} strides per cell, flat ground, default integrator tolerances`,
  );

  // process.cpuUsage counts every thread of the process: CPU / wall time is the number of cores
  // the run kept busy (about 2 for 2 workers on an idle 2-core machine; less when others compete).
  const runOn = async (workers) => {
    const cpu0 = process.cpuUsage();
    const t0 = now();
    const result = await basinOfAttraction(scenario, options, { workers });
    const seconds = now() - t0;
    const cpu = process.cpuUsage(cpu0);
    return { seconds, cores: (cpu.user + cpu.system) / 1e6 / seconds, result };
  };
  // Warm-up: JIT, the engine in this thread, and the two pooled workers started.
  const reference = (await runOn(1)).result;
  const warm2 = (await runOn(2)).result;
  if (JSON.stringify(warm2) !== JSON.stringify(reference)) throw new Error('basin: 2 workers gave a different result from 1');

  const times = { 1: [], 2: [] };
  const cores = { 1: [], 2: [] };
  for (let rep = 0; rep < REPS; rep++) {
    // Alternate which goes first, so neither always runs on a warmer machine.
    for (const workers of rep % 2 === 0 ? [1, 2] : [2, 1]) {
      const run = await runOn(workers);
      times[workers].push(run.seconds);
      cores[workers].push(run.cores);
    }
  }
  await closeWorkerPool();

  let strides = 0;
  for (const cell of reference.cells) strides += cell.strides_completed;
  const { counts } = reference;
  log(
    `  cells ${counts.cells}: converged ${counts.converged}, wandering ${counts.wandering}, fell ${counts.fell}; ` +
      `attracted fraction ${reference.attracted_fraction.toFixed(4)}; ${strides} strides per run`,
  );
  const t1 = median(times[1]);
  const t2 = median(times[2]);
  const row = (workers, t, all) =>
    log(
      `  ${String(workers).padStart(2)} worker${workers === 1 ? ' ' : 's'}  median ${t.toFixed(3)} s  ` +
        `(min ${Math.min(...all).toFixed(3)}, max ${Math.max(...all).toFixed(3)}; ${REPS} reps)  ${(strides / t).toFixed(0)} strides/s  ` +
        `cores busy ${median(cores[workers]).toFixed(2)}`,
    );
  row(1, t1, times[1]);
  row(2, t2, times[2]);
  const os = await import('node:os');
  const load = os.loadavg()[0];
  log(`  machine: ${os.availableParallelism()} cores available, load average ${load.toFixed(2)} after the runs (other processes compete if it is well above 2)`);
  const best1 = Math.min(...times[1]);
  const best2 = Math.min(...times[2]);
  const speedup = best1 / best2;
  const medianSpeedup = t1 / t2;
  log(
    `  speed-up 2 workers / 1: ${speedup.toFixed(2)}x fastest of ${REPS} each (${best1.toFixed(3)} s vs ${best2.toFixed(3)} s), ` +
      `${medianSpeedup.toFixed(2)}x of the medians (target >= ${TARGET_SPEEDUP}x on 2 cores: ${speedup >= TARGET_SPEEDUP ? 'met' : 'NOT met'})`,
  );
  goal(
    '(e) basin 100x100x30, 2 workers vs 1',
    `>= ${TARGET_SPEEDUP}x`,
    `${speedup.toFixed(2)}x fastest of ${REPS} (wall ${best1.toFixed(2)} s vs ${best2.toFixed(2)} s); ` +
      `medians ${medianSpeedup.toFixed(2)}x (${t1.toFixed(2)} s vs ${t2.toFixed(2)} s); load average ${load.toFixed(1)}`,
    speedup >= TARGET_SPEEDUP,
  );
  log(`  basin bench time ${(now() - tStart).toFixed(1)} s`);
  return { seconds1: t1, seconds2: t2, speedup, medianSpeedup, cells: counts.cells, strides };
}

if (import.meta.url === new URL(process.argv[1] ?? '', 'file://').href) {
  benchBasin().catch((err) => {
    console.error(err instanceof Error ? err.stack ?? err.message : err);
    process.exitCode = 1;
  });
}
