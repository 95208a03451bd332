// The two-leg model's figures (src/core/figures/biped.ts) on a real simulation: both legs drawn
// (the stance foot pinned, the swing leg at its commanded angle and rest length), the vertical
// ground forces of each leg and their sum against Newton's second law, the double-support shading
// and the study's limit line, and the section map figure's eigenvalues.
import { describe, expect, it } from 'vitest';
import demoBiped from '../scenarios/demo-biped.json' with { type: 'json' };
import { bipedReturnMap } from '../src/core/analysis/biped-map.js';
import { bipedForceFigure, bipedForceSamples, bipedGround, bipedMapFigure, bipedScene } from '../src/core/figures/biped.js';
import { simulateBiped } from '../src/core/models/biped-simulate.js';
import type { BipedScenario } from '../src/core/models/biped.js';
import { parseScenario } from '../src/core/scenario.js';

describe('two-leg figures', () => {
  it('draws both legs and the vertical forces, whose impulse over a periodic stride is m g T', async () => {
    const s = parseScenario(demoBiped) as BipedScenario;
    const sim = await simulateBiped(s, { strides: 6, traceInterval_s: 0.0005 });
    const t = sim.trajectory!;
    const scene = bipedScene(t, 10, bipedGround(t)) as { series: { id: string; data: number[][]; lineStyle?: { type: string } }[] };
    const ids = scene.series.map((x) => x.id);
    expect(ids).toEqual(expect.arrayContaining(['leg-left', 'leg-right', 'foot-left', 'foot-right', 'body', 'ground']));
    // at the single-support apex the stance leg is pinned at its foot and drawn solid, the swing leg dashed
    const left = scene.series.find((x) => x.id === 'leg-left')!;
    const right = scene.series.find((x) => x.id === 'leg-right')!;
    expect(left.lineStyle?.type).toBe('solid');
    expect(right.lineStyle?.type).toBe('dashed');
    // the demo starts with the body over the left foot (offset 0) at x = 0
    expect(left.data[0][0]).toBeCloseTo(0, 12);
    expect(left.data[0][1]).toBeCloseTo(0, 12);
    // the swing leg at its commanded angle: 71 deg from the horizontal (scenarios/demo-biped.json), rest length 0.6 m
    const [foot, body] = right.data;
    expect(Math.atan2(body[1] - foot[1], body[0] - foot[0]) * (180 / Math.PI)).toBeCloseTo(180 - 71, 6);
    expect(Math.hypot(body[0] - foot[0], body[1] - foot[1])).toBeCloseTo(0.6, 9);

    // Newton's second law: the walking gait is periodic (its map has a stable fixed point near the
    // start), so over stride 2, from one apex to the next (vertical speed 0 at both), the vertical
    // impulse of the ground equals the weight's, m g T.
    const w = bipedForceSamples(t, 2, 1);
    for (let k = 0; k < w.total_N.length; k++) expect(w.total_N[k]).toBeCloseTo(w.vertical_N.left[k] + w.vertical_N.right[k], 9);
    let impulse = 0;
    for (let k = 1; k < w.time_s.length; k++) impulse += 0.5 * (w.total_N[k] + w.total_N[k - 1]) * (w.time_s[k] - w.time_s[k - 1]);
    const T = sim.strides[2].stride_s!;
    const mg = s.body.mass_kg * s.body.gravity_m_per_s2;
    // the window's samples end within one interval of the next section: 0.5 ms of weight at most
    expect(Math.abs(impulse - mg * T)).toBeLessThan(mg * 0.0015);
    // one double-support interval per walking stride, as long as the stride record says
    expect(w.double_support).toHaveLength(1);
    const ds = sim.strides[2].double_support!;
    expect(w.double_support[0][1] - w.double_support[0][0]).toBeCloseTo(ds.end_s - ds.start_s, 3);
    // the figure shades it, and draws the study's limit when one is set
    const fig = bipedForceFigure(t, s.body, { stride: 2, strides: 1, forceLimit: 400, verticalLimit: 700 }) as { series: { id: string; markArea?: { data: unknown[] } }[] };
    expect(fig.series.find((x) => x.id === 'double-support-0')?.markArea?.data).toHaveLength(1);
    expect(fig.series.map((x) => x.id)).toEqual(expect.arrayContaining(['vertical-left', 'vertical-right', 'vertical-total', 'force-limit', 'vertical-limit']));
  });

  it('puts every eigenvalue of every fixed point in the complex plane, with the energy eigenvalue 1', async () => {
    const s = parseScenario(demoBiped) as BipedScenario;
    const map = await bipedReturnMap(s, { samples: 31, iterations: 5 });
    expect(map.fixed_points.length).toBeGreaterThan(0);
    const fig = bipedMapFigure(map) as { series: { id: string; data: number[][] }[] };
    const eig = [...fig.series.find((x) => x.id === 'eig-stable')!.data, ...fig.series.find((x) => x.id === 'eig-unstable')!.data];
    expect(eig).toHaveLength(map.fixed_points.reduce((n, f) => n + f.eigenvalues.length, 0));
    // energy is conserved without damping (law): the full map's extra eigenvalue is 1
    for (const [re, im] of fig.series.find((x) => x.id === 'eig-energy')!.data) {
      expect(re).toBeCloseTo(1, 5);
      expect(im).toBe(0);
    }
    // the unit circle: |lambda| = 1 at every vertex
    for (const [x, y] of fig.series.find((x) => x.id === 'unit-circle')!.data) expect(Math.hypot(x, y)).toBeCloseTo(1, 12);
  });
});
