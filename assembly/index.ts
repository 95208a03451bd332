// Pronk's WASM kernel: the exported entry points. The boundary is pointers and
// numbers only; buffer layouts are in layout.ts. Memory for buffers comes from
// a bump arena that the TypeScript engine resets before each call.

import { runBatch as batch, runRollout, setBatchLanes, pairedSteps } from "./rollout";
import { traceBegin, traceEnd } from "./trace";
import { step, acceptFactor, rejectFactor, resetController, advance, setErrorDimension, Y0, K1 } from "./rk/dopri5";
import { rhs, setArenstorf } from "./rk/system";
import { gaussian, uniform } from "./rng";
import { LAYOUT_VERSION, M_MODEL_KIND, MODEL_BIPED } from "./layout";
import { runBipedRollout } from "./biped";
import { mget } from "./policy";
export { runLateralBatch, traceLateralRollout } from "./lateral";

let arenaTop: usize = 0;

export function layoutVersion(): i32 {
  return LAYOUT_VERSION;
}

// Forget every buffer handed out so far (the whole arena is reused).
export function arenaReset(): void {
  arenaTop = (__heap_base + 15) & ~(<usize>15);
}

// A 16-byte aligned block of `bytes` in linear memory, growing it if needed;
// 0 when memory cannot grow. Views on the JS side must be re-made after a call
// that may have grown memory.
export function arenaAlloc(bytes: usize): usize {
  if (arenaTop == 0) arenaReset();
  const p = arenaTop;
  const end = (p + bytes + 15) & ~(<usize>15);
  const pagesNeeded = <i32>((end + 0xffff) >>> 16);
  const pagesNow = memory.size();
  if (pagesNeeded > pagesNow) {
    if (memory.grow(pagesNeeded - pagesNow) < 0) return 0;
  }
  arenaTop = end;
  return p;
}

export function runBatch(models: usize, inputs: usize, rollouts: i32, strides: i32, records: usize, summaries: usize): i32 {
  return batch(models, inputs, rollouts, strides, records, summaries);
}

// Rollouts that runBatch steps together: 4 (the default: single-leg rollouts four at a time,
// two f64x2 steps), 2 or 1 (one rollout after the other). The results are the same bytes.
export function batchLanes(n: i32): void {
  setBatchLanes(n);
}

// Steps that the last runBatch took in pairs (for checks).
export function batchPairedSteps(): f64 {
  return pairedSteps();
}

// One rollout with dense trajectory samples every `dt` seconds (plus exact
// samples at touchdown and liftoff) into (capacity x T_SIZE) f64 at `samples`.
// Writes the rollout's records and summary like runBatch (the input's I_MODEL
// is ignored: `model` is the one model block); returns the samples written.
export function traceRollout(
  model: usize, input: usize, strides: i32, records: usize, summary: usize,
  samples: usize, capacity: i32, dt: f64,
): i32 {
  traceBegin(samples, capacity, dt);
  if (<i32>mget(model, M_MODEL_KIND) == MODEL_BIPED) runBipedRollout(model, input, strides, records, summary);
  else runRollout(model, input, strides, records, summary);
  return traceEnd();
}

// Standard normal draw `index` of terrain stream `stream` (checks the RNG).
export function terrainGaussian(seed: f64, stream: f64, index: f64): f64 {
  return gaussian(<u64>seed, <u64>stream, <u64>index);
}

// The stepper alone on the Arenstorf orbit (Hairer, Nørsett, Wanner, Solving
// ODEs I, II.0), from (x0, 0, 0, vy0) to tEnd with the same step control as
// the stance; writes [x, y, vx, vy, steps, rejected] to out.
export function integrateArenstorf(mu: f64, x0: f64, vy0: f64, tEnd: f64, rtol: f64, atol: f64, out: usize): void {
  setArenstorf(mu);
  setErrorDimension(4); // the fifth component is a zero dummy
  resetController();
  store<f64>(Y0, x0, 0);
  store<f64>(Y0, 0.0, 8);
  store<f64>(Y0, 0.0, 16);
  store<f64>(Y0, vy0, 24);
  store<f64>(Y0, 0.0, 32);
  rhs(Y0, K1);
  let t: f64 = 0.0;
  let h: f64 = 1e-4;
  let steps = 0;
  let rejected = 0;
  let afterReject = false;
  while (t < tEnd && steps + rejected < 10000000) {
    let last = false;
    if (t + h >= tEnd) { h = tEnd - t; last = true; }
    const err = step(h, rtol, atol);
    if (!(err <= 1.0)) {
      rejected++;
      h *= isNaN(err) ? 0.1 : rejectFactor(err);
      afterReject = true;
      continue;
    }
    steps++;
    t = last ? tEnd : t + h;
    advance();
    h *= acceptFactor(err, afterReject);
    afterReject = false;
  }
  store<f64>(out, load<f64>(Y0, 0), 0);
  store<f64>(out, load<f64>(Y0, 8), 8);
  store<f64>(out, load<f64>(Y0, 16), 16);
  store<f64>(out, load<f64>(Y0, 24), 24);
  store<f64>(out, <f64>steps, 32);
  store<f64>(out, <f64>rejected, 40);
}

// Uniform draw in (0, 1) number `counter` of stream `stream` (the random kicks of impulse recovery).
export function rngUniform(seed: f64, stream: f64, counter: f64): f64 {
  return uniform(<u64>seed, <u64>stream, <u64>counter);
}
