// Figure 8: one frame of a stride animation — body, leg and ground at one trajectory sample, in a
// 1:1 x-y plot (a metre is as long across as up). The workbench steps `index` to animate; every
// series has a fixed id, so setOption(strideScene(trajectory, i)) updates the frame in place.
//
// The window follows the body horizontally and spans the whole run's heights vertically, so the
// ground stays put on screen while the robot runs across it.
//
// Series ids: ground (line with area; data [x, height]), trail (the body's path so far), leg
// ([[foot x, foot y], [x, y]]), foot ([[foot x, foot y]]), body ([[x, y]]).

import type { LineSeriesOption, ScatterSeriesOption } from 'echarts';
import { InputError, describeFound } from '../errors.js';
import type { Trajectory } from '../simulate.js';
import { FIGURE_SIZE, PALETTE, baseOption, num, title, valueXAxis, valueYAxis, type FigureOption } from './theme.js';

/** A ground profile as a polyline: heights at increasing x. */
export interface GroundProfile {
  x_m: number[];
  height_m: number[];
}

export interface SceneView {
  /** The figure's size in px (the aspect is exact for this size); default 1280 × 800. */
  width?: number;
  height?: number;
  /** The title and its line of numbers (default true; a workbench panel shows them itself). */
  title?: boolean;
}

// Plot area margins, px: the axes' data ranges are fitted to what is left.
const MARGIN = { left: 84, right: 32, top: 84, bottom: 64 };

/**
 * The ground as the trajectory knows it: flat at 0 until the first stance, then each stance's
 * foot height, changing halfway between footholds. The kernel meets the ground only at
 * touchdowns, so where a step lies between two footholds is a drawing choice, not data.
 */
export function groundFromTrajectory(trajectory: Trajectory): GroundProfile {
  const holds: { x: number; y: number }[] = [];
  let lastStride = -1;
  trajectory.phase.forEach((p, i) => {
    if (p === 'stance' && trajectory.stride[i] !== lastStride) {
      lastStride = trajectory.stride[i];
      holds.push({ x: trajectory.foot_x_m[i], y: trajectory.foot_y_m[i] });
    }
  });
  const xs = trajectory.x_m;
  const first = Math.min(xs[0] ?? 0, ...holds.map((h) => h.x)) - 1;
  const last = Math.max(xs[xs.length - 1] ?? 0, ...holds.map((h) => h.x)) + 1;
  const x_m: number[] = [first];
  const height_m: number[] = [0];
  let height = 0;
  holds.forEach((h, k) => {
    const change = ((k === 0 ? (xs[0] ?? h.x) : holds[k - 1].x) + h.x) / 2;
    if (h.y !== height) {
      x_m.push(change, change);
      height_m.push(height, h.y);
      height = h.y;
    }
  });
  x_m.push(last);
  height_m.push(height);
  return { x_m, height_m };
}

function checkProfile(terrain: GroundProfile): void {
  const ok =
    Array.isArray(terrain.x_m) &&
    Array.isArray(terrain.height_m) &&
    terrain.x_m.length >= 2 &&
    terrain.x_m.length === terrain.height_m.length &&
    terrain.x_m.every((x, i) => Number.isFinite(x) && Number.isFinite(terrain.height_m[i]) && (i === 0 || x >= terrain.x_m[i - 1]));
  if (!ok) {
    throw new InputError([{ path: 'terrain', expected: 'x_m and height_m of equal length >= 2, finite, x_m not decreasing', found: describeFound(terrain) }]);
  }
}

/** The frame at sample `index` of the trajectory. */
export function strideScene(trajectory: Trajectory, index: number, terrain?: GroundProfile, view: SceneView = {}): FigureOption {
  const n = trajectory.time_s.length;
  if (!(Number.isInteger(index) && index >= 0 && index < n)) {
    throw new InputError([{ path: 'index', expected: n > 0 ? `a sample index from 0 to ${n - 1}` : 'a trajectory with samples', found: describeFound(index) }]);
  }
  const ground = terrain ?? groundFromTrajectory(trajectory);
  checkProfile(ground);
  const width = view.width ?? FIGURE_SIZE.width;
  const height = view.height ?? FIGURE_SIZE.height;
  const plotW = Math.max(1, width - MARGIN.left - MARGIN.right);
  const top = view.title === false ? 20 : MARGIN.top;
  const plotH = Math.max(1, height - top - MARGIN.bottom);

  // the leg length, from the samples (the leg is drawn at its rest length in flight)
  let leg = 0;
  for (let i = 0; i < n; i++) leg = Math.max(leg, Math.hypot(trajectory.x_m[i] - trajectory.foot_x_m[i], trajectory.y_m[i] - trajectory.foot_y_m[i]));
  if (!(leg > 0)) leg = 1;
  const groundLow = Math.min(...ground.height_m);
  const bodyHigh = Math.max(...trajectory.y_m);
  const yMin = groundLow - 0.25 * leg;
  const yMax = Math.max(bodyHigh, groundLow + leg) + 0.25 * leg;
  const xSpan = ((yMax - yMin) * plotW) / plotH; // the 1:1 aspect
  const x = trajectory.x_m[index];
  const y = trajectory.y_m[index];
  const fx = trajectory.foot_x_m[index];
  const fy = trajectory.foot_y_m[index];
  const xMin = x - xSpan / 2;
  const xMax = x + xSpan / 2;

  const stance = trajectory.phase[index] === 'stance';
  const groundData = ground.x_m.map((gx, i) => [gx, ground.height_m[i]]);
  const series = [
    {
      id: 'ground',
      name: 'ground',
      type: 'line',
      data: groundData,
      symbol: 'none',
      lineStyle: { width: 2, color: PALETTE.ink },
      areaStyle: { color: PALETTE.sand, opacity: 1, origin: 'start' },
      silent: true,
      z: 1,
    } satisfies LineSeriesOption,
    {
      id: 'trail',
      name: 'body path',
      type: 'line',
      data: trajectory.x_m.slice(0, index + 1).map((tx, i) => [tx, trajectory.y_m[i]]),
      symbol: 'none',
      lineStyle: { width: 1.5, type: 'dashed', color: PALETTE.muted },
      silent: true,
      z: 2,
    } satisfies LineSeriesOption,
    {
      id: 'leg',
      name: 'leg',
      type: 'line',
      data: [
        [fx, fy],
        [x, y],
      ],
      symbol: 'none',
      lineStyle: { width: 5, color: stance ? PALETTE.brick : PALETTE.slate, type: stance ? 'solid' : 'dashed' },
      silent: true,
      z: 3,
    } satisfies LineSeriesOption,
    {
      id: 'foot',
      name: 'foot',
      type: 'scatter',
      data: [[fx, fy]],
      symbol: 'circle',
      symbolSize: 10,
      itemStyle: { color: stance ? PALETTE.brick : PALETTE.paper, borderColor: PALETTE.ink, borderWidth: 2 },
      silent: true,
      z: 4,
    } satisfies ScatterSeriesOption,
    {
      id: 'body',
      name: 'body',
      type: 'scatter',
      data: [[x, y]],
      symbol: 'circle',
      symbolSize: 26,
      itemStyle: { color: PALETTE.deepBlue, borderColor: PALETTE.ink, borderWidth: 2 },
      silent: true,
      z: 5,
    } satisfies ScatterSeriesOption,
  ];
  const force = trajectory.leg_force_N[index];
  const subtitle = `t = ${num(trajectory.time_s[index], 4)} s, stride ${trajectory.stride[index]}, ${stance ? `stance, leg force ${num(force, 4)} N` : 'flight'}; sample ${index + 1} of ${n}`;
  return {
    ...baseOption(`The body, leg and ground at t = ${num(trajectory.time_s[index], 4)} s.`),
    ...(view.title === false ? {} : { title: title('Stride', subtitle) }),
    grid: { left: MARGIN.left, right: MARGIN.right, top, bottom: MARGIN.bottom },
    xAxis: valueXAxis('forward position x (m)', { min: xMin, max: xMax, axisLabel: { showMinLabel: false, showMaxLabel: false, formatter: (v: number) => num(v, 3) } }),
    yAxis: valueYAxis('height y (m)', { min: yMin, max: yMax, nameGap: 54, axisLabel: { showMinLabel: false, showMaxLabel: false, formatter: (v: number) => num(v, 3) } }),
    series,
  };
}
