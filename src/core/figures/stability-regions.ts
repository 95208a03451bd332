// Figure 2: stability regions of `pronk scan` — a map over the two scanned parameters, each cell
// none / unstable / stable, the stable cells shaded by |slope| of their stable fixed point (a
// continuous visual map: dark = strongly stable, light = marginal). Axes in the parameters' units
// with round ticks; unstable-only cells carry a slash, so the classes differ without colour too.
//
// Series ids: stable (data [x, y, |slope|, cell index]), unstable ([x, y, fixed points, index]),
// none ([x, y, 0, index]), and `current` (the scenario's own point) when given.

import type { SeriesOption, VisualMapComponentOption } from 'echarts';
import type { ScanCell, ScanResult } from '../analysis/scan.js';
import { cellAxis, cellSeries, constantVisualMap, currentPointSeries, stableRampVisualMap, type CellDatum } from './cells.js';
import { parameterTitle } from './labels.js';
import { STABILITY_COLORS, STATE_COLORS, PALETTE, baseOption, frameOf, header, num, tooltip, type FigureOption, type Frame } from './theme.js';

export interface StabilityRegionsFigureOptions {
  title?: string;
  frame?: Frame;
  /** The scenario's own values of the two parameters, marked on the map. */
  current?: { x: number; y: number };
}

function cellText(result: ScanResult, cell: ScanCell): string {
  const energy = Number.isFinite(cell.energy_J) ? `<br/>start energy ${num(cell.energy_J, 5)} J` : '';
  const where = `${parameterTitle(result.x.path)} = ${num(cell.x, 6)}<br/>${parameterTitle(result.y.path)} = ${num(cell.y, 6)}${energy}`;
  if (cell.class === 'stable') {
    return `${where}<br/>stable fixed point at ${num(cell.stable_apex_height_m, 6)} m, slope ${num(cell.stable_slope, 4)}`;
  }
  if (cell.class === 'unstable') {
    return `${where}<br/>unstable only: ${cell.fixed_points.map((f) => `${num(f.apex_height_m, 5)} m (slope ${num(f.slope, 3)})`).join(', ')}`;
  }
  return `${where}<br/>no fixed point${cell.domain_empty ? ' (no stride survives at this energy)' : cell.identity_map ? ' (P(y) = y: neutral everywhere)' : ''}`;
}

export function stabilityRegionsFigure(result: ScanResult, options: StabilityRegionsFigureOptions = {}): FigureOption {
  const frame = frameOf(options.frame);
  const of = (c: ScanCell['class'], value: (cell: ScanCell) => number): CellDatum[] =>
    result.cells.filter((cell) => cell.class === c).map((cell) => [cell.x, cell.y, value(cell), cell.index]);
  const xs = result.x.values;
  const ys = result.y.values;
  const tip = (index: number) => cellText(result, result.cells[index]);
  const series: SeriesOption[] = [
    cellSeries({ id: 'stable', name: 'stable (|slope| < 1)', data: of('stable', (c) => Math.abs((c.stable_slope ?? c.stable_spectral_radius) as number)), xs, ys, color: STATE_COLORS.stable, tooltip: tip }),
    cellSeries({ id: 'unstable', name: 'unstable fixed points only (slashed)', data: of('unstable', (c) => c.fixed_points.length), xs, ys, color: STATE_COLORS.unstable, glyph: 'slash', glyphColor: PALETTE.ink, tooltip: tip }),
    cellSeries({ id: 'none', name: 'no fixed point', data: of('none', () => 0), xs, ys, color: STATE_COLORS.none, outline: '#cfcac0', tooltip: tip }),
  ];
  const current = options.current && Number.isFinite(options.current.x) && Number.isFinite(options.current.y) ? options.current : undefined;
  if (current) series.push(currentPointSeries(current.x, current.y));
  // ECharts colours custom series through a visual map: one shown for the stable ramp, one
  // constant, hidden map for each other class.
  const visualMap: VisualMapComponentOption[] = [
    stableRampVisualMap(0, frame, ['|slope| 1 (marginal)', '|slope| 0']),
    constantVisualMap(1, STABILITY_COLORS.unstable),
    constantVisualMap(2, STABILITY_COLORS.none),
  ];
  const total = result.cells.length;
  const range = result.cell_energy_range_J as [number, number] | undefined;
  const subtitle =
    `${result.counts.stable} stable, ${result.counts.unstable} unstable only, ${result.counts.none} without a fixed point, of ${total} cells; ` +
    (range && range[0] !== range[1]
      ? `each cell's return map at its own start energy, ${num(range[0], 5)} to ${num(range[1], 5)} J, on flat ground\n`
      : `return map at ${num(result.energy_J, 5)} J on flat ground\n`) +
    `stable: the 1-D apex map has a fixed point with |P'(y*)| < 1 (shade: |slope| of the lowest stable one); x: ${result.x.path}, y: ${result.y.path}`;
  const names = series.map((s) => String(s.name));
  const head = header(frame, options.title ?? 'Stability regions', subtitle, names);
  return {
    ...baseOption(`Stability regions over ${parameterTitle(result.x.path)} and ${parameterTitle(result.y.path)}: ${result.counts.stable} of ${total} cells stable.`),
    ...(head.title ? { title: head.title } : {}),
    legend: head.legend,
    tooltip: tooltip(),
    grid: { left: 96, right: 170, top: head.top, bottom: 72 },
    xAxis: cellAxis('x', parameterTitle(result.x.path), xs) as never,
    yAxis: cellAxis('y', parameterTitle(result.y.path), ys, { nameGap: 64 }) as never,
    visualMap,
    series,
  };
}
