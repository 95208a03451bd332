// Stance phase: foot pinned, adaptive Dormand–Prince integration from touchdown
// to liftoff, with maximum compression (and the stiffness switch of a split
// schedule) and the failure events located on the interpolant.
//
// Inputs are the touchdown state relative to the foot. A stance's whole state
// (its inputs, the loop's variables, its results) lives in a Stance block, so
// that two rollouts can take turns: the batch driver (rollout.ts) steps two
// stances at once with stepPair (rk/dopri5x2.ts) and runs everything else, one
// stance after the other, through the same functions as the one-rollout path.
// No allocation, no abort.

import {
  STATUS_OK, STATUS_BODY_HIT_GROUND, STATUS_FELL_BACKWARD, STATUS_NO_LIFTOFF,
  STATUS_STEP_UNDERFLOW, STATUS_NON_FINITE, STATUS_STEP_LIMIT,
} from "./layout";
import {
  step, dense, acceptFactor, rejectFactor, resetController, advance, setErrorDimension, Y0, K1, YN, YI,
  DEFAULT_BUFFERS, BUFFER_SET_BYTES, useBuffers, getLastH, setLastH, getErrOld, setErrOld,
  getErrorDimension, setErrorDimensionValue, dense2, di0, di1, controllerMemory, OFF_Y0, OFF_K1, OFF_K7, OFF_YN,
} from "./rk/dopri5";
import { rhs, setStance, setStiffness, setStanceParams } from "./rk/system";
import { stepPair, stepQuad, laneEnd, END_FORCE, END_RADIUS, END_RATE, END_FRICTION, END_FACTOR } from "./rk/dopri5x2";
import {
  EV_LIFTOFF, EV_MAX_COMPRESSION, EV_BODY_GROUND, EV_BACKWARD, EV_FORCE_PEAK,
  eventValue, crosses, locateStance, refine, legForce, reachFactor, liftoffStep, liftoffInReach,
} from "./rk/events";
import { tracing, traceStance } from "./trace";

// Event location tolerance in step fractions (see locateStance()).
const LOCATE_TOL: f64 = 1e-9;

// One stance: inputs, loop state and results. The stepper's buffers are the set at `bufs`.
@unmanaged export class Stance {
  bufs: usize = 0;
  // saved stepper state while another stance runs (see useStance)
  lastH: f64 = 0.0;
  errOld: f64 = 0.0;
  errDim: f64 = 0.0;
  // parameters
  mass: f64 = 0.0;
  invMass: f64 = 0.0;
  leg: f64 = 0.0;
  k: f64 = 0.0; // current stiffness
  kc: f64 = 0.0;
  ke: f64 = 0.0;
  c: f64 = 0.0;
  g: f64 = 0.0;
  rtol: f64 = 0.0;
  atol: f64 = 0.0;
  timeScale: f64 = 0.0;
  reach: f64 = 0.0; // s: a liftoff this close to a step's end is polished there (liftoffInReach)
  tLimit: f64 = 0.0;
  hMin: f64 = 0.0;
  maxSteps: i32 = 0;
  split: bool = false;
  damped: bool = false;
  // loop state
  compressing: bool = false;
  afterReject: bool = false;
  nonFinite: i32 = 0;
  t: f64 = 0.0;
  h: f64 = 0.0;
  gl0: f64 = 0.0;
  gm0: f64 = 0.0;
  gg0: f64 = 0.0;
  gb0: f64 = 0.0;
  gf0: f64 = 0.0;
  pending: i32 = -1; // an event whose step is this lane's next one (stanceAfterStep), or -1
  hNext: f64 = 0.0; // the step after it
  tEvent: f64 = 0.0; // time at its end, before the Newton polish
  // results
  contact: f64 = 0.0; // s, touchdown to liftoff (or to the failure)
  px: f64 = 0.0; // liftoff state relative to the foot
  py: f64 = 0.0;
  vx: f64 = 0.0;
  vy: f64 = 0.0;
  maxCompression: f64 = 0.0; // m
  maxCompressionTime: f64 = 0.0; // s after touchdown
  peakForce: f64 = 0.0; // N
  peakFriction: f64 = 0.0; // |Fx/Fy| = |px/py|
  dissipated: f64 = 0.0; // J
  liftoffForce: f64 = 0.0; // N
  steps: i32 = 0;
  rejected: i32 = 0;
  firstH: f64 = 0.0; // the first accepted step: a good start for the next stance
}

// Stances stepped together at most (rollout.ts).
export const MAX_LANES = 4;
const STANCE_BYTES: usize = 512; // >= offsetof<Stance>() (checked in initStances)
const STANCE_BLOCKS: usize = memory.data(512 * MAX_LANES, 16);
const LANE_BUFFERS: usize = memory.data(<i32>BUFFER_SET_BYTES * (MAX_LANES - 1), 16);

// Stance block of lane i. Lane 0 runs on the default buffers (the one-rollout path and the
// biped share them), the others each on their own.
@inline export function laneStance(i: i32): Stance {
  return changetype<Stance>(STANCE_BLOCKS + <usize>i * STANCE_BYTES);
}
export const STANCE0: Stance = changetype<Stance>(STANCE_BLOCKS);

// The stance whose buffers, controller memory and parameters the stepper holds now (0: none).
let current: usize = 0;

function initStances(): void {
  if (offsetof<Stance>() > STANCE_BYTES) unreachable();
  STANCE0.bufs = DEFAULT_BUFFERS;
  for (let i = 1; i < MAX_LANES; i++) laneStance(i).bufs = LANE_BUFFERS + <usize>(i - 1) * BUFFER_SET_BYTES;
}
initStances();

// Keep the stepper's state of the current stance in its block; after this the stepper holds none.
export function releaseStance(): void {
  if (current != 0) {
    const s = changetype<Stance>(current);
    s.lastH = getLastH();
    s.errOld = getErrOld();
    current = 0;
  }
  useBuffers(DEFAULT_BUFFERS);
}

// Give the stepper (buffers, controller, right-hand side) to stance s.
export function useStance(s: Stance): void {
  const p = changetype<usize>(s);
  if (current == p) return;
  releaseStance();
  useBuffers(s.bufs);
  setLastH(s.lastH);
  setErrOld(s.errOld);
  setErrorDimensionValue(s.errDim);
  setStanceParams(s.mass, s.invMass, s.leg, s.k, s.c, s.g);
  current = p;
}

@inline function frictionRatio(p: usize): f64 {
  const py = load<f64>(p, 8);
  return Math.abs(load<f64>(p, 0) / py);
}

// Record what the located maximum compression tells us, from the position (px, py) there.
function noteMaxCompression(s: Stance, px: f64, py: f64, t: f64): void {
  const delta = s.leg - Math.sqrt(px * px + py * py);
  s.maxCompression = delta;
  s.maxCompressionTime = t;
  // Undamped, the force peaks here; a split schedule jumps from kc*delta to ke*delta.
  const f = (s.kc > s.ke ? s.kc : s.ke) * delta;
  if (f > s.peakForce) s.peakForce = f;
}

// Liftoff without damping, after maximum compression, is reached by a shortened step instead of
// being located inside a longer one and the step re-taken to it (one step and one location fewer
// a stance). towardLiftoff() cuts the next step to end at the liftoff that the cubic through the
// last step's ends (g = r - L0 and its rate r' at both) predicts past it; when a step ends within
// `reach` of the crossing, on either side (liftoffInReach), refine() takes the state there by
// Newton's method on the true solution. Its moves are second-order Taylor steps, off by about
// (omega dt)^3 / 6 of the state for a move dt (omega: the stance's fastest rate): `reach` is the
// dt where that is 1/100 of rtol, at most 2e-3 / omega. A prediction that misses by more leaves
// the crossing to the usual location and re-taken step, or to the step after.

// The step after an accepted step of size h that ended with g = r - L0 at gl1 and r' at gm1 (the
// step began at s.gl0, s.gm0): hNext, or shorter so as to end at the liftoff predicted by the
// cubic through both ends, extrapolated past the step (liftoffStep, events.ts).
@inline function towardLiftoff(s: Stance, gl1: f64, gm1: f64, h: f64, hNext: f64): f64 {
  return s.damped || s.compressing ? hNext : liftoffStep(s.gl0, s.gm0, gl1, gm1, h, hNext);
}

// The step just taken ended within reach of the liftoff crossing (undamped, with the maximum
// compression behind it at the step's start).
@inline function inReach(s: Stance, gl1: f64, gm1: f64): bool {
  return !s.damped && !s.compressing && liftoffInReach(gl1, gm1, s.reach);
}

// Start stance s (which must hold the stepper: useStance) from the touchdown state.
export function stanceStart(
  s: Stance,
  px: f64, py: f64, vx: f64, vy: f64,
  mass: f64, leg: f64, kc: f64, ke: f64, c: f64, g: f64,
  split: bool, rtol: f64, atol: f64, maxSteps: i32, h0: f64,
): void {
  setStance(mass, leg, kc, c, g);
  resetController();
  setErrorDimension(c > 0.0 ? 5 : 4); // undamped, the work component stays 0: keep it out of the norm
  s.mass = mass;
  s.invMass = 1.0 / mass;
  s.leg = leg;
  s.k = kc;
  s.kc = kc;
  s.ke = ke;
  s.c = c;
  s.g = g;
  s.split = split;
  s.rtol = rtol;
  s.atol = atol;
  s.maxSteps = maxSteps;
  s.errDim = getErrorDimension();
  store<f64>(Y0, px, 0);
  store<f64>(Y0, py, 8);
  store<f64>(Y0, vx, 16);
  store<f64>(Y0, vy, 24);
  store<f64>(Y0, 0.0, 32);
  rhs(Y0, K1);

  const kMin = kc < ke ? kc : ke;
  const timeScale = Math.sqrt(mass / kMin); // 1/omega of the stiffer-or-softer spring
  s.timeScale = timeScale;
  s.reach = (kc == ke ? timeScale : Math.sqrt(mass / (kc > ke ? kc : ke))) * reachFactor(rtol);
  s.tLimit = 20.0 * Math.PI * timeScale; // far beyond any stance that ends
  s.hMin = 1e-13 * timeScale;
  const damped = c > 0.0;
  s.damped = damped;

  s.steps = 0;
  s.rejected = 0;
  s.maxCompression = 0.0;
  s.maxCompressionTime = NaN;
  s.peakForce = legForce(Y0);
  s.peakFriction = frictionRatio(Y0);
  s.dissipated = 0.0;
  s.liftoffForce = 0.0;

  s.compressing = true;
  s.t = 0.0;
  s.h = h0;
  s.afterReject = false;
  s.nonFinite = 0;
  s.pending = -1;
  s.gl0 = eventValue(EV_LIFTOFF, Y0);
  s.gm0 = eventValue(EV_MAX_COMPRESSION, Y0);
  s.gg0 = eventValue(EV_BODY_GROUND, Y0);
  s.gb0 = eventValue(EV_BACKWARD, Y0);
  s.gf0 = damped ? eventValue(EV_FORCE_PEAK, Y0) : 0.0;
}

// Before each step: the stance's end by a limit (a status), or -1 to take the step s.h.
@inline export function stanceBeforeStep(s: Stance): i32 {
  if (s.pending >= 0) return -1; // the step to a located event is taken whatever the limits
  if (s.steps + s.rejected >= s.maxSteps) return finish(s, STATUS_STEP_LIMIT, s.t);
  if (s.t > s.tLimit) return finish(s, STATUS_NO_LIFTOFF, s.t);
  if (s.h < s.hMin) return finish(s, STATUS_STEP_UNDERFLOW, s.t);
  return -1;
}

// After the step of size s.h with error estimate err (stance s holds the stepper): accept or
// reject it, locate the events in it; the stance's end (a status), or -1 to go on.
export function stanceAfterStep(s: Stance, err: f64, deferEventStep: bool): i32 {
  const h = s.h;
  if (isNaN(err)) {
    // A step so long that the state blew up: shrink hard and retry.
    s.rejected++;
    if (++s.nonFinite > 40) return finish(s, STATUS_NON_FINITE, s.t);
    s.h = h * 0.1;
    s.afterReject = true;
    return -1;
  }
  if (err > 1.0) {
    s.rejected++;
    s.h = h * rejectFactor(err);
    s.afterReject = true;
    return -1;
  }
  if (s.steps == 0) s.firstH = h;
  s.steps++;
  const t = s.t;
  const leg = s.leg;
  const damped = s.damped;
  const split = s.split;

  // Event functions at the step end, from one square root (see events.ts).
  const npx = load<f64>(YN, 0);
  const npy = load<f64>(YN, 8);
  const nvx = load<f64>(YN, 16);
  const nr = Math.sqrt(npx * npx + npy * npy);
  const nrdot = (npx * nvx + npy * load<f64>(YN, 24)) / nr;
  const nforce = s.k * (leg - nr) - s.c * nrdot;
  const gl1 = damped ? -nforce : nr - leg;
  const gm1 = nrdot;
  const gg1 = -npy;
  const gb1 = -nvx;
  const reached = inReach(s, gl1, gm1);

  // Earliest event that stops or splits the stance in this step.
  let stopTheta: f64 = 2.0;
  let stopEvent = -1;
  let maxTheta: f64 = 2.0;
  if (s.compressing && crosses(EV_MAX_COMPRESSION, s.gm0, gm1)) {
    maxTheta = locateStance(EV_MAX_COMPRESSION, s.gm0, gm1, h, LOCATE_TOL);
    if (split) {
      stopTheta = maxTheta;
      stopEvent = EV_MAX_COMPRESSION;
    }
  }
  if (reached) {
    // at the step's end, polished there (no location, no re-taken step)
    if (1.0 < stopTheta) { stopTheta = 1.0; stopEvent = EV_LIFTOFF; }
  } else if (crosses(EV_LIFTOFF, s.gl0, gl1)) {
    const th = locateStance(EV_LIFTOFF, s.gl0, gl1, h, LOCATE_TOL);
    if (th < stopTheta) { stopTheta = th; stopEvent = EV_LIFTOFF; }
  }
  if (crosses(EV_BODY_GROUND, s.gg0, gg1)) {
    const th = locateStance(EV_BODY_GROUND, s.gg0, gg1, h, LOCATE_TOL);
    if (th < stopTheta) { stopTheta = th; stopEvent = EV_BODY_GROUND; }
  }
  if (crosses(EV_BACKWARD, s.gb0, gb1)) {
    const th = locateStance(EV_BACKWARD, s.gb0, gb1, h, LOCATE_TOL);
    if (th < stopTheta) { stopTheta = th; stopEvent = EV_BACKWARD; }
  }
  // Record-only events before the stop.
  if (!split && maxTheta <= stopTheta && maxTheta <= 1.0) {
    dense2(maxTheta); // dense(), the position only
    noteMaxCompression(s, di0, di1, t + maxTheta * h);
    s.compressing = false;
  }
  if (damped) {
    const gf1 = eventValue(EV_FORCE_PEAK, YN);
    if (crosses(EV_FORCE_PEAK, s.gf0, gf1)) {
      const th = locateStance(EV_FORCE_PEAK, s.gf0, gf1, h, LOCATE_TOL);
      if (th <= stopTheta) {
        dense(th);
        const f = legForce(YI);
        if (f > s.peakForce) s.peakForce = f;
      }
    }
    s.gf0 = gf1;
  }
  if (tracing) traceStance(t, h, stopTheta < 1.0 ? stopTheta : 1.0);

  if (stopEvent < 0) {
    // Plain accepted step.
    if (nforce > s.peakForce) s.peakForce = nforce;
    const fr = Math.abs(npx / npy);
    if (fr > s.peakFriction) s.peakFriction = fr;
    s.t = t + h;
    advance();
    s.h = towardLiftoff(s, gl1, gm1, h, h * acceptFactor(err, s.afterReject));
    s.gl0 = gl1;
    s.gm0 = gm1;
    s.gg0 = gg1;
    s.gb0 = gb1;
    s.afterReject = false;
    return -1;
  }

  if (stopEvent == EV_BODY_GROUND) return finish(s, STATUS_BODY_HIT_GROUND, t + stopTheta * h);
  if (stopEvent == EV_BACKWARD) return finish(s, STATUS_FELL_BACKWARD, t + stopTheta * h);

  if (reached && stopEvent == EV_LIFTOFF) {
    // the step's end, short of the crossing or past it, is a state of the stance
    if (nforce > s.peakForce) s.peakForce = nforce;
    const fr = Math.abs(npx / npy);
    if (fr > s.peakFriction) s.peakFriction = fr;
    return eventReached(s, EV_LIFTOFF, t + h, 0.0, false);
  }

  // Liftoff or the stiffness switch: re-take the step to the located time on
  // the true solution, then polish with Newton.
  const hNext = h * acceptFactor(err, s.afterReject);
  const hEvent = stopTheta * h;
  if (deferEventStep) {
    // the lane's next step (stepTwo/stepFour) is this one; stanceAfterEventStep goes on from there
    s.pending = stopEvent;
    s.hNext = hNext;
    s.tEvent = t + hEvent;
    s.h = hEvent;
    return -1;
  }
  step(hEvent, s.rtol, s.atol);
  return eventReached(s, stopEvent, t + hEvent, hNext, true);
}

// After the step to a located liftoff or stiffness switch taken in a lane (stanceAfterStep with
// deferEventStep; stance s holds the stepper again): what stanceAfterStep does after step(hEvent).
export function stanceAfterEventStep(s: Stance): i32 {
  const ev = s.pending;
  s.pending = -1;
  return eventReached(s, ev, s.tEvent, s.hNext, true);
}

// The step to a located liftoff or stiffness switch has been taken (YN, K7); polish the event
// with Newton, then switch the stiffness or end the stance.
function eventReached(s: Stance, stopEvent: i32, tStep: f64, hNext: f64, retaken: bool): i32 {
  const damped = s.damped;
  if (retaken) s.steps++;
  let tEvent = tStep;
  // from a re-taken step the shift is of the interpolant's error; from a step's end in reach, up to the reach
  tEvent += refine(stopEvent, s.timeScale, retaken ? 1e-4 * s.timeScale : 2.0 * s.reach);

  if (stopEvent == EV_MAX_COMPRESSION) {
    noteMaxCompression(s, load<f64>(YN, 0), load<f64>(YN, 8), tEvent);
    s.compressing = false;
    setStiffness(s.ke);
    s.k = s.ke;
    memory.copy(Y0, YN, 40);
    rhs(Y0, K1); // the right-hand side changed: no FSAL across the switch
    s.t = tEvent;
    s.gl0 = eventValue(EV_LIFTOFF, Y0);
    s.gm0 = eventValue(EV_MAX_COMPRESSION, Y0); // r' at the switch (towardLiftoff reads it)
    s.gg0 = eventValue(EV_BODY_GROUND, Y0);
    s.gb0 = eventValue(EV_BACKWARD, Y0);
    if (damped) s.gf0 = eventValue(EV_FORCE_PEAK, Y0);
    s.h = hNext;
    s.afterReject = false;
    return -1;
  }

  // Liftoff.
  const fr = frictionRatio(YN);
  if (fr > s.peakFriction) s.peakFriction = fr;
  s.liftoffForce = damped ? legForce(YN) : 0.0;
  s.px = load<f64>(YN, 0);
  s.py = load<f64>(YN, 8);
  s.vx = load<f64>(YN, 16);
  s.vy = load<f64>(YN, 24);
  s.dissipated = load<f64>(YN, 32);
  if (!isFinite(s.px) || !isFinite(s.py) || !isFinite(s.vx) || !isFinite(s.vy)) {
    return finish(s, STATUS_NON_FINITE, tEvent);
  }
  return finish(s, STATUS_OK, tEvent);
}

// stanceAfterStep for the stance in lane `lane` of the last stepTwo/stepFour (it does not hold
// the stepper), in the common cases: a rejected step, or an accepted one with no event in it,
// undamped and not traced; the same state changes, made on the stance's own buffers and
// controller memory, from the step-end quantities and step factor that the lane step formed
// with this function's arithmetic (laneEnd). -2 (nothing changed) for the other cases: then
// useStance and stanceAfterStep.
export function stanceAfterLaneStep(s: Stance, err: f64, lane: i32): i32 {
  if (s.pending >= 0 || s.damped || tracing || current == changetype<usize>(s)) return -2;
  const h = s.h;
  if (isNaN(err)) {
    s.rejected++;
    if (++s.nonFinite > 40) return finish(s, STATUS_NON_FINITE, s.t);
    s.h = h * 0.1;
    s.afterReject = true;
    return -1;
  }
  if (err > 1.0) {
    s.rejected++;
    s.h = h * rejectFactor(err);
    s.afterReject = true;
    return -1;
  }
  const b = s.bufs;
  // As in stanceAfterStep: r = sqrt(px^2 + py^2), r' = (px vx + py vy) / r, force k (L0 - r) - c r'.
  const gl1 = laneEnd(lane, END_RADIUS);
  const gm1 = laneEnd(lane, END_RATE);
  const gg1 = -load<f64>(b + OFF_YN, 8);
  const gb1 = -load<f64>(b + OFF_YN, 16);
  if (s.compressing && crosses(EV_MAX_COMPRESSION, s.gm0, gm1)) return -2;
  if (crosses(EV_LIFTOFF, s.gl0, gl1) || crosses(EV_BODY_GROUND, s.gg0, gg1) || crosses(EV_BACKWARD, s.gb0, gb1)) return -2;
  if (inReach(s, gl1, gm1)) return -2;
  if (s.steps == 0) s.firstH = h;
  s.steps++;
  const nforce = laneEnd(lane, END_FORCE);
  if (nforce > s.peakForce) s.peakForce = nforce;
  const fr = laneEnd(lane, END_FRICTION);
  if (fr > s.peakFriction) s.peakFriction = fr;
  s.t = s.t + h;
  // advance(): Y0 <- YN, K1 <- K7
  v128.store(b + OFF_Y0, v128.load(b + OFF_YN));
  v128.store(b + OFF_Y0 + 16, v128.load(b + OFF_YN + 16));
  store<f64>(b + OFF_Y0 + 32, load<f64>(b + OFF_YN + 32));
  v128.store(b + OFF_K1, v128.load(b + OFF_K7));
  v128.store(b + OFF_K1 + 16, v128.load(b + OFF_K7 + 16));
  store<f64>(b + OFF_K1 + 32, load<f64>(b + OFF_K7 + 32));
  s.h = towardLiftoff(s, gl1, gm1, h, h * laneEnd(lane, END_FACTOR)); // acceptFactor(err, s.afterReject) with s.errOld
  s.gl0 = gl1;
  s.gm0 = gm1;
  s.gg0 = gg1;
  s.gb0 = gb1;
  s.errOld = controllerMemory(err);
  s.afterReject = false;
  return -1;
}

function finish(s: Stance, status: i32, t: f64): i32 {
  s.contact = t;
  return status;
}

// Stance s, started, to its end, one step at a time; returns its status.
export function stanceRun(s: Stance): i32 {
  while (true) {
    let r = stanceBeforeStep(s);
    if (r >= 0) return r;
    useStance(s);
    r = stanceAfterStep(s, step(s.h, s.rtol, s.atol), false);
    if (r >= 0) return r;
  }
}

// One step of each of two started stances at once (both must be before their step:
// stanceBeforeStep gave -1): the same arithmetic as step() in each lane. The error estimates
// are then laneErr0 and laneErr1 (rk/dopri5x2.ts).
export function stepTwo(a: Stance, b: Stance): void {
  // the stepper's state of the current stance into its block, the new step sizes into each
  releaseStance();
  stepPair(a, b);
  a.lastH = a.h;
  b.lastH = b.h;
}

// stepTwo for four stances; the error estimates are then laneErr0..laneErr3.
export function stepFour(a: Stance, b: Stance, c: Stance, d: Stance): void {
  releaseStance();
  stepQuad(a, b, c, d);
  a.lastH = a.h;
  b.lastH = b.h;
  c.lastH = c.h;
  d.lastH = d.h;
}

// A whole stance on the default buffers (the one-rollout path): the results are in STANCE0.
export function runStance(
  px: f64, py: f64, vx: f64, vy: f64,
  mass: f64, leg: f64, kc: f64, ke: f64, c: f64, g: f64,
  split: bool, rtol: f64, atol: f64, maxSteps: i32, h0: f64,
): i32 {
  const s = STANCE0;
  useStance(s);
  stanceStart(s, px, py, vx, vy, mass, leg, kc, ke, c, g, split, rtol, atol, maxSteps, h0);
  return stanceRun(s);
}
