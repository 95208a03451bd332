// `map` for the two-leg model: the return map on its section at the scenario's energy, on flat
// ground at height 0, with every fixed point found and classified by all eigenvalues.
//
// Section and reduction (DEVELOPERS.md, "Model kinds"): walking strides run from one
// single-support apex to the next; the state there is (height y, forward speed v, offset d = body
// x - stance foot x), the vertical speed being zero. Without damping the energy
// E = m g y + m v^2 / 2 + k (L0 - sqrt(y^2 + d^2))^2 / 2 is conserved, so v follows from (y, d)
// and the reduced map is 2-D: (y, d) -> (y', d'). Running strides run from flight apex to flight
// apex, (y, v), reduced to y. With two identical legs the map is one stride (the legs' roles
// swap, the map is the same); with different legs it is two strides, a whole gait cycle.
//
// Stability is decided by ALL eigenvalues of the reduced map's Jacobian (|lambda| < 1 for every
// one). The slope of a 1-D cut along the symmetric states (d = 0) is not a stability test for
// walking: the offset direction is often the unstable one. The full map (y, v, d) -> (y', v', d')
// keeps the energy direction and has the extra eigenvalue 1 (reported as a check).
//
// Fixed points: the residual y' - y along the symmetric line d = 0 is scanned for sign changes,
// and a grid over (y, d) for local minima of |F(z) - z|; each seed goes to Levenberg-Marquardt on
// F(z) - z with central-difference Jacobians (Marquardt 1963, SIAM J. Appl. Math. 11(2):431-441),
// and the converged points are merged.

import * as L from '../../../assembly/layout.js';
import { type BatchRunner, conservesEnergy, inProcessRunner } from './return-map.js';
import { loadEngine } from '../engine.js';
import { buildModel, STATUS_NAMES } from '../model.js';
import {
  type BipedScenario,
  type Gait,
  type StartLeg,
  type SectionState,
  legParameters,
  legsIdentical,
  sectionEnergy,
  sectionInput,
  speedAtEnergy,
  startState,
} from '../models/biped.js';
import { SAFETY_CAUTION } from '../safety.js';
import { attackAtApexDeg } from '../scenario.js';
import { type Eigenvalue, eigenvaluesWithModulus as eigenvalues } from '../eigen.js';

const DEG = Math.PI / 180;

export interface BipedMapOptions {
  /** Samples along the symmetric line (default 41). */
  samples?: number;
  /** Staircase strides from the start (default 20). */
  iterations?: number;
  runBatch?: BatchRunner;
}

export interface BipedScanSample {
  height_m: number;
  next_height_m: number | null;
  next_offset_m: number | null;
  /** Stable status name of the map's strides ("completed" when they reached the section). */
  status: string;
}

export interface BipedFixedPoint {
  height_m: number;
  speed_m_per_s: number;
  offset_m: number;
  leg: StartLeg;
  /** Offset zero within the map's accuracy: the gait is time-reversal symmetric about the section. */
  symmetric: boolean;
  /** |F(z) - z| at the point, m. */
  residual_m: number;
  /** Eigenvalues of the reduced map's Jacobian, largest modulus first. */
  eigenvalues: Eigenvalue[];
  /** Every eigenvalue inside the unit circle. */
  stable: boolean;
  /** Eigenvalues of the full map (energy not fixed): the reduced ones and one close to 1. */
  full_eigenvalues: Eigenvalue[];
  /** |lambda - 1| of the full map's eigenvalue closest to 1 (energy conservation, a check). */
  energy_eigenvalue_deviation: number;
  /** The fixed point's strides. */
  stride_s: number;
  double_support_s: number | null;
  peak_vertical_force_N: number;
  /**
   * Walking: local maxima of the vertical ground force of the leg that touches down in the first
   * stride, over its whole contact, N (two humps: the M shape of walking). Running: of the landing leg.
   */
  leg_vertical_force_peaks_N: number[];
}

export interface BipedMapResult {
  gait: Gait;
  energy_J: number;
  /** Strides per application of the map: 1 with identical legs, 2 (a gait cycle) otherwise. */
  map_strides: number;
  /**
   * No damping and the same stiffness in compression and extension: the energy is conserved and
   * the map is reduced by it. Otherwise fixed points and eigenvalues are those of the full map
   * (reduced_state lists its coordinates) and energy_eigenvalue_deviation is null.
   */
  energy_conserving: boolean;
  /** The reduced state's coordinates. */
  reduced_state: string[];
  domain: { height_low_m: number; height_high_m: number; offset_low_m: number; offset_high_m: number };
  scan: BipedScanSample[];
  fixed_points: BipedFixedPoint[];
  staircase: { height_m: number; speed_m_per_s: number; offset_m: number; leg: StartLeg }[];
  staircase_outcome: string;
  caution: string;
}

interface Eval {
  ok: boolean;
  status: number;
  z: number[]; // next reduced state
  full: number[]; // next full state (y, v[, d])
}

export async function bipedReturnMap(scenario: BipedScenario, options: BipedMapOptions = {}): Promise<BipedMapResult> {
  const runBatch = options.runBatch ?? inProcessRunner;
  const samples = options.samples ?? 41;
  const iterations = options.iterations ?? 20;
  const start = startState(scenario);
  const gait = start.gait;
  const walking = gait === 'walking';
  const energy = sectionEnergy(scenario, start);
  const n = legsIdentical(scenario) ? 1 : 2;
  const conserving = conservesEnergy(scenario) && legParameters(scenario).every((l) => l.damping_N_s_per_m === 0);
  const legs = legParameters(scenario);
  const L0 = legs[start.leg === 'right' ? 1 : 0].length_m;
  const model = buildModel({ ...scenario, terrain: { kind: 'flat' } });
  const m = scenario.body.mass_kg;
  const g = scenario.body.gravity_m_per_s2;
  const tol = 1e3 * (scenario.integrator.relative_tolerance * L0 + scenario.integrator.absolute_tolerance);

  const sinA = Math.sin(attackAtApexDeg(scenario.policy.angle) * DEG);
  const heightLow = L0 * sinA;
  const heightHigh = walking ? Math.min(L0, energy / (m * g)) : energy / (m * g);
  const offsetSpan = walking ? 0.25 * L0 : 0;

  const stateOf = (z: readonly number[]): SectionState | null => {
    const offset = walking ? z[1] : 0;
    const speed = speedAtEnergy(scenario, energy, { gait, height_m: z[0], offset_m: offset, leg: start.leg });
    if (!Number.isFinite(speed) || !(z[0] > 0)) return null;
    if (walking && Math.hypot(z[0], offset) > L0) return null;
    return { gait, height_m: z[0], speed_m_per_s: speed, offset_m: offset, leg: start.leg };
  };

  // Many map evaluations in one kernel call; `states` may hold full states (energy free).
  const evaluate = async (states: (SectionState | null)[]): Promise<Eval[]> => {
    const rows = states.map((s, i) => ({ s, i })).filter((r) => r.s !== null) as { s: SectionState; i: number }[];
    const out: Eval[] = states.map(() => ({ ok: false, status: L.STATUS_LEG_NOT_PLACEABLE, z: [], full: [] }));
    if (rows.length === 0) return out;
    const inputs = new Float64Array(rows.length * L.I_SIZE);
    rows.forEach((r, k) => inputs.set(sectionInput(r.s), k * L.I_SIZE));
    const batch = await runBatch({ model, inputs, strides: n });
    rows.forEach((r, k) => {
      const at = (f: number) => batch.summaries[k * L.S_SIZE + f];
      const status = at(L.S_STATUS);
      const sameSection = at(L.S_FINAL_SECTION_KIND) === (walking ? L.SECTION_SINGLE_SUPPORT_APEX : L.SECTION_FLIGHT_APEX);
      const ok = status === L.STATUS_OK && sameSection;
      const y = at(L.S_FINAL_HEIGHT);
      const v = at(L.S_FINAL_SPEED);
      const d = at(L.S_FINAL_OFFSET);
      out[r.i] = {
        ok,
        status: ok ? L.STATUS_OK : status === L.STATUS_OK ? L.STATUS_GAIT_CHANGED : status,
        z: walking ? [y, d] : [y],
        full: walking ? [y, v, d] : [y, v],
      };
    });
    return out;
  };

  // ---- scan along the symmetric line
  const heights = Array.from({ length: samples }, (_, i) => heightLow + ((heightHigh - heightLow) * (i + 0.5)) / samples);
  const lineEvals = await evaluate(heights.map((y) => stateOf(walking ? [y, 0] : [y])));
  const scan: BipedScanSample[] = heights.map((y, i) => ({
    height_m: y,
    next_height_m: lineEvals[i].ok ? lineEvals[i].z[0] : null,
    next_offset_m: lineEvals[i].ok && walking ? lineEvals[i].z[1] : null,
    status: STATUS_NAMES[lineEvals[i].status] ?? 'failed',
  }));
  const seeds: number[][] = [];
  for (let i = 0; i + 1 < heights.length; i++) {
    const a = lineEvals[i];
    const b = lineEvals[i + 1];
    if (!a.ok || !b.ok) continue;
    const fa = a.z[0] - heights[i];
    const fb = b.z[0] - heights[i + 1];
    if (fa === 0 || fa * fb < 0) {
      const y = heights[i] + ((heights[i + 1] - heights[i]) * fa) / (fa - fb || 1);
      seeds.push(walking ? [y, 0] : [y]);
    }
  }
  // ---- walking: a grid over (y, d) for asymmetric fixed points (local minima of the residual)
  if (walking) {
    const ny = Math.max(9, Math.min(25, Math.round(samples / 2)));
    const nd = 9;
    const grid: number[][] = [];
    for (let i = 0; i < ny; i++) {
      for (let j = 0; j < nd; j++) {
        grid.push([heightLow + ((heightHigh - heightLow) * (i + 0.5)) / ny, -offsetSpan + (2 * offsetSpan * j) / (nd - 1)]);
      }
    }
    const ev = await evaluate(grid.map((z) => stateOf(z)));
    const res = grid.map((z, k) => (ev[k].ok ? Math.hypot(ev[k].z[0] - z[0], ev[k].z[1] - z[1]) : Infinity));
    for (let i = 0; i < ny; i++) {
      for (let j = 0; j < nd; j++) {
        const k = i * nd + j;
        if (!Number.isFinite(res[k])) continue;
        let minimum = true;
        for (let di = -1; di <= 1 && minimum; di++) {
          for (let dj = -1; dj <= 1; dj++) {
            const ii = i + di;
            const jj = j + dj;
            if ((di || dj) && ii >= 0 && ii < ny && jj >= 0 && jj < nd && res[ii * nd + jj] < res[k]) {
              minimum = false;
              break;
            }
          }
        }
        if (minimum && res[k] < 0.05 * L0) seeds.push(grid[k]);
      }
    }
  }

  // ---- Levenberg-Marquardt on G(z) = F(z) - z
  const dim = walking ? 2 : 1;
  // full: z holds the full state (y, v[, d]) when fullMode, else the reduced one (made full here)
  const jacobian = async (z: number[], step: number, full = false): Promise<{ J: number[][]; G: number[]; ok: boolean }> => {
    const base = full ? (fullMode ? fromFull(z) : fullState(z)) : stateOf(z);
    const k = full ? dim + 1 : dim;
    const points: (SectionState | null)[] = [base];
    const coords = full ? toFull(base) : z;
    if (coords.length === 0) return { J: [], G: [], ok: false };
    for (let c = 0; c < k; c++) {
      for (const sgn of [1, -1]) {
        const w = coords.slice();
        w[c] += sgn * step;
        points.push(full ? fromFull(w) : stateOf(w));
      }
    }
    const ev = await evaluate(points);
    if (ev.some((e) => !e.ok)) return { J: [], G: [], ok: false };
    const out = (e: Eval) => (full ? e.full : e.z);
    const G = out(ev[0]).map((v, i) => v - coords[i]);
    const J = Array.from({ length: k }, (_, i) =>
      Array.from({ length: k }, (_, c) => (out(ev[1 + 2 * c])[i] - out(ev[2 + 2 * c])[i]) / (2 * step)),
    );
    return { J, G, ok: true };
  };
  function fullState(z: number[]): SectionState | null {
    return stateOf(z);
  }
  function toFull(s: SectionState | null): number[] {
    if (!s) return [];
    return walking ? [s.height_m, s.speed_m_per_s, s.offset_m] : [s.height_m, s.speed_m_per_s];
  }
  function fromFull(w: number[]): SectionState | null {
    if (!(w[0] > 0) || !(w[1] >= 0)) return null;
    return { gait, height_m: w[0], speed_m_per_s: w[1], offset_m: walking ? w[2] : 0, leg: start.leg };
  }

  // Without energy conservation (damping, or a stiffness that differs between compression and
  // extension) the energy is no constant of the map: fixed points are sought, and classified, on
  // the full map (y, v[, d]) instead.
  const fullMode = !conserving;
  const stateAny = (z: number[]) => (fullMode ? fromFull(z) : stateOf(z));
  const outAny = (e: Eval) => (fullMode ? e.full : e.z);
  const step = 1e-5 * L0;
  const found: number[][] = [];
  for (const seed of seeds) {
    let z = fullMode ? toFull(stateOf(seed)) : seed.slice();
    if (z.length === 0) continue;
    let lambda = 1e-3;
    let converged = false;
    for (let it = 0; it < 40; it++) {
      const { J, G, ok } = await jacobian(z, step, fullMode);
      if (!ok) break;
      const norm = Math.hypot(...G);
      if (norm < tol) converged = true;
      if (norm < 1e-3 * tol) break;
      // A = J - I (the Jacobian of G); solve (A^T A + lambda diag(A^T A)) dz = -A^T G
      const A = J.map((row, i) => row.map((v, j) => v - (i === j ? 1 : 0)));
      let improved = false;
      for (let tries = 0; tries < 8; tries++) {
        const dz = solveDamped(A, G, lambda);
        const trial = z.map((v, i) => v + dz[i]);
        const [e] = await evaluate([stateAny(trial)]);
        if (e.ok) {
          const trialNorm = Math.hypot(...outAny(e).map((v, i) => v - trial[i]));
          if (trialNorm < norm) {
            z = trial;
            lambda = Math.max(lambda / 10, 1e-12);
            improved = true;
            break;
          }
        }
        lambda *= 10;
      }
      if (!improved) break; // converged as far as the integrator's accuracy allows
    }
    if (!converged) continue;
    // distinct fixed points lie further apart than a tenth of a millimetre per metre of leg
    if (!found.some((f) => Math.hypot(...f.map((v, i) => v - z[i])) < 1e-4 * L0)) found.push(z);
  }
  found.sort((a, b) => a[0] - b[0]);

  const engine = await loadEngine();
  const fixedPoints: BipedFixedPoint[] = [];
  for (const z of found) {
    const full = await jacobian(z, step, true);
    const reduced = fullMode ? full : await jacobian(z, step);
    const state = stateAny(z)!;
    const eig = reduced.ok ? eigenvalues(reduced.J) : [];
    const fullEig = full.ok ? eigenvalues(full.J) : [];
    const deviation =
      fullEig.length && !fullMode ? Math.min(...fullEig.map((e) => Math.hypot(e.re - 1, e.im))) : Number.NaN;
    // n + 1 strides: the leg landing in the first stride completes its contact
    const trace = engine.trace(model, sectionInput(state), n + 1, 1e-4);
    const landing = Number.isNaN(trace.records[L.R_TOUCHDOWN_TIME_0]) ? 1 : 0;
    const rec = (s: number, f: number) => trace.records[s * L.R_SIZE + f];
    let doubleSupport = 0;
    let strideTime = 0;
    let peak = 0;
    for (let s = 0; s < n; s++) {
      strideTime += rec(s, L.R_STRIDE_TIME);
      const ds = rec(s, L.R_DOUBLE_END) - rec(s, L.R_DOUBLE_START);
      if (Number.isFinite(ds)) doubleSupport += ds;
      peak = Math.max(peak, rec(s, L.R_PEAK_VERTICAL_FORCE));
    }
    fixedPoints.push({
      height_m: state.height_m,
      speed_m_per_s: state.speed_m_per_s,
      offset_m: state.offset_m,
      leg: start.leg,
      symmetric: walking ? Math.abs(state.offset_m) < 1e-6 * L0 : true,
      residual_m: reduced.ok ? Math.hypot(...reduced.G) : Number.NaN,
      eigenvalues: eig,
      stable: eig.length > 0 && eig.every((e) => e.modulus < 1),
      full_eigenvalues: fullEig,
      energy_eigenvalue_deviation: deviation,
      stride_s: strideTime,
      double_support_s: walking ? doubleSupport : null,
      peak_vertical_force_N: peak,
      leg_vertical_force_peaks_N: legVerticalForcePeaks(trace.samples, landing, m * g),
    });
  }

  // ---- staircase from the start (on flat ground)
  const stair = await runBatch({ model, inputs: sectionInput(start), strides: Math.max(iterations, 1), records: true });
  const staircase = [{ height_m: start.height_m, speed_m_per_s: start.speed_m_per_s, offset_m: start.offset_m, leg: start.leg }];
  const done = iterations === 0 ? 0 : stair.summaries[L.S_STRIDES_COMPLETED];
  for (let s = 0; s < done; s++) {
    const r = (f: number) => stair.records![s * L.R_SIZE + f];
    staircase.push({
      height_m: r(L.R_NEXT_APEX_HEIGHT),
      speed_m_per_s: r(L.R_NEXT_APEX_SPEED),
      offset_m: walking ? r(L.R_NEXT_SECTION_OFFSET) : 0,
      leg: legOf(r(L.R_NEXT_SECTION_LEG)),
    });
  }
  const stairStatus = stair.summaries[L.S_STATUS];

  return {
    gait,
    energy_J: energy,
    map_strides: n,
    energy_conserving: conserving,
    reduced_state: fullMode
      ? walking
        ? ['height_m', 'speed_m_per_s', 'offset_m']
        : ['height_m', 'speed_m_per_s']
      : walking
        ? ['height_m', 'offset_m']
        : ['height_m'],
    domain: { height_low_m: heightLow, height_high_m: heightHigh, offset_low_m: -offsetSpan, offset_high_m: offsetSpan },
    scan,
    fixed_points: fixedPoints,
    staircase,
    staircase_outcome: iterations === 0 ? 'completed' : (STATUS_NAMES[stairStatus] ?? 'failed'),
    caution: SAFETY_CAUTION,
  };
}

function legOf(code: number): StartLeg {
  return code === 1 ? 'right' : code === 2 ? 'both' : 'left';
}

// (A^T A + lambda diag(A^T A)) dz = -A^T G for 1 or 2 unknowns.
function solveDamped(A: number[][], G: number[], lambda: number): number[] {
  const k = A.length;
  const M = Array.from({ length: k }, (_, i) => Array.from({ length: k }, (_, j) => A.reduce((s, row) => s + row[i] * row[j], 0)));
  const rhs = Array.from({ length: k }, (_, i) => -A.reduce((s, row, r) => s + row[i] * G[r], 0));
  for (let i = 0; i < k; i++) M[i][i] *= 1 + lambda;
  if (k === 1) return [rhs[0] / M[0][0]];
  const det = M[0][0] * M[1][1] - M[0][1] * M[1][0];
  return [(rhs[0] * M[1][1] - M[0][1] * rhs[1]) / det, (M[0][0] * rhs[1] - M[1][0] * rhs[0]) / det];
}

/**
 * Local maxima of one leg's vertical ground force (its force along the leg times the leg's
 * vertical direction) in two-leg trace samples, above a tenth of the body weight, over its first
 * contact in the samples: the humps of the force curve.
 */
export function legVerticalForcePeaks(samples: Float64Array, leg: number, weight: number): number[] {
  const count = samples.length / L.T_SIZE;
  const [fxF, fyF, forceF] = leg === 0 ? [L.T_FOOT_X, L.T_FOOT_Y, L.T_LEG_FORCE] : [L.T_FOOT2_X, L.T_FOOT2_Y, L.T_LEG_FORCE2];
  const fy: number[] = [];
  let inContact = false;
  for (let i = 0; i < count; i++) {
    const at = (f: number) => samples[i * L.T_SIZE + f];
    const stance = at(L.T_PHASE) !== L.PHASE_FLIGHT && at(forceF) !== 0;
    if (!stance) {
      if (inContact) break;
      continue;
    }
    inContact = true;
    const dx = at(L.T_X) - at(fxF);
    const dy = at(L.T_Y) - at(fyF);
    fy.push((at(forceF) * dy) / Math.hypot(dx, dy));
  }
  const peaks: number[] = [];
  for (let i = 1; i + 1 < fy.length; i++) {
    if (fy[i] > 0.1 * weight && fy[i] > fy[i - 1] && fy[i] >= fy[i + 1]) peaks.push(fy[i]);
  }
  return peaks;
}
