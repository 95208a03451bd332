// Analyses of the lateral leg-spring model (models/lateral.ts): the stride map on the left
// touchdown section, its periodic gaits (fixed points) and their eigenvalues, and simulation.
//
// Section state: speed v, heading of the velocity relative to the body axis delta, angular
// velocity omega, absolute heading psi. The dynamics commute with rotations of the plane, so psi
// is neutral, and they conserve energy (with a fixed attachment point), so the full stride map has
// the eigenvalue 1 twice; the reduced map acts on (delta, omega) at fixed energy.
//
// The periodic zig-zag gait is a fixed point whose right stance mirrors its left: the left stance
// from (v, delta, omega) ends at a right touchdown in (v, -delta, -omega). The search solves that
// mirror condition on the half-stride map (two equations in delta and omega at the scenario's
// energy), from a grid of starts, by Newton's method; every solution is then checked as a fixed
// point of the full stride map, its residual reported.

import * as L from '../../../assembly/layout.js';
import { type Complex, eigenvalues, modulus } from '../eigen.js';
import type { Engine } from '../engine.js';
import { InputError } from '../errors.js';
import {
  buildLateralModel,
  type Kick,
  type LateralScenario,
  lateralInput,
  lateralStart,
  type SectionState,
  sectionEnergy,
  sectionOf,
  wrapAngle,
} from '../models/lateral.js';

const DEG = Math.PI / 180;

/** Tolerances for the map's integrations: the Jacobians come from differences of runs. */
const MAP_RTOL = 1e-13;
const MAP_ATOL = 1e-16;
/** Tolerances of the gait search before the polish. */
const SEARCH_RTOL = 1e-9;
const SEARCH_ATOL = 1e-13;

export function mapModel(s: LateralScenario): Float64Array {
  const m = buildLateralModel(s);
  m[L.LM_RTOL] = Math.min(m[L.LM_RTOL], MAP_RTOL);
  m[L.LM_ATOL] = Math.min(m[L.LM_ATOL], MAP_ATOL);
  return m;
}

export interface StrideOutcome {
  status: number;
  /** Right touchdown (after the left stance), when reached. */
  mid?: SectionState;
  /** Next left touchdown, when reached. */
  end?: SectionState;
  strideTime: number;
  record: Float64Array;
}

/** One stride from each state, in one kernel call. */
export function strides(engine: Engine, model: Float64Array, states: readonly SectionState[]): StrideOutcome[] {
  const inputs = new Float64Array(states.length * L.LI_SIZE);
  states.forEach((st, i) => inputs.set(lateralInput(st), i * L.LI_SIZE));
  const r = engine.runLateral([model], inputs, 1, true);
  const rec = r.records as Float64Array;
  return states.map((st, i) => {
    const row = rec.subarray(i * L.LR_SIZE, (i + 1) * L.LR_SIZE);
    const status = r.summaries[i * L.LS_SIZE + L.LS_STATUS];
    const midOk = Number.isFinite(row[L.LR_MID_VX]);
    const endOk = status === L.STATUS_OK;
    // headings relative to the start's (rotation symmetry: the kernel starts at heading st.heading)
    return {
      status,
      mid: midOk ? sectionOf(row[L.LR_MID_THETA], row[L.LR_MID_VX], row[L.LR_MID_VY], row[L.LR_MID_OMEGA]) : undefined,
      end: endOk ? sectionOf(row[L.LR_END_THETA], row[L.LR_END_VX], row[L.LR_END_VY], row[L.LR_END_OMEGA]) : undefined,
      strideTime: row[L.LR_END_TIME],
      record: row.slice(),
    };
  });
}

/** Speed at the section for a given energy and angular velocity (NaN when the rotation alone exceeds it). */
export function speedAtEnergy(s: LateralScenario, energy: number, omega: number): number {
  const rest = 2 * energy - s.body.moment_of_inertia_kg_m2 * omega * omega;
  return rest > 0 ? Math.sqrt(rest / s.body.mass_kg) : Number.NaN;
}

export interface LateralEigen {
  re: number;
  im: number;
  modulus: number;
}

const eig = (z: Complex): LateralEigen => ({ re: z.re, im: z.im, modulus: modulus(z) });

export interface LateralFixedPoint {
  speed_m_per_s: number;
  heading_to_body_deg: number;
  angular_velocity_deg_per_s: number;
  stride_time_s: number;
  /** Forward distance of one stride along the mean heading, m. */
  stride_length_m: number;
  peak_leg_force_N: number;
  max_compression_m: number;
  /** |mirror condition| at the solution: |delta' + delta| (rad) and |omega' + omega| (rad/s). */
  mirror_residual: number;
  /** Largest change of (v, delta, omega, heading) over one full stride (SI, rad). */
  stride_residual: number;
  /** The full stride map on (v, delta, omega, heading), largest modulus first. */
  eigenvalues: LateralEigen[];
  /** The reduced map on (delta, omega) at fixed energy, heading removed (moving attachment point: on (speed, delta, omega)). */
  reduced_eigenvalues: LateralEigen[];
  /** The full map's two eigenvalues closest to 1 (energy and rotation; with a moving attachment point only the rotation's is 1), their distance from 1. */
  unit_eigenvalue_errors: [number, number];
  /** Reduced eigenvalues all inside the unit circle (by more than 1e-6). */
  stable: boolean;
  /** stable, neutral (largest reduced modulus within 1e-6 of 1) or unstable. */
  stability: 'stable' | 'neutral' | 'unstable';
  /** Full and reduced Jacobians (rows: outputs, columns: inputs; SI and rad). */
  jacobian: number[][];
  reduced_jacobian: number[][];
}

export interface LateralMapOptions {
  /** Energy of the search; default the scenario's start energy. */
  energy_J?: number;
  /** Grid of Newton starts: heading values and angular-velocity values. */
  headingStarts?: number;
  rateStarts?: number;
  /** Skip the eigenvalues (existence only, e.g. for the minimum-speed search). */
  existenceOnly?: boolean;
  /** Newton starts (rad, rad/s) instead of the grid: continuation from a known gait. */
  starts?: readonly { delta: number; omega: number }[];
}

export interface LateralMapResult {
  /** False with a moving attachment point: the gaits are then isolated, each with its own energy. */
  energy_conserved: boolean;
  energy_J: number;
  /** Speed at the section with no rotation, at this energy. */
  speed_m_per_s: number;
  fixed_points: LateralFixedPoint[];
  starts: number;
  newton_converged: number;
}

interface Candidate {
  delta: number;
  omega: number;
  /** Only searched with a moving attachment point (else it follows from the energy). */
  speed: number;
  done: boolean;
  failed: boolean;
  residual: number;
  iterations: number;
}

/**
 * The map's analyses of energy families (the minimum speed, recovery to the gait of an energy)
 * assume a conserved energy; a moving attachment point does work on the body and breaks that, so
 * they refuse it by name.
 */
export function requireFixedAttachment(s: LateralScenario, command: string): void {
  if (s.body.attachment_rate_m_per_s === 0) return;
  throw new InputError([
    {
      path: 'body.attachment_rate_m_per_s',
      expected: '0',
      found: String(s.body.attachment_rate_m_per_s),
      message: `expected 0 for ${command} (it follows the gaits of each energy, and a moving attachment point changes the energy every stride; simulate and map run it), found ${s.body.attachment_rate_m_per_s}`,
    },
  ]);
}

/** Solve the small linear system a x = b (Gaussian elimination with partial pivoting); undefined if singular. */
function solveSmall(a: number[][], b: number[]): number[] | undefined {
  const n = b.length;
  const m = a.map((row, i) => [...row, b[i]]);
  for (let k = 0; k < n; k++) {
    let p = k;
    for (let i = k + 1; i < n; i++) if (Math.abs(m[i][k]) > Math.abs(m[p][k])) p = i;
    if (!(Math.abs(m[p][k]) > 1e-300)) return undefined;
    [m[k], m[p]] = [m[p], m[k]];
    for (let i = k + 1; i < n; i++) {
      const f = m[i][k] / m[k][k];
      for (let j = k; j <= n; j++) m[i][j] -= f * m[k][j];
    }
  }
  const x = new Array(n).fill(0);
  for (let i = n - 1; i >= 0; i--) {
    let t = m[i][n];
    for (let j = i + 1; j < n; j++) t -= m[i][j] * x[j];
    x[i] = t / m[i][i];
  }
  return x;
}

/**
 * Every symmetric periodic gait at the energy, with eigenvalues. With a moving attachment point
 * (d1 != 0) the energy is not conserved: the gaits are isolated, and the search also solves for
 * the speed (three equations: speed, heading to the body axis and angular velocity mirrored).
 */
export function lateralFixedPoints(engine: Engine, s: LateralScenario, options: LateralMapOptions = {}): LateralMapResult {
  const moving = s.body.attachment_rate_m_per_s !== 0;
  const start = lateralStart(s);
  const energy = options.energy_J ?? sectionEnergy(s, start);
  const v0 = speedAtEnergy(s, energy, 0);
  const model = mapModel(s);
  const omegaScale = v0 / s.body.leg_length_m;
  const omegaLimit = moving ? Infinity : Math.sqrt((2 * energy) / s.body.moment_of_inertia_kg_m2);
  const nd = options.headingStarts ?? 36;
  const nw = options.rateStarts ?? 7;
  const rates = [0];
  for (let k = 1; rates.length < nw; k++) {
    const w = Math.min(0.08 * k * k * omegaScale, 0.9 * omegaLimit);
    rates.push(w, -w);
  }
  const speeds = moving ? [0.6 * v0, v0, 1.6 * v0] : [v0];
  const fresh = { done: false, failed: false, residual: Infinity, iterations: 0 };
  const cands: Candidate[] = (options.starts ?? []).map((st) => ({ speed: v0, ...st, ...fresh }));
  for (let i = 0; i < (options.starts ? 0 : nd); i++) {
    const delta = -Math.PI / 2 + (Math.PI * (i + 0.5)) / nd;
    for (const omega of rates.slice(0, nw)) for (const speed of speeds) cands.push({ delta, omega, speed, ...fresh });
  }
  const state = (c: { delta: number; omega: number; speed: number }): SectionState => ({
    speed: moving ? c.speed : speedAtEnergy(s, energy, c.omega),
    delta: c.delta,
    omega: c.omega,
    heading: 0,
  });
  // unknowns: (delta, omega), and the speed with a moving attachment point
  const dims = moving ? 3 : 2;
  const keys = ['delta', 'omega', 'speed'] as const;
  const scales = [1, omegaScale, v0];
  const residualOf = (mid: SectionState, st: SectionState) => {
    const r = [wrapAngle(mid.delta + st.delta), (mid.omega + st.omega) / omegaScale];
    if (moving) r.push((mid.speed - st.speed) / v0);
    return r;
  };
  // Newton on the mirror condition, for every candidate at once (one kernel call per iteration):
  // first on runs at a search tolerance (about four times fewer steps), abandoning candidates that
  // do not approach a root, then polished on runs at the map's tolerance.
  const newton = (list: Candidate[], m: Float64Array, h: number, done: number, iterations: number, giveUp: boolean) => {
    const per = 1 + 2 * dims;
    for (let iteration = 0; iteration < iterations; iteration++) {
      const active = list.filter((c) => !c.done && !c.failed);
      if (active.length === 0) break;
      const states: SectionState[] = [];
      for (const c of active) {
        states.push(state(c));
        for (let k = 0; k < dims; k++) {
          for (const sign of [1, -1]) states.push(state({ ...c, [keys[k]]: c[keys[k]] + sign * h * scales[k] }));
        }
      }
      const bad = active.filter((_, j) => states.slice(per * j, per * (j + 1)).some((st) => !(st.speed > 0)));
      if (bad.length) {
        for (const c of bad) c.failed = true;
        continue;
      }
      const out = strides(engine, m, states);
      active.forEach((c, j) => {
        const o = out.slice(per * j, per * (j + 1));
        if (o.some((x) => !x.mid)) {
          c.failed = true;
          return;
        }
        const r = o.map((x, k) => residualOf(x.mid as SectionState, states[per * j + k]));
        const r0 = r[0];
        c.residual = Math.max(...r0.map(Math.abs));
        c.iterations++;
        if (c.residual < done) {
          c.done = true;
          return;
        }
        // far from any root after a dozen steps: not converging (a start outside every basin)
        if (giveUp && c.iterations >= 12 && c.residual > 1e-3) {
          c.failed = true;
          return;
        }
        // Jacobian in scaled unknowns: column k from the runs at +-h along unknown k
        const jac = r0.map((_, i) => Array.from({ length: dims }, (_, k) => (r[1 + 2 * k][i] - r[2 + 2 * k][i]) / (2 * h)));
        const step = solveSmall(jac, r0.map((x) => -x));
        if (!step) {
          c.failed = true;
          return;
        }
        const scale = Math.max(...step.map((x) => Math.abs(x) / 0.2), 1);
        for (let k = 0; k < dims; k++) c[keys[k]] += (step[k] / scale) * scales[k];
        if (Math.abs(c.delta) >= Math.PI / 2 || Math.abs(c.omega) >= omegaLimit || !(c.speed > 0)) c.failed = true;
        else if (Math.max(...step.map(Math.abs)) < 1e-15 && c.residual < 1e-9) c.done = true;
      });
    }
  };
  const searchModel = buildLateralModel(s);
  searchModel[L.LM_RTOL] = SEARCH_RTOL;
  searchModel[L.LM_ATOL] = SEARCH_ATOL;
  newton(cands, searchModel, 1e-6, 1e-8, 40, true);
  const found = cands.filter((c) => c.done || (!c.failed && c.residual < 1e-6));
  const distinct: Candidate[] = [];
  for (const c of found.sort((p, q) => p.delta - q.delta)) {
    const same = (u: Candidate) =>
      Math.abs(u.delta - c.delta) < 1e-5 && Math.abs(u.omega - c.omega) < 1e-5 * omegaScale && Math.abs(u.speed - c.speed) < 1e-5 * v0;
    if (!distinct.some(same)) distinct.push(c);
  }
  const polished = distinct.map((c) => ({ ...c, ...fresh }));
  newton(polished, model, 1e-7, 1e-12, 12, false);
  const converged = polished.filter((c) => c.done || (!c.failed && c.residual < 1e-9));
  const unique: Candidate[] = [];
  for (const c of converged.sort((p, q) => p.delta - q.delta)) {
    const same = (u: Candidate) =>
      Math.abs(u.delta - c.delta) < 1e-6 && Math.abs(u.omega - c.omega) < 1e-6 * omegaScale && Math.abs(u.speed - c.speed) < 1e-6 * v0;
    if (!unique.some(same)) unique.push(c);
  }
  const fixed = options.existenceOnly
    ? unique.map((c) => bare(state(c), c.residual))
    : unique.map((c) => describeFixedPoint(engine, s, model, moving ? null : energy, state(c), c.residual, omegaScale));
  return { energy_conserved: !moving, energy_J: energy, speed_m_per_s: v0, fixed_points: fixed, starts: cands.length, newton_converged: found.length };
}

function bare(st: SectionState, residual: number): LateralFixedPoint {
  return {
    speed_m_per_s: st.speed,
    heading_to_body_deg: st.delta / DEG,
    angular_velocity_deg_per_s: st.omega / DEG,
    stride_time_s: Number.NaN,
    stride_length_m: Number.NaN,
    peak_leg_force_N: Number.NaN,
    max_compression_m: Number.NaN,
    mirror_residual: residual,
    stride_residual: Number.NaN,
    eigenvalues: [],
    reduced_eigenvalues: [],
    unit_eigenvalue_errors: [Number.NaN, Number.NaN],
    stable: false,
    stability: 'unstable',
    jacobian: [],
    reduced_jacobian: [],
  };
}

/** The full stride map's outputs as a vector (v, delta, omega, heading). */
function vec(st: SectionState): number[] {
  return [st.speed, st.delta, st.omega, st.heading];
}

/**
 * Central differences of the stride map with Richardson extrapolation (steps h and h/2), on runs at
 * tolerance 1e-13: the step-size controller's noise (about 1e-13 relative) over h = 1e-4 stays
 * below 1e-8, and the extrapolation cancels the h^2 term.
 */
function jacobianColumns(
  engine: Engine,
  model: Float64Array,
  base: SectionState,
  directions: ((st: SectionState, h: number) => SectionState)[],
  steps: number[],
  outputs: (st: SectionState) => number[],
): number[][] | undefined {
  const states: SectionState[] = [];
  directions.forEach((dir, j) => {
    const h = steps[j];
    states.push(dir(base, h), dir(base, -h), dir(base, h / 2), dir(base, -h / 2));
  });
  const out = strides(engine, model, states);
  if (out.some((o) => !o.end)) return undefined;
  const cols: number[][] = [];
  directions.forEach((_, j) => {
    const h = steps[j];
    const [p, m, p2, m2] = out.slice(4 * j, 4 * j + 4).map((o) => outputs(o.end as SectionState));
    const col = p.map((_, i) => {
      const d1 = diff(p[i], m[i], i) / (2 * h);
      const d2 = diff(p2[i], m2[i], i) / h;
      return (4 * d2 - d1) / 3;
    });
    cols.push(col);
  });
  return cols;
}

// Angles (delta, heading: components 1 and 3 of the full vector) differ on the circle.
let angleComponents = new Set([1, 3]);
function diff(a: number, b: number, i: number): number {
  return angleComponents.has(i) ? wrapAngle(a - b) : a - b;
}

function transpose(cols: number[][]): number[][] {
  return cols[0].map((_, i) => cols.map((c) => c[i]));
}

function describeFixedPoint(
  engine: Engine,
  s: LateralScenario,
  model: Float64Array,
  energy: number | null,
  fp: SectionState,
  mirror: number,
  omegaScale: number,
): LateralFixedPoint {
  const [run] = strides(engine, model, [fp]);
  const rec = run.record;
  const end = run.end;
  const strideResidual = end
    ? Math.max(Math.abs(end.speed - fp.speed), Math.abs(wrapAngle(end.delta - fp.delta)), Math.abs(end.omega - fp.omega), Math.abs(wrapAngle(end.heading - fp.heading)))
    : Number.NaN;
  const stepV = 1e-4 * fp.speed;
  const stepA = 1e-4;
  const stepW = 1e-4 * omegaScale;
  angleComponents = new Set([1, 3]);
  const full = jacobianColumns(
    engine,
    model,
    fp,
    [
      (st, h) => ({ ...st, speed: st.speed + h }),
      (st, h) => ({ ...st, delta: st.delta + h }),
      (st, h) => ({ ...st, omega: st.omega + h }),
      (st, h) => ({ ...st, heading: st.heading + h }),
    ],
    [stepV, stepA, stepW, stepA],
    vec,
  );
  // reduced: (delta, omega) at fixed energy, the speed following the energy; with a moving
  // attachment point (no energy) the map on (speed, delta, omega), heading removed
  let reduced: number[][] | undefined;
  if (energy !== null) {
    angleComponents = new Set([0]);
    const atEnergy = (st: SectionState): SectionState => ({ ...st, speed: speedAtEnergy(s, energy, st.omega) });
    reduced = jacobianColumns(
      engine,
      model,
      fp,
      [(st, h) => atEnergy({ ...st, delta: st.delta + h }), (st, h) => atEnergy({ ...st, omega: st.omega + h })],
      [stepA, stepW],
      (st) => [st.delta, st.omega],
    );
  } else {
    angleComponents = new Set([1]);
    reduced = jacobianColumns(
      engine,
      model,
      fp,
      [(st, h) => ({ ...st, speed: st.speed + h }), (st, h) => ({ ...st, delta: st.delta + h }), (st, h) => ({ ...st, omega: st.omega + h })],
      [stepV, stepA, stepW],
      (st) => [st.speed, st.delta, st.omega],
    );
  }
  angleComponents = new Set([1, 3]);
  const jacobian = full ? transpose(full) : [];
  const reducedJacobian = reduced ? transpose(reduced) : [];
  const ev = full ? eigenvalues(jacobian).map(eig) : [];
  const rev = reduced ? eigenvalues(reducedJacobian).map(eig) : [];
  const unitErrors = ev
    .map((z) => Math.hypot(z.re - 1, z.im))
    .sort((a, b) => a - b)
    .slice(0, 2) as [number, number];
  const largest = rev.length ? Math.max(...rev.map((z) => z.modulus)) : Number.NaN;
  const stability = !(largest >= 0) ? 'unstable' : largest < 1 - 1e-6 ? 'stable' : largest <= 1 + 1e-6 ? 'neutral' : 'unstable';
  // forward distance along the mean heading (the gait's headings at both touchdowns are symmetric)
  const dx = rec[L.LR_END_X] - rec[L.LR_X];
  const dy = rec[L.LR_END_Y] - rec[L.LR_Y];
  return {
    speed_m_per_s: fp.speed,
    heading_to_body_deg: fp.delta / DEG,
    angular_velocity_deg_per_s: fp.omega / DEG,
    stride_time_s: run.strideTime,
    stride_length_m: Math.hypot(dx, dy),
    peak_leg_force_N: rec[L.LR_PEAK_FORCE],
    max_compression_m: rec[L.LR_MAX_COMPRESSION],
    mirror_residual: mirror,
    stride_residual: strideResidual,
    eigenvalues: ev,
    reduced_eigenvalues: rev,
    unit_eigenvalue_errors: unitErrors.length === 2 ? unitErrors : [Number.NaN, Number.NaN],
    stable: stability === 'stable',
    stability,
    jacobian,
    reduced_jacobian: reducedJacobian,
  };
}

/**
 * The lowest speed (with no rotation, at the section) at which a periodic gait exists, by bisection
 * on existence between `low` (none) and `high` (some), to a relative width `tolerance`.
 */
export function minimumGaitSpeed(engine: Engine, s: LateralScenario, high: number, tolerance = 1e-4): number | undefined {
  const exists = (v: number) =>
    lateralFixedPoints(engine, s, { energy_J: 0.5 * s.body.mass_kg * v * v, existenceOnly: true, headingStarts: 36, rateStarts: 1 }).fixed_points.length > 0;
  if (!exists(high)) return undefined;
  let lo = high;
  for (let k = 0; k < 60 && exists(lo); k++) lo /= 2;
  if (exists(lo)) return undefined;
  let hi = high;
  while ((hi - lo) / hi > tolerance) {
    const mid = 0.5 * (lo + hi);
    if (exists(mid)) hi = mid;
    else lo = mid;
  }
  return hi;
}

// ---------------------------------------------------------------------------------------------
// Simulation.

export interface LateralStrideRow {
  stride: number;
  time_s: number;
  speed_m_per_s: number;
  heading_to_body_deg: number;
  angular_velocity_deg_per_s: number;
  heading_deg: number;
  body_angle_deg: number;
  x_m: number;
  y_m: number;
  stride_time_s: number;
  peak_leg_force_N: number;
  max_compression_m: number;
  energy_before_J: number;
  energy_after_J: number;
  kicked: boolean;
  status: number;
}

export interface LateralSample {
  t: number;
  x: number;
  y: number;
  theta: number;
  vx: number;
  vy: number;
  omega: number;
  footX: number;
  footY: number;
  force: number;
  side: number;
  stride: number;
}

export interface LateralSimulation {
  status: number;
  strides_completed: number;
  rows: LateralStrideRow[];
  final: SectionState & { time_s: number; x_m: number; y_m: number; theta: number };
  samples?: LateralSample[];
  /** The sample buffer filled up before the run ended (the trajectory stops early). */
  truncated?: boolean;
}

/** Run the scenario (or a given start and kick) stride by stride; with dt, trajectory samples too. */
export function simulateLateral(
  engine: Engine,
  s: LateralScenario,
  options: { start?: SectionState; kick?: Kick; strides?: number; dt?: number; model?: Float64Array } = {},
): LateralSimulation {
  const model = options.model ?? buildLateralModel(s);
  const n = options.strides ?? s.strides;
  const input = lateralInput(options.start ?? lateralStart(s), options.kick);
  let rec: Float64Array;
  let sum: Float64Array;
  let samples: LateralSample[] | undefined;
  let truncated = false;
  if (options.dt !== undefined) {
    const t = engine.traceLateral(model, input, n, options.dt);
    truncated = t.truncated;
    rec = t.records;
    sum = t.summary;
    samples = [];
    for (let i = 0; i < t.samples.length / L.LT_SIZE; i++) {
      const p = t.samples.subarray(i * L.LT_SIZE, (i + 1) * L.LT_SIZE);
      samples.push({
        t: p[L.LT_TIME],
        x: p[L.LT_X],
        y: p[L.LT_Y],
        theta: p[L.LT_THETA],
        vx: p[L.LT_VX],
        vy: p[L.LT_VY],
        omega: p[L.LT_OMEGA],
        footX: p[L.LT_FOOT_X],
        footY: p[L.LT_FOOT_Y],
        force: p[L.LT_LEG_FORCE],
        side: p[L.LT_SIDE],
        stride: p[L.LT_STRIDE],
      });
    }
  } else {
    const r = engine.runLateral([model], input, n, true);
    rec = r.records as Float64Array;
    sum = r.summaries;
  }
  const rows: LateralStrideRow[] = [];
  for (let k = 0; k < n; k++) {
    const p = rec.subarray(k * L.LR_SIZE, (k + 1) * L.LR_SIZE);
    if (!Number.isFinite(p[L.LR_TIME])) break;
    const st = sectionOf(p[L.LR_THETA], p[L.LR_VX], p[L.LR_VY], p[L.LR_OMEGA]);
    rows.push({
      stride: k,
      time_s: p[L.LR_TIME],
      speed_m_per_s: st.speed,
      heading_to_body_deg: st.delta / DEG,
      angular_velocity_deg_per_s: st.omega / DEG,
      heading_deg: st.heading / DEG,
      body_angle_deg: p[L.LR_THETA] / DEG,
      x_m: p[L.LR_X],
      y_m: p[L.LR_Y],
      stride_time_s: p[L.LR_END_TIME] - p[L.LR_TIME],
      peak_leg_force_N: p[L.LR_PEAK_FORCE],
      max_compression_m: p[L.LR_MAX_COMPRESSION],
      energy_before_J: p[L.LR_ENERGY_BEFORE],
      energy_after_J: p[L.LR_ENERGY_AFTER],
      kicked: p[L.LR_KICKED] === 1,
      status: p[L.LR_STATUS],
    });
  }
  const fin = sectionOf(sum[L.LS_THETA], sum[L.LS_VX], sum[L.LS_VY], sum[L.LS_OMEGA]);
  return {
    status: sum[L.LS_STATUS],
    strides_completed: sum[L.LS_STRIDES_COMPLETED],
    rows,
    final: { ...fin, time_s: sum[L.LS_TIME], x_m: sum[L.LS_X], y_m: sum[L.LS_Y], theta: sum[L.LS_THETA] },
    samples,
    ...(samples ? { truncated } : {}),
  };
}

/** The gait at `energy` reached by Newton's method from a nearby one (continuation), if any. */
export function gaitNear(
  engine: Engine,
  s: LateralScenario,
  energy: number,
  guess: { delta: number; omega: number },
): SectionState | undefined {
  const r = lateralFixedPoints(engine, s, { energy_J: energy, starts: [guess], existenceOnly: true });
  const f = r.fixed_points[0];
  if (!f) return undefined;
  return { speed: f.speed_m_per_s, delta: f.heading_to_body_deg * DEG, omega: f.angular_velocity_deg_per_s * DEG, heading: 0 };
}
