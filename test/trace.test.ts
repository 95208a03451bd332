// Dense trajectory samples: geometry and timing consistent with the stride records.
import { describe, expect, it } from 'vitest';
import { simulate } from '../src/core/simulate.js';
import { scenario } from './helpers.js';

describe('trajectory sampling', () => {
  it('samples are time-ordered; the leg is L0 long in flight and compressed (never stretched) in stance', async () => {
    const s = scenario({ strides: 4, policy: { angle: { kind: 'retraction', attack_at_apex_deg: 64, rate_deg_per_s: 30 } } });
    const r = await simulate(s, { traceInterval_s: 0.002 });
    const t = r.trajectory!;
    expect(r.outcome.status).toBe('completed');
    expect(t.time_s.length).toBeGreaterThan(500);
    for (let i = 1; i < t.time_s.length; i++) expect(t.time_s[i]).toBeGreaterThanOrEqual(t.time_s[i - 1]);
    let stanceSamples = 0;
    for (let i = 0; i < t.time_s.length; i++) {
      const leg = Math.hypot(t.x_m[i] - t.foot_x_m[i], t.y_m[i] - t.foot_y_m[i]);
      if (t.phase[i] === 'flight') {
        expect(Math.abs(leg - 1)).toBeLessThan(1e-12);
        expect(t.leg_force_N[i]).toBe(0);
      } else {
        stanceSamples++;
        expect(leg).toBeLessThanOrEqual(1 + 1e-9);
        expect(t.leg_force_N[i]).toBeGreaterThanOrEqual(-1e-6);
        // law: with a constant spring and no damping the leg force is k (L0 - r)
        expect(Math.abs(t.leg_force_N[i] - 20000 * (1 - leg))).toBeLessThan(1e-6);
      }
    }
    expect(stanceSamples).toBeGreaterThan(100);
    // The stance samples of each stride span its contact time.
    for (const st of r.strides) {
      const times = t.time_s.filter((_, i) => t.stride[i] === st.index && t.phase[i] === 'stance');
      const span = times[times.length - 1] - times[0];
      expect(span).toBeLessThanOrEqual(st.contact_s + 1e-12);
      expect(span).toBeGreaterThan(st.contact_s - 0.002 - 1e-12);
    }
    // The trajectory run reports the same strides as the plain run.
    const plain = await simulate(s);
    expect(plain.strides.map((x) => x.contact_s)).toEqual(r.strides.map((x) => x.contact_s));
  });
});
