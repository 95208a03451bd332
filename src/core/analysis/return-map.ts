// `map`: the apex return map of a scenario's policy at the scenario's energy, on flat ground at
// height 0. Apex height y -> next apex height P(y), the forward speed at each apex implied by the
// energy, v(y) = sqrt(2 (E - m g y) / m). Finds every fixed point, its slope P'(y*), the Jacobian
// of the 2-D apex map (y, v) -> (y', v') and its eigenvalues, the touchdown/liftoff symmetry of
// the periodic stance, and the staircase (cobweb) from the scenario's start.
//
// Numerics:
// - The map has a square-root edge at the bottom of its domain: just above the touchdown height
//   y_td = L0 sin(attack at apex) the touchdown vertical speed is sqrt(2 g (y - y_td)), so
//   P(y) = P(y_td) + c sqrt(y - y_td) + ... Everything here works in s with y = y_td + R s²
//   (R = speed bound - y_td): samples uniform in s resolve the edge, and P is smooth in s, so
//   root bracketing and Brent's method behave as on any smooth function, right down to the edge.
// - Fixed points: sign changes of F(y) = P(y) - y between adjacent surviving samples (and between
//   a probe just above the edge and the first sample), refined together with a batched Brent
//   (zeroin; Brent 1973, "Algorithms for Minimization without Derivatives", ch. 4): one kernel
//   call per iteration for every bracket of every map in the batch.
// - Derivatives: central differences at steps h0/2^k scaled to the distance from the edge
//   (h0 <= 0.1 (y* - y_td)), extrapolated with Richardson's tableau and the best entry chosen by
//   Ridders' error estimate (Ridders 1982, Adv. Eng. Software 4(2):75-76; Press et al.,
//   Numerical Recipes, 3rd ed., §5.7). A fixed step would be wrong near the edge, where the
//   derivatives of P grow like (y - y_td)^(1/2 - n).

import * as L from '../../../assembly/layout.js';
import { InputError, describeFound } from '../errors.js';
import { loadEngine, rolloutInput, type BatchRequest, type BatchResult, type ModelBlock } from '../engine.js';
import { buildModel, DEG, STATUS_NAMES } from '../model.js';
import { SAFETY_CAUTION } from '../safety.js';
import { attackAtApexDeg, type Scenario } from '../scenario.js';

// ---------------------------------------------------------------------------------------------
// Running strides: a batch runner (in-process engine or the worker pool) and stride evaluators.

/** Runs one batch request; the in-process engine by default, or runBatchParallel from the CLI. */
export type BatchRunner = (req: BatchRequest) => Promise<BatchResult>;

export const inProcessRunner: BatchRunner = async (req) => (await loadEngine()).runBatch(req);

/** One stride from an apex: `cell` picks the map (model) it belongs to. */
export interface StrideQuery {
  cell: number;
  height: number;
  speed: number;
}

/** The apex a stride reached; `status` is a STATUS_* code, the apex NaN unless it is STATUS_OK. */
export interface StrideOutcome {
  status: number;
  nextHeight: number;
  nextSpeed: number;
}

/** Evaluates many single strides at once (one kernel call for the kernel's evaluator). */
export type StrideEvaluator = (queries: readonly StrideQuery[]) => Promise<StrideOutcome[]>;

function batchInputs(queries: readonly StrideQuery[]): Float64Array {
  const inputs = new Float64Array(queries.length * L.I_SIZE); // (queries × I_SIZE), written here
  queries.forEach((q, i) => inputs.set(rolloutInput(q.height, q.speed, 0, q.cell), i * L.I_SIZE));
  return inputs;
}

/** The kernel as a stride evaluator: every query of a call in one batch, query.cell = model index. */
export function kernelEvaluator(models: readonly ModelBlock[], runBatch: BatchRunner = inProcessRunner): StrideEvaluator {
  return async (queries) => {
    if (queries.length === 0) return [];
    const batch = await runBatch({ model: models, inputs: batchInputs(queries), strides: 1 });
    return queries.map((_, i) => {
      const at = i * L.S_SIZE;
      const status = batch.summaries[at + L.S_STATUS];
      const ok = status === L.STATUS_OK;
      return {
        status,
        nextHeight: ok ? batch.summaries[at + L.S_FINAL_HEIGHT] : NaN,
        nextSpeed: ok ? batch.summaries[at + L.S_FINAL_SPEED] : NaN,
      };
    });
  };
}

/** The stride records (queries × R_SIZE) of single strides, in one kernel call. */
async function strideRecords(models: readonly ModelBlock[], runBatch: BatchRunner, queries: readonly StrideQuery[]): Promise<Float64Array> {
  if (queries.length === 0) return new Float64Array(0);
  const batch = await runBatch({ model: models, inputs: batchInputs(queries), strides: 1, records: true });
  return batch.records!;
}

// ---------------------------------------------------------------------------------------------
// One 1-D map: its body, energy and domain bounds.

export interface MapCell {
  mass_kg: number;
  gravity_m_per_s2: number;
  leg_length_m: number;
  energy_J: number;
  /** Touchdown height at the apex's attack angle on ground 0: the open lower edge, m. */
  placementBound_m: number;
  /** E / (m g): the apex height with zero forward speed, m. */
  speedBound_m: number;
  /** Below this |P(y) - y| everywhere, the map is the identity within the integrator's accuracy. */
  noiseFloor_m: number;
}

export function mapCell(scenario: Scenario, energy_J: number): MapCell {
  const { body } = scenario;
  const m = body.mass_kg;
  const g = body.gravity_m_per_s2;
  const L0 = body.leg_length_m;
  const integrator = scenario.integrator;
  return {
    mass_kg: m,
    gravity_m_per_s2: g,
    leg_length_m: L0,
    energy_J,
    placementBound_m: L0 * Math.sin(attackAtApexDeg(scenario.policy.angle) * DEG),
    speedBound_m: energy_J / (m * g),
    // common practice: a thousand times the integrator's error scale
    noiseFloor_m: 1e3 * (integrator.relative_tolerance * Math.max(L0, Math.abs(energy_J / (m * g))) + integrator.absolute_tolerance),
  };
}

/** The energy of the scenario's start apex, J (potential from height 0). */
export function startEnergy(scenario: Scenario): number {
  const { body, start } = scenario;
  return body.mass_kg * body.gravity_m_per_s2 * start.apex_height_m + 0.5 * body.mass_kg * start.forward_speed_m_per_s ** 2;
}

/** The forward speed at apex height y at the cell's energy (0 above the speed bound). */
export function speedAt(cell: MapCell, y: number): number {
  return Math.sqrt(Math.max(0, (2 * (cell.energy_J - cell.mass_kg * cell.gravity_m_per_s2 * y)) / cell.mass_kg));
}

/** The kernel model of a scenario for the map: its own policy and integrator, flat ground at 0. */
export function mapModel(scenario: Scenario): ModelBlock {
  return buildModel({ ...scenario, terrain: { kind: 'flat' } });
}

/**
 * True when the policy conserves mechanical energy in every stride: no leg damping and the same
 * stiffness in compression and extension for any touchdown time (law: a conservative spring).
 */
export function conservesEnergy(scenario: Scenario): boolean {
  if (scenario.body.leg_damping_N_s_per_m > 0) return false;
  const k = scenario.policy.stiffness;
  switch (k.kind) {
    case 'constant':
      return true;
    case 'split':
      return k.compression_N_per_m === k.extension_N_per_m;
    case 'time_table':
      return k.compression_N_per_m.every((kc, i) => kc === k.extension_N_per_m[i]);
  }
}

const height = (cell: MapCell, s: number) => cell.placementBound_m + (cell.speedBound_m - cell.placementBound_m) * s * s;

// ---------------------------------------------------------------------------------------------
// Sampling.

export interface MapSample {
  s: number;
  y: number;
  v: number;
  outcome: StrideOutcome;
}

export interface SampledMap {
  /** Just above the edge (s = PROBE_FRACTION / samples), for the interval below the first sample; absent with the samples when the energy leaves no room above the edge. */
  probe: MapSample | undefined;
  /** s = (i + 1) / samples, i = 0 .. samples - 1: the last one is at the speed bound. */
  samples: MapSample[];
  /** Span of heights between the leg-placement bound and the speed bound (R in y = low + R s²). */
  span_m: number;
}

/** The probe's s as a fraction of the first sample's: y - y_td is 1e-6 of the first sample's. */
const PROBE_FRACTION = 1e-3;

function sampleAt(cell: MapCell, s: number): Omit<MapSample, 'outcome'> {
  const y = height(cell, s);
  return { s, y, v: speedAt(cell, y) };
}

/** Samples every cell's map (cells whose span is empty get none), all in one evaluator call. */
export async function sampleMaps(cells: readonly MapCell[], samples: number, evaluate: StrideEvaluator): Promise<SampledMap[]> {
  const plan = cells.map((cell) => {
    const span = cell.speedBound_m - cell.placementBound_m;
    if (!(span > 0)) return { span, points: [] as Omit<MapSample, 'outcome'>[] };
    const points = [sampleAt(cell, PROBE_FRACTION / samples)];
    for (let i = 0; i < samples; i++) points.push(sampleAt(cell, (i + 1) / samples));
    return { span, points };
  });
  const queries: StrideQuery[] = [];
  plan.forEach((p, cell) => p.points.forEach((q) => queries.push({ cell, height: q.y, speed: q.v })));
  const outcomes = await evaluate(queries);
  let at = 0;
  return plan.map((p) => {
    const full = p.points.map((q) => ({ ...q, outcome: outcomes[at++] }));
    return { probe: full[0], samples: full.slice(1), span_m: Math.max(0, p.span) };
  });
}

const survives = (sample: MapSample) => sample.outcome.status === L.STATUS_OK;
const residual = (sample: MapSample) => sample.outcome.nextHeight - sample.y;

// ---------------------------------------------------------------------------------------------
// Batched Brent (zeroin) as a state machine: propose() gives the next point to evaluate (or
// undefined once converged), accept() takes its value. Follows the netlib zeroin.f step by step.

const EPS = 2.220446049250313e-16;

class BrentRoot {
  private a: number;
  private b: number;
  private c = 0;
  private fa: number;
  private fb: number;
  private fc = 0;
  private d = 0;
  private e = 0;
  private restart = true;
  iterations = 0;
  done = false;

  constructor(a: number, fa: number, b: number, fb: number, private readonly tolerance: (x: number) => number, private readonly maxIterations = 200) {
    this.a = a;
    this.b = b;
    this.fa = fa;
    this.fb = fb;
  }

  get root(): number {
    return this.b;
  }

  get value(): number {
    return this.fb;
  }

  /** The other end of the final bracket. */
  get other(): number {
    return this.c;
  }

  propose(): number | undefined {
    if (this.done) return undefined;
    if (this.restart) {
      this.c = this.a;
      this.fc = this.fa;
      this.d = this.b - this.a;
      this.e = this.d;
      this.restart = false;
    }
    if (Math.abs(this.fc) < Math.abs(this.fb)) {
      this.a = this.b;
      this.b = this.c;
      this.c = this.a;
      this.fa = this.fb;
      this.fb = this.fc;
      this.fc = this.fa;
    }
    const tol1 = 2 * EPS * Math.abs(this.b) + 0.5 * this.tolerance(this.b);
    const xm = 0.5 * (this.c - this.b);
    if (Math.abs(xm) <= tol1 || this.fb === 0 || this.iterations >= this.maxIterations) {
      this.done = true;
      return undefined;
    }
    if (Math.abs(this.e) >= tol1 && Math.abs(this.fa) > Math.abs(this.fb)) {
      let p: number;
      let q: number;
      const s = this.fb / this.fa;
      if (this.a === this.c) {
        p = 2 * xm * s;
        q = 1 - s;
      } else {
        const qa = this.fa / this.fc;
        const r = this.fb / this.fc;
        p = s * (2 * xm * qa * (qa - r) - (this.b - this.a) * (r - 1));
        q = (qa - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      p = Math.abs(p);
      if (2 * p < 3 * xm * q - Math.abs(tol1 * q) && p < Math.abs(0.5 * this.e * q)) {
        this.e = this.d;
        this.d = p / q;
      } else {
        this.d = xm;
        this.e = xm;
      }
    } else {
      this.d = xm;
      this.e = xm;
    }
    this.a = this.b;
    this.fa = this.fb;
    this.b += Math.abs(this.d) > tol1 ? this.d : Math.sign(xm) * tol1;
    this.iterations++;
    return this.b;
  }

  accept(fb: number): void {
    this.fb = fb;
    if (fb * Math.sign(this.fc) > 0) this.restart = true;
  }
}

// ---------------------------------------------------------------------------------------------
// Fixed points of the 1-D maps.

/** Fixed points are refined until the bracket is this narrow in apex height, m. */
export const FIXED_POINT_TOLERANCE_M = 1e-12;

export interface RootFound {
  y: number;
  s: number;
  /** |P(y) - y| at the returned point, m. */
  residual_m: number;
  iterations: number;
}

export interface CellRoots {
  roots: RootFound[];
  /** Sign changes that turned out to be jumps of the map, not roots (|P - y| stayed large). */
  discontinuities: number;
  /** Brackets inside which a stride failed during refinement (dropped). */
  failedBrackets: number;
  /** |P(y) - y| below the noise floor everywhere: the map is the identity (e.g. a vertical leg). */
  identity: boolean;
}

/**
 * All fixed points of every cell's sampled map: sign changes of P(y) - y between adjacent
 * surviving samples (the probe counts as the sample before the first), refined together.
 */
export async function findFixedPoints(
  cells: readonly MapCell[],
  sampled: readonly SampledMap[],
  evaluate: StrideEvaluator,
): Promise<CellRoots[]> {
  const result: CellRoots[] = cells.map(() => ({ roots: [], discontinuities: 0, failedBrackets: 0, identity: false }));
  const brackets: { cell: number; brent: BrentRoot; failed: boolean }[] = [];
  sampled.forEach((map, cell) => {
    const points = [map.probe, ...map.samples].filter((p): p is MapSample => p !== undefined);
    const alive = points.filter(survives);
    if (alive.length > 1 && alive.every((p) => Math.abs(residual(p)) <= cells[cell].noiseFloor_m)) {
      result[cell].identity = true;
      return;
    }
    const span = map.span_m;
    const sMin = PROBE_FRACTION / Math.max(1, map.samples.length);
    // tolerance in s for FIXED_POINT_TOLERANCE_M in y: dy = 2 R s ds
    const tolerance = (s: number) => FIXED_POINT_TOLERANCE_M / (2 * span * Math.max(Math.abs(s), sMin));
    for (let i = 0; i < points.length; i++) {
      const p = points[i];
      if (!survives(p)) continue;
      const fp = residual(p);
      if (fp === 0) {
        result[cell].roots.push({ y: p.y, s: p.s, residual_m: 0, iterations: 0 });
        continue;
      }
      const q = points[i + 1];
      if (q === undefined || !survives(q)) continue;
      const fq = residual(q);
      if (fq !== 0 && Math.sign(fp) !== Math.sign(fq)) {
        brackets.push({ cell, brent: new BrentRoot(p.s, fp, q.s, fq, tolerance), failed: false });
      }
    }
  });
  for (;;) {
    const pending: { bracket: (typeof brackets)[number]; s: number }[] = [];
    for (const bracket of brackets) {
      if (bracket.failed) continue;
      const s = bracket.brent.propose();
      if (s !== undefined) pending.push({ bracket, s });
    }
    if (pending.length === 0) break;
    const queries = pending.map(({ bracket, s }) => {
      const y = height(cells[bracket.cell], s);
      return { cell: bracket.cell, height: y, speed: speedAt(cells[bracket.cell], y) };
    });
    const outcomes = await evaluate(queries);
    pending.forEach(({ bracket }, i) => {
      const o = outcomes[i];
      if (o.status !== L.STATUS_OK) bracket.failed = true;
      else bracket.brent.accept(o.nextHeight - queries[i].height);
    });
  }
  for (const { cell, brent, failed } of brackets) {
    if (failed) {
      result[cell].failedBrackets++;
      continue;
    }
    const y = height(cells[cell], brent.root);
    // a root, not a jump: |P - y| at the converged point within the noise floor plus the
    // bracket width times a generous bound on |P' - 1| (large only right at the edge)
    const width = Math.abs(height(cells[cell], brent.other) - y);
    if (Math.abs(brent.value) > cells[cell].noiseFloor_m + 1e4 * width) {
      result[cell].discontinuities++;
      continue;
    }
    result[cell].roots.push({ y, s: brent.root, residual_m: Math.abs(brent.value), iterations: brent.iterations });
  }
  for (const r of result) r.roots.sort((a, b) => a.y - b.y);
  return result;
}

// ---------------------------------------------------------------------------------------------
// Derivatives: Richardson extrapolation of central differences, Ridders' choice of entry.

/** Levels of the step sequence h0, h0/2, ..., h0/2^(LEVELS-1). */
export const DIFFERENCE_LEVELS = 6;
const STEP_RATIO = 2;

export interface Derivative {
  value: number;
  /** Ridders' estimate of the error of `value`. */
  error: number;
  /** Step sizes used (the levels that could be evaluated). */
  levels: number;
}

/**
 * Extrapolates central differences d[k] taken at steps h0 / 2^k (k = 0, 1, ...) to zero step. A
 * level that could not be evaluated (null) drops it and every larger step. Returns null if no
 * level is left.
 */
export function richardson(differences: readonly (number | null)[]): Derivative | null {
  let first = differences.length;
  while (first > 0 && differences[first - 1] !== null) first--;
  const d = differences.slice(first) as number[];
  if (d.length === 0) return null;
  if (d.length === 1) return { value: d[0], error: Math.abs(d[0]), levels: 1 };
  const table: number[][] = [];
  let best = { value: d[d.length - 1], error: Infinity };
  for (let k = 0; k < d.length; k++) {
    const row = [d[k]];
    for (let j = 1; j <= k; j++) {
      const factor = STEP_RATIO ** (2 * j);
      row.push(row[j - 1] + (row[j - 1] - table[k - 1][j - 1]) / (factor - 1));
      const error = Math.max(Math.abs(row[j] - row[j - 1]), Math.abs(row[j] - table[k - 1][j - 1]));
      if (error <= best.error) best = { value: row[j], error };
    }
    table.push(row);
  }
  return { ...best, levels: d.length };
}

/** Steps h0 / 2^k for the difference levels. */
export function differenceSteps(h0: number): number[] {
  return Array.from({ length: DIFFERENCE_LEVELS }, (_, k) => h0 / STEP_RATIO ** k);
}

/** Largest step for a derivative at y: a tenth of the distance to either end of the domain. */
export function heightStep(cell: MapCell, y: number, highestSurviving_m: number): number {
  return 0.1 * Math.min(y - cell.placementBound_m, Math.max(0, highestSurviving_m - y), 0.5 * cell.leg_length_m);
}

/** Speed step for the 2-D map: a tenth of the speed, at most 0.05 sqrt(g L0). */
function speedStep(cell: MapCell, v: number): number {
  return 0.1 * Math.min(v, 0.5 * Math.sqrt(cell.gravity_m_per_s2 * cell.leg_length_m));
}

export interface SlopeRequest {
  cell: number;
  y: number;
  /** Largest height step (heightStep). */
  h0: number;
}

/** P'(y) of the 1-D maps at each request, all in one evaluator call. */
export async function mapSlopes(cells: readonly MapCell[], requests: readonly SlopeRequest[], evaluate: StrideEvaluator): Promise<(Derivative | null)[]> {
  const queries: StrideQuery[] = [];
  for (const r of requests) {
    for (const h of differenceSteps(r.h0)) {
      for (const y of [r.y + h, r.y - h]) queries.push({ cell: r.cell, height: y, speed: speedAt(cells[r.cell], y) });
    }
  }
  const outcomes = await evaluate(queries);
  let at = 0;
  return requests.map((r) => {
    if (!(r.h0 > 0)) {
      at += 2 * DIFFERENCE_LEVELS;
      return null;
    }
    const differences = differenceSteps(r.h0).map((h) => {
      const plus = outcomes[at++];
      const minus = outcomes[at++];
      if (plus.status !== L.STATUS_OK || minus.status !== L.STATUS_OK) return null;
      return (plus.nextHeight - minus.nextHeight) / (2 * h);
    });
    return richardson(differences);
  });
}

// ---------------------------------------------------------------------------------------------
// The 2-D apex map (y, v) -> (y', v'): Jacobian, eigenvalues, Newton for its fixed point.

export interface Jacobian2 {
  /** [[dy'/dy, dy'/dv], [dv'/dy, dv'/dv]] */
  matrix: [[number, number], [number, number]];
  /** Ridders' error estimate of each entry. */
  error: [[number, number], [number, number]];
  /** The map at the point itself. */
  next: StrideOutcome;
}

export interface Eigenvalue {
  re: number;
  im: number;
  abs: number;
}

interface JacobianRequest {
  cell: number;
  y: number;
  v: number;
  hy: number;
  hv: number;
}

async function jacobians(requests: readonly JacobianRequest[], evaluate: StrideEvaluator): Promise<(Jacobian2 | null)[]> {
  const queries: StrideQuery[] = [];
  for (const r of requests) {
    queries.push({ cell: r.cell, height: r.y, speed: r.v });
    for (let k = 0; k < DIFFERENCE_LEVELS; k++) {
      const hy = r.hy / STEP_RATIO ** k;
      const hv = r.hv / STEP_RATIO ** k;
      queries.push(
        { cell: r.cell, height: r.y + hy, speed: r.v },
        { cell: r.cell, height: r.y - hy, speed: r.v },
        { cell: r.cell, height: r.y, speed: r.v + hv },
        { cell: r.cell, height: r.y, speed: r.v - hv },
      );
    }
  }
  const outcomes = await evaluate(queries);
  let at = 0;
  return requests.map((r) => {
    const next = outcomes[at++];
    const columns: [(number | null)[], (number | null)[], (number | null)[], (number | null)[]] = [[], [], [], []];
    for (let k = 0; k < DIFFERENCE_LEVELS; k++) {
      const hy = r.hy / STEP_RATIO ** k;
      const hv = r.hv / STEP_RATIO ** k;
      const [yp, ym, vp, vm] = outcomes.slice(at, at + 4);
      at += 4;
      const okY = yp.status === L.STATUS_OK && ym.status === L.STATUS_OK && hy > 0;
      const okV = vp.status === L.STATUS_OK && vm.status === L.STATUS_OK && hv > 0;
      columns[0].push(okY ? (yp.nextHeight - ym.nextHeight) / (2 * hy) : null);
      columns[1].push(okV ? (vp.nextHeight - vm.nextHeight) / (2 * hv) : null);
      columns[2].push(okY ? (yp.nextSpeed - ym.nextSpeed) / (2 * hy) : null);
      columns[3].push(okV ? (vp.nextSpeed - vm.nextSpeed) / (2 * hv) : null);
    }
    const d = columns.map(richardson);
    if (d.some((x) => x === null) || next.status !== L.STATUS_OK) return null;
    const [a, b, c, e] = d as Derivative[];
    return {
      matrix: [[a.value, b.value], [c.value, e.value]],
      error: [[a.error, b.error], [c.error, e.error]],
      next,
    };
  });
}

/** Eigenvalues of a real 2×2 matrix, from its trace and determinant. */
export function eigenvalues2(m: readonly (readonly number[])[]): [Eigenvalue, Eigenvalue] {
  const trace = m[0][0] + m[1][1];
  const det = m[0][0] * m[1][1] - m[0][1] * m[1][0];
  const half = trace / 2;
  const disc = half * half - det;
  if (disc >= 0) {
    // the larger root without cancellation, the smaller from the product (det)
    const big = half + Math.sign(half || 1) * Math.sqrt(disc);
    const small = big === 0 ? 0 : det / big;
    return [
      { re: big, im: 0, abs: Math.abs(big) },
      { re: small, im: 0, abs: Math.abs(small) },
    ];
  }
  const im = Math.sqrt(-disc);
  const abs = Math.hypot(half, im);
  return [
    { re: half, im, abs },
    { re: half, im: -im, abs },
  ];
}

interface PeriodicOrbitSearch {
  converged: boolean;
  y: number;
  v: number;
  iterations: number;
  residual_m: number;
  residualSpeed_m_per_s: number;
  jacobian: Jacobian2 | null;
  reason: string;
}

/**
 * The fixed point of the 2-D map by Newton's method on (y', v') - (y, v) from each start, all
 * searches advancing together (one evaluator call per iteration). Steps are halved while the
 * new point fails or its residual grows.
 */
async function periodicOrbits(
  cells: readonly MapCell[],
  starts: readonly { cell: number; y: number; v: number }[],
  highestSurviving: readonly number[],
  evaluate: StrideEvaluator,
): Promise<PeriodicOrbitSearch[]> {
  const MAX_ITERATIONS = 40;
  const state = starts.map((s) => ({
    ...s,
    best: null as null | { y: number; v: number; jac: Jacobian2; norm: number },
    step: null as null | { dy: number; dv: number; scale: number },
    iterations: 0,
    done: false,
    converged: false,
    reason: '',
  }));
  // residuals are scaled by L0 and sqrt(g L0); converged at the integrator's noise level
  const scaleOf = (cell: number) => ({ y: cells[cell].leg_length_m, v: Math.sqrt(cells[cell].gravity_m_per_s2 * cells[cell].leg_length_m) });
  const toleranceOf = (cell: number) => Math.max(1e-12, (1e-3 * cells[cell].noiseFloor_m) / cells[cell].leg_length_m);
  for (;;) {
    const active = state.filter((s) => !s.done);
    if (active.length === 0) break;
    const trial = active.map((s) =>
      s.step && s.best ? { y: s.best.y + s.step.scale * s.step.dy, v: s.best.v + s.step.scale * s.step.dv } : { y: s.y, v: s.v },
    );
    const requests = active.map((s, i) => {
      const cell = cells[s.cell];
      return {
        cell: s.cell,
        y: trial[i].y,
        v: trial[i].v,
        // above the highest known surviving height, assume as much room above as below
        hy: heightStep(cell, trial[i].y, Math.max(highestSurviving[s.cell], 2 * trial[i].y - cell.placementBound_m)),
        hv: speedStep(cell, trial[i].v),
      };
    });
    const valid = requests.map((r) => r.y > cells[r.cell].placementBound_m && r.v > 0);
    const results = await jacobians(requests.filter((_, i) => valid[i]), evaluate);
    let at = 0;
    active.forEach((s, i) => {
      const jac = valid[i] ? results[at++] : null;
      s.iterations++;
      const sc = scaleOf(s.cell);
      const tolerance = toleranceOf(s.cell);
      const norm = jac ? Math.hypot((jac.next.nextHeight - trial[i].y) / sc.y, (jac.next.nextSpeed - trial[i].v) / sc.v) : Infinity;
      if (s.best && s.step && !(norm < s.best.norm || norm <= tolerance)) {
        // backtrack: halve the step from the best point
        s.step.scale /= 2;
        if (s.step.scale < 1 / 256 || s.iterations >= MAX_ITERATIONS) {
          s.done = true;
          s.converged = s.best.norm <= 100 * tolerance;
          if (!s.converged) s.reason = 'Newton steps stopped reducing the residual (no periodic orbit nearby)';
        }
        return;
      }
      if (!jac) {
        s.done = true;
        s.reason = 'the stride failed at the starting point';
        return;
      }
      s.best = { y: trial[i].y, v: trial[i].v, jac, norm };
      if (norm <= tolerance) {
        s.done = true;
        s.converged = true;
        return;
      }
      if (s.iterations >= MAX_ITERATIONS) {
        s.done = true;
        s.reason = `no convergence in ${MAX_ITERATIONS} Newton iterations`;
        return;
      }
      const gy = jac.next.nextHeight - trial[i].y;
      const gv = jac.next.nextSpeed - trial[i].v;
      // Newton: (J - I) Δ = -G
      const a = jac.matrix[0][0] - 1;
      const b = jac.matrix[0][1];
      const c = jac.matrix[1][0];
      const d = jac.matrix[1][1] - 1;
      const det = a * d - b * c;
      const dy = (-gy * d + gv * b) / det;
      const dv = (-gv * a + gy * c) / det;
      if (!Number.isFinite(dy) || !Number.isFinite(dv)) {
        s.done = true;
        s.reason = 'the Jacobian of the 2-D map minus the identity is singular here';
        return;
      }
      // keep the trial inside the domain: at most 90 % of the way to the leg-placement edge or zero speed
      let scale = 1;
      const room = s.best.y - cells[s.cell].placementBound_m;
      if (s.best.y + dy < cells[s.cell].placementBound_m + 0.1 * room) scale = Math.min(scale, (0.9 * room) / -dy);
      if (s.best.v + dv < 0.1 * s.best.v) scale = Math.min(scale, (0.9 * s.best.v) / -dv);
      s.step = { dy, dv, scale };
    });
  }
  return state.map((s) => ({
    converged: s.converged,
    y: s.best?.y ?? s.y,
    v: s.best?.v ?? s.v,
    iterations: s.iterations,
    residual_m: s.best ? Math.abs(s.best.jac.next.nextHeight - s.best.y) : NaN,
    residualSpeed_m_per_s: s.best ? Math.abs(s.best.jac.next.nextSpeed - s.best.v) : NaN,
    jacobian: s.best?.jac ?? null,
    reason: s.converged ? '' : s.reason,
  }));
}

// ---------------------------------------------------------------------------------------------
// Domain edges: where the surviving range ends at a failure, bisect in s to DOMAIN_TOLERANCE_M.

const DOMAIN_TOLERANCE_M = 1e-9;

async function refineEdges(
  cell: MapCell,
  edges: { alive: MapSample; dead: MapSample }[],
  evaluate: StrideEvaluator,
): Promise<number[]> {
  const state = edges.map((e) => ({ alive: e.alive.s, dead: e.dead.s }));
  for (let it = 0; it < 100; it++) {
    const open = state.filter((e) => Math.abs(height(cell, e.alive) - height(cell, e.dead)) > DOMAIN_TOLERANCE_M);
    if (open.length === 0) break;
    const mids = open.map((e) => 0.5 * (e.alive + e.dead));
    const outcomes = await evaluate(mids.map((s) => ({ cell: 0, height: height(cell, s), speed: speedAt(cell, height(cell, s)) })));
    open.forEach((e, i) => {
      if (outcomes[i].status === L.STATUS_OK) e.alive = mids[i];
      else e.dead = mids[i];
    });
  }
  return state.map((e) => height(cell, e.alive));
}

// ---------------------------------------------------------------------------------------------
// The `map` analysis.

export interface ReturnMapOptions {
  /** Samples of the map over its domain (default 201). */
  samples?: number;
  /** Staircase steps from the start apex (default 20). */
  iterations?: number;
  /** Add the closed-form approximate map (Geyer, Seyfarth, Blickhan 2005) beside the exact one. */
  approx?: boolean;
  /** How batches run (default: the in-process engine). */
  runBatch?: BatchRunner;
}

export const DEFAULT_MAP_SAMPLES = 201;
export const DEFAULT_STAIRCASE_ITERATIONS = 20;

export interface MapSampleOut {
  apex_height_m: number;
  next_apex_height_m: number | null;
  forward_speed_m_per_s: number;
  next_forward_speed_m_per_s: number | null;
  status: string;
}

export interface EigenvalueOut {
  re: number;
  im: number;
  abs: number;
}

export interface SymmetryOut {
  touchdown_angle_deg: number;
  liftoff_angle_deg: number;
  /** liftoff - touchdown angle, deg (0 for a symmetric stance). */
  angle_residual_deg: number;
  touchdown_vertical_speed_m_per_s: number;
  liftoff_vertical_speed_m_per_s: number;
  /** liftoff + touchdown vertical speed, m/s (0 when it reverses). */
  vertical_speed_residual_m_per_s: number;
  contact_s: number;
  stride_s: number;
  peak_leg_force_N: number;
  max_compression_m: number;
}

export interface PeriodicOrbitOut {
  apex_height_m: number;
  forward_speed_m_per_s: number;
  energy_J: number;
  newton_iterations: number;
  residual_m: number;
  residual_m_per_s: number;
  jacobian: [[number, number], [number, number]];
  jacobian_error: [[number, number], [number, number]];
  eigenvalues: EigenvalueOut[];
  stable: boolean;
  symmetry: SymmetryOut | null;
}

export interface FixedPointOut {
  apex_height_m: number;
  forward_speed_m_per_s: number;
  /** Height above the leg-placement edge, m. */
  height_above_edge_m: number;
  /** P'(y*) of the 1-D map at the scenario's energy. */
  slope: number;
  slope_error: number;
  /** |slope| < 1: stable as a fixed point of the 1-D map at this energy. */
  stable: boolean;
  /** |P(y*) - y*| at the refined point, m. */
  residual_m: number;
  /** The 2-D map's speed mismatch at this point, v' - v* (0 up to noise when energy is conserved). */
  next_speed_mismatch_m_per_s: number;
  /** Eigenvalues of the 2-D map's Jacobian, at the point named by eigenvalues_at. */
  eigenvalues: EigenvalueOut[];
  /** 'this_fixed_point' | 'periodic_orbit' | 'this_state_not_a_periodic_orbit' (see note). */
  eigenvalues_at: string;
  /** [[dy'/dy, dy'/dv], [dv'/dy, dv'/dv]] at the point named by eigenvalues_at. */
  jacobian: [[number, number], [number, number]];
  jacobian_error: [[number, number], [number, number]];
  /**
   * All |eigenvalue| < 1 at the periodic orbit (non-conservative policies); null when energy is
   * conserved (the energy direction is neutral, eigenvalue 1: judge by `stable`) or no orbit was found.
   */
  stable_2d: boolean | null;
  /** The 2-D fixed point found by Newton from here (non-conservative policies only). */
  periodic_orbit: PeriodicOrbitOut | null;
  periodic_orbit_note: string | null;
  symmetry: SymmetryOut | null;
}

export interface StaircaseStep {
  apex_height_m: number;
  next_apex_height_m: number | null;
  forward_speed_m_per_s: number;
  status: string;
}

export interface ReturnMapResult {
  energy_J: number;
  ground_height_m: 0;
  ground_note: string;
  energy_conserving: boolean;
  domain: {
    low_m: number;
    high_m: number;
    /** The touchdown height at the apex attack angle: the open lower bound of any map. */
    leg_placement_bound_m: number;
    /** E / (m g): zero forward speed. */
    speed_bound_m: number;
    low_reason: 'leg_placement' | 'stride_fails';
    high_reason: 'speed_bound' | 'stride_fails';
    /** True when no sampled stride survived (low_m = high_m = leg_placement_bound_m then). */
    empty: boolean;
  };
  samples_requested: number;
  samples: MapSampleOut[];
  edge_probe: MapSampleOut | null;
  identity_map: boolean;
  fixed_points: FixedPointOut[];
  fixed_point_note: string;
  fixed_point_search: { tolerance_m: number; discontinuities: number; failed_brackets: number };
  staircase: StaircaseStep[];
  staircase_outcome: {
    status: 'completed' | 'failed';
    steps: number;
    reason: string | null;
    /** Strides until the staircase stays within 1 mm of a stable fixed point, or null. */
    settled_after_strides: number | null;
    settled_to_m: number | null;
    settle_tolerance_m: number;
  };
  approximate?: import('./approximate-map.js').ApproximateMapOut;
  caution: string;
}

const SETTLE_TOLERANCE_M = 1e-3;

function sampleOut(sample: MapSample): MapSampleOut {
  const ok = survives(sample);
  return {
    apex_height_m: sample.y,
    next_apex_height_m: ok ? sample.outcome.nextHeight : null,
    forward_speed_m_per_s: sample.v,
    next_forward_speed_m_per_s: ok ? sample.outcome.nextSpeed : null,
    status: STATUS_NAMES[sample.outcome.status] ?? 'unknown',
  };
}

function matrixOut(m: [[number, number], [number, number]]): [[number, number], [number, number]] {
  return [[m[0][0], m[0][1]], [m[1][0], m[1][1]]];
}

/** Eigenvalues in report order: energy direction (nearest 1) first when energy is conserved. */
function orderedEigenvalues(m: [[number, number], [number, number]], conservative: boolean): EigenvalueOut[] {
  const pair = eigenvalues2(m);
  if (conservative) pair.sort((a, b) => Math.hypot(a.re - 1, a.im) - Math.hypot(b.re - 1, b.im));
  else pair.sort((a, b) => b.abs - a.abs);
  return pair.map((e) => ({ re: e.re, im: e.im, abs: e.abs }));
}

function symmetryOut(records: Float64Array, index: number): SymmetryOut | null {
  const r = (f: number) => records[index * L.R_SIZE + f];
  if (r(L.R_STATUS) !== L.STATUS_OK) return null;
  const td = r(L.R_ATTACK);
  const lo = r(L.R_LIFTOFF_ANGLE);
  return {
    touchdown_angle_deg: td / DEG,
    liftoff_angle_deg: lo / DEG,
    angle_residual_deg: (lo - td) / DEG,
    touchdown_vertical_speed_m_per_s: r(L.R_TOUCHDOWN_VY),
    liftoff_vertical_speed_m_per_s: r(L.R_LIFTOFF_VY),
    vertical_speed_residual_m_per_s: r(L.R_LIFTOFF_VY) + r(L.R_TOUCHDOWN_VY),
    contact_s: r(L.R_CONTACT),
    stride_s: r(L.R_STRIDE_TIME),
    peak_leg_force_N: r(L.R_PEAK_FORCE),
    max_compression_m: r(L.R_MAX_COMPRESSION),
  };
}

/** The highest surviving height known for a sampled map (for derivative steps). */
export function highestSurvivingSample(map: SampledMap): number {
  let high = -Infinity;
  for (const p of [map.probe, ...map.samples]) if (p && survives(p) && p.y > high) high = p.y;
  return high;
}

export async function apexReturnMap(scenario: Scenario, options: ReturnMapOptions = {}): Promise<ReturnMapResult> {
  const samples = options.samples ?? DEFAULT_MAP_SAMPLES;
  const iterations = options.iterations ?? DEFAULT_STAIRCASE_ITERATIONS;
  if (!Number.isInteger(samples) || samples < 2) {
    throw new InputError([{ path: 'samples', expected: 'an integer >= 2', found: describeFound(samples) }]);
  }
  if (!Number.isInteger(iterations) || iterations < 0) {
    throw new InputError([{ path: 'iterations', expected: 'an integer >= 0', found: describeFound(iterations) }]);
  }
  const runBatch = options.runBatch ?? inProcessRunner;
  const energy = startEnergy(scenario);
  const cell = mapCell(scenario, energy);
  const models = [mapModel(scenario)];
  const evaluate = kernelEvaluator(models, runBatch);
  const conservative = conservesEnergy(scenario);

  // samples, domain
  const [sampled] = await sampleMaps([cell], samples, evaluate);
  const points = [sampled.probe, ...sampled.samples].filter((p): p is MapSample => p !== undefined);
  const aliveIndex = points.map((p, i) => (survives(p) ? i : -1)).filter((i) => i >= 0);
  const empty = aliveIndex.length === 0;
  let low = cell.placementBound_m;
  let high = cell.placementBound_m;
  let lowReason: 'leg_placement' | 'stride_fails' = 'leg_placement';
  let highReason: 'speed_bound' | 'stride_fails' = 'speed_bound';
  if (!empty) {
    const first = aliveIndex[0];
    const last = aliveIndex[aliveIndex.length - 1];
    const edges: { alive: MapSample; dead: MapSample }[] = [];
    if (first > 0) edges.push({ alive: points[first], dead: points[first - 1] });
    if (last < points.length - 1) edges.push({ alive: points[last], dead: points[last + 1] });
    const refined = await refineEdges(cell, edges, evaluate);
    low = first > 0 ? refined[0] : points[first].y;
    lowReason = first > 0 ? 'stride_fails' : 'leg_placement';
    high = last < points.length - 1 ? refined[refined.length - 1] : points[last].y;
    highReason = last < points.length - 1 ? 'stride_fails' : 'speed_bound';
  }

  // fixed points and slopes
  const [roots] = await findFixedPoints([cell], [sampled], evaluate);
  const topKnown = Math.max(high, highestSurvivingSample(sampled));
  const slopeRequests = roots.roots.map((root) => ({ cell: 0, y: root.y, h0: heightStep(cell, root.y, topKnown) }));
  const slopes = await mapSlopes([cell], slopeRequests, evaluate);
  const jacobianRequests = roots.roots.map((root) => ({
    cell: 0,
    y: root.y,
    v: speedAt(cell, root.y),
    hy: heightStep(cell, root.y, topKnown),
    hv: speedStep(cell, speedAt(cell, root.y)),
  }));
  const jac = await jacobians(jacobianRequests, evaluate);

  // non-conservative: the 2-D fixed point (periodic orbit) from each 1-D fixed point
  let orbits: PeriodicOrbitSearch[] = [];
  if (!conservative && roots.roots.length) {
    orbits = await periodicOrbits([cell], jacobianRequests.map((r) => ({ cell: 0, y: r.y, v: r.v })), [topKnown], evaluate);
  }

  // stance symmetry at the fixed points (and at the periodic orbits)
  const symmetryQueries: StrideQuery[] = roots.roots.map((root) => ({ cell: 0, height: root.y, speed: speedAt(cell, root.y) }));
  for (const orbit of orbits) if (orbit.converged) symmetryQueries.push({ cell: 0, height: orbit.y, speed: orbit.v });
  const records = await strideRecords(models, runBatch, symmetryQueries);

  let orbitRecord = roots.roots.length;
  const fixedPoints: FixedPointOut[] = [];
  roots.roots.forEach((root, i) => {
    const slope = slopes[i];
    const j = jac[i];
    if (!slope || !j) return; // cannot happen with h0 > 0 inside the surviving domain
    const v = speedAt(cell, root.y);
    const orbit = orbits[i];
    let periodic: PeriodicOrbitOut | null = null;
    let note: string | null = null;
    if (!conservative) {
      if (orbit?.converged && orbit.jacobian) {
        const m = matrixOut(orbit.jacobian.matrix);
        const eig = orderedEigenvalues(m, false);
        periodic = {
          apex_height_m: orbit.y,
          forward_speed_m_per_s: orbit.v,
          energy_J: cell.mass_kg * cell.gravity_m_per_s2 * orbit.y + 0.5 * cell.mass_kg * orbit.v ** 2,
          newton_iterations: orbit.iterations,
          residual_m: orbit.residual_m,
          residual_m_per_s: orbit.residualSpeed_m_per_s,
          jacobian: m,
          jacobian_error: matrixOut(orbit.jacobian.error),
          eigenvalues: eig,
          stable: eig.every((e) => e.abs < 1),
          symmetry: symmetryOut(records, orbitRecord++),
        };
      } else {
        note = orbit ? orbit.reason : 'no Newton search was run';
      }
    }
    const m = periodic ? periodic.jacobian : matrixOut(j.matrix);
    fixedPoints.push({
      apex_height_m: root.y,
      forward_speed_m_per_s: v,
      height_above_edge_m: root.y - cell.placementBound_m,
      slope: slope.value,
      slope_error: slope.error,
      stable: Math.abs(slope.value) < 1,
      residual_m: root.residual_m,
      next_speed_mismatch_m_per_s: j.next.nextSpeed - v,
      eigenvalues: periodic ? periodic.eigenvalues : orderedEigenvalues(m, conservative),
      eigenvalues_at: conservative ? 'this_fixed_point' : periodic ? 'periodic_orbit' : 'this_state_not_a_periodic_orbit',
      jacobian: m,
      jacobian_error: periodic ? periodic.jacobian_error : matrixOut(j.error),
      stable_2d: periodic ? periodic.stable : null,
      periodic_orbit: periodic,
      periodic_orbit_note: note,
      symmetry: symmetryOut(records, i),
    });
  });

  // staircase from the start apex
  const staircase: StaircaseStep[] = [];
  let y = scenario.start.apex_height_m;
  let failure: number | null = null;
  for (let step = 0; step < iterations; step++) {
    const v = speedAt(cell, y);
    const [o] = await evaluate([{ cell: 0, height: y, speed: v }]);
    const ok = o.status === L.STATUS_OK;
    staircase.push({ apex_height_m: y, next_apex_height_m: ok ? o.nextHeight : null, forward_speed_m_per_s: v, status: STATUS_NAMES[o.status] ?? 'unknown' });
    if (!ok) {
      failure = o.status;
      break;
    }
    y = o.nextHeight;
  }
  const settled = settling(staircase, fixedPoints);

  const result: ReturnMapResult = {
    energy_J: energy,
    ground_height_m: 0,
    ground_note:
      scenario.terrain.kind === 'flat'
        ? 'flat ground at height 0'
        : `the map is taken on flat ground at height 0; the scenario's ${scenario.terrain.kind} terrain is not used`,
    energy_conserving: conservative,
    domain: {
      low_m: low,
      high_m: high,
      leg_placement_bound_m: cell.placementBound_m,
      speed_bound_m: cell.speedBound_m,
      low_reason: lowReason,
      high_reason: highReason,
      empty,
    },
    samples_requested: samples,
    samples: sampled.samples.map(sampleOut),
    edge_probe: sampled.probe ? sampleOut(sampled.probe) : null,
    identity_map: roots.identity,
    fixed_points: fixedPoints,
    fixed_point_note: fixedPointNote(conservative, roots.identity),
    fixed_point_search: {
      tolerance_m: FIXED_POINT_TOLERANCE_M,
      discontinuities: roots.discontinuities,
      failed_brackets: roots.failedBrackets,
    },
    staircase,
    staircase_outcome: {
      status: failure === null ? 'completed' : 'failed',
      steps: staircase.length,
      reason: failure === null ? null : (STATUS_NAMES[failure] ?? 'unknown'),
      settled_after_strides: settled?.strides ?? null,
      settled_to_m: settled?.to ?? null,
      settle_tolerance_m: SETTLE_TOLERANCE_M,
    },
    caution: SAFETY_CAUTION,
  };
  if (options.approx) {
    const { approximateReturnMap } = await import('./approximate-map.js');
    result.approximate = await approximateReturnMap(scenario, energy, samples, result.samples);
  }
  return result;
}

function fixedPointNote(conservative: boolean, identity: boolean): string {
  if (identity) {
    return 'P(y) = y within the integrator accuracy over the whole domain (e.g. a vertical leg): every height is a neutral fixed point, none is listed';
  }
  if (conservative) {
    return (
      'the policy conserves energy: each fixed point of the 1-D map is a fixed point (periodic gait) of the 2-D apex map ' +
      '(height, speed); its eigenvalues are 1 (the energy direction, listed first) and the 1-D slope'
    );
  }
  return (
    "the policy changes the energy in stance: a fixed point of the 1-D map at the scenario's energy returns to its height but " +
    'not to its speed, so it is not a periodic gait; from each one, Newton on the 2-D map (height, speed) looks for the ' +
    'periodic orbit (its own energy) and eigenvalues/stable_2d are those of that orbit (periodic_orbit); slope and stable ' +
    "remain those of the 1-D map at the scenario's energy"
  );
}

/** Strides until the staircase stays within SETTLE_TOLERANCE_M of a stable fixed point. */
function settling(staircase: readonly StaircaseStep[], fixedPoints: readonly FixedPointOut[]): { strides: number; to: number } | null {
  const heights = staircase.map((s) => s.apex_height_m);
  const last = staircase[staircase.length - 1];
  if (last?.next_apex_height_m === null || last === undefined) return null;
  heights.push(last.next_apex_height_m);
  const final = heights[heights.length - 1];
  const stable = fixedPoints.filter((f) => f.stable);
  if (stable.length === 0) return null;
  const target = stable.reduce((a, b) => (Math.abs(a.apex_height_m - final) <= Math.abs(b.apex_height_m - final) ? a : b)).apex_height_m;
  let k = heights.length;
  while (k > 0 && Math.abs(heights[k - 1] - target) <= SETTLE_TOLERANCE_M) k--;
  if (k === heights.length) return null;
  return { strides: k, to: target };
}

