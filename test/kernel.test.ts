// The stride kernel against closed forms and published behaviour. Every check
// value names its source beside it.
import { describe, expect, it } from 'vitest';
import { L, bisect, rel, run, runModel, scenario } from './helpers.js';
import { loadEngine, rolloutInput } from '../src/core/engine.js';
import { buildModel, DEG } from '../src/core/model.js';

const m = 80;
const k = 20000;
const g = 9.81;
const L0 = 1;
const omega = Math.sqrt(k / m);

describe('vertical hop (attack 90°) against the spring-mass oscillator with constant force', () => {
  // law / closed form: m x'' = -k x - m g with x = r - L0, x(0) = 0, x'(0) = -v
  // (docs/references.md, laws: vertical hop).
  const apex = 1.2;
  const v = Math.sqrt(2 * g * (apex - L0)); // law: free fall from the apex to touchdown at y = L0
  const amplitude = Math.hypot(g / omega ** 2, v / omega);
  const hop = scenario({
    start: { apex_height_m: apex, forward_speed_m_per_s: 0 },
    policy: { angle: { kind: 'fixed', attack_deg: 90 } },
    strides: 3,
  });

  it('contact time, peak force, maximum compression and return apex to 1e-9 relative', async () => {
    const r = await run(hop);
    expect(r.status).toBe(L.STATUS_OK);
    for (let s = 0; s < 3; s++) {
      expect(rel(r.rec(s, L.R_CONTACT), (2 * (Math.PI - Math.atan((v * omega) / g))) / omega)).toBeLessThan(1e-9);
      expect(rel(r.rec(s, L.R_PEAK_FORCE), m * g + k * amplitude)).toBeLessThan(1e-9);
      expect(rel(r.rec(s, L.R_MAX_COMPRESSION), g / omega ** 2 + amplitude)).toBeLessThan(1e-9);
      // maximum compression halfway through the symmetric contact (closed form above); a time is
      // first-order sensitive to where the event is located on the step, the depth is not
      expect(rel(r.rec(s, L.R_MAX_COMPRESSION_TIME), (Math.PI - Math.atan((v * omega) / g)) / omega)).toBeLessThan(1e-9);
      expect(rel(r.rec(s, L.R_NEXT_APEX_HEIGHT), apex)).toBeLessThan(1e-9);
      expect(r.rec(s, L.R_NEXT_APEX_SPEED)).toBe(0); // a vertical leg has no horizontal force at all
      expect(r.rec(s, L.R_PEAK_FRICTION)).toBe(0);
    }
  });

  it('closed-form flight: apex to touchdown sqrt(2 (y - L0) / g), stride = contact + 2 flight halves', async () => {
    const r = await run(hop);
    const tFall = Math.sqrt((2 * (apex - L0)) / g); // law: ballistic flight
    expect(rel(r.rec(0, L.R_APEX_TO_TOUCHDOWN), tFall)).toBeLessThan(1e-14);
    expect(rel(r.rec(0, L.R_TOUCHDOWN_VY), -v)).toBeLessThan(1e-14);
    expect(rel(r.rec(0, L.R_STRIDE_TIME), 2 * tFall + r.rec(0, L.R_CONTACT))).toBeLessThan(1e-9);
  });

  it('with damping: underdamped oscillator, liftoff where the leg force k(L0-r) - c r\' falls to zero', async () => {
    // law / closed form: m x'' + c x' + k x = -m g, x(0) = 0, x'(0) = -v;
    // x(t) = -g/w^2 + e^{-z w t}(A cos wd t + B sin wd t), A = g/w^2, B = (-v + z w A)/wd.
    const c = 300; // N·s/m: damping ratio c / (2 sqrt(k m)) = 0.119
    const zeta = c / (2 * Math.sqrt(k * m));
    const wd = omega * Math.sqrt(1 - zeta * zeta);
    const A = g / omega ** 2;
    const B = (-v + zeta * omega * A) / wd;
    const x = (t: number) => -A + Math.exp(-zeta * omega * t) * (A * Math.cos(wd * t) + B * Math.sin(wd * t));
    const xd = (t: number) =>
      Math.exp(-zeta * omega * t) *
      ((-zeta * omega * A + wd * B) * Math.cos(wd * t) + (-zeta * omega * B - wd * A) * Math.sin(wd * t));
    const force = (t: number) => -k * x(t) - c * xd(t);
    const tMax = bisect(xd, 0, Math.PI / wd); // x' = 0: maximum compression
    const tLift = bisect(force, tMax, (2 * Math.PI) / wd); // a foot cannot pull
    // peak force where dF/dt = 0, found by bisection on a central difference of the closed form
    const dF = (t: number) => force(t + 1e-7) - force(t - 1e-7);
    const tPeak = bisect(dF, 1e-6, tLift);
    const xLift = x(tLift);
    const vLift = xd(tLift);
    const apexAfter = L0 + xLift + (vLift * vLift) / (2 * g); // law: ballistic rise

    const r = await run(scenario({ ...hopOverrides(), body: { leg_damping_N_s_per_m: c } }));
    expect(r.status).toBe(L.STATUS_OK);
    expect(rel(r.rec(0, L.R_CONTACT), tLift)).toBeLessThan(1e-9);
    expect(rel(r.rec(0, L.R_MAX_COMPRESSION), -x(tMax))).toBeLessThan(1e-9);
    expect(rel(r.rec(0, L.R_MAX_COMPRESSION_TIME), tMax)).toBeLessThan(1e-9);
    expect(rel(r.rec(0, L.R_LIFTOFF_VY), vLift)).toBeLessThan(1e-9);
    expect(rel(r.rec(0, L.R_NEXT_APEX_HEIGHT), apexAfter)).toBeLessThan(1e-9);
    expect(rel(r.rec(0, L.R_PEAK_FORCE), force(tPeak))).toBeLessThan(1e-9);
    // The foot leaves before the leg is back at rest length.
    expect(xLift).toBeLessThan(0);
    expect(r.rec(0, L.R_LIFTOFF_LEG_FORCE)).toBeLessThan(1e-6 * m * g);
    // Energy bookkeeping: what the body lost is reported as dissipated (damper + spring energy left in the leg).
    const lost = r.rec(0, L.R_ENERGY_BEFORE) - r.rec(0, L.R_ENERGY_AFTER);
    expect(lost).toBeGreaterThan(0);
    expect(rel(r.rec(0, L.R_DISSIPATED), lost)).toBeLessThan(1e-9);
  });

  function hopOverrides() {
    return {
      start: { apex_height_m: apex, forward_speed_m_per_s: 0 },
      policy: { angle: { kind: 'fixed', attack_deg: 90 } },
    };
  }
});

describe('running strides', () => {
  it('energy is conserved over 50 strides with a constant spring (law: conservative spring-mass system)', async () => {
    const r = await run(scenario({ strides: 50 }));
    expect(r.status).toBe(L.STATUS_OK);
    const e0 = r.rec(0, L.R_ENERGY_BEFORE);
    for (let s = 0; s < 50; s++) expect(rel(r.rec(s, L.R_ENERGY_AFTER), e0)).toBeLessThan(1e-9);
  });

  it('split stiffness changes the energy by exactly ½(k_ext − k_comp)·δ² (law: work of a spring switched at maximum compression)', async () => {
    for (const [kc, ke] of [[20000, 22000], [21000, 19000]]) {
      const r = await run(scenario({ policy: { angle: { kind: 'fixed', attack_deg: 68 }, stiffness: { kind: 'split', compression_N_per_m: kc, extension_N_per_m: ke } } }));
      expect(r.status).toBe(L.STATUS_OK);
      const delta = r.rec(0, L.R_MAX_COMPRESSION);
      const dE = r.rec(0, L.R_ENERGY_AFTER) - r.rec(0, L.R_ENERGY_BEFORE);
      expect(rel(dE, 0.5 * (ke - kc) * delta * delta)).toBeLessThan(1e-9);
      expect(rel(r.rec(0, L.R_PEAK_FORCE), Math.max(kc, ke) * delta)).toBeLessThan(1e-12);
    }
  });

  it('friction demand at touchdown is cot(attack) (law: a point foot\'s force acts along the leg)', async () => {
    for (const attack of [60, 68, 75]) {
      const r = await run(scenario({ policy: { angle: { kind: 'fixed', attack_deg: attack } } }));
      const cot = 1 / Math.tan(attack * DEG);
      // peak over the stance is at touchdown or liftoff: never below cot(attack)
      expect(r.rec(0, L.R_PEAK_FRICTION)).toBeGreaterThanOrEqual(cot * (1 - 1e-12));
      const liftCot = 1 / Math.tan(r.rec(0, L.R_LIFTOFF_ANGLE));
      expect(rel(r.rec(0, L.R_PEAK_FRICTION), Math.max(cot, liftCot))).toBeLessThan(1e-9);
    }
    expect(1 / Math.tan(68 * DEG)).toBeCloseTo(0.404, 3); // law (docs/references.md, friction demand): 0.404 at 68°
  });

  it('stance at a fixed point is symmetric (Ghigliazza, Altendorfer, Holmes, Koditschek 2003)', async () => {
    // Find the fixed point of the apex-height map at the energy of 5 m/s at 1 m (Seyfarth et al. 2002 body).
    const energy = m * g * 1 + 0.5 * m * 25;
    const engine = await loadEngine();
    const model = buildModel(scenario());
    const next = (y: number) => {
      const speed = Math.sqrt((2 * (energy - m * g * y)) / m);
      const b = engine.runBatch({ model, inputs: rolloutInput(y, speed), strides: 1, records: true });
      return b.records![L.R_NEXT_APEX_HEIGHT] - y;
    };
    const y = bisect(next, 0.93, 0.96);
    const speed = Math.sqrt((2 * (energy - m * g * y)) / m);
    const r = await run(scenario({ start: { apex_height_m: y, forward_speed_m_per_s: speed } }));
    expect(Math.abs(r.rec(0, L.R_NEXT_APEX_HEIGHT) - y)).toBeLessThan(1e-10);
    expect(Math.abs(r.rec(0, L.R_LIFTOFF_ANGLE) - 68 * DEG)).toBeLessThan(1e-8);
    expect(Math.abs(r.rec(0, L.R_LIFTOFF_VY) + r.rec(0, L.R_TOUCHDOWN_VY))).toBeLessThan(1e-8);
    expect(Math.abs(r.rec(0, L.R_LIFTOFF_VX) - r.rec(0, L.R_TOUCHDOWN_VX))).toBeLessThan(1e-8);
    expect(rel(r.rec(0, L.R_PEAK_FRICTION), 1 / Math.tan(68 * DEG))).toBeLessThan(1e-8);
  });

  it('Seyfarth et al. 2002 body (80 kg, 1 m, 20 kN/m, 68°, 5 m/s at 1 m) runs 50 strides and the apex settles', async () => {
    // published: Seyfarth, Geyer, Günther, Blickhan 2002, J. Biomech. 35(5):649-655 — a stable fixed point exists.
    const r = await run(scenario({ strides: 50, integrator: { relative_tolerance: 1e-10, absolute_tolerance: 1e-12 } }));
    expect(r.status).toBe(L.STATUS_OK);
    expect(r.completed).toBe(50);
    const last = r.rec(49, L.R_NEXT_APEX_HEIGHT);
    expect(Math.abs(r.rec(48, L.R_NEXT_APEX_HEIGHT) - last)).toBeLessThan(1e-6);
    expect(Math.abs(r.rec(0, L.R_NEXT_APEX_HEIGHT) - 1)).toBeGreaterThan(1e-3); // it did move
    // Contact time of a human runner at 3-5 m/s is about 0.2-0.3 s (from memory, docs/references.md): loose band.
    expect(r.rec(49, L.R_CONTACT)).toBeGreaterThan(0.1);
    expect(r.rec(49, L.R_CONTACT)).toBeLessThan(0.3);
  });
});

describe('scheduled touchdown angles', () => {
  it('retraction: the touchdown condition y = ground + L0 sin(attack(t)) holds at the found time', async () => {
    const rate = 50;
    const r = await run(scenario({ start: { apex_height_m: 1.25, forward_speed_m_per_s: 3 }, policy: { angle: { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: rate } } }));
    expect(r.status).toBe(L.STATUS_OK);
    const t = r.rec(0, L.R_APEX_TO_TOUCHDOWN);
    const attack = (60 + rate * t) * DEG; // docs/contract.md: attack(t) = attack_at_apex + rate t
    expect(Math.abs(r.rec(0, L.R_ATTACK) - attack)).toBeLessThan(1e-14);
    // law: ballistic fall from the apex; an independent bisection of the same condition
    const gap = (s: number) => 1.25 - 0.5 * g * s * s - Math.sin((60 + rate * s) * DEG);
    expect(Math.abs(t - bisect(gap, 0, 1))).toBeLessThan(1e-13);
  });

  it('retraction clamps: the angle holds at max_deg once reached', async () => {
    const r = await run(scenario({ start: { apex_height_m: 1.25, forward_speed_m_per_s: 5 }, policy: { angle: { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 200, max_deg: 65 } } }));
    expect(r.rec(0, L.R_ATTACK)).toBeCloseTo(65 * DEG, 14);
    expect(Math.abs(r.rec(0, L.R_APEX_TO_TOUCHDOWN) - Math.sqrt((2 * (1.25 - Math.sin(65 * DEG))) / g))).toBeLessThan(1e-14);
  });

  it('time table: piecewise-linear attack, held flat past the ends; grazing-safe first crossing', async () => {
    const table = { kind: 'time_table', time_since_apex_s: [0, 0.1, 0.2, 0.3], attack_deg: [55, 60, 70, 72] };
    const r = await run(scenario({ start: { apex_height_m: 1.15, forward_speed_m_per_s: 5 }, policy: { angle: table } }));
    const attackAt = (t: number) => {
      const ts = table.time_since_apex_s;
      const as = table.attack_deg;
      if (t >= ts[3]) return as[3];
      const i = ts.findIndex((x, j) => t >= x && t < ts[j + 1]);
      return as[i] + ((t - ts[i]) / (ts[i + 1] - ts[i])) * (as[i + 1] - as[i]);
    };
    const gap = (s: number) => 1.15 - 0.5 * g * s * s - Math.sin(attackAt(s) * DEG);
    const t = r.rec(0, L.R_APEX_TO_TOUCHDOWN);
    expect(Math.abs(gap(t))).toBeLessThan(1e-12);
    for (let s = 0; s < t; s += 1e-4) expect(gap(s)).toBeGreaterThan(0); // no earlier crossing
  });
});

describe('failure is a status, with the stride where it happened', () => {
  it('body hits the ground (a spring too soft for the body)', async () => {
    // vertical hop: maximum compression g/w^2 + A exceeds L0 when w^2 = k/m = 10 s^-2
    const r = await run(scenario({ body: { leg_stiffness_N_per_m: 800 }, start: { apex_height_m: 1.5, forward_speed_m_per_s: 0 }, policy: { angle: { kind: 'fixed', attack_deg: 90 } } }));
    expect(r.status).toBe(L.STATUS_BODY_HIT_GROUND);
    expect(r.completed).toBe(0);
  });

  it('falls backward (too slow to vault over the foot)', async () => {
    const r = await run(scenario({ start: { apex_height_m: 1, forward_speed_m_per_s: 0.3 }, policy: { angle: { kind: 'fixed', attack_deg: 60 } } }));
    expect(r.status).toBe(L.STATUS_FELL_BACKWARD);
  });

  it('no liftoff (an overdamped leg settles under the body)', async () => {
    const r = await run(scenario({ start: { apex_height_m: 1.1, forward_speed_m_per_s: 0 }, policy: { angle: { kind: 'fixed', attack_deg: 90 } }, body: { leg_damping_N_s_per_m: 5 * 2 * Math.sqrt(k * m) } }));
    expect(r.status).toBe(L.STATUS_NO_LIFTOFF);
  });

  it('no apex (leaves the ground still descending)', async () => {
    // a soft leg planted flat at 50° while running fast: the body is still falling when r returns to L0
    const r = await run(scenario({ body: { leg_stiffness_N_per_m: 5000 }, start: { apex_height_m: 0.816, forward_speed_m_per_s: 6 }, policy: { angle: { kind: 'fixed', attack_deg: 50 } } }));
    expect(r.rec(0, L.R_LIFTOFF_VY)).toBeLessThanOrEqual(0);
    expect(r.status).toBe(L.STATUS_NO_APEX);
  });

  it('leg cannot be placed (a step up above the apex), reported at the stride where it happens', async () => {
    const r = await run(scenario({ terrain: { kind: 'steps', ground_heights_m: [0, 0, 0.5] }, strides: 5 }));
    expect(r.status).toBe(L.STATUS_LEG_NOT_PLACEABLE);
    expect(r.completed).toBe(2);
    expect(r.rec(2, L.R_STATUS)).toBe(L.STATUS_LEG_NOT_PLACEABLE);
  });

  it('numeric trouble: step size underflow, step limit, non-finite state', async () => {
    // 1e-30: far below the double-precision rounding of the error estimate (at 1e-18 a step's
    // estimate can round below the tolerance, and the stance may then complete in a few thousand steps)
    const under = await run(scenario({ integrator: { relative_tolerance: 1e-30, absolute_tolerance: 1e-300 } }));
    expect(under.status).toBe(L.STATUS_STEP_UNDERFLOW);
    const limit = await run(scenario({ integrator: { max_steps_per_stance: 10 } }));
    expect(limit.status).toBe(L.STATUS_STEP_LIMIT);
    const model = buildModel(scenario());
    const b = await runModel(model, rolloutInput(NaN, 5), 3);
    expect(b.summaries[L.S_STATUS]).toBe(L.STATUS_NON_FINITE);
    expect(b.summaries[L.S_STRIDES_COMPLETED]).toBe(0);
  });
});

describe('terrain', () => {
  it('random walk: seeded, the same stream twice gives the same ground, another stream differs', async () => {
    const s = scenario({ terrain: { kind: 'random_walk', sigma_m: 0.01, seed: 7 }, strides: 10 });
    const engine = await loadEngine();
    const model = buildModel(s);
    const inputs = new Float64Array([...rolloutInput(1, 5, 0), ...rolloutInput(1, 5, 1), ...rolloutInput(1, 5, 0)]);
    const b = engine.runBatch({ model, inputs, strides: 10, records: true });
    const ground = (r: number, st: number) => b.records![(r * 10 + st) * L.R_SIZE + L.R_GROUND];
    let walk = 0;
    for (let st = 0; st < b.summaries[L.S_STRIDES_COMPLETED]; st++) {
      walk += 0.01 * engine.terrainGaussian(7, 0, st); // docs/contract.md: previous height plus a Gaussian step
      expect(ground(0, st)).toBeCloseTo(walk, 15);
      expect(ground(2, st)).toBe(ground(0, st));
      expect(ground(1, st)).not.toBe(ground(0, st));
    }
  });

  it('the Gaussian stream has mean 0 and variance 1 (law of large numbers; 4 sigma bands)', async () => {
    const engine = await loadEngine();
    const n = 100000;
    let s1 = 0;
    let s2 = 0;
    for (let i = 0; i < n; i++) {
      const z = engine.terrainGaussian(123, 4, i);
      s1 += z;
      s2 += z * z;
    }
    expect(Math.abs(s1 / n)).toBeLessThan(4 / Math.sqrt(n));
    expect(Math.abs(s2 / n - 1)).toBeLessThan(4 * Math.sqrt(2 / n));
  });
});
