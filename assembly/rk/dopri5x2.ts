// Dormand–Prince 5(4) steps of several stances at once, one stance in each f64x2 lane:
// the stances of rollouts stepped together (stance.ts, rollout.ts). Each lane performs the
// same IEEE operations in the same order as step() in dopri5.ts (WebAssembly has no fused
// multiply-add, and f64x2 arithmetic rounds each lane as scalar f64 does), so a lane's
// result is the one step() gives, bit for bit; only the work component's stage values, which
// no right-hand side reads, are not formed (and none at all without a damper). A step is a latency-bound chain of square roots
// and divisions: stepPair runs one f64x2 chain for two stances, stepQuad two independent
// chains for four, and each costs little more than one scalar step.
//
// Generated from the tableau in dopri5.ts (the same constants, imported) and the stance
// right-hand side in system.ts; change those and this together.

import {
  A21, A31, A32, A41, A42, A43, A51, A52, A53, A54, A61, A62, A63, A64, A65,
  B1, B3, B4, B5, B6, E1, E3, E4, E5, E6, E7,
  OFF_Y0, OFF_K1, OFF_K3, OFF_K7, OFF_YN, EXPO, BETA,
} from "./dopri5";
import { Stance } from "../stance";

// The tableau's coefficients, each twice (an f64x2), read from memory at each use: held in
// registers through the step they crowd out the stages.
const TABLEAU2: usize = memory.data<f64>([A21, A21, A31, A31, A32, A32, A41, A41, A42, A42, A43, A43, A51, A51, A52, A52, A53, A53, A54, A54, A61, A61, A62, A62, A63, A63, A64, A64, A65, A65, B1, B1, B3, B3, B4, B4, B5, B5, B6, B6, E1, E1, E3, E3, E4, E4, E5, E5, E6, E6, E7, E7], 16);

// The step size and body parameters of the step in progress, lane pair by lane pair (PARAMS).
const LANE_PARAMS: usize = memory.data(2 * 13 * 16, 16);

// K3..K6 of the last stepPair or stepQuad, lane pair by lane pair (lanes 0, 1, then 2, 3), as
// f64x2 (stage, component): each lane's copy in its own buffers only when it needs them
// (unpackStages), for the interpolant.
const LANE_STAGES: usize = memory.data(2 * 4 * 5 * 16, 16);

// The K3..K6 of lane number lane of the last stepPair or stepQuad into its buffers at p.
export function unpackStages(lane: i32, p: usize): void {
  const src = LANE_STAGES + <usize>(lane >> 1) * 320 + <usize>(lane & 1) * 8;
  for (let j: usize = 0; j < 20; j++) store<f64>(p + OFF_K3 + (j << 3), load<f64>(src + (j << 4)));
}

// For each lane of the last stepPair or stepQuad, as f64x2 pairs (lanes 0, 1, then 2, 3): the
// leg force k (L0 - r) - c r', r - L0, r' and |px / py| at the step's end, and the factor
// acceptFactor would give if the step is accepted (laneEnd).
const LANE_END: usize = memory.data(2 * 5 * 16, 16);
export const END_FORCE = 0;
export const END_RADIUS = 1;
export const END_RATE = 2;
export const END_FRICTION = 3;
export const END_FACTOR = 4;

@inline export function laneEnd(lane: i32, q: i32): f64 {
  return load<f64>(LANE_END + <usize>(lane >> 1) * 80 + (<usize>q << 4) + <usize>(lane & 1) * 8);
}

// roughPow (dopri5.ts) in each lane, the same operations.
@inline function roughPow2(x: v128, p: f64): v128 {
  const ex = i64x2.sub(i64x2.shr_u(x, 52), i64x2.splat(1023));
  // the exponent (-1023..1024) from the low halves of the i64 lanes, exactly
  const e = f64x2.convert_low_i32x4_s(i8x16.shuffle(ex, ex, 0, 1, 2, 3, 8, 9, 10, 11, 0, 1, 2, 3, 8, 9, 10, 11));
  const m = f64x2.sub(v128.or(v128.and(x, i64x2.splat(0x000fffffffffffff)), i64x2.splat(0x3ff0000000000000)), f64x2(1.0, 1.0));
  const log2x = f64x2.add(e, f64x2.mul(m, f64x2.sub(f64x2(1.4425, 1.4425), f64x2.mul(f64x2(0.4425, 0.4425), m))));
  const y = f64x2.mul(f64x2.splat(p), log2x);
  const n = f64x2.floor(y);
  const f = f64x2.sub(y, n);
  const twoF = f64x2.add(f64x2(1.0, 1.0), f64x2.mul(f, f64x2.add(f64x2(0.6565, 0.6565), f64x2.mul(f64x2(0.3435, 0.3435), f))));
  const scale = i64x2.shl(i64x2.add(i64x2.extend_low_i32x4_s(i32x4.trunc_sat_f64x2_s_zero(n)), i64x2.splat(1023)), 52);
  return f64x2.mul(twoF, scale);
}

// Error estimates of the last stepPair (lanes 0, 1) or stepQuad (0..3), as step() returns them.
export let laneErr0: f64 = 0.0;
export let laneErr1: f64 = 0.0;
export let laneErr2: f64 = 0.0;
export let laneErr3: f64 = 0.0;

@inline function gather(pa: usize, pb: usize, off: usize): v128 {
  return f64x2.replace_lane(f64x2.splat(load<f64>(pa + off)), 1, load<f64>(pb + off));
}
@inline function scatter(pa: usize, pb: usize, off: usize, v: v128): void {
  store<f64>(pa + off, f64x2.extract_lane(v, 0));
  store<f64>(pb + off, f64x2.extract_lane(v, 1));
}
@inline function pair(a: f64, b: f64): v128 {
  return f64x2.replace_lane(f64x2.splat(a), 1, b);
}
// step()'s result from a lane's error and its finiteness sum (0 only if every new component is finite).
@inline function checked(err: f64, finite: f64): f64 {
  return !isFinite(err) || finite != 0.0 ? NaN : err;
}

// A stance whose leg has no damper, with a validated scenario's tolerances (atol > 0, rtol
// finite). Its step needs neither r' nor the work component: the work and its stage values stay
// +0 (c r'^2 = +0 for finite r'), its error term is +0 / sc = +0, and the leg force per mass
// (k/m) (L0 - r) - (c/m) r' is (k/m) (L0 - r) bit for bit ((c/m) r' = +-0 for finite r', and
// (k/m) (L0 - r) is never -0, as L0 - r = 0 is +0 and k/m > 0 for a validated body's bounds).
// A non-finite r' makes the step non-finite either way: a
// non-finite velocity or position reaches YN, and r = 0 makes the acceleration NaN.
@inline function springOnly(s: Stance): bool {
  return s.c == 0.0 && s.atol > 0.0 && Math.abs(s.rtol) < Infinity;
}

// One step of stance sA (its step size h, its buffers, parameters and controller memory) and of
// sB, one in each lane, from each one's Y0 and K1; writes each lane's K7 and YN (K7 = f(YN)) like
// step(), its K3..K6 for unpackStages, and the error estimates into laneErr0, laneErr1. The step
// without r' and the work (springStepPair) when neither leg has a damper: a shorter chain of
// dependent operations from one stage to the next.
export function stepPair(sA: Stance, sB: Stance): void {
  if (springOnly(sA) && springOnly(sB)) springStepPair(sA, sB);
  else fullStepPair(sA, sB);
}

// stepPair for four stances, lanes A..D; errors into laneErr0..laneErr3.
export function stepQuad(sA: Stance, sB: Stance, sC: Stance, sD: Stance): void {
  if (springOnly(sA) && springOnly(sB) && springOnly(sC) && springOnly(sD)) springStepQuad(sA, sB, sC, sD);
  else fullStepQuad(sA, sB, sC, sD);
}

// stepPair with every component and the damper.
function fullStepPair(sA: Stance, sB: Stance): void {
  const pA = sA.bufs;
  const hA = sA.h;
  const rtolA = sA.rtol;
  const atolA = sA.atol;
  const dimA = sA.errDim;
  const kA = sA.k;
  const legA = sA.leg;
  const cA = sA.c;
  const invMA = sA.invMass;
  const gA = sA.g;
  const oldA = sA.errOld;
  const hiA: f64 = sA.afterReject ? 1.0 : 10.0;
  const kimA = kA * invMA;
  const cimA = cA * invMA;
  const ha21A = hA * A21;
  const ha32A = hA * A32;
  const ha43A = hA * A43;
  const ha54A = hA * A54;
  const ha65A = hA * A65;
  const hb6A = hA * B6;
  const pB = sB.bufs;
  const hB = sB.h;
  const rtolB = sB.rtol;
  const atolB = sB.atol;
  const dimB = sB.errDim;
  const kB = sB.k;
  const legB = sB.leg;
  const cB = sB.c;
  const invMB = sB.invMass;
  const gB = sB.g;
  const oldB = sB.errOld;
  const hiB: f64 = sB.afterReject ? 1.0 : 10.0;
  const kimB = kB * invMB;
  const cimB = cB * invMB;
  const ha21B = hB * A21;
  const ha32B = hB * A32;
  const ha43B = hB * A43;
  const ha54B = hB * A54;
  const ha65B = hB * A65;
  const hb6B = hB * B6;
  const ONE = f64x2(1.0, 1.0);
  const ZERO = f64x2(0.0, 0.0);
  v128.store(LANE_PARAMS + 0, pair(hA, hB));
  v128.store(LANE_PARAMS + 16, pair(kA, kB));
  v128.store(LANE_PARAMS + 32, pair(legA, legB));
  v128.store(LANE_PARAMS + 48, pair(cA, cB));
  v128.store(LANE_PARAMS + 64, pair(kimA, kimB));
  v128.store(LANE_PARAMS + 80, pair(cimA, cimB));
  v128.store(LANE_PARAMS + 96, pair(gA, gB));
  v128.store(LANE_PARAMS + 112, pair(ha21A, ha21B));
  v128.store(LANE_PARAMS + 128, pair(ha32A, ha32B));
  v128.store(LANE_PARAMS + 144, pair(ha43A, ha43B));
  v128.store(LANE_PARAMS + 160, pair(ha54A, ha54B));
  v128.store(LANE_PARAMS + 176, pair(ha65A, ha65B));
  v128.store(LANE_PARAMS + 192, pair(hb6A, hb6B));
  const y0X = gather(pA, pB, OFF_Y0 + 0);
  const y1X = gather(pA, pB, OFF_Y0 + 8);
  const y2X = gather(pA, pB, OFF_Y0 + 16);
  const y3X = gather(pA, pB, OFF_Y0 + 24);
  const y4X = gather(pA, pB, OFF_Y0 + 32);
  const a0X = gather(pA, pB, OFF_K1 + 0);
  const a1X = gather(pA, pB, OFF_K1 + 8);
  const a2X = gather(pA, pB, OFF_K1 + 16);
  const a3X = gather(pA, pB, OFF_K1 + 24);
  const a4X = gather(pA, pB, OFF_K1 + 32);
  let b0X: v128, b1X: v128, b2X: v128, b3X: v128, b4X: v128;
  {
    const s0 = f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 112), a0X));
    const s1 = f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 112), a1X));
    const s2 = f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 112), a2X));
    const s3 = f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 112), a3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)), f64x2.mul(v128.load(LANE_PARAMS + 80), rdot));
      b0X = s2;
      b1X = s3;
      b2X = f64x2.mul(force, f64x2.mul(inv, s0));
      b3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
      b4X = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 48), rdot), rdot);
    }
  }
  let c0X: v128, c1X: v128, c2X: v128, c3X: v128, c4X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a0X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a1X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a2X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a3X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)), f64x2.mul(v128.load(LANE_PARAMS + 80), rdot));
      c0X = s2;
      c1X = s3;
      c2X = f64x2.mul(force, f64x2.mul(inv, s0));
      c3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
      c4X = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 48), rdot), rdot);
    }
  }
  let d0X: v128, d1X: v128, d2X: v128, d3X: v128, d4X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a0X), f64x2.mul(v128.load(TABLEAU2 + 64), b0X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a1X), f64x2.mul(v128.load(TABLEAU2 + 64), b1X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a2X), f64x2.mul(v128.load(TABLEAU2 + 64), b2X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a3X), f64x2.mul(v128.load(TABLEAU2 + 64), b3X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)), f64x2.mul(v128.load(LANE_PARAMS + 80), rdot));
      d0X = s2;
      d1X = s3;
      d2X = f64x2.mul(force, f64x2.mul(inv, s0));
      d3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
      d4X = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 48), rdot), rdot);
    }
  }
  let e0X: v128, e1X: v128, e2X: v128, e3X: v128, e4X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a0X), f64x2.mul(v128.load(TABLEAU2 + 112), b0X)), f64x2.mul(v128.load(TABLEAU2 + 128), c0X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a1X), f64x2.mul(v128.load(TABLEAU2 + 112), b1X)), f64x2.mul(v128.load(TABLEAU2 + 128), c1X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a2X), f64x2.mul(v128.load(TABLEAU2 + 112), b2X)), f64x2.mul(v128.load(TABLEAU2 + 128), c2X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a3X), f64x2.mul(v128.load(TABLEAU2 + 112), b3X)), f64x2.mul(v128.load(TABLEAU2 + 128), c3X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)), f64x2.mul(v128.load(LANE_PARAMS + 80), rdot));
      e0X = s2;
      e1X = s3;
      e2X = f64x2.mul(force, f64x2.mul(inv, s0));
      e3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
      e4X = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 48), rdot), rdot);
    }
  }
  let f0X: v128, f1X: v128, f2X: v128, f3X: v128, f4X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a0X), f64x2.mul(v128.load(TABLEAU2 + 176), b0X)), f64x2.mul(v128.load(TABLEAU2 + 192), c0X)), f64x2.mul(v128.load(TABLEAU2 + 208), d0X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a1X), f64x2.mul(v128.load(TABLEAU2 + 176), b1X)), f64x2.mul(v128.load(TABLEAU2 + 192), c1X)), f64x2.mul(v128.load(TABLEAU2 + 208), d1X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a2X), f64x2.mul(v128.load(TABLEAU2 + 176), b2X)), f64x2.mul(v128.load(TABLEAU2 + 192), c2X)), f64x2.mul(v128.load(TABLEAU2 + 208), d2X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a3X), f64x2.mul(v128.load(TABLEAU2 + 176), b3X)), f64x2.mul(v128.load(TABLEAU2 + 192), c3X)), f64x2.mul(v128.load(TABLEAU2 + 208), d3X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)), f64x2.mul(v128.load(LANE_PARAMS + 80), rdot));
      f0X = s2;
      f1X = s3;
      f2X = f64x2.mul(force, f64x2.mul(inv, s0));
      f3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
      f4X = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 48), rdot), rdot);
    }
  }
  const n0X = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a0X), f64x2.mul(v128.load(TABLEAU2 + 256), c0X)), f64x2.mul(v128.load(TABLEAU2 + 272), d0X)), f64x2.mul(v128.load(TABLEAU2 + 288), e0X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f0X));
  const n1X = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a1X), f64x2.mul(v128.load(TABLEAU2 + 256), c1X)), f64x2.mul(v128.load(TABLEAU2 + 272), d1X)), f64x2.mul(v128.load(TABLEAU2 + 288), e1X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f1X));
  const n2X = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a2X), f64x2.mul(v128.load(TABLEAU2 + 256), c2X)), f64x2.mul(v128.load(TABLEAU2 + 272), d2X)), f64x2.mul(v128.load(TABLEAU2 + 288), e2X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f2X));
  const n3X = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a3X), f64x2.mul(v128.load(TABLEAU2 + 256), c3X)), f64x2.mul(v128.load(TABLEAU2 + 272), d3X)), f64x2.mul(v128.load(TABLEAU2 + 288), e3X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f3X));
  const n4X = f64x2.add(f64x2.add(y4X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a4X), f64x2.mul(v128.load(TABLEAU2 + 256), c4X)), f64x2.mul(v128.load(TABLEAU2 + 272), d4X)), f64x2.mul(v128.load(TABLEAU2 + 288), e4X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f4X));
  let g0X: v128, g1X: v128, g2X: v128, g3X: v128, g4X: v128;
  let rgX: v128, dgX: v128;
  {
    const r2 = f64x2.add(f64x2.mul(n0X, n0X), f64x2.mul(n1X, n1X));
    const r = f64x2.sqrt(r2);
    const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
    const dot = f64x2.add(f64x2.mul(n0X, n2X), f64x2.mul(n1X, n3X));
    rgX = r;
    dgX = dot;
    const rdot = f64x2.mul(dot, inv);
    const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)), f64x2.mul(v128.load(LANE_PARAMS + 80), rdot));
    g0X = n2X;
    g1X = n3X;
    g2X = f64x2.mul(force, f64x2.mul(inv, n0X));
    g3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, n1X)), v128.load(LANE_PARAMS + 96));
    g4X = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 48), rdot), rdot);
  }
  const RTOLX = pair(rtolA, rtolB);
  const ATOLX = pair(atolA, atolB);
  let sumX = f64x2(0.0, 0.0);
  let finiteX = f64x2(0.0, 0.0);
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a0X), f64x2.mul(v128.load(TABLEAU2 + 336), c0X)), f64x2.mul(v128.load(TABLEAU2 + 352), d0X)), f64x2.mul(v128.load(TABLEAU2 + 368), e0X)), f64x2.mul(v128.load(TABLEAU2 + 384), f0X)), f64x2.mul(v128.load(TABLEAU2 + 400), g0X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y0X), f64x2.abs(n0X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n0X, n0X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a1X), f64x2.mul(v128.load(TABLEAU2 + 336), c1X)), f64x2.mul(v128.load(TABLEAU2 + 352), d1X)), f64x2.mul(v128.load(TABLEAU2 + 368), e1X)), f64x2.mul(v128.load(TABLEAU2 + 384), f1X)), f64x2.mul(v128.load(TABLEAU2 + 400), g1X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y1X), f64x2.abs(n1X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n1X, n1X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a2X), f64x2.mul(v128.load(TABLEAU2 + 336), c2X)), f64x2.mul(v128.load(TABLEAU2 + 352), d2X)), f64x2.mul(v128.load(TABLEAU2 + 368), e2X)), f64x2.mul(v128.load(TABLEAU2 + 384), f2X)), f64x2.mul(v128.load(TABLEAU2 + 400), g2X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y2X), f64x2.abs(n2X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n2X, n2X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a3X), f64x2.mul(v128.load(TABLEAU2 + 336), c3X)), f64x2.mul(v128.load(TABLEAU2 + 352), d3X)), f64x2.mul(v128.load(TABLEAU2 + 368), e3X)), f64x2.mul(v128.load(TABLEAU2 + 384), f3X)), f64x2.mul(v128.load(TABLEAU2 + 400), g3X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y3X), f64x2.abs(n3X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n3X, n3X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a4X), f64x2.mul(v128.load(TABLEAU2 + 336), c4X)), f64x2.mul(v128.load(TABLEAU2 + 352), d4X)), f64x2.mul(v128.load(TABLEAU2 + 368), e4X)), f64x2.mul(v128.load(TABLEAU2 + 384), f4X)), f64x2.mul(v128.load(TABLEAU2 + 400), g4X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y4X), f64x2.abs(n4X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n4X, n4X));
  }
  const errX = f64x2.sqrt(f64x2.div(sumX, pair(dimA, dimB)));
  v128.store(LANE_STAGES + 0, c0X);
  v128.store(LANE_STAGES + 16, c1X);
  v128.store(LANE_STAGES + 32, c2X);
  v128.store(LANE_STAGES + 48, c3X);
  v128.store(LANE_STAGES + 64, c4X);
  v128.store(LANE_STAGES + 80, d0X);
  v128.store(LANE_STAGES + 96, d1X);
  v128.store(LANE_STAGES + 112, d2X);
  v128.store(LANE_STAGES + 128, d3X);
  v128.store(LANE_STAGES + 144, d4X);
  v128.store(LANE_STAGES + 160, e0X);
  v128.store(LANE_STAGES + 176, e1X);
  v128.store(LANE_STAGES + 192, e2X);
  v128.store(LANE_STAGES + 208, e3X);
  v128.store(LANE_STAGES + 224, e4X);
  v128.store(LANE_STAGES + 240, f0X);
  v128.store(LANE_STAGES + 256, f1X);
  v128.store(LANE_STAGES + 272, f2X);
  v128.store(LANE_STAGES + 288, f3X);
  v128.store(LANE_STAGES + 304, f4X);
  scatter(pA, pB, OFF_K7 + 0, g0X);
  scatter(pA, pB, OFF_K7 + 8, g1X);
  scatter(pA, pB, OFF_K7 + 16, g2X);
  scatter(pA, pB, OFF_K7 + 24, g3X);
  scatter(pA, pB, OFF_K7 + 32, g4X);
  scatter(pA, pB, OFF_YN + 0, n0X);
  scatter(pA, pB, OFF_YN + 8, n1X);
  scatter(pA, pB, OFF_YN + 16, n2X);
  scatter(pA, pB, OFF_YN + 24, n3X);
  scatter(pA, pB, OFF_YN + 32, n4X);
  {
    // the step-end quantities of stanceAfterLaneStep (stance.ts), its arithmetic
    const nr = rgX; // sqrt(px^2 + py^2) at YN, from K7's right-hand side
    const nrdot = f64x2.div(dgX, nr); // (px vx + py vy) / r
    v128.store(LANE_END + 0, f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 16), f64x2.sub(v128.load(LANE_PARAMS + 32), nr)), f64x2.mul(v128.load(LANE_PARAMS + 48), nrdot))); // leg force
    v128.store(LANE_END + 16, f64x2.sub(nr, v128.load(LANE_PARAMS + 32))); // r - L0
    v128.store(LANE_END + 32, nrdot);
    v128.store(LANE_END + 48, f64x2.abs(f64x2.div(n0X, n1X))); // friction ratio
    // acceptFactor(err, afterReject) with the lane's controller memory (dopri5.ts)
    const e = v128.bitselect(errX, f64x2(1e-12, 1e-12), f64x2.gt(errX, f64x2(1e-12, 1e-12)));
    let f = f64x2.mul(f64x2.mul(f64x2(0.9, 0.9), roughPow2(e, -EXPO)), roughPow2(pair(oldA, oldB), BETA));
    f = v128.bitselect(f64x2(0.2, 0.2), f, f64x2.lt(f, f64x2(0.2, 0.2)));
    const hi = pair(hiA, hiB);
    v128.store(LANE_END + 64, v128.bitselect(hi, f, f64x2.gt(f, hi)));
  }
  // A NaN or infinity anywhere in the stages shows up in err or in YN.
  laneErr0 = checked(f64x2.extract_lane(errX, 0), f64x2.extract_lane(finiteX, 0));
  laneErr1 = checked(f64x2.extract_lane(errX, 1), f64x2.extract_lane(finiteX, 1));
}

// stepPair for two undamped stances (springOnly).
function springStepPair(sA: Stance, sB: Stance): void {
  const pA = sA.bufs;
  const hA = sA.h;
  const rtolA = sA.rtol;
  const atolA = sA.atol;
  const dimA = sA.errDim;
  const kA = sA.k;
  const legA = sA.leg;
  const invMA = sA.invMass;
  const gA = sA.g;
  const oldA = sA.errOld;
  const hiA: f64 = sA.afterReject ? 1.0 : 10.0;
  const kimA = kA * invMA;
  const ha21A = hA * A21;
  const ha32A = hA * A32;
  const ha43A = hA * A43;
  const ha54A = hA * A54;
  const ha65A = hA * A65;
  const hb6A = hA * B6;
  const pB = sB.bufs;
  const hB = sB.h;
  const rtolB = sB.rtol;
  const atolB = sB.atol;
  const dimB = sB.errDim;
  const kB = sB.k;
  const legB = sB.leg;
  const invMB = sB.invMass;
  const gB = sB.g;
  const oldB = sB.errOld;
  const hiB: f64 = sB.afterReject ? 1.0 : 10.0;
  const kimB = kB * invMB;
  const ha21B = hB * A21;
  const ha32B = hB * A32;
  const ha43B = hB * A43;
  const ha54B = hB * A54;
  const ha65B = hB * A65;
  const hb6B = hB * B6;
  const ONE = f64x2(1.0, 1.0);
  const ZERO = f64x2(0.0, 0.0);
  v128.store(LANE_PARAMS + 0, pair(hA, hB));
  v128.store(LANE_PARAMS + 16, pair(kA, kB));
  v128.store(LANE_PARAMS + 32, pair(legA, legB));
  v128.store(LANE_PARAMS + 64, pair(kimA, kimB));
  v128.store(LANE_PARAMS + 96, pair(gA, gB));
  v128.store(LANE_PARAMS + 112, pair(ha21A, ha21B));
  v128.store(LANE_PARAMS + 128, pair(ha32A, ha32B));
  v128.store(LANE_PARAMS + 144, pair(ha43A, ha43B));
  v128.store(LANE_PARAMS + 160, pair(ha54A, ha54B));
  v128.store(LANE_PARAMS + 176, pair(ha65A, ha65B));
  v128.store(LANE_PARAMS + 192, pair(hb6A, hb6B));
  const y0X = gather(pA, pB, OFF_Y0 + 0);
  const y1X = gather(pA, pB, OFF_Y0 + 8);
  const y2X = gather(pA, pB, OFF_Y0 + 16);
  const y3X = gather(pA, pB, OFF_Y0 + 24);
  const y4X = gather(pA, pB, OFF_Y0 + 32);
  const a0X = gather(pA, pB, OFF_K1 + 0);
  const a1X = gather(pA, pB, OFF_K1 + 8);
  const a2X = gather(pA, pB, OFF_K1 + 16);
  const a3X = gather(pA, pB, OFF_K1 + 24);
  let b0X: v128, b1X: v128, b2X: v128, b3X: v128;
  {
    const s0 = f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 112), a0X));
    const s1 = f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 112), a1X));
    const s2 = f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 112), a2X));
    const s3 = f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 112), a3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)); // - (c/m) r' = - (+-0)
      b0X = s2;
      b1X = s3;
      b2X = f64x2.mul(force, f64x2.mul(inv, s0));
      b3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
    }
  }
  let c0X: v128, c1X: v128, c2X: v128, c3X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a0X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a1X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a2X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a3X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)); // - (c/m) r' = - (+-0)
      c0X = s2;
      c1X = s3;
      c2X = f64x2.mul(force, f64x2.mul(inv, s0));
      c3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
    }
  }
  let d0X: v128, d1X: v128, d2X: v128, d3X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a0X), f64x2.mul(v128.load(TABLEAU2 + 64), b0X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a1X), f64x2.mul(v128.load(TABLEAU2 + 64), b1X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a2X), f64x2.mul(v128.load(TABLEAU2 + 64), b2X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a3X), f64x2.mul(v128.load(TABLEAU2 + 64), b3X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)); // - (c/m) r' = - (+-0)
      d0X = s2;
      d1X = s3;
      d2X = f64x2.mul(force, f64x2.mul(inv, s0));
      d3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
    }
  }
  let e0X: v128, e1X: v128, e2X: v128, e3X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a0X), f64x2.mul(v128.load(TABLEAU2 + 112), b0X)), f64x2.mul(v128.load(TABLEAU2 + 128), c0X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a1X), f64x2.mul(v128.load(TABLEAU2 + 112), b1X)), f64x2.mul(v128.load(TABLEAU2 + 128), c1X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a2X), f64x2.mul(v128.load(TABLEAU2 + 112), b2X)), f64x2.mul(v128.load(TABLEAU2 + 128), c2X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a3X), f64x2.mul(v128.load(TABLEAU2 + 112), b3X)), f64x2.mul(v128.load(TABLEAU2 + 128), c3X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)); // - (c/m) r' = - (+-0)
      e0X = s2;
      e1X = s3;
      e2X = f64x2.mul(force, f64x2.mul(inv, s0));
      e3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
    }
  }
  let f0X: v128, f1X: v128, f2X: v128, f3X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a0X), f64x2.mul(v128.load(TABLEAU2 + 176), b0X)), f64x2.mul(v128.load(TABLEAU2 + 192), c0X)), f64x2.mul(v128.load(TABLEAU2 + 208), d0X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a1X), f64x2.mul(v128.load(TABLEAU2 + 176), b1X)), f64x2.mul(v128.load(TABLEAU2 + 192), c1X)), f64x2.mul(v128.load(TABLEAU2 + 208), d1X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a2X), f64x2.mul(v128.load(TABLEAU2 + 176), b2X)), f64x2.mul(v128.load(TABLEAU2 + 192), c2X)), f64x2.mul(v128.load(TABLEAU2 + 208), d2X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a3X), f64x2.mul(v128.load(TABLEAU2 + 176), b3X)), f64x2.mul(v128.load(TABLEAU2 + 192), c3X)), f64x2.mul(v128.load(TABLEAU2 + 208), d3X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)); // - (c/m) r' = - (+-0)
      f0X = s2;
      f1X = s3;
      f2X = f64x2.mul(force, f64x2.mul(inv, s0));
      f3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
    }
  }
  const n0X = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a0X), f64x2.mul(v128.load(TABLEAU2 + 256), c0X)), f64x2.mul(v128.load(TABLEAU2 + 272), d0X)), f64x2.mul(v128.load(TABLEAU2 + 288), e0X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f0X));
  const n1X = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a1X), f64x2.mul(v128.load(TABLEAU2 + 256), c1X)), f64x2.mul(v128.load(TABLEAU2 + 272), d1X)), f64x2.mul(v128.load(TABLEAU2 + 288), e1X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f1X));
  const n2X = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a2X), f64x2.mul(v128.load(TABLEAU2 + 256), c2X)), f64x2.mul(v128.load(TABLEAU2 + 272), d2X)), f64x2.mul(v128.load(TABLEAU2 + 288), e2X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f2X));
  const n3X = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a3X), f64x2.mul(v128.load(TABLEAU2 + 256), c3X)), f64x2.mul(v128.load(TABLEAU2 + 272), d3X)), f64x2.mul(v128.load(TABLEAU2 + 288), e3X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f3X));
  const n4X = y4X; // the work: (+0 + h (+0 ...)) + hB6 (+0) = +0 without damping
  let g0X: v128, g1X: v128, g2X: v128, g3X: v128;
  let rgX: v128, dgX: v128;
  {
    const r2 = f64x2.add(f64x2.mul(n0X, n0X), f64x2.mul(n1X, n1X));
    const r = f64x2.sqrt(r2);
    const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
    const dot = f64x2.add(f64x2.mul(n0X, n2X), f64x2.mul(n1X, n3X));
    rgX = r;
    dgX = dot;
    const force = f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)); // - (c/m) r' = - (+-0)
    g0X = n2X;
    g1X = n3X;
    g2X = f64x2.mul(force, f64x2.mul(inv, n0X));
    g3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, n1X)), v128.load(LANE_PARAMS + 96));
  }
  const RTOLX = pair(rtolA, rtolB);
  const ATOLX = pair(atolA, atolB);
  let sumX = f64x2(0.0, 0.0);
  let finiteX = f64x2(0.0, 0.0);
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a0X), f64x2.mul(v128.load(TABLEAU2 + 336), c0X)), f64x2.mul(v128.load(TABLEAU2 + 352), d0X)), f64x2.mul(v128.load(TABLEAU2 + 368), e0X)), f64x2.mul(v128.load(TABLEAU2 + 384), f0X)), f64x2.mul(v128.load(TABLEAU2 + 400), g0X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y0X), f64x2.abs(n0X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n0X, n0X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a1X), f64x2.mul(v128.load(TABLEAU2 + 336), c1X)), f64x2.mul(v128.load(TABLEAU2 + 352), d1X)), f64x2.mul(v128.load(TABLEAU2 + 368), e1X)), f64x2.mul(v128.load(TABLEAU2 + 384), f1X)), f64x2.mul(v128.load(TABLEAU2 + 400), g1X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y1X), f64x2.abs(n1X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n1X, n1X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a2X), f64x2.mul(v128.load(TABLEAU2 + 336), c2X)), f64x2.mul(v128.load(TABLEAU2 + 352), d2X)), f64x2.mul(v128.load(TABLEAU2 + 368), e2X)), f64x2.mul(v128.load(TABLEAU2 + 384), f2X)), f64x2.mul(v128.load(TABLEAU2 + 400), g2X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y2X), f64x2.abs(n2X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n2X, n2X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a3X), f64x2.mul(v128.load(TABLEAU2 + 336), c3X)), f64x2.mul(v128.load(TABLEAU2 + 352), d3X)), f64x2.mul(v128.load(TABLEAU2 + 368), e3X)), f64x2.mul(v128.load(TABLEAU2 + 384), f3X)), f64x2.mul(v128.load(TABLEAU2 + 400), g3X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y3X), f64x2.abs(n3X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n3X, n3X));
  }
  const errX = f64x2.sqrt(f64x2.div(sumX, pair(dimA, dimB)));
  v128.store(LANE_STAGES + 0, c0X);
  v128.store(LANE_STAGES + 16, c1X);
  v128.store(LANE_STAGES + 32, c2X);
  v128.store(LANE_STAGES + 48, c3X);
  v128.store(LANE_STAGES + 64, ZERO);
  v128.store(LANE_STAGES + 80, d0X);
  v128.store(LANE_STAGES + 96, d1X);
  v128.store(LANE_STAGES + 112, d2X);
  v128.store(LANE_STAGES + 128, d3X);
  v128.store(LANE_STAGES + 144, ZERO);
  v128.store(LANE_STAGES + 160, e0X);
  v128.store(LANE_STAGES + 176, e1X);
  v128.store(LANE_STAGES + 192, e2X);
  v128.store(LANE_STAGES + 208, e3X);
  v128.store(LANE_STAGES + 224, ZERO);
  v128.store(LANE_STAGES + 240, f0X);
  v128.store(LANE_STAGES + 256, f1X);
  v128.store(LANE_STAGES + 272, f2X);
  v128.store(LANE_STAGES + 288, f3X);
  v128.store(LANE_STAGES + 304, ZERO);
  scatter(pA, pB, OFF_K7 + 0, g0X);
  scatter(pA, pB, OFF_K7 + 8, g1X);
  scatter(pA, pB, OFF_K7 + 16, g2X);
  scatter(pA, pB, OFF_K7 + 24, g3X);
  scatter(pA, pB, OFF_K7 + 32, ZERO);
  scatter(pA, pB, OFF_YN + 0, n0X);
  scatter(pA, pB, OFF_YN + 8, n1X);
  scatter(pA, pB, OFF_YN + 16, n2X);
  scatter(pA, pB, OFF_YN + 24, n3X);
  scatter(pA, pB, OFF_YN + 32, n4X);
  {
    // the step-end quantities of stanceAfterLaneStep (stance.ts), its arithmetic
    const nr = rgX; // sqrt(px^2 + py^2) at YN, from K7's right-hand side
    const nrdot = f64x2.div(dgX, nr); // (px vx + py vy) / r
    v128.store(LANE_END + 0, f64x2.mul(v128.load(LANE_PARAMS + 16), f64x2.sub(v128.load(LANE_PARAMS + 32), nr))); // leg force
    v128.store(LANE_END + 16, f64x2.sub(nr, v128.load(LANE_PARAMS + 32))); // r - L0
    v128.store(LANE_END + 32, nrdot);
    v128.store(LANE_END + 48, f64x2.abs(f64x2.div(n0X, n1X))); // friction ratio
    // acceptFactor(err, afterReject) with the lane's controller memory (dopri5.ts)
    const e = v128.bitselect(errX, f64x2(1e-12, 1e-12), f64x2.gt(errX, f64x2(1e-12, 1e-12)));
    let f = f64x2.mul(f64x2.mul(f64x2(0.9, 0.9), roughPow2(e, -EXPO)), roughPow2(pair(oldA, oldB), BETA));
    f = v128.bitselect(f64x2(0.2, 0.2), f, f64x2.lt(f, f64x2(0.2, 0.2)));
    const hi = pair(hiA, hiB);
    v128.store(LANE_END + 64, v128.bitselect(hi, f, f64x2.gt(f, hi)));
  }
  // A NaN or infinity anywhere in the stages shows up in err or in YN.
  laneErr0 = checked(f64x2.extract_lane(errX, 0), f64x2.extract_lane(finiteX, 0));
  laneErr1 = checked(f64x2.extract_lane(errX, 1), f64x2.extract_lane(finiteX, 1));
}

// stepQuad with every component and the damper.
function fullStepQuad(sA: Stance, sB: Stance, sC: Stance, sD: Stance): void {
  const pA = sA.bufs;
  const hA = sA.h;
  const rtolA = sA.rtol;
  const atolA = sA.atol;
  const dimA = sA.errDim;
  const kA = sA.k;
  const legA = sA.leg;
  const cA = sA.c;
  const invMA = sA.invMass;
  const gA = sA.g;
  const oldA = sA.errOld;
  const hiA: f64 = sA.afterReject ? 1.0 : 10.0;
  const kimA = kA * invMA;
  const cimA = cA * invMA;
  const ha21A = hA * A21;
  const ha32A = hA * A32;
  const ha43A = hA * A43;
  const ha54A = hA * A54;
  const ha65A = hA * A65;
  const hb6A = hA * B6;
  const pB = sB.bufs;
  const hB = sB.h;
  const rtolB = sB.rtol;
  const atolB = sB.atol;
  const dimB = sB.errDim;
  const kB = sB.k;
  const legB = sB.leg;
  const cB = sB.c;
  const invMB = sB.invMass;
  const gB = sB.g;
  const oldB = sB.errOld;
  const hiB: f64 = sB.afterReject ? 1.0 : 10.0;
  const kimB = kB * invMB;
  const cimB = cB * invMB;
  const ha21B = hB * A21;
  const ha32B = hB * A32;
  const ha43B = hB * A43;
  const ha54B = hB * A54;
  const ha65B = hB * A65;
  const hb6B = hB * B6;
  const pC = sC.bufs;
  const hC = sC.h;
  const rtolC = sC.rtol;
  const atolC = sC.atol;
  const dimC = sC.errDim;
  const kC = sC.k;
  const legC = sC.leg;
  const cC = sC.c;
  const invMC = sC.invMass;
  const gC = sC.g;
  const oldC = sC.errOld;
  const hiC: f64 = sC.afterReject ? 1.0 : 10.0;
  const kimC = kC * invMC;
  const cimC = cC * invMC;
  const ha21C = hC * A21;
  const ha32C = hC * A32;
  const ha43C = hC * A43;
  const ha54C = hC * A54;
  const ha65C = hC * A65;
  const hb6C = hC * B6;
  const pD = sD.bufs;
  const hD = sD.h;
  const rtolD = sD.rtol;
  const atolD = sD.atol;
  const dimD = sD.errDim;
  const kD = sD.k;
  const legD = sD.leg;
  const cD = sD.c;
  const invMD = sD.invMass;
  const gD = sD.g;
  const oldD = sD.errOld;
  const hiD: f64 = sD.afterReject ? 1.0 : 10.0;
  const kimD = kD * invMD;
  const cimD = cD * invMD;
  const ha21D = hD * A21;
  const ha32D = hD * A32;
  const ha43D = hD * A43;
  const ha54D = hD * A54;
  const ha65D = hD * A65;
  const hb6D = hD * B6;
  const ONE = f64x2(1.0, 1.0);
  const ZERO = f64x2(0.0, 0.0);
  v128.store(LANE_PARAMS + 0, pair(hA, hB));
  v128.store(LANE_PARAMS + 16, pair(kA, kB));
  v128.store(LANE_PARAMS + 32, pair(legA, legB));
  v128.store(LANE_PARAMS + 48, pair(cA, cB));
  v128.store(LANE_PARAMS + 64, pair(kimA, kimB));
  v128.store(LANE_PARAMS + 80, pair(cimA, cimB));
  v128.store(LANE_PARAMS + 96, pair(gA, gB));
  v128.store(LANE_PARAMS + 112, pair(ha21A, ha21B));
  v128.store(LANE_PARAMS + 128, pair(ha32A, ha32B));
  v128.store(LANE_PARAMS + 144, pair(ha43A, ha43B));
  v128.store(LANE_PARAMS + 160, pair(ha54A, ha54B));
  v128.store(LANE_PARAMS + 176, pair(ha65A, ha65B));
  v128.store(LANE_PARAMS + 192, pair(hb6A, hb6B));
  const y0X = gather(pA, pB, OFF_Y0 + 0);
  const y1X = gather(pA, pB, OFF_Y0 + 8);
  const y2X = gather(pA, pB, OFF_Y0 + 16);
  const y3X = gather(pA, pB, OFF_Y0 + 24);
  const y4X = gather(pA, pB, OFF_Y0 + 32);
  const a0X = gather(pA, pB, OFF_K1 + 0);
  const a1X = gather(pA, pB, OFF_K1 + 8);
  const a2X = gather(pA, pB, OFF_K1 + 16);
  const a3X = gather(pA, pB, OFF_K1 + 24);
  const a4X = gather(pA, pB, OFF_K1 + 32);
  v128.store(LANE_PARAMS + 208, pair(hC, hD));
  v128.store(LANE_PARAMS + 224, pair(kC, kD));
  v128.store(LANE_PARAMS + 240, pair(legC, legD));
  v128.store(LANE_PARAMS + 256, pair(cC, cD));
  v128.store(LANE_PARAMS + 272, pair(kimC, kimD));
  v128.store(LANE_PARAMS + 288, pair(cimC, cimD));
  v128.store(LANE_PARAMS + 304, pair(gC, gD));
  v128.store(LANE_PARAMS + 320, pair(ha21C, ha21D));
  v128.store(LANE_PARAMS + 336, pair(ha32C, ha32D));
  v128.store(LANE_PARAMS + 352, pair(ha43C, ha43D));
  v128.store(LANE_PARAMS + 368, pair(ha54C, ha54D));
  v128.store(LANE_PARAMS + 384, pair(ha65C, ha65D));
  v128.store(LANE_PARAMS + 400, pair(hb6C, hb6D));
  const y0Y = gather(pC, pD, OFF_Y0 + 0);
  const y1Y = gather(pC, pD, OFF_Y0 + 8);
  const y2Y = gather(pC, pD, OFF_Y0 + 16);
  const y3Y = gather(pC, pD, OFF_Y0 + 24);
  const y4Y = gather(pC, pD, OFF_Y0 + 32);
  const a0Y = gather(pC, pD, OFF_K1 + 0);
  const a1Y = gather(pC, pD, OFF_K1 + 8);
  const a2Y = gather(pC, pD, OFF_K1 + 16);
  const a3Y = gather(pC, pD, OFF_K1 + 24);
  const a4Y = gather(pC, pD, OFF_K1 + 32);
  let b0X: v128, b1X: v128, b2X: v128, b3X: v128, b4X: v128;
  {
    const s0 = f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 112), a0X));
    const s1 = f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 112), a1X));
    const s2 = f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 112), a2X));
    const s3 = f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 112), a3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)), f64x2.mul(v128.load(LANE_PARAMS + 80), rdot));
      b0X = s2;
      b1X = s3;
      b2X = f64x2.mul(force, f64x2.mul(inv, s0));
      b3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
      b4X = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 48), rdot), rdot);
    }
  }
  let b0Y: v128, b1Y: v128, b2Y: v128, b3Y: v128, b4Y: v128;
  {
    const s0 = f64x2.add(y0Y, f64x2.mul(v128.load(LANE_PARAMS + 320), a0Y));
    const s1 = f64x2.add(y1Y, f64x2.mul(v128.load(LANE_PARAMS + 320), a1Y));
    const s2 = f64x2.add(y2Y, f64x2.mul(v128.load(LANE_PARAMS + 320), a2Y));
    const s3 = f64x2.add(y3Y, f64x2.mul(v128.load(LANE_PARAMS + 320), a3Y));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 272), f64x2.sub(v128.load(LANE_PARAMS + 240), r)), f64x2.mul(v128.load(LANE_PARAMS + 288), rdot));
      b0Y = s2;
      b1Y = s3;
      b2Y = f64x2.mul(force, f64x2.mul(inv, s0));
      b3Y = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 304));
      b4Y = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 256), rdot), rdot);
    }
  }
  let c0X: v128, c1X: v128, c2X: v128, c3X: v128, c4X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a0X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a1X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a2X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a3X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)), f64x2.mul(v128.load(LANE_PARAMS + 80), rdot));
      c0X = s2;
      c1X = s3;
      c2X = f64x2.mul(force, f64x2.mul(inv, s0));
      c3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
      c4X = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 48), rdot), rdot);
    }
  }
  let c0Y: v128, c1Y: v128, c2Y: v128, c3Y: v128, c4Y: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.mul(v128.load(TABLEAU2 + 16), a0Y))), f64x2.mul(v128.load(LANE_PARAMS + 336), b0Y));
    const s1 = f64x2.add(f64x2.add(y1Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.mul(v128.load(TABLEAU2 + 16), a1Y))), f64x2.mul(v128.load(LANE_PARAMS + 336), b1Y));
    const s2 = f64x2.add(f64x2.add(y2Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.mul(v128.load(TABLEAU2 + 16), a2Y))), f64x2.mul(v128.load(LANE_PARAMS + 336), b2Y));
    const s3 = f64x2.add(f64x2.add(y3Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.mul(v128.load(TABLEAU2 + 16), a3Y))), f64x2.mul(v128.load(LANE_PARAMS + 336), b3Y));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 272), f64x2.sub(v128.load(LANE_PARAMS + 240), r)), f64x2.mul(v128.load(LANE_PARAMS + 288), rdot));
      c0Y = s2;
      c1Y = s3;
      c2Y = f64x2.mul(force, f64x2.mul(inv, s0));
      c3Y = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 304));
      c4Y = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 256), rdot), rdot);
    }
  }
  let d0X: v128, d1X: v128, d2X: v128, d3X: v128, d4X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a0X), f64x2.mul(v128.load(TABLEAU2 + 64), b0X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a1X), f64x2.mul(v128.load(TABLEAU2 + 64), b1X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a2X), f64x2.mul(v128.load(TABLEAU2 + 64), b2X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a3X), f64x2.mul(v128.load(TABLEAU2 + 64), b3X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)), f64x2.mul(v128.load(LANE_PARAMS + 80), rdot));
      d0X = s2;
      d1X = s3;
      d2X = f64x2.mul(force, f64x2.mul(inv, s0));
      d3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
      d4X = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 48), rdot), rdot);
    }
  }
  let d0Y: v128, d1Y: v128, d2Y: v128, d3Y: v128, d4Y: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a0Y), f64x2.mul(v128.load(TABLEAU2 + 64), b0Y)))), f64x2.mul(v128.load(LANE_PARAMS + 352), c0Y));
    const s1 = f64x2.add(f64x2.add(y1Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a1Y), f64x2.mul(v128.load(TABLEAU2 + 64), b1Y)))), f64x2.mul(v128.load(LANE_PARAMS + 352), c1Y));
    const s2 = f64x2.add(f64x2.add(y2Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a2Y), f64x2.mul(v128.load(TABLEAU2 + 64), b2Y)))), f64x2.mul(v128.load(LANE_PARAMS + 352), c2Y));
    const s3 = f64x2.add(f64x2.add(y3Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a3Y), f64x2.mul(v128.load(TABLEAU2 + 64), b3Y)))), f64x2.mul(v128.load(LANE_PARAMS + 352), c3Y));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 272), f64x2.sub(v128.load(LANE_PARAMS + 240), r)), f64x2.mul(v128.load(LANE_PARAMS + 288), rdot));
      d0Y = s2;
      d1Y = s3;
      d2Y = f64x2.mul(force, f64x2.mul(inv, s0));
      d3Y = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 304));
      d4Y = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 256), rdot), rdot);
    }
  }
  let e0X: v128, e1X: v128, e2X: v128, e3X: v128, e4X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a0X), f64x2.mul(v128.load(TABLEAU2 + 112), b0X)), f64x2.mul(v128.load(TABLEAU2 + 128), c0X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a1X), f64x2.mul(v128.load(TABLEAU2 + 112), b1X)), f64x2.mul(v128.load(TABLEAU2 + 128), c1X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a2X), f64x2.mul(v128.load(TABLEAU2 + 112), b2X)), f64x2.mul(v128.load(TABLEAU2 + 128), c2X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a3X), f64x2.mul(v128.load(TABLEAU2 + 112), b3X)), f64x2.mul(v128.load(TABLEAU2 + 128), c3X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)), f64x2.mul(v128.load(LANE_PARAMS + 80), rdot));
      e0X = s2;
      e1X = s3;
      e2X = f64x2.mul(force, f64x2.mul(inv, s0));
      e3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
      e4X = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 48), rdot), rdot);
    }
  }
  let e0Y: v128, e1Y: v128, e2Y: v128, e3Y: v128, e4Y: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a0Y), f64x2.mul(v128.load(TABLEAU2 + 112), b0Y)), f64x2.mul(v128.load(TABLEAU2 + 128), c0Y)))), f64x2.mul(v128.load(LANE_PARAMS + 368), d0Y));
    const s1 = f64x2.add(f64x2.add(y1Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a1Y), f64x2.mul(v128.load(TABLEAU2 + 112), b1Y)), f64x2.mul(v128.load(TABLEAU2 + 128), c1Y)))), f64x2.mul(v128.load(LANE_PARAMS + 368), d1Y));
    const s2 = f64x2.add(f64x2.add(y2Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a2Y), f64x2.mul(v128.load(TABLEAU2 + 112), b2Y)), f64x2.mul(v128.load(TABLEAU2 + 128), c2Y)))), f64x2.mul(v128.load(LANE_PARAMS + 368), d2Y));
    const s3 = f64x2.add(f64x2.add(y3Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a3Y), f64x2.mul(v128.load(TABLEAU2 + 112), b3Y)), f64x2.mul(v128.load(TABLEAU2 + 128), c3Y)))), f64x2.mul(v128.load(LANE_PARAMS + 368), d3Y));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 272), f64x2.sub(v128.load(LANE_PARAMS + 240), r)), f64x2.mul(v128.load(LANE_PARAMS + 288), rdot));
      e0Y = s2;
      e1Y = s3;
      e2Y = f64x2.mul(force, f64x2.mul(inv, s0));
      e3Y = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 304));
      e4Y = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 256), rdot), rdot);
    }
  }
  let f0X: v128, f1X: v128, f2X: v128, f3X: v128, f4X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a0X), f64x2.mul(v128.load(TABLEAU2 + 176), b0X)), f64x2.mul(v128.load(TABLEAU2 + 192), c0X)), f64x2.mul(v128.load(TABLEAU2 + 208), d0X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a1X), f64x2.mul(v128.load(TABLEAU2 + 176), b1X)), f64x2.mul(v128.load(TABLEAU2 + 192), c1X)), f64x2.mul(v128.load(TABLEAU2 + 208), d1X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a2X), f64x2.mul(v128.load(TABLEAU2 + 176), b2X)), f64x2.mul(v128.load(TABLEAU2 + 192), c2X)), f64x2.mul(v128.load(TABLEAU2 + 208), d2X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a3X), f64x2.mul(v128.load(TABLEAU2 + 176), b3X)), f64x2.mul(v128.load(TABLEAU2 + 192), c3X)), f64x2.mul(v128.load(TABLEAU2 + 208), d3X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)), f64x2.mul(v128.load(LANE_PARAMS + 80), rdot));
      f0X = s2;
      f1X = s3;
      f2X = f64x2.mul(force, f64x2.mul(inv, s0));
      f3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
      f4X = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 48), rdot), rdot);
    }
  }
  let f0Y: v128, f1Y: v128, f2Y: v128, f3Y: v128, f4Y: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a0Y), f64x2.mul(v128.load(TABLEAU2 + 176), b0Y)), f64x2.mul(v128.load(TABLEAU2 + 192), c0Y)), f64x2.mul(v128.load(TABLEAU2 + 208), d0Y)))), f64x2.mul(v128.load(LANE_PARAMS + 384), e0Y));
    const s1 = f64x2.add(f64x2.add(y1Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a1Y), f64x2.mul(v128.load(TABLEAU2 + 176), b1Y)), f64x2.mul(v128.load(TABLEAU2 + 192), c1Y)), f64x2.mul(v128.load(TABLEAU2 + 208), d1Y)))), f64x2.mul(v128.load(LANE_PARAMS + 384), e1Y));
    const s2 = f64x2.add(f64x2.add(y2Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a2Y), f64x2.mul(v128.load(TABLEAU2 + 176), b2Y)), f64x2.mul(v128.load(TABLEAU2 + 192), c2Y)), f64x2.mul(v128.load(TABLEAU2 + 208), d2Y)))), f64x2.mul(v128.load(LANE_PARAMS + 384), e2Y));
    const s3 = f64x2.add(f64x2.add(y3Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a3Y), f64x2.mul(v128.load(TABLEAU2 + 176), b3Y)), f64x2.mul(v128.load(TABLEAU2 + 192), c3Y)), f64x2.mul(v128.load(TABLEAU2 + 208), d3Y)))), f64x2.mul(v128.load(LANE_PARAMS + 384), e3Y));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const dot = f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3));
      const rdot = f64x2.mul(dot, inv);
      const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 272), f64x2.sub(v128.load(LANE_PARAMS + 240), r)), f64x2.mul(v128.load(LANE_PARAMS + 288), rdot));
      f0Y = s2;
      f1Y = s3;
      f2Y = f64x2.mul(force, f64x2.mul(inv, s0));
      f3Y = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 304));
      f4Y = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 256), rdot), rdot);
    }
  }
  const n0X = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a0X), f64x2.mul(v128.load(TABLEAU2 + 256), c0X)), f64x2.mul(v128.load(TABLEAU2 + 272), d0X)), f64x2.mul(v128.load(TABLEAU2 + 288), e0X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f0X));
  const n1X = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a1X), f64x2.mul(v128.load(TABLEAU2 + 256), c1X)), f64x2.mul(v128.load(TABLEAU2 + 272), d1X)), f64x2.mul(v128.load(TABLEAU2 + 288), e1X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f1X));
  const n2X = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a2X), f64x2.mul(v128.load(TABLEAU2 + 256), c2X)), f64x2.mul(v128.load(TABLEAU2 + 272), d2X)), f64x2.mul(v128.load(TABLEAU2 + 288), e2X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f2X));
  const n3X = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a3X), f64x2.mul(v128.load(TABLEAU2 + 256), c3X)), f64x2.mul(v128.load(TABLEAU2 + 272), d3X)), f64x2.mul(v128.load(TABLEAU2 + 288), e3X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f3X));
  const n4X = f64x2.add(f64x2.add(y4X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a4X), f64x2.mul(v128.load(TABLEAU2 + 256), c4X)), f64x2.mul(v128.load(TABLEAU2 + 272), d4X)), f64x2.mul(v128.load(TABLEAU2 + 288), e4X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f4X));
  const n0Y = f64x2.add(f64x2.add(y0Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a0Y), f64x2.mul(v128.load(TABLEAU2 + 256), c0Y)), f64x2.mul(v128.load(TABLEAU2 + 272), d0Y)), f64x2.mul(v128.load(TABLEAU2 + 288), e0Y)))), f64x2.mul(v128.load(LANE_PARAMS + 400), f0Y));
  const n1Y = f64x2.add(f64x2.add(y1Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a1Y), f64x2.mul(v128.load(TABLEAU2 + 256), c1Y)), f64x2.mul(v128.load(TABLEAU2 + 272), d1Y)), f64x2.mul(v128.load(TABLEAU2 + 288), e1Y)))), f64x2.mul(v128.load(LANE_PARAMS + 400), f1Y));
  const n2Y = f64x2.add(f64x2.add(y2Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a2Y), f64x2.mul(v128.load(TABLEAU2 + 256), c2Y)), f64x2.mul(v128.load(TABLEAU2 + 272), d2Y)), f64x2.mul(v128.load(TABLEAU2 + 288), e2Y)))), f64x2.mul(v128.load(LANE_PARAMS + 400), f2Y));
  const n3Y = f64x2.add(f64x2.add(y3Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a3Y), f64x2.mul(v128.load(TABLEAU2 + 256), c3Y)), f64x2.mul(v128.load(TABLEAU2 + 272), d3Y)), f64x2.mul(v128.load(TABLEAU2 + 288), e3Y)))), f64x2.mul(v128.load(LANE_PARAMS + 400), f3Y));
  const n4Y = f64x2.add(f64x2.add(y4Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a4Y), f64x2.mul(v128.load(TABLEAU2 + 256), c4Y)), f64x2.mul(v128.load(TABLEAU2 + 272), d4Y)), f64x2.mul(v128.load(TABLEAU2 + 288), e4Y)))), f64x2.mul(v128.load(LANE_PARAMS + 400), f4Y));
  let g0X: v128, g1X: v128, g2X: v128, g3X: v128, g4X: v128;
  let rgX: v128, dgX: v128;
  {
    const r2 = f64x2.add(f64x2.mul(n0X, n0X), f64x2.mul(n1X, n1X));
    const r = f64x2.sqrt(r2);
    const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
    const dot = f64x2.add(f64x2.mul(n0X, n2X), f64x2.mul(n1X, n3X));
    rgX = r;
    dgX = dot;
    const rdot = f64x2.mul(dot, inv);
    const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)), f64x2.mul(v128.load(LANE_PARAMS + 80), rdot));
    g0X = n2X;
    g1X = n3X;
    g2X = f64x2.mul(force, f64x2.mul(inv, n0X));
    g3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, n1X)), v128.load(LANE_PARAMS + 96));
    g4X = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 48), rdot), rdot);
  }
  let g0Y: v128, g1Y: v128, g2Y: v128, g3Y: v128, g4Y: v128;
  let rgY: v128, dgY: v128;
  {
    const r2 = f64x2.add(f64x2.mul(n0Y, n0Y), f64x2.mul(n1Y, n1Y));
    const r = f64x2.sqrt(r2);
    const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
    const dot = f64x2.add(f64x2.mul(n0Y, n2Y), f64x2.mul(n1Y, n3Y));
    rgY = r;
    dgY = dot;
    const rdot = f64x2.mul(dot, inv);
    const force = f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 272), f64x2.sub(v128.load(LANE_PARAMS + 240), r)), f64x2.mul(v128.load(LANE_PARAMS + 288), rdot));
    g0Y = n2Y;
    g1Y = n3Y;
    g2Y = f64x2.mul(force, f64x2.mul(inv, n0Y));
    g3Y = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, n1Y)), v128.load(LANE_PARAMS + 304));
    g4Y = f64x2.mul(f64x2.mul(v128.load(LANE_PARAMS + 256), rdot), rdot);
  }
  const RTOLX = pair(rtolA, rtolB);
  const ATOLX = pair(atolA, atolB);
  let sumX = f64x2(0.0, 0.0);
  let finiteX = f64x2(0.0, 0.0);
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a0X), f64x2.mul(v128.load(TABLEAU2 + 336), c0X)), f64x2.mul(v128.load(TABLEAU2 + 352), d0X)), f64x2.mul(v128.load(TABLEAU2 + 368), e0X)), f64x2.mul(v128.load(TABLEAU2 + 384), f0X)), f64x2.mul(v128.load(TABLEAU2 + 400), g0X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y0X), f64x2.abs(n0X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n0X, n0X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a1X), f64x2.mul(v128.load(TABLEAU2 + 336), c1X)), f64x2.mul(v128.load(TABLEAU2 + 352), d1X)), f64x2.mul(v128.load(TABLEAU2 + 368), e1X)), f64x2.mul(v128.load(TABLEAU2 + 384), f1X)), f64x2.mul(v128.load(TABLEAU2 + 400), g1X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y1X), f64x2.abs(n1X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n1X, n1X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a2X), f64x2.mul(v128.load(TABLEAU2 + 336), c2X)), f64x2.mul(v128.load(TABLEAU2 + 352), d2X)), f64x2.mul(v128.load(TABLEAU2 + 368), e2X)), f64x2.mul(v128.load(TABLEAU2 + 384), f2X)), f64x2.mul(v128.load(TABLEAU2 + 400), g2X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y2X), f64x2.abs(n2X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n2X, n2X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a3X), f64x2.mul(v128.load(TABLEAU2 + 336), c3X)), f64x2.mul(v128.load(TABLEAU2 + 352), d3X)), f64x2.mul(v128.load(TABLEAU2 + 368), e3X)), f64x2.mul(v128.load(TABLEAU2 + 384), f3X)), f64x2.mul(v128.load(TABLEAU2 + 400), g3X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y3X), f64x2.abs(n3X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n3X, n3X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a4X), f64x2.mul(v128.load(TABLEAU2 + 336), c4X)), f64x2.mul(v128.load(TABLEAU2 + 352), d4X)), f64x2.mul(v128.load(TABLEAU2 + 368), e4X)), f64x2.mul(v128.load(TABLEAU2 + 384), f4X)), f64x2.mul(v128.load(TABLEAU2 + 400), g4X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y4X), f64x2.abs(n4X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n4X, n4X));
  }
  const errX = f64x2.sqrt(f64x2.div(sumX, pair(dimA, dimB)));
  const RTOLY = pair(rtolC, rtolD);
  const ATOLY = pair(atolC, atolD);
  let sumY = f64x2(0.0, 0.0);
  let finiteY = f64x2(0.0, 0.0);
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a0Y), f64x2.mul(v128.load(TABLEAU2 + 336), c0Y)), f64x2.mul(v128.load(TABLEAU2 + 352), d0Y)), f64x2.mul(v128.load(TABLEAU2 + 368), e0Y)), f64x2.mul(v128.load(TABLEAU2 + 384), f0Y)), f64x2.mul(v128.load(TABLEAU2 + 400), g0Y)));
    const sc = f64x2.add(ATOLY, f64x2.mul(RTOLY, f64x2.max(f64x2.abs(y0Y), f64x2.abs(n0Y))));
    const q = f64x2.div(e, sc);
    sumY = f64x2.add(sumY, f64x2.mul(q, q));
    finiteY = f64x2.add(finiteY, f64x2.sub(n0Y, n0Y));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a1Y), f64x2.mul(v128.load(TABLEAU2 + 336), c1Y)), f64x2.mul(v128.load(TABLEAU2 + 352), d1Y)), f64x2.mul(v128.load(TABLEAU2 + 368), e1Y)), f64x2.mul(v128.load(TABLEAU2 + 384), f1Y)), f64x2.mul(v128.load(TABLEAU2 + 400), g1Y)));
    const sc = f64x2.add(ATOLY, f64x2.mul(RTOLY, f64x2.max(f64x2.abs(y1Y), f64x2.abs(n1Y))));
    const q = f64x2.div(e, sc);
    sumY = f64x2.add(sumY, f64x2.mul(q, q));
    finiteY = f64x2.add(finiteY, f64x2.sub(n1Y, n1Y));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a2Y), f64x2.mul(v128.load(TABLEAU2 + 336), c2Y)), f64x2.mul(v128.load(TABLEAU2 + 352), d2Y)), f64x2.mul(v128.load(TABLEAU2 + 368), e2Y)), f64x2.mul(v128.load(TABLEAU2 + 384), f2Y)), f64x2.mul(v128.load(TABLEAU2 + 400), g2Y)));
    const sc = f64x2.add(ATOLY, f64x2.mul(RTOLY, f64x2.max(f64x2.abs(y2Y), f64x2.abs(n2Y))));
    const q = f64x2.div(e, sc);
    sumY = f64x2.add(sumY, f64x2.mul(q, q));
    finiteY = f64x2.add(finiteY, f64x2.sub(n2Y, n2Y));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a3Y), f64x2.mul(v128.load(TABLEAU2 + 336), c3Y)), f64x2.mul(v128.load(TABLEAU2 + 352), d3Y)), f64x2.mul(v128.load(TABLEAU2 + 368), e3Y)), f64x2.mul(v128.load(TABLEAU2 + 384), f3Y)), f64x2.mul(v128.load(TABLEAU2 + 400), g3Y)));
    const sc = f64x2.add(ATOLY, f64x2.mul(RTOLY, f64x2.max(f64x2.abs(y3Y), f64x2.abs(n3Y))));
    const q = f64x2.div(e, sc);
    sumY = f64x2.add(sumY, f64x2.mul(q, q));
    finiteY = f64x2.add(finiteY, f64x2.sub(n3Y, n3Y));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a4Y), f64x2.mul(v128.load(TABLEAU2 + 336), c4Y)), f64x2.mul(v128.load(TABLEAU2 + 352), d4Y)), f64x2.mul(v128.load(TABLEAU2 + 368), e4Y)), f64x2.mul(v128.load(TABLEAU2 + 384), f4Y)), f64x2.mul(v128.load(TABLEAU2 + 400), g4Y)));
    const sc = f64x2.add(ATOLY, f64x2.mul(RTOLY, f64x2.max(f64x2.abs(y4Y), f64x2.abs(n4Y))));
    const q = f64x2.div(e, sc);
    sumY = f64x2.add(sumY, f64x2.mul(q, q));
    finiteY = f64x2.add(finiteY, f64x2.sub(n4Y, n4Y));
  }
  const errY = f64x2.sqrt(f64x2.div(sumY, pair(dimC, dimD)));
  v128.store(LANE_STAGES + 0, c0X);
  v128.store(LANE_STAGES + 16, c1X);
  v128.store(LANE_STAGES + 32, c2X);
  v128.store(LANE_STAGES + 48, c3X);
  v128.store(LANE_STAGES + 64, c4X);
  v128.store(LANE_STAGES + 80, d0X);
  v128.store(LANE_STAGES + 96, d1X);
  v128.store(LANE_STAGES + 112, d2X);
  v128.store(LANE_STAGES + 128, d3X);
  v128.store(LANE_STAGES + 144, d4X);
  v128.store(LANE_STAGES + 160, e0X);
  v128.store(LANE_STAGES + 176, e1X);
  v128.store(LANE_STAGES + 192, e2X);
  v128.store(LANE_STAGES + 208, e3X);
  v128.store(LANE_STAGES + 224, e4X);
  v128.store(LANE_STAGES + 240, f0X);
  v128.store(LANE_STAGES + 256, f1X);
  v128.store(LANE_STAGES + 272, f2X);
  v128.store(LANE_STAGES + 288, f3X);
  v128.store(LANE_STAGES + 304, f4X);
  scatter(pA, pB, OFF_K7 + 0, g0X);
  scatter(pA, pB, OFF_K7 + 8, g1X);
  scatter(pA, pB, OFF_K7 + 16, g2X);
  scatter(pA, pB, OFF_K7 + 24, g3X);
  scatter(pA, pB, OFF_K7 + 32, g4X);
  scatter(pA, pB, OFF_YN + 0, n0X);
  scatter(pA, pB, OFF_YN + 8, n1X);
  scatter(pA, pB, OFF_YN + 16, n2X);
  scatter(pA, pB, OFF_YN + 24, n3X);
  scatter(pA, pB, OFF_YN + 32, n4X);
  {
    // the step-end quantities of stanceAfterLaneStep (stance.ts), its arithmetic
    const nr = rgX; // sqrt(px^2 + py^2) at YN, from K7's right-hand side
    const nrdot = f64x2.div(dgX, nr); // (px vx + py vy) / r
    v128.store(LANE_END + 0, f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 16), f64x2.sub(v128.load(LANE_PARAMS + 32), nr)), f64x2.mul(v128.load(LANE_PARAMS + 48), nrdot))); // leg force
    v128.store(LANE_END + 16, f64x2.sub(nr, v128.load(LANE_PARAMS + 32))); // r - L0
    v128.store(LANE_END + 32, nrdot);
    v128.store(LANE_END + 48, f64x2.abs(f64x2.div(n0X, n1X))); // friction ratio
    // acceptFactor(err, afterReject) with the lane's controller memory (dopri5.ts)
    const e = v128.bitselect(errX, f64x2(1e-12, 1e-12), f64x2.gt(errX, f64x2(1e-12, 1e-12)));
    let f = f64x2.mul(f64x2.mul(f64x2(0.9, 0.9), roughPow2(e, -EXPO)), roughPow2(pair(oldA, oldB), BETA));
    f = v128.bitselect(f64x2(0.2, 0.2), f, f64x2.lt(f, f64x2(0.2, 0.2)));
    const hi = pair(hiA, hiB);
    v128.store(LANE_END + 64, v128.bitselect(hi, f, f64x2.gt(f, hi)));
  }
  // A NaN or infinity anywhere in the stages shows up in err or in YN.
  laneErr0 = checked(f64x2.extract_lane(errX, 0), f64x2.extract_lane(finiteX, 0));
  laneErr1 = checked(f64x2.extract_lane(errX, 1), f64x2.extract_lane(finiteX, 1));
  v128.store(LANE_STAGES + 320, c0Y);
  v128.store(LANE_STAGES + 336, c1Y);
  v128.store(LANE_STAGES + 352, c2Y);
  v128.store(LANE_STAGES + 368, c3Y);
  v128.store(LANE_STAGES + 384, c4Y);
  v128.store(LANE_STAGES + 400, d0Y);
  v128.store(LANE_STAGES + 416, d1Y);
  v128.store(LANE_STAGES + 432, d2Y);
  v128.store(LANE_STAGES + 448, d3Y);
  v128.store(LANE_STAGES + 464, d4Y);
  v128.store(LANE_STAGES + 480, e0Y);
  v128.store(LANE_STAGES + 496, e1Y);
  v128.store(LANE_STAGES + 512, e2Y);
  v128.store(LANE_STAGES + 528, e3Y);
  v128.store(LANE_STAGES + 544, e4Y);
  v128.store(LANE_STAGES + 560, f0Y);
  v128.store(LANE_STAGES + 576, f1Y);
  v128.store(LANE_STAGES + 592, f2Y);
  v128.store(LANE_STAGES + 608, f3Y);
  v128.store(LANE_STAGES + 624, f4Y);
  scatter(pC, pD, OFF_K7 + 0, g0Y);
  scatter(pC, pD, OFF_K7 + 8, g1Y);
  scatter(pC, pD, OFF_K7 + 16, g2Y);
  scatter(pC, pD, OFF_K7 + 24, g3Y);
  scatter(pC, pD, OFF_K7 + 32, g4Y);
  scatter(pC, pD, OFF_YN + 0, n0Y);
  scatter(pC, pD, OFF_YN + 8, n1Y);
  scatter(pC, pD, OFF_YN + 16, n2Y);
  scatter(pC, pD, OFF_YN + 24, n3Y);
  scatter(pC, pD, OFF_YN + 32, n4Y);
  {
    // the step-end quantities of stanceAfterLaneStep (stance.ts), its arithmetic
    const nr = rgY; // sqrt(px^2 + py^2) at YN, from K7's right-hand side
    const nrdot = f64x2.div(dgY, nr); // (px vx + py vy) / r
    v128.store(LANE_END + 80, f64x2.sub(f64x2.mul(v128.load(LANE_PARAMS + 224), f64x2.sub(v128.load(LANE_PARAMS + 240), nr)), f64x2.mul(v128.load(LANE_PARAMS + 256), nrdot))); // leg force
    v128.store(LANE_END + 96, f64x2.sub(nr, v128.load(LANE_PARAMS + 240))); // r - L0
    v128.store(LANE_END + 112, nrdot);
    v128.store(LANE_END + 128, f64x2.abs(f64x2.div(n0Y, n1Y))); // friction ratio
    // acceptFactor(err, afterReject) with the lane's controller memory (dopri5.ts)
    const e = v128.bitselect(errY, f64x2(1e-12, 1e-12), f64x2.gt(errY, f64x2(1e-12, 1e-12)));
    let f = f64x2.mul(f64x2.mul(f64x2(0.9, 0.9), roughPow2(e, -EXPO)), roughPow2(pair(oldC, oldD), BETA));
    f = v128.bitselect(f64x2(0.2, 0.2), f, f64x2.lt(f, f64x2(0.2, 0.2)));
    const hi = pair(hiC, hiD);
    v128.store(LANE_END + 144, v128.bitselect(hi, f, f64x2.gt(f, hi)));
  }
  // A NaN or infinity anywhere in the stages shows up in err or in YN.
  laneErr2 = checked(f64x2.extract_lane(errY, 0), f64x2.extract_lane(finiteY, 0));
  laneErr3 = checked(f64x2.extract_lane(errY, 1), f64x2.extract_lane(finiteY, 1));
}

// stepQuad for four undamped stances (springOnly).
function springStepQuad(sA: Stance, sB: Stance, sC: Stance, sD: Stance): void {
  const pA = sA.bufs;
  const hA = sA.h;
  const rtolA = sA.rtol;
  const atolA = sA.atol;
  const dimA = sA.errDim;
  const kA = sA.k;
  const legA = sA.leg;
  const invMA = sA.invMass;
  const gA = sA.g;
  const oldA = sA.errOld;
  const hiA: f64 = sA.afterReject ? 1.0 : 10.0;
  const kimA = kA * invMA;
  const ha21A = hA * A21;
  const ha32A = hA * A32;
  const ha43A = hA * A43;
  const ha54A = hA * A54;
  const ha65A = hA * A65;
  const hb6A = hA * B6;
  const pB = sB.bufs;
  const hB = sB.h;
  const rtolB = sB.rtol;
  const atolB = sB.atol;
  const dimB = sB.errDim;
  const kB = sB.k;
  const legB = sB.leg;
  const invMB = sB.invMass;
  const gB = sB.g;
  const oldB = sB.errOld;
  const hiB: f64 = sB.afterReject ? 1.0 : 10.0;
  const kimB = kB * invMB;
  const ha21B = hB * A21;
  const ha32B = hB * A32;
  const ha43B = hB * A43;
  const ha54B = hB * A54;
  const ha65B = hB * A65;
  const hb6B = hB * B6;
  const pC = sC.bufs;
  const hC = sC.h;
  const rtolC = sC.rtol;
  const atolC = sC.atol;
  const dimC = sC.errDim;
  const kC = sC.k;
  const legC = sC.leg;
  const invMC = sC.invMass;
  const gC = sC.g;
  const oldC = sC.errOld;
  const hiC: f64 = sC.afterReject ? 1.0 : 10.0;
  const kimC = kC * invMC;
  const ha21C = hC * A21;
  const ha32C = hC * A32;
  const ha43C = hC * A43;
  const ha54C = hC * A54;
  const ha65C = hC * A65;
  const hb6C = hC * B6;
  const pD = sD.bufs;
  const hD = sD.h;
  const rtolD = sD.rtol;
  const atolD = sD.atol;
  const dimD = sD.errDim;
  const kD = sD.k;
  const legD = sD.leg;
  const invMD = sD.invMass;
  const gD = sD.g;
  const oldD = sD.errOld;
  const hiD: f64 = sD.afterReject ? 1.0 : 10.0;
  const kimD = kD * invMD;
  const ha21D = hD * A21;
  const ha32D = hD * A32;
  const ha43D = hD * A43;
  const ha54D = hD * A54;
  const ha65D = hD * A65;
  const hb6D = hD * B6;
  const ONE = f64x2(1.0, 1.0);
  const ZERO = f64x2(0.0, 0.0);
  v128.store(LANE_PARAMS + 0, pair(hA, hB));
  v128.store(LANE_PARAMS + 16, pair(kA, kB));
  v128.store(LANE_PARAMS + 32, pair(legA, legB));
  v128.store(LANE_PARAMS + 64, pair(kimA, kimB));
  v128.store(LANE_PARAMS + 96, pair(gA, gB));
  v128.store(LANE_PARAMS + 112, pair(ha21A, ha21B));
  v128.store(LANE_PARAMS + 128, pair(ha32A, ha32B));
  v128.store(LANE_PARAMS + 144, pair(ha43A, ha43B));
  v128.store(LANE_PARAMS + 160, pair(ha54A, ha54B));
  v128.store(LANE_PARAMS + 176, pair(ha65A, ha65B));
  v128.store(LANE_PARAMS + 192, pair(hb6A, hb6B));
  const y0X = gather(pA, pB, OFF_Y0 + 0);
  const y1X = gather(pA, pB, OFF_Y0 + 8);
  const y2X = gather(pA, pB, OFF_Y0 + 16);
  const y3X = gather(pA, pB, OFF_Y0 + 24);
  const y4X = gather(pA, pB, OFF_Y0 + 32);
  const a0X = gather(pA, pB, OFF_K1 + 0);
  const a1X = gather(pA, pB, OFF_K1 + 8);
  const a2X = gather(pA, pB, OFF_K1 + 16);
  const a3X = gather(pA, pB, OFF_K1 + 24);
  v128.store(LANE_PARAMS + 208, pair(hC, hD));
  v128.store(LANE_PARAMS + 224, pair(kC, kD));
  v128.store(LANE_PARAMS + 240, pair(legC, legD));
  v128.store(LANE_PARAMS + 272, pair(kimC, kimD));
  v128.store(LANE_PARAMS + 304, pair(gC, gD));
  v128.store(LANE_PARAMS + 320, pair(ha21C, ha21D));
  v128.store(LANE_PARAMS + 336, pair(ha32C, ha32D));
  v128.store(LANE_PARAMS + 352, pair(ha43C, ha43D));
  v128.store(LANE_PARAMS + 368, pair(ha54C, ha54D));
  v128.store(LANE_PARAMS + 384, pair(ha65C, ha65D));
  v128.store(LANE_PARAMS + 400, pair(hb6C, hb6D));
  const y0Y = gather(pC, pD, OFF_Y0 + 0);
  const y1Y = gather(pC, pD, OFF_Y0 + 8);
  const y2Y = gather(pC, pD, OFF_Y0 + 16);
  const y3Y = gather(pC, pD, OFF_Y0 + 24);
  const y4Y = gather(pC, pD, OFF_Y0 + 32);
  const a0Y = gather(pC, pD, OFF_K1 + 0);
  const a1Y = gather(pC, pD, OFF_K1 + 8);
  const a2Y = gather(pC, pD, OFF_K1 + 16);
  const a3Y = gather(pC, pD, OFF_K1 + 24);
  let b0X: v128, b1X: v128, b2X: v128, b3X: v128;
  {
    const s0 = f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 112), a0X));
    const s1 = f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 112), a1X));
    const s2 = f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 112), a2X));
    const s3 = f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 112), a3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)); // - (c/m) r' = - (+-0)
      b0X = s2;
      b1X = s3;
      b2X = f64x2.mul(force, f64x2.mul(inv, s0));
      b3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
    }
  }
  let b0Y: v128, b1Y: v128, b2Y: v128, b3Y: v128;
  {
    const s0 = f64x2.add(y0Y, f64x2.mul(v128.load(LANE_PARAMS + 320), a0Y));
    const s1 = f64x2.add(y1Y, f64x2.mul(v128.load(LANE_PARAMS + 320), a1Y));
    const s2 = f64x2.add(y2Y, f64x2.mul(v128.load(LANE_PARAMS + 320), a2Y));
    const s3 = f64x2.add(y3Y, f64x2.mul(v128.load(LANE_PARAMS + 320), a3Y));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 272), f64x2.sub(v128.load(LANE_PARAMS + 240), r)); // - (c/m) r' = - (+-0)
      b0Y = s2;
      b1Y = s3;
      b2Y = f64x2.mul(force, f64x2.mul(inv, s0));
      b3Y = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 304));
    }
  }
  let c0X: v128, c1X: v128, c2X: v128, c3X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a0X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a1X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a2X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.mul(v128.load(TABLEAU2 + 16), a3X))), f64x2.mul(v128.load(LANE_PARAMS + 128), b3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)); // - (c/m) r' = - (+-0)
      c0X = s2;
      c1X = s3;
      c2X = f64x2.mul(force, f64x2.mul(inv, s0));
      c3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
    }
  }
  let c0Y: v128, c1Y: v128, c2Y: v128, c3Y: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.mul(v128.load(TABLEAU2 + 16), a0Y))), f64x2.mul(v128.load(LANE_PARAMS + 336), b0Y));
    const s1 = f64x2.add(f64x2.add(y1Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.mul(v128.load(TABLEAU2 + 16), a1Y))), f64x2.mul(v128.load(LANE_PARAMS + 336), b1Y));
    const s2 = f64x2.add(f64x2.add(y2Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.mul(v128.load(TABLEAU2 + 16), a2Y))), f64x2.mul(v128.load(LANE_PARAMS + 336), b2Y));
    const s3 = f64x2.add(f64x2.add(y3Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.mul(v128.load(TABLEAU2 + 16), a3Y))), f64x2.mul(v128.load(LANE_PARAMS + 336), b3Y));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 272), f64x2.sub(v128.load(LANE_PARAMS + 240), r)); // - (c/m) r' = - (+-0)
      c0Y = s2;
      c1Y = s3;
      c2Y = f64x2.mul(force, f64x2.mul(inv, s0));
      c3Y = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 304));
    }
  }
  let d0X: v128, d1X: v128, d2X: v128, d3X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a0X), f64x2.mul(v128.load(TABLEAU2 + 64), b0X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a1X), f64x2.mul(v128.load(TABLEAU2 + 64), b1X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a2X), f64x2.mul(v128.load(TABLEAU2 + 64), b2X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a3X), f64x2.mul(v128.load(TABLEAU2 + 64), b3X)))), f64x2.mul(v128.load(LANE_PARAMS + 144), c3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)); // - (c/m) r' = - (+-0)
      d0X = s2;
      d1X = s3;
      d2X = f64x2.mul(force, f64x2.mul(inv, s0));
      d3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
    }
  }
  let d0Y: v128, d1Y: v128, d2Y: v128, d3Y: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a0Y), f64x2.mul(v128.load(TABLEAU2 + 64), b0Y)))), f64x2.mul(v128.load(LANE_PARAMS + 352), c0Y));
    const s1 = f64x2.add(f64x2.add(y1Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a1Y), f64x2.mul(v128.load(TABLEAU2 + 64), b1Y)))), f64x2.mul(v128.load(LANE_PARAMS + 352), c1Y));
    const s2 = f64x2.add(f64x2.add(y2Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a2Y), f64x2.mul(v128.load(TABLEAU2 + 64), b2Y)))), f64x2.mul(v128.load(LANE_PARAMS + 352), c2Y));
    const s3 = f64x2.add(f64x2.add(y3Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 48), a3Y), f64x2.mul(v128.load(TABLEAU2 + 64), b3Y)))), f64x2.mul(v128.load(LANE_PARAMS + 352), c3Y));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 272), f64x2.sub(v128.load(LANE_PARAMS + 240), r)); // - (c/m) r' = - (+-0)
      d0Y = s2;
      d1Y = s3;
      d2Y = f64x2.mul(force, f64x2.mul(inv, s0));
      d3Y = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 304));
    }
  }
  let e0X: v128, e1X: v128, e2X: v128, e3X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a0X), f64x2.mul(v128.load(TABLEAU2 + 112), b0X)), f64x2.mul(v128.load(TABLEAU2 + 128), c0X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a1X), f64x2.mul(v128.load(TABLEAU2 + 112), b1X)), f64x2.mul(v128.load(TABLEAU2 + 128), c1X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a2X), f64x2.mul(v128.load(TABLEAU2 + 112), b2X)), f64x2.mul(v128.load(TABLEAU2 + 128), c2X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a3X), f64x2.mul(v128.load(TABLEAU2 + 112), b3X)), f64x2.mul(v128.load(TABLEAU2 + 128), c3X)))), f64x2.mul(v128.load(LANE_PARAMS + 160), d3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)); // - (c/m) r' = - (+-0)
      e0X = s2;
      e1X = s3;
      e2X = f64x2.mul(force, f64x2.mul(inv, s0));
      e3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
    }
  }
  let e0Y: v128, e1Y: v128, e2Y: v128, e3Y: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a0Y), f64x2.mul(v128.load(TABLEAU2 + 112), b0Y)), f64x2.mul(v128.load(TABLEAU2 + 128), c0Y)))), f64x2.mul(v128.load(LANE_PARAMS + 368), d0Y));
    const s1 = f64x2.add(f64x2.add(y1Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a1Y), f64x2.mul(v128.load(TABLEAU2 + 112), b1Y)), f64x2.mul(v128.load(TABLEAU2 + 128), c1Y)))), f64x2.mul(v128.load(LANE_PARAMS + 368), d1Y));
    const s2 = f64x2.add(f64x2.add(y2Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a2Y), f64x2.mul(v128.load(TABLEAU2 + 112), b2Y)), f64x2.mul(v128.load(TABLEAU2 + 128), c2Y)))), f64x2.mul(v128.load(LANE_PARAMS + 368), d2Y));
    const s3 = f64x2.add(f64x2.add(y3Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 96), a3Y), f64x2.mul(v128.load(TABLEAU2 + 112), b3Y)), f64x2.mul(v128.load(TABLEAU2 + 128), c3Y)))), f64x2.mul(v128.load(LANE_PARAMS + 368), d3Y));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 272), f64x2.sub(v128.load(LANE_PARAMS + 240), r)); // - (c/m) r' = - (+-0)
      e0Y = s2;
      e1Y = s3;
      e2Y = f64x2.mul(force, f64x2.mul(inv, s0));
      e3Y = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 304));
    }
  }
  let f0X: v128, f1X: v128, f2X: v128, f3X: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a0X), f64x2.mul(v128.load(TABLEAU2 + 176), b0X)), f64x2.mul(v128.load(TABLEAU2 + 192), c0X)), f64x2.mul(v128.load(TABLEAU2 + 208), d0X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e0X));
    const s1 = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a1X), f64x2.mul(v128.load(TABLEAU2 + 176), b1X)), f64x2.mul(v128.load(TABLEAU2 + 192), c1X)), f64x2.mul(v128.load(TABLEAU2 + 208), d1X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e1X));
    const s2 = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a2X), f64x2.mul(v128.load(TABLEAU2 + 176), b2X)), f64x2.mul(v128.load(TABLEAU2 + 192), c2X)), f64x2.mul(v128.load(TABLEAU2 + 208), d2X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e2X));
    const s3 = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a3X), f64x2.mul(v128.load(TABLEAU2 + 176), b3X)), f64x2.mul(v128.load(TABLEAU2 + 192), c3X)), f64x2.mul(v128.load(TABLEAU2 + 208), d3X)))), f64x2.mul(v128.load(LANE_PARAMS + 176), e3X));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)); // - (c/m) r' = - (+-0)
      f0X = s2;
      f1X = s3;
      f2X = f64x2.mul(force, f64x2.mul(inv, s0));
      f3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 96));
    }
  }
  let f0Y: v128, f1Y: v128, f2Y: v128, f3Y: v128;
  {
    const s0 = f64x2.add(f64x2.add(y0Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a0Y), f64x2.mul(v128.load(TABLEAU2 + 176), b0Y)), f64x2.mul(v128.load(TABLEAU2 + 192), c0Y)), f64x2.mul(v128.load(TABLEAU2 + 208), d0Y)))), f64x2.mul(v128.load(LANE_PARAMS + 384), e0Y));
    const s1 = f64x2.add(f64x2.add(y1Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a1Y), f64x2.mul(v128.load(TABLEAU2 + 176), b1Y)), f64x2.mul(v128.load(TABLEAU2 + 192), c1Y)), f64x2.mul(v128.load(TABLEAU2 + 208), d1Y)))), f64x2.mul(v128.load(LANE_PARAMS + 384), e1Y));
    const s2 = f64x2.add(f64x2.add(y2Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a2Y), f64x2.mul(v128.load(TABLEAU2 + 176), b2Y)), f64x2.mul(v128.load(TABLEAU2 + 192), c2Y)), f64x2.mul(v128.load(TABLEAU2 + 208), d2Y)))), f64x2.mul(v128.load(LANE_PARAMS + 384), e2Y));
    const s3 = f64x2.add(f64x2.add(y3Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 160), a3Y), f64x2.mul(v128.load(TABLEAU2 + 176), b3Y)), f64x2.mul(v128.load(TABLEAU2 + 192), c3Y)), f64x2.mul(v128.load(TABLEAU2 + 208), d3Y)))), f64x2.mul(v128.load(LANE_PARAMS + 384), e3Y));
    {
      const r2 = f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1));
      const r = f64x2.sqrt(r2);
      const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
      const force = f64x2.mul(v128.load(LANE_PARAMS + 272), f64x2.sub(v128.load(LANE_PARAMS + 240), r)); // - (c/m) r' = - (+-0)
      f0Y = s2;
      f1Y = s3;
      f2Y = f64x2.mul(force, f64x2.mul(inv, s0));
      f3Y = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, s1)), v128.load(LANE_PARAMS + 304));
    }
  }
  const n0X = f64x2.add(f64x2.add(y0X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a0X), f64x2.mul(v128.load(TABLEAU2 + 256), c0X)), f64x2.mul(v128.load(TABLEAU2 + 272), d0X)), f64x2.mul(v128.load(TABLEAU2 + 288), e0X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f0X));
  const n1X = f64x2.add(f64x2.add(y1X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a1X), f64x2.mul(v128.load(TABLEAU2 + 256), c1X)), f64x2.mul(v128.load(TABLEAU2 + 272), d1X)), f64x2.mul(v128.load(TABLEAU2 + 288), e1X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f1X));
  const n2X = f64x2.add(f64x2.add(y2X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a2X), f64x2.mul(v128.load(TABLEAU2 + 256), c2X)), f64x2.mul(v128.load(TABLEAU2 + 272), d2X)), f64x2.mul(v128.load(TABLEAU2 + 288), e2X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f2X));
  const n3X = f64x2.add(f64x2.add(y3X, f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a3X), f64x2.mul(v128.load(TABLEAU2 + 256), c3X)), f64x2.mul(v128.load(TABLEAU2 + 272), d3X)), f64x2.mul(v128.load(TABLEAU2 + 288), e3X)))), f64x2.mul(v128.load(LANE_PARAMS + 192), f3X));
  const n4X = y4X; // the work: (+0 + h (+0 ...)) + hB6 (+0) = +0 without damping
  const n0Y = f64x2.add(f64x2.add(y0Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a0Y), f64x2.mul(v128.load(TABLEAU2 + 256), c0Y)), f64x2.mul(v128.load(TABLEAU2 + 272), d0Y)), f64x2.mul(v128.load(TABLEAU2 + 288), e0Y)))), f64x2.mul(v128.load(LANE_PARAMS + 400), f0Y));
  const n1Y = f64x2.add(f64x2.add(y1Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a1Y), f64x2.mul(v128.load(TABLEAU2 + 256), c1Y)), f64x2.mul(v128.load(TABLEAU2 + 272), d1Y)), f64x2.mul(v128.load(TABLEAU2 + 288), e1Y)))), f64x2.mul(v128.load(LANE_PARAMS + 400), f1Y));
  const n2Y = f64x2.add(f64x2.add(y2Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a2Y), f64x2.mul(v128.load(TABLEAU2 + 256), c2Y)), f64x2.mul(v128.load(TABLEAU2 + 272), d2Y)), f64x2.mul(v128.load(TABLEAU2 + 288), e2Y)))), f64x2.mul(v128.load(LANE_PARAMS + 400), f2Y));
  const n3Y = f64x2.add(f64x2.add(y3Y, f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 240), a3Y), f64x2.mul(v128.load(TABLEAU2 + 256), c3Y)), f64x2.mul(v128.load(TABLEAU2 + 272), d3Y)), f64x2.mul(v128.load(TABLEAU2 + 288), e3Y)))), f64x2.mul(v128.load(LANE_PARAMS + 400), f3Y));
  const n4Y = y4Y; // the work: (+0 + h (+0 ...)) + hB6 (+0) = +0 without damping
  let g0X: v128, g1X: v128, g2X: v128, g3X: v128;
  let rgX: v128, dgX: v128;
  {
    const r2 = f64x2.add(f64x2.mul(n0X, n0X), f64x2.mul(n1X, n1X));
    const r = f64x2.sqrt(r2);
    const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
    const dot = f64x2.add(f64x2.mul(n0X, n2X), f64x2.mul(n1X, n3X));
    rgX = r;
    dgX = dot;
    const force = f64x2.mul(v128.load(LANE_PARAMS + 64), f64x2.sub(v128.load(LANE_PARAMS + 32), r)); // - (c/m) r' = - (+-0)
    g0X = n2X;
    g1X = n3X;
    g2X = f64x2.mul(force, f64x2.mul(inv, n0X));
    g3X = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, n1X)), v128.load(LANE_PARAMS + 96));
  }
  let g0Y: v128, g1Y: v128, g2Y: v128, g3Y: v128;
  let rgY: v128, dgY: v128;
  {
    const r2 = f64x2.add(f64x2.mul(n0Y, n0Y), f64x2.mul(n1Y, n1Y));
    const r = f64x2.sqrt(r2);
    const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side
    const dot = f64x2.add(f64x2.mul(n0Y, n2Y), f64x2.mul(n1Y, n3Y));
    rgY = r;
    dgY = dot;
    const force = f64x2.mul(v128.load(LANE_PARAMS + 272), f64x2.sub(v128.load(LANE_PARAMS + 240), r)); // - (c/m) r' = - (+-0)
    g0Y = n2Y;
    g1Y = n3Y;
    g2Y = f64x2.mul(force, f64x2.mul(inv, n0Y));
    g3Y = f64x2.sub(f64x2.mul(force, f64x2.mul(inv, n1Y)), v128.load(LANE_PARAMS + 304));
  }
  const RTOLX = pair(rtolA, rtolB);
  const ATOLX = pair(atolA, atolB);
  let sumX = f64x2(0.0, 0.0);
  let finiteX = f64x2(0.0, 0.0);
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a0X), f64x2.mul(v128.load(TABLEAU2 + 336), c0X)), f64x2.mul(v128.load(TABLEAU2 + 352), d0X)), f64x2.mul(v128.load(TABLEAU2 + 368), e0X)), f64x2.mul(v128.load(TABLEAU2 + 384), f0X)), f64x2.mul(v128.load(TABLEAU2 + 400), g0X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y0X), f64x2.abs(n0X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n0X, n0X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a1X), f64x2.mul(v128.load(TABLEAU2 + 336), c1X)), f64x2.mul(v128.load(TABLEAU2 + 352), d1X)), f64x2.mul(v128.load(TABLEAU2 + 368), e1X)), f64x2.mul(v128.load(TABLEAU2 + 384), f1X)), f64x2.mul(v128.load(TABLEAU2 + 400), g1X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y1X), f64x2.abs(n1X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n1X, n1X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a2X), f64x2.mul(v128.load(TABLEAU2 + 336), c2X)), f64x2.mul(v128.load(TABLEAU2 + 352), d2X)), f64x2.mul(v128.load(TABLEAU2 + 368), e2X)), f64x2.mul(v128.load(TABLEAU2 + 384), f2X)), f64x2.mul(v128.load(TABLEAU2 + 400), g2X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y2X), f64x2.abs(n2X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n2X, n2X));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 0), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a3X), f64x2.mul(v128.load(TABLEAU2 + 336), c3X)), f64x2.mul(v128.load(TABLEAU2 + 352), d3X)), f64x2.mul(v128.load(TABLEAU2 + 368), e3X)), f64x2.mul(v128.load(TABLEAU2 + 384), f3X)), f64x2.mul(v128.load(TABLEAU2 + 400), g3X)));
    const sc = f64x2.add(ATOLX, f64x2.mul(RTOLX, f64x2.max(f64x2.abs(y3X), f64x2.abs(n3X))));
    const q = f64x2.div(e, sc);
    sumX = f64x2.add(sumX, f64x2.mul(q, q));
    finiteX = f64x2.add(finiteX, f64x2.sub(n3X, n3X));
  }
  const errX = f64x2.sqrt(f64x2.div(sumX, pair(dimA, dimB)));
  const RTOLY = pair(rtolC, rtolD);
  const ATOLY = pair(atolC, atolD);
  let sumY = f64x2(0.0, 0.0);
  let finiteY = f64x2(0.0, 0.0);
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a0Y), f64x2.mul(v128.load(TABLEAU2 + 336), c0Y)), f64x2.mul(v128.load(TABLEAU2 + 352), d0Y)), f64x2.mul(v128.load(TABLEAU2 + 368), e0Y)), f64x2.mul(v128.load(TABLEAU2 + 384), f0Y)), f64x2.mul(v128.load(TABLEAU2 + 400), g0Y)));
    const sc = f64x2.add(ATOLY, f64x2.mul(RTOLY, f64x2.max(f64x2.abs(y0Y), f64x2.abs(n0Y))));
    const q = f64x2.div(e, sc);
    sumY = f64x2.add(sumY, f64x2.mul(q, q));
    finiteY = f64x2.add(finiteY, f64x2.sub(n0Y, n0Y));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a1Y), f64x2.mul(v128.load(TABLEAU2 + 336), c1Y)), f64x2.mul(v128.load(TABLEAU2 + 352), d1Y)), f64x2.mul(v128.load(TABLEAU2 + 368), e1Y)), f64x2.mul(v128.load(TABLEAU2 + 384), f1Y)), f64x2.mul(v128.load(TABLEAU2 + 400), g1Y)));
    const sc = f64x2.add(ATOLY, f64x2.mul(RTOLY, f64x2.max(f64x2.abs(y1Y), f64x2.abs(n1Y))));
    const q = f64x2.div(e, sc);
    sumY = f64x2.add(sumY, f64x2.mul(q, q));
    finiteY = f64x2.add(finiteY, f64x2.sub(n1Y, n1Y));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a2Y), f64x2.mul(v128.load(TABLEAU2 + 336), c2Y)), f64x2.mul(v128.load(TABLEAU2 + 352), d2Y)), f64x2.mul(v128.load(TABLEAU2 + 368), e2Y)), f64x2.mul(v128.load(TABLEAU2 + 384), f2Y)), f64x2.mul(v128.load(TABLEAU2 + 400), g2Y)));
    const sc = f64x2.add(ATOLY, f64x2.mul(RTOLY, f64x2.max(f64x2.abs(y2Y), f64x2.abs(n2Y))));
    const q = f64x2.div(e, sc);
    sumY = f64x2.add(sumY, f64x2.mul(q, q));
    finiteY = f64x2.add(finiteY, f64x2.sub(n2Y, n2Y));
  }
  {
    const e = f64x2.mul(v128.load(LANE_PARAMS + 208), f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v128.load(TABLEAU2 + 320), a3Y), f64x2.mul(v128.load(TABLEAU2 + 336), c3Y)), f64x2.mul(v128.load(TABLEAU2 + 352), d3Y)), f64x2.mul(v128.load(TABLEAU2 + 368), e3Y)), f64x2.mul(v128.load(TABLEAU2 + 384), f3Y)), f64x2.mul(v128.load(TABLEAU2 + 400), g3Y)));
    const sc = f64x2.add(ATOLY, f64x2.mul(RTOLY, f64x2.max(f64x2.abs(y3Y), f64x2.abs(n3Y))));
    const q = f64x2.div(e, sc);
    sumY = f64x2.add(sumY, f64x2.mul(q, q));
    finiteY = f64x2.add(finiteY, f64x2.sub(n3Y, n3Y));
  }
  const errY = f64x2.sqrt(f64x2.div(sumY, pair(dimC, dimD)));
  v128.store(LANE_STAGES + 0, c0X);
  v128.store(LANE_STAGES + 16, c1X);
  v128.store(LANE_STAGES + 32, c2X);
  v128.store(LANE_STAGES + 48, c3X);
  v128.store(LANE_STAGES + 64, ZERO);
  v128.store(LANE_STAGES + 80, d0X);
  v128.store(LANE_STAGES + 96, d1X);
  v128.store(LANE_STAGES + 112, d2X);
  v128.store(LANE_STAGES + 128, d3X);
  v128.store(LANE_STAGES + 144, ZERO);
  v128.store(LANE_STAGES + 160, e0X);
  v128.store(LANE_STAGES + 176, e1X);
  v128.store(LANE_STAGES + 192, e2X);
  v128.store(LANE_STAGES + 208, e3X);
  v128.store(LANE_STAGES + 224, ZERO);
  v128.store(LANE_STAGES + 240, f0X);
  v128.store(LANE_STAGES + 256, f1X);
  v128.store(LANE_STAGES + 272, f2X);
  v128.store(LANE_STAGES + 288, f3X);
  v128.store(LANE_STAGES + 304, ZERO);
  scatter(pA, pB, OFF_K7 + 0, g0X);
  scatter(pA, pB, OFF_K7 + 8, g1X);
  scatter(pA, pB, OFF_K7 + 16, g2X);
  scatter(pA, pB, OFF_K7 + 24, g3X);
  scatter(pA, pB, OFF_K7 + 32, ZERO);
  scatter(pA, pB, OFF_YN + 0, n0X);
  scatter(pA, pB, OFF_YN + 8, n1X);
  scatter(pA, pB, OFF_YN + 16, n2X);
  scatter(pA, pB, OFF_YN + 24, n3X);
  scatter(pA, pB, OFF_YN + 32, n4X);
  {
    // the step-end quantities of stanceAfterLaneStep (stance.ts), its arithmetic
    const nr = rgX; // sqrt(px^2 + py^2) at YN, from K7's right-hand side
    const nrdot = f64x2.div(dgX, nr); // (px vx + py vy) / r
    v128.store(LANE_END + 0, f64x2.mul(v128.load(LANE_PARAMS + 16), f64x2.sub(v128.load(LANE_PARAMS + 32), nr))); // leg force
    v128.store(LANE_END + 16, f64x2.sub(nr, v128.load(LANE_PARAMS + 32))); // r - L0
    v128.store(LANE_END + 32, nrdot);
    v128.store(LANE_END + 48, f64x2.abs(f64x2.div(n0X, n1X))); // friction ratio
    // acceptFactor(err, afterReject) with the lane's controller memory (dopri5.ts)
    const e = v128.bitselect(errX, f64x2(1e-12, 1e-12), f64x2.gt(errX, f64x2(1e-12, 1e-12)));
    let f = f64x2.mul(f64x2.mul(f64x2(0.9, 0.9), roughPow2(e, -EXPO)), roughPow2(pair(oldA, oldB), BETA));
    f = v128.bitselect(f64x2(0.2, 0.2), f, f64x2.lt(f, f64x2(0.2, 0.2)));
    const hi = pair(hiA, hiB);
    v128.store(LANE_END + 64, v128.bitselect(hi, f, f64x2.gt(f, hi)));
  }
  // A NaN or infinity anywhere in the stages shows up in err or in YN.
  laneErr0 = checked(f64x2.extract_lane(errX, 0), f64x2.extract_lane(finiteX, 0));
  laneErr1 = checked(f64x2.extract_lane(errX, 1), f64x2.extract_lane(finiteX, 1));
  v128.store(LANE_STAGES + 320, c0Y);
  v128.store(LANE_STAGES + 336, c1Y);
  v128.store(LANE_STAGES + 352, c2Y);
  v128.store(LANE_STAGES + 368, c3Y);
  v128.store(LANE_STAGES + 384, ZERO);
  v128.store(LANE_STAGES + 400, d0Y);
  v128.store(LANE_STAGES + 416, d1Y);
  v128.store(LANE_STAGES + 432, d2Y);
  v128.store(LANE_STAGES + 448, d3Y);
  v128.store(LANE_STAGES + 464, ZERO);
  v128.store(LANE_STAGES + 480, e0Y);
  v128.store(LANE_STAGES + 496, e1Y);
  v128.store(LANE_STAGES + 512, e2Y);
  v128.store(LANE_STAGES + 528, e3Y);
  v128.store(LANE_STAGES + 544, ZERO);
  v128.store(LANE_STAGES + 560, f0Y);
  v128.store(LANE_STAGES + 576, f1Y);
  v128.store(LANE_STAGES + 592, f2Y);
  v128.store(LANE_STAGES + 608, f3Y);
  v128.store(LANE_STAGES + 624, ZERO);
  scatter(pC, pD, OFF_K7 + 0, g0Y);
  scatter(pC, pD, OFF_K7 + 8, g1Y);
  scatter(pC, pD, OFF_K7 + 16, g2Y);
  scatter(pC, pD, OFF_K7 + 24, g3Y);
  scatter(pC, pD, OFF_K7 + 32, ZERO);
  scatter(pC, pD, OFF_YN + 0, n0Y);
  scatter(pC, pD, OFF_YN + 8, n1Y);
  scatter(pC, pD, OFF_YN + 16, n2Y);
  scatter(pC, pD, OFF_YN + 24, n3Y);
  scatter(pC, pD, OFF_YN + 32, n4Y);
  {
    // the step-end quantities of stanceAfterLaneStep (stance.ts), its arithmetic
    const nr = rgY; // sqrt(px^2 + py^2) at YN, from K7's right-hand side
    const nrdot = f64x2.div(dgY, nr); // (px vx + py vy) / r
    v128.store(LANE_END + 80, f64x2.mul(v128.load(LANE_PARAMS + 224), f64x2.sub(v128.load(LANE_PARAMS + 240), nr))); // leg force
    v128.store(LANE_END + 96, f64x2.sub(nr, v128.load(LANE_PARAMS + 240))); // r - L0
    v128.store(LANE_END + 112, nrdot);
    v128.store(LANE_END + 128, f64x2.abs(f64x2.div(n0Y, n1Y))); // friction ratio
    // acceptFactor(err, afterReject) with the lane's controller memory (dopri5.ts)
    const e = v128.bitselect(errY, f64x2(1e-12, 1e-12), f64x2.gt(errY, f64x2(1e-12, 1e-12)));
    let f = f64x2.mul(f64x2.mul(f64x2(0.9, 0.9), roughPow2(e, -EXPO)), roughPow2(pair(oldC, oldD), BETA));
    f = v128.bitselect(f64x2(0.2, 0.2), f, f64x2.lt(f, f64x2(0.2, 0.2)));
    const hi = pair(hiC, hiD);
    v128.store(LANE_END + 144, v128.bitselect(hi, f, f64x2.gt(f, hi)));
  }
  // A NaN or infinity anywhere in the stages shows up in err or in YN.
  laneErr2 = checked(f64x2.extract_lane(errY, 0), f64x2.extract_lane(finiteY, 0));
  laneErr3 = checked(f64x2.extract_lane(errY, 1), f64x2.extract_lane(finiteY, 1));
}
