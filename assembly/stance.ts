// Stance phase: foot pinned, adaptive Dormand–Prince integration from touchdown
// to liftoff, with maximum compression (and the stiffness switch of a split
// schedule) and the failure events located on the interpolant.
//
// Inputs are the touchdown state relative to the foot; results are left in the
// exported `out*` variables for the rollout to read (no allocation, no abort).

import {
  STATUS_OK, STATUS_BODY_HIT_GROUND, STATUS_FELL_BACKWARD, STATUS_NO_LIFTOFF,
  STATUS_STEP_UNDERFLOW, STATUS_NON_FINITE, STATUS_STEP_LIMIT,
} from "./layout";
import { step, dense, acceptFactor, rejectFactor, resetController, advance, setErrorDimension, Y0, K1, YN, YI } from "./rk/dopri5";
import { rhs, setStance, setStiffness } from "./rk/system";
import {
  EV_LIFTOFF, EV_MAX_COMPRESSION, EV_BODY_GROUND, EV_BACKWARD, EV_FORCE_PEAK,
  eventValue, crosses, locate, refine, legForce,
} from "./rk/events";
import { tracing, traceStance } from "./trace";

// Event location tolerance in step fractions (see locate()).
const LOCATE_TOL: f64 = 1e-9;

export let outContact: f64 = 0.0; // s, touchdown to liftoff (or to the failure)
export let outPx: f64 = 0.0; // liftoff state relative to the foot
export let outPy: f64 = 0.0;
export let outVx: f64 = 0.0;
export let outVy: f64 = 0.0;
export let outMaxCompression: f64 = 0.0; // m
export let outMaxCompressionTime: f64 = 0.0; // s after touchdown
export let outPeakForce: f64 = 0.0; // N
export let outPeakFriction: f64 = 0.0; // |Fx/Fy| = |px/py|
export let outDissipated: f64 = 0.0; // J
export let outLiftoffForce: f64 = 0.0; // N
export let outSteps: i32 = 0;
export let outRejected: i32 = 0;
export let outFirstH: f64 = 0.0; // the first accepted step: a good start for the next stance

@inline function frictionRatio(p: usize): f64 {
  const py = load<f64>(p, 8);
  return Math.abs(load<f64>(p, 0) / py);
}

// Record what the located maximum compression tells us, from the state at p.
function noteMaxCompression(p: usize, t: f64, leg: f64, kc: f64, ke: f64): void {
  const px = load<f64>(p, 0);
  const py = load<f64>(p, 8);
  const delta = leg - Math.sqrt(px * px + py * py);
  outMaxCompression = delta;
  outMaxCompressionTime = t;
  // Undamped, the force peaks here; a split schedule jumps from kc*delta to ke*delta.
  const f = (kc > ke ? kc : ke) * delta;
  if (f > outPeakForce) outPeakForce = f;
}

export function runStance(
  px: f64, py: f64, vx: f64, vy: f64,
  mass: f64, leg: f64, kc: f64, ke: f64, c: f64, g: f64,
  split: bool, rtol: f64, atol: f64, maxSteps: i32, h0: f64,
): i32 {
  setStance(mass, leg, kc, c, g);
  resetController();
  setErrorDimension(c > 0.0 ? 5 : 4); // undamped, the work component stays 0: keep it out of the norm
  store<f64>(Y0, px, 0);
  store<f64>(Y0, py, 8);
  store<f64>(Y0, vx, 16);
  store<f64>(Y0, vy, 24);
  store<f64>(Y0, 0.0, 32);
  rhs(Y0, K1);

  const kMin = kc < ke ? kc : ke;
  const timeScale = Math.sqrt(mass / kMin); // 1/omega of the stiffer-or-softer spring
  const tLimit = 20.0 * Math.PI * timeScale; // far beyond any stance that ends
  const hMin = 1e-13 * timeScale;
  const damped = c > 0.0;

  outSteps = 0;
  outRejected = 0;
  outMaxCompression = 0.0;
  outMaxCompressionTime = NaN;
  outPeakForce = legForce(Y0);
  outPeakFriction = frictionRatio(Y0);
  outDissipated = 0.0;
  outLiftoffForce = 0.0;

  let compressing = true;
  let kCurrent = kc;
  let t: f64 = 0.0;
  let h = h0;
  let afterReject = false;
  let nonFinite = 0;
  let gl0 = eventValue(EV_LIFTOFF, Y0);
  let gm0 = eventValue(EV_MAX_COMPRESSION, Y0);
  let gg0 = eventValue(EV_BODY_GROUND, Y0);
  let gb0 = eventValue(EV_BACKWARD, Y0);
  let gf0 = damped ? eventValue(EV_FORCE_PEAK, Y0) : 0.0;

  while (true) {
    if (outSteps + outRejected >= maxSteps) return finish(STATUS_STEP_LIMIT, t);
    if (t > tLimit) return finish(STATUS_NO_LIFTOFF, t);
    if (h < hMin) return finish(STATUS_STEP_UNDERFLOW, t);

    const err = step(h, rtol, atol);
    if (isNaN(err)) {
      // A step so long that the state blew up: shrink hard and retry.
      outRejected++;
      if (++nonFinite > 40) return finish(STATUS_NON_FINITE, t);
      h *= 0.1;
      afterReject = true;
      continue;
    }
    if (err > 1.0) {
      outRejected++;
      h *= rejectFactor(err);
      afterReject = true;
      continue;
    }
    if (outSteps == 0) outFirstH = h;
    outSteps++;

    // Event functions at the step end, from one square root (see events.ts).
    const npx = load<f64>(YN, 0);
    const npy = load<f64>(YN, 8);
    const nvx = load<f64>(YN, 16);
    const nr = Math.sqrt(npx * npx + npy * npy);
    const nrdot = (npx * nvx + npy * load<f64>(YN, 24)) / nr;
    const nforce = kCurrent * (leg - nr) - c * nrdot;
    const gl1 = damped ? -nforce : nr - leg;
    const gm1 = nrdot;
    const gg1 = -npy;
    const gb1 = -nvx;

    // Earliest event that stops or splits the stance in this step.
    let stopTheta: f64 = 2.0;
    let stopEvent = -1;
    let maxTheta: f64 = 2.0;
    if (compressing && crosses(EV_MAX_COMPRESSION, gm0, gm1)) {
      maxTheta = locate(EV_MAX_COMPRESSION, gm0, gm1, LOCATE_TOL);
      if (split) {
        stopTheta = maxTheta;
        stopEvent = EV_MAX_COMPRESSION;
      }
    }
    if (crosses(EV_LIFTOFF, gl0, gl1)) {
      const th = locate(EV_LIFTOFF, gl0, gl1, LOCATE_TOL);
      if (th < stopTheta) { stopTheta = th; stopEvent = EV_LIFTOFF; }
    }
    if (crosses(EV_BODY_GROUND, gg0, gg1)) {
      const th = locate(EV_BODY_GROUND, gg0, gg1, LOCATE_TOL);
      if (th < stopTheta) { stopTheta = th; stopEvent = EV_BODY_GROUND; }
    }
    if (crosses(EV_BACKWARD, gb0, gb1)) {
      const th = locate(EV_BACKWARD, gb0, gb1, LOCATE_TOL);
      if (th < stopTheta) { stopTheta = th; stopEvent = EV_BACKWARD; }
    }
    // Record-only events before the stop.
    if (!split && maxTheta <= stopTheta && maxTheta <= 1.0) {
      dense(maxTheta);
      noteMaxCompression(YI, t + maxTheta * h, leg, kc, ke);
      compressing = false;
    }
    if (damped) {
      const gf1 = eventValue(EV_FORCE_PEAK, YN);
      if (crosses(EV_FORCE_PEAK, gf0, gf1)) {
        const th = locate(EV_FORCE_PEAK, gf0, gf1, LOCATE_TOL);
        if (th <= stopTheta) {
          dense(th);
          const f = legForce(YI);
          if (f > outPeakForce) outPeakForce = f;
        }
      }
      gf0 = gf1;
    }
    if (tracing) traceStance(t, h, stopTheta < 1.0 ? stopTheta : 1.0);

    if (stopEvent < 0) {
      // Plain accepted step.
      if (nforce > outPeakForce) outPeakForce = nforce;
      const fr = Math.abs(npx / npy);
      if (fr > outPeakFriction) outPeakFriction = fr;
      t += h;
      advance();
      gl0 = gl1;
      gm0 = gm1;
      gg0 = gg1;
      gb0 = gb1;
      h *= acceptFactor(err, afterReject);
      afterReject = false;
      continue;
    }

    if (stopEvent == EV_BODY_GROUND) return finish(STATUS_BODY_HIT_GROUND, t + stopTheta * h);
    if (stopEvent == EV_BACKWARD) return finish(STATUS_FELL_BACKWARD, t + stopTheta * h);

    // Liftoff or the stiffness switch: re-take the step to the located time on
    // the true solution, then polish with Newton.
    const hNext = h * acceptFactor(err, afterReject);
    const hEvent = stopTheta * h;
    step(hEvent, rtol, atol);
    outSteps++;
    let tEvent = t + hEvent;
    tEvent += refine(stopEvent, timeScale);

    if (stopEvent == EV_MAX_COMPRESSION) {
      noteMaxCompression(YN, tEvent, leg, kc, ke);
      compressing = false;
      setStiffness(ke);
      kCurrent = ke;
      memory.copy(Y0, YN, 40);
      rhs(Y0, K1); // the right-hand side changed: no FSAL across the switch
      t = tEvent;
      gl0 = eventValue(EV_LIFTOFF, Y0);
      gg0 = eventValue(EV_BODY_GROUND, Y0);
      gb0 = eventValue(EV_BACKWARD, Y0);
      if (damped) gf0 = eventValue(EV_FORCE_PEAK, Y0);
      h = hNext;
      afterReject = false;
      continue;
    }

    // Liftoff.
    const fr = frictionRatio(YN);
    if (fr > outPeakFriction) outPeakFriction = fr;
    outLiftoffForce = damped ? legForce(YN) : 0.0;
    outPx = load<f64>(YN, 0);
    outPy = load<f64>(YN, 8);
    outVx = load<f64>(YN, 16);
    outVy = load<f64>(YN, 24);
    outDissipated = load<f64>(YN, 32);
    if (!isFinite(outPx) || !isFinite(outPy) || !isFinite(outVx) || !isFinite(outVy)) {
      return finish(STATUS_NON_FINITE, tEvent);
    }
    return finish(STATUS_OK, tEvent);
  }
}

function finish(status: i32, t: f64): i32 {
  outContact = t;
  return status;
}
