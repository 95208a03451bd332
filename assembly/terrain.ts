// Ground heights met at successive touchdowns (every model kind): flat, a list of steps, or a
// counter-based random draw (rng.ts) per touchdown index of a terrain stream.

import {
  M_TERRAIN_KIND, M_TERRAIN_SIGMA, M_TERRAIN_SEED, M_STEPS_N, M_STEPS_PTR,
  TERRAIN_FLAT, TERRAIN_STEPS, TERRAIN_RANDOM_WALK,
} from "./layout";
import { mget } from "./policy";
import { gaussian } from "./rng";

// The random walk's running sum between calls (reset at the start of each rollout).
let walk: f64 = 0.0;

export function resetWalk(): void {
  walk = 0.0;
}

// The running sum of the rollout that draws next (rollouts that take turns keep their own).
export function getWalk(): f64 {
  return walk;
}
export function setWalk(w: f64): void {
  walk = w;
}

// Ground height met at touchdown `index` of a rollout (indices in order from 0).
export function groundAt(model: usize, index: i32, stream: u64): f64 {
  const kind = <i32>mget(model, M_TERRAIN_KIND);
  if (kind == TERRAIN_FLAT) return 0.0;
  if (kind == TERRAIN_STEPS) {
    const n = <i32>mget(model, M_STEPS_N);
    const i = index < n ? index : n - 1;
    return load<f64>(<usize>mget(model, M_STEPS_PTR) + (<usize>i << 3));
  }
  const seed = <u64>mget(model, M_TERRAIN_SEED);
  const z = mget(model, M_TERRAIN_SIGMA) * gaussian(seed, stream, <u64>index);
  if (kind == TERRAIN_RANDOM_WALK) {
    walk += z;
    return walk;
  }
  return z; // TERRAIN_INDEPENDENT
}
