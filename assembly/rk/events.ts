// Stance events and their location on the stepper's interpolant.
//
// Each event is a scalar function g of the stance state [px, py, vx, vy, W]
// (foot at the origin). The stance driver evaluates g at both ends of every
// accepted step; when g changes sign in the direction that matters, locate()
// finds the crossing on the dense output (Illinois regula falsi, Dowell &
// Jarratt 1971); the stance driver re-takes the step to that time, and
// refine() polishes it with Newton iterations on the true solution, so that
// the event state is as accurate as the integrator and not merely as the
// interpolant.

import { dense, dense2, dense4, di0, di1, di2, di3, YI, YN, K7 } from "./dopri5";
import { rhs, stanceMass, stanceLeg, stanceK, stanceC, stanceG } from "./system";

// Liftoff: r - L0 without damping; with damping the foot leaves when the leg
// force k (L0 - r) - c r' falls to zero (a foot cannot pull), g = -force.
export const EV_LIFTOFF = 0;
// Maximum compression: g = r'.
export const EV_MAX_COMPRESSION = 1;
// Body reaches the ground: g = -py.
export const EV_BODY_GROUND = 2;
// Forward speed falls below zero: g = -vx (crossing when g becomes > 0).
export const EV_BACKWARD = 3;
// Peak leg force (only with damping, where it is not at maximum compression):
// g = -dF/dt = k r' + c r''.
export const EV_FORCE_PEAK = 4;

@inline function radius(p: usize): f64 {
  const px = load<f64>(p, 0);
  const py = load<f64>(p, 8);
  return Math.sqrt(px * px + py * py);
}

// Leg force along the leg, N (positive pushes the body away from the foot).
export function legForce(p: usize): f64 {
  const px = load<f64>(p, 0);
  const py = load<f64>(p, 8);
  const vx = load<f64>(p, 16);
  const vy = load<f64>(p, 24);
  const r = Math.sqrt(px * px + py * py);
  const rdot = (px * vx + py * vy) / r;
  return stanceK * (stanceLeg - r) - stanceC * rdot;
}

@inline function radialRate(p: usize): f64 {
  const px = load<f64>(p, 0);
  const py = load<f64>(p, 8);
  return (px * load<f64>(p, 16) + py * load<f64>(p, 24)) / Math.sqrt(px * px + py * py);
}

// r'' from the equations of motion: (v^2 - r'^2)/r + F/m - g py / r.
function radialAcceleration(p: usize): f64 {
  const px = load<f64>(p, 0);
  const py = load<f64>(p, 8);
  const vx = load<f64>(p, 16);
  const vy = load<f64>(p, 24);
  const r = Math.sqrt(px * px + py * py);
  const rdot = (px * vx + py * vy) / r;
  const force = stanceK * (stanceLeg - r) - stanceC * rdot;
  return (vx * vx + vy * vy - rdot * rdot) / r + force / stanceMass - (stanceG * py) / r;
}

export function eventValue(ev: i32, p: usize): f64 {
  if (ev == EV_LIFTOFF) {
    if (stanceC == 0.0) return radius(p) - stanceLeg;
    return -legForce(p);
  }
  if (ev == EV_MAX_COMPRESSION) return radialRate(p);
  if (ev == EV_BODY_GROUND) return -load<f64>(p, 8);
  if (ev == EV_BACKWARD) return -load<f64>(p, 16);
  // EV_FORCE_PEAK
  return stanceK * radialRate(p) + stanceC * radialAcceleration(p);
}

// dg/dt, for Newton refinement of the events that end or split a stance.
function eventRate(ev: i32, p: usize): f64 {
  if (ev == EV_LIFTOFF) {
    if (stanceC == 0.0) return radialRate(p);
    return stanceK * radialRate(p) + stanceC * radialAcceleration(p);
  }
  if (ev == EV_MAX_COMPRESSION) return radialAcceleration(p);
  return 0.0;
}

// Does g cross in the direction that fires event ev between g0 and g1?
@inline export function crosses(ev: i32, g0: f64, g1: f64): bool {
  if (ev == EV_BACKWARD) return g0 <= 0.0 && g1 > 0.0;
  return g0 < 0.0 && g1 >= 0.0;
}

// Fraction theta in (0, 1] of the last step where g crosses zero, given the end
// values g0 < 0 <= g1 (or the EV_BACKWARD variant). Illinois method on the
// interpolant, to `tol` in theta: the events that end or split a stance are
// then polished by refine(), and the extrema recorded at the others (maximum
// compression, peak force) are second-order insensitive to the time.
export function locate(ev: i32, g0: f64, g1: f64, tol: f64): f64 {
  let a: f64 = 0.0;
  let b: f64 = 1.0;
  let ga = g0;
  let gb = g1;
  if (gb == 0.0) return 1.0;
  let side = 0;
  let theta: f64 = 1.0;
  for (let it = 0; it < 80; it++) {
    theta = (a * gb - b * ga) / (gb - ga);
    if (!(theta > a && theta < b)) theta = 0.5 * (a + b);
    dense(theta);
    const g = eventValue(ev, YI);
    const upper = ev == EV_BACKWARD ? g > 0.0 : g >= 0.0;
    if (upper) {
      b = theta;
      gb = g;
      if (side == 1) ga *= 0.5;
      side = 1;
    } else {
      a = theta;
      ga = g;
      if (side == -1) gb *= 0.5;
      side = -1;
    }
    if (b - a < tol) break;
  }
  return b;
}

// Newton polish of an event on the true solution. On entry YN (with K7 = f(YN))
// is the Runge–Kutta state at the located time: the interpolant put it there,
// so g(YN) is of the size of the interpolant's error and the Newton shift dt
// is tiny. The state is moved along the flow to second order,
// y += dt f + dt^2/2 f' (f' by the chain rule on the stance equations), whose
// error O(dt^3) is far below the stepper's. On exit YN and K7 are the polished
// state and its derivative. Returns the time shift applied.
export function refine(ev: i32, timeScale: f64): f64 {
  let shift: f64 = 0.0;
  for (let it = 0; it < 3; it++) {
    const g = eventValue(ev, YN);
    const gd = eventRate(ev, YN);
    if (gd == 0.0 || !isFinite(gd)) break;
    const dt = -g / gd;
    if (!(Math.abs(dt) > 1e-17 * timeScale)) break;
    if (Math.abs(dt) > 1e-4 * timeScale) break; // not a small correction: keep the located state
    // Second-order Taylor move: position += v dt + a dt^2/2, velocity += a dt + a' dt^2/2.
    const px = load<f64>(YN, 0);
    const py = load<f64>(YN, 8);
    const vx = load<f64>(YN, 16);
    const vy = load<f64>(YN, 24);
    const ax = load<f64>(K7, 16);
    const ay = load<f64>(K7, 24);
    // a' = d/dt (F p / (m r)) = (F' p / r + F (v / r - p r' / r^2)) / m
    const r = Math.sqrt(px * px + py * py);
    const rdot = (px * vx + py * vy) / r;
    const rddot = (vx * vx + vy * vy - rdot * rdot) / r + (px * ax + py * (ay + stanceG)) / r;
    const force = stanceK * (stanceLeg - r) - stanceC * rdot;
    const fdot = -stanceK * rdot - stanceC * rddot;
    const jx = (fdot * px / r + force * (vx / r - (px * rdot) / (r * r))) / stanceMass;
    const jy = (fdot * py / r + force * (vy / r - (py * rdot) / (r * r))) / stanceMass;
    const half = 0.5 * dt * dt;
    store<f64>(YN, px + vx * dt + ax * half, 0);
    store<f64>(YN, py + vy * dt + ay * half, 8);
    store<f64>(YN, vx + ax * dt + jx * half, 16);
    store<f64>(YN, vy + ay * dt + jy * half, 24);
    store<f64>(YN, load<f64>(YN, 32) + load<f64>(K7, 32) * dt, 32);
    rhs(YN, K7);
    shift += dt;
  }
  return shift;
}

// The event value at theta of the last step, as eventValue(ev, YI) after dense(theta) gives it,
// from only the components the event reads (dense2, dense4).
@inline function eventAt(ev: i32, theta: f64): f64 {
  if (ev == EV_MAX_COMPRESSION) {
    dense4(theta);
    const px = di0;
    const py = di1;
    return (px * di2 + py * di3) / Math.sqrt(px * px + py * py);
  }
  if (ev == EV_LIFTOFF) {
    if (stanceC == 0.0) {
      dense2(theta);
      return Math.sqrt(di0 * di0 + di1 * di1) - stanceLeg;
    }
    dense4(theta);
    const px = di0;
    const py = di1;
    const r = Math.sqrt(px * px + py * py);
    const rdot = (px * di2 + py * di3) / r;
    return -(stanceK * (stanceLeg - r) - stanceC * rdot);
  }
  if (ev == EV_BODY_GROUND) {
    dense2(theta);
    return -di1;
  }
  if (ev == EV_BACKWARD) {
    dense4(theta);
    return -di2;
  }
  dense(theta);
  return eventValue(ev, YI);
}

// locate() for the single-leg stance's events: the same iterates and result, each event
// value formed from only the interpolated components it reads. YI is not written.
export function locateStance(ev: i32, g0: f64, g1: f64, tol: f64): f64 {
  let a: f64 = 0.0;
  let b: f64 = 1.0;
  let ga = g0;
  let gb = g1;
  if (gb == 0.0) return 1.0;
  let side = 0;
  let theta: f64 = 1.0;
  for (let it = 0; it < 80; it++) {
    theta = (a * gb - b * ga) / (gb - ga);
    if (!(theta > a && theta < b)) theta = 0.5 * (a + b);
    const g = eventAt(ev, theta);
    const upper = ev == EV_BACKWARD ? g > 0.0 : g >= 0.0;
    if (upper) {
      b = theta;
      gb = g;
      if (side == 1) ga *= 0.5;
      side = 1;
    } else {
      a = theta;
      ga = g;
      if (side == -1) gb *= 0.5;
      side = -1;
    }
    if (b - a < tol) break;
  }
  return b;
}
