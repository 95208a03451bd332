// The lateral leg-spring model against laws, an independent integrator and the published
// stability result. Every check value names its source beside it.
//
// Body: of the order of the insect of Schmitt & Holmes 2000 (Biol. Cybern. 83:501–515; mass
// 2.5 g, moment of inertia 2.04e-7 kg m^2, leg about 1.27 cm, stiffness about 3.5 N/m, touchdown
// angle about 1 rad, speed about 0.2–0.3 m/s; from memory). These numbers are inputs only, never
// check values: every check below is a law, a closed form, or a sign the paper reports.
import { commandsRunning } from '../src/cli/scenario-argument.js';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import * as L from '../assembly/layout.js';
import { lateralFixedPoints, minimumGaitSpeed, simulateLateral, strides } from '../src/core/analysis/lateral.js';
import { lateralBasin } from '../src/core/analysis/lateral-basin.js';
import { recoverOnce, recoverRows, finishRecover } from '../src/core/analysis/recover.js';
import { recoverSlipOnce } from '../src/core/analysis/recover-slip.js';
import { characteristicPolynomial, eigenvalues, polynomialRoots } from '../src/core/eigen.js';
import { type Engine, loadEngine } from '../src/core/engine.js';
import { InputError } from '../src/core/errors.js';
import { buildLateralModel, type LateralScenario, lateralInput, parseLateralScenario } from '../src/core/models/lateral.js';
import { parseScenario } from '../src/core/scenario.js';
import { main } from '../src/cli/main.js';

const DEG = Math.PI / 180;
const INSECT = { mass_kg: 0.0025, moment_of_inertia_kg_m2: 2.04e-7, leg_length_m: 0.0127, leg_stiffness_N_per_m: 3.52 };

function insect(over: { d?: number; d1?: number; v?: number; delta?: number; omega?: number; strides?: number } = {}): LateralScenario {
  return parseLateralScenario({
    model: 'lateral',
    body: { ...INSECT, attachment_offset_m: over.d ?? 0, attachment_rate_m_per_s: over.d1 ?? 0 },
    start: { speed_m_per_s: over.v ?? 0.3, heading_to_body_deg: over.delta ?? 12, angular_velocity_deg_per_s: over.omega ?? 0 },
    policy: { angle: { kind: 'fixed', angle_to_body_deg: 57.3 } },
    strides: over.strides ?? 6,
    integrator: { relative_tolerance: 1e-12, absolute_tolerance: 1e-15 },
  });
}

// The part of the odex package's API used here (node_modules/odex/src/odex.ts), imported untyped
// as in reference.test.ts so that the type check does not compile the package's own source.
interface OdexPackage {
  Solver: new (n: number) => {
    relativeTolerance: number;
    absoluteTolerance: number;
    maxSteps: number;
    solve(f: (x: number, y: number[]) => number[], x0: number, y0: number[], xEnd: number): { y: number[] };
  };
}

let engine: Engine;
let odex: OdexPackage;
beforeAll(async () => {
  engine = await loadEngine();
  odex = ((await import('odex' as string)) as { default: OdexPackage }).default;
});

// ---------------------------------------------------------------------------------------------
describe('small eigenvalue solver', () => {
  it('companion matrix of (x-1)(x-2)(x-3)(x-4): roots 4, 3, 2, 1 to 1e-10 (closed form)', () => {
    // x^4 - 10x^3 + 35x^2 - 50x + 24 (expanded by hand: closed form)
    const a = [
      [10, -35, 50, -24],
      [1, 0, 0, 0],
      [0, 1, 0, 0],
      [0, 0, 1, 0],
    ];
    expect(characteristicPolynomial(a).map((c) => Math.round(c * 1e9) / 1e9)).toEqual([1, -10, 35, -50, 24]);
    const ev = eigenvalues(a);
    [4, 3, 2, 1].forEach((r, i) => {
      expect(Math.abs(ev[i].re - r)).toBeLessThan(1e-10);
      expect(ev[i].im).toBe(0);
    });
  });
  it('a rotation block and a diagonal: e^(±i phi), 2 and 0.5 (closed form)', () => {
    const phi = 0.7;
    const a = [
      [2, 0, 0, 0],
      [0, Math.cos(phi), -Math.sin(phi), 0],
      [0, Math.sin(phi), Math.cos(phi), 0],
      [0, 0, 0, 0.5],
    ];
    const ev = eigenvalues(a);
    expect(Math.abs(ev[0].re - 2)).toBeLessThan(1e-12);
    const pair = ev.filter((z) => z.im !== 0);
    expect(pair).toHaveLength(2);
    for (const z of pair) {
      expect(Math.abs(z.re - Math.cos(phi))).toBeLessThan(1e-12);
      expect(Math.abs(Math.abs(z.im) - Math.sin(phi))).toBeLessThan(1e-12);
    }
    expect(Math.abs(ev[3].re - 0.5)).toBeLessThan(1e-12);
  });
  it('a triangular matrix with a double eigenvalue 1: its diagonal, to 1e-7 (law: triangular)', () => {
    const a = [
      [1, 0.3, -2, 0.1],
      [0, 1, 0.5, 4],
      [0, 0, 0.25, 1],
      [0, 0, 0, -0.6],
    ];
    const ev = eigenvalues(a).map((z) => z.re).sort((p, q) => q - p);
    [1, 1, 0.25, -0.6].forEach((r, i) => expect(Math.abs(ev[i] - r)).toBeLessThan(1e-7));
  });
  it('polynomial roots of x^2 + 1: ±i (closed form)', () => {
    const r = polynomialRoots([1, 0, 1]);
    expect(r.map((z) => Math.abs(z.im)).every((m) => Math.abs(m - 1) < 1e-14)).toBe(true);
    expect(r.every((z) => Math.abs(z.re) < 1e-14)).toBe(true);
  });
});

// ---------------------------------------------------------------------------------------------
describe('conservation laws in stance', () => {
  const stances = (samples: ReturnType<typeof simulateLateral>['samples']) => {
    const groups = new Map<string, NonNullable<typeof samples>>();
    for (const p of samples ?? []) {
      const key = `${p.stride}:${p.side}`;
      groups.set(key, [...(groups.get(key) ?? []), p]);
    }
    return [...groups.values()];
  };

  it('energy m v^2/2 + I w^2/2 + k (L0 - r)^2/2 is conserved to 1e-9 relative, attachment 2 mm behind (law: conservative forces)', () => {
    const s = insect({ d: -0.002, omega: 40 });
    const r = simulateLateral(engine, s, { strides: 4, dt: 0.002 });
    expect(r.status).toBe(L.STATUS_OK);
    const { mass_kg: m, moment_of_inertia_kg_m2: I, leg_stiffness_N_per_m: k } = INSECT;
    const energies = (r.samples ?? []).map((p) => 0.5 * m * (p.vx ** 2 + p.vy ** 2) + 0.5 * I * p.omega ** 2 + (p.force * p.force) / (2 * k));
    const e0 = energies[0];
    expect(energies.length).toBeGreaterThan(100);
    for (const e of energies) expect(Math.abs(e - e0) / e0).toBeLessThan(1e-9);
    for (const row of r.rows) expect(Math.abs(row.energy_after_J - row.energy_before_J) / row.energy_before_J).toBeLessThan(1e-9);
  });

  for (const d1 of [0.02, -0.02]) {
    it(`a moving attachment point (d1 = ${d1} m/s) does the work -d1 ∫ e.F dt over a stance, to 1e-6 relative (law: power of a point moving along the body)`, () => {
      const s = insect({ d: -0.002, d1 });
      const r = simulateLateral(engine, s, { strides: 1, dt: 1e-5 });
      expect(r.rows[0].status).toBe(L.STATUS_OK);
      const left = (r.samples ?? []).filter((p) => p.side > 0);
      const { mass_kg: m, moment_of_inertia_kg_m2: I, leg_stiffness_N_per_m: k } = INSECT;
      const energy = (p: (typeof left)[number]) => 0.5 * m * (p.vx ** 2 + p.vy ** 2) + 0.5 * I * p.omega ** 2 + (p.force * p.force) / (2 * k);
      // e.F: the leg force along the body axis, F along the line from the foot to the attachment point
      const t0 = left[0].t;
      const axial = left.map((p) => {
        const d = -0.002 + d1 * (p.t - t0);
        const lx = p.x + d * Math.cos(p.theta) - p.footX;
        const ly = p.y + d * Math.sin(p.theta) - p.footY;
        const r0 = Math.hypot(lx, ly);
        return (p.force * (lx * Math.cos(p.theta) + ly * Math.sin(p.theta))) / r0;
      });
      let work = 0;
      for (let i = 1; i < left.length; i++) work += -d1 * 0.5 * (axial[i] + axial[i - 1]) * (left[i].t - left[i - 1].t);
      const change = energy(left[left.length - 1]) - energy(left[0]);
      expect(Math.abs(change)).toBeGreaterThan(1e-4 * energy(left[0]));
      expect(Math.abs(change - work) / Math.abs(change)).toBeLessThan(1e-6);
    });
  }

  for (const [label, d, d1] of [
    ['2 mm behind', -0.002, 0],
    ['2 mm ahead', 0.002, 0],
    ['moving from 2 mm behind at 2 cm/s', -0.002, 0.02],
  ] as const) {
    it(`angular momentum about the stance foot is conserved in each stance to 1e-9 relative, attachment ${label} (law: the leg force passes through the foot)`, () => {
      const s = insect({ d, d1, omega: 40 });
      const r = simulateLateral(engine, s, { strides: 3, dt: 0.001 });
      expect(r.status).toBe(L.STATUS_OK);
      const { mass_kg: m, moment_of_inertia_kg_m2: I, leg_length_m: l0 } = INSECT;
      const scale = m * l0 * s.start.speed_m_per_s;
      const groups = stances(r.samples);
      expect(groups.length).toBe(6);
      for (const g of groups) {
        expect(g.length).toBeGreaterThan(20);
        const h = g.map((p) => m * ((p.x - p.footX) * p.vy - (p.y - p.footY) * p.vx) + I * p.omega);
        for (const v of h) expect(Math.abs(v - h[0]) / scale).toBeLessThan(1e-9);
      }
    });
  }

  it('with d = 0 the angular velocity is constant in stance, exactly (law: the force passes through the centre of mass)', () => {
    const s = insect({ d: 0, omega: 40 });
    const r = simulateLateral(engine, s, { strides: 3, dt: 0.001 });
    expect(r.status).toBe(L.STATUS_OK);
    for (const p of r.samples ?? []) expect(Math.abs(p.omega - 40 * DEG)).toBeLessThan(1e-12);
  });
});

// ---------------------------------------------------------------------------------------------
describe('one stance: kernel vs odex (library: odex (npm), a port of E. Hairer\'s ODEX)', () => {
  it('the right-touchdown state after a left stance agrees to 1e-9, and r = L0 there on the odex solution', () => {
    const s = insect({ d: -0.002, d1: 0.01, omega: 30, delta: 15 });
    const [out] = strides(engine, buildLateralModel(s), [{ speed: 0.3, delta: 15 * DEG, omega: 30 * DEG, heading: 0 }]);
    const rec = out.record;
    const tEnd = rec[L.LR_MID_TIME];
    const { mass_kg: m, moment_of_inertia_kg_m2: I, leg_length_m: l0, leg_stiffness_N_per_m: k } = INSECT;
    const d0 = -0.002;
    const d1 = 0.01;
    const beta = 57.3 * DEG;
    // Newton's laws for the rigid body, written afresh: m a = F, I w' = (d e) x F, F = k (L0 - r) l/r
    const f = (t: number, y: number[]) => {
      const [px, py, th, vx, vy, w] = y;
      const c = Math.cos(th);
      const sn = Math.sin(th);
      const d = d0 + d1 * t;
      const lx = px + d * c;
      const ly = py + d * sn;
      const r = Math.hypot(lx, ly);
      const fx = (k * (l0 - r) * lx) / r;
      const fy = (k * (l0 - r) * ly) / r;
      return [vx, vy, w, fx / m, fy / m, (d * (c * fy - sn * fx)) / I];
    };
    const theta0 = -15 * DEG;
    const footX = d0 * Math.cos(theta0) + l0 * Math.cos(theta0 + beta);
    const footY = d0 * Math.sin(theta0) + l0 * Math.sin(theta0 + beta);
    const y0 = [-footX, -footY, theta0, 0.3, 0, 30 * DEG];
    const solver = new odex.Solver(6);
    solver.relativeTolerance = 1e-13;
    solver.absoluteTolerance = 1e-16;
    solver.maxSteps = 1e6;
    const res = solver.solve(f, 0, y0, tEnd);
    const y = res.y;
    expect(Math.abs(y[0] + footX - rec[L.LR_MID_X])).toBeLessThan(1e-9 * l0 * 100);
    expect(Math.abs(y[1] + footY - rec[L.LR_MID_Y])).toBeLessThan(1e-9 * l0 * 100);
    expect(Math.abs(y[2] - rec[L.LR_MID_THETA])).toBeLessThan(1e-9);
    expect(Math.abs(y[3] - rec[L.LR_MID_VX])).toBeLessThan(1e-9);
    expect(Math.abs(y[4] - rec[L.LR_MID_VY])).toBeLessThan(1e-9);
    expect(Math.abs(y[5] - rec[L.LR_MID_OMEGA])).toBeLessThan(1e-8);
    const d = d0 + d1 * tEnd;
    const r = Math.hypot(y[0] + d * Math.cos(y[2]), y[1] + d * Math.sin(y[2]));
    expect(Math.abs(r - l0) / l0).toBeLessThan(1e-9);
  });
});

// ---------------------------------------------------------------------------------------------
describe('periodic gaits and their stability', () => {
  const maps = new Map<number, ReturnType<typeof lateralFixedPoints>>();
  const mapAt = (d: number) => {
    if (!maps.has(d)) maps.set(d, lateralFixedPoints(engine, insect({ d })));
    return maps.get(d) as ReturnType<typeof lateralFixedPoints>;
  };

  it('two periodic gaits at 0.3 m/s for d = -2, 0 and +2 mm (a saddle-node pair: more than one fixed point)', () => {
    for (const d of [-0.002, 0, 0.002]) expect(mapAt(d).fixed_points).toHaveLength(2);
  });

  it('the right stance mirrors the left at every fixed point, to 1e-9 (law: mirror symmetry of the periodic gait)', () => {
    for (const d of [-0.002, 0, 0.002]) {
      const s = insect({ d });
      for (const f of mapAt(d).fixed_points) {
        const st = { speed: f.speed_m_per_s, delta: f.heading_to_body_deg * DEG, omega: f.angular_velocity_deg_per_s * DEG, heading: 0 };
        const r = simulateLateral(engine, s, { start: st, strides: 1 }).rows[0];
        const [o] = strides(engine, buildLateralModel(s), [st]);
        const rec = o.record;
        const mid = o.mid as NonNullable<typeof o.mid>;
        // right touchdown = mirror image of the left: same speed, opposite heading to body and angular velocity
        expect(Math.abs(mid.speed - st.speed)).toBeLessThan(1e-9);
        expect(Math.abs(mid.delta + st.delta)).toBeLessThan(1e-9);
        expect(Math.abs(mid.omega + st.omega)).toBeLessThan(1e-9);
        // and the two stances last equally long
        const left = rec[L.LR_MID_TIME] - rec[L.LR_TIME];
        const right = rec[L.LR_END_TIME] - rec[L.LR_MID_TIME];
        expect(Math.abs(left - right)).toBeLessThan(1e-9);
        // back on itself after the stride (fixed point of the full map)
        expect(f.stride_residual).toBeLessThan(1e-9);
        expect(r.status).toBe(L.STATUS_OK);
      }
    }
  });

  it('the full stride map has the eigenvalue 1 twice to 1e-6 at every fixed point with d != 0 (law: energy conservation and rotation symmetry)', () => {
    for (const d of [-0.002, 0.002]) {
      for (const f of mapAt(d).fixed_points) {
        expect(f.unit_eigenvalue_errors[0]).toBeLessThan(1e-6);
        expect(f.unit_eigenvalue_errors[1]).toBeLessThan(1e-6);
        // the other two are the reduced map's (consistency of the two Jacobians)
        const rest = f.eigenvalues.filter((z) => Math.hypot(z.re - 1, z.im) > 1e-4).map((z) => z.modulus).sort();
        const reduced = f.reduced_eigenvalues.map((z) => z.modulus).sort();
        expect(rest).toHaveLength(2);
        rest.forEach((m, i) => expect(Math.abs(m - reduced[i]) / Math.max(1, m)).toBeLessThan(1e-6));
      }
    }
  });

  it('with d = 0 the angular velocity is a third invariant: the eigenvalue 1 three times, to 1e-4 (law; a Jordan block with the heading makes a triple eigenvalue sensitive, about the cube root of the differences\' error), and exactly 1 in the reduced map', () => {
    for (const f of mapAt(0).fixed_points) {
      const near = f.eigenvalues.filter((z) => Math.hypot(z.re - 1, z.im) < 1e-4);
      expect(near).toHaveLength(3);
      expect(f.reduced_eigenvalues.some((z) => Math.abs(z.re - 1) < 1e-9 && z.im === 0)).toBe(true);
    }
  });

  it('Schmitt & Holmes 2000 (published; the sign verified here): the force through a point behind the centre of mass stabilizes the slow gait, ahead destabilizes it, d = 0 is neutral', () => {
    const slow = (d: number) => mapAt(d).fixed_points.reduce((a, b) => (a.heading_to_body_deg < b.heading_to_body_deg ? a : b));
    const behind = slow(-0.002);
    const centre = slow(0);
    const ahead = slow(0.002);
    const largest = (f: typeof behind) => Math.max(...f.reduced_eigenvalues.map((z) => z.modulus));
    expect(largest(behind)).toBeLessThan(1 - 1e-3);
    expect(behind.stability).toBe('stable');
    expect(Math.abs(largest(centre) - 1)).toBeLessThan(1e-6);
    expect(centre.stability).toBe('neutral');
    expect(largest(ahead)).toBeGreaterThan(1 + 1e-3);
    expect(ahead.stability).toBe('unstable');
    // the fast gait of the pair is a saddle whatever d (an eigenvalue beyond 1)
    for (const d of [-0.002, 0, 0.002]) {
      const fast = mapAt(d).fixed_points.reduce((a, b) => (a.heading_to_body_deg > b.heading_to_body_deg ? a : b));
      expect(largest(fast)).toBeGreaterThan(1);
    }
  });

  it('a moving attachment point: the map searches the speed too and says the energy is not conserved; recover and basin refuse it by name', () => {
    const s = insect({ d: -0.002, d1: 0.01 });
    const r = lateralFixedPoints(engine, s, { headingStarts: 12, rateStarts: 1 });
    expect(r.energy_conserved).toBe(false);
    // found here, not a law: at this body a forward-moving point drains energy every stance at any
    // speed tried (0.2 to 4 m/s), so there is no periodic gait
    expect(r.fixed_points).toHaveLength(0);
    expect(() => lateralBasin(engine, s)).toThrow(/body.attachment_rate_m_per_s: expected 0 for basin/);
    expect(() =>
      recoverOnce(engine, s, { stride: 1, fraction: 0.2, forward_m_per_s: 0, left_m_per_s: 0.01, angle_deg: 0, rate_deg_per_s: 0 }),
    ).toThrow(/body.attachment_rate_m_per_s: expected 0 for recover/);
  });

  it('no periodic gait below the minimum speed, two just above it (law: a saddle-node pair is born there)', () => {
    const s = insect({ d: -0.002 });
    const vmin = minimumGaitSpeed(engine, s, 0.3, 1e-3) as number;
    expect(vmin).toBeGreaterThan(0.1);
    expect(vmin).toBeLessThan(0.3);
    const at = (v: number) => lateralFixedPoints(engine, s, { energy_J: 0.5 * INSECT.mass_kg * v * v, existenceOnly: true }).fixed_points.length;
    expect(at(0.98 * vmin)).toBe(0);
    expect(at(0.9 * vmin)).toBe(0);
    expect(at(1.02 * vmin)).toBe(2);
  });
});

// ---------------------------------------------------------------------------------------------
describe('impulse recovery', () => {
  it('a small sideways kick on the stable gait (d 2 mm behind): survived, recovered onto the gait of the new energy, a permanent turn (laws: energy and rotation symmetry)', () => {
    const s = insect({ d: -0.002 });
    const r = recoverOnce(engine, s, { stride: 2, fraction: 0.3, forward_m_per_s: 0, left_m_per_s: 0.01, angle_deg: 0, rate_deg_per_s: 0 });
    expect(r.gait.stability).toBe('stable');
    const o = r.outcome;
    expect(o.survived).toBe(true);
    expect(o.kick_applied).toBe(true);
    expect(o.recovered).toBe(true);
    expect(o.strides_to_recover).toBeGreaterThan(0);
    expect(o.strides_to_recover).toBeLessThan(30);
    // the kick changed the energy, so the original gait is out of reach, and the output says so
    expect(o.original_gait_reachable).toBe(false);
    expect(Math.abs((o.energy_after_J as number) - o.energy_before_J)).toBeGreaterThan(0);
    expect(r.notes.join(' ')).toMatch(/cannot be reached again/);
    expect(r.notes.join(' ')).toMatch(/permanent turn/);
    // the last strides sit on the gait of the new energy
    const last = r.per_stride[r.per_stride.length - 1];
    expect(Math.abs(last.speed_m_per_s - (o.target_gait as NonNullable<typeof o.target_gait>).speed_m_per_s)).toBeLessThan(1e-4);
    expect(Math.abs(o.heading_lost_deg as number)).toBeGreaterThan(1e-3);
  });

  it('the same kick on the unstable gait (d 2 mm ahead) does not recover', () => {
    const s = insect({ d: 0.002 });
    const r = recoverOnce(engine, s, { stride: 2, fraction: 0.3, forward_m_per_s: 0, left_m_per_s: 0.01, angle_deg: 0, rate_deg_per_s: 0 });
    expect(r.outcome.recovered).toBe(false);
  });

  it('Monte Carlo: kicks drawn by counter (common random numbers): any range of rollouts gives the same rows; survival with its Wilson interval', () => {
    const s = insect({ d: -0.002 });
    const spec = { stride: 1, max_forward_m_per_s: 0, max_left_m_per_s: 0.02, max_angle_deg: 0, max_rate_deg_per_s: 0, seed: 7, rollouts: 12 };
    const all = recoverRows(engine, s, spec, { start: 0, end: 12 }, { stridesAfter: 20 });
    const part = recoverRows(engine, s, spec, { start: 5, end: 9 }, { stridesAfter: 20 });
    expect(part).toEqual(all.slice(5, 9));
    const r = finishRecover(engine, s, spec, all, { stridesAfter: 20 });
    expect(r.rollouts).toBe(12);
    expect(r.survival_interval_95[0]).toBeLessThanOrEqual(r.survival);
    expect(r.survival_interval_95[1]).toBeGreaterThanOrEqual(r.survival);
  });
});

// ---------------------------------------------------------------------------------------------
describe('impulse recovery of the single-leg model (a kick in flight)', () => {
  // Seyfarth, Geyer, Günther, Blickhan 2002 (published): 80 kg, leg 1 m, 20 kN/m, attack 68 deg, the
  // energy of a 1 m apex at 5 m/s has a stable fixed point.
  const seyfarth = (over: Record<string, unknown> = {}) =>
    parseScenario({
      body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81 },
      start: { apex_height_m: 1, forward_speed_m_per_s: 5 },
      policy: { angle: { kind: 'fixed', attack_deg: 68 } },
      strides: 10,
      ...over,
    });
  it('a forward and upward kick: the energy changes by the kinetic energy of the velocity change (law), and the apexes settle on the gait of the new energy', async () => {
    const r = await recoverSlipOnce(engine, seyfarth(), { stride: 2, fraction: 0.5, forward_m_per_s: 0.2, up_m_per_s: 0.1 });
    const g = r.gait;
    const tau = r.kick.time_s;
    const vy = -9.81 * tau; // law: ballistic flight from the apex
    // the apex the kick follows (the gait's, to the integrator's accuracy)
    const a = r.per_apex[2];
    expect(Math.abs(a.apex_height_m - g.apex_height_m)).toBeLessThan(1e-8);
    const before = 80 * 9.81 * a.apex_height_m + 0.5 * 80 * a.forward_speed_m_per_s ** 2;
    const expected = before + 0.5 * 80 * ((a.forward_speed_m_per_s + 0.2) ** 2 - a.forward_speed_m_per_s ** 2) + 0.5 * 80 * ((vy + 0.1) ** 2 - vy ** 2);
    expect(Math.abs(r.outcome.energy_after_J - expected) / expected).toBeLessThan(1e-12);
    expect(r.outcome.original_gait_reachable).toBe(false);
    expect(r.outcome.survived).toBe(true);
    expect(r.outcome.recovered).toBe(true);
    const t = r.outcome.target_gait as NonNullable<typeof r.outcome.target_gait>;
    const last = r.per_apex[r.per_apex.length - 1];
    expect(Math.abs(last.apex_height_m - t.apex_height_m)).toBeLessThan(1e-6);
    expect(Math.abs(last.forward_speed_m_per_s - t.forward_speed_m_per_s)).toBeLessThan(1e-6);
    // the new gait keeps the new energy (law: a conservative leg)
    const e = 80 * 9.81 * t.apex_height_m + 0.5 * 80 * t.forward_speed_m_per_s ** 2;
    expect(Math.abs(e - expected) / expected).toBeLessThan(1e-9);
  });
  it('refuses a retraction schedule and a damped leg by name, and a kick moment in stance', async () => {
    await expect(
      recoverSlipOnce(engine, seyfarth({ policy: { angle: { kind: 'retraction', attack_at_apex_deg: 64, rate_deg_per_s: 40 } } }), { stride: 1, fraction: 0.2, forward_m_per_s: 0.1, up_m_per_s: 0 }),
    ).rejects.toThrow(/policy.angle.kind: expected fixed for recover/);
    await expect(
      recoverSlipOnce(engine, seyfarth({ body: { mass_kg: 80, leg_length_m: 1, leg_stiffness_N_per_m: 20000, gravity_m_per_s2: 9.81, leg_damping_N_s_per_m: 50 } }), { stride: 1, fraction: 0.2, forward_m_per_s: 0.1, up_m_per_s: 0 }),
    ).rejects.toThrow(/body.leg_damping_N_s_per_m: expected a conservative leg for recover/);
    await expect(recoverSlipOnce(engine, seyfarth(), { stride: 1, seconds: 0.2, forward_m_per_s: 0.1, up_m_per_s: 0 })).rejects.toThrow(/a moment in flight/);
  });
});

// ---------------------------------------------------------------------------------------------
describe('basin over heading and angular-velocity errors', () => {
  it('behind the centre of mass every small error returns to the gait; ahead of it only the gait itself stays (the linearization: eigenvalue moduli below and above 1)', () => {
    const grid = { headings: { low: -2, high: 2, count: 5 }, rates: { low: -20, high: 20, count: 5 }, strides: 40 };
    const behind = lateralBasin(engine, insect({ d: -0.002 }), grid);
    expect(behind.gait.stability).toBe('stable');
    expect(behind.counts.converged).toBe(25);
    const ahead = lateralBasin(engine, insect({ d: 0.002 }), grid);
    expect(ahead.gait.stability).toBe('unstable');
    // the centre cell starts on the gait (law: a fixed point maps to itself); no other cell returns
    const centre = ahead.cells[12];
    expect([centre.heading_error_deg, centre.rate_error_deg_per_s]).toEqual([0, 0]);
    expect(centre.outcome).toBe('converged');
    expect(ahead.counts.converged).toBe(1);
  });
});

// ---------------------------------------------------------------------------------------------
describe('lateral scenario validation', () => {
  const good = () => ({
    model: 'lateral',
    body: { ...INSECT },
    start: { speed_m_per_s: 0.3, heading_to_body_deg: 12 },
    policy: { angle: { kind: 'fixed', angle_to_body_deg: 57 } },
    strides: 3,
  });
  const issues = (value: unknown) => {
    try {
      parseLateralScenario(value);
      return [];
    } catch (e) {
      return (e as InputError).issues.map((i) => `${i.path}: ${i.message ?? `expected ${i.expected}, found ${i.found}`}`);
    }
  };
  it('accepts the demo six-legged runner and fills the defaults', async () => {
    const { default: demo } = await import('../scenarios/demo-hexapod.json', { with: { type: 'json' } });
    const s = parseLateralScenario(demo);
    expect(s.body.attachment_offset_m).toBeLessThan(0);
    expect(parseLateralScenario(good()).body.attachment_offset_m).toBe(0);
  });
  it('names the field, the range with its unit and the value', () => {
    const v = good();
    (v.body as Record<string, unknown>).moment_of_inertia_kg_m2 = -1;
    expect(issues(v)).toEqual(['body.moment_of_inertia_kg_m2: expected a number from 1e-15 to 1e11 (kg m^2), found -1']);
    const w = good();
    (w.body as Record<string, unknown>).attachment_offset_m = 0.05;
    expect(issues(w)).toEqual([
      'body.attachment_offset_m: expected a number from -0.0127 to 0.0127 (m; at most the leg length from the centre of mass), found 0.05',
    ]);
    const x = good();
    x.start.speed_m_per_s = 0;
    expect(issues(x)[0]).toMatch(/^start.speed_m_per_s: expected a number in \(0, 1000] \(m\/s\), found 0/);
  });
  it('refuses the schedules that need a flight phase, by name', () => {
    const v = good();
    v.policy = { angle: { kind: 'retraction' } } as never;
    expect(issues(v)[0]).toBe(
      'policy.angle.kind: expected kind fixed (the lateral model has no flight phase: retraction and time_table need one), found "retraction"',
    );
    const w = good();
    (w.policy as Record<string, unknown>).stiffness = { kind: 'split', compression_N_per_m: 1, extension_N_per_m: 2 };
    expect(issues(w)[0]).toBe(
      'policy.stiffness.kind: expected kind constant (the lateral model supports a constant leg stiffness only), found "split"',
    );
  });
  it('a single-leg reader refuses a lateral scenario, naming the model and the commands that run it', () => {
    expect(() => parseScenario(good(), { command: 'stepdown' })).toThrow(
      'scenario model "lateral": stepdown supports "slip" and "biped", found "lateral"',
    );
    expect(() => parseScenario({ ...good(), model: 'laterl' })).toThrow(/model: expected one of the model kinds "slip", "biped" or "lateral".*did you mean lateral\?/);
  });
});

// ---------------------------------------------------------------------------------------------
describe('every command on the lateral demo', () => {
  const run = async (args: string[]) => {
    let out = '';
    let err = '';
    const code = await main(args, { stdout: { write: (s: string) => (out += s) }, stderr: { write: (s: string) => (err += s) }, env: {} });
    return { code, out, err };
  };
  const demo = 'scenarios/demo-hexapod.json';

  it('simulate --json: the header names the lateral model and its section', async () => {
    const r = await run(['simulate', demo, '--json', '--strides', '3']);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect([j.format, j.model, j.section]).toEqual(['pronk-simulate', 'lateral', 'left_touchdown']);
    expect(j.strides).toHaveLength(3);
    expect(j.caution).toMatch(/not a guarantee/);
  });
  it('recover: one kick and a small Monte Carlo', async () => {
    const one = await run(['recover', demo, '--kick-left', '0.1', '--json']);
    expect(one.code).toBe(0);
    expect(JSON.parse(one.out).outcome.recovered).toBe(true);
    const mc = await run(['recover', demo, '--kick-left', '0.2', '--rollouts', '8', '--strides-after', '20']);
    expect(mc.code).toBe(0);
    expect(mc.out).toMatch(/survived +8 of 8/);
  });
  it('basin: over heading and angular-velocity errors at the gait\'s energy', async () => {
    const r = await run(['basin', demo, '--headings=-10:10:5', '--rates=-100:100:5', '--json']);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect([j.format, j.model, j.section]).toEqual(['pronk-basin', 'lateral', 'left_touchdown']);
    expect(j.cells).toHaveLength(25);
    const bad = await run(['basin', demo, '--heights', '0.9:1.1:3']);
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/--heights: expected none with a "lateral" scenario/);
  });
  it('scan: the sign of the attachment offset decides stability (Schmitt & Holmes 2000, as verified above)', async () => {
    const r = await run(['scan', demo, '--x', 'body.attachment_offset_m:-0.01:0.01:3', '--y', 'policy.angle.angle_to_body_deg:57:57:1', '--json']);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect([j.format, j.model, j.section]).toEqual(['pronk-scan', 'lateral', 'left_touchdown']);
    expect(j.cells.map((c: { class: string }) => c.class)).toEqual(['stable', 'neutral', 'unstable']);
  });
  it('recover --rollouts sharded in 2 and merged equals the one-machine run byte for byte (the shard/merge contract)', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'pronk-recover-'));
    try {
      const args = ['recover', demo, '--kick-left', '0.2', '--rollouts', '9', '--seed', '4', '--strides-after', '12', '--json'];
      const one = await run(args);
      expect(one.code).toBe(0);
      for (const i of [1, 2]) expect((await run([...args, '--shard', `${i}/2`, '--out', join(dir, `part-${i}.json`)])).code).toBe(0);
      const merged = await run(['merge', join(dir, 'part-2.json'), join(dir, 'part-1.json'), '--json']);
      expect(merged.code, merged.err).toBe(0);
      expect(merged.out).toBe(one.out);
      const text = await run(['merge', join(dir, 'part-1.json'), join(dir, 'part-2.json')]);
      expect(text.out).toMatch(/survived +9 of 9/);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
  it('recover on a single-leg scenario takes only the sagittal kicks, and a two-leg scenario is refused', async () => {
    const r = await run(['recover', 'scenarios/demo.json', '--kick-left', '0.1']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--kick-left: expected no such option for a single-leg scenario/);
    const b = await run(['recover', 'scenarios/demo-biped.json', '--kick-up', '0.1']);
    expect(b.code).toBe(2);
    expect(b.err).toMatch(/scenario model "biped": recover supports "slip" and "lateral", found "biped"/);
  });
  it('robustness runs the Monte Carlo over random kicks of recover --rollouts: the same JSON but for the format in the header', async () => {
    const kicks = ['--kick-left', '0.2', '--kick-rate', '50', '--rollouts', '9', '--seed', '4', '--json'];
    const robust = await run(['robustness', demo, ...kicks, '--strides', '12', '--workers', '1']);
    expect(robust.code, robust.err).toBe(0);
    const recover = await run(['recover', demo, ...kicks, '--strides-after', '12']);
    expect(recover.code, recover.err).toBe(0);
    const j = JSON.parse(robust.out);
    expect([j.format, j.model, j.section]).toEqual(['pronk-robustness', 'lateral', 'left_touchdown']);
    expect(j.rollouts).toBe(9);
    expect(j.caution).toMatch(/not a guarantee/);
    // only the header's format line differs
    expect(robust.out.replace('"format": "pronk-robustness"', '"format": "pronk-recover"')).toBe(recover.out);
    expect(robust.out).not.toBe(recover.out);
  });
  it('robustness on a lateral scenario refuses the terrain options by name (no ground: kicks), and needs a kick', async () => {
    for (const [flag, value] of [['--sigma', '0.01'], ['--terrain', 'random_walk'], ['--target-height', '0.1'], ['--target-speed', '1']]) {
      const r = await run(['robustness', demo, '--kick-left', '0.1', flag, value]);
      expect(r.code).toBe(2);
      expect(r.out).toBe('');
      expect(r.err).toContain(`${flag}: expected no such option for a lateral scenario: the lateral model has no ground, its disturbances are kicks`);
    }
    const none = await run(['robustness', demo]);
    expect(none.code).toBe(2);
    expect(none.err).toMatch(/--kick-left: expected a kick/);
    const slip = await run(['robustness', 'scenarios/demo.json', '--sigma', '0.01', '--kick-left', '0.1']);
    expect(slip.code).toBe(2);
    expect(slip.err).toMatch(/--kick-left: expected no kick for a single-leg or two-leg scenario/);
  });
  for (const cmd of ['stepdown', 'deadbeat']) {
    it(`${cmd} refuses it (exit 2, the model and the commands that run it)`, async () => {
      const extra = cmd === 'deadbeat' ? ['--ground=-0.03:0.01'] : [];
      const r = await run([cmd, demo, ...extra]);
      expect(r.code).toBe(2);
      const kinds = cmd === 'deadbeat' ? '"slip"' : '"slip" and "biped"';
      expect(r.err).toContain(`scenario model "lateral": ${cmd} supports ${kinds}, found "lateral"; pronk ${commandsRunning('lateral').join(', ')} run a "lateral" scenario`);
      // the list is the commands' own table: every command that runs a lateral scenario is in it
      expect(commandsRunning('lateral')).toEqual(expect.arrayContaining(['simulate', 'map', 'scan', 'basin', 'robustness', 'recover']));
    });
  }
});

// the kernel's rollout input is the section state: a check of the conversion (law: geometry)
it('lateral input: body angle = heading - heading to body, velocity along the heading', () => {
  const v = lateralInput({ speed: 2, delta: 0.3, omega: 1, heading: 0.5 });
  expect(v[L.LI_THETA]).toBeCloseTo(0.2, 15);
  expect(Math.atan2(v[L.LI_VY], v[L.LI_VX])).toBeCloseTo(0.5, 15);
  expect(Math.hypot(v[L.LI_VX], v[L.LI_VY])).toBeCloseTo(2, 15);
});
