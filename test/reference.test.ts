// The kernel against outside truth: an independent integrator (odex) on the
// same stance, the Arenstorf orbit for the bare stepper, and energy
// conservation over many strides. Sources are named beside every check value.

import { fixedAngleModel } from './reference/models.mjs';
import { beforeAll, describe, expect, it } from 'vitest';
import * as L from '../assembly/layout.js';
import { loadEngine, rolloutInput, type Engine, type ModelBlock } from '../src/core/engine.js';

// The shape of test/reference/odex-stride.mjs (plain JS, so declared here).
interface OdexStrideArgs {
  mass: number; leg: number; k: number; g: number;
  apexHeight: number; forwardSpeed: number; attack: number;
  ground?: number; apexX?: number; rtol: number; atol: number;
}
interface OdexStrideResult {
  touchdownTime: number; footX: number; touchdownVx: number; touchdownVy: number;
  liftoffX: number; liftoffY: number; liftoffVx: number; liftoffVy: number;
  contactTime: number; nextApexHeight: number; nextApexSpeed: number;
}
interface OdexReference {
  odexStride(args: OdexStrideArgs): OdexStrideResult;
}
// The part of the odex package's API used directly here (node_modules/odex/src/odex.ts).
interface OdexPackage {
  Solver: new (n: number) => {
    relativeTolerance: number;
    absoluteTolerance: number;
    maxSteps: number;
    solve(f: (x: number, y: number[]) => number[], x0: number, y0: number[], xEnd: number): { y: number[] };
  };
}

const DEG = Math.PI / 180;

// Human-like body of Seyfarth, Geyer, Günther, Blickhan 2002, "A movement
// criterion for running", J. Biomech. 35(5):649–655 (published).
const SEYFARTH = { mass: 80, leg: 1, k: 20_000, g: 9.81 };

/** A fixed-angle, undamped, flat-ground model block for the Seyfarth body. */
function seyfarthModel(attackDeg: number, rtol: number, atol: number): ModelBlock {
  return fixedAngleModel(L, SEYFARTH, attackDeg * DEG, { rtol, atol });
}

let engine: Engine;
let odex: OdexReference;

beforeAll(async () => {
  engine = await loadEngine();
  // Typed dynamic import: the module is plain JS without a declaration file.
  odex = (await import('./reference/odex-stride.mjs' as string)) as OdexReference;
});

describe('one stride: kernel vs odex (library: odex (npm), a port of E. Hairer\'s ODEX)', () => {
  // Both integrators at rtol 1e-12, atol 1e-14; each alone is accurate to
  // about 1e-11 here, so 1e-8 absolute (m, m/s, s) leaves three orders of margin.
  const RTOL = 1e-12;
  const ATOL = 1e-14;
  const AGREE = 1e-8;

  // The Seyfarth et al. 2002 example (attack 68°, 1 m apex, 5 m/s), plus
  // shallower, steeper, slower and faster states that all make a valid stride
  // (common practice: span the attack angles and speeds a runner uses).
  const cases = [
    { label: 'Seyfarth 2002: 68°, 1.00 m, 5 m/s', attackDeg: 68, apexHeight: 1.0, speed: 5 },
    { label: '60°, 1.00 m, 4 m/s', attackDeg: 60, apexHeight: 1.0, speed: 4 },
    { label: '75°, 1.05 m, 3 m/s', attackDeg: 75, apexHeight: 1.05, speed: 3 },
    { label: '60°, 1.00 m, 6 m/s', attackDeg: 60, apexHeight: 1.0, speed: 6 },
  ];

  it.each(cases)('$label: liftoff state and contact time agree to 1e-8 absolute', (c) => {
    const run = engine.runBatch({
      model: seyfarthModel(c.attackDeg, RTOL, ATOL),
      inputs: rolloutInput(c.apexHeight, c.speed),
      strides: 1,
      records: true,
    });
    const rec = run.records!;
    expect(rec[L.R_STATUS]).toBe(L.STATUS_OK);

    const ref = odex.odexStride({
      ...SEYFARTH,
      apexHeight: c.apexHeight,
      forwardSpeed: c.speed,
      attack: c.attackDeg * DEG,
      ground: 0,
      apexX: 0,
      rtol: RTOL,
      atol: ATOL,
    });

    // Touchdown is closed form on both sides (law: ballistic flight).
    expect(rec[L.R_ATTACK]).toBeCloseTo(c.attackDeg * DEG, 14);
    expect(Math.abs(rec[L.R_TOUCHDOWN_VX] - ref.touchdownVx)).toBeLessThan(AGREE);
    expect(Math.abs(rec[L.R_TOUCHDOWN_VY] - ref.touchdownVy)).toBeLessThan(AGREE);
    expect(Math.abs(rec[L.R_FOOT_X] - ref.footX)).toBeLessThan(AGREE);

    // The integrated stance (library: odex).
    expect(Math.abs(rec[L.R_LIFTOFF_X] - ref.liftoffX)).toBeLessThan(AGREE);
    expect(Math.abs(rec[L.R_LIFTOFF_Y] - ref.liftoffY)).toBeLessThan(AGREE);
    expect(Math.abs(rec[L.R_LIFTOFF_VX] - ref.liftoffVx)).toBeLessThan(AGREE);
    expect(Math.abs(rec[L.R_LIFTOFF_VY] - ref.liftoffVy)).toBeLessThan(AGREE);
    expect(Math.abs(rec[L.R_CONTACT] - ref.contactTime)).toBeLessThan(AGREE);
    expect(Math.abs(rec[L.R_NEXT_APEX_HEIGHT] - ref.nextApexHeight)).toBeLessThan(AGREE);
    expect(Math.abs(rec[L.R_NEXT_APEX_SPEED] - ref.nextApexSpeed)).toBeLessThan(AGREE);

    // Law: undamped liftoff happens at the rest length, r = L0.
    const px = rec[L.R_LIFTOFF_X] - rec[L.R_FOOT_X];
    const py = rec[L.R_LIFTOFF_Y] - rec[L.R_GROUND];
    expect(Math.abs(Math.hypot(px, py) - SEYFARTH.leg)).toBeLessThan(1e-10);
  });
});

describe('Arenstorf orbit (published: Hairer, Nørsett, Wanner, Solving ODEs I, 2nd ed., 1993, pp. 129–130)', () => {
  // Published initial values and period of the closed orbit.
  const MU = 0.012277471;
  const X0 = 0.994;
  // biome-ignore lint/correctness/noPrecisionLoss: the published digits, as printed (rounded to double here)
  const VY0 = -2.00158510637908252240537862224;
  // biome-ignore lint/correctness/noPrecisionLoss: the published digits, as printed (rounded to double here)
  const PERIOD = 17.0652165601579625588917206249;

  const closure = (r: { x: number; y: number }) => Math.hypot(r.x - X0, r.y);

  it('the check values close the orbit (library: odex (npm), a port of E. Hairer\'s ODEX, at rtol 1e-14)', async () => {
    // Check the reference before checking against it (NLopt's test table does the same).
    // Typed dynamic import: the package ships its .ts source, which tsc would
    // otherwise type-check under this project's strict settings.
    const { Solver } = ((await import('odex' as string)) as { default: OdexPackage }).default;
    const solver = new Solver(4);
    solver.relativeTolerance = 1e-14;
    solver.absoluteTolerance = 1e-16;
    solver.maxSteps = 100_000;
    const mup = 1 - MU;
    // Restricted three-body equations in the rotating frame (Hairer et al., pp. 129–130).
    const f = (_t: number, [x, y, vx, vy]: number[]) => {
      const d1 = ((x + MU) ** 2 + y * y) ** 1.5;
      const d2 = ((x - mup) ** 2 + y * y) ** 1.5;
      return [vx, vy, x + 2 * vy - (mup * (x + MU)) / d1 - (MU * (x - mup)) / d2, y - 2 * vx - (mup * y) / d1 - (MU * y) / d2];
    };
    const end = solver.solve(f, 0, [X0, 0, 0, VY0], PERIOD).y;
    expect(Math.hypot(end[0] - X0, end[1])).toBeLessThan(1e-10);
  });

  it('the kernel stepper returns to the start after one period at rtol 1e-10', () => {
    const r = engine.arenstorf(MU, X0, VY0, PERIOD, 1e-10, 1e-12);
    // The exact orbit closes to ~2e-11 (previous test), so what remains is the
    // stepper's global error. With tolerance proportionality it is C·tol, C the
    // error amplification of this orbit over one period (it starts and ends
    // 0.006 from the Moon at x = 1 − μ, where the flow is most sensitive).
    // Allowing C = 1000 at rtol 1e-10 gives 1e-7; measured |Δx| ≈ 1.6e-9,
    // |Δy| ≈ 4.1e-9.
    expect(Math.abs(r.x - X0)).toBeLessThan(1e-7);
    expect(Math.abs(r.y)).toBeLessThan(1e-7);
    expect(r.steps).toBeGreaterThan(0);
  });

  it('the closure error converges: rtol 1e-8 → 1e-11 shrinks it by a large factor', () => {
    // atol = rtol/100 as in the call above. A tolerance-proportional method
    // has global error ∝ tol^p with p between 4/5 (error per step) and 1
    // (local extrapolation, as in DOPRI5; common practice, cf. Hairer et al.
    // II.4 on step size control), i.e. a factor
    // 250–1000 over three decades. The end-point error varies irregularly with
    // tol (components change sign), so require only 10^1.5 ≈ 32 (an
    // effective p ≥ 0.5); measured ≈ 94.
    const loose = closure(engine.arenstorf(MU, X0, VY0, PERIOD, 1e-8, 1e-10));
    const tight = closure(engine.arenstorf(MU, X0, VY0, PERIOD, 1e-11, 1e-13));
    expect(tight).toBeLessThan(loose);
    expect(loose / tight).toBeGreaterThan(10 ** 1.5);
  });
});

describe('energy (law: energy conservation, constant conservative spring)', () => {
  it('is conserved over 50 strides of the Seyfarth 2002 body to 1e-9 relative at rtol 1e-12', () => {
    // Seyfarth et al. 2002: 68°, 1 m apex, 5 m/s, which settles onto a stable gait.
    const strides = 50;
    const run = engine.runBatch({
      model: seyfarthModel(68, 1e-12, 1e-14),
      inputs: rolloutInput(1.0, 5),
      strides,
      records: true,
    });
    expect(run.summaries[L.S_STATUS]).toBe(L.STATUS_OK);
    expect(run.summaries[L.S_STRIDES_COMPLETED]).toBe(strides);
    const rec = run.records!;
    const before = rec[L.R_ENERGY_BEFORE]; // stride 0, at the first apex
    const after = rec[(strides - 1) * L.R_SIZE + L.R_ENERGY_AFTER]; // stride 49, at the last apex
    // Closed form of the start energy: m g y + ½ m v² (law).
    expect(before).toBeCloseTo(SEYFARTH.mass * SEYFARTH.g * 1.0 + 0.5 * SEYFARTH.mass * 25, 9);
    expect(Math.abs(after - before) / before).toBeLessThanOrEqual(1e-9);
  });
});
