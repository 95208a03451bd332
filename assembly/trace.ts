// Dense trajectory sampling for plots. Off unless traceRollout() turned it on;
// the rollout and stance code call in here only behind `tracing`.

import {
  T_TIME, T_X, T_Y, T_VX, T_VY, T_FOOT_X, T_FOOT_Y, T_LEG_FORCE, T_PHASE, T_STRIDE, T_SIZE,
  T_FOOT2_X, T_FOOT2_Y, T_LEG_FORCE2,
  PHASE_FLIGHT, PHASE_STANCE,
} from "./layout";
import { dense, YI } from "./rk/dopri5";
import { legForce } from "./rk/events";

export let tracing: bool = false;
let buffer: usize = 0; // (capacity x T_SIZE) f64, written here
let capacity: i32 = 0;
let count: i32 = 0;
let interval: f64 = 0.001; // s between regular samples
let nextTime: f64 = 0.0; // absolute time of the next regular sample

// Where the current stance's foot is, set by the rollout at touchdown.
export let traceStride: i32 = 0;
export let traceFootX: f64 = 0.0;
export let traceGround: f64 = 0.0;
export let traceTouchdownTime: f64 = 0.0;

export function traceBegin(ptr: usize, cap: i32, dt: f64): void {
  tracing = true;
  buffer = ptr;
  capacity = cap;
  count = 0;
  interval = dt;
  nextTime = 0.0;
}

export function traceEnd(): i32 {
  tracing = false;
  return count;
}

export function emit(
  t: f64, x: f64, y: f64, vx: f64, vy: f64, fx: f64, fy: f64, force: f64, phase: i32, stride: i32,
): void {
  if (count >= capacity) return;
  const p = buffer + (<usize>count * T_SIZE << 3);
  store<f64>(p + (T_TIME << 3), t);
  store<f64>(p + (T_X << 3), x);
  store<f64>(p + (T_Y << 3), y);
  store<f64>(p + (T_VX << 3), vx);
  store<f64>(p + (T_VY << 3), vy);
  store<f64>(p + (T_FOOT_X << 3), fx);
  store<f64>(p + (T_FOOT_Y << 3), fy);
  store<f64>(p + (T_LEG_FORCE << 3), force);
  store<f64>(p + (T_PHASE << 3), <f64>phase);
  store<f64>(p + (T_STRIDE << 3), <f64>traceStride);
  store<f64>(p + (T_FOOT2_X << 3), NaN);
  store<f64>(p + (T_FOOT2_Y << 3), NaN);
  store<f64>(p + (T_LEG_FORCE2 << 3), 0.0);
  count++;
}

// A sample of the two-leg model: both feet and both leg forces.
export function emit2(
  t: f64, x: f64, y: f64, vx: f64, vy: f64,
  f0x: f64, f0y: f64, force0: f64, f1x: f64, f1y: f64, force1: f64, phase: i32,
): void {
  if (count >= capacity) return;
  emit(t, x, y, vx, vy, f0x, f0y, force0, phase, traceStride);
  const p = buffer + (<usize>(count - 1) * T_SIZE << 3);
  store<f64>(p + (T_FOOT2_X << 3), f1x);
  store<f64>(p + (T_FOOT2_Y << 3), f1y);
  store<f64>(p + (T_LEG_FORCE2 << 3), force1);
}

// The next regular sample time at or before tEnd (and moves past it), or -1 when none is due.
export function traceNext(tEnd: f64): f64 {
  if (nextTime <= tEnd && count < capacity) {
    const t = nextTime;
    nextTime += interval;
    return t;
  }
  return -1.0;
}

// Regular samples of a ballistic flight from (x0, y0, vx, vy0) at absolute time
// t0 up to absolute time t1; the leg is drawn at `attack` (rad) ahead of the body.
export function traceFlight(
  t0: f64, t1: f64, x0: f64, y0: f64, vx: f64, vy0: f64, g: f64, leg: f64, cosA: f64, sinA: f64,
): void {
  while (nextTime <= t1 && count < capacity) {
    const s = nextTime - t0;
    if (s >= 0.0) {
      const y = y0 + vy0 * s - 0.5 * g * s * s;
      const x = x0 + vx * s;
      emit(nextTime, x, y, vx, vy0 - g * s, x + leg * cosA, y - leg * sinA, 0.0, PHASE_FLIGHT, traceStride);
    }
    nextTime += interval;
  }
}

// Regular samples inside the last accepted stance step, which started at stance
// time tStep (since touchdown) with size h, up to the fraction thetaEnd of it.
export function traceStance(tStep: f64, h: f64, thetaEnd: f64): void {
  const tEnd = traceTouchdownTime + tStep + thetaEnd * h;
  while (nextTime <= tEnd && count < capacity) {
    const theta = (nextTime - traceTouchdownTime - tStep) / h;
    if (theta >= 0.0) {
      dense(theta);
      const px = load<f64>(YI, 0);
      const py = load<f64>(YI, 8);
      emit(
        nextTime, traceFootX + px, traceGround + py, load<f64>(YI, 16), load<f64>(YI, 24),
        traceFootX, traceGround, legForce(YI), PHASE_STANCE, traceStride,
      );
    }
    nextTime += interval;
  }
}
