// The touchdown search for fast angle schedules (L0·ω² > g, where the touchdown gap is not
// concave) against an independent dense first-root search written here, over a grid of fast
// retractions (rates, apexes, clamps) and steep time tables. The gap
//   f(t) = y_apex − g t²/2 − ground − L0 sin(attack(t))
// is the contract's touchdown condition (CONTRACT.md: touchdown when y = ground + L0 sin(attack)
// while descending); its first root on [0, t_ground] is the touchdown (law: ballistic flight from
// the apex, y(t) = y_apex − g t²/2, until the body reaches the ground at t_ground).
import { describe, expect, it } from 'vitest';
import { L, bisect, run, scenario } from './helpers.js';
import { DEG } from '../src/core/model.js';
import { main } from '../src/cli/main.js';

const g = 9.81;
const L0 = 1;

type Schedule = (t: number) => number; // attack angle, deg

interface Reference {
  /** First root of the gap while the commanded angle is an attack angle, or null. */
  touchdown: number | null;
  /** The angle left (0, 90] deg before the body reached the ground. */
  angleLeft: boolean;
}

// Dense uniform sampling (about SAMPLES points on the window, and every breakpoint) and bisection
// of the first sign change: slow, simple, and independent of the kernel's bound-based march.
const SAMPLES = 100_000;
function denseFirstRoot(apex: number, attack: Schedule, breakpoints: number[]): Reference {
  const tGround = Math.sqrt((2 * apex) / g);
  const ends = [0, ...breakpoints.filter((b) => b > 0 && b < tGround).sort((a, b) => a - b), tGround];
  const times: number[] = [0];
  for (let p = 1; p < ends.length; p++) {
    const n = Math.max(1, Math.ceil(((ends[p] - ends[p - 1]) / tGround) * SAMPLES));
    for (let i = 1; i <= n; i++) times.push(i === n ? ends[p] : ends[p - 1] + ((ends[p] - ends[p - 1]) * i) / n);
  }
  const valid = (t: number) => {
    const a = attack(t);
    return a > 0 && a <= 90;
  };
  // where the angle first leaves (0, 90], to machine precision
  let tExit = Infinity;
  for (let i = 1; i < times.length; i++) {
    if (!valid(times[i])) {
      let lo = times[i - 1];
      let hi = times[i];
      for (let k = 0; k < 200; k++) {
        const mid = 0.5 * (lo + hi);
        if (mid === lo || mid === hi) break;
        if (valid(mid)) lo = mid;
        else hi = mid;
      }
      tExit = lo;
      break;
    }
  }
  const gap = (t: number) => apex - 0.5 * g * t * t - L0 * Math.sin(attack(t) * DEG);
  for (let i = 1; i < times.length && times[i - 1] < tExit; i++) {
    const t = Math.min(times[i], tExit);
    if (gap(t) <= 0) return { touchdown: bisect(gap, times[i - 1], t), angleLeft: false };
  }
  return { touchdown: null, angleLeft: tExit < tGround };
}

const retraction = (a0: number, rate: number, min = -Infinity, max = Infinity): Schedule => (t) => Math.min(Math.max(a0 + rate * t, min), max);
const retractionBreaks = (a0: number, rate: number, min?: number, max?: number) =>
  [min, max].filter((c): c is number => c !== undefined).map((c) => (c - a0) / rate).filter((t) => t > 0);

function tableSchedule(times: number[], angles: number[]): Schedule {
  return (t) => {
    if (t <= times[0]) return angles[0];
    if (t >= times[times.length - 1]) return angles[angles.length - 1];
    let i = 0;
    while (times[i + 1] <= t) i++;
    return angles[i] + ((t - times[i]) / (times[i + 1] - times[i])) * (angles[i + 1] - angles[i]);
  };
}

interface Case {
  name: string;
  apex: number;
  angle: Record<string, unknown>;
  attack: Schedule;
  breakpoints: number[];
}

const cases: Case[] = [];
for (const apex of [1.0, 1.2, 1.5, 2.5]) {
  for (const a0 of [50, 60, 75]) {
    for (const rate of [-3000, -1000, -300, 300, 1000, 3000]) {
      if (apex <= L0 * Math.sin(a0 * DEG)) continue;
      cases.push({
        name: `apex ${apex} m, ${a0}° ${rate > 0 ? '+' : ''}${rate} °/s, no clamp`,
        apex,
        angle: { kind: 'retraction', attack_at_apex_deg: a0, rate_deg_per_s: rate },
        attack: retraction(a0, rate),
        breakpoints: [],
      });
      const [min, max] = rate > 0 ? [undefined, 85] : [20, undefined];
      cases.push({
        name: `apex ${apex} m, ${a0}° ${rate > 0 ? '+' : ''}${rate} °/s, clamped`,
        apex,
        angle: { kind: 'retraction', attack_at_apex_deg: a0, rate_deg_per_s: rate, ...(min === undefined ? {} : { min_deg: min }), ...(max === undefined ? {} : { max_deg: max }) },
        attack: retraction(a0, rate, min, max),
        breakpoints: retractionBreaks(a0, rate, min, max),
      });
    }
  }
  // steep time tables: a zigzag of slopes up to (88 - 30) / (scale · 0.02) deg/s
  for (const scale of [0.05, 0.2, 1]) {
    const times = [0, 0.02, 0.05, 0.08, 0.12, 0.2, 0.35].map((t) => t * scale);
    const angles = [50, 85, 30, 88, 40, 80, 65];
    if (apex <= L0 * Math.sin(angles[0] * DEG)) continue;
    cases.push({
      name: `apex ${apex} m, zigzag table, slopes to ${Math.round(58 / (0.03 * scale))} °/s`,
      apex,
      angle: { kind: 'time_table', time_since_apex_s: times, attack_deg: angles },
      attack: tableSchedule(times, angles),
      breakpoints: times,
    });
  }
}

describe('touchdown of fast angle schedules = the first root of a dense independent search', () => {
  it(`${cases.length} schedules: same outcome, same touchdown time to 1e-11 s`, async () => {
    let roots = 0;
    let left = 0;
    for (const c of cases) {
      const ref = denseFirstRoot(c.apex, c.attack, c.breakpoints);
      const r = await run(scenario({ start: { apex_height_m: c.apex, forward_speed_m_per_s: 4 }, policy: { angle: c.angle } }));
      const status = r.rec(0, L.R_STATUS);
      const tKernel = r.rec(0, L.R_APEX_TO_TOUCHDOWN);
      if (ref.touchdown !== null) {
        roots++;
        // a touchdown happened: the stride went on into stance (whatever happened there)
        expect(status, c.name).not.toBe(L.STATUS_ATTACK_OUT_OF_RANGE);
        expect(Math.abs(tKernel - ref.touchdown), c.name).toBeLessThan(1e-11);
        const attack = r.rec(0, L.R_ATTACK) / DEG;
        expect(attack, c.name).toBeGreaterThan(0);
        expect(attack, c.name).toBeLessThanOrEqual(90 + 1e-12);
        expect(Math.abs(attack - c.attack(ref.touchdown)), c.name).toBeLessThan(1e-8);
      } else {
        if (ref.angleLeft) left++;
        expect(status, c.name).toBe(ref.angleLeft ? L.STATUS_ATTACK_OUT_OF_RANGE : L.STATUS_BODY_HIT_GROUND);
        expect(r.completed, c.name).toBe(0);
        expect(Number.isNaN(tKernel), c.name).toBe(true); // no touchdown is reported
      }
    }
    // the grid holds both outcomes, in numbers
    expect(roots).toBeGreaterThan(50);
    expect(left).toBeGreaterThan(10);
  });

  it('apex 1 m, 60° + 1000 °/s: the first root, 25.4 ms at 85.4°, not a later one', async () => {
    const r = await run(scenario({ start: { apex_height_m: 1, forward_speed_m_per_s: 5 }, policy: { angle: { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 1000 } } }));
    const t = r.rec(0, L.R_APEX_TO_TOUCHDOWN);
    const ref = denseFirstRoot(1, retraction(60, 1000), []);
    expect(Math.abs(t - ref.touchdown!)).toBeLessThan(1e-12);
    expect(t).toBeCloseTo(0.0254, 4);
    expect(r.rec(0, L.R_ATTACK) / DEG).toBeCloseTo(85.4, 1);
  });

  it('apex 1.5 m, 60° + 300 °/s, no clamp: the angle passes 90° in flight, a named failure (never an attack of 274°)', async () => {
    const r = await run(scenario({ start: { apex_height_m: 1.5, forward_speed_m_per_s: 5 }, policy: { angle: { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 300 } } }));
    expect(r.status).toBe(L.STATUS_ATTACK_OUT_OF_RANGE);
    expect(r.completed).toBe(0);
    expect(r.summary[L.S_MAX_ATTACK]).toBe(-Infinity); // no touchdown angle was reached
    let stdout = '';
    const file = `${process.env.TMPDIR ?? '/tmp'}/pronk-touchdown-${process.pid}.json`;
    const { writeFileSync, rmSync } = await import('node:fs');
    writeFileSync(file, JSON.stringify(r.scenario));
    const code = await main(['simulate', file, '--json'], { stdout: { write: (c: string) => (stdout += c) }, stderr: { write: () => {} }, env: {} });
    rmSync(file);
    expect(code).toBe(0);
    const out = JSON.parse(stdout);
    expect(out.outcome).toMatchObject({ status: 'failed', reason: 'attack_out_of_range', strides_completed: 0 });
    expect(out.outcome.detail).toMatch(/left \(0, 90\] deg before touchdown/);
  });

  it('a concave schedule whose angle leaves (0, 90°] before its touchdown fails the same way', async () => {
    // 60° + 40 °/s is concave (L0 ω² = 0.49 < g); from 5 m the angle reaches 90° at 0.75 s with the body still 2.2 m up
    const r = await run(scenario({ start: { apex_height_m: 5, forward_speed_m_per_s: 5 }, policy: { angle: { kind: 'retraction', attack_at_apex_deg: 60, rate_deg_per_s: 40 } } }));
    const ref = denseFirstRoot(5, retraction(60, 40), []);
    expect(ref.touchdown).toBeNull();
    expect(ref.angleLeft).toBe(true);
    expect(r.status).toBe(L.STATUS_ATTACK_OUT_OF_RANGE);
  });
});

describe('long time tables: every knot is a piece of the search', () => {
  it('a 2000-knot table with a dip that only its late knots hold: the first root, not a later one', async () => {
    // 2000 knots, 0.1 ms apart from 0.05 s: flat 40° except a spike to 89° around knot 1500
    // (t = 0.2 s), where the foot reaches down far enough for an early touchdown
    const times = Array.from({ length: 2000 }, (_, i) => 0.05 + i * 1e-4);
    const angles = times.map((t) => (Math.abs(t - 0.2) < 0.004 ? 89 : 40));
    const apex = 1.15;
    const ref = denseFirstRoot(apex, tableSchedule(times, angles), times);
    expect(ref.touchdown).not.toBeNull();
    expect(ref.touchdown!).toBeGreaterThan(0.19);
    expect(ref.touchdown!).toBeLessThan(0.21);
    const r = await run(scenario({ start: { apex_height_m: apex, forward_speed_m_per_s: 4 }, policy: { angle: { kind: 'time_table', time_since_apex_s: times, attack_deg: angles } } }));
    expect(Math.abs(r.rec(0, L.R_APEX_TO_TOUCHDOWN) - ref.touchdown!)).toBeLessThan(1e-11);
  });
});
