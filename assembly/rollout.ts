// Rollouts: apex -> touchdown (flight, closed form) -> stance (integrated) ->
// liftoff -> next apex (closed form), stride after stride, for many rollouts in
// one call. model: the read-only model block; everything mutable is here or in
// the stance driver's scratch.

import {
  M_MASS, M_LEG_LENGTH, M_GRAVITY, M_DAMPING, M_RTOL, M_MODEL_KIND, MODEL_BIPED, M_ATOL, M_MAX_STEPS, M_TARGET_HEIGHT, M_TARGET_SPEED, M_STIFFNESS,
  I_APEX_HEIGHT, I_FORWARD_SPEED, I_STREAM, I_MASS_SCALE, I_STIFFNESS_SCALE, I_LEG_SCALE, I_MODEL, I_SIZE, M_SIZE,
  R_APEX_HEIGHT, R_APEX_SPEED, R_APEX_TIME, R_APEX_X, R_APEX_TO_TOUCHDOWN, R_CONTACT, R_STRIDE_TIME,
  R_ATTACK, R_GROUND, R_PEAK_FORCE, R_MAX_COMPRESSION, R_PEAK_FRICTION, R_ENERGY_BEFORE,
  R_ENERGY_AFTER, R_DISSIPATED, R_STEPS, R_REJECTED, R_FOOT_X, R_TOUCHDOWN_VX, R_TOUCHDOWN_VY,
  R_LIFTOFF_X, R_LIFTOFF_Y, R_LIFTOFF_VX, R_LIFTOFF_VY, R_LIFTOFF_ANGLE, R_NEXT_APEX_HEIGHT,
  R_NEXT_APEX_SPEED, R_NEXT_APEX_X, R_NEXT_APEX_TIME, R_K_COMPRESSION, R_K_EXTENSION, R_STATUS,
  R_MAX_COMPRESSION_TIME, R_LIFTOFF_LEG_FORCE, R_SIZE,
  S_STATUS, S_STRIDES_COMPLETED, S_FINAL_HEIGHT, S_FINAL_SPEED, S_PREVIOUS_HEIGHT, S_PREVIOUS_SPEED,
  S_MAX_PEAK_FORCE, S_MAX_FRICTION, S_MAX_COMPRESSION, S_MIN_ATTACK, S_MAX_ATTACK,
  S_SUM_SQ_HEIGHT_ERROR, S_SUM_SQ_SPEED_ERROR, S_TIME, S_DISTANCE, S_STEPS, S_REJECTED, S_SIZE,
  S_FINAL_OFFSET, S_PREVIOUS_OFFSET, S_FINAL_LEG, S_FINAL_SECTION_KIND, S_MAX_VERTICAL_FORCE, SECTION_FLIGHT_APEX,
  STATUS_OK, STATUS_BODY_HIT_GROUND, STATUS_NO_APEX, STATUS_LEG_NOT_PLACEABLE, STATUS_NON_FINITE,
  STATUS_ATTACK_OUT_OF_RANGE, STATUS_STEP_LIMIT,
  PHASE_STANCE, PHASE_FLIGHT,
} from "./layout";
import { runBipedRollout } from "./biped";
import { mget, attackAt, chooseStiffness, stanceKc, stanceKe, stanceSplit } from "./policy";
import {
  touchdownTime, legSin, legCos, TOUCHDOWN_NOT_PLACEABLE, TOUCHDOWN_GROUND_FIRST, TOUCHDOWN_ANGLE_LEFT,
} from "./flight";
import { groundAt, resetWalk } from "./terrain";
import {
  runStance, outContact, outPx, outPy, outVx, outVy, outMaxCompression, outMaxCompressionTime,
  outPeakForce, outPeakFriction, outDissipated, outLiftoffForce, outSteps, outRejected, outFirstH,
} from "./stance";
import {
  tracing, traceFlight, emit, traceStride, traceFootX, traceGround, traceTouchdownTime,
} from "./trace";

const MAX_ATTACK: f64 = 1.5707963267948966 + 1e-15; // rad, 90 deg and legSin's slack
const SCRATCH_RECORD: usize = memory.data(8 * R_SIZE, 16); // (R_SIZE) f64, when no record buffer

@inline function put(p: usize, field: i32, v: f64): void {
  store<f64>(p + (<usize>field << 3), v);
}
@inline function get(p: usize, field: i32): f64 {
  return load<f64>(p + (<usize>field << 3));
}

// First stance step: a fraction of the fastest time scale, shrunk with the
// tolerance as h ~ rtol^(1/5) for a 5th-order method.
export function initialStep(mass: f64, k: f64, speed: f64, leg: f64, rtol: f64): f64 {
  const omega = Math.sqrt(k / mass) + speed / leg;
  let f = 2.0 * Math.pow(rtol, 0.2);
  if (f > 0.5) f = 0.5;
  return f / omega;
}

export function runRollout(model: usize, input: usize, strides: i32, rec0: usize, summary: usize): i32 {
  const mass = mget(model, M_MASS) * get(input, I_MASS_SCALE);
  const leg = mget(model, M_LEG_LENGTH) * get(input, I_LEG_SCALE);
  const kScale = get(input, I_STIFFNESS_SCALE);
  const g = mget(model, M_GRAVITY);
  const c = mget(model, M_DAMPING);
  const rtol = mget(model, M_RTOL);
  const atol = mget(model, M_ATOL);
  const maxSteps = <i32>mget(model, M_MAX_STEPS);
  const targetHeight = mget(model, M_TARGET_HEIGHT);
  const targetSpeed = mget(model, M_TARGET_SPEED);
  const stream = <u64>get(input, I_STREAM);

  let ya = get(input, I_APEX_HEIGHT);
  let vx = get(input, I_FORWARD_SPEED);
  let x: f64 = 0.0;
  let t: f64 = 0.0;
  let prevHeight = ya;
  let prevSpeed = vx;
  resetWalk();

  let status = STATUS_OK;
  let completed = 0;
  let maxForce: f64 = 0.0;
  let maxFriction: f64 = 0.0;
  let maxCompression: f64 = 0.0;
  let minAttack: f64 = Infinity;
  let maxAttack: f64 = -Infinity;
  let sumSqHeight: f64 = 0.0;
  let sumSqSpeed: f64 = 0.0;
  let steps = 0;
  let rejected = 0;
  let h = initialStep(mass, mget(model, M_STIFFNESS) * kScale, vx, leg, rtol);

  for (let s = 0; s < strides; s++) {
    const rec = rec0 != 0 ? rec0 + (<usize>s * R_SIZE << 3) : SCRATCH_RECORD;
    // Only a kept record is read: the scratch one needs no clearing.
    if (rec0 != 0) for (let f = 0; f < R_SIZE; f++) put(rec, f, NaN);
    put(rec, R_APEX_HEIGHT, ya);
    put(rec, R_APEX_SPEED, vx);
    put(rec, R_APEX_TIME, t);
    put(rec, R_APEX_X, x);
    const energyBefore = mass * g * ya + 0.5 * mass * vx * vx;
    put(rec, R_ENERGY_BEFORE, energyBefore);
    if (!isFinite(ya) || !isFinite(vx)) { status = STATUS_NON_FINITE; break; }

    const ground = groundAt(model, s, stream);
    put(rec, R_GROUND, ground);
    const tTouch = touchdownTime(model, ya, ground, leg, g);
    if (tTouch < 0.0) {
      status = tTouch == TOUCHDOWN_NOT_PLACEABLE ? STATUS_LEG_NOT_PLACEABLE
        : tTouch == TOUCHDOWN_GROUND_FIRST ? STATUS_BODY_HIT_GROUND
        : tTouch == TOUCHDOWN_ANGLE_LEFT ? STATUS_ATTACK_OUT_OF_RANGE
        : STATUS_STEP_LIMIT;
      put(rec, R_STATUS, <f64>status);
      break;
    }
    const attack = attackAt(model, tTouch);
    // an attack angle lies in (0, 90 deg]; the slack is legSin's "exactly vertical"
    if (!(attack > 0.0 && attack <= MAX_ATTACK)) {
      status = STATUS_ATTACK_OUT_OF_RANGE;
      put(rec, R_STATUS, <f64>status);
      break;
    }
    if (attack < minAttack) minAttack = attack;
    if (attack > maxAttack) maxAttack = attack;
    const cosA = legCos(attack);
    const sinA = legSin(attack);
    const xTouch = x + vx * tTouch;
    const vyTouch = -g * tTouch;
    const px = -leg * cosA;
    const py = leg * sinA;
    const footX = xTouch - px;
    put(rec, R_APEX_TO_TOUCHDOWN, tTouch);
    put(rec, R_ATTACK, attack);
    put(rec, R_FOOT_X, footX);
    put(rec, R_TOUCHDOWN_VX, vx);
    put(rec, R_TOUCHDOWN_VY, vyTouch);

    chooseStiffness(model, tTouch, kScale);
    put(rec, R_K_COMPRESSION, stanceKc);
    put(rec, R_K_EXTENSION, stanceKe);

    if (tracing) {
      traceStride = s;
      const a0 = attackAt(model, 0.0);
      traceFlight(t, t + tTouch, x, ya, vx, 0.0, g, leg, legCos(a0), legSin(a0));
      traceFootX = footX;
      traceGround = ground;
      traceTouchdownTime = t + tTouch;
      emit(t + tTouch, xTouch, ground + py, vx, vyTouch, footX, ground, 0.0, PHASE_STANCE, s);
    }

    status = runStance(
      px, py, vx, vyTouch, mass, leg, stanceKc, stanceKe, c, g, stanceSplit, rtol, atol, maxSteps, h,
    );
    steps += outSteps;
    rejected += outRejected;
    put(rec, R_CONTACT, outContact);
    put(rec, R_STEPS, <f64>outSteps);
    put(rec, R_REJECTED, <f64>outRejected);
    put(rec, R_MAX_COMPRESSION, outMaxCompression);
    put(rec, R_MAX_COMPRESSION_TIME, outMaxCompressionTime);
    put(rec, R_PEAK_FORCE, outPeakForce);
    put(rec, R_PEAK_FRICTION, outPeakFriction);
    if (status != STATUS_OK) { put(rec, R_STATUS, <f64>status); break; }

    const xLift = footX + outPx;
    const yLift = ground + outPy;
    put(rec, R_LIFTOFF_X, xLift);
    put(rec, R_LIFTOFF_Y, yLift);
    put(rec, R_LIFTOFF_VX, outVx);
    put(rec, R_LIFTOFF_VY, outVy);
    put(rec, R_LIFTOFF_ANGLE, Math.atan2(outPy, outPx));
    put(rec, R_LIFTOFF_LEG_FORCE, outLiftoffForce);
    // Energy the body no longer has: the damper's work plus, with damping, the
    // spring energy still in the (massless) leg when the foot leaves.
    const rLift = Math.sqrt(outPx * outPx + outPy * outPy);
    const stored = 0.5 * stanceKe * (leg - rLift) * (leg - rLift);
    put(rec, R_DISSIPATED, outDissipated + (c > 0.0 ? stored : 0.0));
    const tLift = t + tTouch + outContact;

    if (tracing) {
      emit(tLift, xLift, yLift, outVx, outVy, footX, ground, outLiftoffForce, PHASE_FLIGHT, s);
    }
    if (!(outVy > 0.0)) { status = STATUS_NO_APEX; put(rec, R_STATUS, <f64>status); break; }

    const tUp = outVy / g;
    const yNext = yLift + (outVy * outVy) / (2.0 * g);
    const xNext = xLift + outVx * tUp;
    const tNext = tLift + tUp;
    if (tracing) traceFlight(tLift, tNext, xLift, yLift, outVx, outVy, g, leg, cosA, sinA);
    put(rec, R_NEXT_APEX_HEIGHT, yNext);
    put(rec, R_NEXT_APEX_SPEED, outVx);
    put(rec, R_NEXT_APEX_X, xNext);
    put(rec, R_NEXT_APEX_TIME, tNext);
    put(rec, R_STRIDE_TIME, tNext - t);
    put(rec, R_ENERGY_AFTER, mass * g * yNext + 0.5 * mass * outVx * outVx);
    put(rec, R_STATUS, <f64>STATUS_OK);

    if (outPeakForce > maxForce) maxForce = outPeakForce;
    if (outPeakFriction > maxFriction) maxFriction = outPeakFriction;
    if (outMaxCompression > maxCompression) maxCompression = outMaxCompression;
    const eh = yNext - targetHeight;
    const ev = outVx - targetSpeed;
    sumSqHeight += eh * eh;
    sumSqSpeed += ev * ev;
    prevHeight = ya;
    prevSpeed = vx;
    ya = yNext;
    vx = outVx;
    x = xNext;
    t = tNext;
    h = outFirstH;
    completed++;
  }

  // Records past the failing stride: NaN, so a batch's records are the same bytes
  // whatever memory they were written into.
  if (rec0 != 0) {
    for (let s = completed + 1; s < strides; s++) {
      const rec = rec0 + (<usize>s * R_SIZE << 3);
      for (let f = 0; f < R_SIZE; f++) put(rec, f, NaN);
    }
  }

  put(summary, S_STATUS, <f64>status);
  put(summary, S_STRIDES_COMPLETED, <f64>completed);
  put(summary, S_FINAL_HEIGHT, ya);
  put(summary, S_FINAL_SPEED, vx);
  put(summary, S_PREVIOUS_HEIGHT, prevHeight);
  put(summary, S_PREVIOUS_SPEED, prevSpeed);
  put(summary, S_MAX_PEAK_FORCE, maxForce);
  put(summary, S_MAX_FRICTION, maxFriction);
  put(summary, S_MAX_COMPRESSION, maxCompression);
  put(summary, S_MIN_ATTACK, minAttack);
  put(summary, S_MAX_ATTACK, maxAttack);
  put(summary, S_SUM_SQ_HEIGHT_ERROR, sumSqHeight);
  put(summary, S_SUM_SQ_SPEED_ERROR, sumSqSpeed);
  put(summary, S_TIME, t);
  put(summary, S_DISTANCE, x);
  put(summary, S_STEPS, <f64>steps);
  put(summary, S_REJECTED, <f64>rejected);
  // the two-leg model's section fields: not this model's
  put(summary, S_FINAL_OFFSET, NaN);
  put(summary, S_PREVIOUS_OFFSET, NaN);
  put(summary, S_FINAL_LEG, NaN);
  put(summary, S_FINAL_SECTION_KIND, <f64>SECTION_FLIGHT_APEX);
  put(summary, S_MAX_VERTICAL_FORCE, NaN);
  return status;
}

// rollouts x strides in one call. models: (models x M_SIZE), picked per rollout
// by I_MODEL (the TS core checks the indices); inputs: (rollouts x I_SIZE);
// records: (rollouts x strides x R_SIZE) or 0 for none; summaries:
// (rollouts x S_SIZE). Returns how many rollouts completed every stride.
export function runBatch(models: usize, inputs: usize, rollouts: i32, strides: i32, records: usize, summaries: usize): i32 {
  let ok = 0;
  for (let r = 0; r < rollouts; r++) {
    const input = inputs + (<usize>r * I_SIZE << 3);
    const model = models + (<usize>get(input, I_MODEL) * M_SIZE << 3);
    const rec = records != 0 ? records + (<usize>r * strides * R_SIZE << 3) : 0;
    const sum = summaries + (<usize>r * S_SIZE << 3);
    const status = <i32>mget(model, M_MODEL_KIND) == MODEL_BIPED
      ? runBipedRollout(model, input, strides, rec, sum)
      : runRollout(model, input, strides, rec, sum);
    if (status == STATUS_OK) ok++;
  }
  return ok;
}
