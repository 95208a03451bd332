// The two-leg model (Geyer, Seyfarth & Blickhan 2006): a point mass on two massless linear spring
// legs. A leg in stance pushes along itself from its pinned foot; the swing leg is held at the
// commanded attack angle (policy.ts, time measured from the stride's section) and touches down
// when its foot reaches the ground, y - ground = L0 sin(attack), with the body descending and, in
// single support, only after the body has passed midstance of the stance leg (an arming
// condition: a trailing leg often lifts off while the body is below the swing leg's touchdown
// height, and the touchdown is then the next downward crossing, not an immediate one). A leg
// lifts off when it returns to rest length while extending (with damping: when its force reaches
// zero). In double support both forces add.
//
// Strides run section to section. Walking (single and double support, no flight): the section
// is the single-support apex, vertical speed from + to - with one leg on the ground, after the
// stride's stance-leg change. Running (single support and flight): the flight apex, as for the
// single-leg model. A walking stride that leaves the ground, or a running stride that lands the
// second leg, ends the rollout with STATUS_GAIT_CHANGED.
//
// Integration: the shared Dormand-Prince stepper. In single support the state is relative to the
// stance foot and the right-hand side is the single-leg stance (system.ts, SYSTEM_STANCE), so a
// running stride is computed with the single-leg model's arithmetic, event for event; in double
// support (SYSTEM_BIPED) it is relative to the older foot with the newer foot as a parameter.
// Events are checked at the ends of every accepted step, located on the interpolant (Illinois),
// re-stepped on the true solution and polished with Newton steps (re-taking the step to the
// corrected time), as the stance driver does.
//
// Batches (runBipedBatch): two or four rollouts take turns between steps, each with its own state
// block (BipedState), legs, record scratch and stepper buffers. A walking step with undamped legs
// is taken for all of them at once in f64x2 lanes (rk/biped-x2.ts, step4's arithmetic), and a
// step with no event inside it is finished for each without switching to it (laneAfterQuiet,
// contactAfter's arithmetic); every other step, event and stride runs the one-rollout code on the
// lane's state. Each rollout's records and summary are the bytes runBipedRollout gives.

import {
  M_MASS, M_GRAVITY, M_RTOL, M_ATOL, M_MAX_STEPS, M_TARGET_HEIGHT, M_TARGET_SPEED, M_STIFFNESS,
  M_BIPED_LENGTH_0, M_BIPED_LENGTH_1, M_BIPED_STIFFNESS_SCALE_0, M_BIPED_STIFFNESS_SCALE_1,
  M_BIPED_DAMPING_0, M_BIPED_DAMPING_1, M_ANGLE_KIND, M_ATTACK, ANGLE_FIXED,
  I_APEX_HEIGHT, I_FORWARD_SPEED, I_STREAM, I_MASS_SCALE, I_STIFFNESS_SCALE, I_LEG_SCALE,
  I_SECTION_KIND, I_SECTION_OFFSET, I_SECTION_LEG, I_SIZE, I_MODEL, M_SIZE, S_SIZE,
  R_APEX_HEIGHT, R_APEX_SPEED, R_APEX_TIME, R_APEX_X, R_APEX_TO_TOUCHDOWN, R_CONTACT, R_STRIDE_TIME,
  R_ATTACK, R_GROUND, R_PEAK_FORCE, R_MAX_COMPRESSION, R_PEAK_FRICTION, R_ENERGY_BEFORE,
  R_ENERGY_AFTER, R_DISSIPATED, R_STEPS, R_REJECTED, R_FOOT_X, R_TOUCHDOWN_VX, R_TOUCHDOWN_VY,
  R_LIFTOFF_X, R_LIFTOFF_Y, R_LIFTOFF_VX, R_LIFTOFF_VY, R_LIFTOFF_ANGLE, R_NEXT_APEX_HEIGHT,
  R_NEXT_APEX_SPEED, R_NEXT_APEX_X, R_NEXT_APEX_TIME, R_K_COMPRESSION, R_K_EXTENSION, R_STATUS,
  R_MAX_COMPRESSION_TIME, R_LIFTOFF_LEG_FORCE, R_SIZE,
  R_GAIT, R_SECTION_KIND, R_SECTION_OFFSET, R_SECTION_LEG, R_NEXT_SECTION_KIND, R_NEXT_SECTION_OFFSET,
  R_NEXT_SECTION_LEG, R_TOUCHDOWN_TIME_0, R_LIFTOFF_TIME_0, R_DOUBLE_START, R_DOUBLE_END,
  R_PEAK_FORCE_0, R_PEAK_FORCE_1, R_PEAK_VERTICAL_FORCE,
  S_STATUS, S_STRIDES_COMPLETED, S_FINAL_HEIGHT, S_FINAL_SPEED, S_PREVIOUS_HEIGHT, S_PREVIOUS_SPEED,
  S_MAX_PEAK_FORCE, S_MAX_FRICTION, S_MAX_COMPRESSION, S_MIN_ATTACK, S_MAX_ATTACK,
  S_SUM_SQ_HEIGHT_ERROR, S_SUM_SQ_SPEED_ERROR, S_TIME, S_DISTANCE, S_STEPS, S_REJECTED,
  S_FINAL_OFFSET, S_PREVIOUS_OFFSET, S_FINAL_LEG, S_FINAL_SECTION_KIND, S_MAX_VERTICAL_FORCE,
  SECTION_FLIGHT_APEX, SECTION_SINGLE_SUPPORT_APEX, GAIT_WALKING, GAIT_RUNNING, GAIT_HOPPING,
  STATUS_OK, STATUS_BODY_HIT_GROUND, STATUS_FELL_BACKWARD, STATUS_NO_LIFTOFF, STATUS_NO_APEX,
  STATUS_LEG_NOT_PLACEABLE, STATUS_STEP_UNDERFLOW, STATUS_NON_FINITE, STATUS_STEP_LIMIT,
  STATUS_ATTACK_OUT_OF_RANGE, STATUS_GAIT_CHANGED, STATUS_STALLED, STATUS_NO_SECTION,
  PHASE_FLIGHT, PHASE_STANCE, PHASE_DOUBLE,
} from "./layout";
import { mget, attackAt, angleRateAt, chooseStiffness, stanceKc, stanceKe, stanceSplit } from "./policy";
import {
  touchdownTime, legSin, legCos, TOUCHDOWN_NOT_PLACEABLE, TOUCHDOWN_GROUND_FIRST, TOUCHDOWN_ANGLE_LEFT,
} from "./flight";
import { groundAt, resetWalk, getWalk, setWalk } from "./terrain";
import { initialStep } from "./rk/initial-step";
import {
  step, acceptFactor, rejectFactor, resetController, advance, setErrorDimension, setLastH,
  useBuffers, DEFAULT_BUFFERS, BUFFER_SET_BYTES, OFF_Y0, OFF_K1, OFF_K7, OFF_YN, acceptedFactor, controllerMemory, getLastH, getErrorDimension, setErrorDimensionValue, getErrOld, setErrOld,
  Y0, K1, K2, K3, K4, K5, K6, K7, YN, YI,
  A21, A31, A32, A41, A42, A43, A51, A52, A53, A54, A61, A62, A63, A64, A65,
  B1, B3, B4, B5, B6, E1, E3, E4, E5, E6, E7,
} from "./rk/dopri5";
import {
  rhs, setStance, setStiffness, setBiped, setBipedStiffness,
  stanceInvMass, stanceLeg as sysLeg, stanceK, stanceC, stanceG, stanceKInvM,
  bipedFx0, bipedFy0, bipedFx1, bipedFy1, bipedL0, bipedL1, bipedK0, bipedK1, bipedC0, bipedC1, bipedKInvM0, bipedKInvM1,
  saveSystem, loadSystem, SYSTEM_STATE_BYTES,
} from "./rk/system";
import { P11, P12, P13, P14, P32, P33, P34, P42, P43, P44, P52, P53, P54, P62, P63, P64, P72, P73, P74 } from "./rk/tableau";
import {
  stepPairW, stepPairW1, laneError, unpackStages, laneEnd, packY, unpackY, unpackEnd,
  END_GL0, END_GM0, END_C0, END_F0, END_GL1, END_GM1, END_C1, END_F1, END_FX, END_FY, PAIR_PARAMS, PAIR_BYTES, PP_H, PP_RTOL, PP_ATOL, PP_INV_MASS, PP_G, PP_FX0, PP_FY0, PP_L0, PP_K0,
  PP_FX1, PP_FY1, PP_L1, PP_K1, PP_SINGLE,
  LANE_QUIET, QS_BYTES, QS_GL0, QS_GL1, QS_GM0, QS_GM1, QS_GG, QS_GB, QS_GS, QS_GT, QS_EN_MC0, QS_EN_MC1,
  QS_EN_LO0, QS_EN_LO1, QS_EN_SEC, QS_EN_MID, QS_EN_TD, QS_MID, QS_TDH, QS_OY, QS_SWG, QS_GREL, QS_PK0,
  QS_PK1, QS_MC0, QS_MC1, QS_PV, QS_PF, QS_TS, QS_OLD, QS_HI, QS_N, QS_LIMIT, QS_TLIM, QS_HMIN, QS_ON, QS_LASTH,
  QS_LIFT, QS_REACH,
} from "./rk/biped-x2";
import { EV_LIFTOFF, EV_MAX_COMPRESSION, locateStance, refine, reachFactor, liftoffStep, liftoffInReach } from "./rk/events";
import { tracing, traceStride, emit2, traceNext } from "./trace";

const LOCATE_TOL: f64 = 1e-9; // event location tolerance in step fractions, as the stance driver
const MAX_ATTACK: f64 = 1.5707963267948966 + 1e-15;
const SCRATCH_RECORD: usize = memory.data(8 * R_SIZE, 16);

// Per-leg state, (2 x LF_N) f64: foot positions are absolute.
const LF_ON = 0; // 1 in stance
const LF_FX = 1; // m, foot x
const LF_FY = 2; // m, foot (ground) height
const LF_L0 = 3; // m, rest length
const LF_KC = 4; // N/m, until the leg's maximum compression
const LF_KE = 5; // N/m, after it
const LF_K = 6; // N/m, current
const LF_C = 7; // N·s/m
const LF_COMPRESSING = 8; // 1 until the maximum compression of this stance
const LF_SPLIT = 9; // 1 when kc != ke
const LF_KSCALE = 10; // factor on the stiffness schedule (leg and rollout)
const LF_PEAK = 11; // N, peak force in the stride
const LF_MAXCOMP = 12; // m, largest compression in the stride
const LF_TD = 13; // s since the section, touchdown in this stride (NaN: none)
const LF_LO = 14; // s since the section, liftoff in this stride (NaN: none)
const LF_TOUCH_HEIGHT = 15; // m, L0 sin(attack) when the attack angle is fixed
const LF_N = 16;
const LEGS_DEFAULT: usize = memory.data(2 * LF_N * 8, 16);
let LEGS: usize = LEGS_DEFAULT; // the legs of the rollout in hand (runBipedBatch: of its lane)

// The state of the rollout in hand: every value that lives across a step, a stride or the
// rollout (the stride loop's and the contact loop's state included). S points at one block;
// runBipedBatch keeps one per lane and switches the pointer, so rollouts take turns between
// steps and each reads the state it wrote.
@unmanaged class BipedState {
  model: usize;
  mass: f64;
  gravity: f64;
  rtol: f64;
  atol: f64;
  maxSteps: i32;
  fixedAngle: bool;
  ox: f64;
  oy: f64;
  single: bool;
  stanceLeg: i32;
  timeScale: f64;
  reach: f64; // s: in single stance, a liftoff this close to a step's end is polished there (stance.ts)
  groundRel: f64;
  strideWalking: bool;
  tS: f64;
  tSec0: f64;
  h: f64;
  firstH: f64;
  firstStep: bool;
  steps: i32;
  rejected: i32;
  touchedDown: bool;
  sectionArmed: bool;
  swing: i32;
  armed: bool;
  swingGround: f64;
  peakVertical: f64;
  peakFriction: f64;
  tContactLimit: f64;
  minAttack: f64;
  maxAttack: f64;
  lostSpring: f64;
  endPx: f64;
  endPy: f64;
  endVx: f64;
  endVy: f64;
  endT: f64;
  endW: f64;
  endLeg: i32;
  endBoth: bool;
  relPx: f64;
  relPy: f64;
  undamped: bool;
  traceT0: f64;
  gl00: f64;
  gl01: f64;
  gm00: f64;
  gm01: f64;
  gt0: f64;
  gs0: f64;
  gg0: f64;
  gb0: f64;
  contactRec: usize;
  afterReject: bool;
  nonFinite: i32;
  stepsHere: i32;
  hMin: f64;
  strides: i32;
  rec0: usize;
  summary: usize;
  strideIndex: i32;
  strideRec: usize;
  targetHeight: f64;
  targetSpeed: f64;
  stream: u64;
  section: i32;
  apexY: f64;
  apexVx: f64;
  offset: f64;
  leg: i32;
  apexX: f64;
  apexT: f64;
  prevHeight: f64;
  prevSpeed: f64;
  prevOffset: f64;
  status: i32;
  completed: i32;
  maxForce: f64;
  maxFriction: f64;
  maxCompression: f64;
  maxVertical: f64;
  sumSqHeight: f64;
  sumSqSpeed: f64;
  allSteps: i32;
  allRejected: i32;
  scratchRecord: usize;
}
const STATE_DEFAULT: usize = memory.data(<i32>offsetof<BipedState>(), 16);
let S: BipedState = changetype<BipedState>(STATE_DEFAULT);

@inline function lg(i: i32, f: i32): f64 {
  return load<f64>(LEGS + (<usize>(i * LF_N + f) << 3));
}
@inline function ls(i: i32, f: i32, v: f64): void {
  store<f64>(LEGS + (<usize>(i * LF_N + f) << 3), v);
}
// Leg j's contact begins at time t: its foot pinned at footX on the swing leg's ground, its
// stiffness chosen for this contact (chooseStiffness), compressing.
function legTouchdown(s: BipedState, j: i32, footX: f64, t: f64): void {
  ls(j, LF_ON, 1.0);
  ls(j, LF_FX, footX);
  ls(j, LF_FY, s.swingGround);
  chooseStiffness(s.model, t, lg(j, LF_KSCALE));
  ls(j, LF_KC, stanceKc);
  ls(j, LF_KE, stanceKe);
  ls(j, LF_K, stanceKc);
  ls(j, LF_SPLIT, stanceSplit ? 1.0 : 0.0);
  ls(j, LF_COMPRESSING, 1.0);
  ls(j, LF_TD, t);
}

@inline function put(p: usize, field: i32, v: f64): void {
  store<f64>(p + (<usize>field << 3), v);
}
@inline function get(p: usize, field: i32): f64 {
  return load<f64>(p + (<usize>field << 3));
}

// Rollout constants.

// Integration frame: (px, py) = body - origin, the origin a foot in stance.

// Stride state.

// End of contact: the state (relative to the origin) and time since the section.


const END_SECTION: i32 = -1;
const END_FLIGHT: i32 = -2;

// Events (values cross from < 0 to >= 0, EVB_BACKWARD from <= 0 to > 0).
const EVB_LIFTOFF = 0; // r - L0, or -force with damping
const EVB_MAX_COMPRESSION = 1; // r'
const EVB_TOUCHDOWN = 2; // L0 sin(attack) - (y - ground) of the swing leg
const EVB_SECTION = 3; // -vy
const EVB_GROUND = 4; // lowest stance foot - y
const EVB_BACKWARD = 5; // -vx
const EVB_MIDSTANCE = 6; // body x - stance foot x

@inline function footRx(i: i32): f64 {
  return lg(i, LF_FX) - S.ox;
}
@inline function footRy(i: i32): f64 {
  return lg(i, LF_FY) - S.oy;
}

function legR(i: i32, p: usize): f64 {
  const dx = load<f64>(p, 0) - footRx(i);
  const dy = load<f64>(p, 8) - footRy(i);
  return Math.sqrt(dx * dx + dy * dy);
}

function legRdot(i: i32, p: usize): f64 {
  const dx = load<f64>(p, 0) - footRx(i);
  const dy = load<f64>(p, 8) - footRy(i);
  return (dx * load<f64>(p, 16) + dy * load<f64>(p, 24)) / Math.sqrt(dx * dx + dy * dy);
}

// Leg force along the leg, N (positive pushes); 0 for a leg in swing.
function legForceAt(i: i32, p: usize): f64 {
  if (lg(i, LF_ON) == 0.0) return 0.0;
  return lg(i, LF_K) * (lg(i, LF_L0) - legR(i, p)) - lg(i, LF_C) * legRdot(i, p);
}

// r'' = (|v|^2 + d.a - r'^2) / r, a from the derivative buffer d.
function legRddot(i: i32, p: usize, d: usize): f64 {
  const dx = load<f64>(p, 0) - footRx(i);
  const dy = load<f64>(p, 8) - footRy(i);
  const vx = load<f64>(p, 16);
  const vy = load<f64>(p, 24);
  const r = Math.sqrt(dx * dx + dy * dy);
  const rdot = (dx * vx + dy * vy) / r;
  return (vx * vx + vy * vy + dx * load<f64>(d, 16) + dy * load<f64>(d, 24) - rdot * rdot) / r;
}

function lowestFoot(): f64 {
  let low: f64 = Infinity;
  for (let i = 0; i < 2; i++) if (lg(i, LF_ON) != 0.0 && footRy(i) < low) low = footRy(i);
  return low;
}

function evValue(ev: i32, leg: i32, p: usize, t: f64): f64 {
  const s = S;
  if (ev == EVB_LIFTOFF) {
    if (lg(leg, LF_C) == 0.0) return legR(leg, p) - lg(leg, LF_L0);
    return -legForceAt(leg, p);
  }
  if (ev == EVB_MAX_COMPRESSION) return legRdot(leg, p);
  if (ev == EVB_TOUCHDOWN) {
    const height = s.fixedAngle ? lg(leg, LF_TOUCH_HEIGHT) : lg(leg, LF_L0) * legSin(attackAt(s.model, s.tSec0 + t));
    return height - (load<f64>(p, 8) + s.oy - s.swingGround);
  }
  if (ev == EVB_SECTION) return -load<f64>(p, 24);
  if (ev == EVB_GROUND) return lowestFoot() - load<f64>(p, 8);
  if (ev == EVB_BACKWARD) return -load<f64>(p, 16);
  return load<f64>(p, 0) - footRx(leg); // EVB_MIDSTANCE
}

// dg/dt at the state p with derivative d, for the Newton polish.
function evRate(ev: i32, leg: i32, p: usize, d: usize, t: f64): f64 {
  const s = S;
  if (ev == EVB_LIFTOFF) {
    if (lg(leg, LF_C) == 0.0) return legRdot(leg, p);
    return lg(leg, LF_K) * legRdot(leg, p) + lg(leg, LF_C) * legRddot(leg, p, d);
  }
  if (ev == EVB_MAX_COMPRESSION) return legRddot(leg, p, d);
  if (ev == EVB_TOUCHDOWN) {
    return lg(leg, LF_L0) * legCos(attackAt(s.model, s.tSec0 + t)) * angleRateAt(s.model, s.tSec0 + t) - load<f64>(p, 24);
  }
  if (ev == EVB_SECTION) return -load<f64>(d, 24);
  if (ev == EVB_GROUND) return -load<f64>(p, 24);
  if (ev == EVB_BACKWARD) return -load<f64>(d, 16);
  return load<f64>(p, 16);
}

@inline function crossesB(ev: i32, g0: f64, g1: f64): bool {
  if (ev == EVB_BACKWARD) return g0 <= 0.0 && g1 > 0.0;
  return g0 < 0.0 && g1 >= 0.0;
}

// dense() (dopri5.ts) on the rollout's buffers, its arithmetic: the first four components two at
// a time in f64x2 (each lane the scalar expression's operations in its order), the fifth scalar.
function denseB(theta: f64): void {
  const t2 = theta * theta;
  const t3 = t2 * theta;
  const t4 = t3 * theta;
  const q1 = P11 * theta + P12 * t2 + P13 * t3 + P14 * t4;
  const q3 = P32 * t2 + P33 * t3 + P34 * t4;
  const q4 = P42 * t2 + P43 * t3 + P44 * t4;
  const q5 = P52 * t2 + P53 * t3 + P54 * t4;
  const q6 = P62 * t2 + P63 * t3 + P64 * t4;
  const q7 = P72 * t2 + P73 * t3 + P74 * t4;
  const h = getLastH();
  const vq1 = f64x2.splat(q1);
  const vq3 = f64x2.splat(q3);
  const vq4 = f64x2.splat(q4);
  const vq5 = f64x2.splat(q5);
  const vq6 = f64x2.splat(q6);
  const vq7 = f64x2.splat(q7);
  const vh = f64x2.splat(h);
  for (let j: usize = 0; j < 32; j += 16) {
    let acc = f64x2.add(f64x2.mul(vq1, v128.load(K1 + j)), f64x2.mul(vq3, v128.load(K3 + j)));
    acc = f64x2.add(acc, f64x2.mul(vq4, v128.load(K4 + j)));
    acc = f64x2.add(acc, f64x2.mul(vq5, v128.load(K5 + j)));
    acc = f64x2.add(acc, f64x2.mul(vq6, v128.load(K6 + j)));
    acc = f64x2.add(acc, f64x2.mul(vq7, v128.load(K7 + j)));
    v128.store(YI + j, f64x2.add(v128.load(Y0 + j), f64x2.mul(vh, acc)));
  }
  store<f64>(YI, load<f64>(Y0, 32) + h * (q1 * load<f64>(K1, 32) + q3 * load<f64>(K3, 32) + q4 * load<f64>(K4, 32) + q5 * load<f64>(K5, 32) + q6 * load<f64>(K6, 32) + q7 * load<f64>(K7, 32)), 32);
}

// Fraction of the last step (from a, where the value is ga) where g crosses, on the interpolant
// (Illinois method, as events.ts).
function locateB(ev: i32, leg: i32, a0: f64, ga0: f64, gb0: f64, t0: f64, hh: f64): f64 {
  let a = a0;
  let b: f64 = 1.0;
  let ga = ga0;
  let gb = gb0;
  if (gb == 0.0) return 1.0;
  let side = 0;
  for (let it = 0; it < 80; it++) {
    let theta = (a * gb - b * ga) / (gb - ga);
    if (!(theta > a && theta < b)) theta = 0.5 * (a + b);
    denseB(theta);
    const g = evValue(ev, leg, YI, t0 + theta * hh);
    const upper = ev == EVB_BACKWARD ? g > 0.0 : g >= 0.0;
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
    if (b - a < LOCATE_TOL) break;
  }
  return b;
}

// Newton polish of an event on the true solution: YN holds the step of size hEvent from Y0, at
// the time the interpolant located, so the Newton shift dt is of the size of the interpolant's
// error. A tiny shift moves the state along the flow by Taylor's formula (position to second
// order, velocity to first: the neglected terms are O(dt^2) in the velocity, far below the
// stepper's error for |dt| <= 1e-7 of the time scale); a larger one re-takes the step to the
// corrected time. Returns the polished step size (YN, K7 the polished state and derivative).
function polishB(ev: i32, leg: i32, hEvent: f64): f64 {
  const s = S;
  let he = hEvent;
  for (let it = 0; it < 3; it++) {
    const g = evValue(ev, leg, YN, s.tS + he);
    const gd = evRate(ev, leg, YN, K7, s.tS + he);
    if (gd == 0.0 || !isFinite(gd)) break;
    const dt = -g / gd;
    if (!(Math.abs(dt) > 1e-17 * s.timeScale)) break;
    if (Math.abs(dt) > 1e-4 * s.timeScale || !(he + dt > 0.0)) break;
    he += dt;
    if (Math.abs(dt) > 1e-7 * s.timeScale) {
      bstep(he);
      continue;
    }
    const vx = load<f64>(YN, 16);
    const vy = load<f64>(YN, 24);
    const ax = load<f64>(K7, 16);
    const ay = load<f64>(K7, 24);
    const half = 0.5 * dt * dt;
    store<f64>(YN, load<f64>(YN, 0) + vx * dt + ax * half, 0);
    store<f64>(YN, load<f64>(YN, 8) + vy * dt + ay * half, 8);
    store<f64>(YN, vx + ax * dt, 16);
    store<f64>(YN, vy + ay * dt, 24);
    store<f64>(YN, load<f64>(YN, 32) + load<f64>(K7, 32) * dt, 32);
    rhs(YN, K7);
  }
  return he;
}

// Undamped legs: the damper's work stays exactly 0 (its rate c r'^2 is 0), so the stepper can
// leave it out. step4 is the shared Dormand-Prince step (rk/dopri5.ts) on the first four
// components with the right-hand side of the legs in stance written in, its stage derivatives
// kept in locals (the stores are for dense() only; single support: the single-leg stance's
// arithmetic, system.ts; double support: both legs', as system.ts), less the damper term c r'
// (with c = 0 the shared step subtracts a zero: the same value, one multiply and the leg
// speed r' fewer on the stage's critical path). Every other operation on those components is
// the shared step's, in the same order, and the fifth component only ever added 0 to the error
// sum, so for finite states the result is bit for bit the shared step's; the fifth slots of
// the buffers hold 0 (zeroFifth) for dense() and the polish.

function step4(h: f64): f64 {
  const s = S;
  // the stage sums of step() (dopri5.ts): (y + h (older terms)) + (h A) (newest stage)
  const hA21 = h * A21;
  const hA32 = h * A32;
  const hA43 = h * A43;
  const hA54 = h * A54;
  const hA65 = h * A65;
  const hB6 = h * B6;
  setLastH(h);
  const y0 = load<f64>(Y0, 0);
  const y1 = load<f64>(Y0, 8);
  const y2 = load<f64>(Y0, 16);
  const y3 = load<f64>(Y0, 24);
  const a0 = load<f64>(K1, 0);
  const a1 = load<f64>(K1, 8);
  const a2 = load<f64>(K1, 16);
  const a3 = load<f64>(K1, 24);
  const bp0 = y0 + hA21 * a0;
  const bp1 = y1 + hA21 * a1;
  const bp2 = y2 + hA21 * a2;
  const bp3 = y3 + hA21 * a3;
  let b2: f64, b3: f64;
  if (s.single) {
    const rsq = bp0 * bp0 + bp1 * bp1;
    const r = Math.sqrt(rsq);
    const inv = r * (1.0 / rsq);
    const f = stanceKInvM * (sysLeg - r); // as stanceRhs (system.ts)
    b2 = f * (inv * bp0);
    b3 = f * (inv * bp1) - stanceG;
  } else {
    const dx0 = bp0 - bipedFx0;
    const dy0 = bp1 - bipedFy0;
    const r0sq = dx0 * dx0 + dy0 * dy0;
    const r0 = Math.sqrt(r0sq);
    const inv0 = r0 * (1.0 / r0sq);
    const f0 = bipedKInvM0 * (bipedL0 - r0); // F/m of leg 0, as bipedRhs (system.ts)
    const dx1 = bp0 - bipedFx1;
    const dy1 = bp1 - bipedFy1;
    const r1sq = dx1 * dx1 + dy1 * dy1;
    const r1 = Math.sqrt(r1sq);
    const inv1 = r1 * (1.0 / r1sq);
    const f1 = bipedKInvM1 * (bipedL1 - r1);
    b2 = f0 * (inv0 * dx0) + f1 * (inv1 * dx1);
    b3 = f0 * (inv0 * dy0) + f1 * (inv1 * dy1) - stanceG;
  }
  const b0 = bp2;
  const b1 = bp3;
  store<f64>(K2, b0, 0);
  store<f64>(K2, b1, 8);
  store<f64>(K2, b2, 16);
  store<f64>(K2, b3, 24);
  const cp0 = y0 + h * (A31 * a0) + hA32 * b0;
  const cp1 = y1 + h * (A31 * a1) + hA32 * b1;
  const cp2 = y2 + h * (A31 * a2) + hA32 * b2;
  const cp3 = y3 + h * (A31 * a3) + hA32 * b3;
  let c2: f64, c3: f64;
  if (s.single) {
    const rsq = cp0 * cp0 + cp1 * cp1;
    const r = Math.sqrt(rsq);
    const inv = r * (1.0 / rsq);
    const f = stanceKInvM * (sysLeg - r); // as stanceRhs (system.ts)
    c2 = f * (inv * cp0);
    c3 = f * (inv * cp1) - stanceG;
  } else {
    const dx0 = cp0 - bipedFx0;
    const dy0 = cp1 - bipedFy0;
    const r0sq = dx0 * dx0 + dy0 * dy0;
    const r0 = Math.sqrt(r0sq);
    const inv0 = r0 * (1.0 / r0sq);
    const f0 = bipedKInvM0 * (bipedL0 - r0); // F/m of leg 0, as bipedRhs (system.ts)
    const dx1 = cp0 - bipedFx1;
    const dy1 = cp1 - bipedFy1;
    const r1sq = dx1 * dx1 + dy1 * dy1;
    const r1 = Math.sqrt(r1sq);
    const inv1 = r1 * (1.0 / r1sq);
    const f1 = bipedKInvM1 * (bipedL1 - r1);
    c2 = f0 * (inv0 * dx0) + f1 * (inv1 * dx1);
    c3 = f0 * (inv0 * dy0) + f1 * (inv1 * dy1) - stanceG;
  }
  const c0 = cp2;
  const c1 = cp3;
  store<f64>(K3, c0, 0);
  store<f64>(K3, c1, 8);
  store<f64>(K3, c2, 16);
  store<f64>(K3, c3, 24);
  const dp0 = y0 + h * (A41 * a0 + A42 * b0) + hA43 * c0;
  const dp1 = y1 + h * (A41 * a1 + A42 * b1) + hA43 * c1;
  const dp2 = y2 + h * (A41 * a2 + A42 * b2) + hA43 * c2;
  const dp3 = y3 + h * (A41 * a3 + A42 * b3) + hA43 * c3;
  let d2: f64, d3: f64;
  if (s.single) {
    const rsq = dp0 * dp0 + dp1 * dp1;
    const r = Math.sqrt(rsq);
    const inv = r * (1.0 / rsq);
    const f = stanceKInvM * (sysLeg - r); // as stanceRhs (system.ts)
    d2 = f * (inv * dp0);
    d3 = f * (inv * dp1) - stanceG;
  } else {
    const dx0 = dp0 - bipedFx0;
    const dy0 = dp1 - bipedFy0;
    const r0sq = dx0 * dx0 + dy0 * dy0;
    const r0 = Math.sqrt(r0sq);
    const inv0 = r0 * (1.0 / r0sq);
    const f0 = bipedKInvM0 * (bipedL0 - r0); // F/m of leg 0, as bipedRhs (system.ts)
    const dx1 = dp0 - bipedFx1;
    const dy1 = dp1 - bipedFy1;
    const r1sq = dx1 * dx1 + dy1 * dy1;
    const r1 = Math.sqrt(r1sq);
    const inv1 = r1 * (1.0 / r1sq);
    const f1 = bipedKInvM1 * (bipedL1 - r1);
    d2 = f0 * (inv0 * dx0) + f1 * (inv1 * dx1);
    d3 = f0 * (inv0 * dy0) + f1 * (inv1 * dy1) - stanceG;
  }
  const d0 = dp2;
  const d1 = dp3;
  store<f64>(K4, d0, 0);
  store<f64>(K4, d1, 8);
  store<f64>(K4, d2, 16);
  store<f64>(K4, d3, 24);
  const ep0 = y0 + h * (A51 * a0 + A52 * b0 + A53 * c0) + hA54 * d0;
  const ep1 = y1 + h * (A51 * a1 + A52 * b1 + A53 * c1) + hA54 * d1;
  const ep2 = y2 + h * (A51 * a2 + A52 * b2 + A53 * c2) + hA54 * d2;
  const ep3 = y3 + h * (A51 * a3 + A52 * b3 + A53 * c3) + hA54 * d3;
  let e2: f64, e3: f64;
  if (s.single) {
    const rsq = ep0 * ep0 + ep1 * ep1;
    const r = Math.sqrt(rsq);
    const inv = r * (1.0 / rsq);
    const f = stanceKInvM * (sysLeg - r); // as stanceRhs (system.ts)
    e2 = f * (inv * ep0);
    e3 = f * (inv * ep1) - stanceG;
  } else {
    const dx0 = ep0 - bipedFx0;
    const dy0 = ep1 - bipedFy0;
    const r0sq = dx0 * dx0 + dy0 * dy0;
    const r0 = Math.sqrt(r0sq);
    const inv0 = r0 * (1.0 / r0sq);
    const f0 = bipedKInvM0 * (bipedL0 - r0); // F/m of leg 0, as bipedRhs (system.ts)
    const dx1 = ep0 - bipedFx1;
    const dy1 = ep1 - bipedFy1;
    const r1sq = dx1 * dx1 + dy1 * dy1;
    const r1 = Math.sqrt(r1sq);
    const inv1 = r1 * (1.0 / r1sq);
    const f1 = bipedKInvM1 * (bipedL1 - r1);
    e2 = f0 * (inv0 * dx0) + f1 * (inv1 * dx1);
    e3 = f0 * (inv0 * dy0) + f1 * (inv1 * dy1) - stanceG;
  }
  const e0 = ep2;
  const e1 = ep3;
  store<f64>(K5, e0, 0);
  store<f64>(K5, e1, 8);
  store<f64>(K5, e2, 16);
  store<f64>(K5, e3, 24);
  const fp0 = y0 + h * (A61 * a0 + A62 * b0 + A63 * c0 + A64 * d0) + hA65 * e0;
  const fp1 = y1 + h * (A61 * a1 + A62 * b1 + A63 * c1 + A64 * d1) + hA65 * e1;
  const fp2 = y2 + h * (A61 * a2 + A62 * b2 + A63 * c2 + A64 * d2) + hA65 * e2;
  const fp3 = y3 + h * (A61 * a3 + A62 * b3 + A63 * c3 + A64 * d3) + hA65 * e3;
  let f2: f64, f3: f64;
  if (s.single) {
    const rsq = fp0 * fp0 + fp1 * fp1;
    const r = Math.sqrt(rsq);
    const inv = r * (1.0 / rsq);
    const f = stanceKInvM * (sysLeg - r); // as stanceRhs (system.ts)
    f2 = f * (inv * fp0);
    f3 = f * (inv * fp1) - stanceG;
  } else {
    const dx0 = fp0 - bipedFx0;
    const dy0 = fp1 - bipedFy0;
    const r0sq = dx0 * dx0 + dy0 * dy0;
    const r0 = Math.sqrt(r0sq);
    const inv0 = r0 * (1.0 / r0sq);
    const f0 = bipedKInvM0 * (bipedL0 - r0); // F/m of leg 0, as bipedRhs (system.ts)
    const dx1 = fp0 - bipedFx1;
    const dy1 = fp1 - bipedFy1;
    const r1sq = dx1 * dx1 + dy1 * dy1;
    const r1 = Math.sqrt(r1sq);
    const inv1 = r1 * (1.0 / r1sq);
    const f1 = bipedKInvM1 * (bipedL1 - r1);
    f2 = f0 * (inv0 * dx0) + f1 * (inv1 * dx1);
    f3 = f0 * (inv0 * dy0) + f1 * (inv1 * dy1) - stanceG;
  }
  const f0 = fp2;
  const f1 = fp3;
  store<f64>(K6, f0, 0);
  store<f64>(K6, f1, 8);
  store<f64>(K6, f2, 16);
  store<f64>(K6, f3, 24);
  const n0 = y0 + h * (B1 * a0 + B3 * c0 + B4 * d0 + B5 * e0) + hB6 * f0;
  const n1 = y1 + h * (B1 * a1 + B3 * c1 + B4 * d1 + B5 * e1) + hB6 * f1;
  const n2 = y2 + h * (B1 * a2 + B3 * c2 + B4 * d2 + B5 * e2) + hB6 * f2;
  const n3 = y3 + h * (B1 * a3 + B3 * c3 + B4 * d3 + B5 * e3) + hB6 * f3;
  store<f64>(YN, n0, 0);
  store<f64>(YN, n1, 8);
  store<f64>(YN, n2, 16);
  store<f64>(YN, n3, 24);
  const gp0 = n0;
  const gp1 = n1;
  const gp2 = n2;
  const gp3 = n3;
  let g2: f64, g3: f64;
  if (s.single) {
    const rsq = gp0 * gp0 + gp1 * gp1;
    const r = Math.sqrt(rsq);
    const inv = r * (1.0 / rsq);
    const f = stanceKInvM * (sysLeg - r); // as stanceRhs (system.ts)
    g2 = f * (inv * gp0);
    g3 = f * (inv * gp1) - stanceG;
  } else {
    const dx0 = gp0 - bipedFx0;
    const dy0 = gp1 - bipedFy0;
    const r0sq = dx0 * dx0 + dy0 * dy0;
    const r0 = Math.sqrt(r0sq);
    const inv0 = r0 * (1.0 / r0sq);
    const f0 = bipedKInvM0 * (bipedL0 - r0); // F/m of leg 0, as bipedRhs (system.ts)
    const dx1 = gp0 - bipedFx1;
    const dy1 = gp1 - bipedFy1;
    const r1sq = dx1 * dx1 + dy1 * dy1;
    const r1 = Math.sqrt(r1sq);
    const inv1 = r1 * (1.0 / r1sq);
    const f1 = bipedKInvM1 * (bipedL1 - r1);
    g2 = f0 * (inv0 * dx0) + f1 * (inv1 * dx1);
    g3 = f0 * (inv0 * dy0) + f1 * (inv1 * dy1) - stanceG;
  }
  const g0 = gp2;
  const g1 = gp3;
  store<f64>(K7, g0, 0);
  store<f64>(K7, g1, 8);
  store<f64>(K7, g2, 16);
  store<f64>(K7, g3, 24);
  let sum: f64 = 0.0;
  let finite: f64 = 0.0; // stays 0 (not NaN) only if every new component is finite
  {
    const e = h * (E1 * a0 + E3 * c0 + E4 * d0 + E5 * e0 + E6 * f0 + E7 * g0);
    const sc = s.atol + s.rtol * Math.max(Math.abs(y0), Math.abs(n0));
    const q = e / sc;
    sum += q * q;
    finite += n0 - n0;
  }
  {
    const e = h * (E1 * a1 + E3 * c1 + E4 * d1 + E5 * e1 + E6 * f1 + E7 * g1);
    const sc = s.atol + s.rtol * Math.max(Math.abs(y1), Math.abs(n1));
    const q = e / sc;
    sum += q * q;
    finite += n1 - n1;
  }
  {
    const e = h * (E1 * a2 + E3 * c2 + E4 * d2 + E5 * e2 + E6 * f2 + E7 * g2);
    const sc = s.atol + s.rtol * Math.max(Math.abs(y2), Math.abs(n2));
    const q = e / sc;
    sum += q * q;
    finite += n2 - n2;
  }
  {
    const e = h * (E1 * a3 + E3 * c3 + E4 * d3 + E5 * e3 + E6 * f3 + E7 * g3);
    const sc = s.atol + s.rtol * Math.max(Math.abs(y3), Math.abs(n3));
    const q = e / sc;
    sum += q * q;
    finite += n3 - n3;
  }
  const err = Math.sqrt(sum / 4.0);
  // A NaN or infinity anywhere in the stages shows up in err or in YN.
  if (!isFinite(err) || finite != 0.0) return NaN;
  return err;
}



// The fifth (damper work) slot of every buffer step4 leaves alone, set to 0.
function zeroFifth(): void {
  store<f64>(Y0, 0.0, 32);
  store<f64>(K1, 0.0, 32);
  store<f64>(K2, 0.0, 32);
  store<f64>(K3, 0.0, 32);
  store<f64>(K4, 0.0, 32);
  store<f64>(K5, 0.0, 32);
  store<f64>(K6, 0.0, 32);
  store<f64>(K7, 0.0, 32);
  store<f64>(YN, 0.0, 32);
}

// One step of the contact: step4 with undamped legs, else the shared step.
@inline function bstep(hh: f64): f64 {
  const s = S;
  return s.undamped ? step4(hh) : step(hh, s.rtol, s.atol);
}

// Set the right-hand side for the legs in stance (the origin is a stance foot).
function configure(): void {
  const s = S;
  const on0 = lg(0, LF_ON) != 0.0;
  const on1 = lg(1, LF_ON) != 0.0;
  let kMin: f64 = Infinity;
  let damped = false;
  for (let i = 0; i < 2; i++) {
    if (lg(i, LF_ON) == 0.0) continue;
    const kc = lg(i, LF_KC);
    const ke = lg(i, LF_KE);
    const k = kc < ke ? kc : ke;
    if (k < kMin) kMin = k;
    if (lg(i, LF_C) > 0.0) damped = true;
  }
  s.timeScale = Math.sqrt(s.mass / kMin);
  s.groundRel = lowestFoot();
  if (on0 && on1) {
    s.single = false;
    setBiped(
      s.mass, s.gravity,
      footRx(0), footRy(0), lg(0, LF_L0), lg(0, LF_K), lg(0, LF_C),
      footRx(1), footRy(1), lg(1, LF_L0), lg(1, LF_K), lg(1, LF_C),
    );
  } else {
    s.single = true;
    s.stanceLeg = on0 ? 0 : 1;
    s.swing = 1 - s.stanceLeg;
    // the stance driver's reach (stance.ts, stanceStart), from the stance leg's stiffnesses
    const kc = lg(s.stanceLeg, LF_KC);
    const ke = lg(s.stanceLeg, LF_KE);
    s.reach = (kc == ke ? s.timeScale : Math.sqrt(s.mass / (kc > ke ? kc : ke))) * reachFactor(s.rtol);
    setStance(s.mass, lg(s.stanceLeg, LF_L0), lg(s.stanceLeg, LF_K), lg(s.stanceLeg, LF_C), s.gravity);
  }
  setErrorDimension(damped ? 5 : 4);
}

// Step-end leg forces, compressions and summed ground force, computed with the event values.
let stepForce0: f64 = 0.0;
let stepForce1: f64 = 0.0;
let stepComp0: f64 = 0.0;
let stepComp1: f64 = 0.0;
let stepFx: f64 = 0.0;
let stepFy: f64 = 0.0;

function notePeaks(): void {
  const s = S;
  if (stepForce0 > lg(0, LF_PEAK)) ls(0, LF_PEAK, stepForce0);
  if (stepForce1 > lg(1, LF_PEAK)) ls(1, LF_PEAK, stepForce1);
  if (stepComp0 > lg(0, LF_MAXCOMP)) ls(0, LF_MAXCOMP, stepComp0);
  if (stepComp1 > lg(1, LF_MAXCOMP)) ls(1, LF_MAXCOMP, stepComp1);
  if (stepFy > s.peakVertical) s.peakVertical = stepFy;
  if (stepFy > 0.0) {
    const fr = Math.abs(stepFx / stepFy);
    if (fr > s.peakFriction) s.peakFriction = fr;
  }
}

// Peak leg forces, compressions, summed vertical force and friction ratio at the state p: one
// square root per leg in stance (this runs at every accepted step).
function noteForces(p: usize): void {
  const s = S;
  const px = load<f64>(p, 0);
  const py = load<f64>(p, 8);
  const vx = load<f64>(p, 16);
  const vy = load<f64>(p, 24);
  let fx: f64 = 0.0;
  let fy: f64 = 0.0;
  for (let i = 0; i < 2; i++) {
    if (lg(i, LF_ON) == 0.0) continue;
    const dx = px - footRx(i);
    const dy = py - footRy(i);
    const r = Math.sqrt(dx * dx + dy * dy);
    const inv = 1.0 / r;
    const c = lg(i, LF_L0) - r;
    const f = lg(i, LF_K) * c - lg(i, LF_C) * (dx * vx + dy * vy) * inv;
    if (f > lg(i, LF_PEAK)) ls(i, LF_PEAK, f);
    if (c > lg(i, LF_MAXCOMP)) ls(i, LF_MAXCOMP, c);
    fx += f * dx * inv;
    fy += f * dy * inv;
  }
  if (fy > s.peakVertical) s.peakVertical = fy;
  if (fy > 0.0) {
    const fr = Math.abs(fx / fy);
    if (fr > s.peakFriction) s.peakFriction = fr;
  }
}

// Trace samples inside the last accepted step (from tS, size hh) up to the fraction thetaEnd.
function traceContact(hh: f64, thetaEnd: f64): void {
  const s = S;
  const tEnd = s.traceT0 + s.tSec0 + s.tS + thetaEnd * hh;
  for (;;) {
    const ts = traceNext(tEnd);
    if (ts < 0.0) return;
    const theta = (ts - s.traceT0 - s.tSec0 - s.tS) / hh;
    if (theta < 0.0) continue;
    denseB(theta);
    emitAt(ts, YI, ts - s.traceT0);
  }
}

// One sample of the body at p (relative to the origin) at absolute time ts.
function emitAt(ts: f64, p: usize, tSec: f64): void {
  const s = S;
  const x = s.ox + load<f64>(p, 0);
  const y = s.oy + load<f64>(p, 8);
  const a = attackAt(s.model, tSec);
  let f0x: f64, f0y: f64, f1x: f64, f1y: f64;
  if (lg(0, LF_ON) != 0.0) { f0x = lg(0, LF_FX); f0y = lg(0, LF_FY); }
  else { f0x = x + lg(0, LF_L0) * legCos(a); f0y = y - lg(0, LF_L0) * legSin(a); }
  if (lg(1, LF_ON) != 0.0) { f1x = lg(1, LF_FX); f1y = lg(1, LF_FY); }
  else { f1x = x + lg(1, LF_L0) * legCos(a); f1y = y - lg(1, LF_L0) * legSin(a); }
  const phase = s.single ? PHASE_STANCE : PHASE_DOUBLE;
  emit2(ts, x, y, load<f64>(p, 16), load<f64>(p, 24), f0x, f0y, legForceAt(0, p), f1x, f1y, legForceAt(1, p), phase);
}

// Flight samples from (x0, y0, vx, vy0) at absolute t0 to absolute t1, both legs at the commanded
// angle `tAngle0 + (t - t0)` since the section (or held at `tAngle0` when hold is set).
function traceFlightB(t0: f64, t1: f64, x0: f64, y0: f64, vx: f64, vy0: f64, tAngle0: f64, hold: bool): void {
  for (;;) {
    const ts = traceNext(t1);
    if (ts < 0.0) return;
    const s = ts - t0;
    if (s < 0.0) continue;
    const x = x0 + vx * s;
    const y = y0 + vy0 * s - 0.5 * S.gravity * s * s;
    const a = attackAt(S.model, hold ? tAngle0 : tAngle0 + s);
    emit2(
      ts, x, y, vx, vy0 - S.gravity * s,
      x + lg(0, LF_L0) * legCos(a), y - lg(0, LF_L0) * legSin(a), 0.0,
      x + lg(1, LF_L0) * legCos(a), y - lg(1, LF_L0) * legSin(a), 0.0, PHASE_FLIGHT,
    );
  }
}

// Event values at the start of a contact piece (Y0).

function startValues(): void {
  const s = S;
  s.gl00 = lg(0, LF_ON) != 0.0 ? evValue(EVB_LIFTOFF, 0, Y0, s.tS) : 0.0;
  s.gl01 = lg(1, LF_ON) != 0.0 ? evValue(EVB_LIFTOFF, 1, Y0, s.tS) : 0.0;
  s.gm00 = lg(0, LF_ON) != 0.0 ? legRdot(0, Y0) : 0.0;
  s.gm01 = lg(1, LF_ON) != 0.0 ? legRdot(1, Y0) : 0.0;
  if (s.single) {
    s.armed = s.armed || evValue(EVB_MIDSTANCE, s.stanceLeg, Y0, s.tS) >= 0.0;
    s.gt0 = s.armed ? evValue(EVB_TOUCHDOWN, s.swing, Y0, s.tS) : evValue(EVB_MIDSTANCE, s.stanceLeg, Y0, s.tS);
  }
  s.gs0 = evValue(EVB_SECTION, 0, Y0, s.tS);
  s.gg0 = evValue(EVB_GROUND, 0, Y0, s.tS);
  s.gb0 = evValue(EVB_BACKWARD, 0, Y0, s.tS);
}

// The contact loop's own state, kept in globals (not locals) so that rollouts can take turns
// between steps (runBipedBatch): the record, the retry bookkeeping, the step floor.
const CONTACT_GO: i32 = -3; // the contact goes on: take a step of size h

// Integrate the contact phases from Y0 (time tS since the section) until the stride's section,
// a flight, or a failure. Returns END_SECTION, END_FLIGHT or a STATUS_* code. The loop is cut
// at the step: contactBegin, then contactBefore (CONTACT_GO or the end), the step of size h,
// contactAfter with its error (CONTACT_GO or the end), and so on.
function runContact(rec: usize): i32 {
  contactBegin(rec);
  for (;;) {
    let r = contactBefore();
    if (r != CONTACT_GO) return r;
    r = contactAfter(bstep(S.h));
    if (r != CONTACT_GO) return r;
  }
  return STATUS_STEP_LIMIT; // not reached: the loop returns
}

function contactBegin(rec: usize): void {
  const s = S;
  s.contactRec = rec;
  if (s.undamped) zeroFifth();
  configure();
  resetController();
  rhs(Y0, K1);
  startValues();
  s.afterReject = false;
  s.nonFinite = 0;
  s.stepsHere = 0;
  s.hMin = 1e-13 * s.timeScale;
  noteForces(Y0);
}

// The checks before each step: CONTACT_GO, or the status that ends the contact.
function contactBefore(): i32 {
  const s = S;
  if (s.stepsHere >= s.maxSteps) return STATUS_STEP_LIMIT;
  if (s.tS > s.tContactLimit) return s.single ? STATUS_NO_LIFTOFF : STATUS_STALLED;
  if (s.h < s.hMin) return STATUS_STEP_UNDERFLOW;
  return CONTACT_GO;
}

// After a step of size h with error err (bstep's value): rejection, or acceptance with the
// events inside the step. CONTACT_GO, or END_SECTION, END_FLIGHT or a STATUS_* code.
// The stance driver's liftoff tests for the stance leg `sl` of a single stance (stance.ts:
// liftoffInReach, towardLiftoff), on the leg's flags: undamped, its maximum compression behind it.
@inline function liftoffNear(sl: i32, gl1: f64, gm1: f64, reach: f64): bool {
  return lg(sl, LF_C) == 0.0 && lg(sl, LF_COMPRESSING) == 0.0 && liftoffInReach(gl1, gm1, reach);
}
@inline function towardLiftoffB(sl: i32, gl0: f64, gm0: f64, gl1: f64, gm1: f64, h: f64, hNext: f64): f64 {
  return lg(sl, LF_C) != 0.0 || lg(sl, LF_COMPRESSING) != 0.0 ? hNext : liftoffStep(gl0, gm0, gl1, gm1, h, hNext);
}

function contactAfter(err: f64): i32 {
  const s = S;
  const rec = s.contactRec;
  if (isNaN(err)) {
    s.rejected++;
    s.stepsHere++;
    if (++s.nonFinite > 40) return STATUS_NON_FINITE;
    s.h *= 0.1;
    s.afterReject = true;
    return CONTACT_GO;
  }
  if (err > 1.0) {
    s.rejected++;
    s.stepsHere++;
    s.h *= rejectFactor(err);
    s.afterReject = true;
    return CONTACT_GO;
  }
  if (s.firstStep) {
    s.firstH = s.h;
    s.firstStep = false;
  }
  s.steps++;
  s.stepsHere++;

  // Event values at the step end.
  let gl10: f64 = 0.0;
  let gl11: f64 = 0.0;
  let gm10: f64 = 0.0;
  let gm11: f64 = 0.0;
  if (s.single) {
    // exactly the stance driver's arithmetic (stance.ts), foot at the origin
    const npx = load<f64>(YN, 0);
    const npy = load<f64>(YN, 8);
    const nvx = load<f64>(YN, 16);
    const nr = Math.sqrt(npx * npx + npy * npy);
    const nrdot = (npx * nvx + npy * load<f64>(YN, 24)) / nr;
    const leg = lg(s.stanceLeg, LF_L0);
    const c = lg(s.stanceLeg, LF_C);
    const nforce = lg(s.stanceLeg, LF_K) * (leg - nr) - c * nrdot;
    const gl = c > 0.0 ? -nforce : nr - leg;
    if (s.stanceLeg == 0) { gl10 = gl; gm10 = nrdot; } else { gl11 = gl; gm11 = nrdot; }
    stepForce0 = s.stanceLeg == 0 ? nforce : 0.0;
    stepForce1 = s.stanceLeg == 1 ? nforce : 0.0;
    stepComp0 = s.stanceLeg == 0 ? leg - nr : 0.0;
    stepComp1 = s.stanceLeg == 1 ? leg - nr : 0.0;
    stepFx = (nforce * npx) / nr;
    stepFy = (nforce * npy) / nr;
  } else {
    // one square root per leg (the same values as evValue and legRdot)
    const npx = load<f64>(YN, 0);
    const npy = load<f64>(YN, 8);
    const nvx = load<f64>(YN, 16);
    const nvy = load<f64>(YN, 24);
    const dx0 = npx - footRx(0);
    const dy0 = npy - footRy(0);
    const r0 = Math.sqrt(dx0 * dx0 + dy0 * dy0);
    gm10 = (dx0 * nvx + dy0 * nvy) / r0;
    gl10 = lg(0, LF_C) == 0.0 ? r0 - lg(0, LF_L0) : -(lg(0, LF_K) * (lg(0, LF_L0) - r0) - lg(0, LF_C) * gm10);
    const dx1 = npx - footRx(1);
    const dy1 = npy - footRy(1);
    const r1 = Math.sqrt(dx1 * dx1 + dy1 * dy1);
    gm11 = (dx1 * nvx + dy1 * nvy) / r1;
    gl11 = lg(1, LF_C) == 0.0 ? r1 - lg(1, LF_L0) : -(lg(1, LF_K) * (lg(1, LF_L0) - r1) - lg(1, LF_C) * gm11);
    stepComp0 = lg(0, LF_L0) - r0;
    stepComp1 = lg(1, LF_L0) - r1;
    stepForce0 = lg(0, LF_K) * stepComp0 - lg(0, LF_C) * gm10;
    stepForce1 = lg(1, LF_K) * stepComp1 - lg(1, LF_C) * gm11;
    stepFx = (stepForce0 * dx0) / r0 + (stepForce1 * dx1) / r1;
    stepFy = (stepForce0 * dy0) / r0 + (stepForce1 * dy1) / r1;
  }
  const gs1 = -load<f64>(YN, 24);
  const gg1 = s.groundRel - load<f64>(YN, 8);
  const gb1 = -load<f64>(YN, 16);
  let gt1: f64 = 0.0;
  let armsHere = false;
  // single stance: the stance driver's liftoff in reach (stance.ts, liftoffInReach), polished at the step's end
  const sl = s.stanceLeg;
  const inReach = s.single && liftoffNear(sl, sl == 0 ? gl10 : gl11, sl == 0 ? gm10 : gm11, s.reach);

  let stopTheta: f64 = 2.0;
  let stopEvent = -1;
  let stopLeg = 0;
  // maximum compression of each leg: the first splits the stance with a split schedule; a leg
  // without one has every local maximum located (its force humps, e.g. a walking leg's two)
  let mTheta0: f64 = 2.0;
  let mTheta1: f64 = 2.0;
  if (lg(0, LF_ON) != 0.0 && (lg(0, LF_COMPRESSING) != 0.0 || lg(0, LF_SPLIT) == 0.0) && crossesB(EVB_MAX_COMPRESSION, s.gm00, gm10)) {
    mTheta0 = s.single ? locateStance(EV_MAX_COMPRESSION, s.gm00, gm10, s.h, LOCATE_TOL) : locateB(EVB_MAX_COMPRESSION, 0, 0.0, s.gm00, gm10, s.tS, s.h);
    if (lg(0, LF_SPLIT) != 0.0 && mTheta0 < stopTheta) { stopTheta = mTheta0; stopEvent = EVB_MAX_COMPRESSION; stopLeg = 0; }
  }
  if (lg(1, LF_ON) != 0.0 && (lg(1, LF_COMPRESSING) != 0.0 || lg(1, LF_SPLIT) == 0.0) && crossesB(EVB_MAX_COMPRESSION, s.gm01, gm11)) {
    mTheta1 = s.single ? locateStance(EV_MAX_COMPRESSION, s.gm01, gm11, s.h, LOCATE_TOL) : locateB(EVB_MAX_COMPRESSION, 1, 0.0, s.gm01, gm11, s.tS, s.h);
    if (lg(1, LF_SPLIT) != 0.0 && mTheta1 < stopTheta) { stopTheta = mTheta1; stopEvent = EVB_MAX_COMPRESSION; stopLeg = 1; }
  }
  if (inReach) {
    if (1.0 < stopTheta) { stopTheta = 1.0; stopEvent = EVB_LIFTOFF; stopLeg = sl; }
  } else if (lg(0, LF_ON) != 0.0 && crossesB(EVB_LIFTOFF, s.gl00, gl10)) {
    const th = s.single ? locateStance(EV_LIFTOFF, s.gl00, gl10, s.h, LOCATE_TOL) : locateB(EVB_LIFTOFF, 0, 0.0, s.gl00, gl10, s.tS, s.h);
    if (th < stopTheta) { stopTheta = th; stopEvent = EVB_LIFTOFF; stopLeg = 0; }
  }
  if (!inReach && lg(1, LF_ON) != 0.0 && crossesB(EVB_LIFTOFF, s.gl01, gl11)) {
    const th = s.single ? locateStance(EV_LIFTOFF, s.gl01, gl11, s.h, LOCATE_TOL) : locateB(EVB_LIFTOFF, 1, 0.0, s.gl01, gl11, s.tS, s.h);
    if (th < stopTheta) { stopTheta = th; stopEvent = EVB_LIFTOFF; stopLeg = 1; }
  }
  if (crossesB(EVB_GROUND, s.gg0, gg1)) {
    const th = locateB(EVB_GROUND, 0, 0.0, s.gg0, gg1, s.tS, s.h);
    if (th < stopTheta) { stopTheta = th; stopEvent = EVB_GROUND; }
  }
  if (crossesB(EVB_BACKWARD, s.gb0, gb1)) {
    const th = locateB(EVB_BACKWARD, 0, 0.0, s.gb0, gb1, s.tS, s.h);
    if (th < stopTheta) { stopTheta = th; stopEvent = EVB_BACKWARD; }
  }
  if (s.single && s.sectionArmed && crossesB(EVB_SECTION, s.gs0, gs1)) {
    const th = locateB(EVB_SECTION, 0, 0.0, s.gs0, gs1, s.tS, s.h);
    if (th < stopTheta) { stopTheta = th; stopEvent = EVB_SECTION; }
  }
  if (s.single) {
    // The swing leg: armed once the body passes midstance of the stance leg, then touches
    // down at the next downward crossing of its touchdown height, the body descending.
    let from: f64 = 0.0;
    let gFrom = s.gt0;
    let look = s.armed;
    if (!s.armed) {
      const gmid1 = load<f64>(YN, 0) - footRx(s.stanceLeg); // evValue(EVB_MIDSTANCE, ...) written in
      if (crossesB(EVB_MIDSTANCE, s.gt0, gmid1)) {
        from = locateB(EVB_MIDSTANCE, s.stanceLeg, 0.0, s.gt0, gmid1, s.tS, s.h);
        denseB(from);
        gFrom = evValue(EVB_TOUCHDOWN, s.swing, YI, s.tS + from * s.h);
        armsHere = true;
        look = true;
      } else {
        gt1 = gmid1;
      }
    }
    if (look) {
      // evValue(EVB_TOUCHDOWN, ...), the fixed angle's height written in
      gt1 = s.fixedAngle
        ? lg(s.swing, LF_TOUCH_HEIGHT) - (load<f64>(YN, 8) + s.oy - s.swingGround)
        : evValue(EVB_TOUCHDOWN, s.swing, YN, s.tS + s.h);
      if (from < stopTheta && crossesB(EVB_TOUCHDOWN, gFrom, gt1)) {
        const th = locateB(EVB_TOUCHDOWN, s.swing, from, gFrom, gt1, s.tS, s.h);
        denseB(th);
        if (th < stopTheta && load<f64>(YI, 24) < 0.0) { stopTheta = th; stopEvent = EVB_TOUCHDOWN; stopLeg = s.swing; }
      }
    }
  }

  // Record-only maximum compressions before the stop.
  if (mTheta0 <= 1.0 && mTheta0 <= stopTheta && lg(0, LF_SPLIT) == 0.0) {
    denseB(mTheta0);
    noteForces(YI);
    ls(0, LF_COMPRESSING, 0.0);
  }
  if (mTheta1 <= 1.0 && mTheta1 <= stopTheta && lg(1, LF_SPLIT) == 0.0) {
    denseB(mTheta1);
    noteForces(YI);
    ls(1, LF_COMPRESSING, 0.0);
  }
  if (tracing) traceContact(s.h, stopTheta < 1.0 ? stopTheta : 1.0);

  if (stopEvent < 0) {
    notePeaks();
    // the step after it, cut to a liftoff in sight in single stance (stance.ts, towardLiftoff)
    const hNext = s.h * acceptFactor(err, s.afterReject);
    const hAfter = s.single ? towardLiftoffB(sl, sl == 0 ? s.gl00 : s.gl01, sl == 0 ? s.gm00 : s.gm01, sl == 0 ? gl10 : gl11, sl == 0 ? gm10 : gm11, s.h, hNext) : hNext;
    s.tS += s.h;
    advance();
    s.gl00 = gl10;
    s.gl01 = gl11;
    s.gm00 = gm10;
    s.gm01 = gm11;
    s.gs0 = gs1;
    s.gg0 = gg1;
    s.gb0 = gb1;
    if (s.single) {
      if (armsHere) s.armed = true;
      s.gt0 = gt1;
    }
    s.h = hAfter;
    s.afterReject = false;
    return CONTACT_GO;
  }

  // The event: re-take the step to the located time on the true solution, then polish.
  const hNext = s.h * acceptFactor(err, s.afterReject);
  let hEvent = stopTheta * s.h;
  // a liftoff in reach is polished from the step's end: no re-taken step
  const reached = inReach && stopEvent == EVB_LIFTOFF;
  if (reached) notePeaks(); // the step's end, short of the crossing or past it, is a state of the stance
  else if (stopEvent != EVB_GROUND && stopEvent != EVB_BACKWARD) {
    bstep(hEvent);
    s.steps++;
    s.stepsHere++;
  }
  let tEvent: f64;
  if (s.single && (stopEvent == EVB_LIFTOFF || stopEvent == EVB_MAX_COMPRESSION)) {
    // the stance driver's own polish (events.ts), on the single-leg equations
    tEvent = s.tS + hEvent;
    tEvent += refine(stopEvent == EVB_LIFTOFF ? EV_LIFTOFF : EV_MAX_COMPRESSION, s.timeScale, reached ? 2.0 * s.reach : 1e-4 * s.timeScale);
  } else if (stopEvent == EVB_GROUND || stopEvent == EVB_BACKWARD) {
    tEvent = s.tS + hEvent;
  } else {
    hEvent = polishB(stopEvent, stopLeg, hEvent);
    tEvent = s.tS + hEvent;
  }
  if (stopEvent == EVB_GROUND) return STATUS_BODY_HIT_GROUND;
  if (stopEvent == EVB_BACKWARD) return s.single ? STATUS_FELL_BACKWARD : STATUS_STALLED;
  noteForces(YN);

  if (stopEvent == EVB_SECTION) {
    saveEnd(tEvent, s.stanceLeg);
    return END_SECTION;
  }
  if (stopEvent == EVB_MAX_COMPRESSION) {
    ls(stopLeg, LF_COMPRESSING, 0.0);
    ls(stopLeg, LF_K, lg(stopLeg, LF_KE));
    if (s.single) setStiffness(lg(stopLeg, LF_KE));
    else setBipedStiffness(stopLeg, lg(stopLeg, LF_KE));
    memory.copy(Y0, YN, 40);
    rhs(Y0, K1); // the right-hand side changed: no FSAL across the switch
    s.tS = tEvent;
    startValues();
    s.h = hNext;
    s.afterReject = false;
    return CONTACT_GO;
  }
  if (stopEvent == EVB_LIFTOFF) {
    ls(stopLeg, LF_ON, 0.0);
    ls(stopLeg, LF_LO, s.tSec0 + tEvent);
    if (s.single) {
      saveEnd(tEvent, stopLeg);
      recordLiftoff(rec, stopLeg);
      return END_FLIGHT;
    }
    recordLiftoff(rec, stopLeg);
    // Two legs leaving together (a hop on both legs): the other leg is back at rest length,
    // extending, within the event location's accuracy.
    const o = 1 - stopLeg;
    if (evValue(EVB_LIFTOFF, o, YN, tEvent) >= -1e-9 * lg(o, LF_L0) && legRdot(o, YN) > 0.0) {
      ls(o, LF_ON, 0.0);
      ls(o, LF_LO, s.tSec0 + tEvent);
      put(rec, R_DOUBLE_END, s.tSec0 + tEvent);
      saveEnd(tEvent, stopLeg);
      s.endBoth = true;
      return END_FLIGHT;
    }
    // double -> single support on the other leg; the frame moves to its foot
    put(rec, R_DOUBLE_END, s.tSec0 + tEvent);
    const m = 1 - stopLeg;
    const sx = footRx(m);
    const sy = footRy(m);
    store<f64>(YN, load<f64>(YN, 0) - sx, 0);
    store<f64>(YN, load<f64>(YN, 8) - sy, 8);
    s.ox = lg(m, LF_FX);
    s.oy = lg(m, LF_FY);
    s.sectionArmed = s.strideWalking && s.touchedDown && !isNaN(lg(m, LF_TD));
    s.armed = false;
  } else {
    // EVB_TOUCHDOWN of the swing leg
    if (!s.strideWalking) return STATUS_GAIT_CHANGED;
    if (s.touchedDown) return STATUS_NO_SECTION;
    const j = stopLeg;
    const tTd = s.tSec0 + tEvent;
    const a = attackAt(s.model, tTd);
    if (!(a > 0.0 && a <= MAX_ATTACK)) return STATUS_ATTACK_OUT_OF_RANGE;
    if (a < s.minAttack) s.minAttack = a;
    if (a > s.maxAttack) s.maxAttack = a;
    const px = load<f64>(YN, 0);
    legTouchdown(s, j, s.ox + px + lg(j, LF_L0) * legCos(a), tTd);
    s.touchedDown = true;
    put(rec, R_DOUBLE_START, tTd);
    put(rec, R_APEX_TO_TOUCHDOWN, tTd);
    put(rec, R_ATTACK, a);
    put(rec, R_FOOT_X, lg(j, LF_FX));
    put(rec, R_TOUCHDOWN_VX, load<f64>(YN, 16));
    put(rec, R_TOUCHDOWN_VY, load<f64>(YN, 24));
    put(rec, R_K_COMPRESSION, stanceKc);
    put(rec, R_K_EXTENSION, stanceKe);
  }
  memory.copy(Y0, YN, 40);
  s.tS = tEvent;
  configure();
  rhs(Y0, K1);
  startValues();
  s.h = hNext;
  s.afterReject = false;
  return CONTACT_GO;
}

function saveEnd(t: f64, leg: i32): void {
  const s = S;
  s.endPx = load<f64>(YN, 0);
  s.endPy = load<f64>(YN, 8);
  s.endVx = load<f64>(YN, 16);
  s.endVy = load<f64>(YN, 24);
  s.endW = load<f64>(YN, 32);
  s.endT = t;
  s.endLeg = leg;
}

function recordLiftoff(rec: usize, leg: i32): void {
  const s = S;
  const dx = load<f64>(YN, 0) - footRx(leg);
  const dy = load<f64>(YN, 8) - footRy(leg);
  if (lg(leg, LF_C) > 0.0) {
    const c = lg(leg, LF_L0) - Math.sqrt(dx * dx + dy * dy);
    s.lostSpring += 0.5 * lg(leg, LF_K) * c * c;
  }
  put(rec, R_LIFTOFF_X, s.ox + load<f64>(YN, 0));
  put(rec, R_LIFTOFF_Y, s.oy + load<f64>(YN, 8));
  put(rec, R_LIFTOFF_VX, load<f64>(YN, 16));
  put(rec, R_LIFTOFF_VY, load<f64>(YN, 24));
  put(rec, R_LIFTOFF_ANGLE, Math.atan2(dy, dx));
  const c = lg(leg, LF_C);
  put(rec, R_LIFTOFF_LEG_FORCE, c > 0.0 ? lg(leg, LF_K) * (lg(leg, LF_L0) - Math.sqrt(dx * dx + dy * dy)) - c * ((dx * load<f64>(YN, 16) + dy * load<f64>(YN, 24)) / Math.sqrt(dx * dx + dy * dy)) : 0.0);
}

// Energy of the body and the springs in stance, J (potential from height 0).
function energyAt(x: f64, y: f64, vx: f64, vy: f64): f64 {
  const s = S;
  let e = s.mass * s.gravity * y + 0.5 * s.mass * (vx * vx + vy * vy);
  for (let i = 0; i < 2; i++) {
    if (lg(i, LF_ON) == 0.0) continue;
    const dx = x - lg(i, LF_FX);
    const dy = y - lg(i, LF_FY);
    const c = lg(i, LF_L0) - Math.sqrt(dx * dx + dy * dy);
    e += 0.5 * lg(i, LF_K) * c * c;
  }
  return e;
}

// The rollout's state between strides, kept in globals (not locals) so that rollouts can take
// turns between steps (runBipedBatch).

// One rollout: rolloutBegin, then for each stride strideBegin, the contact (runContact) and
// strideEnd, then rolloutEnd (the summary). runBipedBatch runs the same pieces for rollouts
// that take turns.
export function runBipedRollout(mdl: usize, input: usize, strides: i32, rec0: usize, summary: usize): i32 {
  S = changetype<BipedState>(STATE_DEFAULT);
  LEGS = LEGS_DEFAULT;
  S.scratchRecord = SCRATCH_RECORD;
  useBuffers(DEFAULT_BUFFERS);
  rolloutBegin(mdl, input, strides, rec0, summary);
  while (strideBegin()) {
    if (!strideEnd(runContact(S.strideRec))) break;
  }
  return rolloutEnd();
}

function rolloutBegin(mdl: usize, input: usize, nStrides: i32, records: usize, sum: usize): void {
  const s = S;
  s.model = mdl;
  s.strides = nStrides;
  s.rec0 = records;
  s.summary = sum;
  s.strideIndex = 0;
  s.mass = mget(s.model, M_MASS) * get(input, I_MASS_SCALE);
  s.gravity = mget(s.model, M_GRAVITY);
  s.rtol = mget(s.model, M_RTOL);
  s.atol = mget(s.model, M_ATOL);
  s.maxSteps = <i32>mget(s.model, M_MAX_STEPS);
  const kScale = get(input, I_STIFFNESS_SCALE);
  const legScale = get(input, I_LEG_SCALE);
  s.targetHeight = mget(s.model, M_TARGET_HEIGHT);
  s.targetSpeed = mget(s.model, M_TARGET_SPEED);
  s.stream = <u64>get(input, I_STREAM);
  ls(0, LF_L0, mget(s.model, M_BIPED_LENGTH_0) * legScale);
  ls(1, LF_L0, mget(s.model, M_BIPED_LENGTH_1) * legScale);
  ls(0, LF_KSCALE, mget(s.model, M_BIPED_STIFFNESS_SCALE_0) * kScale);
  ls(1, LF_KSCALE, mget(s.model, M_BIPED_STIFFNESS_SCALE_1) * kScale);
  ls(0, LF_C, mget(s.model, M_BIPED_DAMPING_0));
  ls(1, LF_C, mget(s.model, M_BIPED_DAMPING_1));
  s.undamped = lg(0, LF_C) == 0.0 && lg(1, LF_C) == 0.0;
  s.fixedAngle = <i32>mget(s.model, M_ANGLE_KIND) == ANGLE_FIXED;
  if (s.fixedAngle) {
    const sinA = legSin(mget(s.model, M_ATTACK));
    ls(0, LF_TOUCH_HEIGHT, lg(0, LF_L0) * sinA);
    ls(1, LF_TOUCH_HEIGHT, lg(1, LF_L0) * sinA);
  }
  for (let i = 0; i < 2; i++) {
    ls(i, LF_ON, 0.0);
    ls(i, LF_FX, 0.0);
    ls(i, LF_FY, 0.0);
  }
  resetWalk();

  s.section = <i32>get(input, I_SECTION_KIND);
  s.apexY = get(input, I_APEX_HEIGHT);
  s.apexVx = get(input, I_FORWARD_SPEED);
  s.offset = s.section == SECTION_SINGLE_SUPPORT_APEX ? get(input, I_SECTION_OFFSET) : NaN;
  const legCode = <i32>get(input, I_SECTION_LEG);
  s.leg = legCode == 1 ? 1 : legCode == 2 && s.section == SECTION_FLIGHT_APEX ? 2 : 0;
  s.apexX = 0.0;
  s.apexT = 0.0;
  s.prevHeight = s.apexY;
  s.prevSpeed = s.apexVx;
  s.prevOffset = s.offset;
  s.minAttack = Infinity;
  s.maxAttack = -Infinity;

  s.status = STATUS_OK;
  s.completed = 0;
  s.maxForce = 0.0;
  s.maxFriction = 0.0;
  s.maxCompression = 0.0;
  s.maxVertical = 0.0;
  s.sumSqHeight = 0.0;
  s.sumSqSpeed = 0.0;
  s.allSteps = 0;
  s.allRejected = 0;
  const leg0 = s.leg == 2 ? 0 : s.leg;
  const kFirst = mget(s.model, M_STIFFNESS) * lg(leg0, LF_KSCALE);
  s.h = initialStep(s.mass, kFirst, s.apexVx, lg(leg0, LF_L0), s.rtol);

  if (s.section == SECTION_SINGLE_SUPPORT_APEX) {
    // the stance leg at the start: pinned at -offset on ground 0, past its maximum compression
    ls(s.leg, LF_ON, 1.0);
    ls(s.leg, LF_FX, -s.offset);
    ls(s.leg, LF_FY, 0.0);
    chooseStiffness(s.model, 0.0, lg(s.leg, LF_KSCALE));
    ls(s.leg, LF_KC, stanceKc);
    ls(s.leg, LF_KE, stanceKe);
    ls(s.leg, LF_K, stanceKe);
    ls(s.leg, LF_SPLIT, stanceSplit ? 1.0 : 0.0);
    ls(s.leg, LF_COMPRESSING, 0.0);
  }

}

// The start of stride strideIndex up to its contact (the flight before it, for a running
// stride): true when the contact is to run from Y0, false when the rollout ended here (status).
function strideBegin(): bool {
  const s = S;
  if (s.strideIndex >= s.strides) return false;
  const rec = s.rec0 != 0 ? s.rec0 + (<usize>s.strideIndex * R_SIZE << 3) : s.scratchRecord;
  s.strideRec = rec;
  if (s.rec0 != 0) for (let f = 0; f < R_SIZE; f++) put(rec, f, NaN);
  put(rec, R_APEX_HEIGHT, s.apexY);
  put(rec, R_APEX_SPEED, s.apexVx);
  put(rec, R_APEX_TIME, s.apexT);
  put(rec, R_APEX_X, s.apexX);
  put(rec, R_SECTION_KIND, <f64>s.section);
  put(rec, R_SECTION_OFFSET, s.offset);
  put(rec, R_SECTION_LEG, <f64>s.leg);
  const energyBefore = energyAt(s.apexX, s.apexY, s.apexVx, 0.0);
  put(rec, R_ENERGY_BEFORE, energyBefore);
  if (!isFinite(s.apexY) || !isFinite(s.apexVx)) { s.status = STATUS_NON_FINITE; put(rec, R_STATUS, <f64>s.status); return false; }
  s.strideWalking = s.section == SECTION_SINGLE_SUPPORT_APEX;
  put(rec, R_GAIT, s.strideWalking ? <f64>GAIT_WALKING : s.leg == 2 ? <f64>GAIT_HOPPING : <f64>GAIT_RUNNING);
  s.endBoth = false;
  traceStride = s.strideIndex;
  s.traceT0 = s.apexT;
  for (let i = 0; i < 2; i++) {
    ls(i, LF_PEAK, 0.0);
    ls(i, LF_MAXCOMP, 0.0);
    ls(i, LF_TD, NaN);
    ls(i, LF_LO, NaN);
  }
  s.peakVertical = 0.0;
  s.peakFriction = 0.0;
  s.lostSpring = 0.0;
  s.touchedDown = false;
  s.sectionArmed = false;
  s.armed = false;
  s.firstStep = true;
  s.steps = 0;
  s.rejected = 0;
  s.swingGround = groundAt(s.model, s.strideIndex, s.stream);
  put(rec, R_GROUND, s.swingGround);

  // The contact's time limit: far beyond any stance that ends (as the stance driver's).
  let kMin: f64 = Infinity;
  for (let i = 0; i < 2; i++) {
    const k = mget(s.model, M_STIFFNESS) * lg(i, LF_KSCALE);
    if (k < kMin) kMin = k;
  }

  if (s.strideWalking) {
    s.ox = lg(s.leg, LF_FX);
    s.oy = lg(s.leg, LF_FY);
    const r = Math.sqrt((s.apexX - s.ox) * (s.apexX - s.ox) + (s.apexY - s.oy) * (s.apexY - s.oy));
    if (!(r <= lg(s.leg, LF_L0))) { s.status = STATUS_LEG_NOT_PLACEABLE; put(rec, R_STATUS, <f64>s.status); return false; }
    // after a section the state relative to the stance foot carries over exactly
    store<f64>(Y0, s.strideIndex > 0 ? s.relPx : s.apexX - s.ox, 0);
    store<f64>(Y0, s.strideIndex > 0 ? s.relPy : s.apexY - s.oy, 8);
    store<f64>(Y0, s.apexVx, 16);
    store<f64>(Y0, 0.0, 24);
    store<f64>(Y0, 0.0, 32);
    s.tSec0 = 0.0;
    s.tS = 0.0;
  } else {
    // flight from the apex to the touchdown of `leg`, closed form (flight.ts); with leg 2 both
    // legs are ready and the one whose foot reaches the ground first lands (both at once when
    // they reach it at the same time)
    let j = s.leg == 2 ? 0 : s.leg;
    let tTouch = touchdownTime(s.model, s.apexY, s.swingGround, lg(j, LF_L0), s.gravity);
    let both = false;
    if (s.leg == 2) {
      const t1 = touchdownTime(s.model, s.apexY, s.swingGround, lg(1, LF_L0), s.gravity);
      if (t1 >= 0.0 && (tTouch < 0.0 || t1 < tTouch)) { j = 1; tTouch = t1; }
      else both = t1 == tTouch;
    }
    const l0 = lg(j, LF_L0);
    if (tTouch < 0.0) {
      s.status = tTouch == TOUCHDOWN_NOT_PLACEABLE ? STATUS_LEG_NOT_PLACEABLE
        : tTouch == TOUCHDOWN_GROUND_FIRST ? STATUS_BODY_HIT_GROUND
        : tTouch == TOUCHDOWN_ANGLE_LEFT ? STATUS_ATTACK_OUT_OF_RANGE
        : STATUS_STEP_LIMIT;
      put(rec, R_STATUS, <f64>s.status);
      return false;
    }
    const attack = attackAt(s.model, tTouch);
    if (!(attack > 0.0 && attack <= MAX_ATTACK)) { s.status = STATUS_ATTACK_OUT_OF_RANGE; put(rec, R_STATUS, <f64>s.status); return false; }
    if (attack < s.minAttack) s.minAttack = attack;
    if (attack > s.maxAttack) s.maxAttack = attack;
    const cosA = legCos(attack);
    const sinA = legSin(attack);
    const xTouch = s.apexX + s.apexVx * tTouch;
    const vyTouch = -s.gravity * tTouch;
    const px = -l0 * cosA;
    const py = l0 * sinA;
    const footX = xTouch - px;
    if (tracing) traceFlightB(s.apexT, s.apexT + tTouch, s.apexX, s.apexY, s.apexVx, 0.0, 0.0, false);
    legTouchdown(s, j, footX, tTouch);
    if (both) {
      const o = 1 - j;
      legTouchdown(s, o, xTouch + lg(o, LF_L0) * cosA, tTouch);
      put(rec, R_DOUBLE_START, tTouch);
      chooseStiffness(s.model, tTouch, lg(j, LF_KSCALE)); // R_K_* below: the first leg's
    }
    s.touchedDown = true;
    put(rec, R_APEX_TO_TOUCHDOWN, tTouch);
    put(rec, R_ATTACK, attack);
    put(rec, R_FOOT_X, footX);
    put(rec, R_TOUCHDOWN_VX, s.apexVx);
    put(rec, R_TOUCHDOWN_VY, vyTouch);
    put(rec, R_K_COMPRESSION, stanceKc);
    put(rec, R_K_EXTENSION, stanceKe);
    s.ox = footX;
    s.oy = s.swingGround;
    store<f64>(Y0, px, 0);
    store<f64>(Y0, py, 8);
    store<f64>(Y0, s.apexVx, 16);
    store<f64>(Y0, vyTouch, 24);
    store<f64>(Y0, 0.0, 32);
    s.tSec0 = tTouch;
    s.tS = 0.0;
  }
  s.tContactLimit = 20.0 * Math.PI * Math.sqrt(s.mass / kMin);

  return true;
}

// The rest of the stride after its contact ended with `end` (END_SECTION, END_FLIGHT or a
// STATUS_* code): true when the rollout goes on to the next stride.
function strideEnd(end: i32): bool {
  const s = S;
  const rec = s.strideRec;
  s.allSteps += s.steps;
  s.allRejected += s.rejected;
  put(rec, R_STEPS, <f64>s.steps);
  put(rec, R_REJECTED, <f64>s.rejected);
  put(rec, R_TOUCHDOWN_TIME_0, lg(0, LF_TD));
  put(rec, R_TOUCHDOWN_TIME_0 + 1, lg(1, LF_TD));
  put(rec, R_LIFTOFF_TIME_0, lg(0, LF_LO));
  put(rec, R_LIFTOFF_TIME_0 + 1, lg(1, LF_LO));
  const p0 = lg(0, LF_PEAK);
  const p1 = lg(1, LF_PEAK);
  put(rec, R_PEAK_FORCE_0, p0);
  put(rec, R_PEAK_FORCE_1, p1);
  put(rec, R_PEAK_FORCE, p0 > p1 ? p0 : p1);
  const c0 = lg(0, LF_MAXCOMP);
  const c1 = lg(1, LF_MAXCOMP);
  put(rec, R_MAX_COMPRESSION, c0 > c1 ? c0 : c1);
  put(rec, R_PEAK_VERTICAL_FORCE, s.peakVertical);
  put(rec, R_PEAK_FRICTION, s.peakFriction);
  if (end >= 0) {
    // a failure status; a gait change names the gait it changed to
    if (end == STATUS_GAIT_CHANGED) put(rec, R_GAIT, s.strideWalking ? <f64>GAIT_RUNNING : <f64>GAIT_WALKING);
    s.status = end;
    put(rec, R_STATUS, <f64>s.status);
    return false;
  }

  let yNext: f64, xNext: f64, vxNext: f64, tNext: f64, eAfter: f64;
  let nextSection: i32, nextOffset: f64, nextLeg: i32;
  if (end == END_FLIGHT) {
    const xLift = s.ox + s.endPx;
    const yLift = s.oy + s.endPy;
    const tLift = s.apexT + s.tSec0 + s.endT;
    if (s.strideWalking) {
      s.status = STATUS_GAIT_CHANGED;
      put(rec, R_GAIT, <f64>GAIT_RUNNING);
      put(rec, R_STATUS, <f64>s.status);
      return false;
    }
    put(rec, R_CONTACT, s.endT);
    if (tracing) {
      emit2(tLift, xLift, yLift, s.endVx, s.endVy, lg(0, LF_FX), lg(0, LF_FY), 0.0, lg(1, LF_FX), lg(1, LF_FY), 0.0, PHASE_FLIGHT);
    }
    if (!(s.endVy > 0.0)) { s.status = STATUS_NO_APEX; put(rec, R_STATUS, <f64>s.status); return false; }
    const tUp = s.endVy / s.gravity;
    yNext = yLift + (s.endVy * s.endVy) / (2.0 * s.gravity);
    xNext = xLift + s.endVx * tUp;
    vxNext = s.endVx;
    tNext = tLift + tUp;
    if (tracing) traceFlightB(tLift, tNext, xLift, yLift, s.endVx, s.endVy, 0.0, true);
    // the springs hold no energy in flight; with damping, what the leg still held is lost
    eAfter = s.mass * s.gravity * yNext + 0.5 * s.mass * vxNext * vxNext;
    nextSection = SECTION_FLIGHT_APEX;
    nextOffset = NaN;
    nextLeg = s.endBoth ? 2 : 1 - s.endLeg;
  } else {
    yNext = s.oy + s.endPy;
    xNext = s.ox + s.endPx;
    vxNext = s.endVx;
    tNext = s.apexT + s.tSec0 + s.endT;
    eAfter = energyAt(xNext, yNext, vxNext, 0.0);
    nextSection = SECTION_SINGLE_SUPPORT_APEX;
    nextOffset = s.endPx - footRx(s.endLeg);
    nextLeg = s.endLeg;
    s.relPx = s.endPx;
    s.relPy = s.endPy;
  }
  // the dampers' work, and the spring energy damped legs still held when they left
  put(rec, R_DISSIPATED, s.endW + s.lostSpring);
  put(rec, R_NEXT_APEX_HEIGHT, yNext);
  put(rec, R_NEXT_APEX_SPEED, vxNext);
  put(rec, R_NEXT_APEX_X, xNext);
  put(rec, R_NEXT_APEX_TIME, tNext);
  put(rec, R_STRIDE_TIME, tNext - s.apexT);
  put(rec, R_ENERGY_AFTER, eAfter);
  put(rec, R_NEXT_SECTION_KIND, <f64>nextSection);
  put(rec, R_NEXT_SECTION_OFFSET, nextOffset);
  put(rec, R_NEXT_SECTION_LEG, <f64>nextLeg);
  put(rec, R_STATUS, <f64>STATUS_OK);

  const pk = p0 > p1 ? p0 : p1;
  if (pk > s.maxForce) s.maxForce = pk;
  if (s.peakFriction > s.maxFriction) s.maxFriction = s.peakFriction;
  const cm = c0 > c1 ? c0 : c1;
  if (cm > s.maxCompression) s.maxCompression = cm;
  if (s.peakVertical > s.maxVertical) s.maxVertical = s.peakVertical;
  const eh = yNext - s.targetHeight;
  const ev = vxNext - s.targetSpeed;
  s.sumSqHeight += eh * eh;
  s.sumSqSpeed += ev * ev;
  s.prevHeight = s.apexY;
  s.prevSpeed = s.apexVx;
  s.prevOffset = s.offset;
  s.apexY = yNext;
  s.apexVx = vxNext;
  s.apexX = xNext;
  s.apexT = tNext;
  s.section = nextSection;
  s.offset = nextOffset;
  s.leg = nextLeg;
  s.h = s.firstH;
  s.completed++;
  s.strideIndex++;
  return true;
}

// The rest of the records and the summary; the rollout's status.
function rolloutEnd(): i32 {
  const s = S;
  if (s.rec0 != 0) {
    for (let q = s.completed + 1; q < s.strides; q++) {
      const rec = s.rec0 + (<usize>q * R_SIZE << 3);
      for (let f = 0; f < R_SIZE; f++) put(rec, f, NaN);
    }
  }
  put(s.summary, S_STATUS, <f64>s.status);
  put(s.summary, S_STRIDES_COMPLETED, <f64>s.completed);
  put(s.summary, S_FINAL_HEIGHT, s.apexY);
  put(s.summary, S_FINAL_SPEED, s.apexVx);
  put(s.summary, S_PREVIOUS_HEIGHT, s.prevHeight);
  put(s.summary, S_PREVIOUS_SPEED, s.prevSpeed);
  put(s.summary, S_MAX_PEAK_FORCE, s.maxForce);
  put(s.summary, S_MAX_FRICTION, s.maxFriction);
  put(s.summary, S_MAX_COMPRESSION, s.maxCompression);
  put(s.summary, S_MIN_ATTACK, s.minAttack);
  put(s.summary, S_MAX_ATTACK, s.maxAttack);
  put(s.summary, S_SUM_SQ_HEIGHT_ERROR, s.sumSqHeight);
  put(s.summary, S_SUM_SQ_SPEED_ERROR, s.sumSqSpeed);
  put(s.summary, S_TIME, s.apexT);
  put(s.summary, S_DISTANCE, s.apexX);
  put(s.summary, S_STEPS, <f64>s.allSteps);
  put(s.summary, S_REJECTED, <f64>s.allRejected);
  put(s.summary, S_FINAL_OFFSET, s.offset);
  put(s.summary, S_PREVIOUS_OFFSET, s.prevOffset);
  put(s.summary, S_FINAL_LEG, <f64>s.leg);
  put(s.summary, S_FINAL_SECTION_KIND, <f64>s.section);
  put(s.summary, S_MAX_VERTICAL_FORCE, s.maxVertical);
  return s.status;
}

// Two rollouts taking turns (runBipedBatch): each lane keeps its own legs, scratch record and
// stepper buffers (pointers switched), and the rest of its state (every global above that lives
// across a step, the stepper's controller, the right-hand side's setting, the terrain walk) in
// its block, saved after it asks for a step and loaded before it goes on. The state a rollout
// reads is the state it wrote, so each rollout runs the one-rollout arithmetic, step for step.
// What the rollout in hand keeps outside this module: the stepper's last step and controller
// memory, the error norm's dimension, the terrain walk, the right-hand side's setting.
const EXT_BYTES: usize = 32 + SYSTEM_STATE_BYTES;
function laneSave(c: usize): void {
  store<f64>(c, getLastH(), 0);
  store<f64>(c, getErrorDimension(), 8);
  store<f64>(c, getErrOld(), 16);
  store<f64>(c, getWalk(), 24);
  saveSystem(c + 32);
}
function laneLoad(c: usize): void {
  setLastH(load<f64>(c, 0));
  setErrorDimensionValue(load<f64>(c, 8));
  setErrOld(load<f64>(c, 16));
  setWalk(load<f64>(c, 24));
  loadSystem(c + 32);
}
const LANE_BYTES: usize = EXT_BYTES;
const LANES_MAX = 4;
const LANE_STATES: usize = memory.data(<i32>(LANES_MAX * offsetof<BipedState>()), 16);
const LANE_EXT: usize = memory.data(<i32>(LANES_MAX * LANE_BYTES), 16);
const LANE_LEGS: usize = memory.data(LANES_MAX * 2 * LF_N * 8, 16);
const LANE_SCRATCH: usize = memory.data(LANES_MAX * 8 * R_SIZE, 16);
const LANE_BUFFERS: usize = memory.data(<i32>(LANES_MAX * BUFFER_SET_BYTES), 16); // dopri5 buffer sets
let batchOk = 0;
let pairCalls: f64 = 0; // steps taken in f64x2 lanes (calls of stepPairW, two lanes each) in the last runBipedBatch

// Steps the last runBipedBatch took in lanes (for checks).
export function bipedPairedSteps(): f64 {
  return pairCalls;
}

@inline function laneBuffers(i: i32): usize {
  return LANE_BUFFERS + <usize>i * BUFFER_SET_BYTES;
}

function laneSelect(i: i32): void {
  S = changetype<BipedState>(LANE_STATES + <usize>i * offsetof<BipedState>());
  LEGS = LANE_LEGS + <usize>i * (2 * LF_N * 8);
  S.scratchRecord = LANE_SCRATCH + <usize>i * (8 * R_SIZE);
  useBuffers(laneBuffers(i));
}

@inline function ppSet(field: i32, lane: i32, v: f64): void {
  store<f64>(PAIR_PARAMS + <usize>(lane >> 1) * PAIR_BYTES + (<usize>field << 4) + (<usize>(lane & 1) << 3), v);
}

// The lane's next step for stepPairW; true when it is a walking step with undamped
// legs (step4).
function laneStepParams(i: i32): bool {
  const s = S;
  if (!(s.undamped && s.strideWalking)) return false;
  ppSet(PP_H, i, s.h);
  ppSet(PP_RTOL, i, s.rtol);
  ppSet(PP_ATOL, i, s.atol);
  ppSet(PP_INV_MASS, i, stanceInvMass);
  ppSet(PP_G, i, stanceG);
  if (s.single) {
    ppSet(PP_FX0, i, 0.0);
    ppSet(PP_FY0, i, 0.0);
    ppSet(PP_L0, i, sysLeg);
    ppSet(PP_K0, i, stanceK);
    ppSet(PP_FX1, i, 0.0);
    ppSet(PP_FY1, i, 0.0);
    ppSet(PP_L1, i, sysLeg);
    ppSet(PP_K1, i, stanceK);
  } else {
    ppSet(PP_FX0, i, bipedFx0);
    ppSet(PP_FY0, i, bipedFy0);
    ppSet(PP_L0, i, bipedL0);
    ppSet(PP_K0, i, bipedK0);
    ppSet(PP_FX1, i, bipedFx1);
    ppSet(PP_FY1, i, bipedFy1);
    ppSet(PP_L1, i, bipedL1);
    ppSet(PP_K1, i, bipedK1);
  }
  store<u64>(PAIR_PARAMS + <usize>(i >> 1) * PAIR_BYTES + (<usize>PP_SINGLE << 4) + (<usize>(i & 1) << 3), s.single ? 0xffffffffffffffff : 0);
  packY(i, laneBuffers(i));
  return true;
}

@inline function laneState(i: i32): BipedState {
  return changetype<BipedState>(LANE_STATES + <usize>i * offsetof<BipedState>());
}
@inline function lgAt(legs: usize, i: i32, f: i32): f64 {
  return load<f64>(legs + (<usize>(i * LF_N + f) << 3));
}
@inline function lsAt(legs: usize, i: i32, f: i32, v: f64): void {
  store<f64>(legs + (<usize>(i * LF_N + f) << 3), v);
}

// contactAfter's common case for lane i after a lane step (undamped legs), without making it the
// rollout in hand: an accepted step inside which no event value crosses (nothing to locate),
// with contactAfter's arithmetic in its order. False, with nothing changed, when the step needs the whole of contactAfter.
function laneAfterQuiet(i: i32, err: f64): bool {
  if (!(err <= 1.0)) return false; // a rejection or a non-finite stage
  const s = laneState(i);
  const legs = LANE_LEGS + <usize>i * (2 * LF_N * 8);
  const buf = laneBuffers(i);
  const npy = load<f64>(buf + OFF_YN, 8);
  const nvx = load<f64>(buf + OFF_YN, 16);
  const nvy = load<f64>(buf + OFF_YN, 24);
  // the leg values at the step end, formed in the lane step (laneEnd: contactAfter's arithmetic)
  let gl10: f64 = 0.0;
  let gl11: f64 = 0.0;
  let gm10: f64 = 0.0;
  let gm11: f64 = 0.0;
  let f0: f64, f1: f64, c0: f64, c1: f64;
  const fx = laneEnd(i, END_FX);
  const fy = laneEnd(i, END_FY);
  const single = s.single;
  const sl = s.stanceLeg;
  if (single) {
    const gl = laneEnd(i, END_GL0);
    const nrdot = laneEnd(i, END_GM0);
    const nforce = laneEnd(i, END_F0);
    const comp = laneEnd(i, END_C0);
    if (sl == 0) { gl10 = gl; gm10 = nrdot; } else { gl11 = gl; gm11 = nrdot; }
    f0 = sl == 0 ? nforce : 0.0;
    f1 = sl == 1 ? nforce : 0.0;
    c0 = sl == 0 ? comp : 0.0;
    c1 = sl == 1 ? comp : 0.0;
  } else {
    gl10 = laneEnd(i, END_GL0);
    gm10 = laneEnd(i, END_GM0);
    gl11 = laneEnd(i, END_GL1);
    gm11 = laneEnd(i, END_GM1);
    c0 = laneEnd(i, END_C0);
    c1 = laneEnd(i, END_C1);
    f0 = laneEnd(i, END_F0);
    f1 = laneEnd(i, END_F1);
  }
  const gs1 = -nvy;
  const gg1 = s.groundRel - npy;
  const gb1 = -nvx;
  if (lgAt(legs, 0, LF_ON) != 0.0 && (lgAt(legs, 0, LF_COMPRESSING) != 0.0 || lgAt(legs, 0, LF_SPLIT) == 0.0) && crossesB(EVB_MAX_COMPRESSION, s.gm00, gm10)) return false;
  if (lgAt(legs, 1, LF_ON) != 0.0 && (lgAt(legs, 1, LF_COMPRESSING) != 0.0 || lgAt(legs, 1, LF_SPLIT) == 0.0) && crossesB(EVB_MAX_COMPRESSION, s.gm01, gm11)) return false;
  if (lgAt(legs, 0, LF_ON) != 0.0 && crossesB(EVB_LIFTOFF, s.gl00, gl10)) return false;
  if (lgAt(legs, 1, LF_ON) != 0.0 && crossesB(EVB_LIFTOFF, s.gl01, gl11)) return false;
  if (crossesB(EVB_GROUND, s.gg0, gg1)) return false;
  if (crossesB(EVB_BACKWARD, s.gb0, gb1)) return false;
  if (single && s.sectionArmed && crossesB(EVB_SECTION, s.gs0, gs1)) return false;
  let gt1: f64 = 0.0;
  if (single) {
    if (!s.armed) {
      gt1 = load<f64>(buf + OFF_YN, 0) - (lgAt(legs, sl, LF_FX) - s.ox);
      if (crossesB(EVB_MIDSTANCE, s.gt0, gt1)) return false;
    } else {
      const sw = s.swing;
      const height = s.fixedAngle ? lgAt(legs, sw, LF_TOUCH_HEIGHT) : lgAt(legs, sw, LF_L0) * legSin(attackAt(s.model, s.tSec0 + (s.tS + s.h)));
      gt1 = height - (npy + s.oy - s.swingGround);
      if (crossesB(EVB_TOUCHDOWN, s.gt0, gt1)) return false;
    }
  }
  const ext = LANE_EXT + <usize>i * LANE_BYTES;
  const f = acceptedFactor(err, s.afterReject, load<f64>(ext, 16));
  if (single) {
    // a liftoff in reach, or one that the next step is cut to (contactAfter: liftoffNear, towardLiftoffB)
    const gl = sl == 0 ? gl10 : gl11;
    const gm = sl == 0 ? gm10 : gm11;
    if (lgAt(legs, sl, LF_C) == 0.0 && lgAt(legs, sl, LF_COMPRESSING) == 0.0 && gl < 0.0 && gm > 0.0 &&
      (-gl <= 2.0 * (s.h * f) * gm || -gl <= s.reach * gm)) return false;
  }
  // accepted, no event: contactAfter's bookkeeping, notePeaks, advance and acceptFactor
  if (s.firstStep) {
    s.firstH = s.h;
    s.firstStep = false;
  }
  s.steps++;
  s.stepsHere++;
  if (f0 > lgAt(legs, 0, LF_PEAK)) lsAt(legs, 0, LF_PEAK, f0);
  if (f1 > lgAt(legs, 1, LF_PEAK)) lsAt(legs, 1, LF_PEAK, f1);
  if (c0 > lgAt(legs, 0, LF_MAXCOMP)) lsAt(legs, 0, LF_MAXCOMP, c0);
  if (c1 > lgAt(legs, 1, LF_MAXCOMP)) lsAt(legs, 1, LF_MAXCOMP, c1);
  if (fy > s.peakVertical) s.peakVertical = fy;
  if (fy > 0.0) {
    const fr = Math.abs(fx / fy);
    if (fr > s.peakFriction) s.peakFriction = fr;
  }
  s.tS += s.h;
  for (let j: usize = 0; j < 40; j += 8) {
    store<f64>(buf + OFF_Y0 + j, load<f64>(buf + OFF_YN + j));
    store<f64>(buf + OFF_K1 + j, load<f64>(buf + OFF_K7 + j));
  }
  s.gl00 = gl10;
  s.gl01 = gl11;
  s.gm00 = gm10;
  s.gm01 = gm11;
  s.gs0 = gs1;
  s.gg0 = gg1;
  s.gb0 = gb1;
  if (single) s.gt0 = gt1;
  store<f64>(ext, controllerMemory(err), 16);
  store<f64>(ext, s.h, 0);
  s.h *= f;
  s.afterReject = false;
  return true;
}

// Lane mode (runBipedBatch): a lane whose steps are taken in f64x2 lanes keeps the state its quiet
// step ends change packed (LANE_QUIET, quietEnd in rk/biped-x2.ts) from packLane to unpackLane;
// its BipedState, legs and controller memory are current again after unpackLane.
@inline function qsSet(field: i32, lane: i32, v: f64): void {
  store<f64>(LANE_QUIET + <usize>(lane >> 1) * QS_BYTES + (<usize>field << 4) + (<usize>(lane & 1) << 3), v);
}
@inline function qsGet(field: i32, lane: i32): f64 {
  return load<f64>(LANE_QUIET + <usize>(lane >> 1) * QS_BYTES + (<usize>field << 4) + (<usize>(lane & 1) << 3));
}
@inline function qsMask(field: i32, lane: i32, on: bool): void {
  store<u64>(LANE_QUIET + <usize>(lane >> 1) * QS_BYTES + (<usize>field << 4) + (<usize>(lane & 1) << 3), on ? 0xffffffffffffffff : 0);
}

// Lane i (its step set by laneStepParams, its controller saved) into lane mode, when its quiet
// step ends can be finished in f64x2 (not its first step; a fixed attack angle once armed).
function packLane(i: i32): bool {
  const s = laneState(i);
  const legs = LANE_LEGS + <usize>i * (2 * LF_N * 8);
  const single = s.single;
  if (s.firstStep || (single && s.armed && !s.fixedAngle)) {
    qsMask(QS_ON, i, false);
    return false;
  }
  const a = single ? s.stanceLeg : 0; // slot 0's leg
  const b = 1 - a;
  qsSet(QS_GL0, i, a == 0 ? s.gl00 : s.gl01);
  qsSet(QS_GM0, i, a == 0 ? s.gm00 : s.gm01);
  qsSet(QS_GL1, i, b == 0 ? s.gl00 : s.gl01);
  qsSet(QS_GM1, i, b == 0 ? s.gm00 : s.gm01);
  qsSet(QS_GG, i, s.gg0);
  qsSet(QS_GB, i, s.gb0);
  qsSet(QS_GS, i, s.gs0);
  qsSet(QS_GT, i, s.gt0);
  qsMask(QS_EN_MC0, i, lgAt(legs, a, LF_ON) != 0.0 && (lgAt(legs, a, LF_COMPRESSING) != 0.0 || lgAt(legs, a, LF_SPLIT) == 0.0));
  qsMask(QS_EN_MC1, i, lgAt(legs, b, LF_ON) != 0.0 && (lgAt(legs, b, LF_COMPRESSING) != 0.0 || lgAt(legs, b, LF_SPLIT) == 0.0));
  qsMask(QS_EN_LO0, i, lgAt(legs, a, LF_ON) != 0.0);
  qsMask(QS_EN_LO1, i, lgAt(legs, b, LF_ON) != 0.0);
  qsMask(QS_EN_SEC, i, single && s.sectionArmed);
  qsMask(QS_EN_MID, i, single && !s.armed);
  qsMask(QS_EN_TD, i, single && s.armed);
  // the stance leg's liftoff tests of contactAfter (liftoffNear, towardLiftoffB) apply
  qsMask(QS_LIFT, i, single && lgAt(legs, a, LF_C) == 0.0 && lgAt(legs, a, LF_COMPRESSING) == 0.0);
  qsSet(QS_REACH, i, single ? s.reach : 0.0);
  qsSet(QS_MID, i, single ? lgAt(legs, s.stanceLeg, LF_FX) - s.ox : 0.0);
  qsSet(QS_TDH, i, single ? lgAt(legs, s.swing, LF_TOUCH_HEIGHT) : 0.0);
  qsSet(QS_OY, i, s.oy);
  qsSet(QS_SWG, i, s.swingGround);
  qsSet(QS_GREL, i, s.groundRel);
  qsSet(QS_PK0, i, lgAt(legs, a, LF_PEAK));
  qsSet(QS_PK1, i, lgAt(legs, b, LF_PEAK));
  qsSet(QS_MC0, i, lgAt(legs, a, LF_MAXCOMP));
  qsSet(QS_MC1, i, lgAt(legs, b, LF_MAXCOMP));
  qsSet(QS_PV, i, s.peakVertical);
  qsSet(QS_PF, i, s.peakFriction);
  qsSet(QS_TS, i, s.tS);
  qsSet(QS_OLD, i, load<f64>(LANE_EXT + <usize>i * LANE_BYTES, 16));
  qsSet(QS_HI, i, s.afterReject ? 1.0 : 10.0);
  qsSet(QS_N, i, 0.0);
  qsSet(QS_LIMIT, i, <f64>(s.maxSteps - s.stepsHere));
  qsSet(QS_TLIM, i, s.tContactLimit);
  qsSet(QS_HMIN, i, s.hMin);
  qsMask(QS_ON, i, true);
  return true;
}

// Lane i out of lane mode: what its quiet step ends changed, back into its state.
function unpackLane(i: i32): void {
  qsMask(QS_ON, i, false);
  const n = <i32>qsGet(QS_N, i);
  if (n == 0) return;
  unpackY(i, laneBuffers(i));
  const s = laneState(i);
  const legs = LANE_LEGS + <usize>i * (2 * LF_N * 8);
  const a = s.single ? s.stanceLeg : 0;
  const b = 1 - a;
  if (a == 0) {
    s.gl00 = qsGet(QS_GL0, i);
    s.gm00 = qsGet(QS_GM0, i);
    s.gl01 = qsGet(QS_GL1, i);
    s.gm01 = qsGet(QS_GM1, i);
  } else {
    s.gl01 = qsGet(QS_GL0, i);
    s.gm01 = qsGet(QS_GM0, i);
    s.gl00 = qsGet(QS_GL1, i);
    s.gm00 = qsGet(QS_GM1, i);
  }
  s.gg0 = qsGet(QS_GG, i);
  s.gb0 = qsGet(QS_GB, i);
  s.gs0 = qsGet(QS_GS, i);
  if (s.single) s.gt0 = qsGet(QS_GT, i);
  lsAt(legs, a, LF_PEAK, qsGet(QS_PK0, i));
  lsAt(legs, b, LF_PEAK, qsGet(QS_PK1, i));
  lsAt(legs, a, LF_MAXCOMP, qsGet(QS_MC0, i));
  lsAt(legs, b, LF_MAXCOMP, qsGet(QS_MC1, i));
  s.peakVertical = qsGet(QS_PV, i);
  s.peakFriction = qsGet(QS_PF, i);
  s.tS = qsGet(QS_TS, i);
  s.h = load<f64>(PAIR_PARAMS + <usize>(i >> 1) * PAIR_BYTES + (<usize>PP_H << 4) + (<usize>(i & 1) << 3));
  s.afterReject = false;
  s.steps += n;
  s.stepsHere += n;
  const ext = LANE_EXT + <usize>i * LANE_BYTES;
  store<f64>(ext, qsGet(QS_LASTH, i), 0);
  store<f64>(ext, qsGet(QS_OLD, i), 16);
}

// From the end of a contact piece (r: CONTACT_GO while the contact goes on), run the rollout in
// hand up to its next step: true when it needs one (of size h), false when it has ended (its
// summary written).
function laneRun(r0: i32): bool {
  let r = r0;
  for (;;) {
    if (r == CONTACT_GO) {
      r = contactBefore();
      if (r == CONTACT_GO) return true;
    }
    if (!strideEnd(r) || !strideBegin()) {
      if (rolloutEnd() == STATUS_OK) batchOk++;
      return false;
    }
    contactBegin(S.strideRec);
    r = CONTACT_GO;
  }
  return false; // not reached
}

// rollouts x strides of the two-leg model, `lanes` (2 or 4) rollouts at a time: walking steps
// with undamped legs in f64x2 lanes, two lanes a step (stepPairW), every other step, event and stride
// by the one-rollout code. The same records and summaries as runBipedRollout one rollout after
// the other (the check: test/lanes.test.ts). Returns how many rollouts completed every stride.
export function runBipedBatch(lanes: i32, models: usize, inputs: usize, rollouts: i32, nStrides: i32, records: usize, summaries: usize): i32 {
  batchOk = 0;
  pairCalls = 0;
  let next = 0;
  let live = 0; // bit i: lane i holds a rollout that asks for a step
  let pairable = 0; // bit i: that step is a walking step with undamped legs
  let singles = 0; // bit i: in single support
  let packed = 0; // bit i: lane i is in lane mode (packLane)
  for (let i = 0; i < LANES_MAX; i++) qsMask(QS_ON, i, false);
  for (;;) {
    for (let i = 0; i < lanes; i++) {
      if ((live & (1 << i)) != 0) continue;
      laneSelect(i);
      while (next < rollouts) {
        const r = next++;
        const input = inputs + (<usize>r * I_SIZE << 3);
        const mdl = models + (<usize>get(input, I_MODEL) * M_SIZE << 3);
        const rec = records != 0 ? records + (<usize>r * nStrides * R_SIZE << 3) : 0;
        const sum = summaries + (<usize>r * S_SIZE << 3);
        rolloutBegin(mdl, input, nStrides, rec, sum);
        if (!strideBegin()) {
          if (rolloutEnd() == STATUS_OK) batchOk++;
          continue;
        }
        contactBegin(S.strideRec);
        if (laneRun(CONTACT_GO)) {
          live |= 1 << i;
          if (laneStepParams(i)) pairable |= 1 << i;
          else pairable &= ~(1 << i);
          if (S.single) singles |= 1 << i;
          else singles &= ~(1 << i);
          laneSave(LANE_EXT + <usize>i * LANE_BYTES);
          if ((pairable & (1 << i)) != 0 && packLane(i)) packed |= 1 << i;
          break;
        }
      }
    }
    if (live == 0) break;
    // the lanes whose step is taken in f64x2 lanes
    let paired = 0;
    let quiet = 0; // bit i: lane i (in lane mode) finished a quiet step in the lanes
    let going = 0; // bit i: ... and goes on with its next step in lane mode
    for (let q = 0; q < lanes; q += 2) {
      const m = 3 << q;
      if ((live & m) == m && (pairable & m) == m) {
        const r = (singles & m) == m ? stepPairW1(<usize>(q >> 1)) : stepPairW(<usize>(q >> 1));
        quiet |= (r & 3) << q;
        going |= (r >> 2) << q;
        paired |= m;
        pairCalls++;
      }
    }
    if ((going & live) == live) continue; // every lane goes on in lane mode
    for (let i = 0; i < lanes; i++) {
      const bit = 1 << i;
      if ((live & bit) == 0 || (going & bit) != 0) continue;
      if ((paired & bit) != 0) unpackEnd(i, laneBuffers(i));
      // resume: the lane's last step already ended quietly in the lanes, so its contact goes on
      // (contactBefore's checks, CONTACT_GO) instead of finishing a step with contactAfter
      let resume = false;
      if ((packed & bit) != 0) {
        unpackLane(i);
        packed &= ~bit;
        resume = (quiet & bit) != 0; // a quiet step that contactBefore stops
      } else if ((paired & bit) != 0 && laneAfterQuiet(i, laneError(i))) {
        // contactBefore's checks; the contact goes on without switching to the lane
        const s = laneState(i);
        if (s.stepsHere < s.maxSteps && !(s.tS > s.tContactLimit) && !(s.h < s.hMin)) {
          ppSet(PP_H, i, s.h);
          packY(i, laneBuffers(i));
          if (packLane(i)) packed |= bit;
          continue;
        }
        resume = true;
      }
      laneSelect(i);
      laneLoad(LANE_EXT + <usize>i * LANE_BYTES);
      let next = CONTACT_GO;
      if (!resume) {
        let err: f64;
        if ((paired & bit) != 0) {
          setLastH(S.h);
          unpackStages(i, laneBuffers(i));
          err = laneError(i);
        } else {
          err = bstep(S.h);
        }
        next = contactAfter(err);
      }
      if (laneRun(next)) {
        if (laneStepParams(i)) pairable |= bit;
        else pairable &= ~bit;
        if (S.single) singles |= bit;
        else singles &= ~bit;
        laneSave(LANE_EXT + <usize>i * LANE_BYTES);
        if ((pairable & bit) != 0 && packLane(i)) packed |= bit;
      } else {
        live &= ~bit;
      }
    }
  }
  S = changetype<BipedState>(STATE_DEFAULT);
  LEGS = LEGS_DEFAULT;
  S.scratchRecord = SCRATCH_RECORD;
  useBuffers(DEFAULT_BUFFERS);
  return batchOk;
}
