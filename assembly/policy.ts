// Touchdown-angle and stiffness policies, read from the model block.
// Angles in radians, times in seconds since the apex.

import {
  M_ANGLE_KIND, M_ATTACK, M_RETRACTION_RATE, M_ANGLE_MIN, M_ANGLE_MAX,
  M_ANGLE_TABLE_N, M_ANGLE_TABLE_T, M_ANGLE_TABLE_A,
  M_STIFFNESS_KIND, M_STIFFNESS, M_K_COMPRESSION, M_K_EXTENSION,
  M_STIFFNESS_TABLE_N, M_STIFFNESS_TABLE_T, M_STIFFNESS_TABLE_KC, M_STIFFNESS_TABLE_KE,
  ANGLE_FIXED, ANGLE_RETRACTION, STIFFNESS_CONSTANT, STIFFNESS_SPLIT,
} from "./layout";

const HALF_PI: f64 = 1.5707963267948966;

@inline export function mget(model: usize, field: i32): f64 {
  return load<f64>(model + (<usize>field << 3));
}

@inline function at(ptr: usize, i: i32): f64 {
  return load<f64>(ptr + (<usize>i << 3));
}

// Piecewise-linear lookup, held flat past both ends. Times strictly increasing.
export function interpolate(tPtr: usize, vPtr: usize, n: i32, t: f64): f64 {
  if (t <= at(tPtr, 0)) return at(vPtr, 0);
  if (t >= at(tPtr, n - 1)) return at(vPtr, n - 1);
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (at(tPtr, mid) <= t) lo = mid;
    else hi = mid;
  }
  const t0 = at(tPtr, lo);
  const t1 = at(tPtr, hi);
  const w = (t - t0) / (t1 - t0);
  return at(vPtr, lo) + w * (at(vPtr, hi) - at(vPtr, lo));
}

// Attack angle commanded at time t since the apex.
export function attackAt(model: usize, t: f64): f64 {
  const kind = <i32>mget(model, M_ANGLE_KIND);
  if (kind == ANGLE_FIXED) return mget(model, M_ATTACK);
  if (kind == ANGLE_RETRACTION) {
    let a = mget(model, M_ATTACK) + mget(model, M_RETRACTION_RATE) * t;
    const lo = mget(model, M_ANGLE_MIN);
    const hi = mget(model, M_ANGLE_MAX);
    if (a < lo) a = lo;
    if (a > hi) a = hi;
    return a;
  }
  return interpolate(
    <usize>mget(model, M_ANGLE_TABLE_T), <usize>mget(model, M_ANGLE_TABLE_A),
    <i32>mget(model, M_ANGLE_TABLE_N), t,
  );
}

// The first time after t (s since apex) where the angle schedule's slope may
// change, or +Infinity: a retraction's clamp times, a table's knots. The
// touchdown search walks the pieces with it, however many knots a table has.
export function nextAngleBreakpoint(model: usize, t: f64): f64 {
  const kind = <i32>mget(model, M_ANGLE_KIND);
  if (kind == ANGLE_FIXED) return Infinity;
  if (kind == ANGLE_RETRACTION) {
    const w = mget(model, M_RETRACTION_RATE);
    if (w == 0.0) return Infinity;
    const a0 = mget(model, M_ATTACK);
    let t1 = (mget(model, M_ANGLE_MIN) - a0) / w;
    let t2 = (mget(model, M_ANGLE_MAX) - a0) / w;
    if (t1 > t2) { const s = t1; t1 = t2; t2 = s; }
    if (t1 > t && isFinite(t1)) return t1;
    if (t2 > t && isFinite(t2)) return t2;
    return Infinity;
  }
  const tPtr = <usize>mget(model, M_ANGLE_TABLE_T);
  const n = <i32>mget(model, M_ANGLE_TABLE_N);
  if (at(tPtr, n - 1) <= t) return Infinity;
  if (at(tPtr, 0) > t) return at(tPtr, 0);
  let lo = 0; // at(lo) <= t < at(hi)
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (at(tPtr, mid) <= t) lo = mid;
    else hi = mid;
  }
  return at(tPtr, hi);
}

// d attack / dt of the schedule at time t since the apex, rad/s (0 where it is held or clamped);
// t should lie inside a piece between breakpoints, where the rate is constant.
export function angleRateAt(model: usize, t: f64): f64 {
  const kind = <i32>mget(model, M_ANGLE_KIND);
  if (kind == ANGLE_FIXED) return 0.0;
  if (kind == ANGLE_RETRACTION) {
    const w = mget(model, M_RETRACTION_RATE);
    const a = mget(model, M_ATTACK) + w * t;
    return a < mget(model, M_ANGLE_MIN) || a > mget(model, M_ANGLE_MAX) ? 0.0 : w;
  }
  const tPtr = <usize>mget(model, M_ANGLE_TABLE_T);
  const aPtr = <usize>mget(model, M_ANGLE_TABLE_A);
  const n = <i32>mget(model, M_ANGLE_TABLE_N);
  if (t <= at(tPtr, 0) || t >= at(tPtr, n - 1)) return 0.0;
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (at(tPtr, mid) <= t) lo = mid;
    else hi = mid;
  }
  return (at(aPtr, hi) - at(aPtr, lo)) / (at(tPtr, hi) - at(tPtr, lo));
}

// The first time since the apex after which the commanded angle is no longer an attack angle in
// (0, 90 deg], or +Infinity when it never leaves: only a retraction without the clamp on the side
// it moves towards leaves (tables and clamps hold angles the validator checked).
export function angleExitTime(model: usize): f64 {
  if (<i32>mget(model, M_ANGLE_KIND) != ANGLE_RETRACTION) return Infinity;
  const w = mget(model, M_RETRACTION_RATE);
  const a0 = mget(model, M_ATTACK);
  if (w > 0.0 && mget(model, M_ANGLE_MAX) > HALF_PI) return (HALF_PI - a0) / w;
  if (w < 0.0 && mget(model, M_ANGLE_MIN) <= 0.0) return a0 / -w;
  return Infinity;
}

// Largest |d attack / dt| of the schedule, rad/s (for the concavity test).
export function maxAngleRate(model: usize): f64 {
  const kind = <i32>mget(model, M_ANGLE_KIND);
  if (kind == ANGLE_FIXED) return 0.0;
  if (kind == ANGLE_RETRACTION) return Math.abs(mget(model, M_RETRACTION_RATE));
  const tPtr = <usize>mget(model, M_ANGLE_TABLE_T);
  const aPtr = <usize>mget(model, M_ANGLE_TABLE_A);
  const n = <i32>mget(model, M_ANGLE_TABLE_N);
  let w: f64 = 0.0;
  for (let i = 1; i < n; i++) {
    const s = Math.abs((at(aPtr, i) - at(aPtr, i - 1)) / (at(tPtr, i) - at(tPtr, i - 1)));
    if (s > w) w = s;
  }
  return w;
}

// Stiffness for this stance, from the touchdown time since apex.
export let stanceKc: f64 = 0.0;
export let stanceKe: f64 = 0.0;
export let stanceSplit: bool = false;

export function chooseStiffness(model: usize, tTouchdown: f64, scale: f64): void {
  const kind = <i32>mget(model, M_STIFFNESS_KIND);
  if (kind == STIFFNESS_CONSTANT) {
    stanceKc = mget(model, M_STIFFNESS) * scale;
    stanceKe = stanceKc;
    stanceSplit = false;
    return;
  }
  if (kind == STIFFNESS_SPLIT) {
    stanceKc = mget(model, M_K_COMPRESSION) * scale;
    stanceKe = mget(model, M_K_EXTENSION) * scale;
  } else {
    const tPtr = <usize>mget(model, M_STIFFNESS_TABLE_T);
    const n = <i32>mget(model, M_STIFFNESS_TABLE_N);
    stanceKc = interpolate(tPtr, <usize>mget(model, M_STIFFNESS_TABLE_KC), n, tTouchdown) * scale;
    stanceKe = interpolate(tPtr, <usize>mget(model, M_STIFFNESS_TABLE_KE), n, tTouchdown) * scale;
  }
  stanceSplit = stanceKc != stanceKe;
}
