// The two-leg model's figures, from `simulate`'s trajectory samples (models/biped-simulate.ts):
//
// - bipedScene: one frame of the stride animation, 1:1 in x and y: the body, both legs (a leg in
//   stance from its pinned foot, drawn solid; the swing leg at its commanded angle and rest length,
//   dashed), each foot marked with its letter L or R (colour is never the only cue), the ground
//   and the body's path so far. Series ids are fixed, so a frame updates in place.
// - bipedForceFigure: over a window of strides, the vertical ground force of each leg and their
//   sum (top), and each leg's force along itself against the study's peak-force limit (bottom),
//   with the double-support intervals shaded and labelled in both.
//
// A massless leg pushes along itself from its foot, so its vertical ground force is
// F (y - y_foot) / |body - foot| (the model's law, as in stance-forces.ts).

import type { LineSeriesOption, ScatterSeriesOption } from 'echarts';
import type { BipedMapResult } from '../analysis/biped-map.js';
import type { BipedTrajectory } from '../models/biped-simulate.js';
import { InputError, describeFound } from '../errors.js';
import type { GroundProfile, SceneView } from './stride-scene.js';
import { FIGURE_SIZE, PALETTE, baseOption, frameOf, header, niceStep, num, title, tooltip, valueXAxis, valueYAxis, type FigureOption, type Frame } from './theme.js';

const LEGS = ['left', 'right'] as const;
type Leg = (typeof LEGS)[number];
/** Left and right: a colour each, and a letter at the foot and in the legend. */
export const LEG_STYLE: Record<Leg, { color: string; letter: string; name: string }> = {
  left: { color: PALETTE.deepBlue, letter: 'L', name: 'left leg' },
  right: { color: PALETTE.brick, letter: 'R', name: 'right leg' },
};

const MARGIN = { left: 84, right: 32, top: 84, bottom: 64 };

/** A leg is on the ground at a sample when it pushes (a swing leg's force is 0). */
function onGround(t: BipedTrajectory, leg: Leg, i: number): boolean {
  return t[leg].leg_force_N[i] > 0;
}

/** The ground as the footholds show it: flat at 0, then each foothold's height, changing halfway between footholds. */
export function bipedGround(t: BipedTrajectory): GroundProfile {
  const holds: { x: number; y: number }[] = [];
  for (const leg of LEGS) {
    let was = false;
    for (let i = 0; i < t.time_s.length; i++) {
      const on = onGround(t, leg, i);
      if (on && !was) holds.push({ x: t[leg].foot_x_m[i], y: t[leg].foot_y_m[i] });
      was = on;
    }
  }
  holds.sort((a, b) => a.x - b.x);
  const xs = t.x_m;
  const first = Math.min(xs[0] ?? 0, ...holds.map((h) => h.x)) - 1;
  const last = Math.max(xs[xs.length - 1] ?? 0, ...holds.map((h) => h.x)) + 1;
  const x_m: number[] = [first];
  const height_m: number[] = [0];
  let height = 0;
  holds.forEach((h, k) => {
    if (h.y !== height) {
      const change = ((k === 0 ? (xs[0] ?? h.x) : holds[k - 1].x) + h.x) / 2;
      x_m.push(change, change);
      height_m.push(height, h.y);
      height = h.y;
    }
  });
  x_m.push(last);
  height_m.push(height);
  return { x_m, height_m };
}

function checkIndex(t: BipedTrajectory, index: number): void {
  const n = t.time_s.length;
  if (!(Number.isInteger(index) && index >= 0 && index < n)) {
    throw new InputError([{ path: 'index', expected: n > 0 ? `a sample index from 0 to ${n - 1}` : 'a trajectory with samples', found: describeFound(index) }]);
  }
}

/** The longest body-to-foot distance in the samples (the legs' rest length, about). */
function legScale(t: BipedTrajectory): number {
  let leg = 0;
  for (let i = 0; i < t.time_s.length; i++) {
    for (const l of LEGS) leg = Math.max(leg, Math.hypot(t.x_m[i] - t[l].foot_x_m[i], t.y_m[i] - t[l].foot_y_m[i]));
  }
  return leg > 0 ? leg : 1;
}

/** The frame at sample `index`: body, both legs, ground, path so far. */
export function bipedScene(t: BipedTrajectory, index: number, terrain?: GroundProfile, view: SceneView = {}): FigureOption {
  checkIndex(t, index);
  const ground = terrain ?? bipedGround(t);
  const width = view.width ?? FIGURE_SIZE.width;
  const height = view.height ?? FIGURE_SIZE.height;
  const plotW = Math.max(1, width - MARGIN.left - MARGIN.right);
  const top = view.title === false ? 20 : MARGIN.top;
  const plotH = Math.max(1, height - top - MARGIN.bottom);
  const leg = legScale(t);
  const groundLow = Math.min(...ground.height_m);
  let bodyHigh = -Infinity;
  for (const y of t.y_m) bodyHigh = Math.max(bodyHigh, y);
  const yMin = groundLow - 0.25 * leg;
  const yMax = Math.max(bodyHigh, groundLow + leg) + 0.25 * leg;
  const xSpan = ((yMax - yMin) * plotW) / plotH; // 1:1
  const x = t.x_m[index];
  const y = t.y_m[index];
  const legSeries = LEGS.flatMap((l) => {
    const on = onGround(t, l, index);
    const fx = t[l].foot_x_m[index];
    const fy = t[l].foot_y_m[index];
    const style = LEG_STYLE[l];
    return [
      {
        id: `leg-${l}`,
        name: style.name,
        type: 'line',
        data: [
          [fx, fy],
          [x, y],
        ],
        symbol: 'none',
        lineStyle: { width: on ? 5 : 3, color: style.color, type: on ? 'solid' : 'dashed' },
        silent: true,
        z: l === 'left' ? 4 : 3,
      } satisfies LineSeriesOption,
      {
        id: `foot-${l}`,
        name: style.name,
        type: 'scatter',
        data: [[fx, fy]],
        symbol: 'circle',
        symbolSize: 18,
        itemStyle: { color: on ? style.color : PALETTE.paper, borderColor: style.color, borderWidth: 2 },
        label: { show: true, formatter: style.letter, position: 'inside', fontSize: 11, fontWeight: 'bold', color: on ? PALETTE.paper : style.color },
        silent: true,
        z: 6,
      } satisfies ScatterSeriesOption,
    ];
  });
  const series = [
    {
      id: 'ground',
      name: 'ground',
      type: 'line',
      data: ground.x_m.map((gx, i) => [gx, ground.height_m[i]]),
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
      data: t.x_m.slice(0, index + 1).map((tx, i) => [tx, t.y_m[i]]),
      symbol: 'none',
      lineStyle: { width: 1.5, type: 'dashed', color: PALETTE.muted },
      silent: true,
      z: 2,
    } satisfies LineSeriesOption,
    ...legSeries,
    {
      id: 'body',
      name: 'body',
      type: 'scatter',
      data: [[x, y]],
      symbol: 'circle',
      symbolSize: 26,
      itemStyle: { color: PALETTE.slate, borderColor: PALETTE.ink, borderWidth: 2 },
      silent: true,
      z: 7,
    } satisfies ScatterSeriesOption,
  ];
  const phase = t.phase[index];
  const forces = LEGS.filter((l) => onGround(t, l, index)).map((l) => `${LEG_STYLE[l].name} ${num(t[l].leg_force_N[index], 4)} N`);
  const subtitle = `t = ${num(t.time_s[index], 4)} s, stride ${t.stride[index]}, ${phase === 'double' ? 'double support' : phase === 'single' ? 'single support' : 'flight'}${forces.length ? `: ${forces.join(', ')}` : ''}; sample ${index + 1} of ${t.time_s.length}`;
  return {
    ...baseOption(`The body, both legs and the ground at t = ${num(t.time_s[index], 4)} s (${phase === 'double' ? 'double support' : phase === 'single' ? 'single support' : 'flight'}).`),
    ...(view.title === false ? {} : { title: title('Stride, two legs', subtitle) }),
    grid: { left: MARGIN.left, right: MARGIN.right, top, bottom: MARGIN.bottom },
    xAxis: valueXAxis('forward position x (m)', { min: x - xSpan / 2, max: x + xSpan / 2, axisLabel: { showMinLabel: false, showMaxLabel: false, formatter: (v: number) => num(v, 3) } }),
    yAxis: valueYAxis('height y (m)', { min: yMin, max: yMax, nameGap: 54, axisLabel: { showMinLabel: false, showMaxLabel: false, formatter: (v: number) => num(v, 3) } }),
    series,
  };
}

export interface BipedForceOptions {
  /** The first stride of the window (default 0) and how many strides it shows (default 3). */
  stride?: number;
  strides?: number;
  /** A peak leg force, N (the study's max_leg_force_N): a limit line on each leg's force. */
  forceLimit?: number;
  frame?: Frame;
  title?: string;
}

export interface BipedForceSamples {
  /** Indices into the trajectory of the window. */
  indices: number[];
  time_s: number[];
  vertical_N: Record<Leg, number[]>;
  total_N: number[];
  along_N: Record<Leg, number[]>;
  /** Double-support intervals in the window, s (same clock as time_s). */
  double_support: [number, number][];
}

/** The window's samples: vertical forces of each leg and their sum, and the double-support intervals. */
export function bipedForceSamples(t: BipedTrajectory, stride = 0, strides = 3): BipedForceSamples {
  const indices: number[] = [];
  for (let i = 0; i < t.time_s.length; i++) if (t.stride[i] >= stride && t.stride[i] < stride + strides) indices.push(i);
  if (indices.length === 0) {
    const last = t.stride.length ? t.stride[t.stride.length - 1] : -1;
    throw new InputError([{ path: 'stride', expected: last >= 0 ? `a stride from 0 to ${last}` : 'a trajectory with samples', found: describeFound(stride) }]);
  }
  const vertical = (l: Leg, i: number) => {
    const f = t[l].leg_force_N[i];
    if (!(f > 0)) return 0;
    const dx = t.x_m[i] - t[l].foot_x_m[i];
    const dy = t.y_m[i] - t[l].foot_y_m[i];
    const r = Math.hypot(dx, dy);
    return r > 0 ? (f * dy) / r : 0;
  };
  const vertical_N = { left: indices.map((i) => vertical('left', i)), right: indices.map((i) => vertical('right', i)) };
  const double_support: [number, number][] = [];
  let open = -1;
  indices.forEach((i, k) => {
    const d = t.phase[i] === 'double';
    if (d && open < 0) open = k;
    if (!d && open >= 0) {
      double_support.push([t.time_s[indices[open]], t.time_s[i]]);
      open = -1;
    }
  });
  if (open >= 0) double_support.push([t.time_s[indices[open]], t.time_s[indices[indices.length - 1]]]);
  return {
    indices,
    time_s: indices.map((i) => t.time_s[i]),
    vertical_N,
    total_N: vertical_N.left.map((v, k) => v + vertical_N.right[k]),
    along_N: { left: indices.map((i) => Math.max(0, t.left.leg_force_N[i])), right: indices.map((i) => Math.max(0, t.right.leg_force_N[i])) },
    double_support,
  };
}

export function bipedForceFigure(t: BipedTrajectory, body: { mass_kg: number; gravity_m_per_s2: number }, options: BipedForceOptions = {}): FigureOption {
  const weight = body.mass_kg * body.gravity_m_per_s2;
  if (!(Number.isFinite(weight) && weight > 0)) {
    throw new InputError([{ path: 'body', expected: 'mass_kg and gravity_m_per_s2 > 0 (for body weights)', found: describeFound(body) }]);
  }
  const fmax = options.forceLimit;
  if (fmax !== undefined && !(Number.isFinite(fmax) && fmax > 0)) {
    throw new InputError([{ path: 'forceLimit', expected: 'a peak leg force > 0 (N)', found: describeFound(fmax) }]);
  }
  const first = options.stride ?? 0;
  const count = options.strides ?? 3;
  const s = bipedForceSamples(t, first, count);
  const t0 = s.time_s[0];
  const tEnd = s.time_s[s.time_s.length - 1] - t0 || 1;
  const rel = (k: number) => s.time_s[k] - t0;
  const peakTotal = Math.max(0, ...s.total_N);
  const peakAlong = Math.max(0, ...s.along_N.left, ...s.along_N.right);
  const topV = Math.max(peakTotal, weight);
  const stepV = niceStep(topV || 1);
  const maxV = Math.ceil((topV * 1.06) / stepV) * stepV;
  const topA = Math.max(peakAlong, fmax ?? 0);
  const stepA = niceStep(topA || 1);
  const maxA = Math.max(stepA, Math.ceil((topA * 1.06) / stepA) * stepA);

  const line = (id: string, name: string, data: number[], color: string, grid: number, dash: 'solid' | 'dashed' | 'dotted', width = 2.5): LineSeriesOption => ({
    id,
    name,
    type: 'line',
    xAxisIndex: grid,
    yAxisIndex: grid === 0 ? 0 : 2,
    data: data.map((v, k) => [rel(k), v]),
    symbol: 'none',
    lineStyle: { width, color, type: dash },
    itemStyle: { color },
    tooltip: { valueFormatter: (v) => `${num(v as number, 5)} N = ${num((v as number) / weight, 3)} body weights` },
  });
  const bands = s.double_support.map(([a, b]) => [{ xAxis: a - t0 }, { xAxis: b - t0 }]) as [{ xAxis: number }, { xAxis: number }][];
  const shade = (grid: number): LineSeriesOption => ({
    id: `double-support-${grid}`,
    name: 'double support (shaded)',
    type: 'line',
    xAxisIndex: grid,
    yAxisIndex: grid === 0 ? 0 : 2,
    data: [],
    itemStyle: { color: PALETTE.sand },
    lineStyle: { width: 0 },
    silent: true,
    markArea: {
      silent: true,
      itemStyle: { color: PALETTE.sand, opacity: 0.45 },
      label: { show: grid === 0, position: 'insideTop', formatter: 'double', fontSize: 11, color: PALETTE.ink },
      data: bands,
    },
  });
  const flat = (id: string, name: string, value: number, grid: number, dash: 'dashed' | 'dotted'): LineSeriesOption => ({
    id,
    name,
    type: 'line',
    xAxisIndex: grid,
    yAxisIndex: grid === 0 ? 0 : 2,
    data: [
      [0, value],
      [tEnd, value],
    ],
    symbol: 'none',
    silent: true,
    lineStyle: { width: 1.5, type: dash, color: PALETTE.ink },
    itemStyle: { color: PALETTE.ink },
    z: 5,
  });
  const series: LineSeriesOption[] = [
    shade(0),
    line('vertical-left', 'left leg, vertical', s.vertical_N.left, LEG_STYLE.left.color, 0, 'solid'),
    line('vertical-right', 'right leg, vertical', s.vertical_N.right, LEG_STYLE.right.color, 0, 'dashed'),
    line('vertical-total', 'sum of both legs', s.total_N, PALETTE.ink, 0, 'solid', 3),
    flat('body-weight', `body weight ${num(weight, 4)} N`, weight, 0, 'dotted'),
    shade(1),
    line('along-left', 'left leg, along the leg', s.along_N.left, LEG_STYLE.left.color, 1, 'solid'),
    line('along-right', 'right leg, along the leg', s.along_N.right, LEG_STYLE.right.color, 1, 'dashed'),
    ...(fmax !== undefined ? [flat('force-limit', `peak-force limit ${num(fmax, 5)} N`, fmax, 1, 'dashed')] : []),
  ];
  const names = [...new Set(series.map((x) => String(x.name)))];
  const doubleTime = s.double_support.reduce((a, [p, q]) => a + (q - p), 0);
  const last = first + count - 1;
  const subtitle =
    `strides ${first}${last > first ? `–${last}` : ''}: peak vertical force of both legs ${num(peakTotal, 5)} N = ${num(peakTotal / weight, 3)} body weights; ` +
    `peak leg force ${num(peakAlong, 5)} N${fmax !== undefined ? ` (limit ${num(fmax, 5)} N)` : ''}\n` +
    `double support shaded: ${s.double_support.length} interval${s.double_support.length === 1 ? '' : 's'}, ${num(doubleTime * 1000, 4)} ms in all`;
  const frame = frameOf(options.frame);
  const head = header(frame, options.title ?? 'Ground forces of the two legs', subtitle, names);
  const bottom = 64;
  const between = 44;
  const room = Math.max(180, frame.height - head.top - bottom - between);
  const upper = Math.round(room * 0.58);
  const timeAxis = (gridIndex: number, name: string) => valueXAxis(name, { gridIndex, min: 0, max: tEnd, axisLabel: { showMaxLabel: false } });
  return {
    ...baseOption(
      `Vertical ground force of each leg and their sum over strides ${first} to ${last}, peak ${num(peakTotal / weight, 3)} body weights, double support shaded; each leg's force along itself below.`,
    ),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    tooltip: tooltip({ trigger: 'axis' }),
    axisPointer: { link: [{ xAxisIndex: 'all' }] },
    grid: [
      { left: 96, right: 96, top: head.top, height: upper },
      { left: 96, right: 96, top: head.top + upper + between, bottom },
    ],
    xAxis: [timeAxis(0, ''), timeAxis(1, `time since the section of stride ${first} (s)`)],
    yAxis: [
      valueYAxis('vertical force (N)', { gridIndex: 0, min: 0, max: maxV, interval: stepV, nameGap: 58 }),
      valueYAxis('× body weight', {
        gridIndex: 0,
        position: 'right',
        min: 0,
        max: maxV / weight,
        interval: niceStep(maxV / weight),
        nameGap: 46,
        splitLine: { show: false },
        axisLabel: { showMaxLabel: false, formatter: (v: number) => num(v, 3) },
      }),
      valueYAxis('leg force (N)', { gridIndex: 1, min: 0, max: maxA, interval: stepA, nameGap: 58 }),
    ],
    series,
  };
}

export interface BipedMapFigureOptions {
  frame?: Frame;
  title?: string;
}

/**
 * The two-leg section map: left, the map along the symmetric states (offset 0) at the start's
 * energy, next section height against height, with the diagonal, every fixed point (filled:
 * stable, hollow: unstable; the shape carries it, not the colour alone) and the staircase from the
 * start; right, every eigenvalue of every fixed point in the complex plane with the unit circle
 * (inside: that direction contracts), the reduced map's as markers and the full map's energy
 * eigenvalue (1, a check) as a cross.
 */
export function bipedMapFigure(result: BipedMapResult, options: BipedMapFigureOptions = {}): FigureOption {
  const frame = frameOf(options.frame);
  const pts = result.scan.filter((p) => p.next_height_m !== null).map((p) => [p.height_m, p.next_height_m as number]);
  // the height axis on round numbers around the map's domain
  const hStep = niceStep(result.domain.height_high_m - result.domain.height_low_m || 1);
  const lo = Math.floor(result.domain.height_low_m / hStep) * hStep;
  const hi = Math.ceil(result.domain.height_high_m / hStep) * hStep;
  const stair: number[][] = [];
  for (let k = 0; k + 1 < result.staircase.length; k++) {
    const a = result.staircase[k].height_m;
    const b = result.staircase[k + 1].height_m;
    stair.push([a, a], [a, b]);
  }
  const stable = result.fixed_points.filter((f) => f.stable);
  const unstable = result.fixed_points.filter((f) => !f.stable);
  const eig = (list: typeof result.fixed_points) => list.flatMap((f) => f.eigenvalues.map((e) => [e.re, e.im, e.modulus, f.height_m]));
  const energy = result.fixed_points.map((f) => {
    const e = f.full_eigenvalues.reduce((best, x) => (Math.abs(x.re - 1) + Math.abs(x.im) < Math.abs(best.re - 1) + Math.abs(best.im) ? x : best), f.full_eigenvalues[0]);
    return [e.re, e.im, e.modulus, f.height_m];
  });
  let reach = 1.1;
  for (const f of result.fixed_points) for (const e of f.eigenvalues) reach = Math.max(reach, Math.abs(e.re) * 1.1, Math.abs(e.im) * 1.1);
  reach = Math.ceil(reach * 2) / 2; // on a 0.5 grid, the unit circle inside
  const circle = Array.from({ length: 121 }, (_, i) => [Math.cos((2 * Math.PI * i) / 120), Math.sin((2 * Math.PI * i) / 120)]);
  const marker = (id: string, name: string, data: number[][], symbol: string, filled: boolean, color: string, grid: number): ScatterSeriesOption => ({
    id,
    name,
    type: 'scatter',
    xAxisIndex: grid,
    yAxisIndex: grid,
    data,
    symbol,
    symbolSize: 13,
    itemStyle: { color: filled ? color : PALETTE.paper, borderColor: color, borderWidth: 2.5 },
    z: 6,
  });
  const series: (LineSeriesOption | ScatterSeriesOption)[] = [
    { id: 'diagonal', name: 'diagonal', type: 'line', xAxisIndex: 0, yAxisIndex: 0, data: [[lo, lo], [hi, hi]], symbol: 'none', silent: true, lineStyle: { width: 1.5, type: 'dotted', color: PALETTE.muted }, itemStyle: { color: PALETTE.muted } },
    { id: 'map', name: 'map along offset 0', type: 'line', xAxisIndex: 0, yAxisIndex: 0, data: pts, symbol: 'circle', symbolSize: 4, lineStyle: { width: 2.5, color: PALETTE.deepBlue }, itemStyle: { color: PALETTE.deepBlue } },
    { id: 'staircase', name: 'staircase from the start', type: 'line', xAxisIndex: 0, yAxisIndex: 0, data: stair, symbol: 'none', lineStyle: { width: 1.5, color: PALETTE.amber }, itemStyle: { color: PALETTE.amber } },
    marker('fixed-stable', 'stable fixed point (filled)', stable.map((f) => [f.height_m, f.height_m]), 'circle', true, PALETTE.deepBlue, 0),
    marker('fixed-unstable', 'unstable fixed point (hollow)', unstable.map((f) => [f.height_m, f.height_m]), 'circle', false, PALETTE.brick, 0),
    { id: 'unit-circle', name: 'unit circle |λ| = 1', type: 'line', xAxisIndex: 1, yAxisIndex: 1, data: circle, symbol: 'none', silent: true, lineStyle: { width: 1.5, color: PALETTE.ink }, itemStyle: { color: PALETTE.ink } },
    marker('eig-stable', 'eigenvalue, stable point (filled)', eig(stable), 'circle', true, PALETTE.deepBlue, 1),
    marker('eig-unstable', 'eigenvalue, unstable point (hollow)', eig(unstable), 'circle', false, PALETTE.brick, 1),
    { ...marker('eig-energy', 'energy eigenvalue of the full map (cross)', energy, 'path://M0,0L10,10M10,0L0,10', false, PALETTE.ink, 1), itemStyle: { color: PALETTE.ink, borderColor: PALETTE.ink, borderWidth: 2.5 } },
  ];
  const n = result.fixed_points.length;
  const subtitle =
    `${result.gait} at ${num(result.energy_J, 5)} J, ${result.map_strides} stride${result.map_strides === 1 ? '' : 's'} per map; reduced state (${result.reduced_state.join(', ')}); ` +
    `${n} fixed point${n === 1 ? '' : 's'}, ${stable.length} stable\nstable when every eigenvalue of the reduced map lies inside the unit circle (the slope along offset 0 alone is not a test)`;
  const names = series.map((x) => String(x.name));
  const head = header(frame, options.title ?? 'Two-leg section map and its eigenvalues', subtitle, names);
  const bottom = 64;
  const gap = 110;
  const plotW = Math.max(200, frame.width - 96 - 40 - gap);
  const side = Math.max(120, Math.min(frame.height - head.top - bottom, plotW / 2));
  const tooltipHeight = (v: unknown) => {
    const d = v as number[];
    return `height ${num(d[0], 6)} m → ${num(d[1], 6)} m`;
  };
  return {
    ...baseOption(`The two-leg section map along offset 0 with ${n} fixed point${n === 1 ? '' : 's'} (${stable.length} stable), and every eigenvalue against the unit circle.`),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    tooltip: tooltip({ formatter: (p: unknown) => {
      const q = p as { seriesName: string; value: number[]; seriesIndex: number };
      if (q.seriesIndex <= 4) return `${q.seriesName}<br>${tooltipHeight(q.value)}`;
      return `${q.seriesName}<br>λ = ${num(q.value[0], 5)} ${q.value[1] < 0 ? '−' : '+'} ${num(Math.abs(q.value[1]), 5)}i, |λ| = ${num(q.value[2], 5)}${q.value[3] !== undefined ? `<br>fixed point at ${num(q.value[3], 6)} m` : ''}`;
    } }),
    grid: [
      { left: 96, top: head.top, width: side, height: side },
      { left: 96 + side + gap, top: head.top, width: side, height: side },
    ],
    xAxis: [
      valueXAxis('section height y (m)', { gridIndex: 0, min: lo, max: hi, axisLabel: { formatter: (v: number) => num(v, 4), hideOverlap: true } }),
      valueXAxis('Re λ', { gridIndex: 1, min: -reach, max: reach }),
    ],
    yAxis: [
      valueYAxis('next section height y′ (m)', { gridIndex: 0, min: lo, max: hi, nameGap: 62, axisLabel: { formatter: (v: number) => num(v, 4) } }),
      valueYAxis('Im λ', { gridIndex: 1, min: -reach, max: reach, nameGap: 40 }),
    ],
    series,
  };
}
