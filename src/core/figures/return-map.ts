// Figure 1: the apex return map of `pronk map` — next apex height against apex height at the
// scenario's energy, with the diagonal, the staircase (cobweb) from the start apex, the fixed
// points (stable filled, unstable hollow, slope in the label) and the domain edges; with --approx
// the closed-form map as a second line.
//
// Series ids (stable, for tests and for the workbench's setOption merges): exact-map, diagonal,
// staircase, fixed-points-stable, fixed-points-unstable, domain-edges, approximate-map,
// approximate-fixed-points.

import type { LineSeriesOption, ScatterSeriesOption, SeriesOption } from 'echarts';
import type { MapSampleOut, ReturnMapResult } from '../analysis/return-map.js';
import { PALETTE, STATE_COLORS, TYPE, baseOption, frameOf, header, niceRange, num, plural, tooltip, valueXAxis, valueYAxis, type FigureOption, type Frame } from './theme.js';

export interface ReturnMapFigureOptions {
  title?: string;
  frame?: Frame;
}

type Point = [number, number | null];

function samplePoints(samples: readonly MapSampleOut[]): Point[] {
  return samples.map((s) => [s.apex_height_m, s.next_apex_height_m]);
}

/** The cobweb from the start apex: (y0, y0) -> (y0, y1) -> (y1, y1) -> (y1, y2) ... */
export function cobweb(result: ReturnMapResult): [number, number][] {
  const points: [number, number][] = [];
  for (const step of result.staircase) {
    if (points.length === 0) points.push([step.apex_height_m, step.apex_height_m]);
    if (step.next_apex_height_m === null) break;
    points.push([step.apex_height_m, step.next_apex_height_m], [step.next_apex_height_m, step.next_apex_height_m]);
  }
  return points;
}

const EDGE_REASON: Record<string, string> = {
  leg_placement: 'leg placement',
  stride_fails: 'strides fail beyond',
  speed_bound: 'zero forward speed',
};

export function returnMapFigure(result: ReturnMapResult, options: ReturnMapFigureOptions = {}): FigureOption {
  const d = result.domain;
  const exact = [...(result.edge_probe ? samplePoints([result.edge_probe]) : []), ...samplePoints(result.samples)];
  const approx = result.approximate ? samplePoints(result.approximate.samples) : [];
  const staircase = cobweb(result);
  const stable = result.fixed_points.filter((f) => f.stable);
  const unstable = result.fixed_points.filter((f) => !f.stable);

  const xs = [d.low_m, d.high_m, ...exact.map((p) => p[0]), ...staircase.map((p) => p[0])];
  const ys = [d.low_m, d.high_m, ...[...exact, ...approx].map((p) => p[1]).filter((v): v is number => v !== null), ...staircase.map((p) => p[1])];
  // one range for both axes, so that the diagonal is the diagonal and slopes read true
  const [lo, hi] = niceRange(Math.min(...xs, ...ys), Math.max(...xs, ...ys));

  const fixedLabel = (f: { apex_height_m: number; slope: number }) => `y* = ${num(f.apex_height_m, 5)} m, slope ${num(f.slope, 3)}`;
  const series: SeriesOption[] = [
    {
      id: 'exact-map',
      name: `P(y), exact (${result.samples.length} samples; gaps: the stride fails)`,
      type: 'line',
      data: exact,
      symbol: 'none',
      connectNulls: false,
      lineStyle: { width: 2.5, color: PALETTE.deepBlue },
      itemStyle: { color: PALETTE.deepBlue },
      z: 4,
      tooltip: { valueFormatter: (v) => (typeof v === 'number' ? `${num(v, 6)} m` : 'stride fails') },
    } satisfies LineSeriesOption,
    {
      id: 'diagonal',
      name: 'y = x (fixed points where the map crosses it)',
      type: 'line',
      data: [
        [d.low_m, d.low_m],
        [d.high_m, d.high_m],
      ],
      symbol: 'none',
      lineStyle: { width: 1.5, type: 'dashed', color: PALETTE.muted },
      itemStyle: { color: PALETTE.muted },
      silent: true,
      z: 2,
    } satisfies LineSeriesOption,
    {
      id: 'staircase',
      name: `staircase from the start apex (${result.staircase.length} strides)`,
      type: 'line',
      data: staircase,
      showSymbol: true,
      symbol: 'circle',
      symbolSize: 4,
      lineStyle: { width: 1.5, color: PALETTE.brick },
      itemStyle: { color: PALETTE.brick },
      z: 3,
    } satisfies LineSeriesOption,
    {
      id: 'fixed-points-stable',
      name: 'stable fixed point (|slope| < 1)',
      type: 'scatter',
      data: stable.map((f) => ({ name: fixedLabel(f), value: [f.apex_height_m, f.apex_height_m] })),
      symbol: 'circle',
      symbolSize: 15,
      itemStyle: { color: STATE_COLORS.stable, borderColor: PALETTE.ink, borderWidth: 2 },
      label: { show: true, position: 'right', formatter: '{b}', fontSize: TYPE.label, color: PALETTE.ink, backgroundColor: 'rgba(255,255,255,0.85)', padding: 3 },
      tooltip: { formatter: (p) => `stable fixed point<br/>${(p as { name: string }).name}` },
      z: 6,
    } satisfies ScatterSeriesOption,
    {
      id: 'fixed-points-unstable',
      name: 'unstable fixed point',
      type: 'scatter',
      data: unstable.map((f) => ({ name: fixedLabel(f), value: [f.apex_height_m, f.apex_height_m] })),
      symbol: 'circle',
      symbolSize: 15,
      itemStyle: { color: PALETTE.paper, borderColor: STATE_COLORS.unstable, borderWidth: 3.5 },
      label: { show: true, position: 'left', formatter: '{b}', fontSize: TYPE.label, color: PALETTE.ink, backgroundColor: 'rgba(255,255,255,0.85)', padding: 3 },
      tooltip: { formatter: (p) => `unstable fixed point<br/>${(p as { name: string }).name}` },
      z: 6,
    } satisfies ScatterSeriesOption,
    {
      id: 'domain-edges',
      name: 'domain edges',
      type: 'line',
      data: [],
      symbol: 'none',
      itemStyle: { color: PALETTE.slate },
      lineStyle: { color: PALETTE.slate },
      markLine: {
        silent: true,
        symbol: 'none',
        lineStyle: { color: PALETTE.slate, type: 'dotted', width: 1.5 },
        label: { show: true, position: 'insideEndTop', fontSize: TYPE.label, color: PALETTE.slate, formatter: '{b}' },
        data: [
          { name: `low ${num(d.low_m, 5)} m (${EDGE_REASON[d.low_reason]})`, xAxis: d.low_m },
          { name: `high ${num(d.high_m, 5)} m (${EDGE_REASON[d.high_reason]})`, xAxis: d.high_m },
        ],
      },
    } satisfies LineSeriesOption,
  ];
  if (result.approximate) {
    const a = result.approximate;
    series.push(
      {
        id: 'approximate-map',
        name: 'approximate map (Geyer, Seyfarth, Blickhan 2005)',
        type: 'line',
        data: approx,
        symbol: 'none',
        connectNulls: false,
        lineStyle: { width: 2, type: 'dashed', color: PALETTE.amber },
        itemStyle: { color: PALETTE.amber },
        z: 3,
      } satisfies LineSeriesOption,
      {
        id: 'approximate-fixed-points',
        name: 'approximate map: fixed points',
        type: 'scatter',
        data: a.fixed_points.map((f) => ({ name: `approximate ${fixedLabel(f)}${f.stable ? '' : ' (unstable)'}`, value: [f.apex_height_m, f.apex_height_m] })),
        symbol: 'diamond',
        symbolSize: 12,
        itemStyle: { color: PALETTE.amber, borderColor: PALETTE.ink, borderWidth: 1 },
        tooltip: { formatter: (p) => (p as { name: string }).name },
        z: 5,
      } satisfies ScatterSeriesOption,
    );
  }

  const settle = result.staircase_outcome;
  const stairs =
    settle.settled_after_strides !== null
      ? `staircase settles within ${num(settle.settle_tolerance_m * 1000, 2)} mm of ${num(settle.settled_to_m, 5)} m after ${plural(settle.settled_after_strides, 'stride')}`
      : settle.status === 'failed'
        ? `staircase fails (${settle.reason}) at stride ${settle.steps - 1}`
        : `staircase does not settle in ${plural(settle.steps, 'stride')}`;
  const fixedText = result.identity_map
    ? 'P(y) = y everywhere: every height is a neutral fixed point'
    : result.fixed_points.length === 0
      ? 'no fixed point'
      : `${stable.length} stable, ${unstable.length} unstable fixed point${result.fixed_points.length === 1 ? '' : 's'}`;
  const subtitle = [
    `energy ${num(result.energy_J, 5)} J, ${result.ground_note}${result.energy_conserving ? '' : ' (the policy changes energy in stance)'}`,
    d.empty ? 'no sampled stride survives at this energy' : `${fixedText}; ${stairs}`,
  ].join('\n');

  const head = header(frameOf(options.frame), options.title ?? 'Apex return map', subtitle, series.map((s) => String(s.name)));
  return {
    ...baseOption(`Apex return map at ${num(result.energy_J, 5)} J: ${fixedText}.`),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    tooltip: tooltip(),
    grid: { left: 96, right: 48, top: head.top, bottom: 72, containLabel: false },
    xAxis: valueXAxis('apex height y (m)', { min: lo, max: hi }),
    yAxis: valueYAxis('next apex height P(y) (m)', { min: lo, max: hi }),
    series,
  };
}

// ---------------------------------------------------------------------------------------------
// Two policies' maps in one plot (the workbench's Compare view): the same axes, one diagonal, each
// map its own line (solid and dashed), fixed points in the states' colours (filled: stable,
// hollow: unstable) with the policy told by the marker's shape (circle and triangle).
//
// Series ids: map-a, map-b, diagonal, fixed-a, fixed-b.

export interface LabelledMap {
  label: string;
  map: ReturnMapResult;
}

const LINE = {
  a: { color: PALETTE.slate, dash: 'solid' as const, symbol: 'circle' },
  b: { color: PALETTE.brick, dash: 'dashed' as const, symbol: 'triangle' },
};

export function returnMapComparisonFigure(a: LabelledMap, b: LabelledMap, options: ReturnMapFigureOptions = {}): FigureOption {
  const runs = [['a', a], ['b', b]] as const;
  const pointsOf = (m: ReturnMapResult) => [...(m.edge_probe ? samplePoints([m.edge_probe]) : []), ...samplePoints(m.samples)];
  const all = runs.flatMap(([, r]) => [r.map.domain.low_m, r.map.domain.high_m, ...pointsOf(r.map).flatMap((p) => (p[1] === null ? [p[0]] : [p[0], p[1]]))]);
  const [lo, hi] = niceRange(Math.min(...all), Math.max(...all));
  const series: SeriesOption[] = [];
  for (const [key, run] of runs) {
    const style = LINE[key];
    series.push({
      id: `map-${key}`,
      name: `${run.label}: P(y)`,
      type: 'line',
      data: pointsOf(run.map),
      symbol: 'none',
      connectNulls: false,
      lineStyle: { width: 2.5, type: style.dash, color: style.color },
      itemStyle: { color: style.color },
      z: key === 'a' ? 3 : 4,
      tooltip: { valueFormatter: (v) => (typeof v === 'number' ? `${num(v, 6)} m` : 'stride fails') },
    } satisfies LineSeriesOption);
  }
  series.push({
    id: 'diagonal',
    name: 'y = x',
    type: 'line',
    data: [
      [lo, lo],
      [hi, hi],
    ],
    symbol: 'none',
    lineStyle: { width: 1.5, type: 'dotted', color: PALETTE.muted },
    itemStyle: { color: PALETTE.muted },
    silent: true,
    z: 2,
  } satisfies LineSeriesOption);
  for (const [key, run] of runs) {
    const style = LINE[key];
    series.push({
      id: `fixed-${key}`,
      name: `${run.label}: fixed points (filled stable, hollow unstable)`,
      type: 'scatter',
      data: run.map.fixed_points.map((f) => ({
        name: `${run.label}: y* = ${num(f.apex_height_m, 5)} m, slope ${num(f.slope, 3)} (${f.stable ? 'stable' : 'unstable'})`,
        value: [f.apex_height_m, f.apex_height_m],
        itemStyle: f.stable
          ? { color: STATE_COLORS.stable, borderColor: PALETTE.ink, borderWidth: 1.5 }
          : { color: PALETTE.paper, borderColor: STATE_COLORS.unstable, borderWidth: 3 },
      })),
      symbol: style.symbol,
      symbolSize: key === 'a' ? 15 : 17,
      itemStyle: { color: style.color, borderColor: PALETTE.ink },
      tooltip: { formatter: (p) => (p as { name: string }).name },
      z: 6,
    } satisfies ScatterSeriesOption);
  }
  const describe = (r: LabelledMap) => {
    const st = r.map.fixed_points.filter((f) => f.stable);
    return st.length ? `${r.label} stable at ${st.map((f) => `${num(f.apex_height_m, 4)} m (slope ${num(f.slope, 2)})`).join(', ')}` : `${r.label}: no stable fixed point`;
  };
  const subtitle = `energy ${num(a.map.energy_J, 5)} J and ${num(b.map.energy_J, 5)} J, flat ground\n${describe(a)}; ${describe(b)}`;
  const head = header(frameOf(options.frame), options.title ?? `Apex return maps: ${a.label} and ${b.label}`, subtitle, series.map((s) => String(s.name)));
  return {
    ...baseOption(`Apex return maps of ${a.label} and ${b.label}: ${describe(a)}; ${describe(b)}.`),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    tooltip: tooltip(),
    grid: { left: 96, right: 48, top: head.top, bottom: 72 },
    xAxis: valueXAxis('apex height y (m)', { min: lo, max: hi }),
    yAxis: valueYAxis('next apex height P(y) (m)', { min: lo, max: hi }),
    series,
  };
}
