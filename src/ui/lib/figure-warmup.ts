// ECharts' drawing code run once, ahead of the first result. The first figure a page draws pays
// for compiling the library's code paths (the model, the axes' label layout, the visual map's
// colour bar, the legend) as well as for its own work: measured in Debian's headless Chromium, the
// 121 x 121 basin's first setOption took 30–45 ms, the same option set again 14–22 ms, and that
// first draw was one frame of about 50 ms with the canvas' commit, at the edge of the page's 50 ms
// budget for a task. One small cell map (a 3 x 3 basin with every outcome, the continuous colour
// bar and the legend of the real figure) drawn off the page in an idle moment takes the compiling
// out of the frame that draws a result.

import type { BasinResult } from '../../core/analysis/basin.js';
import { basinFigure } from '../../core/figures/basin.js';
import { whenIdle } from './yield.js';

type Init = (element: HTMLElement, theme?: null, options?: { renderer: 'canvas'; width: number; height: number }) => {
  setOption(option: unknown): void;
  dispose(): void;
};

/** A 3 x 3 basin grid with converged, wandering and fallen cells (numbers of no consequence: only drawn). */
function sampleBasin(): BasinResult {
  const heights = [0.9, 1, 1.1];
  const speeds = [4, 5, 6];
  const outcomes = ['converged', 'wandering', 'fell'] as const;
  const cells = heights.flatMap((h, i) =>
    speeds.map((v, j) => {
      const outcome = outcomes[(i + j) % 3];
      const fell = outcome === 'fell';
      return {
        apex_height_m: h,
        forward_speed_m_per_s: v,
        outcome,
        strides_completed: fell ? i + j : 10,
        failed_stride: fell ? i + j : null,
        reason: fell ? 'body_hit_ground' : null,
        last_apex: fell ? null : { height_m: 1, forward_speed_m_per_s: 5 },
        fixed_point: null,
      };
    }),
  );
  return {
    mode: 'grid',
    ground: 'flat',
    strides: 10,
    tolerance: { height_m: 1e-4, forward_speed_m_per_s: 1e-4 },
    energy_J: null,
    heights_m: heights,
    speeds_m_per_s: speeds,
    cell_order: '',
    cells,
    counts: { cells: 9, converged: 3, wandering: 3, fell: 3 },
    fell_by_reason: { body_hit_ground: 3 },
    attracted_fraction: 1 / 3,
    caution: '',
  } as BasinResult;
}

let started = false;

/** Draw the sample cell map once, off the page, in an idle moment (once per page). */
export function warmFigureCode(init: Init): void {
  if (started || typeof document === 'undefined') return;
  started = true;
  whenIdle(() => {
    const size = { width: 640, height: 420 };
    const chart = init(document.createElement('div'), null, { renderer: 'canvas', ...size });
    try {
      chart.setOption(basinFigure(sampleBasin(), { frame: { ...size, title: false }, current: { apex_height_m: 1, forward_speed_m_per_s: 5 } }));
    } catch {
      // a warm-up only: the real figure reports its own failures
    } finally {
      chart.dispose();
    }
  }, 3000);
}
