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
    await expect(synthesizeDeadbeat(body, { groundRange_m: [-0.1, 0.1], mode: 'angle', target: 'above_ground_met' })).rejects.toThrow(/target: expected absolute with mode angle/);
  });

  it('a tolerance below 100 x the integrator accuracy is refused before any work, naming the floor', async () => {
    // this body's integrator: rtol 1e-11, atol 1e-13, apex 1 m = L0: floor 100 (1e-11 x 1 + 1e-13) = 1.01e-9 m
    const error = await synthesizeDeadbeat(body, { groundRange_m: [-0.1, 0.05], tolerance_m: 1e-300 }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(InputError);
    expect((error as InputError).issues[0].path).toBe('tolerance_m');
    expect((error as InputError).issues[0].expected).toMatch(/^a length from 1\.01e-9 to 1 m \(the leg length\)/);
    await expect(synthesizeDeadbeat(body, { groundRange_m: [-0.1, 0.05], tolerance_m: 2 })).rejects.toThrow(/tolerance_m/);
    await expect(synthesizeDeadbeat(body, { groundRange_m: [-0.1, 0.05], maxKnots: 5000 })).rejects.toThrow(/max_knots: expected an integer from knots \(41\) to 4000/);
  });

  it('the refinement reports how it ended: the tolerance met, or the knot cap', async () => {
    const met = await synthesizeDeadbeat(body, { groundRange_m: [-0.1, 0.04], knots: 5, tolerance_m: 1e-4 });
    expect(met.refinement).toMatchObject({ stopped_by: 'tolerance_met', max_rounds: 12, max_knots: 4000, tolerance_m: 1e-4 });
    expect(met.max_abs_residual_between_knots_m!).toBeLessThanOrEqual(1e-4);
    const capped = await synthesizeDeadbeat(body, { groundRange_m: [-0.1, 0.04], knots: 5, maxKnots: 7, tolerance_m: 1.01e-9 });
    expect(capped.refinement.stopped_by).toBe('knot_cap');
    expect(capped.knots.length).toBeLessThanOrEqual(7);
    expect(capped.max_abs_residual_between_knots_m!).toBeGreaterThan(1.01e-9);
  });
});

describe('what a table holds, on rising random ground (the README robot: split leg 20/21 kN/m, ground range -0.3 to 0.05 m)', () => {
  // README's example scenario; the deadbeat table replaces its angle policy
  const robot = parseScenario({
    body: { mass_kg: 80, leg_length_m: 1.0, leg_stiffness_N_per_m: 20000 },
    start: { apex_height_m: 1.0, forward_speed_m_per_s: 5.0 },
    policy: {
      angle: { kind: 'retraction', attack_at_apex_deg: 62, rate_deg_per_s: 50, max_deg: 80 },
      stiffness: { kind: 'split', compression_N_per_m: 20000, extension_N_per_m: 21000 },
    },
    terrain: { kind: 'random_walk', sigma_m: 0.01, seed: 7 },
    strides: 30,
  });
  // rising random ground: each touchdown 5 mm lower to 20 mm higher than the last (Park-Miller
  // minimal standard generator, common practice), 0.29 m up after 40 strides
  let seed = 1;
  const uniform = () => {
    seed = (seed * 16807) % 2147483647;
    return seed / 2147483647;
  };
  let ground = 0;
  const rising = Array.from({ length: 40 }, () => {
    ground += -0.005 + 0.025 * uniform();
    return ground;
  });
  const onRising = (table: DeadbeatTable) =>
    simulate(parseScenario({ ...robot, policy: table.policy, terrain: { kind: 'steps', ground_heights_m: rising }, strides: 40 }));

  it('angle mode holds the absolute apex: it fails once the ground leaves its range; above_ground_met follows the ground', async () => {
    expect(rising[39]).toBeGreaterThan(0.25);
    const absolute = await synthesizeDeadbeat(robot, { groundRange_m: [-0.3, 0.05], mode: 'angle', knots: 11, tolerance_m: 1e-4 });
    const relative = await synthesizeDeadbeat(robot, { groundRange_m: [-0.3, 0.05], mode: 'angle_and_stiffness', knots: 11, tolerance_m: 1e-4 });
    expect(absolute.target.height_reference).toBe('absolute');
    expect(relative.target.height_reference).toBe('above_ground_met');

    const a = await onRising(absolute);
    expect(a.outcome.status).toBe('failed');
    expect(a.outcome.reason).toBe('leg_not_placeable');
    // it fails only after the ground has left the table's range (law: the apex stays near 1 m while the ground rises)
    expect(rising[a.outcome.strides_completed]).toBeGreaterThan(0.05);

    const r = await onRising(relative);
    expect(r.outcome.status).toBe('completed');
    // stride after stride the apex stays 1 m above the ground of the last touchdown
    r.strides.forEach((stride, i) => expect(Math.abs(r.apexes[i + 1].height_m - stride.ground_height_m - 1)).toBeLessThan(0.02));
  });

  it('each table says what it holds and where it stops being valid', async () => {
    const absolute = await synthesizeDeadbeat(robot, { groundRange_m: [-0.3, 0.05], mode: 'angle', knots: 11, tolerance_m: 1e-4 });
    expect(absolute.validity).toMatchObject({ ground_reference: 'start_ground', valid_ground_m: absolute.solved_range_m });
    expect(absolute.validity.holds).toMatch(/next apex at 1 m, an absolute height .*not the speed: this leg gains or loses energy/);
    expect(absolute.validity.valid_while).toMatch(/every touchdown's ground is within -0\.3 to 0\.05 m of the start's ground/);
    const relative = await synthesizeDeadbeat(robot, { groundRange_m: [-0.3, 0.05], mode: 'angle_and_stiffness', knots: 11, tolerance_m: 1e-4 });
    expect(relative.validity).toMatchObject({ ground_reference: 'previous_touchdown', valid_ground_m: [-0.3, 0.05] });
    expect(relative.validity.holds).toMatch(/next apex 1 m above the ground of the last touchdown, at 5 m\/s/);
    expect(relative.validity.valid_while).toMatch(/within -0\.3 to 0\.05 m of the previous touchdown's/);
    for (const t of [absolute, relative]) expect(t.validity.beyond).toMatch(/holds its end values/);
  });

  it('angle_and_stiffness with target absolute holds the absolute height and the speed on a step', async () => {
    const table = await synthesizeDeadbeat(body, { groundRange_m: [-0.1, 0.04], knots: 7, mode: 'angle_and_stiffness', target: 'absolute', tolerance_m: 1e-5 });
    expect(table.target.height_reference).toBe('absolute');
    for (const h of [-0.07, 0.013]) {
      const apex = await nextApex(table, h);
      expect(Math.abs(apex.height_m - 1)).toBeLessThanOrEqual(1e-5);
      expect(Math.abs(apex.forward_speed_m_per_s - 5)).toBeLessThanOrEqual(1e-5);
    }
  });
});
