// One-step deadbeat tables for unknown ground height, scheduled on time since apex
// (the time-based method of Ernst, Geyer & Blickhan 2009, CLAWAR 2009 pp. 639–644,
// and Wu & Geyer 2013, IEEE Trans. Robotics 29(5):1114–1124).
//
// The idea: from a known apex (y*, v*), the fall time to touchdown maps one-to-one onto
// the height of the ground met, t = sqrt(2 (y* − h − L0 sin α) / g). So for each ground
// height h in a range, solve for the attack angle α(h) (and, to hold speed as well, the
// extension stiffness k_ext(h)) that returns the body to the target apex on the next
// stride; the pairs (t(h), α(h)) are then a table on time since apex that the robot can
// run without knowing h: the ground it meets picks the right entry by the time it lands.
//
// Two targets (`target`):
//  - 'absolute' (mode 'angle', and on request 'angle_and_stiffness'): the next apex returns
//    to the same absolute height y*. With a conservative leg the speed then returns to v*
//    as well (energy is conserved, heights are absolute), so one table holds the whole apex
//    state — but only while the ground met stays within the table's range of the start's
//    ground: on ground that keeps rising (a slope, stairs) the apex does not rise with it,
//    and the leg can no longer be placed.
//  - 'above_ground_met' (mode 'angle_and_stiffness', its default): the next apex is y* + h,
//    the same height above the ground just met, at the same speed v*; that takes m g h of
//    energy (a step down gives it, a step up takes it), supplied by switching to a
//    different extension stiffness at maximum compression (the work is ½(k_ext − k_comp) δ²).
//    Heights and times are the same from any apex (the flight only sees differences), so
//    stride after stride the table holds the apex y* above the ground of the last touchdown
//    while each step between touchdowns stays within its range: it follows slopes and stairs.
// A table is exact for one stride from the target apex. Stride after stride on a permanent
// step, an apex error looks to the angle-only table like a ground error, and on the human-like
// reference body it grows by about 1.3× per stride; the angle-and-stiffness table holds the
// apex (pronk deadbeat's step check runs this test for every table it makes).

import * as L from '../../../assembly/layout.js';
import { InputError } from '../errors.js';
import { loadEngine, rolloutInput, type Engine, type ModelBlock } from '../engine.js';
import { buildModel, DEG, STATUS_NAMES } from '../model.js';
import { BOUNDS, boundText, parseScenario, type Scenario } from '../scenario.js';

export type DeadbeatMode = 'angle' | 'angle_and_stiffness';
/** What the next apex height is measured from: the start's ground (absolute), or the ground just met. */
export type DeadbeatTarget = 'absolute' | 'above_ground_met';
export const DEADBEAT_TARGETS: readonly DeadbeatTarget[] = ['absolute', 'above_ground_met'];

export interface DeadbeatOptions {
  /** Ground heights met at the next touchdown, m (absolute), lo < hi. */
  groundRange_m: [number, number];
  /** Ground heights solved for (table knots before sorting by time), >= 2. */
  knots?: number;
  mode?: DeadbeatMode;
  /** The next apex's height reference; default: absolute for mode angle, above_ground_met for angle_and_stiffness. */
  target?: DeadbeatTarget;
  /** Attack angles searched, deg. */
  attackRange_deg?: [number, number];
  /** Attack angles sampled per ground height to find every root. */
  angleSamples?: number;
  /** Extension stiffness allowed (mode angle_and_stiffness), N/m. */
  extensionStiffnessRange_N_per_m?: [number, number];
  /** Largest apex error allowed half-way between knots; knots are added until it holds, m. */
  tolerance_m?: number;
  /** Most knots the table may grow to (at most DEADBEAT_MAX_KNOTS). */
  maxKnots?: number;
}

/** The knot refinement's caps: the work a tolerance can imply is bounded by these. */
export const DEADBEAT_MAX_KNOTS = 4000;
export const DEADBEAT_MAX_ROUNDS = 12;
/** The smallest tolerance is this many times the integrator's accuracy at the target apex. */
export const TOLERANCE_NOISE_FACTOR = 100;
/** Strides per kernel call: bounds the memory a large refinement takes. */
const STRIDES_PER_CALL = 8192;

export interface DeadbeatValidity {
  /** What the table returns the body to, stride after stride. */
  holds: string;
  /** What a touchdown's ground height is measured from for the table to apply. */
  ground_reference: 'start_ground' | 'previous_touchdown';
  /** The ground heights (relative to ground_reference) over which the table was solved, m; null when none was. */
  valid_ground_m: [number, number] | null;
  valid_while: string;
  beyond: string;
}

/** How the knot refinement ended (the work it did, against its caps). */
export interface DeadbeatRefinement {
  /** Refinement rounds run (each solves the midpoints whose apex error exceeded the tolerance). */
  rounds: number;
  max_rounds: number;
  max_knots: number;
  tolerance_m: number;
  /** The smallest tolerance accepted for this scenario, m (TOLERANCE_NOISE_FACTOR × the integrator's accuracy). */
  tolerance_floor_m: number;
  stopped_by: 'tolerance_met' | 'knot_cap' | 'round_cap' | 'too_few_knots';
}

export interface DeadbeatKnot {
  ground_height_m: number;
  time_since_apex_s: number;
  attack_deg: number;
  compression_N_per_m: number;
  extension_N_per_m: number;
  next_apex_height_m: number;
  next_forward_speed_m_per_s: number;
  /** Next apex height minus its target, m. */
  residual_height_m: number;
  /** Next forward speed minus its target, m/s. */
  residual_speed_m_per_s: number;
  peak_leg_force_N: number;
  peak_friction_ratio: number;
  max_compression_m: number;
}

export interface UnsolvedRange {
  from_m: number;
  to_m: number;
  reason: string;
}

export interface DeadbeatTable {
  mode: DeadbeatMode;
  target: {
    apex_height_m: number;
    forward_speed_m_per_s: number;
    /** How the next apex height is measured: absolute, or above the ground met. */
    height_reference: DeadbeatTarget;
  };
  /** What the table holds and where it stops being valid, in numbers and in words. */
  validity: DeadbeatValidity;
  ground_range_m: [number, number];
  /** Knots in increasing time since apex (decreasing ground height). */
  knots: DeadbeatKnot[];
  unsolved: UnsolvedRange[];
  /** The largest interval of ground heights around 0 with every knot solved, m. */
  solved_range_m: [number, number] | null;
  /** The policy block to put in a scenario: time-table angle (and stiffness). */
  policy: {
    angle: { kind: 'time_table'; time_since_apex_s: number[]; attack_deg: number[] };
    stiffness:
      | { kind: 'constant' }
      | { kind: 'time_table'; time_since_apex_s: number[]; compression_N_per_m: number[]; extension_N_per_m: number[] };
  };
  /** The table run on the simulator at ground heights between its knots (interpolation error). */
  check: { ground_height_m: number; residual_height_m: number | null; residual_speed_m_per_s: number | null; status: string }[];
  max_abs_residual_at_knots_m: number;
  max_abs_residual_between_knots_m: number | null;
  refinement: DeadbeatRefinement;
}

interface StrideOutcome {
  ok: boolean;
  status: number;
  height: number;
  speed: number;
  tTouch: number;
  peakForce: number;
  friction: number;
  compression: number;
}

function optionIssue(path: string, expected: string, found: unknown): InputError {
  return new InputError([{ path, expected, found: typeof found === 'string' ? found : JSON.stringify(found) }]);
}

export async function synthesizeDeadbeat(scenario: Scenario, options: DeadbeatOptions): Promise<DeadbeatTable> {
  const mode = options.mode ?? 'angle';
  if (mode !== 'angle' && mode !== 'angle_and_stiffness') throw optionIssue('mode', 'angle or angle_and_stiffness', mode);
  const target: DeadbeatTarget = options.target ?? (mode === 'angle' ? 'absolute' : 'above_ground_met');
  if (!DEADBEAT_TARGETS.includes(target)) throw optionIssue('target', DEADBEAT_TARGETS.join(' or '), target);
  if (mode === 'angle' && target !== 'absolute') {
    throw optionIssue(
      'target',
      'absolute with mode angle (an attack angle alone cannot add or remove the energy m g h that a height above the ground met needs: use mode angle_and_stiffness)',
      target,
    );
  }
  const [hLo, hHi] = options.groundRange_m;
  if (!(hLo >= BOUNDS.height_m.low && hHi <= BOUNDS.height_m.high && hLo < hHi)) {
    throw optionIssue('ground_range_m', `two heights [lo, hi] with lo < hi, each ${boundText(BOUNDS.height_m, 'a height')}`, options.groundRange_m);
  }
  const knots = options.knots ?? 41;
  if (!Number.isInteger(knots) || knots < 2 || knots > 2000) throw optionIssue('knots', 'an integer from 2 to 2000', knots);
  const [aLo, aHi] = options.attackRange_deg ?? [30, 89.5];
  if (!(aLo > 0 && aHi <= 90 && aLo < aHi)) throw optionIssue('attack_range_deg', 'angles 0 < lo < hi <= 90 (deg)', options.attackRange_deg);
  const samples = options.angleSamples ?? 240;
  const tolerance = options.tolerance_m ?? 1e-6;
  const toleranceFloor = deadbeatToleranceFloor(scenario);
  const legLength = scenario.body.leg_length_m;
  if (!(typeof tolerance === 'number' && tolerance >= toleranceFloor && tolerance <= legLength)) {
    throw optionIssue(
      'tolerance_m',
      `a length from ${showLength(toleranceFloor)} to ${legLength} m (the leg length): at least ${TOLERANCE_NOISE_FACTOR} x the ` +
        "integrator's accuracy at the target apex, relative_tolerance x max(leg length, apex height) + absolute_tolerance, " +
        'below which an apex error cannot be told from integration error',
      tolerance,
    );
  }
  const maxKnots = options.maxKnots ?? DEADBEAT_MAX_KNOTS;
  if (!Number.isInteger(maxKnots) || maxKnots < knots || maxKnots > DEADBEAT_MAX_KNOTS) {
    throw optionIssue('max_knots', `an integer from knots (${knots}) to ${DEADBEAT_MAX_KNOTS}`, maxKnots);
  }
  if (!Number.isInteger(samples) || samples < 8 || samples > 10_000) throw optionIssue('angle_samples', 'an integer from 8 to 10000', samples);

  const engine = await loadEngine();
  const m = scenario.body.mass_kg;
  const g = scenario.body.gravity_m_per_s2;
  const leg = scenario.body.leg_length_m;
  const yTarget = scenario.start.apex_height_m;
  const vTarget = scenario.start.forward_speed_m_per_s;
  const stiff = scenario.policy.stiffness;
  const kc = stiff.kind === 'split' ? stiff.compression_N_per_m : scenario.body.leg_stiffness_N_per_m;
  const keBase = stiff.kind === 'split' ? stiff.extension_N_per_m : kc;
  const kBound = BOUNDS.stiffness_N_per_m;
  const [keLo, keHi] = options.extensionStiffnessRange_N_per_m ?? [Math.max(kBound.low, 0.25 * kc), Math.min(kBound.high, 4 * kc)];
  if (mode === 'angle_and_stiffness' && !(keLo >= kBound.low && keLo < keHi && keHi <= kBound.high)) {
    throw optionIssue('extension_stiffness_range_N_per_m', `stiffnesses lo < hi, both from ${boundText(kBound, '').trim()}`, options.extensionStiffnessRange_N_per_m);
  }

  // The model of one stride: fixed angle, split stiffness, a single permanent ground height.
  const base = buildModel(
    parseScenario({
      ...scenario,
      policy: { angle: { kind: 'fixed', attack_deg: 60 }, stiffness: { kind: 'split', compression_N_per_m: kc, extension_N_per_m: keBase } },
      terrain: { kind: 'steps', ground_heights_m: [0] },
      strides: 1,
    }),
  );
  const variant = (attackRad: number, h: number, ke: number): ModelBlock => {
    const fields = Float64Array.from(base.fields);
    fields[L.M_ATTACK] = attackRad;
    fields[L.M_K_EXTENSION] = ke;
    return { ...base, fields, groundHeights: Float64Array.of(h) };
  };
  const strides = (models: ModelBlock[]): StrideOutcome[] => runStrides(engine, models, yTarget, vTarget);
  const heightTarget = (h: number) => (target === 'absolute' ? yTarget : yTarget + h);

  const ownAttack = attackAtApexRad(scenario);

  // Solve a list of ground heights. `anchors[i]` is the angle the root should be nearest
  // (continuity), or null to continue from the already-solved neighbour in `order`.
  interface Solution {
    h: number;
    solved: boolean;
    attack: number;
    extension: number;
    hadRoot: boolean;
  }
  const solve = (hs: number[], anchors: (number | null)[], window: [number, number][]): Solution[] => {
    // 1. Sample the attack angles of each height's window, all heights in one batch.
    const sampled = hs.map((_, i) => {
      const [w0, w1] = window[i];
      return Array.from({ length: samples }, (_, j) => w0 + ((w1 - w0) * j) / (samples - 1));
    });
    const grid: StrideOutcome[] = [];
    const heightsPerCall = Math.max(1, Math.floor(STRIDES_PER_CALL / samples));
    for (let from = 0; from < hs.length; from += heightsPerCall) {
      const part = hs.slice(from, from + heightsPerCall).flatMap((h, k) => sampled[from + k].map((a) => variant(a, h, keBase)));
      for (const outcome of strides(part)) grid.push(outcome);
    }
    const rootsAt = hs.map((h, i) => {
      const brackets: [number, number, number, number][] = []; // [a0, a1, f0, f1]
      for (let j = 0; j + 1 < samples; j++) {
        const p = grid[i * samples + j];
        const q = grid[i * samples + j + 1];
        if (!p.ok || !q.ok) continue;
        const f0 = p.height - heightTarget(h);
        const f1 = q.height - heightTarget(h);
        if (f0 === 0 || f0 * f1 < 0) brackets.push([sampled[i][j], sampled[i][j + 1], f0, f1]);
      }
      return brackets;
    });
    // 2. One root per height: nearest its anchor; heights without an anchor continue outward
    //    from 0, each from its solved neighbour (the first from the scenario's own attack).
    const order = hs.map((_, i) => i).sort((a, b) => Math.abs(hs[a]) - Math.abs(hs[b]));
    const chosen: ([number, number, number, number] | null)[] = hs.map(() => null);
    const picked: (number | null)[] = hs.map(() => null);
    for (const i of order) {
      let anchor = anchors[i];
      if (anchor === null) {
        const k = [i - 1, i + 1].find((n) => n >= 0 && n < hs.length && picked[n] !== null);
        anchor = k !== undefined ? picked[k]! : ownAttack;
      }
      let best: [number, number, number, number] | null = null;
      for (const b of rootsAt[i]) {
        const mid = 0.5 * (b[0] + b[1]);
        if (!best || Math.abs(mid - anchor) < Math.abs(0.5 * (best[0] + best[1]) - anchor)) best = b;
      }
      chosen[i] = best;
      if (best) picked[i] = 0.5 * (best[0] + best[1]);
    }
    // 3. Polish every chosen bracket together (Illinois), one batch per iteration.
    const lo = chosen.map((b) => (b ? b[0] : NaN));
    const hi = chosen.map((b) => (b ? b[1] : NaN));
    const flo = chosen.map((b) => (b ? b[2] : NaN));
    const fhi = chosen.map((b) => (b ? b[3] : NaN));
    const active = hs.map((_, i) => chosen[i] !== null);
    for (let it = 0; it < 80 && active.some(Boolean); it++) {
      const idx = hs.map((_, i) => i).filter((i) => active[i]);
      const guess = idx.map((i) => {
        const t = (lo[i] * fhi[i] - hi[i] * flo[i]) / (fhi[i] - flo[i]);
        return t > lo[i] && t < hi[i] ? t : 0.5 * (lo[i] + hi[i]);
      });
      const out = strides(idx.map((i, k) => variant(guess[k], hs[i], keBase)));
      idx.forEach((i, k) => {
        const o = out[k];
        if (!o.ok) {
          hi[i] = guess[k]; // a failure inside a bracket whose ends survive: shrink it
          return;
        }
        const f = o.height - heightTarget(hs[i]);
        if (f === 0) {
          lo[i] = hi[i] = guess[k];
        } else if (Math.sign(f) === Math.sign(flo[i])) {
          lo[i] = guess[k];
          flo[i] = f;
          fhi[i] *= 0.5;
        } else {
          hi[i] = guess[k];
          fhi[i] = f;
          flo[i] *= 0.5;
        }
        if (Math.abs(hi[i] - lo[i]) < 1e-14) active[i] = false;
      });
    }
    const result: Solution[] = hs.map((h, i) => ({
      h,
      solved: chosen[i] !== null,
      attack: chosen[i] ? 0.5 * (lo[i] + hi[i]) : NaN,
      extension: keBase,
      hadRoot: rootsAt[i].length > 0,
    }));
    // 4. To hold speed too: Newton on (attack, extension stiffness) per height, with a
    //    finite-difference Jacobian, continued outward from 0.
    if (mode === 'angle_and_stiffness') {
      for (const i of order) {
        const h = hs[i];
        const k = [i - 1, i + 1].find((n) => n >= 0 && n < hs.length && result[n].solved && order.indexOf(n) < order.indexOf(i));
        let a = result[i].solved ? result[i].attack : k !== undefined ? result[k].attack : (anchors[i] ?? ownAttack);
        let ke = k !== undefined ? result[k].extension : keBase;
        let ok = false;
        for (let it = 0; it < 30; it++) {
          const da = 1e-7;
          const dk = 1e-6 * ke;
          const [f, fa, fk] = strides([variant(a, h, ke), variant(a + da, h, ke), variant(a, h, ke + dk)]);
          if (!f.ok || !fa.ok || !fk.ok) break;
          const r1 = f.height - heightTarget(h);
          const r2 = f.speed - vTarget;
          if (Math.abs(r1) < 1e-11 && Math.abs(r2) < 1e-11) {
            ok = true;
            break;
          }
          const j11 = (fa.height - f.height) / da;
          const j12 = (fk.height - f.height) / dk;
          const j21 = (fa.speed - f.speed) / da;
          const j22 = (fk.speed - f.speed) / dk;
          const det = j11 * j22 - j12 * j21;
          if (!Number.isFinite(det) || det === 0) break;
          let stepA = -(j22 * r1 - j12 * r2) / det;
          let stepK = -(-j21 * r1 + j11 * r2) / det;
          // damped: at most 5 deg or half the stiffness per iteration, within range
          const scale = Math.min(1, (5 * DEG) / Math.abs(stepA), (0.5 * ke) / Math.abs(stepK));
          stepA *= scale;
          stepK *= scale;
          a = Math.min(aHi * DEG, Math.max(aLo * DEG, a + stepA));
          ke = Math.min(keHi, Math.max(keLo, ke + stepK));
        }
        result[i].solved = ok;
        result[i].attack = ok ? a : NaN;
        result[i].extension = ok ? ke : NaN;
      }
    }
    return result;
  };

  // The first grid: evenly spaced heights, every angle in range.
  const fullWindow: [number, number] = [aLo * DEG, aHi * DEG];
  const first = Array.from({ length: knots }, (_, i) => (i === knots - 1 ? hHi : hLo + ((hHi - hLo) * i) / (knots - 1)));
  let solutions = solve(first, first.map(() => null), first.map(() => fullWindow));

  // 5. The knots: final strides for residuals and the machine's loads along the table.
  const knotsOf = (sols: Solution[]) => {
    const finals = strides(sols.map((x) => variant(x.solved ? x.attack : 60 * DEG, x.h, x.solved ? x.extension : keBase)));
    const out: DeadbeatKnot[] = [];
    sols.forEach((x, i) => {
      const o = finals[i];
      if (!x.solved || !o.ok) {
        x.solved = false;
        return;
      }
      out.push({
        ground_height_m: x.h,
        time_since_apex_s: o.tTouch,
        attack_deg: x.attack / DEG,
        compression_N_per_m: kc,
        extension_N_per_m: x.extension,
        next_apex_height_m: o.height,
        next_forward_speed_m_per_s: o.speed,
        residual_height_m: o.height - heightTarget(x.h),
        residual_speed_m_per_s: o.speed - vTarget,
        peak_leg_force_N: o.peakForce,
        peak_friction_ratio: o.friction,
        max_compression_m: o.compression,
      });
    });
    out.sort((a, b) => a.time_since_apex_s - b.time_since_apex_s);
    // A table must be a function of time: drop knots whose time does not increase.
    const table: DeadbeatKnot[] = [];
    for (const k of out) if (table.length === 0 || k.time_since_apex_s > table[table.length - 1].time_since_apex_s) table.push(k);
    return table;
  };
  const policyOf = (table: DeadbeatKnot[]): DeadbeatTable['policy'] => ({
    angle: {
      kind: 'time_table',
      time_since_apex_s: table.map((k) => k.time_since_apex_s),
      attack_deg: table.map((k) => k.attack_deg),
    },
    stiffness:
      mode === 'angle'
        ? stiff.kind === 'split'
          ? { kind: 'time_table', time_since_apex_s: [0], compression_N_per_m: [kc], extension_N_per_m: [keBase] }
          : { kind: 'constant' }
        : {
            kind: 'time_table',
            time_since_apex_s: table.map((k) => k.time_since_apex_s),
            compression_N_per_m: table.map((k) => k.compression_N_per_m),
            extension_N_per_m: table.map((k) => k.extension_N_per_m),
          },
  });
  // 6. Run the table itself at its knots and half-way between neighbouring knots (in ground
  //    height): the interpolation error. Where it exceeds the tolerance, solve the midpoint
  //    too and try again.
  const runTable = (table: DeadbeatKnot[]) => {
    const byHeight = [...table].sort((a, b) => a.ground_height_m - b.ground_height_m);
    const heights: { h: number; knot: boolean; left: DeadbeatKnot; right: DeadbeatKnot }[] = [];
    byHeight.forEach((k, i) => {
      heights.push({ h: k.ground_height_m, knot: true, left: k, right: k });
      if (i + 1 < byHeight.length) {
        heights.push({ h: 0.5 * (k.ground_height_m + byHeight[i + 1].ground_height_m), knot: false, left: k, right: byHeight[i + 1] });
      }
    });
    const model = buildModel(parseScenario({ ...scenario, policy: policyOf(table), terrain: { kind: 'flat' }, strides: 1 }));
    const runs = runStrides(
      engine,
      heights.map(({ h }) => ({ ...model, fields: withSteps(model.fields), groundHeights: Float64Array.of(h) })),
      yTarget,
      vTarget,
    );
    return heights.map((x, k) => {
      const o = runs[k];
      const rh = o.ok ? o.height - heightTarget(x.h) : null;
      const rv = o.ok ? o.speed - vTarget : null;
      const err = rh === null ? Infinity : Math.max(Math.abs(rh), mode === 'angle_and_stiffness' ? Math.abs(rv!) : 0);
      return { ...x, rh, rv, err, status: STATUS_NAMES[o.status] };
    });
  };
  let table = knotsOf(solutions);
  let checks = table.length >= 2 ? runTable(table) : [];
  let rounds = 0;
  let stoppedBy: DeadbeatRefinement['stopped_by'] = table.length >= 2 ? 'round_cap' : 'too_few_knots';
  for (let round = 0; round < DEADBEAT_MAX_ROUNDS && table.length >= 2; round++) {
    const bad = checks.filter((c) => !c.knot && c.err > tolerance);
    if (bad.length === 0) {
      stoppedBy = 'tolerance_met';
      break;
    }
    if (table.length >= maxKnots) {
      stoppedBy = 'knot_cap';
      break;
    }
    rounds++;
    const room = maxKnots - table.length;
    const add = bad.slice(0, room);
    const anchors = add.map((c) => 0.5 * (c.left.attack_deg + c.right.attack_deg) * DEG);
    const windows = add.map((c) => {
      const a0 = Math.min(c.left.attack_deg, c.right.attack_deg) * DEG;
      const a1 = Math.max(c.left.attack_deg, c.right.attack_deg) * DEG;
      const pad = Math.max(0.5 * DEG, a1 - a0);
      return [Math.max(aLo * DEG, a0 - pad), Math.min(aHi * DEG, a1 + pad)] as [number, number];
    });
    const fresh = solve(add.map((c) => c.h), anchors, windows);
    solutions = [...solutions, ...fresh].sort((a, b) => a.h - b.h);
    table = knotsOf(solutions);
    checks = runTable(table);
  }
  if (stoppedBy === 'round_cap' && table.length >= 2) {
    if (!checks.some((c) => !c.knot && c.err > tolerance)) stoppedBy = 'tolerance_met';
    else if (table.length >= maxKnots) stoppedBy = 'knot_cap';
  }
  const policy = policyOf(table);
  const check: DeadbeatTable['check'] = checks
    .filter((c) => !c.knot)
    .map((c) => ({ ground_height_m: c.h, residual_height_m: c.rh, residual_speed_m_per_s: c.rv, status: c.status }));
  let atKnots = 0;
  let between: number | null = null;
  for (const c of checks) {
    if (c.knot) atKnots = Math.max(atKnots, c.err);
    else between = Math.max(between ?? 0, c.err);
  }
  const grounds = solutions.map((x) => x.h);
  const solved = solutions.map((x) => x.solved);
  const rootsAt = solutions.map((x) => (x.hadRoot ? [1] : []));

  const unsolved = unsolvedRanges(grounds, solved, rootsAt, mode);
  const solvedRange = contiguousAroundZero(grounds, solved);

  return {
    mode,
    target: {
      apex_height_m: yTarget,
      forward_speed_m_per_s: vTarget,
      height_reference: target,
    },
    validity: deadbeatValidity(target, yTarget, vTarget, solvedRange, mode === 'angle_and_stiffness' ? 'stiffness' : conservativeLeg(scenario) ? 'conservative' : 'no'),
    ground_range_m: [hLo, hHi],
    knots: table,
    unsolved,
    solved_range_m: solvedRange,
    policy,
    check,
    max_abs_residual_at_knots_m: atKnots,
    max_abs_residual_between_knots_m: between,
    refinement: {
      rounds,
      max_rounds: DEADBEAT_MAX_ROUNDS,
      max_knots: maxKnots,
      tolerance_m: tolerance,
      tolerance_floor_m: toleranceFloor,
      stopped_by: stoppedBy,
    },
  };
}

// The leg keeps the energy in angle mode: no damping, and the same stiffness before and after
// maximum compression (a split leg gains or loses a fixed amount per stance).
function conservativeLeg(scenario: Scenario): boolean {
  if (scenario.body.leg_damping_N_s_per_m > 0) return false;
  const k = scenario.policy.stiffness;
  return k.kind !== 'split' || k.compression_N_per_m === k.extension_N_per_m;
}

function deadbeatValidity(
  target: DeadbeatTarget,
  y: number,
  v: number,
  range: [number, number] | null,
  speed: 'stiffness' | 'conservative' | 'no',
): DeadbeatValidity {
  const span = range ? `${range[0]} to ${range[1]} m` : 'no range (nothing was solved)';
  const beyond =
    'past that range the table holds its end values and the next apex misses the target (far enough past it, the leg cannot ' +
    'be placed or the body falls); inside it the table is exact at its knots for one stride, and the error left between ' +
    'knots can grow over later strides (the step check measures it)';
  if (target === 'absolute') {
    return {
      holds:
        `the next apex at ${y} m, an absolute height (from the start's ground, 0)` +
        (speed === 'stiffness'
          ? `, at ${v} m/s (the extension stiffness makes up what the leg gains or loses)`
          : speed === 'conservative'
            ? `, and so the speed ${v} m/s (the leg keeps the energy)`
            : ' (not the speed: this leg gains or loses energy in stance)'),
      ground_reference: 'start_ground',
      valid_ground_m: range,
      valid_while:
        `every touchdown's ground is within ${span} of the start's ground: the apex does not follow ground that keeps rising or ` +
        'falling (a slope, stairs), which soon leaves that range',
      beyond,
    };
  }
  return {
    holds:
      `the next apex ${y} m above the ground of the last touchdown, at ${v} m/s: the extension stiffness adds the energy ` +
      'a step up takes and removes what a step down gives (m g Δh per stride)',
    ground_reference: 'previous_touchdown',
    valid_ground_m: range,
    valid_while:
      `each touchdown's ground is within ${span} of the previous touchdown's (of the start's ground for the first): ` +
      'slopes, stairs and uneven ground whose step per stride stays in that range, with extension stiffnesses in the range searched',
    beyond,
  };
}

/**
 * The smallest between-knot apex tolerance that means something for this scenario, m:
 * TOLERANCE_NOISE_FACTOR × the integrator's error scale at the target apex (common practice: a
 * target a hundred times above the solver's accuracy is still resolved by it).
 */
export function deadbeatToleranceFloor(scenario: Scenario): number {
  const { relative_tolerance: rtol, absolute_tolerance: atol } = scenario.integrator;
  return TOLERANCE_NOISE_FACTOR * (rtol * Math.max(scenario.body.leg_length_m, Math.abs(scenario.start.apex_height_m)) + atol);
}

function showLength(m: number): string {
  return String(Number(m.toPrecision(3)));
}

function withSteps(fields: Float64Array): Float64Array {
  const f = Float64Array.from(fields);
  f[L.M_TERRAIN_KIND] = L.TERRAIN_STEPS;
  f[L.M_STEPS_N] = 1;
  return f;
}

function attackAtApexRad(s: Scenario): number {
  const a = s.policy.angle;
  if (a.kind === 'fixed') return a.attack_deg * DEG;
  if (a.kind === 'retraction') return a.attack_at_apex_deg * DEG;
  return a.attack_deg[0] * DEG;
}

/** One stride per model from the target apex; the next apex and the stance loads. */
function runStrides(engine: Engine, models: ModelBlock[], y: number, v: number): StrideOutcome[] {
  if (models.length === 0) return [];
  if (models.length > STRIDES_PER_CALL) {
    const out: StrideOutcome[] = [];
    for (let from = 0; from < models.length; from += STRIDES_PER_CALL) {
      for (const outcome of runStrides(engine, models.slice(from, from + STRIDES_PER_CALL), y, v)) out.push(outcome);
    }
    return out;
  }
  const inputs = new Float64Array(models.length * L.I_SIZE);
  for (let r = 0; r < models.length; r++) inputs.set(rolloutInput(y, v, 0, r), r * L.I_SIZE);
  const b = engine.runBatch({ model: models, inputs, strides: 1, records: true });
  const rec = b.records!;
  return models.map((_, r) => {
    const at = (f: number) => rec[r * L.R_SIZE + f];
    const status = b.summaries[r * L.S_SIZE + L.S_STATUS];
    return {
      ok: status === L.STATUS_OK,
      status,
      height: at(L.R_NEXT_APEX_HEIGHT),
      speed: at(L.R_NEXT_APEX_SPEED),
      tTouch: at(L.R_APEX_TO_TOUCHDOWN),
      peakForce: at(L.R_PEAK_FORCE),
      friction: at(L.R_PEAK_FRICTION),
      compression: at(L.R_MAX_COMPRESSION),
    };
  });
}

function unsolvedRanges(
  grounds: number[],
  solved: boolean[],
  roots: unknown[][],
  mode: DeadbeatMode,
): UnsolvedRange[] {
  const out: UnsolvedRange[] = [];
  let i = 0;
  while (i < grounds.length) {
    if (solved[i]) {
      i++;
      continue;
    }
    let j = i;
    while (j + 1 < grounds.length && !solved[j + 1]) j++;
    const noRoot = grounds.slice(i, j + 1).every((_, k) => roots[i + k].length === 0);
    out.push({
      from_m: grounds[i],
      to_m: grounds[j],
      reason: noRoot
        ? 'no attack angle in range returns the body to the target apex (or every stride fails)'
        : mode === 'angle_and_stiffness'
          ? 'no attack angle and extension stiffness in range hold both apex height and speed'
          : 'the root found did not survive the final check',
    });
    i = j + 1;
  }
  return out;
}

function contiguousAroundZero(grounds: number[], solved: boolean[]): [number, number] | null {
  let center = -1;
  let bestDistance = Infinity;
  grounds.forEach((h, i) => {
    if (solved[i] && Math.abs(h) < bestDistance) {
      bestDistance = Math.abs(h);
      center = i;
    }
  });
  if (center < 0) return null;
  let a = center;
  let b = center;
  while (a > 0 && solved[a - 1]) a--;
  while (b + 1 < grounds.length && solved[b + 1]) b++;
  return [grounds[a], grounds[b]];
}
