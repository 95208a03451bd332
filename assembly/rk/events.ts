// Stance events and their location on the stepper's interpolant.
//
// Each event is a scalar function g of the stance state [px, py, vx, vy, W]
// (foot at the origin). The stance driver evaluates g at both ends of every
// accepted step; when g changes sign in the direction that matters,
// locateStance() finds the crossing on the dense output (from the cubic through
// the end values and slopes, then secant steps safeguarded by the Illinois
// regula falsi, Dowell & Jarratt 1971); the stance driver re-takes the step to that time, and
// refine() polishes it with Newton iterations on the true solution, so that
// the event state is as accurate as the integrator and not merely as the
// interpolant.

import { dense, dense4, di0, di1, di2, di3, YI, YN, Y0, K1, K7 } from "./dopri5";
import { rhs, stanceMass, stanceInvMass, stanceLeg, stanceK, stanceC, stanceG } from "./system";

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

// Newton polish of an event on the true solution. On entry YN (with K7 = f(YN))
// is a Runge–Kutta state near the crossing: at the time the interpolant located
// (g(YN) is of the size of the interpolant's error), or the end of a step that
// ended within reach of a liftoff (stance.ts); the Newton shift dt is small.
// The state is moved along the flow to second order,
// y += dt f + dt^2/2 f' (f' by the chain rule on the stance equations), whose
// error O(dt^3) is far below the stepper's. A shift larger than `reach` (s) is not a small
// correction: the state is kept. On exit YN and K7 are the polished state and its derivative.
// Returns the time shift applied.
export function refine(ev: i32, timeScale: f64, reach: f64): f64 {
  let shift: f64 = 0.0;
  const least = 1e-17 * timeScale;
  for (let it = 0; it < 3; it++) {
    // g and dg/dt (eventValue, eventRate) and the move's terms, from one square root
    const px = load<f64>(YN, 0);
    const py = load<f64>(YN, 8);
    const vx = load<f64>(YN, 16);
    const vy = load<f64>(YN, 24);
    const r = Math.sqrt(px * px + py * py);
    const ir = 1.0 / r;
    const rdot = (px * vx + py * vy) * ir;
    const force = stanceK * (stanceLeg - r) - stanceC * rdot;
    const centripetal = (vx * vx + vy * vy - rdot * rdot) * ir;
    const rddot = centripetal + force * stanceInvMass - stanceG * py * ir; // r'' (radialAcceleration)
    let g: f64 = 0.0;
    let gd: f64 = 0.0;
    if (ev == EV_LIFTOFF) {
      if (stanceC == 0.0) {
        g = r - stanceLeg;
        gd = rdot;
      } else {
        g = -force;
        gd = stanceK * rdot + stanceC * rddot;
      }
    } else if (ev == EV_MAX_COMPRESSION) {
      g = rdot;
      gd = rddot;
    } else {
      break;
    }
    if (gd == 0.0 || !isFinite(gd)) break;
    const dt = -g / gd;
    if (!(Math.abs(dt) > least)) break;
    if (Math.abs(dt) > reach) break; // not a small correction: keep the located state
    // Second-order Taylor move: position += v dt + a dt^2/2, velocity += a dt + a' dt^2/2.
    const ax = load<f64>(K7, 16);
    const ay = load<f64>(K7, 24);
    // a' = d/dt (F p / (m r)) = (F' p / r + F (v / r - p r' / r^2)) / m
    const rddotF = centripetal + (px * ax + py * (ay + stanceG)) * ir;
    const fdot = -stanceK * rdot - stanceC * rddotF;
    const rdotr = rdot * ir;
    const jx = (fdot * px * ir + force * (vx - px * rdotr) * ir) * stanceInvMass;
    const jy = (fdot * py * ir + force * (vy - py * rdotr) * ir) * stanceInvMass;
    const half = 0.5 * dt * dt;
    store<f64>(YN, px + vx * dt + ax * half, 0);
    store<f64>(YN, py + vy * dt + ay * half, 8);
    store<f64>(YN, vx + ax * dt + jx * half, 16);
    store<f64>(YN, vy + ay * dt + jy * half, 24);
    store<f64>(YN, load<f64>(YN, 32) + load<f64>(K7, 32) * dt, 32);
    rhs(YN, K7);
    shift += dt;
    // Newton's next correction for r - L0 is about r'' dt^2 / (2 r'): below `least`, this is the last
    if (ev == EV_LIFTOFF && stanceC == 0.0 && Math.abs(rddot) * half <= least * Math.abs(rdot)) break;
  }
  return shift;
}

// Liftoff by a shortened step (the single-leg stance driver, stance.ts, and the two-leg model's
// single stance, biped.ts): `reach` (s) is the distance from a step's end to the crossing within
// which refine() takes the state to it, reachFactor(rtol) / omega (omega: the stance's fastest
// rate): the move's error, about (omega dt)^3 / 6 of the state, is then 1/100 of rtol; at most 2e-3.
let reachRtol: f64 = NaN;
let reachOfRtol: f64 = 0.0;
export function reachFactor(rtol: f64): f64 {
  // the cube root is kept for the rtol of the last stance
  if (rtol != reachRtol) {
    reachRtol = rtol;
    const f = Math.cbrt(0.06 * rtol);
    reachOfRtol = f < 2e-3 ? f : 2e-3;
  }
  return reachOfRtol;
}

// The step after an accepted step of size h, cut to end at the liftoff predicted past it: the root
// beyond the step of the cubic in theta through the step's ends (g = r - L0 at gl0, gl1; slopes
// h gm0, h gm1 with r' at gm0, gm1), by Newton's method from the tangent's root; hNext when that
// root is not before hNext, or when the step did not end short of the crossing and extending
// (gl1 < 0 < gm1) with the crossing within two steps by the tangent.
@inline export function liftoffStep(gl0: f64, gm0: f64, gl1: f64, gm1: f64, h: f64, hNext: f64): f64 {
  if (!(gl1 < 0.0 && gm1 > 0.0) || -gl1 > 2.0 * hNext * gm1) return hNext;
  // the cubic about theta = 1 + u: gl1 + d1 u + c2 u^2 / 2 + c3 u^3 / 6
  const d1 = h * gm1;
  const dg = gl0 - gl1;
  const c2 = 6.0 * dg + 2.0 * (h * gm0) + 4.0 * d1; // the cubic's second derivative at theta = 1
  const c3 = 12.0 * dg + 6.0 * (h * gm0) + 6.0 * d1; // its third
  let u = -gl1 / d1;
  for (let it = 0; it < 3; it++) {
    const p = gl1 + u * (d1 + u * (0.5 * c2 + u * (c3 / 6.0)));
    const dp = d1 + u * (c2 + u * (0.5 * c3));
    if (!(dp > 0.0)) return hNext;
    u -= p / dp;
  }
  const tau = u * h;
  return tau > 0.0 && tau < hNext ? tau : hNext;
}

// A step that ended with g = r - L0 at gl1 and r' at gm1 ended within `reach` of the liftoff
// crossing, on either side, extending.
@inline export function liftoffInReach(gl1: f64, gm1: f64, reach: f64): bool {
  return gm1 > 0.0 && Math.abs(gl1) <= reach * gm1;
}

// The event value at theta of the last step, as eventValue(ev, YI) after dense(theta) gives it,
// from only the interpolated components it needs (dense4); its time derivative at the
// interpolated state, from the equations of motion, into eventRateAt (NaN for the peak force).
let eventRateAt: f64 = NaN;
@inline function eventAt(ev: i32, theta: f64): f64 {
  if (ev == EV_FORCE_PEAK) {
    dense(theta);
    eventRateAt = NaN;
    return eventValue(ev, YI);
  }
  dense4(theta);
  const px = di0;
  const py = di1;
  const vx = di2;
  const vy = di3;
  if (ev == EV_BODY_GROUND) {
    eventRateAt = -vy;
    return -py;
  }
  const r = Math.sqrt(px * px + py * py);
  const rdot = (px * vx + py * vy) / r;
  const force = stanceK * (stanceLeg - r) - stanceC * rdot;
  if (ev == EV_BACKWARD) {
    eventRateAt = -(force * px) / (stanceMass * r);
    return -vx;
  }
  // r'' = (|v|^2 - r'^2) / r + F / m - g py / r (radialAcceleration)
  const rddot = (vx * vx + vy * vy - rdot * rdot) / r + force / stanceMass - (stanceG * py) / r;
  if (ev == EV_MAX_COMPRESSION) {
    eventRateAt = rddot;
    return rdot;
  }
  // EV_LIFTOFF
  if (stanceC == 0.0) {
    eventRateAt = rdot;
    return r - stanceLeg;
  }
  eventRateAt = stanceK * rdot + stanceC * rddot;
  return -(stanceK * (stanceLeg - r) - stanceC * rdot);
}

// dg/dt of event ev at the state at y with derivative k (K1 for Y0, K7 for YN): the slopes at
// the step's ends that start locateStance; NaN for the peak force (its slope needs r''').
export function eventSlope(ev: i32, y: usize, k: usize): f64 {
  const px = load<f64>(y, 0);
  const py = load<f64>(y, 8);
  const vx = load<f64>(y, 16);
  const vy = load<f64>(y, 24);
  if (ev == EV_BODY_GROUND) return -vy;
  if (ev == EV_BACKWARD) return -load<f64>(k, 16);
  if (ev == EV_FORCE_PEAK) return NaN;
  const r = Math.sqrt(px * px + py * py);
  const rdot = (px * vx + py * vy) / r;
  if (ev == EV_LIFTOFF && stanceC == 0.0) return rdot; // d(r - L0)/dt
  // r'' = (|v|^2 - r'^2) / r + (p . a) / r, a = the state's acceleration
  const rddot = (vx * vx + vy * vy - rdot * rdot) / r + (px * load<f64>(k, 16) + py * load<f64>(k, 24)) / r;
  if (ev == EV_MAX_COMPRESSION) return rddot;
  return stanceK * rdot + stanceC * rddot; // d(-force)/dt, damped liftoff
}

// The root in (0, 1) of the cubic Hermite interpolant of g on the step, from the end values
// g0 < 0 <= g1 and slopes d0, d1 (per unit theta): Newton's method on the cubic from the
// secant root; the secant root if the slopes are not finite or Newton leaves (0, 1). The cubic's
// slope at the returned root into hermiteSlope (the secant's without slopes), its second
// derivative there into hermiteCurvature (NaN for the secant root).
let hermiteSlope: f64 = 0.0;
let hermiteCurvature: f64 = NaN;
function hermiteRoot(g0: f64, g1: f64, d0: f64, d1: f64): f64 {
  const secant = g0 / (g0 - g1);
  hermiteSlope = g1 - g0;
  hermiteCurvature = NaN;
  if (!isFinite(d0) || !isFinite(d1)) return secant;
  let th = secant;
  if (d0 > 0.0 && d1 > 0.0) {
    const u = secant;
    const dg = g1 - g0;
    const u2 = u * u;
    const u3 = u2 * u;
    const inv = (u3 - 2.0 * u2 + u) * (dg / d0) + (3.0 * u2 - 2.0 * u3) + (u3 - u2) * (dg / d1);
    if (inv > 0.0 && inv < 1.0) th = inv;
  }
  for (let it = 0; it < 4; it++) {
    const t2 = th * th;
    const t3 = t2 * th;
    const p = (2.0 * t3 - 3.0 * t2 + 1.0) * g0 + (t3 - 2.0 * t2 + th) * d0 + (3.0 * t2 - 2.0 * t3) * g1 + (t3 - t2) * d1;
    const dp = (6.0 * t2 - 6.0 * th) * (g0 - g1) + (3.0 * t2 - 4.0 * th + 1.0) * d0 + (3.0 * t2 - 2.0 * th) * d1;
    if (!(dp != 0.0)) break;
    const dth = p / dp;
    th -= dth;
    if (!(th > 0.0 && th < 1.0)) break;
    hermiteSlope = dp;
    if (it == 3 || Math.abs(dth) <= 1e-4) {
      hermiteCurvature = (12.0 * th - 6.0) * (g0 - g1) + (6.0 * th - 4.0) * d0 + (6.0 * th - 2.0) * d1;
      return th;
    }
  }
  hermiteSlope = g1 - g0;
  return secant;
}

// Fraction theta in (0, 1] of the last step (size h, from Y0 with K1 to YN with K7) where event
// ev crosses zero, given the end values g0 < 0 <= g1 (or the EV_BACKWARD variant), to `tol` in
// theta: the upper end of a bracket narrower than tol, or an estimate whose next correction is
// below a quarter of tol (or, from the cubic's root, whose Newton step's own error, estimated from
// the cubic's curvature, is), on either side of the crossing (the events that end or split a stance
// are then polished by refine(), and the extrema recorded at the others, maximum compression and
// peak force, are second-order insensitive to the time). Each event value is formed from only the
// interpolated components it reads; YI is not written. It starts at the root of the cubic through
// the end values and slopes, then takes Newton steps with the event's rate at the interpolated
// state (secant steps through the last two values for the peak force), each aimed a quarter of
// tol past its estimate so that the root is soon bracketed within tol, and takes the Illinois step when a secant step would leave the
// bracket. One value of the interpolant often does (the first Newton step is then final), two
// otherwise.
export function locateStance(ev: i32, g0: f64, g1: f64, h: f64, tol: f64): f64 {
  let a: f64 = 0.0;
  let b: f64 = 1.0;
  let ga = g0;
  let gb = g1;
  if (gb == 0.0) return 1.0;
  let side = 0;
  let theta = hermiteRoot(g0, g1, h * eventSlope(ev, Y0, K1), h * eventSlope(ev, YN, K7));
  if (!(theta > 0.0 && theta < 1.0)) theta = 0.5;
  let prevTheta: f64 = NaN;
  let prevG: f64 = NaN;
  let slope = hermiteSlope; // for the first correction: the cubic's
  for (let it = 0; it < 80; it++) {
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
    // Newton's step on the interpolant where the event's rate is known, else the secant's
    if (eventRateAt == eventRateAt) slope = h * eventRateAt;
    else if (prevTheta == prevTheta) slope = g != prevG ? (g - prevG) / (theta - prevTheta) : NaN;
    const shift = -g / slope;
    let next = theta + shift;
    // The corrected estimate is final, inside the bracket, when the correction is so small that it
    // leaves the estimate within a fraction of tol of the crossing; or, from the cubic's root, when
    // Newton's step with the event's true rate is itself off by less: about |g'' / (2 g')| shift^2,
    // g'' from the cubic, taken four times over, below a quarter of tol (one interpolant value).
    if (next > a && next < b &&
      (Math.abs(shift) <= 0.25 * tol ||
        (it == 0 && eventRateAt == eventRateAt && 2.0 * Math.abs(hermiteCurvature) * shift * shift <= 0.25 * tol * Math.abs(slope)))) return next;
    next += shift > 0.0 ? 0.25 * tol : -0.25 * tol;
    prevTheta = theta;
    prevG = g;
    if (!(next > a && next < b)) {
      next = (a * gb - b * ga) / (gb - ga);
      if (!(next > a && next < b)) next = 0.5 * (a + b);
    }
    theta = next;
  }
  return b;
}
