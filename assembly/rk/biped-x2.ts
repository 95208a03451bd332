// The two-leg model's walking step (step4 in biped.ts: undamped legs, the first four components)
// for two rollouts at once, one in each f64x2 lane (runBipedBatch in biped.ts). Each lane
// performs the same IEEE operations in the same order as step4 (WebAssembly has no fused
// multiply-add, and f64x2 arithmetic rounds each lane as scalar f64 does; WebAssembly SIMD
// specification), so a lane's stages, end state and error are step4's, bit for bit.
//
// A lane in single support has its stance foot at the origin: its leg 0 is the stance leg with
// the foot at (0, 0) (x - 0 is x, bit for bit, -0 included), and its leg-0 term alone is taken
// (bitselect), so its acceleration is single support's a (px, py) - (0, g) with the same
// roundings; a lane in double support adds both legs' terms in step4's order. The step is a
// chain of square roots and divisions; two in one f64x2 chain cost little more than one (four in
// two interleaved chains measured no faster on the development machine: register pressure).

import {
  A21, A31, A32, A41, A42, A43, A51, A52, A53, A54, A61, A62, A63, A64, A65,
  B1, B3, B4, B5, B6, E1, E3, E4, E5, E6, E7,
  OFF_Y0, OFF_K1, OFF_K3, OFF_K7, OFF_YN, EXPO, BETA,
} from "./dopri5";

// Each lane's step: for lanes 2 p and 2 p + 1 (lane pair p), as f64x2 at PAIR_PARAMS +
// PAIR_BYTES * p + 16 * field; written by the driver before a step.
export const PAIR_BYTES: usize = 14 * 16;
export const PAIR_PARAMS: usize = memory.data(2 * 14 * 16, 16);
export const PP_H = 0; // s, step size
export const PP_RTOL = 1;
export const PP_ATOL = 2;
export const PP_INV_MASS = 3; // 1/kg
export const PP_G = 4; // m/s^2
export const PP_FX0 = 5; // m, leg 0's foot relative to the origin (single support: the stance leg, 0)
export const PP_FY0 = 6;
export const PP_L0 = 7; // m, leg 0's rest length
export const PP_K0 = 8; // N/m, leg 0's current stiffness
export const PP_FX1 = 9; // leg 1 likewise (single support: unused)
export const PP_FY1 = 10;
export const PP_L1 = 11;
export const PP_K1 = 12;
export const PP_SINGLE = 13; // all bits set in a lane in single support, else 0

// K3..K6 (first four components) of the last step of each lane pair, as f64x2 (stage, component)
// at LANE_STAGES + 256 * pair: a lane's own buffers get them (unpackStages) only when it needs
// them (the interpolant, for an event inside the step). K2 is not kept: no one reads it after
// a step (dense() has no K2 term).
const LANE_STAGES: usize = memory.data(2 * 256, 16);

// The K3..K6 of lane `lane` (0..3) of the last step into its buffer set at p.
export function unpackStages(lane: i32, p: usize): void {
  const src = LANE_STAGES + <usize>(lane >> 1) * 256 + <usize>(lane & 1) * 8;
  for (let k: usize = 0; k < 4; k++) {
    for (let j: usize = 0; j < 4; j++) store<f64>(p + OFF_K3 + k * 40 + (j << 3), load<f64>(src + ((k * 4 + j) << 4)));
  }
}

// Each lane pair's step start, Y0 and K1 (first four components), as f64x2 (LANE_Y + 128 pair +
// 16 (component, then 4 + component)): a lane's buffers keep theirs too, except while the lane is
// in lane mode (quietEnd advances LANE_Y alone; unpackY writes it back). The step end, YN and
// K7 (first four components; K7's first two are YN's last two), likewise at LANE_N + 96 pair:
// unpackEnd writes a lane's into its buffers when it needs them.
const LANE_Y: usize = memory.data(2 * 128, 16);
const LANE_N: usize = memory.data(2 * 96, 16);

// Lane `lane`'s Y0 and K1 from its buffer set at p into LANE_Y.
export function packY(lane: i32, p: usize): void {
  const d = LANE_Y + <usize>(lane >> 1) * 128 + <usize>(lane & 1) * 8;
  for (let j: usize = 0; j < 4; j++) {
    store<f64>(d + (j << 4), load<f64>(p + OFF_Y0 + (j << 3)));
    store<f64>(d + 64 + (j << 4), load<f64>(p + OFF_K1 + (j << 3)));
  }
}
// Lane `lane`'s Y0 and K1 from LANE_Y into its buffer set at p.
export function unpackY(lane: i32, p: usize): void {
  const d = LANE_Y + <usize>(lane >> 1) * 128 + <usize>(lane & 1) * 8;
  for (let j: usize = 0; j < 4; j++) {
    store<f64>(p + OFF_Y0 + (j << 3), load<f64>(d + (j << 4)));
    store<f64>(p + OFF_K1 + (j << 3), load<f64>(d + 64 + (j << 4)));
  }
}
// Lane `lane`'s YN and K7 of the last lane step into its buffer set at p.
export function unpackEnd(lane: i32, p: usize): void {
  const d = LANE_N + <usize>(lane >> 1) * 96 + <usize>(lane & 1) * 8;
  for (let j: usize = 0; j < 4; j++) store<f64>(p + OFF_YN + (j << 3), load<f64>(d + (j << 4)));
  store<f64>(p + OFF_K7, load<f64>(d + 32));
  store<f64>(p + OFF_K7 + 8, load<f64>(d + 48));
  store<f64>(p + OFF_K7 + 16, load<f64>(d + 64));
  store<f64>(p + OFF_K7 + 24, load<f64>(d + 80));
}

// The step end's leg values of each lane pair, as f64x2 at LANE_END + END_BYTES * pair + 16 * field
// (lane 0 / 2, lane 1 / 3): for slot 0 (leg 0, or the stance leg in single support) and slot 1
// (leg 1 in double support) r - L0, r', L0 - r and the leg force, and the summed force along x
// and y, as contactAfter forms them (laneAfterQuiet reads them).
export const END_BYTES: usize = 10 * 16;
const LANE_END: usize = memory.data(2 * 10 * 16, 16);
export const END_GL0 = 0;
export const END_GM0 = 1;
export const END_C0 = 2;
export const END_F0 = 3;
export const END_GL1 = 4;
export const END_GM1 = 5;
export const END_C1 = 6;
export const END_F1 = 7;
export const END_FX = 8;
export const END_FY = 9;

@inline export function laneEnd(lane: i32, field: i32): f64 {
  return load<f64>(LANE_END + <usize>(lane >> 1) * END_BYTES + (<usize>field << 4) + (<usize>(lane & 1) << 3));
}

// The error of the last step in each lane (0..3), as step4 returns it (NaN: a non-finite stage).
const LANE_ERRORS: usize = memory.data(4 * 8, 16);
@inline export function laneError(lane: i32): f64 {
  return load<f64>(LANE_ERRORS + (<usize>lane << 3));
}

@inline function ppAt(field: i32, pair: usize): v128 {
  return v128.load(PAIR_PARAMS + pair * PAIR_BYTES + (<usize>field << 4));
}

@inline function storeErrors(err: v128, finite: v128, pair: usize): void {
  const e0 = f64x2.extract_lane(err, 0);
  const e1 = f64x2.extract_lane(err, 1);
  store<f64>(LANE_ERRORS + (pair << 4), !isFinite(e0) || f64x2.extract_lane(finite, 0) != 0.0 ? NaN : e0);
  store<f64>(LANE_ERRORS + (pair << 4) + 8, !isFinite(e1) || f64x2.extract_lane(finite, 1) != 0.0 ? NaN : e1);
}
@inline function mul(a: v128, b: v128): v128 {
  return f64x2.mul(a, b);
}
@inline function add(a: v128, b: v128): v128 {
  return f64x2.add(a, b);
}
@inline function sp(c: f64): v128 {
  return f64x2.splat(c);
}

// One step of size PP_H from each lane's (Y0, K1) of lane pair `pair` (LANE_Y): writes YN and K7
// (first four components) into LANE_N, K3..K6 into LANE_STAGES, the step end's leg values into
// LANE_END and the lanes' errors (laneError), then finishes the quiet step ends of the lanes in
// lane mode (quietEnd; its bits returned).
export function stepPairW(pair: usize): i32 {
  const PA = pair;
  const h = ppAt(PP_H, PA);
  const invM = ppAt(PP_INV_MASS, PA);
  const grav = ppAt(PP_G, PA);
  const fx0 = ppAt(PP_FX0, PA);
  const fy0 = ppAt(PP_FY0, PA);
  const l0 = ppAt(PP_L0, PA);
  const k0 = ppAt(PP_K0, PA);
  const kim0 = mul(k0, invM); // k/m, as the scalar setters form it (system.ts)
  const fx1 = ppAt(PP_FX1, PA);
  const fy1 = ppAt(PP_FY1, PA);
  const l1 = ppAt(PP_L1, PA);
  const k1 = ppAt(PP_K1, PA);
  const kim1 = mul(k1, invM);
  const single = ppAt(PP_SINGLE, PA);
  const one = sp(1.0);
  const hA21 = mul(h, sp(A21));
  const hA32 = mul(h, sp(A32));
  const hA43 = mul(h, sp(A43));
  const hA54 = mul(h, sp(A54));
  const hA65 = mul(h, sp(A65));
  const hB6 = mul(h, sp(B6));
  const ly = LANE_Y + PA * 128;
  const y0 = v128.load(ly);
  const y1 = v128.load(ly + 16);
  const y2 = v128.load(ly + 32);
  const y3 = v128.load(ly + 48);
  const a0 = v128.load(ly + 64);
  const a1 = v128.load(ly + 80);
  const a2 = v128.load(ly + 96);
  const a3 = v128.load(ly + 112);
  // stage 2
  const bp0 = add(y0, mul(hA21, a0));
  const bp1 = add(y1, mul(hA21, a1));
  const b0v = add(y2, mul(hA21, a2));
  const b1v = add(y3, mul(hA21, a3));
  const q2dx0 = f64x2.sub(bp0, fx0);
  const q2dy0 = f64x2.sub(bp1, fy0);
  const q2s0 = add(mul(q2dx0, q2dx0), mul(q2dy0, q2dy0));
  const q2r0 = f64x2.sqrt(q2s0);
  const q2f0 = mul(kim0, f64x2.sub(l0, q2r0)); // F/m
  const q2i0 = mul(q2r0, f64x2.div(one, q2s0)); // 1/r
  const q2dx1 = f64x2.sub(bp0, fx1);
  const q2dy1 = f64x2.sub(bp1, fy1);
  const q2s1 = add(mul(q2dx1, q2dx1), mul(q2dy1, q2dy1));
  const q2r1 = f64x2.sqrt(q2s1);
  const q2f1 = mul(kim1, f64x2.sub(l1, q2r1)); // F/m
  const q2i1 = mul(q2r1, f64x2.div(one, q2s1)); // 1/r
  const q2s2 = mul(q2f0, mul(q2i0, q2dx0));
  const q2s3 = mul(q2f0, mul(q2i0, q2dy0));
  const b2v = v128.bitselect(q2s2, add(q2s2, mul(q2f1, mul(q2i1, q2dx1))), single);
  const b3v = f64x2.sub(v128.bitselect(q2s3, add(q2s3, mul(q2f1, mul(q2i1, q2dy1))), single), grav);
  // stage 3
  const cp0 = add(add(y0, mul(h, mul(sp(A31), a0))), mul(hA32, b0v));
  const cp1 = add(add(y1, mul(h, mul(sp(A31), a1))), mul(hA32, b1v));
  const c0 = add(add(y2, mul(h, mul(sp(A31), a2))), mul(hA32, b2v));
  const c1 = add(add(y3, mul(h, mul(sp(A31), a3))), mul(hA32, b3v));
  const q3dx0 = f64x2.sub(cp0, fx0);
  const q3dy0 = f64x2.sub(cp1, fy0);
  const q3s0 = add(mul(q3dx0, q3dx0), mul(q3dy0, q3dy0));
  const q3r0 = f64x2.sqrt(q3s0);
  const q3f0 = mul(kim0, f64x2.sub(l0, q3r0)); // F/m
  const q3i0 = mul(q3r0, f64x2.div(one, q3s0)); // 1/r
  const q3dx1 = f64x2.sub(cp0, fx1);
  const q3dy1 = f64x2.sub(cp1, fy1);
  const q3s1 = add(mul(q3dx1, q3dx1), mul(q3dy1, q3dy1));
  const q3r1 = f64x2.sqrt(q3s1);
  const q3f1 = mul(kim1, f64x2.sub(l1, q3r1)); // F/m
  const q3i1 = mul(q3r1, f64x2.div(one, q3s1)); // 1/r
  const q3s2 = mul(q3f0, mul(q3i0, q3dx0));
  const q3s3 = mul(q3f0, mul(q3i0, q3dy0));
  const c2 = v128.bitselect(q3s2, add(q3s2, mul(q3f1, mul(q3i1, q3dx1))), single);
  const c3 = f64x2.sub(v128.bitselect(q3s3, add(q3s3, mul(q3f1, mul(q3i1, q3dy1))), single), grav);
  v128.store(LANE_STAGES + PA * 256 + 0, c0);
  v128.store(LANE_STAGES + PA * 256 + 16, c1);
  v128.store(LANE_STAGES + PA * 256 + 32, c2);
  v128.store(LANE_STAGES + PA * 256 + 48, c3);
  // stage 4
  const dp0 = add(add(y0, mul(h, add(mul(sp(A41), a0), mul(sp(A42), b0v)))), mul(hA43, c0));
  const dp1 = add(add(y1, mul(h, add(mul(sp(A41), a1), mul(sp(A42), b1v)))), mul(hA43, c1));
  const d0 = add(add(y2, mul(h, add(mul(sp(A41), a2), mul(sp(A42), b2v)))), mul(hA43, c2));
  const d1 = add(add(y3, mul(h, add(mul(sp(A41), a3), mul(sp(A42), b3v)))), mul(hA43, c3));
  const q4dx0 = f64x2.sub(dp0, fx0);
  const q4dy0 = f64x2.sub(dp1, fy0);
  const q4s0 = add(mul(q4dx0, q4dx0), mul(q4dy0, q4dy0));
  const q4r0 = f64x2.sqrt(q4s0);
  const q4f0 = mul(kim0, f64x2.sub(l0, q4r0)); // F/m
  const q4i0 = mul(q4r0, f64x2.div(one, q4s0)); // 1/r
  const q4dx1 = f64x2.sub(dp0, fx1);
  const q4dy1 = f64x2.sub(dp1, fy1);
  const q4s1 = add(mul(q4dx1, q4dx1), mul(q4dy1, q4dy1));
  const q4r1 = f64x2.sqrt(q4s1);
  const q4f1 = mul(kim1, f64x2.sub(l1, q4r1)); // F/m
  const q4i1 = mul(q4r1, f64x2.div(one, q4s1)); // 1/r
  const q4s2 = mul(q4f0, mul(q4i0, q4dx0));
  const q4s3 = mul(q4f0, mul(q4i0, q4dy0));
  const d2 = v128.bitselect(q4s2, add(q4s2, mul(q4f1, mul(q4i1, q4dx1))), single);
  const d3 = f64x2.sub(v128.bitselect(q4s3, add(q4s3, mul(q4f1, mul(q4i1, q4dy1))), single), grav);
  v128.store(LANE_STAGES + PA * 256 + 64, d0);
  v128.store(LANE_STAGES + PA * 256 + 80, d1);
  v128.store(LANE_STAGES + PA * 256 + 96, d2);
  v128.store(LANE_STAGES + PA * 256 + 112, d3);
  // stage 5
  const ep0 = add(add(y0, mul(h, add(add(mul(sp(A51), a0), mul(sp(A52), b0v)), mul(sp(A53), c0)))), mul(hA54, d0));
  const ep1 = add(add(y1, mul(h, add(add(mul(sp(A51), a1), mul(sp(A52), b1v)), mul(sp(A53), c1)))), mul(hA54, d1));
  const e0 = add(add(y2, mul(h, add(add(mul(sp(A51), a2), mul(sp(A52), b2v)), mul(sp(A53), c2)))), mul(hA54, d2));
  const e1 = add(add(y3, mul(h, add(add(mul(sp(A51), a3), mul(sp(A52), b3v)), mul(sp(A53), c3)))), mul(hA54, d3));
  const q5dx0 = f64x2.sub(ep0, fx0);
  const q5dy0 = f64x2.sub(ep1, fy0);
  const q5s0 = add(mul(q5dx0, q5dx0), mul(q5dy0, q5dy0));
  const q5r0 = f64x2.sqrt(q5s0);
  const q5f0 = mul(kim0, f64x2.sub(l0, q5r0)); // F/m
  const q5i0 = mul(q5r0, f64x2.div(one, q5s0)); // 1/r
  const q5dx1 = f64x2.sub(ep0, fx1);
  const q5dy1 = f64x2.sub(ep1, fy1);
  const q5s1 = add(mul(q5dx1, q5dx1), mul(q5dy1, q5dy1));
  const q5r1 = f64x2.sqrt(q5s1);
  const q5f1 = mul(kim1, f64x2.sub(l1, q5r1)); // F/m
  const q5i1 = mul(q5r1, f64x2.div(one, q5s1)); // 1/r
  const q5s2 = mul(q5f0, mul(q5i0, q5dx0));
  const q5s3 = mul(q5f0, mul(q5i0, q5dy0));
  const e2 = v128.bitselect(q5s2, add(q5s2, mul(q5f1, mul(q5i1, q5dx1))), single);
  const e3 = f64x2.sub(v128.bitselect(q5s3, add(q5s3, mul(q5f1, mul(q5i1, q5dy1))), single), grav);
  v128.store(LANE_STAGES + PA * 256 + 128, e0);
  v128.store(LANE_STAGES + PA * 256 + 144, e1);
  v128.store(LANE_STAGES + PA * 256 + 160, e2);
  v128.store(LANE_STAGES + PA * 256 + 176, e3);
  // stage 6
  const fp0 = add(add(y0, mul(h, add(add(add(mul(sp(A61), a0), mul(sp(A62), b0v)), mul(sp(A63), c0)), mul(sp(A64), d0)))), mul(hA65, e0));
  const fp1 = add(add(y1, mul(h, add(add(add(mul(sp(A61), a1), mul(sp(A62), b1v)), mul(sp(A63), c1)), mul(sp(A64), d1)))), mul(hA65, e1));
  const f0 = add(add(y2, mul(h, add(add(add(mul(sp(A61), a2), mul(sp(A62), b2v)), mul(sp(A63), c2)), mul(sp(A64), d2)))), mul(hA65, e2));
  const f1 = add(add(y3, mul(h, add(add(add(mul(sp(A61), a3), mul(sp(A62), b3v)), mul(sp(A63), c3)), mul(sp(A64), d3)))), mul(hA65, e3));
  const q6dx0 = f64x2.sub(fp0, fx0);
  const q6dy0 = f64x2.sub(fp1, fy0);
  const q6s0 = add(mul(q6dx0, q6dx0), mul(q6dy0, q6dy0));
  const q6r0 = f64x2.sqrt(q6s0);
  const q6f0 = mul(kim0, f64x2.sub(l0, q6r0)); // F/m
  const q6i0 = mul(q6r0, f64x2.div(one, q6s0)); // 1/r
  const q6dx1 = f64x2.sub(fp0, fx1);
  const q6dy1 = f64x2.sub(fp1, fy1);
  const q6s1 = add(mul(q6dx1, q6dx1), mul(q6dy1, q6dy1));
  const q6r1 = f64x2.sqrt(q6s1);
  const q6f1 = mul(kim1, f64x2.sub(l1, q6r1)); // F/m
  const q6i1 = mul(q6r1, f64x2.div(one, q6s1)); // 1/r
  const q6s2 = mul(q6f0, mul(q6i0, q6dx0));
  const q6s3 = mul(q6f0, mul(q6i0, q6dy0));
  const f2 = v128.bitselect(q6s2, add(q6s2, mul(q6f1, mul(q6i1, q6dx1))), single);
  const f3 = f64x2.sub(v128.bitselect(q6s3, add(q6s3, mul(q6f1, mul(q6i1, q6dy1))), single), grav);
  v128.store(LANE_STAGES + PA * 256 + 192, f0);
  v128.store(LANE_STAGES + PA * 256 + 208, f1);
  v128.store(LANE_STAGES + PA * 256 + 224, f2);
  v128.store(LANE_STAGES + PA * 256 + 240, f3);
  // the 5th-order solution
  const n0 = add(add(y0, mul(h, add(add(add(mul(sp(B1), a0), mul(sp(B3), c0)), mul(sp(B4), d0)), mul(sp(B5), e0)))), mul(hB6, f0));
  const n1 = add(add(y1, mul(h, add(add(add(mul(sp(B1), a1), mul(sp(B3), c1)), mul(sp(B4), d1)), mul(sp(B5), e1)))), mul(hB6, f1));
  const n2 = add(add(y2, mul(h, add(add(add(mul(sp(B1), a2), mul(sp(B3), c2)), mul(sp(B4), d2)), mul(sp(B5), e2)))), mul(hB6, f2));
  const n3 = add(add(y3, mul(h, add(add(add(mul(sp(B1), a3), mul(sp(B3), c3)), mul(sp(B4), d3)), mul(sp(B5), e3)))), mul(hB6, f3));
  const ln = LANE_N + PA * 96;
  v128.store(ln, n0);
  v128.store(ln + 16, n1);
  v128.store(ln + 32, n2);
  v128.store(ln + 48, n3);
  // stage 7 (FSAL)
  const g0 = n2;
  const g1 = n3;
  const q7dx0 = f64x2.sub(n0, fx0);
  const q7dy0 = f64x2.sub(n1, fy0);
  const q7s0 = add(mul(q7dx0, q7dx0), mul(q7dy0, q7dy0));
  const q7r0 = f64x2.sqrt(q7s0);
  const q7f0 = mul(kim0, f64x2.sub(l0, q7r0)); // F/m
  const q7i0 = mul(q7r0, f64x2.div(one, q7s0)); // 1/r
  const q7dx1 = f64x2.sub(n0, fx1);
  const q7dy1 = f64x2.sub(n1, fy1);
  const q7s1 = add(mul(q7dx1, q7dx1), mul(q7dy1, q7dy1));
  const q7r1 = f64x2.sqrt(q7s1);
  const q7f1 = mul(kim1, f64x2.sub(l1, q7r1)); // F/m
  const q7i1 = mul(q7r1, f64x2.div(one, q7s1)); // 1/r
  const q7s2 = mul(q7f0, mul(q7i0, q7dx0));
  const q7s3 = mul(q7f0, mul(q7i0, q7dy0));
  const g2 = v128.bitselect(q7s2, add(q7s2, mul(q7f1, mul(q7i1, q7dx1))), single);
  const g3 = f64x2.sub(v128.bitselect(q7s3, add(q7s3, mul(q7f1, mul(q7i1, q7dy1))), single), grav);
  v128.store(ln + 64, g2);
  v128.store(ln + 80, g3);
  // the step end's leg values as contactAfter forms them (an undamped leg: c r' = 0 r'); slot 0
  // is the stance leg in single support
  {
    const zero = sp(0.0);
    const dx0 = q7dx0; // n0 - fx0, n1 - fy0 and the radius, as stage 7 formed them
    const dy0 = q7dy0;
    const r0 = q7r0;
    const gm0 = f64x2.div(add(mul(dx0, n2), mul(dy0, n3)), r0);
    const c0 = f64x2.sub(l0, r0);
    const f0 = f64x2.sub(mul(k0, c0), mul(zero, gm0));
    const x0 = f64x2.div(mul(f0, dx0), r0);
    const y0 = f64x2.div(mul(f0, dy0), r0);
    const e = LANE_END + PA * END_BYTES;
    v128.store(e + END_GL0 * 16, f64x2.sub(r0, l0));
    v128.store(e + END_GM0 * 16, gm0);
    v128.store(e + END_C0 * 16, c0);
    v128.store(e + END_F0 * 16, f0);
    const dx1 = q7dx1;
    const dy1 = q7dy1;
    const r1 = q7r1;
    const gm1 = f64x2.div(add(mul(dx1, n2), mul(dy1, n3)), r1);
    const c1 = f64x2.sub(l1, r1);
    const f1 = f64x2.sub(mul(k1, c1), mul(zero, gm1));
    v128.store(e + END_GL1 * 16, f64x2.sub(r1, l1));
    v128.store(e + END_GM1 * 16, gm1);
    v128.store(e + END_C1 * 16, c1);
    v128.store(e + END_F1 * 16, f1);
    v128.store(e + END_FX * 16, v128.bitselect(x0, add(x0, f64x2.div(mul(f1, dx1), r1)), single));
    v128.store(e + END_FY * 16, v128.bitselect(y0, add(y0, f64x2.div(mul(f1, dy1), r1)), single));
  }
  // the error norm over the four components, in step4's order
  const rtol = ppAt(PP_RTOL, PA);
  const atol = ppAt(PP_ATOL, PA);
  let sum = sp(0.0);
  let finite = sp(0.0);
  {
    const e = mul(h, add(add(add(add(add(mul(sp(E1), a0), mul(sp(E3), c0)), mul(sp(E4), d0)), mul(sp(E5), e0)), mul(sp(E6), f0)), mul(sp(E7), g0)));
    const sc = add(atol, mul(rtol, f64x2.max(f64x2.abs(y0), f64x2.abs(n0))));
    const q = f64x2.div(e, sc);
    sum = add(sum, mul(q, q));
    finite = add(finite, f64x2.sub(n0, n0));
  }
  {
    const e = mul(h, add(add(add(add(add(mul(sp(E1), a1), mul(sp(E3), c1)), mul(sp(E4), d1)), mul(sp(E5), e1)), mul(sp(E6), f1)), mul(sp(E7), g1)));
    const sc = add(atol, mul(rtol, f64x2.max(f64x2.abs(y1), f64x2.abs(n1))));
    const q = f64x2.div(e, sc);
    sum = add(sum, mul(q, q));
    finite = add(finite, f64x2.sub(n1, n1));
  }
  {
    const e = mul(h, add(add(add(add(add(mul(sp(E1), a2), mul(sp(E3), c2)), mul(sp(E4), d2)), mul(sp(E5), e2)), mul(sp(E6), f2)), mul(sp(E7), g2)));
    const sc = add(atol, mul(rtol, f64x2.max(f64x2.abs(y2), f64x2.abs(n2))));
    const q = f64x2.div(e, sc);
    sum = add(sum, mul(q, q));
    finite = add(finite, f64x2.sub(n2, n2));
  }
  {
    const e = mul(h, add(add(add(add(add(mul(sp(E1), a3), mul(sp(E3), c3)), mul(sp(E4), d3)), mul(sp(E5), e3)), mul(sp(E6), f3)), mul(sp(E7), g3)));
    const sc = add(atol, mul(rtol, f64x2.max(f64x2.abs(y3), f64x2.abs(n3))));
    const q = f64x2.div(e, sc);
    sum = add(sum, mul(q, q));
    finite = add(finite, f64x2.sub(n3, n3));
  }
  const err = f64x2.sqrt(mul(sum, sp(0.25))); // sum / 4 (a power of two: the same rounding)
  storeErrors(err, finite, PA);
  const le = LANE_END + PA * END_BYTES;
  const z = sp(0.0);
  return quietEnd(PA, h, single, y0, y1, y2, y3, a0, a1, a2, a3, n0, n1, n2, n3, g2, g3, err, finite,
    v128.load(le + END_GL0 * 16), v128.load(le + END_GM0 * 16), v128.load(le + END_C0 * 16), v128.load(le + END_F0 * 16),
    v128.bitselect(z, v128.load(le + END_GL1 * 16), single), v128.bitselect(z, v128.load(le + END_GM1 * 16), single),
    v128.bitselect(z, v128.load(le + END_C1 * 16), single), v128.bitselect(z, v128.load(le + END_F1 * 16), single),
    v128.load(le + END_FX * 16), v128.load(le + END_FY * 16));
}


// stepPairW for two lanes both in single support: leg 0 alone (the same operations as
// stepPairW's leg-0 term, which single support takes).
export function stepPairW1(pair: usize): i32 {
  const PA = pair;
  const h = ppAt(PP_H, PA);
  const invM = ppAt(PP_INV_MASS, PA);
  const grav = ppAt(PP_G, PA);
  const fx0 = ppAt(PP_FX0, PA);
  const fy0 = ppAt(PP_FY0, PA);
  const l0 = ppAt(PP_L0, PA);
  const k0 = ppAt(PP_K0, PA);
  const kim0 = mul(k0, invM); // k/m, as the scalar setters form it (system.ts)
  const one = sp(1.0);
  const hA21 = mul(h, sp(A21));
  const hA32 = mul(h, sp(A32));
  const hA43 = mul(h, sp(A43));
  const hA54 = mul(h, sp(A54));
  const hA65 = mul(h, sp(A65));
  const hB6 = mul(h, sp(B6));
  const ly = LANE_Y + PA * 128;
  const y0 = v128.load(ly);
  const y1 = v128.load(ly + 16);
  const y2 = v128.load(ly + 32);
  const y3 = v128.load(ly + 48);
  const a0 = v128.load(ly + 64);
  const a1 = v128.load(ly + 80);
  const a2 = v128.load(ly + 96);
  const a3 = v128.load(ly + 112);
  // stage 2
  const bp0 = add(y0, mul(hA21, a0));
  const bp1 = add(y1, mul(hA21, a1));
  const b0v = add(y2, mul(hA21, a2));
  const b1v = add(y3, mul(hA21, a3));
  const q2dx0 = f64x2.sub(bp0, fx0);
  const q2dy0 = f64x2.sub(bp1, fy0);
  const q2s0 = add(mul(q2dx0, q2dx0), mul(q2dy0, q2dy0));
  const q2r0 = f64x2.sqrt(q2s0);
  const q2f0 = mul(kim0, f64x2.sub(l0, q2r0)); // F/m
  const q2i0 = mul(q2r0, f64x2.div(one, q2s0)); // 1/r
  const q2s2 = mul(q2f0, mul(q2i0, q2dx0));
  const q2s3 = mul(q2f0, mul(q2i0, q2dy0));
  const b2v = q2s2;
  const b3v = f64x2.sub(q2s3, grav);
  // stage 3
  const cp0 = add(add(y0, mul(h, mul(sp(A31), a0))), mul(hA32, b0v));
  const cp1 = add(add(y1, mul(h, mul(sp(A31), a1))), mul(hA32, b1v));
  const c0 = add(add(y2, mul(h, mul(sp(A31), a2))), mul(hA32, b2v));
  const c1 = add(add(y3, mul(h, mul(sp(A31), a3))), mul(hA32, b3v));
  const q3dx0 = f64x2.sub(cp0, fx0);
  const q3dy0 = f64x2.sub(cp1, fy0);
  const q3s0 = add(mul(q3dx0, q3dx0), mul(q3dy0, q3dy0));
  const q3r0 = f64x2.sqrt(q3s0);
  const q3f0 = mul(kim0, f64x2.sub(l0, q3r0)); // F/m
  const q3i0 = mul(q3r0, f64x2.div(one, q3s0)); // 1/r
  const q3s2 = mul(q3f0, mul(q3i0, q3dx0));
  const q3s3 = mul(q3f0, mul(q3i0, q3dy0));
  const c2 = q3s2;
  const c3 = f64x2.sub(q3s3, grav);
  v128.store(LANE_STAGES + PA * 256 + 0, c0);
  v128.store(LANE_STAGES + PA * 256 + 16, c1);
  v128.store(LANE_STAGES + PA * 256 + 32, c2);
  v128.store(LANE_STAGES + PA * 256 + 48, c3);
  // stage 4
  const dp0 = add(add(y0, mul(h, add(mul(sp(A41), a0), mul(sp(A42), b0v)))), mul(hA43, c0));
  const dp1 = add(add(y1, mul(h, add(mul(sp(A41), a1), mul(sp(A42), b1v)))), mul(hA43, c1));
  const d0 = add(add(y2, mul(h, add(mul(sp(A41), a2), mul(sp(A42), b2v)))), mul(hA43, c2));
  const d1 = add(add(y3, mul(h, add(mul(sp(A41), a3), mul(sp(A42), b3v)))), mul(hA43, c3));
  const q4dx0 = f64x2.sub(dp0, fx0);
  const q4dy0 = f64x2.sub(dp1, fy0);
  const q4s0 = add(mul(q4dx0, q4dx0), mul(q4dy0, q4dy0));
  const q4r0 = f64x2.sqrt(q4s0);
  const q4f0 = mul(kim0, f64x2.sub(l0, q4r0)); // F/m
  const q4i0 = mul(q4r0, f64x2.div(one, q4s0)); // 1/r
  const q4s2 = mul(q4f0, mul(q4i0, q4dx0));
  const q4s3 = mul(q4f0, mul(q4i0, q4dy0));
  const d2 = q4s2;
  const d3 = f64x2.sub(q4s3, grav);
  v128.store(LANE_STAGES + PA * 256 + 64, d0);
  v128.store(LANE_STAGES + PA * 256 + 80, d1);
  v128.store(LANE_STAGES + PA * 256 + 96, d2);
  v128.store(LANE_STAGES + PA * 256 + 112, d3);
  // stage 5
  const ep0 = add(add(y0, mul(h, add(add(mul(sp(A51), a0), mul(sp(A52), b0v)), mul(sp(A53), c0)))), mul(hA54, d0));
  const ep1 = add(add(y1, mul(h, add(add(mul(sp(A51), a1), mul(sp(A52), b1v)), mul(sp(A53), c1)))), mul(hA54, d1));
  const e0 = add(add(y2, mul(h, add(add(mul(sp(A51), a2), mul(sp(A52), b2v)), mul(sp(A53), c2)))), mul(hA54, d2));
  const e1 = add(add(y3, mul(h, add(add(mul(sp(A51), a3), mul(sp(A52), b3v)), mul(sp(A53), c3)))), mul(hA54, d3));
  const q5dx0 = f64x2.sub(ep0, fx0);
  const q5dy0 = f64x2.sub(ep1, fy0);
  const q5s0 = add(mul(q5dx0, q5dx0), mul(q5dy0, q5dy0));
  const q5r0 = f64x2.sqrt(q5s0);
  const q5f0 = mul(kim0, f64x2.sub(l0, q5r0)); // F/m
  const q5i0 = mul(q5r0, f64x2.div(one, q5s0)); // 1/r
  const q5s2 = mul(q5f0, mul(q5i0, q5dx0));
  const q5s3 = mul(q5f0, mul(q5i0, q5dy0));
  const e2 = q5s2;
  const e3 = f64x2.sub(q5s3, grav);
  v128.store(LANE_STAGES + PA * 256 + 128, e0);
  v128.store(LANE_STAGES + PA * 256 + 144, e1);
  v128.store(LANE_STAGES + PA * 256 + 160, e2);
  v128.store(LANE_STAGES + PA * 256 + 176, e3);
  // stage 6
  const fp0 = add(add(y0, mul(h, add(add(add(mul(sp(A61), a0), mul(sp(A62), b0v)), mul(sp(A63), c0)), mul(sp(A64), d0)))), mul(hA65, e0));
  const fp1 = add(add(y1, mul(h, add(add(add(mul(sp(A61), a1), mul(sp(A62), b1v)), mul(sp(A63), c1)), mul(sp(A64), d1)))), mul(hA65, e1));
  const f0 = add(add(y2, mul(h, add(add(add(mul(sp(A61), a2), mul(sp(A62), b2v)), mul(sp(A63), c2)), mul(sp(A64), d2)))), mul(hA65, e2));
  const f1 = add(add(y3, mul(h, add(add(add(mul(sp(A61), a3), mul(sp(A62), b3v)), mul(sp(A63), c3)), mul(sp(A64), d3)))), mul(hA65, e3));
  const q6dx0 = f64x2.sub(fp0, fx0);
  const q6dy0 = f64x2.sub(fp1, fy0);
  const q6s0 = add(mul(q6dx0, q6dx0), mul(q6dy0, q6dy0));
  const q6r0 = f64x2.sqrt(q6s0);
  const q6f0 = mul(kim0, f64x2.sub(l0, q6r0)); // F/m
  const q6i0 = mul(q6r0, f64x2.div(one, q6s0)); // 1/r
  const q6s2 = mul(q6f0, mul(q6i0, q6dx0));
  const q6s3 = mul(q6f0, mul(q6i0, q6dy0));
  const f2 = q6s2;
  const f3 = f64x2.sub(q6s3, grav);
  v128.store(LANE_STAGES + PA * 256 + 192, f0);
  v128.store(LANE_STAGES + PA * 256 + 208, f1);
  v128.store(LANE_STAGES + PA * 256 + 224, f2);
  v128.store(LANE_STAGES + PA * 256 + 240, f3);
  // the 5th-order solution
  const n0 = add(add(y0, mul(h, add(add(add(mul(sp(B1), a0), mul(sp(B3), c0)), mul(sp(B4), d0)), mul(sp(B5), e0)))), mul(hB6, f0));
  const n1 = add(add(y1, mul(h, add(add(add(mul(sp(B1), a1), mul(sp(B3), c1)), mul(sp(B4), d1)), mul(sp(B5), e1)))), mul(hB6, f1));
  const n2 = add(add(y2, mul(h, add(add(add(mul(sp(B1), a2), mul(sp(B3), c2)), mul(sp(B4), d2)), mul(sp(B5), e2)))), mul(hB6, f2));
  const n3 = add(add(y3, mul(h, add(add(add(mul(sp(B1), a3), mul(sp(B3), c3)), mul(sp(B4), d3)), mul(sp(B5), e3)))), mul(hB6, f3));
  const ln = LANE_N + PA * 96;
  v128.store(ln, n0);
  v128.store(ln + 16, n1);
  v128.store(ln + 32, n2);
  v128.store(ln + 48, n3);
  // stage 7 (FSAL)
  const g0 = n2;
  const g1 = n3;
  const q7dx0 = f64x2.sub(n0, fx0);
  const q7dy0 = f64x2.sub(n1, fy0);
  const q7s0 = add(mul(q7dx0, q7dx0), mul(q7dy0, q7dy0));
  const q7r0 = f64x2.sqrt(q7s0);
  const q7f0 = mul(kim0, f64x2.sub(l0, q7r0)); // F/m
  const q7i0 = mul(q7r0, f64x2.div(one, q7s0)); // 1/r
  const q7s2 = mul(q7f0, mul(q7i0, q7dx0));
  const q7s3 = mul(q7f0, mul(q7i0, q7dy0));
  const g2 = q7s2;
  const g3 = f64x2.sub(q7s3, grav);
  v128.store(ln + 64, g2);
  v128.store(ln + 80, g3);
  // the step end's leg values as contactAfter forms them (an undamped leg: c r' = 0 r'); slot 0
  // is the stance leg in single support
  {
    const zero = sp(0.0);
    const dx0 = q7dx0; // n0 - fx0, n1 - fy0 and the radius, as stage 7 formed them
    const dy0 = q7dy0;
    const r0 = q7r0;
    const gm0 = f64x2.div(add(mul(dx0, n2), mul(dy0, n3)), r0);
    const c0 = f64x2.sub(l0, r0);
    const f0 = f64x2.sub(mul(k0, c0), mul(zero, gm0));
    const x0 = f64x2.div(mul(f0, dx0), r0);
    const y0 = f64x2.div(mul(f0, dy0), r0);
    const e = LANE_END + PA * END_BYTES;
    v128.store(e + END_GL0 * 16, f64x2.sub(r0, l0));
    v128.store(e + END_GM0 * 16, gm0);
    v128.store(e + END_C0 * 16, c0);
    v128.store(e + END_F0 * 16, f0);
    v128.store(e + END_FX * 16, x0);
    v128.store(e + END_FY * 16, y0);
  }
  // the error norm over the four components, in step4's order
  const rtol = ppAt(PP_RTOL, PA);
  const atol = ppAt(PP_ATOL, PA);
  let sum = sp(0.0);
  let finite = sp(0.0);
  {
    const e = mul(h, add(add(add(add(add(mul(sp(E1), a0), mul(sp(E3), c0)), mul(sp(E4), d0)), mul(sp(E5), e0)), mul(sp(E6), f0)), mul(sp(E7), g0)));
    const sc = add(atol, mul(rtol, f64x2.max(f64x2.abs(y0), f64x2.abs(n0))));
    const q = f64x2.div(e, sc);
    sum = add(sum, mul(q, q));
    finite = add(finite, f64x2.sub(n0, n0));
  }
  {
    const e = mul(h, add(add(add(add(add(mul(sp(E1), a1), mul(sp(E3), c1)), mul(sp(E4), d1)), mul(sp(E5), e1)), mul(sp(E6), f1)), mul(sp(E7), g1)));
    const sc = add(atol, mul(rtol, f64x2.max(f64x2.abs(y1), f64x2.abs(n1))));
    const q = f64x2.div(e, sc);
    sum = add(sum, mul(q, q));
    finite = add(finite, f64x2.sub(n1, n1));
  }
  {
    const e = mul(h, add(add(add(add(add(mul(sp(E1), a2), mul(sp(E3), c2)), mul(sp(E4), d2)), mul(sp(E5), e2)), mul(sp(E6), f2)), mul(sp(E7), g2)));
    const sc = add(atol, mul(rtol, f64x2.max(f64x2.abs(y2), f64x2.abs(n2))));
    const q = f64x2.div(e, sc);
    sum = add(sum, mul(q, q));
    finite = add(finite, f64x2.sub(n2, n2));
  }
  {
    const e = mul(h, add(add(add(add(add(mul(sp(E1), a3), mul(sp(E3), c3)), mul(sp(E4), d3)), mul(sp(E5), e3)), mul(sp(E6), f3)), mul(sp(E7), g3)));
    const sc = add(atol, mul(rtol, f64x2.max(f64x2.abs(y3), f64x2.abs(n3))));
    const q = f64x2.div(e, sc);
    sum = add(sum, mul(q, q));
    finite = add(finite, f64x2.sub(n3, n3));
  }
  const err = f64x2.sqrt(mul(sum, sp(0.25))); // sum / 4 (a power of two: the same rounding)
  storeErrors(err, finite, PA);
  const le = LANE_END + PA * END_BYTES;
  const z = sp(0.0);
  return quietEnd(PA, h, v128.not(z), y0, y1, y2, y3, a0, a1, a2, a3, n0, n1, n2, n3, g2, g3, err, finite,
    v128.load(le + END_GL0 * 16), v128.load(le + END_GM0 * 16), v128.load(le + END_C0 * 16), v128.load(le + END_F0 * 16),
    z, z, z, z, v128.load(le + END_FX * 16), v128.load(le + END_FY * 16));
}

// roughPow (dopri5.ts) in each lane, the same operations (as dopri5x2.ts forms it).
@inline function roughPow2(x: v128, p: f64): v128 {
  const ex = i64x2.sub(i64x2.shr_u(x, 52), i64x2.splat(1023));
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

// The state a lane in lane mode keeps packed between lane steps (runBipedBatch: packLane loads it
// from the lane's BipedState, unpackLane writes it back before the one-rollout code runs on the
// lane), as f64x2 at LANE_QUIET + QS_BYTES * pair + 16 * field. Slot 0 is leg 0 (double support)
// or the stance leg (single support), slot 1 the other leg. Masks: all bits set or 0.
export const QS_BYTES: usize = 37 * 16;
export const LANE_QUIET: usize = memory.data(2 * 37 * 16, 16);
export const QS_GL0 = 0; // the last accepted step's event values (contactAfter's gl0x, gm0x, ...)
export const QS_GL1 = 1;
export const QS_GM0 = 2;
export const QS_GM1 = 3;
export const QS_GG = 4;
export const QS_GB = 5;
export const QS_GS = 6;
export const QS_GT = 7;
export const QS_EN_MC0 = 8; // mask: slot 0's maximum compression is looked for
export const QS_EN_MC1 = 9;
export const QS_EN_LO0 = 10; // mask: slot 0's liftoff is looked for (the leg is on)
export const QS_EN_LO1 = 11;
export const QS_EN_SEC = 12; // mask: the section is looked for
export const QS_EN_MID = 13; // mask: midstance is looked for
export const QS_EN_TD = 14; // mask: the swing leg's touchdown (fixed angle) is looked for
export const QS_MID = 15; // the stance foot's x less ox (the midstance value is px minus it)
export const QS_TDH = 16; // the swing leg's touchdown height
export const QS_OY = 17;
export const QS_SWG = 18; // the swing leg's ground
export const QS_GREL = 19; // groundRel
export const QS_PK0 = 20; // peak force of slot 0's leg
export const QS_PK1 = 21;
export const QS_MC0 = 22; // largest compression of slot 0's leg
export const QS_MC1 = 23;
export const QS_PV = 24; // peakVertical
export const QS_PF = 25; // peakFriction
export const QS_TS = 26; // tS
export const QS_OLD = 27; // the controller's memory
export const QS_HI = 28; // the step factor's upper bound (1 after a rejection, else 10)
export const QS_N = 29; // quiet steps taken in lane mode since packLane
export const QS_LIMIT = 30; // maxSteps - stepsHere at packLane
export const QS_TLIM = 31; // tContactLimit
export const QS_HMIN = 32;
export const QS_ON = 33; // mask: the lane is in lane mode
export const QS_LASTH = 34; // the last quiet step's size
export const QS_LIFT = 35; // mask: single stance, slot 0 (the stance leg) undamped and past its maximum compression
export const QS_REACH = 36; // the stance's reach (biped.ts, contactAfter's liftoffNear)

@inline function qsAt(field: i32, pair: usize): v128 {
  return v128.load(LANE_QUIET + pair * QS_BYTES + (<usize>field << 4));
}
@inline function qsPut(field: i32, pair: usize, v: v128): void {
  v128.store(LANE_QUIET + pair * QS_BYTES + (<usize>field << 4), v);
}
@inline function crosses(g0: v128, g1: v128): v128 {
  return v128.and(f64x2.lt(g0, sp(0.0)), f64x2.ge(g1, sp(0.0)));
}
@inline function upd(field: i32, pair: usize, v: v128, m: v128): void {
  qsPut(field, pair, v128.bitselect(v, qsAt(field, pair), m));
}
@inline function raise(field: i32, pair: usize, v: v128, m: v128): void {
  const old = qsAt(field, pair);
  qsPut(field, pair, v128.bitselect(v, old, v128.and(m, f64x2.gt(v, old))));
}

// laneAfterQuiet (biped.ts) for both lanes of pair `pair` in lane mode, in f64x2: each lane whose
// step is accepted with no event value crossing inside it gets contactAfter's bookkeeping (event
// values, peaks, tS, the step factor, Y0 <- YN and K1 <- K7 in its buffers) with the same
// operations; the others are left as they were. Bits 0/1: lane 0/1 quiet; bits 2/3: that lane
// also passes contactBefore's checks for its next step (it goes on in lane mode).
@inline function quietEnd(
  PA: usize, h: v128, single: v128,
  y0: v128, y1: v128, y2: v128, y3: v128, a0: v128, a1: v128, a2: v128, a3: v128,
  n0: v128, n1: v128, n2: v128, n3: v128, g2: v128, g3: v128, err: v128, finite: v128,
  gl0: v128, gm0: v128, c0: v128, f0: v128, gl1: v128, gm1: v128, c1: v128, f1: v128, fx: v128, fy: v128,
): i32 {
  const zero = sp(0.0);
  let q = v128.and(qsAt(QS_ON, PA), v128.and(f64x2.le(err, sp(1.0)), f64x2.eq(finite, zero)));
  if (!v128.any_true(q)) return 0;
  const gs1 = f64x2.neg(n3);
  const gg1 = f64x2.sub(qsAt(QS_GREL, PA), n1);
  const gb1 = f64x2.neg(n2);
  let ev = v128.and(qsAt(QS_EN_MC0, PA), crosses(qsAt(QS_GM0, PA), gm0));
  ev = v128.or(ev, v128.and(qsAt(QS_EN_MC1, PA), crosses(qsAt(QS_GM1, PA), gm1)));
  ev = v128.or(ev, v128.and(qsAt(QS_EN_LO0, PA), crosses(qsAt(QS_GL0, PA), gl0)));
  ev = v128.or(ev, v128.and(qsAt(QS_EN_LO1, PA), crosses(qsAt(QS_GL1, PA), gl1)));
  ev = v128.or(ev, crosses(qsAt(QS_GG, PA), gg1));
  ev = v128.or(ev, v128.and(f64x2.le(qsAt(QS_GB, PA), zero), f64x2.gt(gb1, zero)));
  ev = v128.or(ev, v128.and(qsAt(QS_EN_SEC, PA), crosses(qsAt(QS_GS, PA), gs1)));
  const enMid = qsAt(QS_EN_MID, PA);
  const gt1 = v128.bitselect(
    f64x2.sub(n0, qsAt(QS_MID, PA)),
    f64x2.sub(qsAt(QS_TDH, PA), f64x2.sub(add(n1, qsAt(QS_OY, PA)), qsAt(QS_SWG, PA))),
    enMid,
  );
  ev = v128.or(ev, v128.and(v128.or(enMid, qsAt(QS_EN_TD, PA)), crosses(qsAt(QS_GT, PA), gt1)));
  // acceptedFactor(err, afterReject, old) and controllerMemory(err) (dopri5.ts)
  const e = v128.bitselect(err, sp(1e-12), f64x2.gt(err, sp(1e-12)));
  let f = mul(mul(sp(0.9), roughPow2(e, -EXPO)), roughPow2(qsAt(QS_OLD, PA), BETA));
  f = v128.bitselect(sp(0.2), f, f64x2.lt(f, sp(0.2)));
  const hi = qsAt(QS_HI, PA);
  f = v128.bitselect(hi, f, f64x2.gt(f, hi));
  const hNew = mul(h, f);
  // the stance leg's liftoff in reach, or one that the next step is cut to: contactAfter's
  // (biped.ts, liftoffNear and towardLiftoffB), not a quiet end
  const nearLift = v128.or(
    f64x2.le(f64x2.neg(gl0), mul(mul(sp(2.0), hNew), gm0)),
    f64x2.le(f64x2.neg(gl0), mul(qsAt(QS_REACH, PA), gm0)),
  );
  ev = v128.or(ev, v128.and(qsAt(QS_LIFT, PA), v128.and(v128.and(f64x2.lt(gl0, zero), f64x2.gt(gm0, zero)), nearLift)));
  q = v128.andnot(q, ev);
  if (!v128.any_true(q)) return 0;
  // accepted, no event: the bookkeeping of the quiet lanes
  raise(QS_PK0, PA, f0, q);
  raise(QS_PK1, PA, f1, q);
  raise(QS_MC0, PA, c0, q);
  raise(QS_MC1, PA, c1, q);
  raise(QS_PV, PA, fy, q);
  raise(QS_PF, PA, f64x2.abs(f64x2.div(fx, fy)), v128.and(q, f64x2.gt(fy, zero)));
  const tS = add(qsAt(QS_TS, PA), h);
  upd(QS_TS, PA, tS, q);
  upd(QS_GL0, PA, gl0, q);
  upd(QS_GL1, PA, gl1, q);
  upd(QS_GM0, PA, gm0, q);
  upd(QS_GM1, PA, gm1, q);
  upd(QS_GS, PA, gs1, q);
  upd(QS_GG, PA, gg1, q);
  upd(QS_GB, PA, gb1, q);
  upd(QS_GT, PA, gt1, v128.and(q, single));
  upd(QS_OLD, PA, v128.bitselect(err, sp(1e-4), f64x2.gt(err, sp(1e-4))), q);
  upd(QS_HI, PA, sp(10.0), q);
  upd(QS_LASTH, PA, h, q);
  v128.store(PAIR_PARAMS + PA * PAIR_BYTES + (<usize>PP_H << 4), v128.bitselect(hNew, h, q));
  const nq = add(qsAt(QS_N, PA), sp(1.0));
  upd(QS_N, PA, nq, q);
  // Y0 <- YN, K1 <- K7 in LANE_Y (the first four components; the fifth stays 0 in a walking step)
  const ly = LANE_Y + PA * 128;
  v128.store(ly, v128.bitselect(n0, y0, q));
  v128.store(ly + 16, v128.bitselect(n1, y1, q));
  v128.store(ly + 32, v128.bitselect(n2, y2, q));
  v128.store(ly + 48, v128.bitselect(n3, y3, q));
  v128.store(ly + 64, v128.bitselect(n2, a0, q));
  v128.store(ly + 80, v128.bitselect(n3, a1, q));
  v128.store(ly + 96, v128.bitselect(g2, a2, q));
  v128.store(ly + 112, v128.bitselect(g3, a3, q));
  // contactBefore's checks for the next step
  const go = v128.and(
    f64x2.lt(nq, qsAt(QS_LIMIT, PA)),
    v128.not(v128.or(f64x2.gt(tS, qsAt(QS_TLIM, PA)), f64x2.lt(hNew, qsAt(QS_HMIN, PA)))),
  );
  return i64x2.bitmask(q) | (i64x2.bitmask(v128.and(q, go)) << 2);
}
