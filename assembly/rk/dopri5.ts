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

import { rhs } from "./system";

// State dimension. The stance uses 5 (px, py, vx, vy, dissipated work); a
// smaller problem (the Arenstorf check) carries a zero dummy component.
export const DIM = 5;

// Scratch buffers, each (DIM) f64, in static memory. Written only by the
// functions in this file and by the stance driver through the named pointers.
const BUF_BYTES: usize = DIM * 8;
export const Y0: usize = memory.data(DIM * 8 * 12, 16); // state at the step start
export const K1: usize = Y0 + BUF_BYTES; // f(t0, Y0): kept across steps (FSAL)
export const K2: usize = K1 + BUF_BYTES;
export const K3: usize = K2 + BUF_BYTES;
export const K4: usize = K3 + BUF_BYTES;
export const K5: usize = K4 + BUF_BYTES;
export const K6: usize = K5 + BUF_BYTES;
export const K7: usize = K6 + BUF_BYTES; // f(t0 + h, YN): the next step's K1
export const YN: usize = K7 + BUF_BYTES; // state at the step end
export const YS: usize = YN + BUF_BYTES; // stage state (scratch)
export const YI: usize = YS + BUF_BYTES; // interpolated state, written by dense()
export const DY: usize = YI + BUF_BYTES; // derivative scratch for callers

// Butcher tableau, exact (Dormand & Prince 1980).
const C2: f64 = 1.0 / 5.0;
const C3: f64 = 3.0 / 10.0;
const C4: f64 = 4.0 / 5.0;
const C5: f64 = 8.0 / 9.0;

const A21: f64 = 1.0 / 5.0;
const A31: f64 = 3.0 / 40.0;
const A32: f64 = 9.0 / 40.0;
const A41: f64 = 44.0 / 45.0;
const A42: f64 = -56.0 / 15.0;
const A43: f64 = 32.0 / 9.0;
const A51: f64 = 19372.0 / 6561.0;
const A52: f64 = -25360.0 / 2187.0;
const A53: f64 = 64448.0 / 6561.0;
const A54: f64 = -212.0 / 729.0;
const A61: f64 = 9017.0 / 3168.0;
const A62: f64 = -355.0 / 33.0;
const A63: f64 = 46732.0 / 5247.0;
const A64: f64 = 49.0 / 176.0;
const A65: f64 = -5103.0 / 18656.0;
// 5th-order weights (= row 7, first-same-as-last).
const B1: f64 = 35.0 / 384.0;
const B3: f64 = 500.0 / 1113.0;
const B4: f64 = 125.0 / 192.0;
const B5: f64 = -2187.0 / 6784.0;
const B6: f64 = 11.0 / 84.0;
// Error weights e = b - b*, with b* the embedded 4th-order weights
// (5179/57600, 0, 7571/16695, 393/640, -92097/339200, 187/2100, 1/40).
const E1: f64 = 71.0 / 57600.0;
const E3: f64 = -71.0 / 16695.0;
const E4: f64 = 71.0 / 1920.0;
const E5: f64 = -17253.0 / 339200.0;
const E6: f64 = 22.0 / 525.0;
const E7: f64 = -1.0 / 40.0;

// Dense-output matrix P (Shampine 1986), rows 1..7 (row 2 is zero).
const P11: f64 = 1.0;
const P12: f64 = -8048581381.0 / 2820520608.0;
const P13: f64 = 8663915743.0 / 2820520608.0;
const P14: f64 = -12715105075.0 / 11282082432.0;
const P32: f64 = 131558114200.0 / 32700410799.0;
const P33: f64 = -68118460800.0 / 10900136933.0;
const P34: f64 = 87487479700.0 / 32700410799.0;
const P42: f64 = -1754552775.0 / 470086768.0;
const P43: f64 = 14199869525.0 / 1410260304.0;
const P44: f64 = -10690763975.0 / 1880347072.0;
const P52: f64 = 127303824393.0 / 49829197408.0;
const P53: f64 = -318862633887.0 / 49829197408.0;
const P54: f64 = 701980252875.0 / 199316789632.0;
const P62: f64 = -282668133.0 / 205662961.0;
const P63: f64 = 2019193451.0 / 616988883.0;
const P64: f64 = -1453857185.0 / 822651844.0;
const P72: f64 = 40617522.0 / 29380423.0;
const P73: f64 = -110615467.0 / 29380423.0;
const P74: f64 = 69997945.0 / 29380423.0;

// Step size of the last call to step(), needed by dense().
let lastH: f64 = 0.0;

@inline function ld(p: usize, i: i32): f64 {
  return load<f64>(p + (<usize>i << 3));
}
@inline function st(p: usize, i: i32, v: f64): void {
  store<f64>(p + (<usize>i << 3), v);
}

// One Dormand–Prince step of size h from (Y0, K1), which the caller provides.
// Writes YN and K2..K7 (K7 = f(YN)). Returns the scaled RMS error estimate
// err = sqrt(mean((e_i / (atol + rtol*max(|y0_i|,|yn_i|)))^2)); err <= 1 means
// accept. Returns NaN if any stage produced a non-finite number.
export function step(h: f64, rtol: f64, atol: f64): f64 {
  lastH = h;
  for (let i = 0; i < DIM; i++) st(YS, i, ld(Y0, i) + h * (A21 * ld(K1, i)));
  rhs(YS, K2);
  for (let i = 0; i < DIM; i++) st(YS, i, ld(Y0, i) + h * (A31 * ld(K1, i) + A32 * ld(K2, i)));
  rhs(YS, K3);
  for (let i = 0; i < DIM; i++)
    st(YS, i, ld(Y0, i) + h * (A41 * ld(K1, i) + A42 * ld(K2, i) + A43 * ld(K3, i)));
  rhs(YS, K4);
  for (let i = 0; i < DIM; i++)
    st(YS, i, ld(Y0, i) + h * (A51 * ld(K1, i) + A52 * ld(K2, i) + A53 * ld(K3, i) + A54 * ld(K4, i)));
  rhs(YS, K5);
  for (let i = 0; i < DIM; i++)
    st(
      YS,
      i,
      ld(Y0, i) +
        h * (A61 * ld(K1, i) + A62 * ld(K2, i) + A63 * ld(K3, i) + A64 * ld(K4, i) + A65 * ld(K5, i)),
    );
  rhs(YS, K6);
  for (let i = 0; i < DIM; i++)
    st(
      YN,
      i,
      ld(Y0, i) +
        h * (B1 * ld(K1, i) + B3 * ld(K3, i) + B4 * ld(K4, i) + B5 * ld(K5, i) + B6 * ld(K6, i)),
    );
  rhs(YN, K7);
  let sum: f64 = 0.0;
  for (let i = 0; i < DIM; i++) {
    const e =
      h *
      (E1 * ld(K1, i) + E3 * ld(K3, i) + E4 * ld(K4, i) + E5 * ld(K5, i) + E6 * ld(K6, i) + E7 * ld(K7, i));
    const a = Math.abs(ld(Y0, i));
    const b = Math.abs(ld(YN, i));
    const sc = atol + rtol * (a > b ? a : b);
    const q = e / sc;
    sum += q * q;
  }
  const err = Math.sqrt(sum / <f64>DIM);
  // A NaN or infinity anywhere in the stages shows up in err or in YN.
  if (!isFinite(err)) return NaN;
  for (let i = 0; i < DIM; i++) if (!isFinite(ld(YN, i))) return NaN;
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

// Step-size factor from an error estimate (Hairer et al., II.4: safety 0.9,
// exponent 1/5, growth limited to [0.2, 10]; no growth right after a rejection).
export function stepFactor(err: f64, afterReject: bool): f64 {
  if (err == 0.0) return afterReject ? 1.0 : 10.0;
  let f = 0.9 * Math.pow(err, -0.2);
  if (f < 0.2) f = 0.2;
  const hi: f64 = afterReject ? 1.0 : 10.0;
  if (f > hi) f = hi;
  return f;
}

// Copy the step-end state into the step-start slots (FSAL: K1 <- K7).
export function advance(): void {
  memory.copy(Y0, YN, BUF_BYTES);
  memory.copy(K1, K7, BUF_BYTES);
}
