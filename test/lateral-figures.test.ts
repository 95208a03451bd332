// The lateral model's figures (src/core/figures/lateral.ts) on hand-made samples: the attachment
// point at d(t) = d0 + d1 (t - touchdown) along the body axis, the force arrow along the leg from
// the foot through the attachment point (the massless leg pushes along itself: the model's law),
// the 1:1 window, and angles unwrapped without 2 pi jumps.
import { describe, expect, it } from 'vitest';
import { attachmentPoint, lateralAnglesFigure, lateralTopView, unwrap, type LateralTopSample } from '../src/core/figures/lateral.js';

const body = { leg_length_m: 0.08, attachment_offset_m: -0.012, attachment_rate_m_per_s: 0.05 };

// a left stance from t = 0.10 s: body at (0.1, 0.01) turned 20 deg, foot ahead and to the left
function samples(): LateralTopSample[] {
  const out: LateralTopSample[] = [];
  for (let i = 0; i < 20; i++) {
    const t = 0.1 + i * 0.002;
    out.push({ t, x: 0.1 + 1.3 * (t - 0.1), y: 0.01, theta: (20 * Math.PI) / 180, vx: 1.3, vy: 0.1, omega: 0.5, footX: 0.16, footY: 0.05, force: 10 + i, side: 1, stride: 0 });
  }
  return out;
}

describe('lateral top view', () => {
  it('puts the attachment point at d(t) along the body axis and the force along the leg', () => {
    const s = samples();
    const k = 12;
    const [ax, ay] = attachmentPoint(s, k, body);
    const d = body.attachment_offset_m + body.attachment_rate_m_per_s * (s[k].t - s[0].t); // d0 + d1 (t - touchdown)
    expect(ax).toBeCloseTo(s[k].x + d * Math.cos(s[k].theta), 15);
    expect(ay).toBeCloseTo(s[k].y + d * Math.sin(s[k].theta), 15);
    const fig = lateralTopView(s, k, body) as { series: { id: string; data: number[][] }[]; xAxis: { min: number; max: number }; yAxis: { min: number; max: number } };
    const force = fig.series.find((x) => x.id === 'force')!.data;
    const leg = fig.series.find((x) => x.id === 'leg')!.data;
    // arrow from the attachment point, away from the foot, parallel to the leg (cross product 0)
    expect(force[0]).toEqual(leg[1]);
    const a = [force[1][0] - force[0][0], force[1][1] - force[0][1]];
    const l = [leg[1][0] - leg[0][0], leg[1][1] - leg[0][1]];
    expect(a[0] * l[1] - a[1] * l[0]).toBeCloseTo(0, 15);
    expect(a[0] * l[0] + a[1] * l[1]).toBeGreaterThan(0);
    // its length in proportion to the force: the run's largest force is half a leg length
    expect(Math.hypot(a[0], a[1])).toBeCloseTo((0.5 * body.leg_length_m * s[k].force) / 29, 12);
    // 1:1: metres per pixel equal on both axes (1280 x 800 frame, margins 84 + 32 across)
    const w = 1280 - 84 - 32;
    const top = (fig as unknown as { grid: { top: number } }).grid.top;
    const h = 800 - top - 64;
    expect((fig.xAxis.max - fig.xAxis.min) / w).toBeCloseTo((fig.yAxis.max - fig.yAxis.min) / h, 12);
  });

  it('unwraps angles and draws heading, body angle and angular velocity', () => {
    // a steady turn wrapped into (-pi, pi]: unwrapping gives the ramp back
    const ramp = Array.from({ length: 50 }, (_, i) => -3 + 0.3 * i);
    const wrapped = ramp.map((a) => Math.atan2(Math.sin(a), Math.cos(a)));
    unwrap(wrapped).forEach((a, i) => expect(a).toBeCloseTo(ramp[i], 12));
    const fig = lateralAnglesFigure(samples(), { kickTime_s: 0.11 }) as { series: { id: string; data: number[][] }[] };
    const heading = fig.series.find((x) => x.id === 'heading')!.data;
    expect(heading[0][1]).toBeCloseTo((Math.atan2(0.1, 1.3) * 180) / Math.PI, 12);
    expect(fig.series.map((x) => x.id)).toEqual(expect.arrayContaining(['body-angle', 'angular-velocity', 'kick-0']));
  });
});
