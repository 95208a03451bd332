// Dormand–Prince 5(4) embedded Runge–Kutta pair with a 4th-order continuous
// extension, for a first-order system of fixed dimension DIM.
//
// Coefficients: J.R. Dormand, P.J. Prince, "A family of embedded Runge-Kutta
// formulae", J. Comput. Appl. Math. 6(1):19–26, 1980 (table 2, "RK5(4)7M"),
// as tabulated in Hairer, Nørsett, Wanner, Solving Ordinary Differential
// Equations I, 2nd ed., Springer 1993, table 5.2. Written as exact rationals.
// Dense output: the free 4th-order interpolant of L.F. Shampine, "Some
// practical Runge-Kutta formulas", Math. Comp. 46(173):135–150, 1986, in the
// power-series form P used by scipy.integrate.RK45 (rows: stages, columns:
// theta^1..theta^4). At theta = 1 each row sums to the 5th-order weight b_i.
//
// This file is only the stepper and its interpolant. The right-hand side lives
// in system.ts, event location in events.ts, and the stance driver in stance.ts.

import { rhs5 } from "./system";

// State dimension. The stance uses 5 (px, py, vx, vy, dissipated work); a
// smaller problem (the Arenstorf check) carries a zero dummy component.
export const DIM = 5;

// Scratch buffers, each (DIM) f64, in static memory. Written only by the
// functions in this file and by the stance driver through the named pointers.
// A set is BUFFER_SET_BYTES long; the pointers below name the set in use
// (useBuffers), so that two rollouts stepped together (stance.ts) each keep
// their own. The default set is the one every single-rollout path uses.
const BUF_BYTES: usize = DIM * 8;
export const BUFFER_SET_BYTES: usize = BUF_BYTES * 12;
export const DEFAULT_BUFFERS: usize = memory.data(DIM * 8 * 12, 16);
export let Y0: usize = DEFAULT_BUFFERS; // state at the step start
export let K1: usize = Y0 + BUF_BYTES; // f(t0, Y0): kept across steps (FSAL)
export let K2: usize = K1 + BUF_BYTES;
export let K3: usize = K2 + BUF_BYTES;
export let K4: usize = K3 + BUF_BYTES;
export let K5: usize = K4 + BUF_BYTES;
export let K6: usize = K5 + BUF_BYTES;
export let K7: usize = K6 + BUF_BYTES; // f(t0 + h, YN): the next step's K1
export let YN: usize = K7 + BUF_BYTES; // state at the step end
export let YS: usize = YN + BUF_BYTES; // stage state (scratch)
export let YI: usize = YS + BUF_BYTES; // interpolated state, written by dense()
export let DY: usize = YI + BUF_BYTES; // derivative scratch for callers

// Offsets of the buffers within a set.
export const OFF_Y0: usize = 0;
export const OFF_K1: usize = BUF_BYTES;
export const OFF_K2: usize = 2 * BUF_BYTES;
export const OFF_K3: usize = 3 * BUF_BYTES;
export const OFF_K4: usize = 4 * BUF_BYTES;
export const OFF_K5: usize = 5 * BUF_BYTES;
export const OFF_K6: usize = 6 * BUF_BYTES;
export const OFF_K7: usize = 7 * BUF_BYTES;
export const OFF_YN: usize = 8 * BUF_BYTES;

// Point the named buffers at the set at `base` (BUFFER_SET_BYTES, 16-byte aligned).
export function useBuffers(base: usize): void {
  Y0 = base;
  K1 = base + BUF_BYTES;
  K2 = base + 2 * BUF_BYTES;
  K3 = base + 3 * BUF_BYTES;
  K4 = base + 4 * BUF_BYTES;
  K5 = base + 5 * BUF_BYTES;
  K6 = base + 6 * BUF_BYTES;
  K7 = base + 7 * BUF_BYTES;
  YN = base + 8 * BUF_BYTES;
  YS = base + 9 * BUF_BYTES;
  YI = base + 10 * BUF_BYTES;
  DY = base + 11 * BUF_BYTES;
}

// The Butcher tableau (Dormand & Prince 1980) and the dense-output matrix P (Shampine 1986), rows
// 1..7 (row 2 is zero), as exact rationals in tableau.ts, shared with the steppers of other
// dimensions; the tableau is re-exported here for the lane step (dopri5x2.ts).
import {
  C2, C3, C4, C5, P11, P12, P13, P14, P32, P33, P34, P42, P43, P44, P52, P53, P54, P62, P63, P64, P72, P73, P74, A21, A31, A32, A41, A42, A43, A51, A52, A53, A54, A61, A62, A63, A64, A65, B1, B3, B4, B5, B6, E1, E3, E4, E5, E6, E7,
} from "./tableau";
export {
  A21, A31, A32, A41, A42, A43, A51, A52, A53, A54, A61, A62, A63, A64, A65, B1, B3, B4, B5, B6, E1, E3, E4, E5, E6, E7,
} from "./tableau";

// Step size of the last call to step(), needed by dense().
let lastH: f64 = 0.0;
// Components in the error norm (the first n); the rest are carried along.
let errorDimension: f64 = <f64>DIM;

export function setErrorDimension(n: i32): void {
  errorDimension = <f64>n;
}

// The stepper's own state, saved and restored when several rollouts take turns
// (stance.ts): the last step size, the error-norm divisor, the controller's memory.
export function getLastH(): f64 {
  return lastH;
}
export function setLastH(h: f64): void {
  lastH = h;
}
export function getErrorDimension(): f64 {
  return errorDimension;
}
export function setErrorDimensionValue(n: f64): void {
  errorDimension = n;
}

@inline function ld(p: usize, i: i32): f64 {
  return load<f64>(p + (<usize>i << 3));
}
@inline function st(p: usize, i: i32, v: f64): void {
  store<f64>(p + (<usize>i << 3), v);
}

// One Dormand–Prince step of size h from (Y0, K1), which the caller provides.
// Writes YN and K2..K7 (K7 = f(YN)). Returns the scaled RMS error estimate
// err = sqrt(mean((e_i / (atol + rtol*max(|y0_i|,|yn_i|)))^2)) over the first
// errorDimension components; err <= 1 means
// accept. Returns NaN if any stage produced a non-finite number.
// Unrolled over the DIM components with the state in locals: the loop form ran
// about three times slower in V8 (generated by hand from the tableau above).
export function step(h: f64, rtol: f64, atol: f64): f64 {
  lastH = h;
  const y0 = load<f64>(Y0, 0);
  const y1 = load<f64>(Y0, 8);
  const y2 = load<f64>(Y0, 16);
  const y3 = load<f64>(Y0, 24);
  const y4 = load<f64>(Y0, 32);
  const a0 = load<f64>(K1, 0);
  const a1 = load<f64>(K1, 8);
  const a2 = load<f64>(K1, 16);
  const a3 = load<f64>(K1, 24);
  const a4 = load<f64>(K1, 32);
  // Each stage: (y + h (the older terms)) + (h A) (the newest stage), so that one multiplication
  // and one addition follow the newest right-hand side (a shorter chain from stage to stage).
  const hA21 = h * A21;
  const hA32 = h * A32;
  const hA43 = h * A43;
  const hA54 = h * A54;
  const hA65 = h * A65;
  const hB6 = h * B6;
  rhs5(y0 + hA21 * a0, y1 + hA21 * a1, y2 + hA21 * a2, y3 + hA21 * a3, y4 + hA21 * a4, K2);
  const b0 = load<f64>(K2, 0);
  const b1 = load<f64>(K2, 8);
  const b2 = load<f64>(K2, 16);
  const b3 = load<f64>(K2, 24);
  const b4 = load<f64>(K2, 32);
  rhs5(y0 + h * (A31 * a0) + hA32 * b0, y1 + h * (A31 * a1) + hA32 * b1, y2 + h * (A31 * a2) + hA32 * b2, y3 + h * (A31 * a3) + hA32 * b3, y4 + h * (A31 * a4) + hA32 * b4, K3);
  const c0 = load<f64>(K3, 0);
  const c1 = load<f64>(K3, 8);
  const c2 = load<f64>(K3, 16);
  const c3 = load<f64>(K3, 24);
  const c4 = load<f64>(K3, 32);
  rhs5(y0 + h * (A41 * a0 + A42 * b0) + hA43 * c0, y1 + h * (A41 * a1 + A42 * b1) + hA43 * c1, y2 + h * (A41 * a2 + A42 * b2) + hA43 * c2, y3 + h * (A41 * a3 + A42 * b3) + hA43 * c3, y4 + h * (A41 * a4 + A42 * b4) + hA43 * c4, K4);
  const d0 = load<f64>(K4, 0);
  const d1 = load<f64>(K4, 8);
  const d2 = load<f64>(K4, 16);
  const d3 = load<f64>(K4, 24);
  const d4 = load<f64>(K4, 32);
  rhs5(y0 + h * (A51 * a0 + A52 * b0 + A53 * c0) + hA54 * d0, y1 + h * (A51 * a1 + A52 * b1 + A53 * c1) + hA54 * d1, y2 + h * (A51 * a2 + A52 * b2 + A53 * c2) + hA54 * d2, y3 + h * (A51 * a3 + A52 * b3 + A53 * c3) + hA54 * d3, y4 + h * (A51 * a4 + A52 * b4 + A53 * c4) + hA54 * d4, K5);
  const e0 = load<f64>(K5, 0);
  const e1 = load<f64>(K5, 8);
  const e2 = load<f64>(K5, 16);
  const e3 = load<f64>(K5, 24);
  const e4 = load<f64>(K5, 32);
  rhs5(y0 + h * (A61 * a0 + A62 * b0 + A63 * c0 + A64 * d0) + hA65 * e0, y1 + h * (A61 * a1 + A62 * b1 + A63 * c1 + A64 * d1) + hA65 * e1, y2 + h * (A61 * a2 + A62 * b2 + A63 * c2 + A64 * d2) + hA65 * e2, y3 + h * (A61 * a3 + A62 * b3 + A63 * c3 + A64 * d3) + hA65 * e3, y4 + h * (A61 * a4 + A62 * b4 + A63 * c4 + A64 * d4) + hA65 * e4, K6);
  const f0 = load<f64>(K6, 0);
  const f1 = load<f64>(K6, 8);
  const f2 = load<f64>(K6, 16);
  const f3 = load<f64>(K6, 24);
  const f4 = load<f64>(K6, 32);
  const n0 = y0 + h * (B1 * a0 + B3 * c0 + B4 * d0 + B5 * e0) + hB6 * f0;
  const n1 = y1 + h * (B1 * a1 + B3 * c1 + B4 * d1 + B5 * e1) + hB6 * f1;
  const n2 = y2 + h * (B1 * a2 + B3 * c2 + B4 * d2 + B5 * e2) + hB6 * f2;
  const n3 = y3 + h * (B1 * a3 + B3 * c3 + B4 * d3 + B5 * e3) + hB6 * f3;
  const n4 = y4 + h * (B1 * a4 + B3 * c4 + B4 * d4 + B5 * e4) + hB6 * f4;
  store<f64>(YN, n0, 0);
  store<f64>(YN, n1, 8);
  store<f64>(YN, n2, 16);
  store<f64>(YN, n3, 24);
  store<f64>(YN, n4, 32);
  rhs5(n0, n1, n2, n3, n4, K7);
  const g0 = load<f64>(K7, 0);
  const g1 = load<f64>(K7, 8);
  const g2 = load<f64>(K7, 16);
  const g3 = load<f64>(K7, 24);
  const g4 = load<f64>(K7, 32);
  let sum: f64 = 0.0;
  let finite: f64 = 0.0; // stays 0 (not NaN) only if every new component is finite
  {
    const e = h * (E1 * a0 + E3 * c0 + E4 * d0 + E5 * e0 + E6 * f0 + E7 * g0);
    const sc = atol + rtol * Math.max(Math.abs(y0), Math.abs(n0));
    const q = e / sc;
    sum += q * q;
    finite += n0 - n0;
  }
  {
    const e = h * (E1 * a1 + E3 * c1 + E4 * d1 + E5 * e1 + E6 * f1 + E7 * g1);
    const sc = atol + rtol * Math.max(Math.abs(y1), Math.abs(n1));
    const q = e / sc;
    sum += q * q;
    finite += n1 - n1;
  }
  {
    const e = h * (E1 * a2 + E3 * c2 + E4 * d2 + E5 * e2 + E6 * f2 + E7 * g2);
    const sc = atol + rtol * Math.max(Math.abs(y2), Math.abs(n2));
    const q = e / sc;
    sum += q * q;
    finite += n2 - n2;
  }
  {
    const e = h * (E1 * a3 + E3 * c3 + E4 * d3 + E5 * e3 + E6 * f3 + E7 * g3);
    const sc = atol + rtol * Math.max(Math.abs(y3), Math.abs(n3));
    const q = e / sc;
    sum += q * q;
    finite += n3 - n3;
  }
  {
    const e = h * (E1 * a4 + E3 * c4 + E4 * d4 + E5 * e4 + E6 * f4 + E7 * g4);
    const sc = atol + rtol * Math.max(Math.abs(y4), Math.abs(n4));
    const q = e / sc;
    sum += q * q;
    finite += n4 - n4;
  }
  const err = Math.sqrt(sum / errorDimension);
  // A NaN or infinity anywhere in the stages shows up in err or in YN.
  if (!isFinite(err) || finite != 0.0) return NaN;
  return err;
}

// Interpolated state at Y0 + theta*h of the last step (0 <= theta <= 1), into YI.
// Valid until the next call to step() or a write to Y0/K1..K7.
export function dense(theta: f64): void {
  const t2 = theta * theta;
  const t3 = t2 * theta;
  const t4 = t3 * theta;
  const q1 = P11 * theta + P12 * t2 + P13 * t3 + P14 * t4;
  const q3 = P32 * t2 + P33 * t3 + P34 * t4;
  const q4 = P42 * t2 + P43 * t3 + P44 * t4;
  const q5 = P52 * t2 + P53 * t3 + P54 * t4;
  const q6 = P62 * t2 + P63 * t3 + P64 * t4;
  const q7 = P72 * t2 + P73 * t3 + P74 * t4;
  const h = lastH;
  for (let i = 0; i < DIM; i++) {
    st(
      YI,
      i,
      ld(Y0, i) +
        h * (q1 * ld(K1, i) + q3 * ld(K3, i) + q4 * ld(K4, i) + q5 * ld(K5, i) + q6 * ld(K6, i) + q7 * ld(K7, i)),
    );
  }
}

// The first components of dense(theta), the same arithmetic, into di0..di3 instead of YI
// (event location on the stance state, events.ts): dense2 the position, dense4 also the velocity.
export let di0: f64 = 0.0;
export let di1: f64 = 0.0;
export let di2: f64 = 0.0;
export let di3: f64 = 0.0;

export function dense2(theta: f64): void {
  const t2 = theta * theta;
  const t3 = t2 * theta;
  const t4 = t3 * theta;
  const q1 = P11 * theta + P12 * t2 + P13 * t3 + P14 * t4;
  const q3 = P32 * t2 + P33 * t3 + P34 * t4;
  const q4 = P42 * t2 + P43 * t3 + P44 * t4;
  const q5 = P52 * t2 + P53 * t3 + P54 * t4;
  const q6 = P62 * t2 + P63 * t3 + P64 * t4;
  const q7 = P72 * t2 + P73 * t3 + P74 * t4;
  const h = lastH;
  di0 = ld(Y0, 0) + h * (q1 * ld(K1, 0) + q3 * ld(K3, 0) + q4 * ld(K4, 0) + q5 * ld(K5, 0) + q6 * ld(K6, 0) + q7 * ld(K7, 0));
  di1 = ld(Y0, 1) + h * (q1 * ld(K1, 1) + q3 * ld(K3, 1) + q4 * ld(K4, 1) + q5 * ld(K5, 1) + q6 * ld(K6, 1) + q7 * ld(K7, 1));
}

export function dense4(theta: f64): void {
  const t2 = theta * theta;
  const t3 = t2 * theta;
  const t4 = t3 * theta;
  const q1 = P11 * theta + P12 * t2 + P13 * t3 + P14 * t4;
  const q3 = P32 * t2 + P33 * t3 + P34 * t4;
  const q4 = P42 * t2 + P43 * t3 + P44 * t4;
  const q5 = P52 * t2 + P53 * t3 + P54 * t4;
  const q6 = P62 * t2 + P63 * t3 + P64 * t4;
  const q7 = P72 * t2 + P73 * t3 + P74 * t4;
  const h = lastH;
  di0 = ld(Y0, 0) + h * (q1 * ld(K1, 0) + q3 * ld(K3, 0) + q4 * ld(K4, 0) + q5 * ld(K5, 0) + q6 * ld(K6, 0) + q7 * ld(K7, 0));
  di1 = ld(Y0, 1) + h * (q1 * ld(K1, 1) + q3 * ld(K3, 1) + q4 * ld(K4, 1) + q5 * ld(K5, 1) + q6 * ld(K6, 1) + q7 * ld(K7, 1));
  di2 = ld(Y0, 2) + h * (q1 * ld(K1, 2) + q3 * ld(K3, 2) + q4 * ld(K4, 2) + q5 * ld(K5, 2) + q6 * ld(K6, 2) + q7 * ld(K7, 2));
  di3 = ld(Y0, 3) + h * (q1 * ld(K1, 3) + q3 * ld(K3, 3) + q4 * ld(K4, 3) + q5 * ld(K5, 3) + q6 * ld(K6, 3) + q7 * ld(K7, 3));
}

// Step-size control: the PI controller of Hairer, Nørsett, Wanner, Solving ODEs
// I, 2nd ed., II.4 (eq. 4.13, after Gustafsson 1991), with the constants of their
// DOPRI5 code: exponent 1/5 - 0.75 beta, beta = 0.04, safety 0.9, factors
// limited to [0.2, 10], no growth right after a rejection. Its memory of the
// last accepted error damps the step-size oscillation that made about one step
// in five a rejection with the plain controller.
export const BETA: f64 = 0.04;
export const EXPO: f64 = 0.2 - 0.75 * BETA;
let errOld: f64 = 1e-4;

// x^p for x > 0 to about 1 %, from the bit pattern (a controller heuristic needs
// no more; a libm pow would cost more than a right-hand side).
@inline function roughPow(x: f64, p: f64): f64 {
  const bits = reinterpret<u64>(x);
  const e = <f64>(<i64>(bits >> 52) - 1023);
  const m = reinterpret<f64>((bits & 0x000fffffffffffff) | 0x3ff0000000000000) - 1.0; // [0, 1)
  const log2x = e + m * (1.4425 - 0.4425 * m);
  const y = p * log2x;
  const n = Math.floor(y);
  const f = y - n;
  const twoF = 1.0 + f * (0.6565 + 0.3435 * f);
  return twoF * reinterpret<f64>(<u64>(<i64>n + 1023) << 52);
}

// Start of an integration: forget the controller's history.
export function resetController(): void {
  errOld = 1e-4;
}
export function getErrOld(): f64 {
  return errOld;
}
export function setErrOld(e: f64): void {
  errOld = e;
}

// Factor for the next step after an accepted step with error err (<= 1), the
// controller's memory being `old` (rk/dopri5x2.ts forms the same in f64x2 lanes).
@inline export function acceptedFactor(err: f64, afterReject: bool, old: f64): f64 {
  const hi: f64 = afterReject ? 1.0 : 10.0;
  const e = err > 1e-12 ? err : 1e-12;
  let f = 0.9 * roughPow(e, -EXPO) * roughPow(old, BETA);
  if (f < 0.2) f = 0.2;
  if (f > hi) f = hi;
  return f;
}

// The controller's memory after an accepted step with error err.
@inline export function controllerMemory(err: f64): f64 {
  return err > 1e-4 ? err : 1e-4;
}

// Factor for the next step after an accepted step with error err (<= 1).
export function acceptFactor(err: f64, afterReject: bool): f64 {
  const f = acceptedFactor(err, afterReject, errOld);
  errOld = controllerMemory(err);
  return f;
}

// Factor for the retry after a rejected step with error err (> 1).
export function rejectFactor(err: f64): f64 {
  if (!(err < 1e30)) return 0.2;
  let f = 0.9 * roughPow(err, -EXPO);
  if (f < 0.2) f = 0.2;
  if (f > 1.0) f = 1.0;
  return f;
}

// Copy the step-end state into the step-start slots (FSAL: K1 <- K7).
export function advance(): void {
  for (let i: usize = 0; i < BUF_BYTES; i += 8) {
    store<f64>(Y0 + i, load<f64>(YN + i));
    store<f64>(K1 + i, load<f64>(K7 + i));
  }
}
