// Figure 5: leg force and friction demand over one stance, from simulate's trajectory samples
// (SimulateOptions.traceInterval_s). Top: the leg force in N (left axis) and in body weights m·g
// (right axis, the same line read on a second scale). Bottom: the friction demand |Fx/Fy| at the
// foot, optionally against a friction limit.
//
// The leg is massless and pushes along itself (the model's law), so the ground force at the foot
// points from the foot to the body and |Fx/Fy| = |x - x_foot| / |y - y_foot| whatever its size.
//
// Series ids: leg-force (data [t since touchdown s, N]) and friction-demand ([t, |Fx/Fy|]).

import type { LineSeriesOption } from 'echarts';
import { InputError, describeFound } from '../errors.js';
import type { Trajectory } from '../simulate.js';
import { PALETTE, baseOption, frameOf, header, niceStep, num, tooltip, valueXAxis, valueYAxis, type FigureOption, type Frame } from './theme.js';

export interface StanceBody {
  mass_kg: number;
  gravity_m_per_s2: number;
}

export interface StanceForceFigureOptions {
  /** The stride whose stance is drawn (default: the first stride with stance samples). */
  stride?: number;
  /** A friction coefficient drawn as a limit line on the friction demand. */
  frictionLimit?: number;
  /** A peak leg force, N, drawn as a limit line on the leg force. */
  forceLimit?: number;
  title?: string;
  frame?: Frame;
}

export interface StanceSamples {
  stride: number;
  /** Indices into the trajectory's columns: the stance samples, touchdown first, and the liftoff sample. */
  indices: number[];
  /** Time since touchdown (the first stance sample), s. */
  time_s: number[];
  leg_force_N: number[];
  friction_demand: number[];
}

/** The stance samples of one stride (default: the first stride that has any). */
export function stanceSamples(trajectory: Trajectory, stride?: number): StanceSamples {
  const stance = trajectory.phase.map((p, i) => (p === 'stance' ? i : -1)).filter((i) => i >= 0);
  if (stance.length === 0) {
    throw new InputError([{ path: 'trajectory.phase', expected: 'stance samples (a trajectory with at least one touchdown)', found: 'flight samples only' }]);
  }
  const chosen = stride ?? trajectory.stride[stance[0]];
  const indices = stance.filter((i) => trajectory.stride[i] === chosen);
  // the trace marks the liftoff sample as flight (force 0); it still stands on the stance's foothold
  const after = indices.length ? indices[indices.length - 1] + 1 : -1;
  const last = indices[indices.length - 1];
  if (
    after > 0 &&
    after < trajectory.time_s.length &&
    trajectory.stride[after] === chosen &&
    trajectory.foot_x_m[after] === trajectory.foot_x_m[last] &&
    trajectory.foot_y_m[after] === trajectory.foot_y_m[last]
  ) {
    indices.push(after);
  }
  if (indices.length === 0) {
    const strides = [...new Set(stance.map((i) => trajectory.stride[i]))];
    throw new InputError([{ path: 'stride', expected: `a stride with stance samples (${strides.slice(0, 12).join(', ')}${strides.length > 12 ? ', ...' : ''})`, found: describeFound(stride) }]);
  }
  const t0 = trajectory.time_s[indices[0]];
  return {
    stride: chosen,
    indices,
    time_s: indices.map((i) => trajectory.time_s[i] - t0),
    leg_force_N: indices.map((i) => trajectory.leg_force_N[i]),
    friction_demand: indices.map((i) => Math.abs(trajectory.x_m[i] - trajectory.foot_x_m[i]) / Math.abs(trajectory.y_m[i] - trajectory.foot_y_m[i])),
  };
}

export function stanceForceFigure(trajectory: Trajectory, body: StanceBody, options: StanceForceFigureOptions = {}): FigureOption {
  const weight = body.mass_kg * body.gravity_m_per_s2;
  if (!(Number.isFinite(weight) && weight > 0)) {
    throw new InputError([{ path: 'body', expected: 'mass_kg and gravity_m_per_s2 > 0 (for body weights)', found: describeFound(body) }]);
  }
  const mu = options.frictionLimit;
  if (mu !== undefined && !(Number.isFinite(mu) && mu > 0)) {
    throw new InputError([{ path: 'frictionLimit', expected: 'a friction coefficient > 0', found: describeFound(mu) }]);
  }
  const fmax = options.forceLimit;
  if (fmax !== undefined && !(Number.isFinite(fmax) && fmax > 0)) {
    throw new InputError([{ path: 'forceLimit', expected: 'a peak leg force > 0 (N)', found: describeFound(fmax) }]);
  }
  const s = stanceSamples(trajectory, options.stride);
  const peak = Math.max(0, ...s.leg_force_N);
  const peakAt = s.time_s[s.leg_force_N.indexOf(peak)] ?? 0;
  const contact = s.time_s[s.time_s.length - 1];
  const top = Math.max(peak, fmax ?? 0);
  const step = niceStep(top || 1);
  const forceMax = Math.max(step, Math.ceil((top * 1.04) / step) * step);
  const demandMax = Math.max(...s.friction_demand.filter(Number.isFinite), mu ?? 0);
  const demandStep = niceStep(demandMax || 1);

  const force: LineSeriesOption = {
    id: 'leg-force',
    name: 'leg force',
    type: 'line',
    xAxisIndex: 0,
    yAxisIndex: 0,
    data: s.time_s.map((t, i) => [t, s.leg_force_N[i]]),
    symbol: 'none',
    lineStyle: { width: 2.5, color: PALETTE.deepBlue },
    itemStyle: { color: PALETTE.deepBlue },
    tooltip: { valueFormatter: (v) => `${num(v as number, 5)} N = ${num((v as number) / weight, 3)} body weights` },
  };
  const friction: LineSeriesOption = {
    id: 'friction-demand',
    name: 'friction demand |Fx/Fy|',
    type: 'line',
    xAxisIndex: 1,
    yAxisIndex: 2,
    data: s.time_s.map((t, i) => [t, s.friction_demand[i]]),
    symbol: 'none',
    lineStyle: { width: 2.5, type: 'dashed', color: PALETTE.brick },
    itemStyle: { color: PALETTE.brick },
    tooltip: { valueFormatter: (v) => num(v as number, 4) },
  };
  const end = contact > 0 ? contact : 1;
  const limitLine = (id: string, name: string, value: number, xAxisIndex: number, yAxisIndex: number, dash: 'dashed' | 'dotted'): LineSeriesOption => ({
    id,
    name,
    type: 'line',
    xAxisIndex,
    yAxisIndex,
    data: [
      [0, value],
      [end, value],
    ],
    symbol: 'none',
    silent: true,
    lineStyle: { width: 2, type: dash, color: PALETTE.ink },
    itemStyle: { color: PALETTE.ink },
    z: 5,
  });
  const limits: LineSeriesOption[] = [
    ...(fmax !== undefined ? [limitLine('force-limit', `peak-force limit ${num(fmax, 5)} N`, fmax, 0, 0, 'dashed')] : []),
    ...(mu !== undefined ? [limitLine('friction-limit', `friction limit μ = ${num(mu, 3)}`, mu, 1, 2, 'dotted')] : []),
  ];
  const subtitle =
    `stride ${s.stride}: contact ${num(contact * 1000, 4)} ms, peak leg force ${num(peak, 5)} N = ${num(peak / weight, 3)} body weights at ${num(peakAt * 1000, 4)} ms\n` +
    `friction demand along the leg |x − x_foot| / (y − y_foot) (largest where the force is small, at touchdown and liftoff)` +
    (mu !== undefined ? `; limit μ = ${num(mu, 3)}` : '') +
    (fmax !== undefined ? `; peak-force limit ${num(fmax, 5)} N` : '');
  const timeAxis = (gridIndex: number, name: string) => valueXAxis(name, { gridIndex, min: 0, max: contact > 0 ? contact : 1, axisLabel: { showMaxLabel: false } });
  const frame = frameOf(options.frame);
  const series = [force, friction, ...limits];
  const head = header(frame, options.title ?? 'Leg force and friction demand over a stance', subtitle, series.map((x) => String(x.name)));
  // two plots sharing the time axis: the force gets 60 % of the height left, the friction demand 40 %
  const bottom = 64;
  const between = 44;
  const room = Math.max(160, frame.height - head.top - bottom - between);
  const upper = Math.round(room * 0.6);
  return {
    ...baseOption(`Leg force and friction demand over the stance of stride ${s.stride}: peak ${num(peak / weight, 3)} body weights.`),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    tooltip: tooltip({ trigger: 'axis' }),
    axisPointer: { link: [{ xAxisIndex: 'all' }] },
    grid: [
      { left: 96, right: 96, top: head.top, height: upper },
      { left: 96, right: 96, top: head.top + upper + between, bottom },
    ],
    xAxis: [timeAxis(0, ''), timeAxis(1, 'time since touchdown (s)')],
    yAxis: [
      valueYAxis('leg force (N)', { gridIndex: 0, min: 0, max: forceMax, interval: step, nameGap: 58 }),
      valueYAxis('× body weight', {
        gridIndex: 0,
        position: 'right',
        min: 0,
        max: forceMax / weight,
        // its own round ticks (not aligned with the newton grid lines, which it does not draw)
        interval: niceStep(forceMax / weight),
        nameGap: 46,
        splitLine: { show: false },
        axisLabel: { showMaxLabel: false, formatter: (v: number) => num(v, 3) },
      }),
      valueYAxis('|Fx/Fy|', { gridIndex: 1, min: 0, max: Math.ceil((demandMax * 1.04) / demandStep) * demandStep || 1, nameGap: 58 }),
    ],
    series,
  };
}
