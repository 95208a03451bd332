// The lateral leg-spring model: a rigid body (mass m, moment of inertia I) in
// the horizontal plane, on one spring leg at a time, left and right
// alternating with no aerial phase (Schmitt & Holmes, Biol. Cybern. 83:501–515
// and 517–527, 2000). At touchdown the leg's attachment point lies on the body
// axis at d0 ahead of the centre of mass, and the foot at the rest length L0
// from it at the commanded angle to the body axis, to the left (+) or right
// (-). During stance the attachment point moves along the axis as
// d(t) = d0 + d1 t; the foot stays pinned and the leg pushes along itself with
// k (L0 - r). The stance ends when r returns to L0, and the other leg lands at
// once. The section is the left touchdown; a stride is a left and a right stance.
//
// Stance state (dimension 6): centre of mass relative to the foot (px, py), body
// angle theta, velocity (vx, vy), angular velocity omega; the right-hand side
// depends on the time since touchdown through d(t).
//
//   m a = F,  I omega' = d e x F,  F = k (L0 - r) l / r,  l = p + d e,  e = (cos theta, sin theta)
//
// Since F is parallel to l (from the foot to the attachment point), the angular
// momentum about the foot is constant in stance; with d1 = 0 the energy
// m v^2/2 + I omega^2/2 + k (L0 - r)^2/2 is too (the moving attachment point
// does work -d1 e.F otherwise).

import {
  STATUS_OK, STATUS_NO_LIFTOFF, STATUS_STEP_UNDERFLOW, STATUS_NON_FINITE, STATUS_STEP_LIMIT,
  STATUS_STALLED_FORWARD, STATUS_LEG_UNLOADED,
  LM_MASS, LM_INERTIA, LM_LEG_LENGTH, LM_STIFFNESS, LM_OFFSET, LM_OFFSET_RATE, LM_ANGLE, LM_RTOL, LM_ATOL,
  LM_MAX_STEPS, LM_SIZE,
  LI_X, LI_Y, LI_THETA, LI_VX, LI_VY, LI_OMEGA, LI_KICK_STRIDE, LI_KICK_TIME, LI_KICK_FORWARD, LI_KICK_LEFT,
  LI_KICK_ANGLE, LI_KICK_RATE, LI_MODEL, LI_SIZE,
  LR_TIME, LR_MID_TIME, LR_END_TIME, LR_PEAK_FORCE, LR_MAX_COMPRESSION, LR_ENERGY_BEFORE, LR_ENERGY_AFTER,
  LR_STEPS, LR_REJECTED, LR_STATUS, LR_KICKED, LR_LEFT_FOOT_X, LR_LEFT_FOOT_Y, LR_RIGHT_FOOT_X, LR_RIGHT_FOOT_Y,
  LR_SIZE,
  LS_STATUS, LS_STRIDES_COMPLETED, LS_TIME, LS_X, LS_Y, LS_THETA, LS_VX, LS_VY, LS_OMEGA, LS_STEPS, LS_REJECTED,
  LS_KICKED, LS_MAX_PEAK_FORCE, LS_SIZE,
  LT_TIME, LT_X, LT_Y, LT_THETA, LT_VX, LT_VY, LT_OMEGA, LT_FOOT_X, LT_FOOT_Y, LT_LEG_FORCE, LT_SIDE, LT_STRIDE,
  LT_SIZE,
} from "./layout";
import { setSystemN, startN, stepN, denseN, advanceN, locateN, Y0N, YNN, YIN } from "./rk/dopri-n";
import { acceptFactor, rejectFactor, resetController } from "./rk/dopri5";

// Event location tolerance in step fractions.
const LOCATE_TOL: f64 = 1e-12;

let mass: f64 = 1.0;
let inertia: f64 = 1.0;
let leg: f64 = 1.0;
let stiff: f64 = 1.0;
let d0: f64 = 0.0;
let d1: f64 = 0.0;

function lateralRhs(t: f64, y: usize, out: usize): void {
  const th = load<f64>(y, 16);
  const c = Math.cos(th);
  const s = Math.sin(th);
  const d = d0 + d1 * t;
  const lx = load<f64>(y, 0) + d * c;
  const ly = load<f64>(y, 8) + d * s;
  const r = Math.sqrt(lx * lx + ly * ly);
  const f = (stiff * (leg - r)) / r;
  const fx = f * lx;
  const fy = f * ly;
  store<f64>(out, load<f64>(y, 24), 0);
  store<f64>(out, load<f64>(y, 32), 8);
  store<f64>(out, load<f64>(y, 40), 16);
  store<f64>(out, fx / mass, 24);
  store<f64>(out, fy / mass, 32);
  store<f64>(out, (d * (c * fy - s * fx)) / inertia, 40);
}

// Leg length minus rest length (the liftoff event: crosses 0 upward).
function legExcess(t: f64, y: usize): f64 {
  const th = load<f64>(y, 16);
  const d = d0 + d1 * t;
  const lx = load<f64>(y, 0) + d * Math.cos(th);
  const ly = load<f64>(y, 8) + d * Math.sin(th);
  return Math.sqrt(lx * lx + ly * ly) - leg;
}

// dr/dt: the attachment point's velocity v + omega z x (d e) + d1 e along the leg.
function legRate(t: f64, y: usize): f64 {
  const th = load<f64>(y, 16);
  const c = Math.cos(th);
  const s = Math.sin(th);
  const d = d0 + d1 * t;
  const lx = load<f64>(y, 0) + d * c;
  const ly = load<f64>(y, 8) + d * s;
  const om = load<f64>(y, 40);
  const wx = load<f64>(y, 24) - om * d * s + d1 * c;
  const wy = load<f64>(y, 32) + om * d * c + d1 * s;
  return (lx * wx + ly * wy) / Math.sqrt(lx * lx + ly * ly);
}

// Minus the velocity along the body axis (the stall event: crosses 0 upward).
function backwardSpeed(t: f64, y: usize): f64 {
  const th = load<f64>(y, 16);
  return -(load<f64>(y, 24) * Math.cos(th) + load<f64>(y, 32) * Math.sin(th));
}

// --- trace --------------------------------------------------------------
let tracing: bool = false;
let traceBuf: usize = 0;
let traceCap: i32 = 0;
let traceCount: i32 = 0;
let traceDt: f64 = 0.001;
let traceNext: f64 = 0.0;
let traceFootX: f64 = 0.0;
let traceFootY: f64 = 0.0;
let traceSide: f64 = 1.0;
let traceStride: i32 = 0;

function emit(tAbs: f64, tRel: f64, y: usize): void {
  if (traceCount >= traceCap) return;
  const p = traceBuf + (<usize>traceCount * <usize>LT_SIZE << 3);
  store<f64>(p + (<usize>LT_TIME << 3), tAbs);
  store<f64>(p + (<usize>LT_X << 3), load<f64>(y, 0) + traceFootX);
  store<f64>(p + (<usize>LT_Y << 3), load<f64>(y, 8) + traceFootY);
  store<f64>(p + (<usize>LT_THETA << 3), load<f64>(y, 16));
  store<f64>(p + (<usize>LT_VX << 3), load<f64>(y, 24));
  store<f64>(p + (<usize>LT_VY << 3), load<f64>(y, 32));
  store<f64>(p + (<usize>LT_OMEGA << 3), load<f64>(y, 40));
  store<f64>(p + (<usize>LT_FOOT_X << 3), traceFootX);
  store<f64>(p + (<usize>LT_FOOT_Y << 3), traceFootY);
  store<f64>(p + (<usize>LT_LEG_FORCE << 3), -stiff * legExcess(tRel, y));
  store<f64>(p + (<usize>LT_SIDE << 3), traceSide);
  store<f64>(p + (<usize>LT_STRIDE << 3), <f64>traceStride);
  traceCount++;
}

// Regular samples inside the last step, from stance time t0 over theta in (0, upTo].
function traceStep(tStance: f64, t0: f64, h: f64, upTo: f64): void {
  const tEnd = tStance + t0 + upTo * h;
  while (traceNext < tEnd && traceCount < traceCap) {
    const theta = (traceNext - tStance - t0) / h;
    if (theta > 0.0) {
      denseN(theta);
      emit(traceNext, t0 + theta * h, YIN);
    }
    traceNext += traceDt;
  }
}

// --- stance -------------------------------------------------------------
let outDuration: f64 = 0.0;
let outPeakForce: f64 = 0.0;
let outMinR: f64 = 0.0;
let outSteps: i32 = 0;
let outRejected: i32 = 0;
let outKicked: bool = false;
let outFirstH: f64 = 0.0;

let kickForward: f64 = 0.0;
let kickLeft: f64 = 0.0;
let kickAngle: f64 = 0.0;
let kickRate: f64 = 0.0;

function applyKick(y: usize): void {
  const th = load<f64>(y, 16);
  const c = Math.cos(th);
  const s = Math.sin(th);
  store<f64>(y, load<f64>(y, 24) + kickForward * c - kickLeft * s, 24);
  store<f64>(y, load<f64>(y, 32) + kickForward * s + kickLeft * c, 32);
  store<f64>(y, th + kickAngle, 16);
  store<f64>(y, load<f64>(y, 40) + kickRate, 40);
}

// One stance from the state in Y0N (relative to the foot) at stance time 0,
// absolute time tStance. kickAt: stance time of a pending kick (< 0: none).
// On return (OK) Y0N holds the liftoff state; outDuration its stance time.
function stance(tStance: f64, kickAt: f64, rtol: f64, atol: f64, maxSteps: i32, h0: f64): i32 {
  resetController();
  startN(0.0);
  const timeScale = Math.sqrt(mass / stiff);
  const hMin = 1e-13 * timeScale;
  const tLimit = 1e4 * timeScale;
  outSteps = 0;
  outRejected = 0;
  outKicked = false;
  outPeakForce = 0.0;
  outMinR = leg + legExcess(0.0, Y0N);
  let pending = kickAt >= 0.0;
  let t: f64 = 0.0;
  let h = h0 > 0.0 ? h0 : 0.01 * timeScale;
  let afterReject = false;
  let nonFinite = 0;
  let gl0 = legExcess(0.0, Y0N);
  let gr0 = legRate(0.0, Y0N);
  let gb0 = backwardSpeed(0.0, Y0N);
  if (tracing) emit(tStance, 0.0, Y0N);

  while (true) {
    if (pending && kickAt <= t) {
      applyKick(Y0N);
      pending = false;
      outKicked = true;
      if (tracing) emit(tStance + t, t, Y0N);
      gb0 = backwardSpeed(t, Y0N);
      if (gb0 >= 0.0) return finish(STATUS_STALLED_FORWARD, t);
      gl0 = legExcess(t, Y0N);
      // A body-angle kick can carry the attachment point beyond the rest
      // length: the foot leaves at once.
      if (gl0 >= 0.0 && legRate(t, Y0N) >= 0.0) return finish(STATUS_OK, t);
      gr0 = legRate(t, Y0N);
      startN(t);
      resetController();
      afterReject = false;
    }
    if (outSteps + outRejected >= maxSteps) return finish(STATUS_STEP_LIMIT, t);
    if (t > tLimit) return finish(STATUS_NO_LIFTOFF, t);
    if (h < hMin) return finish(STATUS_STEP_UNDERFLOW, t);
    let landsOnKick = false;
    let hTry = h;
    if (pending && t + hTry >= kickAt) {
      hTry = kickAt - t;
      landsOnKick = true;
    }

    const err = stepN(t, hTry, rtol, atol);
    if (isNaN(err)) {
      outRejected++;
      if (++nonFinite > 40) return finish(STATUS_NON_FINITE, t);
      h = hTry * 0.1;
      afterReject = true;
      continue;
    }
    if (err > 1.0) {
      outRejected++;
      h = hTry * rejectFactor(err);
      afterReject = true;
      continue;
    }
    if (outSteps == 0) outFirstH = hTry;
    outSteps++;
    const tn = t + hTry;
    const gl1 = legExcess(tn, YNN);
    const gr1 = legRate(tn, YNN);
    const gb1 = backwardSpeed(tn, YNN);

    let stopTheta: f64 = 2.0;
    let stall = false;
    if (gl0 < 0.0 && gl1 >= 0.0) stopTheta = locateN(legExcess, gl0, gl1, LOCATE_TOL);
    if (gb0 < 0.0 && gb1 >= 0.0) {
      const th = locateN(backwardSpeed, gb0, gb1, LOCATE_TOL);
      if (th < stopTheta) {
        stopTheta = th;
        stall = true;
      }
    }
    // Maximum compression (r' from - to +): the peak force, located on the interpolant.
    if (gr0 < 0.0 && gr1 >= 0.0) {
      const th = locateN(legRate, gr0, gr1, LOCATE_TOL);
      if (th <= stopTheta) {
        denseN(th);
        const r = leg + legExcess(t + th * hTry, YIN);
        if (r < outMinR) outMinR = r;
      }
    }
    if (tracing) traceStep(tStance, t, hTry, stopTheta < 1.0 ? stopTheta : 1.0);

    if (stopTheta > 1.0) {
      const rn = leg + gl1;
      if (rn < outMinR) outMinR = rn;
      const hNext = hTry == h ? h * acceptFactor(err, afterReject) : h;
      t = landsOnKick ? kickAt : tn;
      advanceN();
      gl0 = gl1;
      gr0 = gr1;
      gb0 = gb1;
      h = hNext;
      afterReject = false;
      continue;
    }
    if (stall) return finish(STATUS_STALLED_FORWARD, t + stopTheta * hTry);

    // Liftoff: re-take the step to the located time on the true solution, then
    // Newton steps dt = -(r - L0) / r' taken with the stepper itself.
    let tEvent = t + stopTheta * hTry;
    stepN(t, stopTheta * hTry, rtol, atol);
    outSteps++;
    for (let it = 0; it < 3; it++) {
      const g = legExcess(tEvent, YNN);
      const gd = legRate(tEvent, YNN);
      if (!(gd > 0.0)) break;
      const dt = -g / gd;
      if (!(Math.abs(dt) > 1e-17 * timeScale) || Math.abs(dt) > 1e-4 * timeScale) break;
      advanceN();
      stepN(tEvent, dt, rtol, atol);
      tEvent += dt;
    }
    advanceN();
    for (let i = 0; i < 6; i++) {
      if (!isFinite(load<f64>(Y0N + (<usize>i << 3)))) return finish(STATUS_NON_FINITE, tEvent);
    }
    if (tracing) emit(tStance + tEvent, tEvent, Y0N);
    return finish(STATUS_OK, tEvent);
  }
}

function finish(status: i32, t: f64): i32 {
  outDuration = t;
  outPeakForce = stiff * (leg - outMinR);
  return status;
}

// --- rollout ------------------------------------------------------------
@inline function put(p: usize, i: i32, v: f64): void {
  store<f64>(p + (<usize>i << 3), v);
}
@inline function get(p: usize, i: i32): f64 {
  return load<f64>(p + (<usize>i << 3));
}

// World state between stances.
let wx: f64 = 0.0;
let wy: f64 = 0.0;
let wth: f64 = 0.0;
let wvx: f64 = 0.0;
let wvy: f64 = 0.0;
let wom: f64 = 0.0;
let wt: f64 = 0.0;

function putState(rec: usize, base: i32): void {
  put(rec, base, wt);
  put(rec, base + 1, wx);
  put(rec, base + 2, wy);
  put(rec, base + 3, wth);
  put(rec, base + 4, wvx);
  put(rec, base + 5, wvy);
  put(rec, base + 6, wom);
}

function kinetic(): f64 {
  return 0.5 * mass * (wvx * wvx + wvy * wvy) + 0.5 * inertia * wom * wom;
}

// One rollout from the input's left touchdown state; returns its status.
// records: (strides x LR_SIZE) or 0; summary: (LS_SIZE).
export function runLateralRollout(model: usize, input: usize, strides: i32, records: usize, summary: usize): i32 {
  mass = get(model, LM_MASS);
  inertia = get(model, LM_INERTIA);
  leg = get(model, LM_LEG_LENGTH);
  stiff = get(model, LM_STIFFNESS);
  d0 = get(model, LM_OFFSET);
  d1 = get(model, LM_OFFSET_RATE);
  const beta = get(model, LM_ANGLE);
  const rtol = get(model, LM_RTOL);
  const atol = get(model, LM_ATOL);
  const maxSteps = <i32>get(model, LM_MAX_STEPS);
  setSystemN(6, lateralRhs);

  wx = get(input, LI_X);
  wy = get(input, LI_Y);
  wth = get(input, LI_THETA);
  wvx = get(input, LI_VX);
  wvy = get(input, LI_VY);
  wom = get(input, LI_OMEGA);
  wt = 0.0;
  const kickStride = <i32>get(input, LI_KICK_STRIDE);
  const kickTime = get(input, LI_KICK_TIME);
  kickForward = get(input, LI_KICK_FORWARD);
  kickLeft = get(input, LI_KICK_LEFT);
  kickAngle = get(input, LI_KICK_ANGLE);
  kickRate = get(input, LI_KICK_RATE);

  if (records != 0) {
    for (let i = 0; i < strides * LR_SIZE; i++) put(records, i, NaN);
  }
  let status = STATUS_OK;
  let completed = 0;
  let steps: f64 = 0.0;
  let rejected: f64 = 0.0;
  let kicked = false;
  let maxPeak: f64 = 0.0;
  let h0: f64 = 0.0;
  put(summary, LS_TIME, wt);
  for (let s = 0; s < strides && status == STATUS_OK; s++) {
    const rec: usize = records != 0 ? records + (<usize>s * <usize>LR_SIZE << 3) : 0;
    const strideStart = wt;
    let peak: f64 = 0.0;
    let minR = leg;
    let strideSteps = 0;
    let strideRejected = 0;
    let strideKicked = false;
    if (rec != 0) {
      putState(rec, LR_TIME);
      put(rec, LR_ENERGY_BEFORE, kinetic());
    }
    for (let half = 0; half < 2 && status == STATUS_OK; half++) {
      const side: f64 = half == 0 ? 1.0 : -1.0;
      const c = Math.cos(wth);
      const sn = Math.sin(wth);
      if (wvx * c + wvy * sn <= 0.0) {
        status = STATUS_STALLED_FORWARD;
        break;
      }
      const ang = wth + side * beta;
      const ca = Math.cos(ang);
      const sa = Math.sin(ang);
      const footX = wx + d0 * c + leg * ca;
      const footY = wy + d0 * sn + leg * sa;
      // r' at touchdown: the attachment point's velocity along -(cos ang, sin ang).
      const ax = wvx - wom * d0 * sn + d1 * c;
      const ay = wvy + wom * d0 * c + d1 * sn;
      if (-(ax * ca + ay * sa) >= 0.0) {
        status = STATUS_LEG_UNLOADED;
        break;
      }
      if (rec != 0) {
        put(rec, half == 0 ? LR_LEFT_FOOT_X : LR_RIGHT_FOOT_X, footX);
        put(rec, half == 0 ? LR_LEFT_FOOT_Y : LR_RIGHT_FOOT_Y, footY);
      }
      put(Y0N, 0, wx - footX);
      put(Y0N, 1, wy - footY);
      put(Y0N, 2, wth);
      put(Y0N, 3, wvx);
      put(Y0N, 4, wvy);
      put(Y0N, 5, wom);
      // The kick's time is counted from this stride's left touchdown.
      let kickAt: f64 = -1.0;
      if (!kicked && s == kickStride) kickAt = Math.max(kickTime - (wt - strideStart), 0.0);
      traceFootX = footX;
      traceFootY = footY;
      traceSide = side;
      traceStride = s;
      const st = stance(wt, kickAt, rtol, atol, maxSteps, h0);
      h0 = outFirstH;
      strideSteps += outSteps;
      strideRejected += outRejected;
      if (outKicked) {
        kicked = true;
        strideKicked = true;
      }
      if (outMinR < minR) minR = outMinR;
      if (outPeakForce > peak) peak = outPeakForce;
      wt += outDuration;
      if (st != STATUS_OK) {
        status = st;
        break;
      }
      wx = get(Y0N, 0) + footX;
      wy = get(Y0N, 1) + footY;
      wth = get(Y0N, 2);
      wvx = get(Y0N, 3);
      wvy = get(Y0N, 4);
      wom = get(Y0N, 5);
      if (rec != 0) putState(rec, half == 0 ? LR_MID_TIME : LR_END_TIME);
    }
    steps += <f64>strideSteps;
    rejected += <f64>strideRejected;
    if (rec != 0) {
      put(rec, LR_PEAK_FORCE, peak);
      put(rec, LR_MAX_COMPRESSION, leg - minR);
      put(rec, LR_STEPS, <f64>strideSteps);
      put(rec, LR_REJECTED, <f64>strideRejected);
      put(rec, LR_STATUS, <f64>status);
      put(rec, LR_KICKED, strideKicked ? 1.0 : 0.0);
      if (status == STATUS_OK) put(rec, LR_ENERGY_AFTER, kinetic());
    }
    if (status == STATUS_OK) {
      completed++;
      if (peak > maxPeak) maxPeak = peak;
      put(summary, LS_TIME, wt);
      put(summary, LS_X, wx);
      put(summary, LS_Y, wy);
      put(summary, LS_THETA, wth);
      put(summary, LS_VX, wvx);
      put(summary, LS_VY, wvy);
      put(summary, LS_OMEGA, wom);
    }
  }
  if (completed == 0) {
    put(summary, LS_X, get(input, LI_X));
    put(summary, LS_Y, get(input, LI_Y));
    put(summary, LS_THETA, get(input, LI_THETA));
    put(summary, LS_VX, get(input, LI_VX));
    put(summary, LS_VY, get(input, LI_VY));
    put(summary, LS_OMEGA, get(input, LI_OMEGA));
  }
  put(summary, LS_STATUS, <f64>status);
  put(summary, LS_STRIDES_COMPLETED, <f64>completed);
  put(summary, LS_STEPS, steps);
  put(summary, LS_REJECTED, rejected);
  put(summary, LS_KICKED, kicked ? 1.0 : 0.0);
  put(summary, LS_MAX_PEAK_FORCE, maxPeak);
  return status;
}

// Many rollouts: inputs (rollouts x LI_SIZE), each picking its model block in
// (models x LM_SIZE) by LI_MODEL. Returns the rollouts that completed.
export function runLateralBatch(models: usize, inputs: usize, rollouts: i32, strides: i32, records: usize, summaries: usize): i32 {
  let ok = 0;
  for (let r = 0; r < rollouts; r++) {
    const input = inputs + (<usize>r * <usize>LI_SIZE << 3);
    const model = models + (<usize>(<i32>get(input, LI_MODEL)) * <usize>LM_SIZE << 3);
    const rec: usize = records != 0 ? records + (<usize>r * <usize>strides * <usize>LR_SIZE << 3) : 0;
    const sum = summaries + (<usize>r * <usize>LS_SIZE << 3);
    if (runLateralRollout(model, input, strides, rec, sum) == STATUS_OK) ok++;
  }
  return ok;
}

// One rollout with samples every dt seconds (and at each touchdown, liftoff and
// kick) into (capacity x LT_SIZE) at `samples`; returns the samples written.
export function traceLateralRollout(
  model: usize, input: usize, strides: i32, records: usize, summary: usize, samples: usize, capacity: i32, dt: f64,
): i32 {
  tracing = true;
  traceBuf = samples;
  traceCap = capacity;
  traceCount = 0;
  traceDt = dt;
  traceNext = dt;
  runLateralRollout(model, input, strides, records, summary);
  tracing = false;
  return traceCount;
}
