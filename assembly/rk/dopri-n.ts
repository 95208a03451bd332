// Dormand–Prince 5(4) for a non-autonomous first-order system of any dimension
// up to NMAX, with Shampine's 4th-order interpolant: the same tableau
// (tableau.ts) and the same step-size controller (acceptFactor / rejectFactor in
// dopri5.ts) as the stance stepper, written as loops over the components. The
// right-hand side is a function reference set by the caller (setSystemN).

import {
  C2, C3, C4, C5, A21, A31, A32, A41, A42, A43, A51, A52, A53, A54, A61, A62, A63, A64, A65,
  B1, B3, B4, B5, B6, E1, E3, E4, E5, E6, E7,
  P11, P12, P13, P14, P32, P33, P34, P42, P43, P44, P52, P53, P54, P62, P63, P64, P72, P73, P74,
} from "./tableau";

export const NMAX = 8;
const BUF: usize = NMAX * 8;
export const Y0N: usize = memory.data(NMAX * 8 * 11, 16); // state at the step start
export const K1N: usize = Y0N + BUF; // f(t0, Y0N), kept across steps (FSAL)
export const K2N: usize = K1N + BUF;
export const K3N: usize = K2N + BUF;
export const K4N: usize = K3N + BUF;
export const K5N: usize = K4N + BUF;
export const K6N: usize = K5N + BUF;
export const K7N: usize = K6N + BUF; // f(t0 + h, YNN): the next step's K1N
export const YNN: usize = K7N + BUF; // state at the step end
export const YSN: usize = YNN + BUF; // stage state (scratch)
export const YIN: usize = YSN + BUF; // interpolated state, written by denseN()

// f(t, y) written to out; y and out are (dim) f64.
export type SystemN = (t: f64, y: usize, out: usize) => void;

let dim: i32 = 1;
let system: SystemN = (t: f64, y: usize, out: usize): void => {};
let lastT: f64 = 0.0;
let lastHN: f64 = 0.0;

export function setSystemN(n: i32, f: SystemN): void {
  dim = n;
  system = f;
}

@inline function ld(p: usize, i: i32): f64 {
  return load<f64>(p + (<usize>i << 3));
}
@inline function st(p: usize, i: i32, v: f64): void {
  store<f64>(p + (<usize>i << 3), v);
}

// K1N = f(t, Y0N): at the start of an integration or after the state was changed.
export function startN(t: f64): void {
  system(t, Y0N, K1N);
}

// One step of size h from (t, Y0N, K1N): writes YNN and K2N..K7N (K7N = f(YNN)).
// Returns the scaled RMS error over all components (<= 1: accept) or NaN when
// a stage or the new state is not finite.
export function stepN(t: f64, h: f64, rtol: f64, atol: f64): f64 {
  lastT = t;
  lastHN = h;
  const n = dim;
  for (let i = 0; i < n; i++) st(YSN, i, ld(Y0N, i) + h * (A21 * ld(K1N, i)));
  system(t + C2 * h, YSN, K2N);
  for (let i = 0; i < n; i++) st(YSN, i, ld(Y0N, i) + h * (A31 * ld(K1N, i) + A32 * ld(K2N, i)));
  system(t + C3 * h, YSN, K3N);
  for (let i = 0; i < n; i++) {
    st(YSN, i, ld(Y0N, i) + h * (A41 * ld(K1N, i) + A42 * ld(K2N, i) + A43 * ld(K3N, i)));
  }
  system(t + C4 * h, YSN, K4N);
  for (let i = 0; i < n; i++) {
    st(YSN, i, ld(Y0N, i) + h * (A51 * ld(K1N, i) + A52 * ld(K2N, i) + A53 * ld(K3N, i) + A54 * ld(K4N, i)));
  }
  system(t + C5 * h, YSN, K5N);
  for (let i = 0; i < n; i++) {
    st(
      YSN, i,
      ld(Y0N, i) + h * (A61 * ld(K1N, i) + A62 * ld(K2N, i) + A63 * ld(K3N, i) + A64 * ld(K4N, i) + A65 * ld(K5N, i)),
    );
  }
  system(t + h, YSN, K6N);
  for (let i = 0; i < n; i++) {
    st(
      YNN, i,
      ld(Y0N, i) + h * (B1 * ld(K1N, i) + B3 * ld(K3N, i) + B4 * ld(K4N, i) + B5 * ld(K5N, i) + B6 * ld(K6N, i)),
    );
  }
  system(t + h, YNN, K7N);
  let sum: f64 = 0.0;
  let finite: f64 = 0.0;
  for (let i = 0; i < n; i++) {
    const e = h * (E1 * ld(K1N, i) + E3 * ld(K3N, i) + E4 * ld(K4N, i) + E5 * ld(K5N, i) + E6 * ld(K6N, i) + E7 * ld(K7N, i));
    const y0 = ld(Y0N, i);
    const yn = ld(YNN, i);
    const sc = atol + rtol * Math.max(Math.abs(y0), Math.abs(yn));
    const q = e / sc;
    sum += q * q;
    finite += yn - yn + (ld(K7N, i) - ld(K7N, i));
  }
  const err = Math.sqrt(sum / <f64>n);
  if (!isFinite(err) || finite != 0.0) return NaN;
  return err;
}

// Interpolated state at t0 + theta*h of the last step (0 <= theta <= 1), into YIN.
export function denseN(theta: f64): void {
  const t2 = theta * theta;
  const t3 = t2 * theta;
  const t4 = t3 * theta;
  const q1 = P11 * theta + P12 * t2 + P13 * t3 + P14 * t4;
  const q3 = P32 * t2 + P33 * t3 + P34 * t4;
  const q4 = P42 * t2 + P43 * t3 + P44 * t4;
  const q5 = P52 * t2 + P53 * t3 + P54 * t4;
  const q6 = P62 * t2 + P63 * t3 + P64 * t4;
  const q7 = P72 * t2 + P73 * t3 + P74 * t4;
  const h = lastHN;
  for (let i = 0; i < dim; i++) {
    st(
      YIN, i,
      ld(Y0N, i) +
        h * (q1 * ld(K1N, i) + q3 * ld(K3N, i) + q4 * ld(K4N, i) + q5 * ld(K5N, i) + q6 * ld(K6N, i) + q7 * ld(K7N, i)),
    );
  }
}

// Time of the last step's start, and its size.
export function lastStepStart(): f64 {
  return lastT;
}
export function lastStepSize(): f64 {
  return lastHN;
}

// Step-end state into the step-start slots (FSAL: K1N <- K7N).
export function advanceN(): void {
  const bytes: usize = <usize>dim << 3;
  for (let i: usize = 0; i < bytes; i += 8) {
    store<f64>(Y0N + i, load<f64>(YNN + i));
    store<f64>(K1N + i, load<f64>(K7N + i));
  }
}

// An event function of (t, state).
export type EventN = (t: f64, y: usize) => f64;

// Fraction theta in (0, 1] of the last step where g crosses from g0 < 0 to
// g1 >= 0: the Illinois method (Dowell & Jarratt 1971) on the interpolant, to
// `tol` in theta, as events.ts does for the stance.
export function locateN(g: EventN, g0: f64, g1: f64, tol: f64): f64 {
  let a: f64 = 0.0;
  let b: f64 = 1.0;
  let ga = g0;
  let gb = g1;
  if (gb == 0.0) return 1.0;
  let side = 0;
  for (let it = 0; it < 100; it++) {
    let theta = (a * gb - b * ga) / (gb - ga);
    if (!(theta > a && theta < b)) theta = 0.5 * (a + b);
    denseN(theta);
    const v = g(lastT + theta * lastHN, YIN);
    if (v >= 0.0) {
      b = theta;
      gb = v;
      if (side == 1) ga *= 0.5;
      side = 1;
    } else {
      a = theta;
      ga = v;
      if (side == -1) gb *= 0.5;
      side = -1;
    }
    if (b - a < tol) break;
  }
  return b;
}
