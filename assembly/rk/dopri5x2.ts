// Two Dormand–Prince 5(4) steps at once, one in each f64x2 lane: the stances of two
// rollouts stepped together (stance.ts, rollout.ts). Each lane performs the same IEEE
// operations in the same order as step() in dopri5.ts (WebAssembly has no fused
// multiply-add, so f64x2 lanes round exactly as scalar f64), so a lane's result is the one
// step() gives, bit for bit; only the work component's stage values, which no right-hand
// side reads, are not formed. The two chains of square roots and divisions of a step are
// latency-bound: two of them side by side take little longer than one.
//
// Generated from the tableau in dopri5.ts (the same constants, imported).

import {
  A21, A31, A32, A41, A42, A43, A51, A52, A53, A54, A61, A62, A63, A64, A65,
  B1, B3, B4, B5, B6, E1, E3, E4, E5, E6, E7,
  OFF_Y0, OFF_K1, OFF_K3, OFF_K4, OFF_K5, OFF_K6, OFF_K7, OFF_YN,
} from "./dopri5";

// Error estimates of the last stepPair, as step() returns them (NaN: a stage was not finite).
export let pairErrA: f64 = 0.0;
export let pairErrB: f64 = 0.0;

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

// One step of size ha (lane A: buffers at pa, stance parameters ...A) and hb (lane B) from
// each lane's Y0 and K1; writes each lane's K3..K7 and YN (K7 = f(YN)) like step(), and the
// error estimates into pairErrA, pairErrB. The stance right-hand side (system.ts) in each lane.
export function stepPair(
  pa: usize, pb: usize, ha: f64, hb: f64, rtolA: f64, rtolB: f64, atolA: f64, atolB: f64,
  dimA: f64, dimB: f64, kA: f64, kB: f64, legA: f64, legB: f64, cA: f64, cB: f64,
  invMA: f64, invMB: f64, gA: f64, gB: f64,
): void {
  const h = pair(ha, hb);
  const K = pair(kA, kB);
  const LEG = pair(legA, legB);
  const C = pair(cA, cB);
  const IM = pair(invMA, invMB);
  const G = pair(gA, gB);
  const ONE = f64x2(1.0, 1.0);
  const vA21 = f64x2(A21, A21);
  const vA31 = f64x2(A31, A31);
  const vA32 = f64x2(A32, A32);
  const vA41 = f64x2(A41, A41);
  const vA42 = f64x2(A42, A42);
  const vA43 = f64x2(A43, A43);
  const vA51 = f64x2(A51, A51);
  const vA52 = f64x2(A52, A52);
  const vA53 = f64x2(A53, A53);
  const vA54 = f64x2(A54, A54);
  const vA61 = f64x2(A61, A61);
  const vA62 = f64x2(A62, A62);
  const vA63 = f64x2(A63, A63);
  const vA64 = f64x2(A64, A64);
  const vA65 = f64x2(A65, A65);
  const vB1 = f64x2(B1, B1);
  const vB3 = f64x2(B3, B3);
  const vB4 = f64x2(B4, B4);
  const vB5 = f64x2(B5, B5);
  const vB6 = f64x2(B6, B6);
  const vE1 = f64x2(E1, E1);
  const vE3 = f64x2(E3, E3);
  const vE4 = f64x2(E4, E4);
  const vE5 = f64x2(E5, E5);
  const vE6 = f64x2(E6, E6);
  const vE7 = f64x2(E7, E7);
  const y0 = gather(pa, pb, OFF_Y0 + 0);
  const y1 = gather(pa, pb, OFF_Y0 + 8);
  const y2 = gather(pa, pb, OFF_Y0 + 16);
  const y3 = gather(pa, pb, OFF_Y0 + 24);
  const y4 = gather(pa, pb, OFF_Y0 + 32);
  const a0 = gather(pa, pb, OFF_K1 + 0);
  const a1 = gather(pa, pb, OFF_K1 + 8);
  const a2 = gather(pa, pb, OFF_K1 + 16);
  const a3 = gather(pa, pb, OFF_K1 + 24);
  const a4 = gather(pa, pb, OFF_K1 + 32);
  let b0: v128, b1: v128, b2: v128, b3: v128, b4: v128;
  {
    const s0 = f64x2.add(y0, f64x2.mul(h, f64x2.mul(vA21, a0)));
    const s1 = f64x2.add(y1, f64x2.mul(h, f64x2.mul(vA21, a1)));
    const s2 = f64x2.add(y2, f64x2.mul(h, f64x2.mul(vA21, a2)));
    const s3 = f64x2.add(y3, f64x2.mul(h, f64x2.mul(vA21, a3)));
    {
      const r = f64x2.sqrt(f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1)));
      const inv = f64x2.div(ONE, r);
      const rdot = f64x2.mul(f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3)), inv);
      const force = f64x2.sub(f64x2.mul(K, f64x2.sub(LEG, r)), f64x2.mul(C, rdot));
      const acc = f64x2.mul(f64x2.mul(force, inv), IM);
      b0 = s2;
      b1 = s3;
      b2 = f64x2.mul(acc, s0);
      b3 = f64x2.sub(f64x2.mul(acc, s1), G);
      b4 = f64x2.mul(f64x2.mul(C, rdot), rdot);
    }
  }
  let c0: v128, c1: v128, c2: v128, c3: v128, c4: v128;
  {
    const s0 = f64x2.add(y0, f64x2.mul(h, f64x2.add(f64x2.mul(vA31, a0), f64x2.mul(vA32, b0))));
    const s1 = f64x2.add(y1, f64x2.mul(h, f64x2.add(f64x2.mul(vA31, a1), f64x2.mul(vA32, b1))));
    const s2 = f64x2.add(y2, f64x2.mul(h, f64x2.add(f64x2.mul(vA31, a2), f64x2.mul(vA32, b2))));
    const s3 = f64x2.add(y3, f64x2.mul(h, f64x2.add(f64x2.mul(vA31, a3), f64x2.mul(vA32, b3))));
    {
      const r = f64x2.sqrt(f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1)));
      const inv = f64x2.div(ONE, r);
      const rdot = f64x2.mul(f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3)), inv);
      const force = f64x2.sub(f64x2.mul(K, f64x2.sub(LEG, r)), f64x2.mul(C, rdot));
      const acc = f64x2.mul(f64x2.mul(force, inv), IM);
      c0 = s2;
      c1 = s3;
      c2 = f64x2.mul(acc, s0);
      c3 = f64x2.sub(f64x2.mul(acc, s1), G);
      c4 = f64x2.mul(f64x2.mul(C, rdot), rdot);
    }
  }
  let d0: v128, d1: v128, d2: v128, d3: v128, d4: v128;
  {
    const s0 = f64x2.add(y0, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.mul(vA41, a0), f64x2.mul(vA42, b0)), f64x2.mul(vA43, c0))));
    const s1 = f64x2.add(y1, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.mul(vA41, a1), f64x2.mul(vA42, b1)), f64x2.mul(vA43, c1))));
    const s2 = f64x2.add(y2, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.mul(vA41, a2), f64x2.mul(vA42, b2)), f64x2.mul(vA43, c2))));
    const s3 = f64x2.add(y3, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.mul(vA41, a3), f64x2.mul(vA42, b3)), f64x2.mul(vA43, c3))));
    {
      const r = f64x2.sqrt(f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1)));
      const inv = f64x2.div(ONE, r);
      const rdot = f64x2.mul(f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3)), inv);
      const force = f64x2.sub(f64x2.mul(K, f64x2.sub(LEG, r)), f64x2.mul(C, rdot));
      const acc = f64x2.mul(f64x2.mul(force, inv), IM);
      d0 = s2;
      d1 = s3;
      d2 = f64x2.mul(acc, s0);
      d3 = f64x2.sub(f64x2.mul(acc, s1), G);
      d4 = f64x2.mul(f64x2.mul(C, rdot), rdot);
    }
  }
  let e0: v128, e1: v128, e2: v128, e3: v128, e4: v128;
  {
    const s0 = f64x2.add(y0, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vA51, a0), f64x2.mul(vA52, b0)), f64x2.mul(vA53, c0)), f64x2.mul(vA54, d0))));
    const s1 = f64x2.add(y1, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vA51, a1), f64x2.mul(vA52, b1)), f64x2.mul(vA53, c1)), f64x2.mul(vA54, d1))));
    const s2 = f64x2.add(y2, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vA51, a2), f64x2.mul(vA52, b2)), f64x2.mul(vA53, c2)), f64x2.mul(vA54, d2))));
    const s3 = f64x2.add(y3, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vA51, a3), f64x2.mul(vA52, b3)), f64x2.mul(vA53, c3)), f64x2.mul(vA54, d3))));
    {
      const r = f64x2.sqrt(f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1)));
      const inv = f64x2.div(ONE, r);
      const rdot = f64x2.mul(f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3)), inv);
      const force = f64x2.sub(f64x2.mul(K, f64x2.sub(LEG, r)), f64x2.mul(C, rdot));
      const acc = f64x2.mul(f64x2.mul(force, inv), IM);
      e0 = s2;
      e1 = s3;
      e2 = f64x2.mul(acc, s0);
      e3 = f64x2.sub(f64x2.mul(acc, s1), G);
      e4 = f64x2.mul(f64x2.mul(C, rdot), rdot);
    }
  }
  let f0: v128, f1: v128, f2: v128, f3: v128, f4: v128;
  {
    const s0 = f64x2.add(y0, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vA61, a0), f64x2.mul(vA62, b0)), f64x2.mul(vA63, c0)), f64x2.mul(vA64, d0)), f64x2.mul(vA65, e0))));
    const s1 = f64x2.add(y1, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vA61, a1), f64x2.mul(vA62, b1)), f64x2.mul(vA63, c1)), f64x2.mul(vA64, d1)), f64x2.mul(vA65, e1))));
    const s2 = f64x2.add(y2, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vA61, a2), f64x2.mul(vA62, b2)), f64x2.mul(vA63, c2)), f64x2.mul(vA64, d2)), f64x2.mul(vA65, e2))));
    const s3 = f64x2.add(y3, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vA61, a3), f64x2.mul(vA62, b3)), f64x2.mul(vA63, c3)), f64x2.mul(vA64, d3)), f64x2.mul(vA65, e3))));
    {
      const r = f64x2.sqrt(f64x2.add(f64x2.mul(s0, s0), f64x2.mul(s1, s1)));
      const inv = f64x2.div(ONE, r);
      const rdot = f64x2.mul(f64x2.add(f64x2.mul(s0, s2), f64x2.mul(s1, s3)), inv);
      const force = f64x2.sub(f64x2.mul(K, f64x2.sub(LEG, r)), f64x2.mul(C, rdot));
      const acc = f64x2.mul(f64x2.mul(force, inv), IM);
      f0 = s2;
      f1 = s3;
      f2 = f64x2.mul(acc, s0);
      f3 = f64x2.sub(f64x2.mul(acc, s1), G);
      f4 = f64x2.mul(f64x2.mul(C, rdot), rdot);
    }
  }
  const n0 = f64x2.add(y0, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vB1, a0), f64x2.mul(vB3, c0)), f64x2.mul(vB4, d0)), f64x2.mul(vB5, e0)), f64x2.mul(vB6, f0))));
  const n1 = f64x2.add(y1, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vB1, a1), f64x2.mul(vB3, c1)), f64x2.mul(vB4, d1)), f64x2.mul(vB5, e1)), f64x2.mul(vB6, f1))));
  const n2 = f64x2.add(y2, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vB1, a2), f64x2.mul(vB3, c2)), f64x2.mul(vB4, d2)), f64x2.mul(vB5, e2)), f64x2.mul(vB6, f2))));
  const n3 = f64x2.add(y3, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vB1, a3), f64x2.mul(vB3, c3)), f64x2.mul(vB4, d3)), f64x2.mul(vB5, e3)), f64x2.mul(vB6, f3))));
  const n4 = f64x2.add(y4, f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vB1, a4), f64x2.mul(vB3, c4)), f64x2.mul(vB4, d4)), f64x2.mul(vB5, e4)), f64x2.mul(vB6, f4))));
  let g0: v128, g1: v128, g2: v128, g3: v128, g4: v128;
  {
    const r = f64x2.sqrt(f64x2.add(f64x2.mul(n0, n0), f64x2.mul(n1, n1)));
    const inv = f64x2.div(ONE, r);
    const rdot = f64x2.mul(f64x2.add(f64x2.mul(n0, n2), f64x2.mul(n1, n3)), inv);
    const force = f64x2.sub(f64x2.mul(K, f64x2.sub(LEG, r)), f64x2.mul(C, rdot));
    const acc = f64x2.mul(f64x2.mul(force, inv), IM);
    g0 = n2;
    g1 = n3;
    g2 = f64x2.mul(acc, n0);
    g3 = f64x2.sub(f64x2.mul(acc, n1), G);
    g4 = f64x2.mul(f64x2.mul(C, rdot), rdot);
  }
  const RTOL = pair(rtolA, rtolB);
  const ATOL = pair(atolA, atolB);
  let sum = f64x2(0.0, 0.0);
  let finite = f64x2(0.0, 0.0);
  {
    const e = f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vE1, a0), f64x2.mul(vE3, c0)), f64x2.mul(vE4, d0)), f64x2.mul(vE5, e0)), f64x2.mul(vE6, f0)), f64x2.mul(vE7, g0)));
    const sc = f64x2.add(ATOL, f64x2.mul(RTOL, f64x2.max(f64x2.abs(y0), f64x2.abs(n0))));
    const q = f64x2.div(e, sc);
    sum = f64x2.add(sum, f64x2.mul(q, q));
    finite = f64x2.add(finite, f64x2.sub(n0, n0));
  }
  {
    const e = f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vE1, a1), f64x2.mul(vE3, c1)), f64x2.mul(vE4, d1)), f64x2.mul(vE5, e1)), f64x2.mul(vE6, f1)), f64x2.mul(vE7, g1)));
    const sc = f64x2.add(ATOL, f64x2.mul(RTOL, f64x2.max(f64x2.abs(y1), f64x2.abs(n1))));
    const q = f64x2.div(e, sc);
    sum = f64x2.add(sum, f64x2.mul(q, q));
    finite = f64x2.add(finite, f64x2.sub(n1, n1));
  }
  {
    const e = f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vE1, a2), f64x2.mul(vE3, c2)), f64x2.mul(vE4, d2)), f64x2.mul(vE5, e2)), f64x2.mul(vE6, f2)), f64x2.mul(vE7, g2)));
    const sc = f64x2.add(ATOL, f64x2.mul(RTOL, f64x2.max(f64x2.abs(y2), f64x2.abs(n2))));
    const q = f64x2.div(e, sc);
    sum = f64x2.add(sum, f64x2.mul(q, q));
    finite = f64x2.add(finite, f64x2.sub(n2, n2));
  }
  {
    const e = f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vE1, a3), f64x2.mul(vE3, c3)), f64x2.mul(vE4, d3)), f64x2.mul(vE5, e3)), f64x2.mul(vE6, f3)), f64x2.mul(vE7, g3)));
    const sc = f64x2.add(ATOL, f64x2.mul(RTOL, f64x2.max(f64x2.abs(y3), f64x2.abs(n3))));
    const q = f64x2.div(e, sc);
    sum = f64x2.add(sum, f64x2.mul(q, q));
    finite = f64x2.add(finite, f64x2.sub(n3, n3));
  }
  {
    const e = f64x2.mul(h, f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.add(f64x2.mul(vE1, a4), f64x2.mul(vE3, c4)), f64x2.mul(vE4, d4)), f64x2.mul(vE5, e4)), f64x2.mul(vE6, f4)), f64x2.mul(vE7, g4)));
    const sc = f64x2.add(ATOL, f64x2.mul(RTOL, f64x2.max(f64x2.abs(y4), f64x2.abs(n4))));
    const q = f64x2.div(e, sc);
    sum = f64x2.add(sum, f64x2.mul(q, q));
    finite = f64x2.add(finite, f64x2.sub(n4, n4));
  }
  const err = f64x2.sqrt(f64x2.div(sum, pair(dimA, dimB)));
  scatter(pa, pb, OFF_K3 + 0, c0);
  scatter(pa, pb, OFF_K3 + 8, c1);
  scatter(pa, pb, OFF_K3 + 16, c2);
  scatter(pa, pb, OFF_K3 + 24, c3);
  scatter(pa, pb, OFF_K3 + 32, c4);
  scatter(pa, pb, OFF_K4 + 0, d0);
  scatter(pa, pb, OFF_K4 + 8, d1);
  scatter(pa, pb, OFF_K4 + 16, d2);
  scatter(pa, pb, OFF_K4 + 24, d3);
  scatter(pa, pb, OFF_K4 + 32, d4);
  scatter(pa, pb, OFF_K5 + 0, e0);
  scatter(pa, pb, OFF_K5 + 8, e1);
  scatter(pa, pb, OFF_K5 + 16, e2);
  scatter(pa, pb, OFF_K5 + 24, e3);
  scatter(pa, pb, OFF_K5 + 32, e4);
  scatter(pa, pb, OFF_K6 + 0, f0);
  scatter(pa, pb, OFF_K6 + 8, f1);
  scatter(pa, pb, OFF_K6 + 16, f2);
  scatter(pa, pb, OFF_K6 + 24, f3);
  scatter(pa, pb, OFF_K6 + 32, f4);
  scatter(pa, pb, OFF_K7 + 0, g0);
  scatter(pa, pb, OFF_K7 + 8, g1);
  scatter(pa, pb, OFF_K7 + 16, g2);
  scatter(pa, pb, OFF_K7 + 24, g3);
  scatter(pa, pb, OFF_K7 + 32, g4);
  scatter(pa, pb, OFF_YN + 0, n0);
  scatter(pa, pb, OFF_YN + 8, n1);
  scatter(pa, pb, OFF_YN + 16, n2);
  scatter(pa, pb, OFF_YN + 24, n3);
  scatter(pa, pb, OFF_YN + 32, n4);
  const errA = f64x2.extract_lane(err, 0);
  const errB = f64x2.extract_lane(err, 1);
  // A NaN or infinity anywhere in the stages shows up in err or in YN.
  pairErrA = !isFinite(errA) || f64x2.extract_lane(finite, 0) != 0.0 ? NaN : errA;
  pairErrB = !isFinite(errB) || f64x2.extract_lane(finite, 1) != 0.0 ? NaN : errB;
}
