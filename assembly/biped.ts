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

import {
  M_MASS, M_GRAVITY, M_RTOL, M_ATOL, M_MAX_STEPS, M_TARGET_HEIGHT, M_TARGET_SPEED, M_STIFFNESS,
  M_BIPED_LENGTH_0, M_BIPED_LENGTH_1, M_BIPED_STIFFNESS_SCALE_0, M_BIPED_STIFFNESS_SCALE_1,
  M_BIPED_DAMPING_0, M_BIPED_DAMPING_1, M_ANGLE_KIND, M_ATTACK, ANGLE_FIXED,
  I_APEX_HEIGHT, I_FORWARD_SPEED, I_STREAM, I_MASS_SCALE, I_STIFFNESS_SCALE, I_LEG_SCALE,
  I_SECTION_KIND, I_SECTION_OFFSET, I_SECTION_LEG,
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
import { groundAt, resetWalk } from "./terrain";
import { initialStep } from "./rk/initial-step";
import {
  step, dense, acceptFactor, rejectFactor, resetController, advance, setErrorDimension, setLastH,
  useBuffers, DEFAULT_BUFFERS,
  Y0, K1, K2, K3, K4, K5, K6, K7, YN, YI,
  A21, A31, A32, A41, A42, A43, A51, A52, A53, A54, A61, A62, A63, A64, A65,
  B1, B3, B4, B5, B6, E1, E3, E4, E5, E6, E7,
} from "./rk/dopri5";
import {
  rhs, setStance, setStiffness, setBiped, setBipedStiffness,
  stanceInvMass, stanceLeg as sysLeg, stanceK, stanceC, stanceG,
  bipedFx0, bipedFy0, bipedFx1, bipedFy1, bipedL0, bipedL1, bipedK0, bipedK1, bipedC0, bipedC1,
} from "./rk/system";
import { EV_LIFTOFF, EV_MAX_COMPRESSION, locate, refine } from "./rk/events";
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

@inline function lg(i: i32, f: i32): f64 {
  return load<f64>(LEGS + (<usize>(i * LF_N + f) << 3));
}
@inline function ls(i: i32, f: i32, v: f64): void {
  store<f64>(LEGS + (<usize>(i * LF_N + f) << 3), v);
}
@inline function put(p: usize, field: i32, v: f64): void {
  store<f64>(p + (<usize>field << 3), v);
}
@inline function get(p: usize, field: i32): f64 {
  return load<f64>(p + (<usize>field << 3));
}

// Rollout constants.
let model: usize = 0;
let mass: f64 = 1.0;
let gravity: f64 = 9.80665;
let rtol: f64 = 1e-10;
let atol: f64 = 1e-12;
let maxSteps: i32 = 100000;
let fixedAngle: bool = false; // the attack angle is constant: the touchdown height is too

// Integration frame: (px, py) = body - origin, the origin a foot in stance.
let ox: f64 = 0.0;
let oy: f64 = 0.0;
let single: bool = true; // one leg in stance (the origin's), else two
let stanceLeg: i32 = 0; // in single support
let timeScale: f64 = 1.0; // s, 1/omega of the softest leg in stance
let groundRel: f64 = 0.0; // m, the lowest foot in stance relative to the origin

// Stride state.
let strideWalking: bool = true; // the stride started at a single-support apex
let tS: f64 = 0.0; // s since the contact began, at Y0 (the single-leg driver's clock)
let tSec0: f64 = 0.0; // s from the section to the contact's start
let h: f64 = 0.0;
let firstH: f64 = 0.0; // the stride's first accepted step: a start for the next stride
let firstStep: bool = true;
let steps: i32 = 0;
let rejected: i32 = 0;
let touchedDown: bool = false; // the stride's touchdown happened
let sectionArmed: bool = false; // single support on the leg that touched down in this stride
let swing: i32 = -1; // the leg in swing during single support
let armed: bool = false; // the swing leg may touch down (past midstance of the stance leg)
let swingGround: f64 = 0.0; // m, ground height at the stride's touchdown
let peakVertical: f64 = 0.0;
let peakFriction: f64 = 0.0;
let tContactLimit: f64 = 0.0;
let minAttack: f64 = Infinity;
let maxAttack: f64 = -Infinity;
let lostSpring: f64 = 0.0; // J, spring energy a damped leg still held when it left the ground

// End of contact: the state (relative to the origin) and time since the section.
let endPx: f64 = 0.0;
let endPy: f64 = 0.0;
let endVx: f64 = 0.0;
let endVy: f64 = 0.0;
let endT: f64 = 0.0;
let endW: f64 = 0.0;
let endLeg: i32 = 0; // the leg that lifted off (flight) or is in stance (section)
let endBoth: bool = false; // both legs left the ground together

let relPx: f64 = 0.0; // state relative to the stance foot at the last single-support apex
let relPy: f64 = 0.0;

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
  return lg(i, LF_FX) - ox;
}
@inline function footRy(i: i32): f64 {
  return lg(i, LF_FY) - oy;
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
  if (ev == EVB_LIFTOFF) {
    if (lg(leg, LF_C) == 0.0) return legR(leg, p) - lg(leg, LF_L0);
    return -legForceAt(leg, p);
  }
  if (ev == EVB_MAX_COMPRESSION) return legRdot(leg, p);
  if (ev == EVB_TOUCHDOWN) {
    const height = fixedAngle ? lg(leg, LF_TOUCH_HEIGHT) : lg(leg, LF_L0) * legSin(attackAt(model, tSec0 + t));
    return height - (load<f64>(p, 8) + oy - swingGround);
  }
  if (ev == EVB_SECTION) return -load<f64>(p, 24);
  if (ev == EVB_GROUND) return lowestFoot() - load<f64>(p, 8);
  if (ev == EVB_BACKWARD) return -load<f64>(p, 16);
  return load<f64>(p, 0) - footRx(leg); // EVB_MIDSTANCE
}

// dg/dt at the state p with derivative d, for the Newton polish.
function evRate(ev: i32, leg: i32, p: usize, d: usize, t: f64): f64 {
  if (ev == EVB_LIFTOFF) {
    if (lg(leg, LF_C) == 0.0) return legRdot(leg, p);
    return lg(leg, LF_K) * legRdot(leg, p) + lg(leg, LF_C) * legRddot(leg, p, d);
  }
  if (ev == EVB_MAX_COMPRESSION) return legRddot(leg, p, d);
  if (ev == EVB_TOUCHDOWN) {
    return lg(leg, LF_L0) * legCos(attackAt(model, tSec0 + t)) * angleRateAt(model, tSec0 + t) - load<f64>(p, 24);
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
    dense(theta);
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
  let he = hEvent;
  for (let it = 0; it < 3; it++) {
    const g = evValue(ev, leg, YN, tS + he);
    const gd = evRate(ev, leg, YN, K7, tS + he);
    if (gd == 0.0 || !isFinite(gd)) break;
    const dt = -g / gd;
    if (!(Math.abs(dt) > 1e-17 * timeScale)) break;
    if (Math.abs(dt) > 1e-4 * timeScale || !(he + dt > 0.0)) break;
    he += dt;
    if (Math.abs(dt) > 1e-7 * timeScale) {
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
let undamped: bool = false;

function step4(h: f64): f64 {
  setLastH(h);
  const y0 = load<f64>(Y0, 0);
  const y1 = load<f64>(Y0, 8);
  const y2 = load<f64>(Y0, 16);
  const y3 = load<f64>(Y0, 24);
  const a0 = load<f64>(K1, 0);
  const a1 = load<f64>(K1, 8);
  const a2 = load<f64>(K1, 16);
  const a3 = load<f64>(K1, 24);
  const bp0 = y0 + h * (A21 * a0);
  const bp1 = y1 + h * (A21 * a1);
  const bp2 = y2 + h * (A21 * a2);
  const bp3 = y3 + h * (A21 * a3);
  let b2: f64, b3: f64;
  if (single) {
    const r = Math.sqrt(bp0 * bp0 + bp1 * bp1);
    const inv = 1.0 / r;
    const force = stanceK * (sysLeg - r);
    const a = force * inv * stanceInvMass;
    b2 = a * bp0;
    b3 = a * bp1 - stanceG;
  } else {
    const dx0 = bp0 - bipedFx0;
    const dy0 = bp1 - bipedFy0;
    const r0 = Math.sqrt(dx0 * dx0 + dy0 * dy0);
    const inv0 = 1.0 / r0;
    const ac0 = (bipedK0 * (bipedL0 - r0)) * inv0 * stanceInvMass;
    const dx1 = bp0 - bipedFx1;
    const dy1 = bp1 - bipedFy1;
    const r1 = Math.sqrt(dx1 * dx1 + dy1 * dy1);
    const inv1 = 1.0 / r1;
    const ac1 = (bipedK1 * (bipedL1 - r1)) * inv1 * stanceInvMass;
    b2 = ac0 * dx0 + ac1 * dx1;
    b3 = ac0 * dy0 + ac1 * dy1 - stanceG;
  }
  const b0 = bp2;
  const b1 = bp3;
  store<f64>(K2, b0, 0);
  store<f64>(K2, b1, 8);
  store<f64>(K2, b2, 16);
  store<f64>(K2, b3, 24);
  const cp0 = y0 + h * (A31 * a0 + A32 * b0);
  const cp1 = y1 + h * (A31 * a1 + A32 * b1);
  const cp2 = y2 + h * (A31 * a2 + A32 * b2);
  const cp3 = y3 + h * (A31 * a3 + A32 * b3);
  let c2: f64, c3: f64;
  if (single) {
    const r = Math.sqrt(cp0 * cp0 + cp1 * cp1);
    const inv = 1.0 / r;
    const force = stanceK * (sysLeg - r);
    const a = force * inv * stanceInvMass;
    c2 = a * cp0;
    c3 = a * cp1 - stanceG;
  } else {
    const dx0 = cp0 - bipedFx0;
    const dy0 = cp1 - bipedFy0;
    const r0 = Math.sqrt(dx0 * dx0 + dy0 * dy0);
    const inv0 = 1.0 / r0;
    const ac0 = (bipedK0 * (bipedL0 - r0)) * inv0 * stanceInvMass;
    const dx1 = cp0 - bipedFx1;
    const dy1 = cp1 - bipedFy1;
    const r1 = Math.sqrt(dx1 * dx1 + dy1 * dy1);
    const inv1 = 1.0 / r1;
    const ac1 = (bipedK1 * (bipedL1 - r1)) * inv1 * stanceInvMass;
    c2 = ac0 * dx0 + ac1 * dx1;
    c3 = ac0 * dy0 + ac1 * dy1 - stanceG;
  }
  const c0 = cp2;
  const c1 = cp3;
  store<f64>(K3, c0, 0);
  store<f64>(K3, c1, 8);
  store<f64>(K3, c2, 16);
  store<f64>(K3, c3, 24);
  const dp0 = y0 + h * (A41 * a0 + A42 * b0 + A43 * c0);
  const dp1 = y1 + h * (A41 * a1 + A42 * b1 + A43 * c1);
  const dp2 = y2 + h * (A41 * a2 + A42 * b2 + A43 * c2);
  const dp3 = y3 + h * (A41 * a3 + A42 * b3 + A43 * c3);
  let d2: f64, d3: f64;
  if (single) {
    const r = Math.sqrt(dp0 * dp0 + dp1 * dp1);
    const inv = 1.0 / r;
    const force = stanceK * (sysLeg - r);
    const a = force * inv * stanceInvMass;
    d2 = a * dp0;
    d3 = a * dp1 - stanceG;
  } else {
    const dx0 = dp0 - bipedFx0;
    const dy0 = dp1 - bipedFy0;
    const r0 = Math.sqrt(dx0 * dx0 + dy0 * dy0);
    const inv0 = 1.0 / r0;
    const ac0 = (bipedK0 * (bipedL0 - r0)) * inv0 * stanceInvMass;
    const dx1 = dp0 - bipedFx1;
    const dy1 = dp1 - bipedFy1;
    const r1 = Math.sqrt(dx1 * dx1 + dy1 * dy1);
    const inv1 = 1.0 / r1;
    const ac1 = (bipedK1 * (bipedL1 - r1)) * inv1 * stanceInvMass;
    d2 = ac0 * dx0 + ac1 * dx1;
    d3 = ac0 * dy0 + ac1 * dy1 - stanceG;
  }
  const d0 = dp2;
  const d1 = dp3;
  store<f64>(K4, d0, 0);
  store<f64>(K4, d1, 8);
  store<f64>(K4, d2, 16);
  store<f64>(K4, d3, 24);
  const ep0 = y0 + h * (A51 * a0 + A52 * b0 + A53 * c0 + A54 * d0);
  const ep1 = y1 + h * (A51 * a1 + A52 * b1 + A53 * c1 + A54 * d1);
  const ep2 = y2 + h * (A51 * a2 + A52 * b2 + A53 * c2 + A54 * d2);
  const ep3 = y3 + h * (A51 * a3 + A52 * b3 + A53 * c3 + A54 * d3);
  let e2: f64, e3: f64;
  if (single) {
    const r = Math.sqrt(ep0 * ep0 + ep1 * ep1);
    const inv = 1.0 / r;
    const force = stanceK * (sysLeg - r);
    const a = force * inv * stanceInvMass;
    e2 = a * ep0;
    e3 = a * ep1 - stanceG;
  } else {
    const dx0 = ep0 - bipedFx0;
    const dy0 = ep1 - bipedFy0;
    const r0 = Math.sqrt(dx0 * dx0 + dy0 * dy0);
    const inv0 = 1.0 / r0;
    const ac0 = (bipedK0 * (bipedL0 - r0)) * inv0 * stanceInvMass;
    const dx1 = ep0 - bipedFx1;
    const dy1 = ep1 - bipedFy1;
    const r1 = Math.sqrt(dx1 * dx1 + dy1 * dy1);
    const inv1 = 1.0 / r1;
    const ac1 = (bipedK1 * (bipedL1 - r1)) * inv1 * stanceInvMass;
    e2 = ac0 * dx0 + ac1 * dx1;
    e3 = ac0 * dy0 + ac1 * dy1 - stanceG;
  }
  const e0 = ep2;
  const e1 = ep3;
  store<f64>(K5, e0, 0);
  store<f64>(K5, e1, 8);
  store<f64>(K5, e2, 16);
  store<f64>(K5, e3, 24);
  const fp0 = y0 + h * (A61 * a0 + A62 * b0 + A63 * c0 + A64 * d0 + A65 * e0);
  const fp1 = y1 + h * (A61 * a1 + A62 * b1 + A63 * c1 + A64 * d1 + A65 * e1);
  const fp2 = y2 + h * (A61 * a2 + A62 * b2 + A63 * c2 + A64 * d2 + A65 * e2);
  const fp3 = y3 + h * (A61 * a3 + A62 * b3 + A63 * c3 + A64 * d3 + A65 * e3);
  let f2: f64, f3: f64;
  if (single) {
    const r = Math.sqrt(fp0 * fp0 + fp1 * fp1);
    const inv = 1.0 / r;
    const force = stanceK * (sysLeg - r);
    const a = force * inv * stanceInvMass;
    f2 = a * fp0;
    f3 = a * fp1 - stanceG;
  } else {
    const dx0 = fp0 - bipedFx0;
    const dy0 = fp1 - bipedFy0;
    const r0 = Math.sqrt(dx0 * dx0 + dy0 * dy0);
    const inv0 = 1.0 / r0;
    const ac0 = (bipedK0 * (bipedL0 - r0)) * inv0 * stanceInvMass;
    const dx1 = fp0 - bipedFx1;
    const dy1 = fp1 - bipedFy1;
    const r1 = Math.sqrt(dx1 * dx1 + dy1 * dy1);
    const inv1 = 1.0 / r1;
    const ac1 = (bipedK1 * (bipedL1 - r1)) * inv1 * stanceInvMass;
    f2 = ac0 * dx0 + ac1 * dx1;
    f3 = ac0 * dy0 + ac1 * dy1 - stanceG;
  }
  const f0 = fp2;
  const f1 = fp3;
  store<f64>(K6, f0, 0);
  store<f64>(K6, f1, 8);
  store<f64>(K6, f2, 16);
  store<f64>(K6, f3, 24);
  const n0 = y0 + h * (B1 * a0 + B3 * c0 + B4 * d0 + B5 * e0 + B6 * f0);
  const n1 = y1 + h * (B1 * a1 + B3 * c1 + B4 * d1 + B5 * e1 + B6 * f1);
  const n2 = y2 + h * (B1 * a2 + B3 * c2 + B4 * d2 + B5 * e2 + B6 * f2);
  const n3 = y3 + h * (B1 * a3 + B3 * c3 + B4 * d3 + B5 * e3 + B6 * f3);
  store<f64>(YN, n0, 0);
  store<f64>(YN, n1, 8);
  store<f64>(YN, n2, 16);
  store<f64>(YN, n3, 24);
  const gp0 = n0;
  const gp1 = n1;
  const gp2 = n2;
  const gp3 = n3;
  let g2: f64, g3: f64;
  if (single) {
    const r = Math.sqrt(gp0 * gp0 + gp1 * gp1);
    const inv = 1.0 / r;
    const force = stanceK * (sysLeg - r);
    const a = force * inv * stanceInvMass;
    g2 = a * gp0;
    g3 = a * gp1 - stanceG;
  } else {
    const dx0 = gp0 - bipedFx0;
    const dy0 = gp1 - bipedFy0;
    const r0 = Math.sqrt(dx0 * dx0 + dy0 * dy0);
    const inv0 = 1.0 / r0;
    const ac0 = (bipedK0 * (bipedL0 - r0)) * inv0 * stanceInvMass;
    const dx1 = gp0 - bipedFx1;
    const dy1 = gp1 - bipedFy1;
    const r1 = Math.sqrt(dx1 * dx1 + dy1 * dy1);
    const inv1 = 1.0 / r1;
    const ac1 = (bipedK1 * (bipedL1 - r1)) * inv1 * stanceInvMass;
    g2 = ac0 * dx0 + ac1 * dx1;
    g3 = ac0 * dy0 + ac1 * dy1 - stanceG;
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
  const err = Math.sqrt(sum / 4.0);
  // A NaN or infinity anywhere in the stages shows up in err or in YN.
  if (!isFinite(err) || finite != 0.0) return NaN;
  return err;
}


// step4 for walking strides (no bit-identity with the single-leg model to keep): each stage's
// newest derivative enters last, as y + h (older terms) + (h a_ij) k_j, so the sum over the
// older stages is formed while the newest is still being computed. Rounding differs from
// step4's at the level of the last bit; the order of the method is the same.
function step4w(h: f64): f64 {
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
  if (single) {
    const r = Math.sqrt(bp0 * bp0 + bp1 * bp1);
    const inv = 1.0 / r;
    const force = stanceK * (sysLeg - r);
    const a = force * inv * stanceInvMass;
    b2 = a * bp0;
    b3 = a * bp1 - stanceG;
  } else {
    const dx0 = bp0 - bipedFx0;
    const dy0 = bp1 - bipedFy0;
    const r0 = Math.sqrt(dx0 * dx0 + dy0 * dy0);
    const inv0 = 1.0 / r0;
    const ac0 = (bipedK0 * (bipedL0 - r0)) * inv0 * stanceInvMass;
    const dx1 = bp0 - bipedFx1;
    const dy1 = bp1 - bipedFy1;
    const r1 = Math.sqrt(dx1 * dx1 + dy1 * dy1);
    const inv1 = 1.0 / r1;
    const ac1 = (bipedK1 * (bipedL1 - r1)) * inv1 * stanceInvMass;
    b2 = ac0 * dx0 + ac1 * dx1;
    b3 = ac0 * dy0 + ac1 * dy1 - stanceG;
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
  if (single) {
    const r = Math.sqrt(cp0 * cp0 + cp1 * cp1);
    const inv = 1.0 / r;
    const force = stanceK * (sysLeg - r);
    const a = force * inv * stanceInvMass;
    c2 = a * cp0;
    c3 = a * cp1 - stanceG;
  } else {
    const dx0 = cp0 - bipedFx0;
    const dy0 = cp1 - bipedFy0;
    const r0 = Math.sqrt(dx0 * dx0 + dy0 * dy0);
    const inv0 = 1.0 / r0;
    const ac0 = (bipedK0 * (bipedL0 - r0)) * inv0 * stanceInvMass;
    const dx1 = cp0 - bipedFx1;
    const dy1 = cp1 - bipedFy1;
    const r1 = Math.sqrt(dx1 * dx1 + dy1 * dy1);
    const inv1 = 1.0 / r1;
    const ac1 = (bipedK1 * (bipedL1 - r1)) * inv1 * stanceInvMass;
    c2 = ac0 * dx0 + ac1 * dx1;
    c3 = ac0 * dy0 + ac1 * dy1 - stanceG;
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
  if (single) {
    const r = Math.sqrt(dp0 * dp0 + dp1 * dp1);
    const inv = 1.0 / r;
    const force = stanceK * (sysLeg - r);
    const a = force * inv * stanceInvMass;
    d2 = a * dp0;
    d3 = a * dp1 - stanceG;
  } else {
    const dx0 = dp0 - bipedFx0;
    const dy0 = dp1 - bipedFy0;
    const r0 = Math.sqrt(dx0 * dx0 + dy0 * dy0);
    const inv0 = 1.0 / r0;
    const ac0 = (bipedK0 * (bipedL0 - r0)) * inv0 * stanceInvMass;
    const dx1 = dp0 - bipedFx1;
    const dy1 = dp1 - bipedFy1;
    const r1 = Math.sqrt(dx1 * dx1 + dy1 * dy1);
    const inv1 = 1.0 / r1;
    const ac1 = (bipedK1 * (bipedL1 - r1)) * inv1 * stanceInvMass;
    d2 = ac0 * dx0 + ac1 * dx1;
    d3 = ac0 * dy0 + ac1 * dy1 - stanceG;
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
  if (single) {
    const r = Math.sqrt(ep0 * ep0 + ep1 * ep1);
    const inv = 1.0 / r;
    const force = stanceK * (sysLeg - r);
    const a = force * inv * stanceInvMass;
    e2 = a * ep0;
    e3 = a * ep1 - stanceG;
  } else {
    const dx0 = ep0 - bipedFx0;
    const dy0 = ep1 - bipedFy0;
    const r0 = Math.sqrt(dx0 * dx0 + dy0 * dy0);
    const inv0 = 1.0 / r0;
    const ac0 = (bipedK0 * (bipedL0 - r0)) * inv0 * stanceInvMass;
    const dx1 = ep0 - bipedFx1;
    const dy1 = ep1 - bipedFy1;
    const r1 = Math.sqrt(dx1 * dx1 + dy1 * dy1);
    const inv1 = 1.0 / r1;
    const ac1 = (bipedK1 * (bipedL1 - r1)) * inv1 * stanceInvMass;
    e2 = ac0 * dx0 + ac1 * dx1;
    e3 = ac0 * dy0 + ac1 * dy1 - stanceG;
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
  if (single) {
    const r = Math.sqrt(fp0 * fp0 + fp1 * fp1);
    const inv = 1.0 / r;
    const force = stanceK * (sysLeg - r);
    const a = force * inv * stanceInvMass;
    f2 = a * fp0;
    f3 = a * fp1 - stanceG;
  } else {
    const dx0 = fp0 - bipedFx0;
    const dy0 = fp1 - bipedFy0;
    const r0 = Math.sqrt(dx0 * dx0 + dy0 * dy0);
    const inv0 = 1.0 / r0;
    const ac0 = (bipedK0 * (bipedL0 - r0)) * inv0 * stanceInvMass;
    const dx1 = fp0 - bipedFx1;
    const dy1 = fp1 - bipedFy1;
    const r1 = Math.sqrt(dx1 * dx1 + dy1 * dy1);
    const inv1 = 1.0 / r1;
    const ac1 = (bipedK1 * (bipedL1 - r1)) * inv1 * stanceInvMass;
    f2 = ac0 * dx0 + ac1 * dx1;
    f3 = ac0 * dy0 + ac1 * dy1 - stanceG;
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
  if (single) {
    const r = Math.sqrt(gp0 * gp0 + gp1 * gp1);
    const inv = 1.0 / r;
    const force = stanceK * (sysLeg - r);
    const a = force * inv * stanceInvMass;
    g2 = a * gp0;
    g3 = a * gp1 - stanceG;
  } else {
    const dx0 = gp0 - bipedFx0;
    const dy0 = gp1 - bipedFy0;
    const r0 = Math.sqrt(dx0 * dx0 + dy0 * dy0);
    const inv0 = 1.0 / r0;
    const ac0 = (bipedK0 * (bipedL0 - r0)) * inv0 * stanceInvMass;
    const dx1 = gp0 - bipedFx1;
    const dy1 = gp1 - bipedFy1;
    const r1 = Math.sqrt(dx1 * dx1 + dy1 * dy1);
    const inv1 = 1.0 / r1;
    const ac1 = (bipedK1 * (bipedL1 - r1)) * inv1 * stanceInvMass;
    g2 = ac0 * dx0 + ac1 * dx1;
    g3 = ac0 * dy0 + ac1 * dy1 - stanceG;
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
  return undamped ? (strideWalking ? step4w(hh) : step4(hh)) : step(hh, rtol, atol);
}

// Set the right-hand side for the legs in stance (the origin is a stance foot).
function configure(): void {
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
  timeScale = Math.sqrt(mass / kMin);
  groundRel = lowestFoot();
  if (on0 && on1) {
    single = false;
    setBiped(
      mass, gravity,
      footRx(0), footRy(0), lg(0, LF_L0), lg(0, LF_K), lg(0, LF_C),
      footRx(1), footRy(1), lg(1, LF_L0), lg(1, LF_K), lg(1, LF_C),
    );
  } else {
    single = true;
    stanceLeg = on0 ? 0 : 1;
    swing = 1 - stanceLeg;
    setStance(mass, lg(stanceLeg, LF_L0), lg(stanceLeg, LF_K), lg(stanceLeg, LF_C), gravity);
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
  if (stepForce0 > lg(0, LF_PEAK)) ls(0, LF_PEAK, stepForce0);
  if (stepForce1 > lg(1, LF_PEAK)) ls(1, LF_PEAK, stepForce1);
  if (stepComp0 > lg(0, LF_MAXCOMP)) ls(0, LF_MAXCOMP, stepComp0);
  if (stepComp1 > lg(1, LF_MAXCOMP)) ls(1, LF_MAXCOMP, stepComp1);
  if (stepFy > peakVertical) peakVertical = stepFy;
  if (stepFy > 0.0) {
    const fr = Math.abs(stepFx / stepFy);
    if (fr > peakFriction) peakFriction = fr;
  }
}

// Peak leg forces, compressions, summed vertical force and friction ratio at the state p: one
// square root per leg in stance (this runs at every accepted step).
function noteForces(p: usize): void {
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
  if (fy > peakVertical) peakVertical = fy;
  if (fy > 0.0) {
    const fr = Math.abs(fx / fy);
    if (fr > peakFriction) peakFriction = fr;
  }
}

// Trace samples inside the last accepted step (from tS, size hh) up to the fraction thetaEnd.
let traceT0: f64 = 0.0; // absolute time of the stride's section
function traceContact(hh: f64, thetaEnd: f64): void {
  const tEnd = traceT0 + tSec0 + tS + thetaEnd * hh;
  for (;;) {
    const ts = traceNext(tEnd);
    if (ts < 0.0) return;
    const theta = (ts - traceT0 - tSec0 - tS) / hh;
    if (theta < 0.0) continue;
    dense(theta);
    emitAt(ts, YI, ts - traceT0);
  }
}

// One sample of the body at p (relative to the origin) at absolute time ts.
function emitAt(ts: f64, p: usize, tSec: f64): void {
  const x = ox + load<f64>(p, 0);
  const y = oy + load<f64>(p, 8);
  const a = attackAt(model, tSec);
  let f0x: f64, f0y: f64, f1x: f64, f1y: f64;
  if (lg(0, LF_ON) != 0.0) { f0x = lg(0, LF_FX); f0y = lg(0, LF_FY); }
  else { f0x = x + lg(0, LF_L0) * legCos(a); f0y = y - lg(0, LF_L0) * legSin(a); }
  if (lg(1, LF_ON) != 0.0) { f1x = lg(1, LF_FX); f1y = lg(1, LF_FY); }
  else { f1x = x + lg(1, LF_L0) * legCos(a); f1y = y - lg(1, LF_L0) * legSin(a); }
  const phase = single ? PHASE_STANCE : PHASE_DOUBLE;
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
    const y = y0 + vy0 * s - 0.5 * gravity * s * s;
    const a = attackAt(model, hold ? tAngle0 : tAngle0 + s);
    emit2(
      ts, x, y, vx, vy0 - gravity * s,
      x + lg(0, LF_L0) * legCos(a), y - lg(0, LF_L0) * legSin(a), 0.0,
      x + lg(1, LF_L0) * legCos(a), y - lg(1, LF_L0) * legSin(a), 0.0, PHASE_FLIGHT,
    );
  }
}

// Event values at the start of a contact piece (Y0).
let gl00: f64 = 0.0; // liftoff, leg 0 / 1
let gl01: f64 = 0.0;
let gm00: f64 = 0.0; // r', leg 0 / 1
let gm01: f64 = 0.0;
let gt0: f64 = 0.0; // touchdown of the swing leg (armed) or midstance (not yet armed)
let gs0: f64 = 0.0; // section
let gg0: f64 = 0.0; // body on the ground
let gb0: f64 = 0.0; // backward

function startValues(): void {
  gl00 = lg(0, LF_ON) != 0.0 ? evValue(EVB_LIFTOFF, 0, Y0, tS) : 0.0;
  gl01 = lg(1, LF_ON) != 0.0 ? evValue(EVB_LIFTOFF, 1, Y0, tS) : 0.0;
  gm00 = lg(0, LF_ON) != 0.0 ? legRdot(0, Y0) : 0.0;
  gm01 = lg(1, LF_ON) != 0.0 ? legRdot(1, Y0) : 0.0;
  if (single) {
    armed = armed || evValue(EVB_MIDSTANCE, stanceLeg, Y0, tS) >= 0.0;
    gt0 = armed ? evValue(EVB_TOUCHDOWN, swing, Y0, tS) : evValue(EVB_MIDSTANCE, stanceLeg, Y0, tS);
  }
  gs0 = evValue(EVB_SECTION, 0, Y0, tS);
  gg0 = evValue(EVB_GROUND, 0, Y0, tS);
  gb0 = evValue(EVB_BACKWARD, 0, Y0, tS);
}

// The contact loop's own state, kept in globals (not locals) so that rollouts can take turns
// between steps (runBipedBatch): the record, the retry bookkeeping, the step floor.
let contactRec: usize = 0;
let afterReject = false;
let nonFinite = 0;
let stepsHere = 0;
let hMin: f64 = 0.0;
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
    r = contactAfter(bstep(h));
    if (r != CONTACT_GO) return r;
  }
  return STATUS_STEP_LIMIT; // not reached: the loop returns
}

function contactBegin(rec: usize): void {
  contactRec = rec;
  if (undamped) zeroFifth();
  configure();
  resetController();
  rhs(Y0, K1);
  startValues();
  afterReject = false;
  nonFinite = 0;
  stepsHere = 0;
  hMin = 1e-13 * timeScale;
  noteForces(Y0);
}

// The checks before each step: CONTACT_GO, or the status that ends the contact.
function contactBefore(): i32 {
  if (stepsHere >= maxSteps) return STATUS_STEP_LIMIT;
  if (tS > tContactLimit) return single ? STATUS_NO_LIFTOFF : STATUS_STALLED;
  if (h < hMin) return STATUS_STEP_UNDERFLOW;
  return CONTACT_GO;
}

// After a step of size h with error err (bstep's value): rejection, or acceptance with the
// events inside the step. CONTACT_GO, or END_SECTION, END_FLIGHT or a STATUS_* code.
function contactAfter(err: f64): i32 {
  const rec = contactRec;
  if (isNaN(err)) {
    rejected++;
    stepsHere++;
    if (++nonFinite > 40) return STATUS_NON_FINITE;
    h *= 0.1;
    afterReject = true;
    return CONTACT_GO;
  }
  if (err > 1.0) {
    rejected++;
    stepsHere++;
    h *= rejectFactor(err);
    afterReject = true;
    return CONTACT_GO;
  }
  if (firstStep) {
    firstH = h;
    firstStep = false;
  }
  steps++;
  stepsHere++;

  // Event values at the step end.
  let gl10: f64 = 0.0;
  let gl11: f64 = 0.0;
  let gm10: f64 = 0.0;
  let gm11: f64 = 0.0;
  if (single) {
    // exactly the stance driver's arithmetic (stance.ts), foot at the origin
    const npx = load<f64>(YN, 0);
    const npy = load<f64>(YN, 8);
    const nvx = load<f64>(YN, 16);
    const nr = Math.sqrt(npx * npx + npy * npy);
    const nrdot = (npx * nvx + npy * load<f64>(YN, 24)) / nr;
    const leg = lg(stanceLeg, LF_L0);
    const c = lg(stanceLeg, LF_C);
    const nforce = lg(stanceLeg, LF_K) * (leg - nr) - c * nrdot;
    const gl = c > 0.0 ? -nforce : nr - leg;
    if (stanceLeg == 0) { gl10 = gl; gm10 = nrdot; } else { gl11 = gl; gm11 = nrdot; }
    stepForce0 = stanceLeg == 0 ? nforce : 0.0;
    stepForce1 = stanceLeg == 1 ? nforce : 0.0;
    stepComp0 = stanceLeg == 0 ? leg - nr : 0.0;
    stepComp1 = stanceLeg == 1 ? leg - nr : 0.0;
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
  const gg1 = groundRel - load<f64>(YN, 8);
  const gb1 = -load<f64>(YN, 16);
  let gt1: f64 = 0.0;
  let armsHere = false;

  let stopTheta: f64 = 2.0;
  let stopEvent = -1;
  let stopLeg = 0;
  // maximum compression of each leg: the first splits the stance with a split schedule; a leg
  // without one has every local maximum located (its force humps, e.g. a walking leg's two)
  let mTheta0: f64 = 2.0;
  let mTheta1: f64 = 2.0;
  if (lg(0, LF_ON) != 0.0 && (lg(0, LF_COMPRESSING) != 0.0 || lg(0, LF_SPLIT) == 0.0) && crossesB(EVB_MAX_COMPRESSION, gm00, gm10)) {
    mTheta0 = single ? locate(EV_MAX_COMPRESSION, gm00, gm10, LOCATE_TOL) : locateB(EVB_MAX_COMPRESSION, 0, 0.0, gm00, gm10, tS, h);
    if (lg(0, LF_SPLIT) != 0.0 && mTheta0 < stopTheta) { stopTheta = mTheta0; stopEvent = EVB_MAX_COMPRESSION; stopLeg = 0; }
  }
  if (lg(1, LF_ON) != 0.0 && (lg(1, LF_COMPRESSING) != 0.0 || lg(1, LF_SPLIT) == 0.0) && crossesB(EVB_MAX_COMPRESSION, gm01, gm11)) {
    mTheta1 = single ? locate(EV_MAX_COMPRESSION, gm01, gm11, LOCATE_TOL) : locateB(EVB_MAX_COMPRESSION, 1, 0.0, gm01, gm11, tS, h);
    if (lg(1, LF_SPLIT) != 0.0 && mTheta1 < stopTheta) { stopTheta = mTheta1; stopEvent = EVB_MAX_COMPRESSION; stopLeg = 1; }
  }
  if (lg(0, LF_ON) != 0.0 && crossesB(EVB_LIFTOFF, gl00, gl10)) {
    const th = single ? locate(EV_LIFTOFF, gl00, gl10, LOCATE_TOL) : locateB(EVB_LIFTOFF, 0, 0.0, gl00, gl10, tS, h);
    if (th < stopTheta) { stopTheta = th; stopEvent = EVB_LIFTOFF; stopLeg = 0; }
  }
  if (lg(1, LF_ON) != 0.0 && crossesB(EVB_LIFTOFF, gl01, gl11)) {
    const th = single ? locate(EV_LIFTOFF, gl01, gl11, LOCATE_TOL) : locateB(EVB_LIFTOFF, 1, 0.0, gl01, gl11, tS, h);
    if (th < stopTheta) { stopTheta = th; stopEvent = EVB_LIFTOFF; stopLeg = 1; }
  }
  if (crossesB(EVB_GROUND, gg0, gg1)) {
    const th = locateB(EVB_GROUND, 0, 0.0, gg0, gg1, tS, h);
    if (th < stopTheta) { stopTheta = th; stopEvent = EVB_GROUND; }
  }
  if (crossesB(EVB_BACKWARD, gb0, gb1)) {
    const th = locateB(EVB_BACKWARD, 0, 0.0, gb0, gb1, tS, h);
    if (th < stopTheta) { stopTheta = th; stopEvent = EVB_BACKWARD; }
  }
  if (single && sectionArmed && crossesB(EVB_SECTION, gs0, gs1)) {
    const th = locateB(EVB_SECTION, 0, 0.0, gs0, gs1, tS, h);
    if (th < stopTheta) { stopTheta = th; stopEvent = EVB_SECTION; }
  }
  if (single) {
    // The swing leg: armed once the body passes midstance of the stance leg, then touches
    // down at the next downward crossing of its touchdown height, the body descending.
    let from: f64 = 0.0;
    let gFrom = gt0;
    let look = armed;
    if (!armed) {
      const gmid1 = load<f64>(YN, 0) - footRx(stanceLeg); // evValue(EVB_MIDSTANCE, ...) written in
      if (crossesB(EVB_MIDSTANCE, gt0, gmid1)) {
        from = locateB(EVB_MIDSTANCE, stanceLeg, 0.0, gt0, gmid1, tS, h);
        dense(from);
        gFrom = evValue(EVB_TOUCHDOWN, swing, YI, tS + from * h);
        armsHere = true;
        look = true;
      } else {
        gt1 = gmid1;
      }
    }
    if (look) {
      // evValue(EVB_TOUCHDOWN, ...), the fixed angle's height written in
      gt1 = fixedAngle
        ? lg(swing, LF_TOUCH_HEIGHT) - (load<f64>(YN, 8) + oy - swingGround)
        : evValue(EVB_TOUCHDOWN, swing, YN, tS + h);
      if (from < stopTheta && crossesB(EVB_TOUCHDOWN, gFrom, gt1)) {
        const th = locateB(EVB_TOUCHDOWN, swing, from, gFrom, gt1, tS, h);
        dense(th);
        if (th < stopTheta && load<f64>(YI, 24) < 0.0) { stopTheta = th; stopEvent = EVB_TOUCHDOWN; stopLeg = swing; }
      }
    }
  }

  // Record-only maximum compressions before the stop.
  if (mTheta0 <= 1.0 && mTheta0 <= stopTheta && lg(0, LF_SPLIT) == 0.0) {
    dense(mTheta0);
    noteForces(YI);
    ls(0, LF_COMPRESSING, 0.0);
  }
  if (mTheta1 <= 1.0 && mTheta1 <= stopTheta && lg(1, LF_SPLIT) == 0.0) {
    dense(mTheta1);
    noteForces(YI);
    ls(1, LF_COMPRESSING, 0.0);
  }
  if (tracing) traceContact(h, stopTheta < 1.0 ? stopTheta : 1.0);

  if (stopEvent < 0) {
    notePeaks();
    tS += h;
    advance();
    gl00 = gl10;
    gl01 = gl11;
    gm00 = gm10;
    gm01 = gm11;
    gs0 = gs1;
    gg0 = gg1;
    gb0 = gb1;
    if (single) {
      if (armsHere) armed = true;
      gt0 = gt1;
    }
    h *= acceptFactor(err, afterReject);
    afterReject = false;
    return CONTACT_GO;
  }

  // The event: re-take the step to the located time on the true solution, then polish.
  const hNext = h * acceptFactor(err, afterReject);
  let hEvent = stopTheta * h;
  if (stopEvent != EVB_GROUND && stopEvent != EVB_BACKWARD) {
    bstep(hEvent);
    steps++;
    stepsHere++;
  }
  let tEvent: f64;
  if (single && (stopEvent == EVB_LIFTOFF || stopEvent == EVB_MAX_COMPRESSION)) {
    // the stance driver's own polish (events.ts), on the single-leg equations
    tEvent = tS + hEvent;
    tEvent += refine(stopEvent == EVB_LIFTOFF ? EV_LIFTOFF : EV_MAX_COMPRESSION, timeScale);
  } else if (stopEvent == EVB_GROUND || stopEvent == EVB_BACKWARD) {
    tEvent = tS + hEvent;
  } else {
    hEvent = polishB(stopEvent, stopLeg, hEvent);
    tEvent = tS + hEvent;
  }
  if (stopEvent == EVB_GROUND) return STATUS_BODY_HIT_GROUND;
  if (stopEvent == EVB_BACKWARD) return single ? STATUS_FELL_BACKWARD : STATUS_STALLED;
  noteForces(YN);

  if (stopEvent == EVB_SECTION) {
    saveEnd(tEvent, stanceLeg);
    return END_SECTION;
  }
  if (stopEvent == EVB_MAX_COMPRESSION) {
    ls(stopLeg, LF_COMPRESSING, 0.0);
    ls(stopLeg, LF_K, lg(stopLeg, LF_KE));
    if (single) setStiffness(lg(stopLeg, LF_KE));
    else setBipedStiffness(stopLeg, lg(stopLeg, LF_KE));
    memory.copy(Y0, YN, 40);
    rhs(Y0, K1); // the right-hand side changed: no FSAL across the switch
    tS = tEvent;
    startValues();
    h = hNext;
    afterReject = false;
    return CONTACT_GO;
  }
  if (stopEvent == EVB_LIFTOFF) {
    ls(stopLeg, LF_ON, 0.0);
    ls(stopLeg, LF_LO, tSec0 + tEvent);
    if (single) {
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
      ls(o, LF_LO, tSec0 + tEvent);
      put(rec, R_DOUBLE_END, tSec0 + tEvent);
      saveEnd(tEvent, stopLeg);
      endBoth = true;
      return END_FLIGHT;
    }
    // double -> single support on the other leg; the frame moves to its foot
    put(rec, R_DOUBLE_END, tSec0 + tEvent);
    const m = 1 - stopLeg;
    const sx = footRx(m);
    const sy = footRy(m);
    store<f64>(YN, load<f64>(YN, 0) - sx, 0);
    store<f64>(YN, load<f64>(YN, 8) - sy, 8);
    ox = lg(m, LF_FX);
    oy = lg(m, LF_FY);
    sectionArmed = strideWalking && touchedDown && !isNaN(lg(m, LF_TD));
    armed = false;
  } else {
    // EVB_TOUCHDOWN of the swing leg
    if (!strideWalking) return STATUS_GAIT_CHANGED;
    if (touchedDown) return STATUS_NO_SECTION;
    const j = stopLeg;
    const tTd = tSec0 + tEvent;
    const a = attackAt(model, tTd);
    if (!(a > 0.0 && a <= MAX_ATTACK)) return STATUS_ATTACK_OUT_OF_RANGE;
    if (a < minAttack) minAttack = a;
    if (a > maxAttack) maxAttack = a;
    const px = load<f64>(YN, 0);
    ls(j, LF_ON, 1.0);
    ls(j, LF_FX, ox + px + lg(j, LF_L0) * legCos(a));
    ls(j, LF_FY, swingGround);
    chooseStiffness(model, tTd, lg(j, LF_KSCALE));
    ls(j, LF_KC, stanceKc);
    ls(j, LF_KE, stanceKe);
    ls(j, LF_K, stanceKc);
    ls(j, LF_SPLIT, stanceSplit ? 1.0 : 0.0);
    ls(j, LF_COMPRESSING, 1.0);
    ls(j, LF_TD, tTd);
    touchedDown = true;
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
  tS = tEvent;
  configure();
  rhs(Y0, K1);
  startValues();
  h = hNext;
  afterReject = false;
  return CONTACT_GO;
}

function saveEnd(t: f64, leg: i32): void {
  endPx = load<f64>(YN, 0);
  endPy = load<f64>(YN, 8);
  endVx = load<f64>(YN, 16);
  endVy = load<f64>(YN, 24);
  endW = load<f64>(YN, 32);
  endT = t;
  endLeg = leg;
}

function recordLiftoff(rec: usize, leg: i32): void {
  const dx = load<f64>(YN, 0) - footRx(leg);
  const dy = load<f64>(YN, 8) - footRy(leg);
  if (lg(leg, LF_C) > 0.0) {
    const c = lg(leg, LF_L0) - Math.sqrt(dx * dx + dy * dy);
    lostSpring += 0.5 * lg(leg, LF_K) * c * c;
  }
  put(rec, R_LIFTOFF_X, ox + load<f64>(YN, 0));
  put(rec, R_LIFTOFF_Y, oy + load<f64>(YN, 8));
  put(rec, R_LIFTOFF_VX, load<f64>(YN, 16));
  put(rec, R_LIFTOFF_VY, load<f64>(YN, 24));
  put(rec, R_LIFTOFF_ANGLE, Math.atan2(dy, dx));
  const c = lg(leg, LF_C);
  put(rec, R_LIFTOFF_LEG_FORCE, c > 0.0 ? lg(leg, LF_K) * (lg(leg, LF_L0) - Math.sqrt(dx * dx + dy * dy)) - c * ((dx * load<f64>(YN, 16) + dy * load<f64>(YN, 24)) / Math.sqrt(dx * dx + dy * dy)) : 0.0);
}

// Energy of the body and the springs in stance, J (potential from height 0).
function energyAt(x: f64, y: f64, vx: f64, vy: f64): f64 {
  let e = mass * gravity * y + 0.5 * mass * (vx * vx + vy * vy);
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
let strides: i32 = 0;
let rec0: usize = 0;
let summary: usize = 0;
let strideIndex: i32 = 0;
let strideRec: usize = 0;
let scratchRecord: usize = SCRATCH_RECORD;
let targetHeight: f64 = 0.0;
let targetSpeed: f64 = 0.0;
let stream: u64 = 0;
let section: i32 = 0;
let apexY: f64 = 0.0;
let apexVx: f64 = 0.0;
let offset: f64 = 0.0;
let leg: i32 = 0;
let apexX: f64 = 0.0;
let apexT: f64 = 0.0;
let prevHeight: f64 = 0.0;
let prevSpeed: f64 = 0.0;
let prevOffset: f64 = 0.0;
let status: i32 = 0;
let completed: i32 = 0;
let maxForce: f64 = 0.0;
let maxFriction: f64 = 0.0;
let maxCompression: f64 = 0.0;
let maxVertical: f64 = 0.0;
let sumSqHeight: f64 = 0.0;
let sumSqSpeed: f64 = 0.0;
let allSteps: i32 = 0;
let allRejected: i32 = 0;

// One rollout: rolloutBegin, then for each stride strideBegin, the contact (runContact) and
// strideEnd, then rolloutEnd (the summary). runBipedBatch runs the same pieces for rollouts
// that take turns.
export function runBipedRollout(mdl: usize, input: usize, strides: i32, rec0: usize, summary: usize): i32 {
  LEGS = LEGS_DEFAULT;
  scratchRecord = SCRATCH_RECORD;
  useBuffers(DEFAULT_BUFFERS);
  rolloutBegin(mdl, input, strides, rec0, summary);
  while (strideBegin()) {
    if (!strideEnd(runContact(strideRec))) break;
  }
  return rolloutEnd();
}

function rolloutBegin(mdl: usize, input: usize, nStrides: i32, records: usize, sum: usize): void {
  model = mdl;
  strides = nStrides;
  rec0 = records;
  summary = sum;
  strideIndex = 0;
  mass = mget(model, M_MASS) * get(input, I_MASS_SCALE);
  gravity = mget(model, M_GRAVITY);
  rtol = mget(model, M_RTOL);
  atol = mget(model, M_ATOL);
  maxSteps = <i32>mget(model, M_MAX_STEPS);
  const kScale = get(input, I_STIFFNESS_SCALE);
  const legScale = get(input, I_LEG_SCALE);
  targetHeight = mget(model, M_TARGET_HEIGHT);
  targetSpeed = mget(model, M_TARGET_SPEED);
  stream = <u64>get(input, I_STREAM);
  ls(0, LF_L0, mget(model, M_BIPED_LENGTH_0) * legScale);
  ls(1, LF_L0, mget(model, M_BIPED_LENGTH_1) * legScale);
  ls(0, LF_KSCALE, mget(model, M_BIPED_STIFFNESS_SCALE_0) * kScale);
  ls(1, LF_KSCALE, mget(model, M_BIPED_STIFFNESS_SCALE_1) * kScale);
  ls(0, LF_C, mget(model, M_BIPED_DAMPING_0));
  ls(1, LF_C, mget(model, M_BIPED_DAMPING_1));
  undamped = lg(0, LF_C) == 0.0 && lg(1, LF_C) == 0.0;
  fixedAngle = <i32>mget(model, M_ANGLE_KIND) == ANGLE_FIXED;
  if (fixedAngle) {
    const sinA = legSin(mget(model, M_ATTACK));
    ls(0, LF_TOUCH_HEIGHT, lg(0, LF_L0) * sinA);
    ls(1, LF_TOUCH_HEIGHT, lg(1, LF_L0) * sinA);
  }
  for (let i = 0; i < 2; i++) {
    ls(i, LF_ON, 0.0);
    ls(i, LF_FX, 0.0);
    ls(i, LF_FY, 0.0);
  }
  resetWalk();

  section = <i32>get(input, I_SECTION_KIND);
  apexY = get(input, I_APEX_HEIGHT);
  apexVx = get(input, I_FORWARD_SPEED);
  offset = section == SECTION_SINGLE_SUPPORT_APEX ? get(input, I_SECTION_OFFSET) : NaN;
  const legCode = <i32>get(input, I_SECTION_LEG);
  leg = legCode == 1 ? 1 : legCode == 2 && section == SECTION_FLIGHT_APEX ? 2 : 0;
  apexX = 0.0;
  apexT = 0.0;
  prevHeight = apexY;
  prevSpeed = apexVx;
  prevOffset = offset;
  minAttack = Infinity;
  maxAttack = -Infinity;

  status = STATUS_OK;
  completed = 0;
  maxForce = 0.0;
  maxFriction = 0.0;
  maxCompression = 0.0;
  maxVertical = 0.0;
  sumSqHeight = 0.0;
  sumSqSpeed = 0.0;
  allSteps = 0;
  allRejected = 0;
  const leg0 = leg == 2 ? 0 : leg;
  const kFirst = mget(model, M_STIFFNESS) * lg(leg0, LF_KSCALE);
  h = initialStep(mass, kFirst, apexVx, lg(leg0, LF_L0), rtol);

  if (section == SECTION_SINGLE_SUPPORT_APEX) {
    // the stance leg at the start: pinned at -offset on ground 0, past its maximum compression
    ls(leg, LF_ON, 1.0);
    ls(leg, LF_FX, -offset);
    ls(leg, LF_FY, 0.0);
    chooseStiffness(model, 0.0, lg(leg, LF_KSCALE));
    ls(leg, LF_KC, stanceKc);
    ls(leg, LF_KE, stanceKe);
    ls(leg, LF_K, stanceKe);
    ls(leg, LF_SPLIT, stanceSplit ? 1.0 : 0.0);
    ls(leg, LF_COMPRESSING, 0.0);
  }

}

// The start of stride strideIndex up to its contact (the flight before it, for a running
// stride): true when the contact is to run from Y0, false when the rollout ended here (status).
function strideBegin(): bool {
  if (strideIndex >= strides) return false;
  const rec = rec0 != 0 ? rec0 + (<usize>strideIndex * R_SIZE << 3) : scratchRecord;
  strideRec = rec;
  if (rec0 != 0) for (let f = 0; f < R_SIZE; f++) put(rec, f, NaN);
  put(rec, R_APEX_HEIGHT, apexY);
  put(rec, R_APEX_SPEED, apexVx);
  put(rec, R_APEX_TIME, apexT);
  put(rec, R_APEX_X, apexX);
  put(rec, R_SECTION_KIND, <f64>section);
  put(rec, R_SECTION_OFFSET, offset);
  put(rec, R_SECTION_LEG, <f64>leg);
  const energyBefore = energyAt(apexX, apexY, apexVx, 0.0);
  put(rec, R_ENERGY_BEFORE, energyBefore);
  if (!isFinite(apexY) || !isFinite(apexVx)) { status = STATUS_NON_FINITE; put(rec, R_STATUS, <f64>status); return false; }
  strideWalking = section == SECTION_SINGLE_SUPPORT_APEX;
  put(rec, R_GAIT, strideWalking ? <f64>GAIT_WALKING : leg == 2 ? <f64>GAIT_HOPPING : <f64>GAIT_RUNNING);
  endBoth = false;
  traceStride = strideIndex;
  traceT0 = apexT;
  for (let i = 0; i < 2; i++) {
    ls(i, LF_PEAK, 0.0);
    ls(i, LF_MAXCOMP, 0.0);
    ls(i, LF_TD, NaN);
    ls(i, LF_LO, NaN);
  }
  peakVertical = 0.0;
  peakFriction = 0.0;
  lostSpring = 0.0;
  touchedDown = false;
  sectionArmed = false;
  armed = false;
  firstStep = true;
  steps = 0;
  rejected = 0;
  swingGround = groundAt(model, strideIndex, stream);
  put(rec, R_GROUND, swingGround);

  // The contact's time limit: far beyond any stance that ends (as the stance driver's).
  let kMin: f64 = Infinity;
  for (let i = 0; i < 2; i++) {
    const k = mget(model, M_STIFFNESS) * lg(i, LF_KSCALE);
    if (k < kMin) kMin = k;
  }

  if (strideWalking) {
    ox = lg(leg, LF_FX);
    oy = lg(leg, LF_FY);
    const r = Math.sqrt((apexX - ox) * (apexX - ox) + (apexY - oy) * (apexY - oy));
    if (!(r <= lg(leg, LF_L0))) { status = STATUS_LEG_NOT_PLACEABLE; put(rec, R_STATUS, <f64>status); return false; }
    // after a section the state relative to the stance foot carries over exactly
    store<f64>(Y0, strideIndex > 0 ? relPx : apexX - ox, 0);
    store<f64>(Y0, strideIndex > 0 ? relPy : apexY - oy, 8);
    store<f64>(Y0, apexVx, 16);
    store<f64>(Y0, 0.0, 24);
    store<f64>(Y0, 0.0, 32);
    tSec0 = 0.0;
    tS = 0.0;
  } else {
    // flight from the apex to the touchdown of `leg`, closed form (flight.ts); with leg 2 both
    // legs are ready and the one whose foot reaches the ground first lands (both at once when
    // they reach it at the same time)
    let j = leg == 2 ? 0 : leg;
    let tTouch = touchdownTime(model, apexY, swingGround, lg(j, LF_L0), gravity);
    let both = false;
    if (leg == 2) {
      const t1 = touchdownTime(model, apexY, swingGround, lg(1, LF_L0), gravity);
      if (t1 >= 0.0 && (tTouch < 0.0 || t1 < tTouch)) { j = 1; tTouch = t1; }
      else both = t1 == tTouch;
    }
    const l0 = lg(j, LF_L0);
    if (tTouch < 0.0) {
      status = tTouch == TOUCHDOWN_NOT_PLACEABLE ? STATUS_LEG_NOT_PLACEABLE
        : tTouch == TOUCHDOWN_GROUND_FIRST ? STATUS_BODY_HIT_GROUND
        : tTouch == TOUCHDOWN_ANGLE_LEFT ? STATUS_ATTACK_OUT_OF_RANGE
        : STATUS_STEP_LIMIT;
      put(rec, R_STATUS, <f64>status);
      return false;
    }
    const attack = attackAt(model, tTouch);
    if (!(attack > 0.0 && attack <= MAX_ATTACK)) { status = STATUS_ATTACK_OUT_OF_RANGE; put(rec, R_STATUS, <f64>status); return false; }
    if (attack < minAttack) minAttack = attack;
    if (attack > maxAttack) maxAttack = attack;
    const cosA = legCos(attack);
    const sinA = legSin(attack);
    const xTouch = apexX + apexVx * tTouch;
    const vyTouch = -gravity * tTouch;
    const px = -l0 * cosA;
    const py = l0 * sinA;
    const footX = xTouch - px;
    if (tracing) traceFlightB(apexT, apexT + tTouch, apexX, apexY, apexVx, 0.0, 0.0, false);
    ls(j, LF_ON, 1.0);
    ls(j, LF_FX, footX);
    ls(j, LF_FY, swingGround);
    chooseStiffness(model, tTouch, lg(j, LF_KSCALE));
    ls(j, LF_KC, stanceKc);
    ls(j, LF_KE, stanceKe);
    ls(j, LF_K, stanceKc);
    ls(j, LF_SPLIT, stanceSplit ? 1.0 : 0.0);
    ls(j, LF_COMPRESSING, 1.0);
    ls(j, LF_TD, tTouch);
    if (both) {
      const o = 1 - j;
      ls(o, LF_ON, 1.0);
      ls(o, LF_FX, xTouch + lg(o, LF_L0) * cosA);
      ls(o, LF_FY, swingGround);
      chooseStiffness(model, tTouch, lg(o, LF_KSCALE));
      ls(o, LF_KC, stanceKc);
      ls(o, LF_KE, stanceKe);
      ls(o, LF_K, stanceKc);
      ls(o, LF_SPLIT, stanceSplit ? 1.0 : 0.0);
      ls(o, LF_COMPRESSING, 1.0);
      ls(o, LF_TD, tTouch);
      put(rec, R_DOUBLE_START, tTouch);
      chooseStiffness(model, tTouch, lg(j, LF_KSCALE)); // R_K_* below: the first leg's
    }
    touchedDown = true;
    put(rec, R_APEX_TO_TOUCHDOWN, tTouch);
    put(rec, R_ATTACK, attack);
    put(rec, R_FOOT_X, footX);
    put(rec, R_TOUCHDOWN_VX, apexVx);
    put(rec, R_TOUCHDOWN_VY, vyTouch);
    put(rec, R_K_COMPRESSION, stanceKc);
    put(rec, R_K_EXTENSION, stanceKe);
    ox = footX;
    oy = swingGround;
    store<f64>(Y0, px, 0);
    store<f64>(Y0, py, 8);
    store<f64>(Y0, apexVx, 16);
    store<f64>(Y0, vyTouch, 24);
    store<f64>(Y0, 0.0, 32);
    tSec0 = tTouch;
    tS = 0.0;
  }
  tContactLimit = 20.0 * Math.PI * Math.sqrt(mass / kMin);

  return true;
}

// The rest of the stride after its contact ended with `end` (END_SECTION, END_FLIGHT or a
// STATUS_* code): true when the rollout goes on to the next stride.
function strideEnd(end: i32): bool {
  const rec = strideRec;
  allSteps += steps;
  allRejected += rejected;
  put(rec, R_STEPS, <f64>steps);
  put(rec, R_REJECTED, <f64>rejected);
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
  put(rec, R_PEAK_VERTICAL_FORCE, peakVertical);
  put(rec, R_PEAK_FRICTION, peakFriction);
  if (end >= 0) {
    // a failure status; a gait change names the gait it changed to
    if (end == STATUS_GAIT_CHANGED) put(rec, R_GAIT, strideWalking ? <f64>GAIT_RUNNING : <f64>GAIT_WALKING);
    status = end;
    put(rec, R_STATUS, <f64>status);
    return false;
  }

  let yNext: f64, xNext: f64, vxNext: f64, tNext: f64, eAfter: f64;
  let nextSection: i32, nextOffset: f64, nextLeg: i32;
  if (end == END_FLIGHT) {
    const xLift = ox + endPx;
    const yLift = oy + endPy;
    const tLift = apexT + tSec0 + endT;
    if (strideWalking) {
      status = STATUS_GAIT_CHANGED;
      put(rec, R_GAIT, <f64>GAIT_RUNNING);
      put(rec, R_STATUS, <f64>status);
      return false;
    }
    put(rec, R_CONTACT, endT);
    if (tracing) {
      emit2(tLift, xLift, yLift, endVx, endVy, lg(0, LF_FX), lg(0, LF_FY), 0.0, lg(1, LF_FX), lg(1, LF_FY), 0.0, PHASE_FLIGHT);
    }
    if (!(endVy > 0.0)) { status = STATUS_NO_APEX; put(rec, R_STATUS, <f64>status); return false; }
    const tUp = endVy / gravity;
    yNext = yLift + (endVy * endVy) / (2.0 * gravity);
    xNext = xLift + endVx * tUp;
    vxNext = endVx;
    tNext = tLift + tUp;
    if (tracing) traceFlightB(tLift, tNext, xLift, yLift, endVx, endVy, 0.0, true);
    // the springs hold no energy in flight; with damping, what the leg still held is lost
    eAfter = mass * gravity * yNext + 0.5 * mass * vxNext * vxNext;
    nextSection = SECTION_FLIGHT_APEX;
    nextOffset = NaN;
    nextLeg = endBoth ? 2 : 1 - endLeg;
  } else {
    yNext = oy + endPy;
    xNext = ox + endPx;
    vxNext = endVx;
    tNext = apexT + tSec0 + endT;
    eAfter = energyAt(xNext, yNext, vxNext, 0.0);
    nextSection = SECTION_SINGLE_SUPPORT_APEX;
    nextOffset = endPx - footRx(endLeg);
    nextLeg = endLeg;
    relPx = endPx;
    relPy = endPy;
  }
  // the dampers' work, and the spring energy damped legs still held when they left
  put(rec, R_DISSIPATED, endW + lostSpring);
  put(rec, R_NEXT_APEX_HEIGHT, yNext);
  put(rec, R_NEXT_APEX_SPEED, vxNext);
  put(rec, R_NEXT_APEX_X, xNext);
  put(rec, R_NEXT_APEX_TIME, tNext);
  put(rec, R_STRIDE_TIME, tNext - apexT);
  put(rec, R_ENERGY_AFTER, eAfter);
  put(rec, R_NEXT_SECTION_KIND, <f64>nextSection);
  put(rec, R_NEXT_SECTION_OFFSET, nextOffset);
  put(rec, R_NEXT_SECTION_LEG, <f64>nextLeg);
  put(rec, R_STATUS, <f64>STATUS_OK);

  const pk = p0 > p1 ? p0 : p1;
  if (pk > maxForce) maxForce = pk;
  if (peakFriction > maxFriction) maxFriction = peakFriction;
  const cm = c0 > c1 ? c0 : c1;
  if (cm > maxCompression) maxCompression = cm;
  if (peakVertical > maxVertical) maxVertical = peakVertical;
  const eh = yNext - targetHeight;
  const ev = vxNext - targetSpeed;
  sumSqHeight += eh * eh;
  sumSqSpeed += ev * ev;
  prevHeight = apexY;
  prevSpeed = apexVx;
  prevOffset = offset;
  apexY = yNext;
  apexVx = vxNext;
  apexX = xNext;
  apexT = tNext;
  section = nextSection;
  offset = nextOffset;
  leg = nextLeg;
  h = firstH;
  completed++;
  strideIndex++;
  return true;
}

// The rest of the records and the summary; the rollout's status.
function rolloutEnd(): i32 {
  if (rec0 != 0) {
    for (let q = completed + 1; q < strides; q++) {
      const rec = rec0 + (<usize>q * R_SIZE << 3);
      for (let f = 0; f < R_SIZE; f++) put(rec, f, NaN);
    }
  }
  put(summary, S_STATUS, <f64>status);
  put(summary, S_STRIDES_COMPLETED, <f64>completed);
  put(summary, S_FINAL_HEIGHT, apexY);
  put(summary, S_FINAL_SPEED, apexVx);
  put(summary, S_PREVIOUS_HEIGHT, prevHeight);
  put(summary, S_PREVIOUS_SPEED, prevSpeed);
  put(summary, S_MAX_PEAK_FORCE, maxForce);
  put(summary, S_MAX_FRICTION, maxFriction);
  put(summary, S_MAX_COMPRESSION, maxCompression);
  put(summary, S_MIN_ATTACK, minAttack);
  put(summary, S_MAX_ATTACK, maxAttack);
  put(summary, S_SUM_SQ_HEIGHT_ERROR, sumSqHeight);
  put(summary, S_SUM_SQ_SPEED_ERROR, sumSqSpeed);
  put(summary, S_TIME, apexT);
  put(summary, S_DISTANCE, apexX);
  put(summary, S_STEPS, <f64>allSteps);
  put(summary, S_REJECTED, <f64>allRejected);
  put(summary, S_FINAL_OFFSET, offset);
  put(summary, S_PREVIOUS_OFFSET, prevOffset);
  put(summary, S_FINAL_LEG, <f64>leg);
  put(summary, S_FINAL_SECTION_KIND, <f64>section);
  put(summary, S_MAX_VERTICAL_FORCE, maxVertical);
  return status;
}
