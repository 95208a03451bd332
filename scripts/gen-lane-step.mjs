// Writes assembly/rk/dopri5x2.ts: the Dormand–Prince step of the stance for two (stepPair) or
// four (stepQuad) stances at once in f64x2 lanes, unrolled from the tableau with the operations of
// step() in rk/dopri5.ts, the stance right-hand side of rk/system.ts and the step-end quantities
// and step factor of stanceAfterLaneStep (stance.ts) and acceptFactor (dopri5.ts), each in the same
// order, so that every lane rounds as the scalar code does. Change those and run this together:
//
//   node scripts/gen-lane-step.mjs          (writes the file)
//   node scripts/gen-lane-step.mjs --check  (exit 1 if the file differs from what this writes)
//
// test/lanes.test.ts checks the file against this script and the lanes against the scalar path.

import { readFileSync, writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const add = (a, b) => `f64x2.add(${a}, ${b})`;
const sub = (a, b) => `f64x2.sub(${a}, ${b})`;
const mul = (a, b) => `f64x2.mul(${a}, ${b})`;
const sum = (terms) => terms.reduce((acc, t) => (acc === null ? t : add(acc, t)), null);
// The lane pair's step parameters in LANE_PARAMS: name in the step, Stance field.
// h A for the newest stage of each stage sum (and h B6): a stage is (y + h (older terms)) + hA k,
// one multiplication and one addition after the newest stage, as in step() (dopri5.ts).
const NEWEST = [['HA21', 'A21'], ['HA32', 'A32'], ['HA43', 'A43'], ['HA54', 'A54'], ['HA65', 'A65'], ['HB6', 'B6']];
const PARAMS = [['h', 'h'], ['K', 'k'], ['LEG', 'leg'], ['C', 'c'], ['KIM', 'kim'], ['CIM', 'cim'], ['G', 'g'], ...NEWEST.map(([n]) => [n, n.toLowerCase()])];
const paramAt = (ch, name) => (ch.base / 2 * PARAMS.length + PARAMS.findIndex(([n]) => n === name)) * 16;
const V = (name) => `v128.load(TABLEAU2 + ${consts.indexOf(name) * 16})`;
const consts = ['A21','A31','A32','A41','A42','A43','A51','A52','A53','A54','A61','A62','A63','A64','A65','B1','B3','B4','B5','B6','E1','E3','E4','E5','E6','E7'];
const stages = [
  ['b', [['A21', 'a']]],
  ['c', [['A31', 'a'], ['A32', 'b']]],
  ['d', [['A41', 'a'], ['A42', 'b'], ['A43', 'c']]],
  ['e', [['A51', 'a'], ['A52', 'b'], ['A53', 'c'], ['A54', 'd']]],
  ['f', [['A61', 'a'], ['A62', 'b'], ['A63', 'c'], ['A64', 'd'], ['A65', 'e']]],
];
// y + h (sum of the older terms) + hA (newest stage), step()'s order; y + hA21 a for stage 2.
const HA = Object.fromEntries(NEWEST.map(([n, c]) => [c, n]));
function stageSum(y, h, terms, i, X) {
  const [c, k] = terms[terms.length - 1];
  const newest = mul(`${HA[c]}${X}`, `${k}${i}${X}`);
  if (terms.length === 1) return add(y, newest);
  return add(add(y, mul(h, sum(terms.slice(0, -1).map(([cc, kk]) => mul(V(cc), `${kk}${i}${X}`))))), newest);
}
function fn(name, chains, spring) {
  const L = [];
  const o = (s) => L.push(s);
  const lanes = chains.flatMap((c) => c.lanes);
  o(`function ${name}(${lanes.map((l) => `s${l}: Stance`).join(', ')}): void {`);
  for (const l of lanes) {
    const U = l.toUpperCase();
    o(`  const p${l} = s${l}.bufs;`);
    for (const [v, f] of [['h', 'h'], ['rtol', 'rtol'], ['atol', 'atol'], ['dim', 'errDim'], ['k', 'k'], ['leg', 'leg'], ...(spring ? [] : [['c', 'c']]), ['invM', 'invMass'], ['g', 'g'], ['old', 'errOld']]) {
      o(`  const ${v}${U} = s${l}.${f};`);
    }
    o(`  const hi${U}: f64 = s${l}.afterReject ? 1.0 : 10.0;`);
    o(`  const kim${U} = k${U} * invM${U};`);
    if (!spring) o(`  const cim${U} = c${U} * invM${U};`);
    for (const [n, c] of NEWEST) o(`  const ${n.toLowerCase()}${U} = h${U} * ${c};`);
  }
  o(`  const ONE = f64x2(1.0, 1.0);`);
  o(`  const ZERO = f64x2(0.0, 0.0);`);
  for (const ch of chains) {
    const [l0, l1] = ch.lanes; const X = ch.id; const U = (p) => `pair(${p}${l0.toUpperCase()}, ${p}${l1.toUpperCase()})`;
    for (const [name, field] of PARAMS) if (!(spring && (name === 'C' || name === 'CIM'))) o(`  v128.store(LANE_PARAMS + ${paramAt(ch, name)}, ${U(field)});`);
    const comps = spring ? 4 : 5; // the work component stays as it is without damping (see stepPair)
    for (let i = 0; i < 5; i++) o(`  const y${i}${X} = gather(p${l0}, p${l1}, OFF_Y0 + ${i * 8});`);
    for (let i = 0; i < comps; i++) o(`  const a${i}${X} = gather(p${l0}, p${l1}, OFF_K1 + ${i * 8});`);
  }
  const rhs = (X, out, px, py, vx, vy, ind) => {
    const last = out === 'g';
    if (last) o(`${ind}let rg${X}: v128, dg${X}: v128;`);
    o(`${ind}{`);
    o(`${ind}  const r2 = ${add(mul(px, px), mul(py, py))};`);
    o(`${ind}  const r = f64x2.sqrt(r2);`);
    o(`${ind}  const inv = f64x2.mul(r, f64x2.div(ONE, r2)); // 1/r = r (1/r^2): the root and the division side by side`);
    if (!spring || last) o(`${ind}  const dot = ${add(mul(px, vx), mul(py, vy))};`);
    if (last) o(`${ind}  rg${X} = r;`);
    if (last) o(`${ind}  dg${X} = dot;`);
    if (!spring) o(`${ind}  const rdot = ${mul('dot', 'inv')};`);
    if (spring) o(`${ind}  const force = ${mul(`KIM${X}`, sub(`LEG${X}`, 'r'))}; // - (c/m) r' = - (+-0)`);
    else o(`${ind}  const force = ${sub(mul(`KIM${X}`, sub(`LEG${X}`, 'r')), mul(`CIM${X}`, 'rdot'))};`);
    o(`${ind}  ${out}0${X} = ${vx};`);
    o(`${ind}  ${out}1${X} = ${vy};`);
    o(`${ind}  ${out}2${X} = ${mul('force', mul('inv', px))};`);
    o(`${ind}  ${out}3${X} = ${sub(mul('force', mul('inv', py)), `G${X}`)};`);
    if (!spring) o(`${ind}  ${out}4${X} = ${mul(mul(`C${X}`, 'rdot'), 'rdot')};`);
    o(`${ind}}`);
  };
  for (const [nm, terms] of stages) {
    for (const ch of chains) {
      const X = ch.id;
      o(`  let ${[0,1,2,3,4].slice(0, spring ? 4 : 5).map((i) => `${nm}${i}${X}: v128`).join(', ')};`);
      o(`  {`);
      [0, 1, 2, 3].forEach((i) => o(`    const s${i} = ${stageSum(`y${i}${X}`, `h${X}`, terms, i, X)};`));
      rhs(X, nm, 's0', 's1', 's2', 's3', '    ');
      o(`  }`);
    }
  }
  const bterms = [['B1', 'a'], ['B3', 'c'], ['B4', 'd'], ['B5', 'e'], ['B6', 'f']];
  for (const ch of chains) {
    const X = ch.id;
    for (let i = 0; i < 4; i++) o(`  const n${i}${X} = ${stageSum(`y${i}${X}`, `h${X}`, bterms, i, X)};`);
    if (spring) o(`  const n4${X} = y4${X}; // the work: (+0 + h (+0 ...)) + hB6 (+0) = +0 without damping`);
    else o(`  const n4${X} = ${stageSum(`y4${X}`, `h${X}`, bterms, 4, X)};`);
  }
  for (const ch of chains) {
    const X = ch.id;
    o(`  let ${[0,1,2,3,4].slice(0, spring ? 4 : 5).map((i) => `g${i}${X}: v128`).join(', ')};`);
    rhs(X, 'g', `n0${X}`, `n1${X}`, `n2${X}`, `n3${X}`, '  ');
  }
  const eterms = [['E1', 'a'], ['E3', 'c'], ['E4', 'd'], ['E5', 'e'], ['E6', 'f'], ['E7', 'g']];
  for (const ch of chains) {
    const [l0, l1] = ch.lanes; const X = ch.id; const U = (p) => `pair(${p}${l0.toUpperCase()}, ${p}${l1.toUpperCase()})`;
    o(`  const RTOL${X} = ${U('rtol')};`);
    o(`  const ATOL${X} = ${U('atol')};`);
    o(`  let sum${X} = f64x2(0.0, 0.0);`);
    o(`  let finite${X} = f64x2(0.0, 0.0);`);
    for (let i = 0; i < (spring ? 4 : 5); i++) {
      o(`  {`);
      o(`    const e = ${mul(`h${X}`, sum(eterms.map(([c, k]) => mul(V(c), `${k}${i}${X}`))))};`);
      o(`    const sc = ${add(`ATOL${X}`, mul(`RTOL${X}`, `f64x2.max(f64x2.abs(y${i}${X}), f64x2.abs(n${i}${X}))`))};`);
      o(`    const q = f64x2.div(e, sc);`);
      o(`    sum${X} = ${add(`sum${X}`, mul('q', 'q'))};`);
      o(`    finite${X} = ${add(`finite${X}`, sub(`n${i}${X}`, `n${i}${X}`))};`);
      o(`  }`);
    }
    o(`  const err${X} = f64x2.sqrt(f64x2.div(sum${X}, ${U('dim')}));`);
  }
  for (const ch of chains) {
    const [l0, l1] = ch.lanes; const X = ch.id; const U = (p) => `pair(${p}${l0.toUpperCase()}, ${p}${l1.toUpperCase()})`;
    ['c', 'd', 'e', 'f'].forEach((v, s) => {
      for (let i = 0; i < 5; i++) o(`  v128.store(LANE_STAGES + ${ch.base / 2 * 320 + (s * 5 + i) * 16}, ${spring && i === 4 ? 'ZERO' : `${v}${i}${X}`});`);
    });
    for (const [buf, v] of [['OFF_K7', 'g'], ['OFF_YN', 'n']]) {
      for (let i = 0; i < 5; i++) o(`  scatter(p${l0}, p${l1}, ${buf} + ${i * 8}, ${spring && v === 'g' && i === 4 ? 'ZERO' : `${v}${i}${X}`});`);
    }
    o(`  {`);
    o(`    // the step-end quantities of stanceAfterLaneStep (stance.ts), its arithmetic`);
    o(`    const nr = rg${X}; // sqrt(px^2 + py^2) at YN, from K7's right-hand side`);
    o(`    const nrdot = f64x2.div(dg${X}, nr); // (px vx + py vy) / r`);
    if (spring) o(`    v128.store(LANE_END + ${ch.base / 2 * 80}, ${mul(`K${X}`, sub(`LEG${X}`, 'nr'))}); // leg force`);
    else o(`    v128.store(LANE_END + ${ch.base / 2 * 80}, ${sub(mul(`K${X}`, sub(`LEG${X}`, 'nr')), mul(`C${X}`, 'nrdot'))}); // leg force`);
    o(`    v128.store(LANE_END + ${ch.base / 2 * 80 + 16}, ${sub('nr', `LEG${X}`)}); // r - L0`);
    o(`    v128.store(LANE_END + ${ch.base / 2 * 80 + 32}, nrdot);`);
    o(`    v128.store(LANE_END + ${ch.base / 2 * 80 + 48}, f64x2.abs(f64x2.div(n0${X}, n1${X}))); // friction ratio`);
    o(`    // acceptFactor(err, afterReject) with the lane's controller memory (dopri5.ts)`);
    o(`    const e = v128.bitselect(err${X}, f64x2(1e-12, 1e-12), f64x2.gt(err${X}, f64x2(1e-12, 1e-12)));`);
    o(`    let f = f64x2.mul(f64x2.mul(f64x2(0.9, 0.9), roughPow2(e, -EXPO)), roughPow2(${U('old')}, BETA));`);
    o(`    f = v128.bitselect(f64x2(0.2, 0.2), f, f64x2.lt(f, f64x2(0.2, 0.2)));`);
    o(`    const hi = ${U('hi')};`);
    o(`    v128.store(LANE_END + ${ch.base / 2 * 80 + 64}, v128.bitselect(hi, f, f64x2.gt(f, hi)));`);
    o(`  }`);
    o(`  // A NaN or infinity anywhere in the stages shows up in err or in YN.`);
    o(`  laneErr${ch.base} = checked(f64x2.extract_lane(err${X}, 0), f64x2.extract_lane(finite${X}, 0));`);
    o(`  laneErr${ch.base + 1} = checked(f64x2.extract_lane(err${X}, 1), f64x2.extract_lane(finite${X}, 1));`);
  }
  o(`}`);
  // the step's parameters are read from LANE_PARAMS at each use, like the tableau
  const param = new RegExp(`\\b(${PARAMS.map(([n]) => n).join('|')})([XY])\\b`, 'g');
  return L.join('\n').replace(param, (_, n, X) => `v128.load(LANE_PARAMS + ${paramAt(chains.find((c) => c.id === X), n)})`);
}
const out = [];
out.push(`// Dormand–Prince 5(4) steps of several stances at once, one stance in each f64x2 lane:
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
const TABLEAU2: usize = memory.data<f64>([${consts.map((c) => `${c}, ${c}`).join(', ')}], 16);

// The step size and body parameters of the step in progress, lane pair by lane pair (PARAMS).
const LANE_PARAMS: usize = memory.data(2 * ${PARAMS.length} * 16, 16);

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

// stepPair with every component and the damper.`);
out.push(fn('fullStepPair', [{ id: 'X', lanes: ['A', 'B'], base: 0 }], false));
out.push(`
// stepPair for two undamped stances (springOnly).`);
out.push(fn('springStepPair', [{ id: 'X', lanes: ['A', 'B'], base: 0 }], true));
out.push(`
// stepQuad with every component and the damper.`);
out.push(fn('fullStepQuad', [{ id: 'X', lanes: ['A', 'B'], base: 0 }, { id: 'Y', lanes: ['C', 'D'], base: 2 }], false));
out.push(`
// stepQuad for four undamped stances (springOnly).`);
out.push(fn('springStepQuad', [{ id: 'X', lanes: ['A', 'B'], base: 0 }, { id: 'Y', lanes: ['C', 'D'], base: 2 }], true));
/** The text of assembly/rk/dopri5x2.ts. */
export function laneStepSource() {
  return `${out.join('\n')}\n`;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const file = fileURLToPath(new URL('../assembly/rk/dopri5x2.ts', import.meta.url));
  if (process.argv.includes('--check')) {
    if (readFileSync(file, 'utf8') !== laneStepSource()) {
      console.error(`${file} differs from what scripts/gen-lane-step.mjs writes: run it`);
      process.exitCode = 1;
    }
  } else writeFileSync(file, laneStepSource());
}
