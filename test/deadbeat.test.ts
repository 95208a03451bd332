// Time-based deadbeat tables (Ernst, Geyer & Blickhan 2009; Wu & Geyer 2013) on the human-like
// body of Seyfarth et al. 2002: 80 kg, 1 m, 20 kN/m, g 9.81, target apex 1 m at 5 m/s.
import { beforeAll, describe, expect, it } from 'vitest';
import { InputError } from '../src/core/errors.js';
import { parseScenario } from '../src/core/scenario.js';
import { simulate } from '../src/core/simulate.js';
import { synthesizeDeadbeat, type DeadbeatTable } from '../src/core/synthesis/deadbeat.js';
import { scenario } from './helpers.js';

const body = scenario({ integrator: { relative_tolerance: 1e-11, absolute_tolerance: 1e-13 } });
const m = 80;
const g = 9.81;

async function nextApex(table: DeadbeatTable, h: number) {
  const s = parseScenario({ ...body, policy: table.policy, terrain: { kind: 'steps', ground_heights_m: [h] }, strides: 1 });
  const r = await simulate(s);
  expect(r.outcome.status).toBe('completed');
  return r.apexes[1];
}

describe('deadbeat table, attack angle only (target: the same absolute apex height)', () => {
  let table: DeadbeatTable;
  beforeAll(async () => {
    table = await synthesizeDeadbeat(body, { groundRange_m: [-0.3, 0.05], knots: 15, mode: 'angle' });
  });

  it('solves the whole range, with knots increasing in time since apex', () => {
    expect(table.unsolved).toEqual([]);
    expect(table.solved_range_m).toEqual([-0.3, 0.05]);
    const t = table.policy.angle.time_since_apex_s;
    for (let i = 1; i < t.length; i++) expect(t[i]).toBeGreaterThan(t[i - 1]);
    // law: ballistic fall, t = sqrt(2 (y* - h - L0 sin a) / g), at every knot
    for (const k of table.knots) {
      expect(k.time_since_apex_s).toBeCloseTo(Math.sqrt((2 * (1 - k.ground_height_m - Math.sin((k.attack_deg * Math.PI) / 180))) / g), 12);
    }
  });

  it('returns the body to the target apex to <= 1e-6 m at ground heights across its range', async () => {
    expect(table.max_abs_residual_at_knots_m).toBeLessThan(1e-9);
    expect(table.max_abs_residual_between_knots_m!).toBeLessThanOrEqual(1e-6);
    // heights the solver never saw, run through the public simulate path
    for (const h of [-0.2873, -0.1234, -0.0411, 0.0007, 0.0333, 0.0491]) {
      const apex = await nextApex(table, h);
      expect(Math.abs(apex.height_m - 1)).toBeLessThanOrEqual(1e-6);
      // law: energy conservation with heights absolute — the speed comes back too
      expect(Math.abs(apex.forward_speed_m_per_s - 5)).toBeLessThan(1e-5);
    }
  });

  it('covers a 30 % of leg length step down (Wu & Geyer 2013 report steps up to 30 % of L0 at 5 m/s)', async () => {
    const wide = await synthesizeDeadbeat(body, { groundRange_m: [-0.35, 0.2], knots: 12, mode: 'angle', tolerance_m: 1e-4 });
    expect(wide.solved_range_m![0]).toBeLessThanOrEqual(-0.3);
    // every knot's touchdown height lies below the apex (law: otherwise the leg cannot be placed)
    for (const k of wide.knots) expect(k.ground_height_m + Math.sin((k.attack_deg * Math.PI) / 180)).toBeLessThan(1);
    expect(wide.unsolved.length).toBeGreaterThan(0);
    expect(wide.unsolved[wide.unsolved.length - 1].to_m).toBeCloseTo(0.2, 12);
  });
});

describe('deadbeat table, attack angle and extension stiffness (target: same height above the ground met, same speed)', () => {
  it('holds apex height above the new ground and speed to <= 1e-6; the leg supplies exactly m g h', async () => {
    const table = await synthesizeDeadbeat(body, { groundRange_m: [-0.2, 0.04], knots: 9, mode: 'angle_and_stiffness' });
    expect(table.unsolved).toEqual([]);
    expect(table.max_abs_residual_between_knots_m!).toBeLessThanOrEqual(1e-6);
    for (const h of [-0.17, -0.05, 0.021]) {
      const apex = await nextApex(table, h);
      expect(Math.abs(apex.height_m - (1 + h))).toBeLessThanOrEqual(1e-6);
      expect(Math.abs(apex.forward_speed_m_per_s - 5)).toBeLessThanOrEqual(1e-6);
    }
    // law: the energy at the next apex differs by m g h; a step down needs a softer extension
    for (const k of table.knots) {
      const dE = m * g * (k.next_apex_height_m - 1) + 0.5 * m * (k.next_forward_speed_m_per_s ** 2 - 25);
      expect(dE).toBeCloseTo(m * g * k.ground_height_m, 6);
      if (k.ground_height_m < -0.01) expect(k.extension_N_per_m).toBeLessThan(20000);
      if (k.ground_height_m > 0.01) expect(k.extension_N_per_m).toBeGreaterThan(20000);
    }
  });
});

describe('deadbeat options', () => {
  it('bad options are InputErrors naming the option', async () => {
    await expect(synthesizeDeadbeat(body, { groundRange_m: [0.1, -0.1] })).rejects.toThrow(/ground_range_m/);
    await expect(synthesizeDeadbeat(body, { groundRange_m: [-0.1, 0.1], knots: 1 })).rejects.toBeInstanceOf(InputError);
    await expect(synthesizeDeadbeat(body, { groundRange_m: [-0.1, 0.1], attackRange_deg: [80, 70] })).rejects.toThrow(/attack_range_deg/);
    await expect(synthesizeDeadbeat(body, { groundRange_m: [-0.1, 0.1], tolerance_m: 0 })).rejects.toThrow(/tolerance_m/);
  });
});
