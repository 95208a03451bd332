// The lateral leg-spring model's figures (seen from above), from its trajectory samples:
//
// - lateralTopView: one frame, 1:1 in x and y: the body's zig-zag path (and, for a kick, the path
//   the body would have run without it), the body axis with its front marked by an arrow head,
//   the leg in stance from its pinned foot (marked L or R: colour is never the only cue) to the
//   attachment point at d along the axis, and the leg's force on the body as an arrow along the
//   leg, its length in proportion to the force (the largest force of the run: half a leg length).
// - lateralAnglesFigure: over time, the heading of the velocity and the body angle (top) and the
//   angular velocity (bottom), with the run without the kick dashed and the kick's moment marked.
//
// The leg pushes along itself from the foot to the attachment point (the model's law), so the
// arrow starts at the attachment point and points away from the foot.

import type { LineSeriesOption, ScatterSeriesOption } from 'echarts';
import { InputError, describeFound } from '../errors.js';
import { FIGURE_SIZE, PALETTE, baseOption, frameOf, header, num, tooltip, valueXAxis, valueYAxis, type FigureOption, type Frame } from './theme.js';

/** One trajectory sample of the lateral model (SI, radians; side +1 left, -1 right; force 0 between stances). */
export interface LateralTopSample {
  t: number;
  x: number;
  y: number;
  theta: number;
  vx: number;
  vy: number;
  omega: number;
  footX: number;
  footY: number;
  force: number;
  side: number;
  stride: number;
}

export interface LateralTopBody {
  leg_length_m: number;
  /** d at touchdown, m (ahead of the centre of mass > 0). */
  attachment_offset_m: number;
  /** d's rate during stance, m/s. */
  attachment_rate_m_per_s: number;
}

export interface TopViewOptions {
  /** The path without the kick, drawn dashed (the recovery view). */
  unkicked?: readonly LateralTopSample[];
  /** The kick's time, s: the path's point there is marked. */
  kickTime_s?: number;
  width?: number;
  height?: number;
  title?: boolean;
}

const MARGIN = { left: 84, right: 32, bottom: 64 };
const SIDE = (side: number) => (side >= 0 ? { letter: 'L', name: 'left', color: PALETTE.deepBlue } : { letter: 'R', name: 'right', color: PALETTE.brick });

function checkSamples(samples: readonly LateralTopSample[], index: number): void {
  if (!(Number.isInteger(index) && index >= 0 && index < samples.length)) {
    throw new InputError([{ path: 'index', expected: samples.length ? `a sample index from 0 to ${samples.length - 1}` : 'a trajectory with samples', found: describeFound(index) }]);
  }
}

/** The first sample of the stance that sample `index` belongs to (same stride and side). */
function stanceStart(samples: readonly LateralTopSample[], index: number): number {
  let i = index;
  while (i > 0 && samples[i - 1].stride === samples[index].stride && samples[i - 1].side === samples[index].side) i--;
  return i;
}

/** The attachment point at sample `index`: d(t) = d0 + d1 (t - touchdown) along the body axis. */
export function attachmentPoint(samples: readonly LateralTopSample[], index: number, body: LateralTopBody): [number, number] {
  const p = samples[index];
  const d = body.attachment_offset_m + body.attachment_rate_m_per_s * (p.t - samples[stanceStart(samples, index)].t);
  return [p.x + d * Math.cos(p.theta), p.y + d * Math.sin(p.theta)];
}

export function lateralTopView(samples: readonly LateralTopSample[], index: number, body: LateralTopBody, options: TopViewOptions = {}): FigureOption {
  checkSamples(samples, index);
  const L0 = body.leg_length_m;
  const width = options.width ?? FIGURE_SIZE.width;
  const height = options.height ?? FIGURE_SIZE.height;
  const p = samples[index];
  const legendNames = [...(options.unkicked ? ['path without the kick'] : []), 'path of the centre of mass', ...(options.kickTime_s !== undefined ? ['kick'] : []), 'body axis (front: arrow)', 'leg in stance (foot L or R)', 'leg force on the body', 'attachment point (d)', 'centre of mass'];
  const heading = Math.atan2(p.vy, p.vx);
  const stanceNow = p.force > 0;
  const subtitle =
    `t = ${num(p.t, 4)} s, stride ${p.stride}, ${stanceNow ? `${SIDE(p.side).name} leg, force ${num(p.force, 4)} N` : 'between stances'}; ` +
    `heading ${num((heading * 180) / Math.PI, 4)}°, body angle ${num((p.theta * 180) / Math.PI, 4)}°, speed ${num(Math.hypot(p.vx, p.vy), 4)} m/s`;
  const head = header(frameOf({ width, height, title: options.title ?? true }), 'Seen from above', subtitle, legendNames);
  const top = head.top;
  const plotW = Math.max(1, width - MARGIN.left - MARGIN.right);
  const plotH = Math.max(1, height - top - MARGIN.bottom);
  // a window of 2.6 leg lengths across the shorter side, centred on the body, 1:1
  const unit = (2.6 * L0) / Math.min(plotW, plotH);
  const xHalf = (plotW * unit) / 2;
  const yHalf = (plotH * unit) / 2;
  let peak = 0;
  for (const s of samples) peak = Math.max(peak, s.force);
  const [ax, ay] = attachmentPoint(samples, index, body);
  const stance = p.force > 0;
  const side = SIDE(p.side);
  const c = Math.cos(p.theta);
  const sn = Math.sin(p.theta);
  const half = 0.45 * L0;
  // the force on the body points from the foot through the attachment point
  const lx = ax - p.footX;
  const ly = ay - p.footY;
  const ll = Math.hypot(lx, ly) || 1;
  const arrow = stance && peak > 0 ? (0.5 * L0 * p.force) / peak : 0;
  const kick = options.kickTime_s;
  const kickAt = kick === undefined ? -1 : samples.findIndex((s) => s.t >= kick);
  const series: (LineSeriesOption | ScatterSeriesOption)[] = [
    ...(options.unkicked
      ? [
          {
            id: 'unkicked',
            name: 'path without the kick',
            type: 'line',
            data: options.unkicked.map((s) => [s.x, s.y]),
            symbol: 'none',
            silent: true,
            lineStyle: { width: 1.5, type: 'dashed', color: PALETTE.muted },
            itemStyle: { color: PALETTE.muted },
            z: 1,
          } satisfies LineSeriesOption,
        ]
      : []),
    {
      id: 'path',
      name: 'path of the centre of mass',
      type: 'line',
      data: samples.slice(0, index + 1).map((s) => [s.x, s.y]),
      symbol: 'none',
      silent: true,
      lineStyle: { width: 2, color: PALETTE.slate },
      itemStyle: { color: PALETTE.slate },
      z: 2,
    },
    ...(kickAt >= 0 && kickAt <= index
      ? [
          {
            id: 'kick',
            name: 'kick',
            type: 'scatter',
            data: [[samples[kickAt].x, samples[kickAt].y]],
            symbol: 'diamond',
            symbolSize: 16,
            itemStyle: { color: PALETTE.amber, borderColor: PALETTE.ink, borderWidth: 1.5 },
            label: { show: true, formatter: 'kick', position: 'top', fontSize: 12, color: PALETTE.ink },
            z: 8,
          } satisfies ScatterSeriesOption,
        ]
      : []),
    {
      id: 'body-axis',
      name: 'body axis (front: arrow)',
      type: 'line',
      data: [
        [p.x - half * c, p.y - half * sn],
        [p.x + half * c, p.y + half * sn],
      ],
      symbol: 'none',
      silent: true,
      lineStyle: { width: 7, color: PALETTE.sand },
      itemStyle: { color: PALETTE.ink },
      z: 3,
    },
    {
      id: 'leg',
      name: 'leg in stance (foot L or R)',
      type: 'line',
      data: stance
        ? [
            [p.footX, p.footY],
            [ax, ay],
          ]
        : [],
      symbol: 'none',
      silent: true,
      lineStyle: { width: 4, color: side.color },
      itemStyle: { color: side.color },
      z: 4,
    },
    {
      id: 'foot',
      name: 'leg in stance (foot L or R)',
      type: 'scatter',
      data: stance ? [[p.footX, p.footY]] : [],
      symbolSize: 18,
      itemStyle: { color: side.color, borderColor: PALETTE.ink, borderWidth: 1.5 },
      label: { show: true, formatter: side.letter, position: 'inside', fontSize: 11, fontWeight: 'bold', color: PALETTE.paper },
      silent: true,
      z: 6,
    },
    {
      id: 'force',
      name: 'leg force on the body',
      type: 'line',
      data:
        arrow > 0
          ? [
              [ax, ay],
              [ax + (arrow * lx) / ll, ay + (arrow * ly) / ll],
            ]
          : [],
      symbol: 'none',
      silent: true,
      lineStyle: { width: 3, color: PALETTE.amber },
      itemStyle: { color: PALETTE.amber },
      z: 7,
    },
    arrowHead('body-front', 'body axis (front: arrow)', [p.x + half * c, p.y + half * sn], p.theta, PALETTE.ink, 16),
    arrowHead('force-head', 'leg force on the body', arrow > 0 ? [ax + (arrow * lx) / ll, ay + (arrow * ly) / ll] : null, Math.atan2(ly, lx), PALETTE.amber, 14),
    {
      id: 'attachment',
      name: 'attachment point (d)',
      type: 'scatter',
      data: [[ax, ay]],
      symbol: 'rect',
      symbolSize: 8,
      itemStyle: { color: PALETTE.ink },
      silent: true,
      z: 7,
    },
    {
      id: 'com',
      name: 'centre of mass',
      type: 'scatter',
      data: [[p.x, p.y]],
      symbolSize: 12,
      itemStyle: { color: PALETTE.paper, borderColor: PALETTE.ink, borderWidth: 2.5 },
      silent: true,
      z: 7,
    },
  ];
  return {
    ...baseOption(`The body seen from above at t = ${num(p.t, 4)} s: path, body axis, ${stance ? `the ${side.name} leg in stance and its force` : 'no leg in stance'}.`),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    grid: { left: MARGIN.left, right: MARGIN.right, top, bottom: MARGIN.bottom },
    xAxis: valueXAxis('x (m)', { min: p.x - xHalf, max: p.x + xHalf, axisLabel: { showMinLabel: false, showMaxLabel: false, formatter: (v: number) => num(v, 3) } }),
    yAxis: valueYAxis('y (m)', {
      min: p.y - yHalf,
      max: p.y + yHalf,
      nameGap: 54,
      axisLabel: { showMinLabel: false, showMaxLabel: false, formatter: (v: number) => num(v, 3) },
    }),
    series,
  };
}

// An arrow head at `point` pointing along `angle` (rad from +x, counter-clockwise); ECharts' arrow
// symbol points up and symbolRotate turns it counter-clockwise in degrees.
function arrowHead(id: string, name: string, point: [number, number] | null, angle: number, color: string, size: number): ScatterSeriesOption {
  return {
    id,
    name,
    type: 'scatter',
    data: point ? [point] : [],
    symbol: 'arrow',
    symbolSize: size,
    symbolRotate: (angle * 180) / Math.PI - 90,
    itemStyle: { color },
    silent: true,
    z: 8,
  };
}

/** Angles unwrapped along the samples (no jump of 2 pi between neighbours). */
export function unwrap(angles: readonly number[]): number[] {
  const out: number[] = [];
  let shift = 0;
  angles.forEach((a, i) => {
    if (i > 0) {
      const step = a + shift - out[i - 1];
      if (step > Math.PI) shift -= 2 * Math.PI * Math.round(step / (2 * Math.PI));
      else if (step < -Math.PI) shift += 2 * Math.PI * Math.round(-step / (2 * Math.PI));
    }
    out.push(a + shift);
  });
  return out;
}

export interface AnglesFigureOptions {
  unkicked?: readonly LateralTopSample[];
  kickTime_s?: number;
  frame?: Frame;
  title?: string;
}

const DEG = 180 / Math.PI;

/** Heading and body angle, and angular velocity, over time. */
export function lateralAnglesFigure(samples: readonly LateralTopSample[], options: AnglesFigureOptions = {}): FigureOption {
  if (samples.length === 0) throw new InputError([{ path: 'samples', expected: 'a trajectory with samples', found: 'none' }]);
  const heading = (list: readonly LateralTopSample[]) => unwrap(list.map((s) => Math.atan2(s.vy, s.vx))).map((a) => a * DEG);
  const line = (id: string, name: string, list: readonly LateralTopSample[], values: number[], grid: number, color: string, dash: 'solid' | 'dashed' | 'dotted', w = 2.5): LineSeriesOption => ({
    id,
    name,
    type: 'line',
    xAxisIndex: grid,
    yAxisIndex: grid,
    data: list.map((s, i) => [s.t, values[i]]),
    symbol: 'none',
    lineStyle: { width: w, color, type: dash },
    itemStyle: { color },
    tooltip: { valueFormatter: (v) => `${num(v as number, 4)}${grid === 0 ? '°' : '°/s'}` },
  });
  const series: LineSeriesOption[] = [
    line('heading', 'heading of the velocity', samples, heading(samples), 0, PALETTE.deepBlue, 'solid'),
    line('body-angle', 'body angle', samples, samples.map((s) => s.theta * DEG), 0, PALETTE.amber, 'solid'),
    line('angular-velocity', 'angular velocity', samples, samples.map((s) => s.omega * DEG), 1, PALETTE.brick, 'solid'),
  ];
  const u = options.unkicked;
  if (u && u.length) {
    series.push(
      line('heading-unkicked', 'heading without the kick', u, heading(u), 0, PALETTE.deepBlue, 'dotted', 1.5),
      line('body-angle-unkicked', 'body angle without the kick', u, u.map((s) => s.theta * DEG), 0, PALETTE.amber, 'dotted', 1.5),
    );
  }
  const kick = options.kickTime_s;
  if (kick !== undefined) {
    for (const grid of [0, 1]) {
      series.push({
        id: `kick-${grid}`,
        name: 'kick',
        type: 'line',
        xAxisIndex: grid,
        yAxisIndex: grid,
        data: [],
        itemStyle: { color: PALETTE.ink },
        markLine: { silent: true, symbol: 'none', lineStyle: { color: PALETTE.ink, type: 'dashed', width: 1.5 }, label: { formatter: 'kick', position: 'insideEndTop' }, data: [{ xAxis: kick }] },
      });
    }
  }
  const t0 = samples[0].t;
  const t1 = samples[samples.length - 1].t;
  const h = heading(samples);
  const subtitle = `${num(t1 - t0, 4)} s, ${samples[samples.length - 1].stride + 1} strides; heading ${num(h[0], 4)}° → ${num(h[h.length - 1], 4)}°${kick !== undefined ? `, kick at ${num(kick, 4)} s` : ''}`;
  const frame = frameOf(options.frame);
  const names = [...new Set(series.map((s) => String(s.name)))];
  const head = header(frame, options.title ?? 'Heading, body angle and angular velocity', subtitle, names);
  const bottom = 64;
  const between = 44;
  const room = Math.max(160, frame.height - head.top - bottom - between);
  const upper = Math.round(room * 0.55);
  const axis = (gridIndex: number, name: string) => valueXAxis(name, { gridIndex, min: t0, max: t1, axisLabel: { showMaxLabel: false, formatter: (v: number) => num(v, 3) } });
  return {
    ...baseOption(`Heading and body angle, and angular velocity over ${num(t1 - t0, 4)} s.`),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    tooltip: tooltip({ trigger: 'axis' }),
    axisPointer: { link: [{ xAxisIndex: 'all' }] },
    grid: [
      { left: 96, right: 40, top: head.top, height: upper },
      { left: 96, right: 40, top: head.top + upper + between, bottom },
    ],
    xAxis: [axis(0, ''), axis(1, 'time (s)')],
    yAxis: [valueYAxis('angle (°)', { gridIndex: 0, scale: true, nameGap: 58 }), valueYAxis('angular velocity (°/s)', { gridIndex: 1, scale: true, nameGap: 58 })],
    series,
  };
}
