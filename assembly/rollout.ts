// Rollouts: apex -> touchdown (flight, closed form) -> stance (integrated) ->
// liftoff -> next apex (closed form), stride after stride, for many rollouts in
// one call. model: the read-only model block; everything mutable is in a
// rollout's Roll block and its Stance block (stance.ts).
//
// A batch of single-leg rollouts runs four at a time: four lanes, each with its
// own rollout, take their stance steps together (stepFour: two f64x2 chains),
// and each does the rest (flight, events, records) with the code that a lone
// rollout runs. A lane whose rollout ends takes the next one. Every rollout's
// records and summary are the same bytes as when it runs alone.

import { initialStep } from "./rk/initial-step";
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
  S_FINAL_OFFSET, S_PREVIOUS_OFFSET, S_FINAL_LEG, S_FINAL_SECTION_KIND, S_MAX_VERTICAL_FORCE, SECTION_FLIGHT_APEX, I_SECTION_KIND,
  STATUS_OK, STATUS_BODY_HIT_GROUND, STATUS_NO_APEX, STATUS_LEG_NOT_PLACEABLE, STATUS_NON_FINITE,
  STATUS_ATTACK_OUT_OF_RANGE, STATUS_STEP_LIMIT,
  PHASE_STANCE, PHASE_FLIGHT,
} from "./layout";
import { runBipedRollout, runBipedBatch, bipedPairedSteps } from "./biped";
import { mget, attackAt, chooseStiffness, stanceKc, stanceKe, stanceSplit } from "./policy";
import {
  touchdownTime, legSin, legCos, TOUCHDOWN_NOT_PLACEABLE, TOUCHDOWN_GROUND_FIRST, TOUCHDOWN_ANGLE_LEFT,
} from "./flight";
import { groundAt, getWalk, setWalk } from "./terrain";
import {
  Stance, MAX_LANES, laneStance, useStance, releaseStance, stanceStart, stanceRun, stanceBeforeStep,
  stanceAfterStep, stanceAfterLaneStep, stanceAfterEventStep, stepTwo, stepFour,
} from "./stance";
import { laneErr0, laneErr1, laneErr2, laneErr3, unpackStages } from "./rk/dopri5x2";
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

// One rollout's state between its strides (and across its stance).
@unmanaged class Roll {
  model: usize = 0;
  input: usize = 0;
  rec0: usize = 0;
  summary: usize = 0;
  rec: usize = 0; // the record of the stride in progress
  stance: usize = 0; // its Stance block
  strides: i32 = 0;
  s: i32 = 0; // stride in progress
  status: i32 = 0;
  completed: i32 = 0;
  steps: i32 = 0;
  rejected: i32 = 0;
  maxSteps: i32 = 0;
  stream: u64 = 0;
  mass: f64 = 0.0;
  leg: f64 = 0.0;
  kScale: f64 = 0.0;
  g: f64 = 0.0;
  c: f64 = 0.0;
  rtol: f64 = 0.0;
  atol: f64 = 0.0;
  targetHeight: f64 = 0.0;
  targetSpeed: f64 = 0.0;
  ya: f64 = 0.0;
  vx: f64 = 0.0;
  x: f64 = 0.0;
  t: f64 = 0.0;
  prevHeight: f64 = 0.0;
  prevSpeed: f64 = 0.0;
  maxForce: f64 = 0.0;
  maxFriction: f64 = 0.0;
  maxCompression: f64 = 0.0;
  minAttack: f64 = 0.0;
  maxAttack: f64 = 0.0;
  sumSqHeight: f64 = 0.0;
  sumSqSpeed: f64 = 0.0;
  h: f64 = 0.0;
  walk: f64 = 0.0; // the random walk's running sum (terrain.ts)
  // the stride in progress, from apex to touchdown
  tTouch: f64 = 0.0;
  cosA: f64 = 0.0;
  sinA: f64 = 0.0;
  footX: f64 = 0.0;
  ground: f64 = 0.0;
  ke: f64 = 0.0;
}

const ROLL_BYTES: usize = 512; // >= offsetof<Roll>() (checked in initRolls)
const ROLL_BLOCKS: usize = memory.data(512 * MAX_LANES, 16);

// Roll block of lane i; its stance is lane i's Stance block.
@inline function laneRoll(i: i32): Roll {
  return changetype<Roll>(ROLL_BLOCKS + <usize>i * ROLL_BYTES);
}
const ROLL0: Roll = changetype<Roll>(ROLL_BLOCKS);

function initRolls(): void {
  if (offsetof<Roll>() > ROLL_BYTES) unreachable();
  for (let i = 0; i < MAX_LANES; i++) laneRoll(i).stance = changetype<usize>(laneStance(i));
}
initRolls();

// Rollouts stepped together in a batch: 4 (two f64x2 chains), 2 (one) or 1 (one rollout after
// the other). The results are the same bytes; the defaults are what measured fastest on this
// project's bench machine (CPU time, side by side): single-leg batches 2 (2-9 % faster than 4
// over the bench's gaits and the demo), two-leg walking batches 4 (about 3 % faster than 2).
// setBatchLanes(n) sets both (the lanes tests run every count on both kinds).
let slipLanes: i32 = 2;
let bipedLanes: i32 = 4;

export function setBatchLanes(n: i32): void {
  slipLanes = n == 1 ? 1 : n == 2 ? 2 : 4;
  bipedLanes = slipLanes;
}

function rolloutStart(R: Roll, model: usize, input: usize, strides: i32, rec0: usize, summary: usize): void {
  R.model = model;
  R.input = input;
  R.strides = strides;
  R.rec0 = rec0;
  R.summary = summary;
  R.mass = mget(model, M_MASS) * get(input, I_MASS_SCALE);
  R.leg = mget(model, M_LEG_LENGTH) * get(input, I_LEG_SCALE);
  R.kScale = get(input, I_STIFFNESS_SCALE);
  R.g = mget(model, M_GRAVITY);
  R.c = mget(model, M_DAMPING);
  R.rtol = mget(model, M_RTOL);
  R.atol = mget(model, M_ATOL);
  R.maxSteps = <i32>mget(model, M_MAX_STEPS);
  R.targetHeight = mget(model, M_TARGET_HEIGHT);
  R.targetSpeed = mget(model, M_TARGET_SPEED);
  R.stream = <u64>get(input, I_STREAM);

  R.ya = get(input, I_APEX_HEIGHT);
  R.vx = get(input, I_FORWARD_SPEED);
  R.x = 0.0;
  R.t = 0.0;
  R.prevHeight = R.ya;
  R.prevSpeed = R.vx;
  R.walk = 0.0;

  R.status = STATUS_OK;
  R.completed = 0;
  R.maxForce = 0.0;
  R.maxFriction = 0.0;
  R.maxCompression = 0.0;
  R.minAttack = Infinity;
  R.maxAttack = -Infinity;
  R.sumSqHeight = 0.0;
  R.sumSqSpeed = 0.0;
  R.steps = 0;
  R.rejected = 0;
  R.h = initialStep(R.mass, mget(model, M_STIFFNESS) * R.kScale, R.vx, R.leg, R.rtol);
  R.s = 0;
}

// The next stride from its apex to touchdown, and its stance started (holding the stepper):
// true; false when the rollout has ended (all strides done, or a failure, in R.status).
function strideBegin(R: Roll): bool {
  const s = R.s;
  if (s >= R.strides) return false;
  const model = R.model;
  const leg = R.leg;
  const g = R.g;
  const ya = R.ya;
  const vx = R.vx;
  const x = R.x;
  const t = R.t;
  const rec = R.rec0 != 0 ? R.rec0 + (<usize>s * R_SIZE << 3) : SCRATCH_RECORD;
  R.rec = rec;
  // Only a kept record is read: the scratch one needs no clearing.
  if (R.rec0 != 0) for (let f = 0; f < R_SIZE; f++) put(rec, f, NaN);
  put(rec, R_APEX_HEIGHT, ya);
  put(rec, R_APEX_SPEED, vx);
  put(rec, R_APEX_TIME, t);
  put(rec, R_APEX_X, x);
  if (R.rec0 != 0) put(rec, R_ENERGY_BEFORE, R.mass * g * ya + 0.5 * R.mass * vx * vx);
  if (!isFinite(ya) || !isFinite(vx)) { R.status = STATUS_NON_FINITE; return false; }

  setWalk(R.walk);
  const ground = groundAt(model, s, R.stream);
  R.walk = getWalk();
  R.ground = ground;
  put(rec, R_GROUND, ground);
  const tTouch = touchdownTime(model, ya, ground, leg, g);
  if (tTouch < 0.0) {
    const status = tTouch == TOUCHDOWN_NOT_PLACEABLE ? STATUS_LEG_NOT_PLACEABLE
      : tTouch == TOUCHDOWN_GROUND_FIRST ? STATUS_BODY_HIT_GROUND
      : tTouch == TOUCHDOWN_ANGLE_LEFT ? STATUS_ATTACK_OUT_OF_RANGE
      : STATUS_STEP_LIMIT;
    R.status = status;
    put(rec, R_STATUS, <f64>status);
    return false;
  }
  R.tTouch = tTouch;
  const attack = attackAt(model, tTouch);
  // an attack angle lies in (0, 90 deg]; the slack is legSin's "exactly vertical"
  if (!(attack > 0.0 && attack <= MAX_ATTACK)) {
    R.status = STATUS_ATTACK_OUT_OF_RANGE;
    put(rec, R_STATUS, <f64>R.status);
    return false;
  }
  if (attack < R.minAttack) R.minAttack = attack;
  if (attack > R.maxAttack) R.maxAttack = attack;
  const cosA = legCos(attack);
  const sinA = legSin(attack);
  R.cosA = cosA;
  R.sinA = sinA;
  const xTouch = x + vx * tTouch;
  const vyTouch = -g * tTouch;
  const px = -leg * cosA;
  const py = leg * sinA;
  const footX = xTouch - px;
  R.footX = footX;
  put(rec, R_APEX_TO_TOUCHDOWN, tTouch);
  put(rec, R_ATTACK, attack);
  put(rec, R_FOOT_X, footX);
  put(rec, R_TOUCHDOWN_VX, vx);
  put(rec, R_TOUCHDOWN_VY, vyTouch);

  chooseStiffness(model, tTouch, R.kScale);
  put(rec, R_K_COMPRESSION, stanceKc);
  put(rec, R_K_EXTENSION, stanceKe);
  R.ke = stanceKe;

  if (tracing) {
    traceStride = s;
    const a0 = attackAt(model, 0.0);
    traceFlight(t, t + tTouch, x, ya, vx, 0.0, g, leg, legCos(a0), legSin(a0));
    traceFootX = footX;
    traceGround = ground;
    traceTouchdownTime = t + tTouch;
    emit(t + tTouch, xTouch, ground + py, vx, vyTouch, footX, ground, 0.0, PHASE_STANCE, s);
  }

  const st = changetype<Stance>(R.stance);
  useStance(st);
  stanceStart(st, px, py, vx, vyTouch, R.mass, leg, stanceKc, stanceKe, R.c, g, stanceSplit, R.rtol, R.atol, R.maxSteps, R.h);
  return true;
}

// The stride after its stance ended with `status`: true to go on with the next stride,
// false when the rollout has ended (R.status).
function strideEnd(R: Roll, status: i32): bool {
  const st = changetype<Stance>(R.stance);
  const rec = R.rec;
  const s = R.s;
  const g = R.g;
  const leg = R.leg;
  R.status = status;
  R.steps += st.steps;
  R.rejected += st.rejected;
  put(rec, R_CONTACT, st.contact);
  put(rec, R_STEPS, <f64>st.steps);
  put(rec, R_REJECTED, <f64>st.rejected);
  put(rec, R_MAX_COMPRESSION, st.maxCompression);
  put(rec, R_MAX_COMPRESSION_TIME, st.maxCompressionTime);
  put(rec, R_PEAK_FORCE, st.peakForce);
  put(rec, R_PEAK_FRICTION, st.peakFriction);
  if (status != STATUS_OK) { put(rec, R_STATUS, <f64>status); return false; }

  const outPx = st.px;
  const outPy = st.py;
  const outVx = st.vx;
  const outVy = st.vy;
  const footX = R.footX;
  const ground = R.ground;
  const xLift = footX + outPx;
  const yLift = ground + outPy;
  put(rec, R_LIFTOFF_X, xLift);
  put(rec, R_LIFTOFF_Y, yLift);
  put(rec, R_LIFTOFF_VX, outVx);
  put(rec, R_LIFTOFF_VY, outVy);
  put(rec, R_LIFTOFF_LEG_FORCE, st.liftoffForce);
  // Only a kept record is read: the values nothing else uses are formed only for one.
  if (R.rec0 != 0) {
    put(rec, R_LIFTOFF_ANGLE, Math.atan2(outPy, outPx));
    // Energy the body no longer has: the damper's work plus, with damping, the
    // spring energy still in the (massless) leg when the foot leaves.
    const rLift = Math.sqrt(outPx * outPx + outPy * outPy);
    const stored = 0.5 * R.ke * (leg - rLift) * (leg - rLift);
    put(rec, R_DISSIPATED, st.dissipated + (R.c > 0.0 ? stored : 0.0));
  }
  const t = R.t;
  const tLift = t + R.tTouch + st.contact;

  if (tracing) {
    emit(tLift, xLift, yLift, outVx, outVy, footX, ground, st.liftoffForce, PHASE_FLIGHT, s);
  }
  if (!(outVy > 0.0)) { R.status = STATUS_NO_APEX; put(rec, R_STATUS, <f64>R.status); return false; }

  const tUp = outVy / g;
  const yNext = yLift + (outVy * outVy) / (2.0 * g);
  const xNext = xLift + outVx * tUp;
  const tNext = tLift + tUp;
  if (tracing) traceFlight(tLift, tNext, xLift, yLift, outVx, outVy, g, leg, R.cosA, R.sinA);
  put(rec, R_NEXT_APEX_HEIGHT, yNext);
  put(rec, R_NEXT_APEX_SPEED, outVx);
  put(rec, R_NEXT_APEX_X, xNext);
  put(rec, R_NEXT_APEX_TIME, tNext);
  put(rec, R_STRIDE_TIME, tNext - t);
  if (R.rec0 != 0) put(rec, R_ENERGY_AFTER, R.mass * g * yNext + 0.5 * R.mass * outVx * outVx);
  put(rec, R_STATUS, <f64>STATUS_OK);

  if (st.peakForce > R.maxForce) R.maxForce = st.peakForce;
  if (st.peakFriction > R.maxFriction) R.maxFriction = st.peakFriction;
  if (st.maxCompression > R.maxCompression) R.maxCompression = st.maxCompression;
  const eh = yNext - R.targetHeight;
  const ev = outVx - R.targetSpeed;
  R.sumSqHeight += eh * eh;
  R.sumSqSpeed += ev * ev;
  R.prevHeight = R.ya;
  R.prevSpeed = R.vx;
  R.ya = yNext;
  R.vx = outVx;
  R.x = xNext;
  R.t = tNext;
  R.h = st.firstH;
  R.completed++;
  R.s = s + 1;
  return true;
}

// The ended rollout's summary (and NaN records past the failing stride); returns its status.
function rolloutFinish(R: Roll): i32 {
  const rec0 = R.rec0;
  const strides = R.strides;
  // Records past the failing stride: NaN, so a batch's records are the same bytes
  // whatever memory they were written into.
  if (rec0 != 0) {
    for (let s = R.completed + 1; s < strides; s++) {
      const rec = rec0 + (<usize>s * R_SIZE << 3);
      for (let f = 0; f < R_SIZE; f++) put(rec, f, NaN);
    }
  }

  const summary = R.summary;
  const status = R.status;
  put(summary, S_STATUS, <f64>status);
  put(summary, S_STRIDES_COMPLETED, <f64>R.completed);
  put(summary, S_FINAL_HEIGHT, R.ya);
  put(summary, S_FINAL_SPEED, R.vx);
  put(summary, S_PREVIOUS_HEIGHT, R.prevHeight);
  put(summary, S_PREVIOUS_SPEED, R.prevSpeed);
  put(summary, S_MAX_PEAK_FORCE, R.maxForce);
  put(summary, S_MAX_FRICTION, R.maxFriction);
  put(summary, S_MAX_COMPRESSION, R.maxCompression);
  put(summary, S_MIN_ATTACK, R.minAttack);
  put(summary, S_MAX_ATTACK, R.maxAttack);
  put(summary, S_SUM_SQ_HEIGHT_ERROR, R.sumSqHeight);
  put(summary, S_SUM_SQ_SPEED_ERROR, R.sumSqSpeed);
  put(summary, S_TIME, R.t);
  put(summary, S_DISTANCE, R.x);
  put(summary, S_STEPS, <f64>R.steps);
  put(summary, S_REJECTED, <f64>R.rejected);
  // the two-leg model's section fields: not this model's
  put(summary, S_FINAL_OFFSET, NaN);
  put(summary, S_PREVIOUS_OFFSET, NaN);
  put(summary, S_FINAL_LEG, NaN);
  put(summary, S_FINAL_SECTION_KIND, <f64>SECTION_FLIGHT_APEX);
  put(summary, S_MAX_VERTICAL_FORCE, NaN);
  return status;
}

export function runRollout(model: usize, input: usize, strides: i32, rec0: usize, summary: usize): i32 {
  const R = ROLL0;
  rolloutStart(R, model, input, strides, rec0, summary);
  while (strideBegin(R)) {
    if (!strideEnd(R, stanceRun(changetype<Stance>(R.stance)))) break;
  }
  const status = rolloutFinish(R);
  releaseStance();
  return status;
}

// The two-lane batch: the work list (the next rollout to start) and the count of rollouts that
// completed every stride.
let pairModels: usize = 0;
let pairInputs: usize = 0;
let pairRollouts: i32 = 0;
let pairStrides: i32 = 0;
let pairRecords: usize = 0;
let pairSummaries: usize = 0;
let pairNext: i32 = 0;
let pairOk: i32 = 0;
let pairSteps: f64 = 0; // paired steps in the last runBatch (for checks)

export function pairedSteps(): f64 {
  return pairSteps;
}

// Lane R's next stance: start rollouts from the work list until one reaches a stance (true),
// or the list is empty (false).
function laneFill(R: Roll): bool {
  while (pairNext < pairRollouts) {
    const r = pairNext++;
    const input = pairInputs + (<usize>r * I_SIZE << 3);
    const model = pairModels + (<usize>get(input, I_MODEL) * M_SIZE << 3);
    const rec = pairRecords != 0 ? pairRecords + (<usize>r * pairStrides * R_SIZE << 3) : 0;
    const sum = pairSummaries + (<usize>r * S_SIZE << 3);
    rolloutStart(R, model, input, pairStrides, rec, sum);
    if (strideBegin(R)) return true;
    if (rolloutFinish(R) == STATUS_OK) pairOk++;
  }
  return false;
}

// Lane R's stance ended with `status`: its rollout's next stance, or the next rollout's.
function laneNext(R: Roll, status: i32): bool {
  if (strideEnd(R, status) && strideBegin(R)) return true;
  if (rolloutFinish(R) == STATUS_OK) pairOk++;
  return laneFill(R);
}

// The batch on `lanes` (2 or 4) lanes: every live lane takes its step in one stepTwo or stepFour;
// a lane with no rollout left computes a step on its stale state that nobody reads.
function runLanes(lanes: i32, models: usize, inputs: usize, rollouts: i32, strides: i32, records: usize, summaries: usize): i32 {
  pairModels = models;
  pairInputs = inputs;
  pairRollouts = rollouts;
  pairStrides = strides;
  pairRecords = records;
  pairSummaries = summaries;
  pairNext = 0;
  pairOk = 0;
  let live = 0; // bit i: lane i has a stance in progress
  for (let i = 0; i < lanes; i++) if (laneFill(laneRoll(i))) live |= 1 << i;
  while (live != 0) {
    // each live lane to a stance that takes a step, or out of work
    for (let i = 0; i < lanes; i++) {
      if ((live & (1 << i)) == 0) continue;
      const R = laneRoll(i);
      const st = changetype<Stance>(R.stance);
      let r = stanceBeforeStep(st);
      while (r >= 0) {
        if (!laneNext(R, r)) { live &= ~(1 << i); break; }
        r = stanceBeforeStep(st);
      }
    }
    if (live == 0) break;
    if (lanes == 4) stepFour(laneStance(0), laneStance(1), laneStance(2), laneStance(3));
    else stepTwo(laneStance(0), laneStance(1));
    pairSteps++;
    for (let i = 0; i < lanes; i++) {
      if ((live & (1 << i)) == 0) continue;
      const err = i == 0 ? laneErr0 : i == 1 ? laneErr1 : i == 2 ? laneErr2 : laneErr3;
      const R = laneRoll(i);
      const st = changetype<Stance>(R.stance);
      let r = stanceAfterLaneStep(st, err, i);
      if (r == -2) {
        unpackStages(i, st.bufs);
        useStance(st);
        r = st.pending >= 0 ? stanceAfterEventStep(st) : stanceAfterStep(st, err, true);
      }
      if (r >= 0 && !laneNext(R, r)) live &= ~(1 << i);
    }
  }
  releaseStance();
  return pairOk;
}

// rollouts x strides in one call. models: (models x M_SIZE), picked per rollout
// by I_MODEL (the TS core checks the indices); inputs: (rollouts x I_SIZE);
// records: (rollouts x strides x R_SIZE) or 0 for none; summaries:
// (rollouts x S_SIZE). Returns how many rollouts completed every stride.
export function runBatch(models: usize, inputs: usize, rollouts: i32, strides: i32, records: usize, summaries: usize): i32 {
  pairSteps = 0;
  let bipeds = 0;
  let bipedsRunning = 0;
  for (let r = 0; r < rollouts; r++) {
    const input = inputs + (<usize>r * I_SIZE << 3);
    const model = models + (<usize>get(input, I_MODEL) * M_SIZE << 3);
    if (<i32>mget(model, M_MODEL_KIND) == MODEL_BIPED) {
      bipeds++;
      if (<i32>get(input, I_SECTION_KIND) == SECTION_FLIGHT_APEX) bipedsRunning++;
    }
  }
  // one model kind in lanes (single-leg: runLanes; two-leg: runBipedBatch), a mixed batch one
  // rollout after the other. Two-leg lanes step walking only: a batch whose rollouts all start
  // running (at a flight apex) runs one rollout after the other, which measured about 20 % faster
  // than taking turns in the lanes.
  if (slipLanes > 1 && rollouts > 1 && bipeds == 0) {
    return runLanes(rollouts >= 4 ? slipLanes : 2, models, inputs, rollouts, strides, records, summaries);
  }
  if (bipedLanes > 1 && rollouts > 1 && bipeds == rollouts && bipedsRunning < rollouts) {
    const ok = runBipedBatch(rollouts >= 4 ? bipedLanes : 2, models, inputs, rollouts, strides, records, summaries);
    pairSteps = bipedPairedSteps();
    return ok;
  }
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
